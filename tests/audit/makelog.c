/* SPDX-License-Identifier: MIT */
/*
 * makelog.c - screens feed files and writes their verdicts into a decision
 * log, in batches of a chosen size, as the daemon would; prints the rows
 * per second it reached. For the audit's tests (an audit of the log must
 * equal an audit of the files) and for measuring grouped commits.
 *
 * usage: makelog [--batch N] [--messages] LOG FEED...
 *   --batch N     rows per commit (default 100)
 *   --messages    log each specimen as an HL7 message of its own: sender
 *                 "LIS^SBRH", control id the specimen id, and an ACK stored
 *                 with it (the resend table is exercised as the daemon will)
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "core/sha256.h"
#include "feed/feed.h"
#include "model/screen.h"
#include "store/decision_log.h"

static double now_s(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + (double)ts.tv_nsec / 1e9;
}

int main(int argc, char **argv)
{
	long batch = 100;
	int messages = 0, arg = 1, status = 0;
	sx_diag_list diags;
	sx_dlog *log = NULL;
	sx_screener *screener = NULL;
	sx_row_builder b;
	unsigned long rows = 0, in_batch = 0;
	double start, logging = 0, t0;

	while (arg < argc && argv[arg][0] == '-' && argv[arg][1] == '-') {
		if (strcmp(argv[arg], "--batch") == 0 && arg + 1 < argc)
			batch = strtol(argv[++arg], NULL, 10);
		else if (strcmp(argv[arg], "--messages") == 0)
			messages = 1;
		else
			break;
		arg++;
	}
	if (argc - arg < 2 || batch < 1) {
		fputs("usage: makelog [--batch N] [--messages] LOG FEED...\n", stderr);
		return 2;
	}
	sx_diag_list_init(&diags);
	{
		/* the same policy as syrinx audit and check: the shipped default ruleset */
		const char *top = getenv("SYRINX_DATADIR") ? getenv("SYRINX_DATADIR")
							  : getenv("SX_SRCDIR");
		char dir[4096];
		snprintf(dir, sizeof dir, "%s/rulesets/default", top ? top : ".");
		if (sx_screener_load(dir, &screener, &diags) != SX_OK) {
			for (size_t i = 0; i < diags.count; i++)
				fprintf(stderr, "%s: %s\n", dir, diags.items[i].message);
			return 1;
		}
	}
	if (sx_dlog_open(argv[arg], SX_DLOG_WRITE | SX_DLOG_CREATE, &log, &diags) != SX_OK) {
		for (size_t i = 0; i < diags.count; i++)
			fprintf(stderr, "%s: %s\n", argv[arg], diags.items[i].message);
		return 1;
	}
	sx_row_builder_init(&b);
	start = now_s();
	for (int f = arg + 1; f < argc; f++) {
		FILE *fp = fopen(argv[f], "rb");
		sx_feed_options fo = {SX_FEED_AUTO, 0, sx_screener_map_code, screener};
		sx_feed *feed = NULL;
		sx_specimen s;
		sx_feed_item item;
		bool got = true;
		char source[512];
		if (!fp || sx_feed_open(fp, argv[f], &fo, &feed, &diags) != SX_OK) {
			fprintf(stderr, "%s: cannot read\n", argv[f]);
			status = 1;
			if (fp)
				fclose(fp);
			continue;
		}
		sx_specimen_init(&s);
		while (got) {
			sx_verdict v;
			sx_row_origin o = {
			        NULL, NULL, source, NULL, 0, 0, sx_screener_version(screener)};
			sx_feed_next(feed, &s, &item, &got, &diags);
			sx_diag_list_clear(&diags);
			if (!got || item.input_errors || sx_screener_run(screener, &s, &v) != SX_OK)
				continue;
			snprintf(source, sizeof source, "%s:%u", argv[f], item.line);
			o.input_received_ms = s.present[SX_F_ANALYSED_AT]
			                              ? s.time[SX_F_ANALYSED_AT].utc_ms
			                              : SX_ROW_NO_TIME;
			if (messages) {
				o.sender = "LIS^SBRH";
				o.control_id = s.text[SX_F_SPECIMEN_ID];
			}
			if (sx_verdict_row_build(&b, &s, &v, &o) != SX_OK) {
				status = 1;
				break;
			}
			t0 = now_s();
			if (in_batch == 0 && sx_dlog_begin(log) != SX_OK) {
				status = 1;
				break;
			}
			if (messages) {
				char ack[256];
				bool dup;
				int n = snprintf(
				        ack, sizeof ack,
				        "MSH|^~\\&|SYRINX|LAB|LIS|SBRH|||ACK|%s|P|2.5\rMSA|AA|%s\r",
				        o.control_id, o.control_id);
				sx_dlog_ack a = {o.sender, o.control_id, b.row.input_sha256,
				                 ack,      (size_t)n,    o.input_received_ms};
				if (sx_dlog_add_message(log, &a, &b.row, 1, &dup) != SX_OK)
					status = 1;
			} else if (sx_dlog_add(log, &b.row) != SX_OK) {
				status = 1;
			}
			rows++;
			if (++in_batch == (unsigned long)batch) {
				if (sx_dlog_commit(log) != SX_OK)
					status = 1;
				in_batch = 0;
			}
			logging += now_s() - t0;
		}
		sx_specimen_clear(&s);
		sx_feed_close(feed);
		fclose(fp);
	}
	t0 = now_s();
	if (in_batch && sx_dlog_commit(log) != SX_OK)
		status = 1;
	logging += now_s() - t0;
	if (status)
		fprintf(stderr, "makelog: %s\n", sx_dlog_error(log));
	{
		double t = now_s() - start;
		fprintf(stderr,
		        "makelog: %lu rows in %.2f s, of which %.2f s in the log: %.0f rows/s "
		        "logged in batches of %ld\n",
		        rows, t, logging, logging > 0 ? (double)rows / logging : 0.0, batch);
	}
	sx_row_builder_free(&b);
	sx_screener_free(screener);
	sx_dlog_close(log);
	sx_diag_list_clear(&diags);
	return status;
}
