/* SPDX-License-Identifier: MIT */
/*
 * check.c - `syrinx check`: screen the specimens of feed files or stdin.
 *
 * Reads each input one specimen at a time (memory stays flat), screens every
 * specimen whose input is sound, reports the others as not screened with their
 * errors, and never stops at one bad specimen or one bad file.
 */
#include <errno.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "cli/cli.h"
#include "core/alloc.h"
#include "core/sxtime.h"
#include "feed/feed.h"
#include "feed/xmlfeed.h"
#include "model/screen.h"
#include "model/settings.h"
#include "report/hl7out.h"
#include "report/report.h"

static const char check_usage[] =
	"usage: syrinx check [options] [FILE...]\n"
	"\n"
	"Screens each specimen in the feed files (standard input when no FILE is\n"
	"given, or for '-') and writes one verdict per specimen: the likely pO2\n"
	"error with its interval, the reasons, and accept / comment / reject.\n"
	"\n"
	"options:\n"
	"  --input auto|xml|hl7   feed format; auto (default) looks at the first bytes\n"
	"  --format text|json|hl7 text for people (default), JSON Lines, or one HL7 v2\n"
	"                         result message (ORU^R01) per specimen, see docs/hl7.md;\n"
	"                         MSH-7 is now, or SOURCE_DATE_EPOCH when set\n"
	"  --validate             check XML input against the feed schema first and\n"
	"                         report every schema error with its line\n"
	"  --schema FILE          the schema for --validate (default: the shipped\n"
	"                         docs/schema/feed.xsd)\n"
	"  --ruleset DIR          the ruleset (default: the shipped rulesets/default);\n"
	"                         one with an error is refused (see syrinx rules)\n"
	"  --utc-offset OFFSET    offset assumed for times without one, such as +01:00\n"
	"                         (default: the ruleset's site.utc_offset); each\n"
	"                         assumption is noted\n"
	"  --fail-on comment|reject\n"
	"                         exit with status 3 when a specimen gets that\n"
	"                         disposition or a worse one\n"
	"  -h, --help             this text\n"
	"\n"
	"exit status: 0 all specimens screened; 1 some input could not be read or\n"
	"screened (errors on stderr as file:line: error: ...); 2 wrong command\n"
	"line; 3 --fail-on was met; 4 internal error.\n"
	"\n"
	"example:\n"
	"  syrinx check fixtures/demo/morning.xml\n"
	"  syrinx check --format json < feed.xml > verdicts.jsonl\n"
	"\n"
	"Caution: decision support for the laboratory's own acceptance procedure;\n"
	"not a corrected result for clinical use; local policy and the laboratory\n"
	"director decide.\n";

enum { FORMAT_TEXT, FORMAT_JSON, FORMAT_HL7 };

typedef struct check_options {
	sx_feed_format input;
	int format;
	int validate;
	const char *schema;
	const char *ruleset;
	int utc_offset_given;
	int utc_offset_min;
	int fail_on;             /* -1 none, else an sx_disposition */
} check_options;

typedef struct check_run {
	const check_options *opt;
	sx_screener *screener;
	sx_strbuf out;
	sx_tally tally;
	int worst;               /* worst disposition seen, -1 none */
	int input_errors;
	int internal_error;
	sx_time now;             /* for the HL7 result messages */
} check_run;

static int file_read(void *context, char *buf, int len)
{
	FILE *fp = context;
	size_t n = fread(buf, 1, (size_t)len, fp);
	if (n == 0 && ferror(fp))
		return -1;
	return (int)n;
}

static void flush_out(check_run *run)
{
	if (run->out.len)
		fwrite(run->out.data, 1, run->out.len, stdout);
	sx_strbuf_reset(&run->out);
}

/* Copy standard input to a temporary file, so it can be read twice (--validate). */
static FILE *spool_stdin(void)
{
	FILE *tmp = tmpfile();
	char buf[65536];
	size_t n;
	if (!tmp)
		return NULL;
	while ((n = fread(buf, 1, sizeof buf, stdin)) > 0)
		if (fwrite(buf, 1, n, tmp) != n) {
			fclose(tmp);
			return NULL;
		}
	rewind(tmp);
	return tmp;
}

static void validate(check_run *run, FILE *fp, const char *name)
{
	sx_diag_list diags;
	char *schema = run->opt->schema ? sx_strdup(run->opt->schema)
					: sx_cli_find_data("docs/schema/feed.xsd");
	sx_diag_list_init(&diags);
	if (!schema) {
		fprintf(stderr, "syrinx: error: the feed schema docs/schema/feed.xsd was not found "
				"(set SYRINX_DATADIR or use --schema)\n");
		run->input_errors = 1;
		return;
	}
	if (sx_xml_validate(file_read, fp, name, schema, &diags) != SX_OK)
		run->input_errors = 1;
	sx_cli_print_diags(stderr, &diags);
	sx_diag_list_clear(&diags);
	sx_free(schema);
	rewind(fp);
}

static void screen_one(check_run *run, sx_specimen *s, const sx_feed_item *item,
		       sx_diag_list *diags, size_t mark)
{
	const sx_diag *errs[SX_MAX_REASONS];
	size_t nerr = 0;
	sx_verdict verdict;
	sx_report_item ri = {s, NULL, errs, 0};

	for (size_t i = mark; i < diags->count; i++)
		if (diags->items[i].severity == SX_ERROR && nerr < SX_MAX_REASONS)
			errs[nerr++] = &diags->items[i];
	ri.error_count = nerr;
	if (item->input_errors == 0) {
		if (sx_screener_run(run->screener, s, &verdict) == SX_OK) {
			for (size_t i = mark; i < diags->count; i++)
				if (diags->items[i].severity == SX_WARNING)
					sx_verdict_add_warning(&verdict, "%s",
							       diags->items[i].message);
			ri.verdict = &verdict;
			if ((int)verdict.disposition > run->worst)
				run->worst = (int)verdict.disposition;
		} else {
			run->internal_error = 1;
		}
	} else {
		run->input_errors = 1;
	}
	sx_tally_add(&run->tally, &ri);
	if (run->opt->format == FORMAT_JSON) {
		sx_report_json(&run->out, &ri);
	} else if (run->opt->format == FORMAT_HL7) {
		sx_hl7_result_options ho = {0};
		ho.now = &run->now;
		sx_report_hl7(&run->out, &ri, &ho);
	} else {
		sx_report_text(&run->out, &ri);
	}
}

static void check_input(check_run *run, FILE *fp, const char *name)
{
	sx_feed_options fo = {run->opt->input, run->opt->utc_offset_min, sx_screener_map_code,
			      run->screener};
	sx_diag_list diags;
	sx_feed *feed = NULL;
	sx_specimen s;
	sx_feed_item item;
	bool got = true;

	sx_diag_list_init(&diags);
	sx_specimen_init(&s);
	if (run->opt->validate)
		validate(run, fp, name);
	if (sx_feed_open(fp, name, &fo, &feed, &diags) != SX_OK) {
		run->input_errors = 1;
		goto out;
	}
	while (got) {
		size_t mark = diags.count;
		sx_status st = sx_feed_next(feed, &s, &item, &got, &diags);
		if (got)
			screen_one(run, &s, &item, &diags, mark);
		if (st != SX_OK && st != SX_ENOMEM)
			run->input_errors = 1;
		else if (st == SX_ENOMEM)
			run->internal_error = 1;
		for (size_t i = mark; i < diags.count; i++)
			if (diags.items[i].severity == SX_ERROR)
				sx_cli_print_diag(stderr, &diags.items[i]);
		sx_diag_list_clear(&diags);
		flush_out(run);
	}
out:
	sx_cli_print_diags(stderr, &diags);
	sx_diag_list_clear(&diags);
	sx_specimen_clear(&s);
	sx_feed_close(feed);
}

/* Standard input, spooled to a temporary file when it must be read twice (--validate). */
static void check_stdin(check_run *run)
{
	FILE *in = run->opt->validate ? spool_stdin() : stdin;
	if (!in) {
		fprintf(stderr, "syrinx check: cannot buffer standard input: %s\n", strerror(errno));
		run->input_errors = 1;
		return;
	}
	check_input(run, in, "-");
	if (in != stdin)
		fclose(in);
}

static int parse_disposition(const char *s)
{
	if (strcmp(s, "comment") == 0)
		return SX_COMMENT;
	if (strcmp(s, "reject") == 0)
		return SX_REJECT;
	return -1;
}

int sx_cmd_check(int argc, char **argv)
{
	static const struct option longopts[] = {
		{"input", required_argument, NULL, 'i'},   {"format", required_argument, NULL, 'f'},
		{"validate", no_argument, NULL, 'V'},      {"schema", required_argument, NULL, 's'},
		{"ruleset", required_argument, NULL, 'r'},
		{"utc-offset", required_argument, NULL, 'z'},
		{"fail-on", required_argument, NULL, 'F'}, {"help", no_argument, NULL, 'h'},
		{NULL, 0, NULL, 0},
	};
	check_options opt = {SX_FEED_AUTO, FORMAT_TEXT, 0, NULL, NULL, 0, 0, -1};
	check_run run;
	int c, status;

	optind = 1;
	while ((c = getopt_long(argc, argv, "h", longopts, NULL)) != -1) {
		switch (c) {
		case 'i':
			if (strcmp(optarg, "auto") == 0)
				opt.input = SX_FEED_AUTO;
			else if (strcmp(optarg, "xml") == 0)
				opt.input = SX_FEED_XML;
			else if (strcmp(optarg, "hl7") == 0)
				opt.input = SX_FEED_HL7;
			else {
				fprintf(stderr, "syrinx check: --input takes auto, xml or hl7, not "
						"'%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			break;
		case 'f':
			if (strcmp(optarg, "text") == 0)
				opt.format = FORMAT_TEXT;
			else if (strcmp(optarg, "json") == 0)
				opt.format = FORMAT_JSON;
			else if (strcmp(optarg, "hl7") == 0)
				opt.format = FORMAT_HL7;
			else {
				fprintf(stderr, "syrinx check: --format takes text, json or hl7, not "
						"'%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			break;
		case 'V':
			opt.validate = 1;
			break;
		case 'r':
			opt.ruleset = optarg;
			break;
		case 's':
			opt.schema = optarg;
			break;
		case 'z':
			if (sx_parse_offset(optarg, &opt.utc_offset_min) != SX_OK) {
				fprintf(stderr, "syrinx check: --utc-offset takes an offset such as "
						"+01:00 or -05:30, not '%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			opt.utc_offset_given = 1;
			break;
		case 'F':
			opt.fail_on = parse_disposition(optarg);
			if (opt.fail_on < 0) {
				fprintf(stderr, "syrinx check: --fail-on takes comment or reject, "
						"not '%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			break;
		case 'h':
			fputs(check_usage, stdout);
			return SX_EXIT_OK;
		default:
			fputs("syrinx check: see 'syrinx check --help'\n", stderr);
			return SX_EXIT_USAGE;
		}
	}

	memset(&run, 0, sizeof run);
	run.opt = &opt;
	run.worst = -1;
	status = sx_cli_load_screener("check", opt.ruleset, &run.screener);
	if (status != SX_EXIT_OK)
		return status;
	if (!opt.utc_offset_given)
		opt.utc_offset_min = sx_screener_settings(run.screener)->utc_offset_min;
	sx_strbuf_init(&run.out, 0);
	{
		/* reproducible output when asked (the reproducible-builds convention) */
		const char *epoch = getenv("SOURCE_DATE_EPOCH");
		char *end = NULL;
		long long secs = epoch ? strtoll(epoch, &end, 10) : (long long)time(NULL);
		if (epoch && (!end || *end))
			secs = (long long)time(NULL);
		run.now = (sx_time){secs * 1000, 0, SX_PREC_SECOND, true};
	}
	if (opt.format == FORMAT_TEXT) {
		sx_report_text_header(&run.out);
		flush_out(&run);
	}

	if (optind >= argc)
		check_stdin(&run);
	for (int i = optind; i < argc; i++) {
		FILE *fp;
		if (strcmp(argv[i], "-") == 0) {
			check_stdin(&run);
			continue;
		}
		fp = fopen(argv[i], "rb");
		if (!fp) {
			fprintf(stderr, "%s: error: cannot open: %s\n", argv[i], strerror(errno));
			run.input_errors = 1;
			continue;
		}
		check_input(&run, fp, argv[i]);
		fclose(fp);
	}
	if (opt.format == FORMAT_TEXT) {
		sx_report_text_summary(&run.out, &run.tally);
		flush_out(&run);
	}
	sx_strbuf_free(&run.out);
	sx_screener_free(run.screener);
	if (fflush(stdout) != 0) {
		fprintf(stderr, "syrinx check: cannot write the output: %s\n", strerror(errno));
		return SX_EXIT_SOFTWARE;
	}
	status = SX_EXIT_OK;
	if (run.internal_error)
		status = SX_EXIT_SOFTWARE;
	else if (opt.fail_on >= 0 && run.worst >= opt.fail_on)
		status = SX_EXIT_FAIL_ON;
	else if (run.input_errors)
		status = SX_EXIT_INPUT;
	return status;
}
