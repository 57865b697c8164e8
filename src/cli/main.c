/* SPDX-License-Identifier: MIT */
/*
 * main.c - the syrinx command: dispatch to sub-commands, shared helpers.
 */
#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli/cli.h"
#include "core/alloc.h"
#include "model/screen.h"
#include "rules/ruleset.h"

#ifndef SX_PKGDATADIR
#define SX_PKGDATADIR "/usr/local/share/syrinx"
#endif

static const char usage[] =
	"usage: syrinx <command> [options] [FILE...]\n"
	"\n"
	"Screens blood-gas specimens for preanalytical error in pO2: how far the\n"
	"reading is likely off, why, and whether to accept, comment or reject.\n"
	"\n"
	"commands:\n"
	"  audit     report on weeks of verdicts (decision log or feed files) as\n"
	"            HTML with charts, CSV or JSON\n"
	"  check     screen specimens from XML or HL7 v2 feed files, or standard input\n"
	"  explain   show one specimen's timeline and what each mechanism did\n"
	"  rules     check a ruleset: every error with its file, line, column and a caret\n"
	"  serve     screen a live HL7 feed over MLLP into the decision log\n"
	"\n"
	"  syrinx <command> --help   shows the command's options\n"
	"  syrinx --version          shows the version\n"
	"\n"
	"Caution: decision support for the laboratory's own acceptance procedure;\n"
	"not a corrected result for clinical use; local policy and the laboratory\n"
	"director decide. See syrinx(1) and docs/ for more.\n";

void sx_cli_print_diag(FILE *out, const sx_diag *d)
{
	fputs(d->file ? d->file : "syrinx", out);
	if (d->line)
		fprintf(out, ":%u", d->line);
	if (d->line && d->column)
		fprintf(out, ":%u", d->column);
	fprintf(out, ": %s: ", sx_severity_name(d->severity));
	if (d->specimen_id)
		fprintf(out, "specimen %s: ", d->specimen_id);
	fprintf(out, "%s\n", d->message);
}

void sx_cli_print_diags(FILE *out, const sx_diag_list *list)
{
	for (size_t i = 0; i < list->count; i++)
		sx_cli_print_diag(out, &list->items[i]);
	if (list->dropped)
		fprintf(out, "syrinx: note: %zu further diagnostics were not kept\n", list->dropped);
}

void sx_cli_print_diag_source(FILE *out, const sx_diag *d)
{
	char *line;
	char caret[1024];
	sx_cli_print_diag(out, d);
	if (!d->file || d->line == 0)
		return;
	line = sx_ruleset_source_line(d->file, d->line);
	if (!line)
		return;
	fprintf(out, "%s\n", line);
	if (d->column) {
		sx_ruleset_caret_line(line, d->column, caret, sizeof caret);
		fprintf(out, "%s\n", caret);
	}
	sx_free(line);
}

int sx_cli_load_screener(const char *command, const char *dir, sx_screener **out)
{
	char *found = NULL;
	sx_diag_list diags;
	sx_status st;
	*out = NULL;
	if (!dir) {
		found = sx_cli_find_data("rulesets/default");
		if (!found) {
			fprintf(stderr, "syrinx %s: error: the shipped ruleset rulesets/default was "
					"not found (set SYRINX_DATADIR or say --ruleset DIR)\n",
				command);
			return SX_EXIT_INPUT;
		}
		dir = found;
	}
	sx_diag_list_init(&diags);
	st = sx_screener_load(dir, out, &diags);
	for (size_t i = 0; i < diags.count; i++)
		sx_cli_print_diag_source(stderr, &diags.items[i]);
	if (st != SX_OK && st != SX_ENOMEM)
		fprintf(stderr, "syrinx %s: error: the ruleset %s has %zu error%s and was not "
				"loaded; nothing was screened\n",
			command, dir, diags.errors, diags.errors == 1 ? "" : "s");
	sx_diag_list_clear(&diags);
	sx_free(found);
	if (st == SX_ENOMEM)
		return SX_EXIT_SOFTWARE;
	return st == SX_OK ? SX_EXIT_OK : SX_EXIT_INPUT;
}

static char *join(const char *dir, const char *rel)
{
	size_t n = strlen(dir) + strlen(rel) + 2;
	char *p = sx_malloc(n);
	if (p)
		snprintf(p, n, "%s/%s", dir, rel);
	return p;
}

static char *try_path(const char *dir, const char *rel)
{
	char *p = join(dir, rel);
	if (p && access(p, R_OK) == 0)
		return p;
	sx_free(p);
	return NULL;
}

char *sx_cli_find_data(const char *rel)
{
	const char *env = getenv("SYRINX_DATADIR");
	char exe[PATH_MAX];
	ssize_t n;
	char *p;

	if (env && *env && (p = try_path(env, rel)))
		return p;
	n = readlink("/proc/self/exe", exe, sizeof exe - 1);
	if (n > 0) {
		char *slash;
		exe[n] = '\0';
		slash = strrchr(exe, '/');
		if (slash) {
			*slash = '\0';
			if ((p = try_path(exe, rel)))
				return p;
#ifdef SX_SOURCE_TREE
			/* run from a build folder (configured there: config.status beside the
			 * program): the data of the source tree it was built from */
			if ((p = try_path(exe, "config.status"))) {
				sx_free(p);
				if ((p = try_path(SX_SOURCE_TREE, rel)))
					return p;
			}
#endif
		}
	}
	/* installed: docs/schema/feed.xsd lives at $(pkgdatadir)/schema/feed.xsd */
	if (strncmp(rel, "docs/", 5) == 0 && (p = try_path(SX_PKGDATADIR, rel + 5)))
		return p;
	return try_path(SX_PKGDATADIR, rel);
}

int main(int argc, char **argv)
{
	if (argc < 2) {
		fputs(usage, stderr);
		return SX_EXIT_USAGE;
	}
	if (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0 ||
	    strcmp(argv[1], "help") == 0) {
		fputs(usage, stdout);
		return SX_EXIT_OK;
	}
	if (strcmp(argv[1], "--version") == 0) {
		printf("syrinx %s\n", PACKAGE_VERSION);
		return SX_EXIT_OK;
	}
	if (strcmp(argv[1], "audit") == 0)
		return sx_cmd_audit(argc - 1, argv + 1);
	if (strcmp(argv[1], "check") == 0)
		return sx_cmd_check(argc - 1, argv + 1);
	if (strcmp(argv[1], "explain") == 0)
		return sx_cmd_explain(argc - 1, argv + 1);
	if (strcmp(argv[1], "rules") == 0)
		return sx_cmd_rules(argc - 1, argv + 1);
	if (strcmp(argv[1], "serve") == 0)
		return sx_cmd_serve(argc - 1, argv + 1);
	fprintf(stderr, "syrinx: '%s' is not a command\n\n%s", argv[1], usage);
	return SX_EXIT_USAGE;
}
