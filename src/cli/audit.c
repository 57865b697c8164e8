/* SPDX-License-Identifier: MIT */
/*
 * audit.c - `syrinx audit`: a report over many verdicts, for people (HTML
 * with charts) and for spreadsheets (CSV, JSON).
 *
 * The verdicts come from the decision log (--db) or from screening feed
 * files on the spot. Rows stream through once: each is counted into the
 * aggregate (report/audit.h) and written to the exports as it passes, so
 * memory stays flat over a year of verdicts. The HTML page is written at the
 * end, from the aggregate only.
 */
#include <errno.h>
#include <getopt.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "cli/cli.h"
#include "core/alloc.h"
#include "core/sxtime.h"
#include "feed/feed.h"
#include "model/screen.h"
#include "model/settings.h"
#include "report/audit.h"
#include "report/report.h"
#include "store/decision_log.h"

static const char audit_usage[] =
        "usage: syrinx audit (--db FILE | FEED...) [options] (--html OUT | --csv OUT |\n"
        "                    --json OUT)...\n"
        "\n"
        "Reports on many verdicts for the laboratory's quality review: why specimens\n"
        "were flagged, how large the estimated pO2 errors were, how delay, transport\n"
        "and leukocyte counts relate to them, and the rejection rate week by week per\n"
        "unit. Reads the decision log that syrinx serve writes (--db), or screens feed\n"
        "files on the spot (XML or HL7; nothing is logged).\n"
        "\n"
        "what to read:\n"
        "  --db FILE              the decision log (SQLite), opened read-only\n"
        "  FEED...                feed files to screen instead ('-' for standard input)\n"
        "  --ruleset DIR          the ruleset for screening feed files (default: the\n"
        "                         shipped rulesets/default)\n"
        "  --input auto|xml|hl7   format of the feed files (default auto)\n"
        "\n"
        "which verdicts (by default all of them):\n"
        "  --from WHEN            from this time on, included\n"
        "  --to WHEN              up to this time, not included\n"
        "                         WHEN is an ISO 8601 date or date-time, such as\n"
        "                         2026-03-01 or 2026-03-01T08:00+01:00; a date means\n"
        "                         its 00:00. All of March: --from 2026-03-01 --to 2026-04-01\n"
        "  --location UNIT        a location, or a unit and all its beds: ICU takes ICU\n"
        "                         and ICU/BED03 (not ICU2)\n"
        "  --collector CODE       one collector\n"
        "  --transport KIND       hand, pneumatic-tube, courier or other\n"
        "  --disposition D        accept, comment or reject\n"
        "  --reason CODE          verdicts that carry this reason code\n"
        "  --utc-offset OFFSET    the offset for times and dates given without one, for\n"
        "                         the times the report shows and for where weeks begin\n"
        "                         (default +00:00)\n"
        "\n"
        "what to write (at least one; OUT '-' is standard output, for one of them):\n"
        "  --html OUT             the report: one self-contained HTML file with charts\n"
        "                         and tables, for the screen and for printing\n"
        "  --csv OUT              one row per verdict, RFC 4180 CSV\n"
        "  --json OUT             the same rows as one JSON array\n"
        "  --title TEXT           the report's heading (default \"pO2 screening audit\")\n"
        "  --no-progress          no progress bar (it shows only when stderr is a terminal)\n"
        "  -h, --help             this text\n"
        "\n"
        "exit status: 0 done; 1 some input could not be read or screened (errors on\n"
        "stderr); 2 wrong command line; 4 the log could not be read as a whole, an output\n"
        "could not be written, or an internal error.\n"
        "\n"
        "examples:\n"
        "  syrinx audit --db /var/lib/syrinx/decisions.sqlite --from 2026-03-01 \\\n"
        "      --to 2026-04-01 --html march.html --csv march.csv\n"
        "  syrinx audit fixtures/demo/month.xml --location ED --html ed.html\n"
        "\n"
        "Caution: decision support for the laboratory's own acceptance procedure;\n"
        "not a corrected result for clinical use; local policy and the laboratory\n"
        "director decide.\n";

typedef struct output {
	const char *path;
	FILE *fp;
} output;

typedef struct audit_run {
	sx_row_filter filter;
	sx_feed_format input;
	int utc_offset_min;
	const char *db;
	const char *ruleset;
	const char *title;
	output html, csv, json;
	bool progress;
	sx_audit *audit;
	sx_strbuf csv_buf, json_buf;
	bool json_first;
	int input_errors, failed;
	/* progress */
	uint64_t done, total;
	double last_draw;
} audit_run;

/* ---- progress on a terminal -------------------------------------------- */

static double now_s(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + (double)ts.tv_nsec / 1e9;
}

static void draw_progress(audit_run *run, bool last)
{
	const int width = 30;
	double t, frac;
	int filled;
	if (!run->progress)
		return;
	t = now_s();
	if (!last && t - run->last_draw < 0.1)
		return;
	run->last_draw = t;
	frac = run->total ? (double)run->done / (double)run->total : 0;
	if (frac > 1)
		frac = 1;
	filled = (int)(frac * width + 0.5);
	fprintf(stderr, "\rsyrinx audit [");
	for (int i = 0; i < width; i++)
		fputc(i < filled ? '#' : '.', stderr);
	fprintf(stderr, "] %3.0f%%  %llu verdicts", frac * 100,
	        (unsigned long long)run->audit->rows);
	if (last)
		fputc('\n', stderr);
	fflush(stderr);
}

/* ---- outputs ----------------------------------------------------------- */

static bool open_output(output *o)
{
	if (!o->path)
		return true;
	if (strcmp(o->path, "-") == 0) {
		o->fp = stdout;
		return true;
	}
	o->fp = fopen(o->path, "wb");
	if (!o->fp) {
		fprintf(stderr, "%s: error: cannot write: %s\n", o->path, strerror(errno));
		return false;
	}
	return true;
}

static bool close_output(output *o)
{
	bool ok = true;
	if (!o->fp)
		return true;
	if (fflush(o->fp) != 0 || ferror(o->fp))
		ok = false;
	if (o->fp != stdout && fclose(o->fp) != 0)
		ok = false;
	if (!ok)
		fprintf(stderr, "%s: error: cannot write: %s\n",
		        strcmp(o->path, "-") == 0 ? "standard output" : o->path, strerror(errno));
	o->fp = NULL;
	return ok;
}

static void flush_buf(audit_run *run, sx_strbuf *b, output *o, bool force)
{
	if (!o->fp || (!force && b->len < 65536))
		return;
	if (sx_strbuf_status(b) != SX_OK) {
		fprintf(stderr, "syrinx audit: error: %s\n",
		        sx_status_message(sx_strbuf_status(b)));
		run->failed = 1;
	}
	if (b->len && fwrite(b->data, 1, b->len, o->fp) != b->len)
		run->failed = 1;
	sx_strbuf_reset(b);
}

/* One row through the aggregate and the exports. */
static void take_row(audit_run *run, const sx_verdict_row *row)
{
	sx_status st = sx_audit_add(run->audit, row);
	if (st == SX_ELIMIT) {
		static bool told;
		if (!told)
			fprintf(stderr,
			        "syrinx audit: warning: the verdicts span more than %d weeks; "
			        "the weekly chart leaves out the weeks past that (use --from "
			        "and --to)\n",
			        SX_AUDIT_MAX_WEEKS);
		told = true;
	} else if (st != SX_OK) {
		fprintf(stderr, "syrinx audit: error: %s\n", sx_status_message(st));
		run->failed = 1;
	}
	if (run->csv.fp) {
		sx_audit_csv_row(&run->csv_buf, row);
		flush_buf(run, &run->csv_buf, &run->csv, false);
	}
	if (run->json.fp) {
		sx_audit_json_row(&run->json_buf, row, run->json_first);
		run->json_first = false;
		flush_buf(run, &run->json_buf, &run->json, false);
	}
}

/* ---- from the decision log --------------------------------------------- */

static void audit_log(audit_run *run, sx_dlog *log)
{
	sx_dlog_cursor *cur = NULL;
	sx_verdict_row row;
	bool got = true;
	sx_status st;

	if (run->progress && sx_dlog_count(log, &run->filter, &run->total) != SX_OK)
		run->total = 0;
	st = sx_dlog_query(log, &run->filter, &cur);
	while (st == SX_OK && got) {
		st = sx_dlog_next(cur, &row, &got);
		if (st == SX_OK && got) {
			take_row(run, &row);
			run->done++;
			draw_progress(run, false);
		}
	}
	if (st != SX_OK) {
		fprintf(stderr, "%s: error: %s\n", run->db, sx_dlog_error(log));
		run->failed = 1;
	}
	sx_dlog_cursor_close(cur);
}

/* ---- from feed files --------------------------------------------------- */

static void screen_file(audit_run *run, const sx_screener *screener, FILE *fp, const char *name,
                        sx_row_builder *b)
{
	sx_feed_options fo = {run->input, run->utc_offset_min, sx_screener_map_code,
			      (void *)screener};
	sx_diag_list diags;
	sx_feed *feed = NULL;
	sx_specimen s;
	sx_feed_item item;
	bool got = true;
	uint64_t base = run->done;
	char source[512];

	sx_diag_list_init(&diags);
	sx_specimen_init(&s);
	if (sx_feed_open(fp, name, &fo, &feed, &diags) != SX_OK) {
		run->input_errors = 1;
		goto out;
	}
	while (got) {
		size_t mark = diags.count;
		sx_status st = sx_feed_next(feed, &s, &item, &got, &diags);
		if (st == SX_ENOMEM)
			run->failed = 1;
		else if (st != SX_OK)
			run->input_errors = 1;
		if (got && item.input_errors) {
			sx_audit_add_unscreened(run->audit);
			run->input_errors = 1;
		} else if (got) {
			sx_verdict v;
			sx_row_origin o = {NULL,
			                   NULL,
			                   source,
			                   NULL,
			                   0,
			                   SX_ROW_NO_TIME,
			                   sx_screener_version(screener)};
			snprintf(source, sizeof source, "%s:%u", name, item.line);
			if (sx_screener_run(screener, &s, &v) != SX_OK) {
				run->failed = 1;
			} else {
				for (size_t i = mark; i < diags.count; i++)
					if (diags.items[i].severity == SX_WARNING)
						sx_verdict_add_warning(&v, "%s",
						                       diags.items[i].message);
				if (sx_verdict_row_build(b, &s, &v, &o) != SX_OK)
					run->failed = 1;
				else if (sx_row_filter_match(&run->filter, &b->row))
					take_row(run, &b->row);
			}
		}
		for (size_t i = mark; i < diags.count; i++)
			if (diags.items[i].severity == SX_ERROR)
				sx_cli_print_diag(stderr, &diags.items[i]);
		sx_diag_list_clear(&diags);
		if (run->progress && fp != stdin) {
			long at = ftell(fp);
			if (at > 0)
				run->done = base + (uint64_t)at;
			draw_progress(run, false);
		}
	}
out:
	sx_cli_print_diags(stderr, &diags);
	sx_diag_list_clear(&diags);
	sx_specimen_clear(&s);
	sx_feed_close(feed);
}

static void audit_files(audit_run *run, char **files, int count)
{
	sx_screener *screener = NULL;
	sx_row_builder b;
	struct stat sb;

	if (sx_cli_load_screener("audit", run->ruleset, &screener) != SX_EXIT_OK) {
		run->failed = 1;
		return;
	}
	for (int i = 0; i < count; i++)
		if (strcmp(files[i], "-") != 0 && stat(files[i], &sb) == 0)
			run->total += (uint64_t)sb.st_size;
	sx_row_builder_init(&b);
	for (int i = 0; i < count; i++) {
		FILE *fp;
		uint64_t before = run->done;
		if (strcmp(files[i], "-") == 0) {
			screen_file(run, screener, stdin, "-", &b);
			continue;
		}
		fp = fopen(files[i], "rb");
		if (!fp) {
			fprintf(stderr, "%s: error: cannot open: %s\n", files[i], strerror(errno));
			run->input_errors = 1;
			continue;
		}
		screen_file(run, screener, fp, files[i], &b);
		fclose(fp);
		if (stat(files[i], &sb) == 0)
			run->done = before + (uint64_t)sb.st_size;
	}
	sx_row_builder_free(&b);
	sx_screener_free(screener);
}

/* ---- the command line -------------------------------------------------- */

static bool parse_when(const char *text, int offset, int64_t *ms)
{
	sx_time t;
	if (sx_time_parse_iso8601(text, strlen(text), offset, &t, NULL) != SX_OK)
		return false;
	*ms = t.utc_ms;
	return true;
}

static int usage_error(const char *fmt, ...) __attribute__((format(printf, 1, 2)));

static int usage_error(const char *fmt, ...)
{
	va_list ap;
	fputs("syrinx audit: ", stderr);
	va_start(ap, fmt);
	vfprintf(stderr, fmt, ap);
	va_end(ap);
	fputs("\nsyrinx audit: see 'syrinx audit --help'\n", stderr);
	return SX_EXIT_USAGE;
}

int sx_cmd_audit(int argc, char **argv)
{
	enum {
		O_DB = 256,
		O_FROM,
		O_TO,
		O_LOCATION,
		O_COLLECTOR,
		O_TRANSPORT,
		O_DISPOSITION,
		O_REASON,
		O_OFFSET,
		O_RULESET,
		O_HTML,
		O_CSV,
		O_JSON,
		O_TITLE,
		O_INPUT,
		O_NO_PROGRESS
	};
	static const struct option longopts[] = {
	        {"db", required_argument, NULL, O_DB},
	        {"from", required_argument, NULL, O_FROM},
	        {"to", required_argument, NULL, O_TO},
	        {"location", required_argument, NULL, O_LOCATION},
	        {"collector", required_argument, NULL, O_COLLECTOR},
	        {"transport", required_argument, NULL, O_TRANSPORT},
	        {"disposition", required_argument, NULL, O_DISPOSITION},
	        {"reason", required_argument, NULL, O_REASON},
	        {"utc-offset", required_argument, NULL, O_OFFSET},
	        {"ruleset", required_argument, NULL, O_RULESET},
	        {"html", required_argument, NULL, O_HTML},
	        {"csv", required_argument, NULL, O_CSV},
	        {"json", required_argument, NULL, O_JSON},
	        {"title", required_argument, NULL, O_TITLE},
	        {"input", required_argument, NULL, O_INPUT},
	        {"no-progress", no_argument, NULL, O_NO_PROGRESS},
	        {"help", no_argument, NULL, 'h'},
	        {NULL, 0, NULL, 0},
	};
	const char *from = NULL, *to = NULL;
	sx_dlog *log = NULL;
	bool no_progress = false;
	audit_run run;
	int c, stdout_uses = 0, status;
	char source[1024];

	memset(&run, 0, sizeof run);
	sx_row_filter_init(&run.filter);
	run.input = SX_FEED_AUTO;
	optind = 1;
	while ((c = getopt_long(argc, argv, "h", longopts, NULL)) != -1) {
		switch (c) {
		case O_DB:
			run.db = optarg;
			break;
		case O_FROM:
			from = optarg;
			break;
		case O_TO:
			to = optarg;
			break;
		case O_LOCATION:
		case O_COLLECTOR:
		case O_REASON:
			if (!optarg[0])
				return usage_error("%s takes a value that is not empty",
				                   c == O_LOCATION    ? "--location"
				                   : c == O_COLLECTOR ? "--collector"
				                                      : "--reason");
			if (c == O_LOCATION)
				run.filter.location = optarg;
			else if (c == O_COLLECTOR)
				run.filter.collector = optarg;
			else
				run.filter.reason_code = optarg;
			break;
		case O_TRANSPORT:
			if (!sx_field_choice_lookup(SX_F_TRANSPORT, optarg, strlen(optarg)))
				return usage_error(
				        "--transport takes hand, pneumatic-tube, courier "
				        "or other, not '%s'",
				        optarg);
			run.filter.transport = optarg;
			break;
		case O_DISPOSITION:
			for (int d = SX_ACCEPT; d <= SX_REJECT; d++)
				if (strcmp(optarg, sx_disposition_name((sx_disposition)d)) == 0)
					run.filter.disposition = d;
			if (run.filter.disposition < 0)
				return usage_error("--disposition takes accept, comment or reject, "
				                   "not '%s'",
				                   optarg);
			break;
		case O_RULESET:
			run.ruleset = optarg;
			break;
		case O_OFFSET:
			if (sx_parse_offset(optarg, &run.utc_offset_min) != SX_OK)
				return usage_error("--utc-offset takes an offset such as +01:00 or "
				                   "-05:30, not '%s'",
				                   optarg);
			break;
		case O_HTML:
			run.html.path = optarg;
			break;
		case O_CSV:
			run.csv.path = optarg;
			break;
		case O_JSON:
			run.json.path = optarg;
			break;
		case O_TITLE:
			run.title = optarg;
			break;
		case O_INPUT:
			if (strcmp(optarg, "auto") == 0)
				run.input = SX_FEED_AUTO;
			else if (strcmp(optarg, "xml") == 0)
				run.input = SX_FEED_XML;
			else if (strcmp(optarg, "hl7") == 0)
				run.input = SX_FEED_HL7;
			else
				return usage_error("--input takes auto, xml or hl7, not '%s'",
				                   optarg);
			break;
		case O_NO_PROGRESS:
			no_progress = true;
			break;
		case 'h':
			fputs(audit_usage, stdout);
			return SX_EXIT_OK;
		default:
			fputs("syrinx audit: see 'syrinx audit --help'\n", stderr);
			return SX_EXIT_USAGE;
		}
	}
	/* dates are read after the options, so --utc-offset may come anywhere */
	if (from && !parse_when(from, run.utc_offset_min, &run.filter.from_ms))
		return usage_error("--from takes an ISO 8601 date or date-time such as 2026-03-01 "
		                   "or 2026-03-01T08:00+01:00, not '%s'",
		                   from);
	if (to && !parse_when(to, run.utc_offset_min, &run.filter.to_ms))
		return usage_error("--to takes an ISO 8601 date or date-time such as 2026-04-01 "
		                   "or 2026-04-01T00:00+01:00, not '%s'",
		                   to);
	if (from && to && run.filter.to_ms <= run.filter.from_ms)
		return usage_error("%s: --to must come after --from (the period includes its "
		                   "start and excludes its end)",
		                   to);
	if (!run.db && optind >= argc)
		return usage_error("%s", "say what to read: --db FILE or feed files");
	if (run.db && optind < argc)
		return usage_error("'%s': read either the decision log (--db) or feed files, not "
		                   "both",
		                   argv[optind]);
	if (!run.html.path && !run.csv.path && !run.json.path)
		return usage_error("%s", "say what to write: --html OUT, --csv OUT or --json OUT");
	stdout_uses = (run.html.path && strcmp(run.html.path, "-") == 0) +
	              (run.csv.path && strcmp(run.csv.path, "-") == 0) +
	              (run.json.path && strcmp(run.json.path, "-") == 0);
	if (stdout_uses > 1)
		return usage_error("%s", "only one output can go to standard output ('-')");
	/* the log first: when it cannot be read, no output is begun */
	if (run.db) {
		sx_diag_list diags;
		sx_diag_list_init(&diags);
		if (sx_dlog_open(run.db, SX_DLOG_READ, &log, &diags) != SX_OK) {
			sx_cli_print_diags(stderr, &diags);
			sx_diag_list_clear(&diags);
			return SX_EXIT_SOFTWARE;
		}
		sx_diag_list_clear(&diags);
	}
	if (!open_output(&run.html) || !open_output(&run.csv) || !open_output(&run.json)) {
		close_output(&run.html);
		close_output(&run.csv);
		close_output(&run.json);
		sx_dlog_close(log);
		return SX_EXIT_SOFTWARE;
	}
	if (sx_audit_new(run.utc_offset_min, &run.audit) != SX_OK) {
		fprintf(stderr, "syrinx audit: error: %s\n", sx_status_message(SX_ENOMEM));
		sx_dlog_close(log);
		return SX_EXIT_SOFTWARE;
	}
	run.progress = !no_progress && isatty(STDERR_FILENO);
	sx_strbuf_init(&run.csv_buf, 0);
	sx_strbuf_init(&run.json_buf, 0);
	run.json_first = true;
	if (run.csv.fp)
		sx_audit_csv_header(&run.csv_buf);
	if (run.json.fp)
		sx_audit_json_begin(&run.json_buf);

	if (run.db) {
		audit_log(&run, log);
		sx_dlog_close(log);
		snprintf(source, sizeof source, "the decision log %s", run.db);
	} else {
		audit_files(&run, argv + optind, argc - optind);
		if (argc - optind == 1)
			snprintf(source, sizeof source, "the feed file %s, screened now",
			         argv[optind]);
		else
			snprintf(source, sizeof source, "%d feed files, screened now",
			         argc - optind);
	}
	run.done = run.total;
	draw_progress(&run, true);

	if (run.json.fp)
		sx_audit_json_end(&run.json_buf);
	flush_buf(&run, &run.csv_buf, &run.csv, true);
	flush_buf(&run, &run.json_buf, &run.json, true);
	if (run.html.fp) {
		sx_strbuf page;
		sx_audit_meta meta = {run.title,        source,      run.filter.from_ms,
		                      run.filter.to_ms, &run.filter, PACKAGE_VERSION};
		sx_strbuf_init(&page, 0);
		if (sx_audit_html(run.audit, &meta, &page) != SX_OK) {
			fprintf(stderr, "syrinx audit: error: cannot make the HTML report\n");
			run.failed = 1;
		} else {
			flush_buf(&run, &page, &run.html, true);
		}
		sx_strbuf_free(&page);
	}
	if (!close_output(&run.html) | !close_output(&run.csv) | !close_output(&run.json))
		run.failed = 1;
	sx_strbuf_free(&run.csv_buf);
	sx_strbuf_free(&run.json_buf);
	sx_audit_free(run.audit);
	status = SX_EXIT_OK;
	if (run.failed)
		status = SX_EXIT_SOFTWARE;
	else if (run.input_errors)
		status = SX_EXIT_INPUT;
	return status;
}
