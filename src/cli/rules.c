/* SPDX-License-Identifier: MIT */
/*
 * rules.c - `syrinx rules`: check a ruleset and show every problem at once.
 *
 * Loads the folder with the library (which never prints), then prints each
 * diagnostic as file:line:column: severity: message, the source line, and a
 * caret under the exact spot. A ruleset with errors is never loaded; the exit
 * status says so.
 */
#include <getopt.h>
#include <stdio.h>
#include <string.h>

#include "cli/cli.h"
#include "core/alloc.h"
#include "rules/ruleset.h"

static const char rules_usage[] =
	"usage: syrinx rules [options] [DIR]\n"
	"\n"
	"Checks a ruleset folder (the shipped rulesets/default when no DIR is\n"
	"given): reads its *.rules files in name order, what they include and the\n"
	"base ruleset they build on, and reports every error and warning in one\n"
	"pass, each as file:line:column with the source line and a caret under the\n"
	"exact spot. A ruleset with an error is never loaded.\n"
	"\n"
	"options:\n"
	"  --list        after a clean check, list the rules in evaluation order\n"
	"                with the pass each runs in (before or after the model)\n"
	"  --strict      warnings count as errors\n"
	"  -q, --quiet   print nothing but the diagnostics\n"
	"  -h, --help    this text\n"
	"\n"
	"exit status: 0 the ruleset loads; 1 it has errors (or, with --strict,\n"
	"warnings); 2 wrong command line; 4 internal error.\n"
	"\n"
	"The rule language is described in docs/rules.md.\n";

static void list_rules(const sx_ruleset *rs)
{
	const char *name, *ref;
	sx_rule_pass pass;
	for (size_t i = 0; sx_ruleset_rule_at(rs, i, &name, &pass, &ref); i++)
		printf("  %-6s %-32s %s\n", pass == SX_PASS_AFTER_MODEL ? "after" : "before", name,
		       ref);
}

int sx_cmd_rules(int argc, char **argv)
{
	static const struct option longopts[] = {
		{"list", no_argument, NULL, 'l'},  {"strict", no_argument, NULL, 's'},
		{"quiet", no_argument, NULL, 'q'}, {"help", no_argument, NULL, 'h'},
		{NULL, 0, NULL, 0},
	};
	int c, list = 0, strict = 0, quiet = 0, status;
	char *found = NULL;
	const char *dir;
	sx_diag_list diags;
	sx_ruleset *rs = NULL;
	sx_status st;

	optind = 1;
	while ((c = getopt_long(argc, argv, "qh", longopts, NULL)) != -1) {
		switch (c) {
		case 'l':
			list = 1;
			break;
		case 's':
			strict = 1;
			break;
		case 'q':
			quiet = 1;
			break;
		case 'h':
			fputs(rules_usage, stdout);
			return SX_EXIT_OK;
		default:
			fputs("syrinx rules: see 'syrinx rules --help'\n", stderr);
			return SX_EXIT_USAGE;
		}
	}
	if (argc - optind > 1) {
		fputs("syrinx rules: give one ruleset folder\n", stderr);
		return SX_EXIT_USAGE;
	}
	if (optind < argc) {
		dir = argv[optind];
	} else {
		found = sx_cli_find_data("rulesets/default");
		if (!found) {
			fputs("syrinx rules: the shipped ruleset rulesets/default was not found "
			      "(set SYRINX_DATADIR or give a folder)\n",
			      stderr);
			return SX_EXIT_INPUT;
		}
		dir = found;
	}

	sx_diag_list_init(&diags);
	st = sx_ruleset_load(dir, &rs, &diags);
	for (size_t i = 0; i < diags.count; i++)
		sx_cli_print_diag_source(stderr, &diags.items[i]);
	if (diags.dropped)
		fprintf(stderr, "syrinx rules: note: %zu further diagnostics were not kept\n",
			diags.dropped);

	if (st == SX_ENOMEM) {
		fprintf(stderr, "syrinx rules: out of memory\n");
		status = SX_EXIT_SOFTWARE;
	} else if (st != SX_OK) {
		fprintf(stderr, "%s: %zu error%s, %zu warning%s; nothing was loaded\n", dir,
			diags.errors, diags.errors == 1 ? "" : "s", diags.warnings,
			diags.warnings == 1 ? "" : "s");
		status = SX_EXIT_INPUT;
	} else {
		sx_ruleset_stats s;
		sx_ruleset_stats_get(rs, &s);
		if (!quiet) {
			printf("%s: version \"%s\": %zu rule%s (%zu before the model, %zu after), "
			       "%zu classify pattern%s, %zu limit%s, %zu reason code%s, %zu setting%s; "
			       "%zu warning%s\n",
			       dir, sx_ruleset_version(rs), s.rules, s.rules == 1 ? "" : "s",
			       s.rules_before_model, s.rules_after_model, s.patterns,
			       s.patterns == 1 ? "" : "s", s.limits, s.limits == 1 ? "" : "s",
			       s.reasons, s.reasons == 1 ? "" : "s", s.settings,
			       s.settings == 1 ? "" : "s", diags.warnings,
			       diags.warnings == 1 ? "" : "s");
			if (list)
				list_rules(rs);
		}
		status = SX_EXIT_OK;
		if (strict && diags.warnings) {
			fprintf(stderr, "%s: %zu warning%s, which --strict counts as errors\n", dir,
				diags.warnings, diags.warnings == 1 ? "" : "s");
			status = SX_EXIT_INPUT;
		}
	}
	sx_ruleset_free(rs);
	sx_diag_list_clear(&diags);
	sx_free(found);
	if (fflush(stdout) != 0)
		return SX_EXIT_SOFTWARE;
	return status;
}
