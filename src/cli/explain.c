/* SPDX-License-Identifier: MIT */
/*
 * explain.c - `syrinx explain [FILE] --specimen ID`: one specimen's timeline,
 * each phase with its duration and temperature, and what each mechanism did to
 * its pO2.
 */
#include <errno.h>
#include <getopt.h>
#include <stdio.h>
#include <string.h>

#include "cli/cli.h"
#include "core/sxtime.h"
#include "feed/feed.h"
#include "model/screen.h"
#include "report/report.h"

static const char explain_usage[] =
	"usage: syrinx explain [options] --specimen ID [FILE]\n"
	"\n"
	"Shows how syrinx reached its verdict for one specimen of a feed (standard\n"
	"input when no FILE is given): the phases from collection to analysis, how\n"
	"long each lasted and at what temperature, and how much each mechanism\n"
	"moved the pO2 in each phase.\n"
	"\n"
	"options:\n"
	"  --specimen ID          the specimen_id to explain (required)\n"
	"  --input auto|xml|hl7   feed format (default auto)\n"
	"  --ruleset DIR          the ruleset (default: the shipped rulesets/default)\n"
	"  --utc-offset OFFSET    offset assumed for times without one (default: the\n"
	"                         ruleset's site.utc_offset)\n"
	"  -h, --help             this text\n"
	"\n"
	"exit status: 0 explained; 1 the specimen was not found or its input has errors;\n"
	"2 wrong command line.\n"
	"\n"
	"example:\n"
	"  syrinx explain --specimen BG-260314-0016 fixtures/demo/morning.xml\n";

static int explain_one(FILE *fp, const char *name, sx_feed_format format, int offset,
		       int offset_given, const char *id, const char *ruleset)
{
	sx_feed_options fo = {format, offset, sx_screener_map_code, NULL};
	sx_diag_list diags;
	sx_feed *feed = NULL;
	sx_specimen s;
	sx_feed_item item;
	bool got = true;
	size_t seen = 0;
	int status = SX_EXIT_INPUT;
	sx_screener *screener = NULL;

	sx_diag_list_init(&diags);
	sx_specimen_init(&s);
	status = sx_cli_load_screener("explain", ruleset, &screener);
	if (status != SX_EXIT_OK)
		goto out;
	status = SX_EXIT_INPUT;
	fo.map_context = screener;
	if (!offset_given)
		fo.default_offset_min = sx_screener_settings(screener)->utc_offset_min;
	if (sx_feed_open(fp, name, &fo, &feed, &diags) != SX_OK)
		goto out;
	while (got) {
		size_t mark = diags.count;
		sx_feed_next(feed, &s, &item, &got, &diags);
		if (!got)
			break;
		seen++;
		if (!sx_specimen_has(&s, SX_F_SPECIMEN_ID) ||
		    strcmp(s.text[SX_F_SPECIMEN_ID], id) != 0) {
			sx_diag_list_clear(&diags);
			continue;
		}
		if (item.input_errors) {
			for (size_t i = mark; i < diags.count; i++)
				sx_cli_print_diag(stderr, &diags.items[i]);
			fprintf(stderr, "%s: error: specimen %s has input errors and cannot be "
					"explained\n",
				name, id);
			goto out;
		}
		{
			static sx_explanation ex; /* large */
			sx_strbuf b;
			if (sx_screener_explain(screener, &s, &ex) != SX_OK) {
				status = SX_EXIT_SOFTWARE;
				goto out;
			}
			for (size_t i = mark; i < diags.count; i++)
				if (diags.items[i].severity == SX_WARNING)
					sx_verdict_add_warning(&ex.verdict, "%s",
							       diags.items[i].message);
			sx_strbuf_init(&b, 0);
			sx_report_explain_text(&b, &s, &ex);
			if (b.len)
				fwrite(b.data, 1, b.len, stdout);
			sx_strbuf_free(&b);
			status = SX_EXIT_OK;
			goto out;
		}
	}
	sx_cli_print_diags(stderr, &diags);
	fprintf(stderr, "%s: error: no specimen %s among the %zu specimens read\n", name, id,
		seen);
out:
	sx_diag_list_clear(&diags);
	sx_specimen_clear(&s);
	sx_feed_close(feed);
	sx_screener_free(screener);
	return status;
}

int sx_cmd_explain(int argc, char **argv)
{
	static const struct option longopts[] = {
		{"specimen", required_argument, NULL, 's'}, {"input", required_argument, NULL, 'i'},
		{"utc-offset", required_argument, NULL, 'z'}, {"help", no_argument, NULL, 'h'},
		{"ruleset", required_argument, NULL, 'r'},
		{NULL, 0, NULL, 0},
	};
	const char *id = NULL, *ruleset = NULL;
	int offset_given = 0;
	sx_feed_format format = SX_FEED_AUTO;
	int offset = 0, c, status;
	FILE *fp;

	optind = 1;
	while ((c = getopt_long(argc, argv, "h", longopts, NULL)) != -1) {
		switch (c) {
		case 's':
			id = optarg;
			break;
		case 'i':
			if (strcmp(optarg, "auto") == 0)
				format = SX_FEED_AUTO;
			else if (strcmp(optarg, "xml") == 0)
				format = SX_FEED_XML;
			else if (strcmp(optarg, "hl7") == 0)
				format = SX_FEED_HL7;
			else {
				fprintf(stderr, "syrinx explain: --input takes auto, xml or hl7, not "
						"'%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			break;
		case 'r':
			ruleset = optarg;
			break;
		case 'z':
			offset_given = 1;
			if (sx_parse_offset(optarg, &offset) != SX_OK) {
				fprintf(stderr, "syrinx explain: --utc-offset takes an offset such as "
						"+01:00, not '%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			break;
		case 'h':
			fputs(explain_usage, stdout);
			return SX_EXIT_OK;
		default:
			fputs("syrinx explain: see 'syrinx explain --help'\n", stderr);
			return SX_EXIT_USAGE;
		}
	}
	if (!id) {
		fputs("syrinx explain: say which specimen with --specimen ID\n", stderr);
		return SX_EXIT_USAGE;
	}
	if (argc - optind > 1) {
		fputs("syrinx explain: give one feed file (or none for standard input)\n", stderr);
		return SX_EXIT_USAGE;
	}
	if (optind == argc || strcmp(argv[optind], "-") == 0)
		return explain_one(stdin, "-", format, offset, offset_given, id, ruleset);
	fp = fopen(argv[optind], "rb");
	if (!fp) {
		fprintf(stderr, "%s: error: cannot open: %s\n", argv[optind], strerror(errno));
		return SX_EXIT_INPUT;
	}
	status = explain_one(fp, argv[optind], format, offset, offset_given, id, ruleset);
	fclose(fp);
	return status;
}
