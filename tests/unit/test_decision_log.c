/* SPDX-License-Identifier: MIT */
/*
 * test_decision_log.c - the decision log: creation, grouped writes, the ACK
 * table for resends, filters (the SQL and sx_row_filter_match agree on the
 * same rows), reopening, refusing files that are not a log, and failing
 * allocations.
 */
#include <check.h>
#include <math.h>
#include <sqlite3.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "core/alloc.h"
#include "core/sxtime.h"
#include "store/decision_log.h"

static char dir[64];
static char path[128];

static void setup(void)
{
	snprintf(dir, sizeof dir, "/tmp/sx-dlog-XXXXXX");
	ck_assert_ptr_nonnull(mkdtemp(dir));
	snprintf(path, sizeof path, "%s/log.sqlite", dir);
}

static void teardown(void)
{
	char p[160];
	static const char *const ext[] = {"", "-wal", "-shm", "-journal"};
	for (int i = 0; i < 4; i++) {
		snprintf(p, sizeof p, "%s%s", path, ext[i]);
		unlink(p);
	}
	snprintf(p, sizeof p, "%s/other", dir);
	unlink(p);
	rmdir(dir);
}

static int64_t at(int day, int hour, int minute)
{
	return ((sx_days_from_civil(2026, 3, (unsigned)day) * 24 + hour) * 60 + minute) * 60000;
}

static const char sha[] = "0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef";

/* A test row: the given fields, the rest plausible. */
static sx_verdict_row row(const char *id, const char *location, const char *collector,
                          const char *transport, sx_disposition d, const char *codes,
                          int64_t collected)
{
	sx_verdict_row r;
	memset(&r, 0, sizeof r);
	r.input_sha256 = sha;
	r.input_received_ms = SX_ROW_NO_TIME;
	r.collected_ms = collected;
	r.received_ms = collected == SX_ROW_NO_TIME ? SX_ROW_NO_TIME : collected + 120000;
	r.analysed_ms = collected == SX_ROW_NO_TIME ? SX_ROW_NO_TIME : collected + 600000;
	r.audit_ms = sx_verdict_row_audit_time(&r);
	r.specimen_id = id;
	r.location = location;
	r.collector = collector;
	r.transport = transport;
	r.storage = "room";
	r.wbc = 7.5;
	r.delay_min = collected == SX_ROW_NO_TIME ? NAN : 10.0;
	r.po2_mmhg = 88.1;
	r.disposition = d;
	r.bias_mmhg = -1.2;
	r.bias_low_mmhg = -1.9;
	r.bias_high_mmhg = -0.4;
	r.reason_codes = codes;
	r.reasons_json = "[]";
	r.mechanisms_json = "[{\"name\":\"metabolism\",\"bias_mmhg\":-1.2}]";
	r.warnings_json = "[]";
	r.ruleset = "built-in 0.1";
	r.source = "feed.xml:3";
	return r;
}

/* The rows of the filter tests. */
static sx_verdict_row sample[8];
static void make_sample(void)
{
	sample[0] = row("S1", "ICU/BED03", "RN-1", "hand", SX_ACCEPT, "", at(2, 8, 0));
	sample[1] = row("S2", "ICU", "RN-2", "pneumatic-tube", SX_REJECT,
	                "delay-too-long bias-reject", at(3, 9, 30));
	sample[2] = row("S3", "ICU2/BED01", "RN-1", "courier", SX_COMMENT, "delay-beyond-limit",
	                at(9, 0, 0));
	sample[3] = row("S4", "ED/MAJORS1", NULL, NULL, SX_REJECT, "po2-above-alveolar",
	                at(16, 23, 59));
	sample[4] = row("S5", NULL, "RN-2", "hand", SX_ACCEPT, "", SX_ROW_NO_TIME);
	sample[5] =
	        row("S6", "ED", "RN-3", "hand", SX_COMMENT, "delay-too-long-ish", at(31, 12, 0));
	sample[6] =
	        row("S7", "ICU/BED07", "RN-1", "hand", SX_REJECT, "bias-reject", at(9, 0, 0) - 1);
	sample[7] = row("S8", "ED/RESUS2", "RN-3", "pneumatic-tube", SX_ACCEPT, "", at(2, 7, 59));
}

static sx_dlog *create_log(void)
{
	sx_dlog *log = NULL;
	sx_diag_list diags;
	sx_diag_list_init(&diags);
	ck_assert_int_eq(sx_dlog_open(path, SX_DLOG_WRITE | SX_DLOG_CREATE, &log, &diags), SX_OK);
	ck_assert_uint_eq(diags.count, 0);
	sx_diag_list_clear(&diags);
	return log;
}

static void fill_sample(sx_dlog *log)
{
	make_sample();
	ck_assert_int_eq(sx_dlog_begin(log), SX_OK);
	for (size_t i = 0; i < 8; i++)
		ck_assert_int_eq(sx_dlog_add(log, &sample[i]), SX_OK);
	ck_assert_int_eq(sx_dlog_commit(log), SX_OK);
}

/* The specimen ids a query gives, in order, joined by spaces. */
static void query_ids(sx_dlog *log, const sx_row_filter *f, char *out, size_t size)
{
	sx_dlog_cursor *c = NULL;
	sx_verdict_row r;
	bool got = true;
	size_t len = 0;
	out[0] = '\0';
	ck_assert_int_eq(sx_dlog_query(log, f, &c), SX_OK);
	while (got) {
		ck_assert_int_eq(sx_dlog_next(c, &r, &got), SX_OK);
		if (got)
			len += (size_t)snprintf(out + len, size - len, "%s%s", len ? " " : "",
			                        r.specimen_id);
	}
	sx_dlog_cursor_close(c);
}

START_TEST(create_gives_a_wal_file_of_our_schema)
{
	sx_dlog *log = create_log();
	sqlite3 *db;
	sqlite3_stmt *st;
	sx_dlog_close(log);
	/* read it back with SQLite itself, as the sqlite3 shell would */
	ck_assert_int_eq(sqlite3_open_v2(path, &db, SQLITE_OPEN_READONLY, NULL), SQLITE_OK);
	ck_assert_int_eq(sqlite3_prepare_v2(db,
	                                    "SELECT (SELECT user_version FROM pragma_user_version),"
	                                    " (SELECT application_id FROM pragma_application_id),"
	                                    " (SELECT journal_mode FROM pragma_journal_mode),"
	                                    " (SELECT count(*) FROM sqlite_master WHERE name IN"
	                                    " ('verdict', 'ack'))",
	                                    -1, &st, NULL),
	                 SQLITE_OK);
	ck_assert_int_eq(sqlite3_step(st), SQLITE_ROW);
	ck_assert_int_eq(sqlite3_column_int(st, 0), SX_DLOG_SCHEMA_VERSION);
	ck_assert_int_eq(sqlite3_column_int(st, 1), SX_DLOG_APPLICATION_ID);
	ck_assert_str_eq((const char *)sqlite3_column_text(st, 2), "wal");
	ck_assert_int_eq(sqlite3_column_int(st, 3), 2);
	sqlite3_finalize(st);
	sqlite3_close(db);
}
END_TEST

START_TEST(rows_come_back_as_written)
{
	sx_dlog *log = create_log();
	sx_dlog_cursor *c;
	sx_verdict_row r;
	bool got;
	fill_sample(log);
	ck_assert_int_eq(sx_dlog_query(log,
	                               &(sx_row_filter){SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, NULL,
	                                                NULL, NULL, -1},
	                               &c),
	                 SX_OK);
	/* the row without a time first, then by time */
	ck_assert_int_eq(sx_dlog_next(c, &r, &got), SX_OK);
	ck_assert(got);
	ck_assert_str_eq(r.specimen_id, "S5");
	ck_assert_ptr_null(r.location);
	ck_assert(r.audit_ms == SX_ROW_NO_TIME && r.collected_ms == SX_ROW_NO_TIME);
	ck_assert(isnan(r.delay_min));
	ck_assert_int_eq(sx_dlog_next(c, &r, &got), SX_OK);
	ck_assert_str_eq(r.specimen_id, "S8");
	ck_assert_int_eq(sx_dlog_next(c, &r, &got), SX_OK);
	ck_assert_str_eq(r.specimen_id, "S1");
	ck_assert(r.id > 0);
	ck_assert(r.collected_ms == at(2, 8, 0) && r.audit_ms == at(2, 8, 0));
	ck_assert(r.received_ms == at(2, 8, 2) && r.analysed_ms == at(2, 8, 10));
	ck_assert(r.input_received_ms == SX_ROW_NO_TIME);
	ck_assert_str_eq(r.location, "ICU/BED03");
	ck_assert_str_eq(r.collector, "RN-1");
	ck_assert_str_eq(r.transport, "hand");
	ck_assert_str_eq(r.storage, "room");
	ck_assert_str_eq(r.input_sha256, sha);
	ck_assert_str_eq(r.source, "feed.xml:3");
	ck_assert_ptr_null(r.sender);
	ck_assert_ptr_null(r.control_id);
	ck_assert_double_eq_tol(r.wbc, 7.5, 1e-12);
	ck_assert_double_eq_tol(r.delay_min, 10.0, 1e-12);
	ck_assert_double_eq_tol(r.po2_mmhg, 88.1, 1e-12);
	ck_assert_double_eq_tol(r.bias_mmhg, -1.2, 1e-12);
	ck_assert_double_eq_tol(r.bias_low_mmhg, -1.9, 1e-12);
	ck_assert_double_eq_tol(r.bias_high_mmhg, -0.4, 1e-12);
	ck_assert_int_eq(r.disposition, SX_ACCEPT);
	ck_assert_str_eq(r.mechanisms_json, "[{\"name\":\"metabolism\",\"bias_mmhg\":-1.2}]");
	ck_assert_str_eq(r.ruleset, "built-in 0.1");
	sx_dlog_cursor_close(c);
	sx_dlog_close(log);
}
END_TEST

/* Each filter against the ids it must take, in audit-time order. */
static const struct {
	sx_row_filter filter;
	const char *ids;
} filters[] = {
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, NULL, NULL, NULL, -1}, "S5 S8 S1 S2 S7 S3 S4 S6"},
        /* a week, from inclusive and to exclusive: S7 is 1 ms before 9 March, S3 at it */
        {{0, 0, NULL, NULL, NULL, NULL, -1}, "S8 S1 S2 S7"},
        {{0, 0, NULL, NULL, NULL, NULL, -1}, "S3 S4"},
        {{SX_ROW_NO_TIME, 0, NULL, NULL, NULL, NULL, -1}, "S8 S1 S2 S7"},
        {{0, SX_ROW_NO_TIME, NULL, NULL, NULL, NULL, -1}, "S6"},
        /* a unit takes itself and its beds, not a unit that begins alike */
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, "ICU", NULL, NULL, NULL, -1}, "S1 S2 S7"},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, "ICU/BED03", NULL, NULL, NULL, -1}, "S1"},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, "ED", NULL, NULL, NULL, -1}, "S8 S4 S6"},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, "IC", NULL, NULL, NULL, -1}, ""},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, "RN-1", NULL, NULL, -1}, "S1 S7 S3"},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, NULL, "pneumatic-tube", NULL, -1}, "S8 S2"},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, NULL, NULL, NULL, SX_REJECT}, "S2 S7 S4"},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, NULL, NULL, NULL, SX_COMMENT}, "S3 S6"},
        /* a reason code is a whole word of the list */
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, NULL, NULL, "delay-too-long", -1}, "S2"},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, NULL, NULL, "bias-reject", -1}, "S2 S7"},
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, NULL, NULL, "delay", -1}, ""},
        /* all together */
        {{0, 0, "ICU", "RN-1", "hand", "bias-reject", SX_REJECT}, "S7"},
        /* a collector filter never takes a row without a collector */
        {{SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, "RN-9", NULL, NULL, -1}, ""},
};

static sx_row_filter filter_case(int i)
{
	sx_row_filter f = filters[i].filter;
	/* times that a static initialiser cannot compute */
	if (i == 1)
		f.from_ms = at(2, 0, 0), f.to_ms = at(9, 0, 0);
	else if (i == 2)
		f.from_ms = at(9, 0, 0), f.to_ms = at(23, 0, 0);
	else if (i == 3)
		f.to_ms = at(9, 0, 0);
	else if (i == 4)
		f.from_ms = at(23, 0, 0);
	else if (i == 16)
		f.from_ms = at(2, 0, 0), f.to_ms = at(9, 0, 0);
	return f;
}

START_TEST(filters_take_the_right_rows)
{
	sx_dlog *log = create_log();
	sx_row_filter f = filter_case(_i);
	char got[256], by_c[256] = "";
	size_t len = 0;
	fill_sample(log);
	query_ids(log, &f, got, sizeof got);
	ck_assert_str_eq(got, filters[_i].ids);
	/* the same rows through the C filter (the file audits use it) */
	{
		static const int order[8] = {4, 7, 0, 1, 6, 2, 3, 5}; /* audit-time order */
		for (int k = 0; k < 8; k++)
			if (sx_row_filter_match(&f, &sample[order[k]]))
				len += (size_t)snprintf(by_c + len, sizeof by_c - len, "%s%s",
				                        len ? " " : "",
				                        sample[order[k]].specimen_id);
	}
	ck_assert_str_eq(by_c, filters[_i].ids);
	sx_dlog_close(log);
}
END_TEST

START_TEST(count_agrees_with_the_query)
{
	sx_dlog *log = create_log();
	fill_sample(log);
	for (size_t i = 0; i < sizeof filters / sizeof filters[0]; i++) {
		sx_row_filter f = filter_case((int)i);
		uint64_t count, words = 0;
		const char *p = filters[i].ids;
		ck_assert_int_eq(sx_dlog_count(log, &f, &count), SX_OK);
		if (*p)
			for (words = 1; *p; p++)
				words += *p == ' ';
		ck_assert_uint_eq(count, words);
	}
	sx_dlog_close(log);
}
END_TEST

START_TEST(a_resent_message_gets_its_first_ack)
{
	static const char ack1[] = "MSH|^~\\&|SYRINX|LAB|LIS|WARD|20260314070200||ACK|A1|P|2.5\r"
	                           "MSA|AA|MSG0001\r\0binary tail";
	sx_dlog *log = create_log();
	sx_verdict_row rows[2];
	sx_dlog_ack ack = {"LIS^WARD", "MSG0001", sha, ack1, sizeof ack1 - 1, at(14, 7, 2)};
	sx_dlog_ack other_ack = {"LIS^WARD", "MSG0001", sha, "AE", 2, at(14, 7, 3)};
	sx_dlog_ack other_sender = {"LIS2^WARD", "MSG0001", sha, "AA", 2, at(14, 7, 3)};
	sx_strbuf bytes;
	char stored[SX_SHA256_HEX];
	bool dup, found;
	uint64_t count;
	sx_row_filter all;

	make_sample();
	rows[0] = sample[0];
	rows[1] = sample[1];
	sx_row_filter_init(&all);
	ck_assert_int_eq(sx_dlog_begin(log), SX_OK);
	ck_assert_int_eq(sx_dlog_add_message(log, &ack, rows, 2, &dup), SX_OK);
	ck_assert(!dup);
	/* the same message again within the batch is already a duplicate */
	ck_assert_int_eq(sx_dlog_add_message(log, &other_ack, rows, 2, &dup), SX_OK);
	ck_assert(dup);
	ck_assert_int_eq(sx_dlog_commit(log), SX_OK);
	ck_assert_int_eq(sx_dlog_begin(log), SX_OK);
	ck_assert_int_eq(sx_dlog_add_message(log, &other_ack, rows, 1, &dup), SX_OK);
	ck_assert(dup);
	ck_assert_int_eq(sx_dlog_add_message(log, &other_sender, rows, 1, &dup), SX_OK);
	ck_assert(!dup);
	ck_assert_int_eq(sx_dlog_commit(log), SX_OK);
	ck_assert_int_eq(sx_dlog_count(log, &all, &count), SX_OK);
	ck_assert_uint_eq(count, 3);

	sx_strbuf_init(&bytes, 0);
	ck_assert_int_eq(sx_dlog_find_ack(log, "LIS^WARD", "MSG0001", &bytes, stored, &found),
	                 SX_OK);
	ck_assert(found);
	ck_assert_uint_eq(bytes.len, sizeof ack1 - 1);
	ck_assert(memcmp(bytes.data, ack1, sizeof ack1 - 1) == 0);
	ck_assert_str_eq(stored, sha);
	sx_strbuf_reset(&bytes);
	ck_assert_int_eq(sx_dlog_find_ack(log, "LIS^WARD", "MSG0002", &bytes, NULL, &found), SX_OK);
	ck_assert(!found);
	ck_assert_uint_eq(bytes.len, 0);
	sx_strbuf_free(&bytes);

	/* the message's rows carry its sender and control id */
	{
		sx_row_filter f;
		sx_dlog_cursor *c;
		sx_verdict_row r;
		bool got;
		sx_row_filter_init(&f);
		f.location = "ICU/BED03";
		ck_assert_int_eq(sx_dlog_query(log, &f, &c), SX_OK);
		ck_assert_int_eq(sx_dlog_next(c, &r, &got), SX_OK);
		ck_assert(got);
		ck_assert_str_eq(r.sender, "LIS^WARD");
		ck_assert_str_eq(r.control_id, "MSG0001");
		sx_dlog_cursor_close(c);
	}
	sx_dlog_close(log);
}
END_TEST

START_TEST(batches_commit_or_vanish)
{
	sx_dlog *log = create_log();
	sx_row_filter all;
	uint64_t count;
	sx_verdict_row bad;
	make_sample();
	sx_row_filter_init(&all);
	/* no batch open */
	ck_assert_int_eq(sx_dlog_add(log, &sample[0]), SX_EINVAL);
	ck_assert_int_eq(sx_dlog_commit(log), SX_EINVAL);
	ck_assert_str_ne(sx_dlog_error(log), "");
	ck_assert_int_eq(sx_dlog_begin(log), SX_OK);
	ck_assert_int_eq(sx_dlog_begin(log), SX_EINVAL);
	ck_assert_int_eq(sx_dlog_add(log, &sample[0]), SX_OK);
	ck_assert_int_eq(sx_dlog_add(log, &sample[1]), SX_OK);
	ck_assert_int_eq(sx_dlog_rollback(log), SX_OK);
	ck_assert_int_eq(sx_dlog_count(log, &all, &count), SX_OK);
	ck_assert_uint_eq(count, 0);
	/* a row without its fingerprint is refused, the batch goes on */
	bad = sample[2];
	bad.input_sha256 = "short";
	ck_assert_int_eq(sx_dlog_begin(log), SX_OK);
	ck_assert_int_eq(sx_dlog_add(log, &bad), SX_EINVAL);
	ck_assert_int_eq(sx_dlog_add(log, &sample[2]), SX_OK);
	ck_assert_int_eq(sx_dlog_commit(log), SX_OK);
	ck_assert_int_eq(sx_dlog_count(log, &all, &count), SX_OK);
	ck_assert_uint_eq(count, 1);
	/* an unclosed batch is dropped at close */
	ck_assert_int_eq(sx_dlog_begin(log), SX_OK);
	ck_assert_int_eq(sx_dlog_add(log, &sample[3]), SX_OK);
	sx_dlog_close(log);
	log = NULL;
	ck_assert_int_eq(sx_dlog_open(path, SX_DLOG_READ, &log, NULL), SX_OK);
	ck_assert_int_eq(sx_dlog_count(log, &all, &count), SX_OK);
	ck_assert_uint_eq(count, 1);
	/* read only */
	ck_assert_int_eq(sx_dlog_begin(log), SX_EINVAL);
	sx_dlog_close(log);
}
END_TEST

START_TEST(reopen_keeps_the_rows)
{
	sx_dlog *log = create_log();
	sx_row_filter all;
	uint64_t count;
	fill_sample(log);
	sx_dlog_close(log);
	sx_row_filter_init(&all);
	ck_assert_int_eq(sx_dlog_open(path, SX_DLOG_WRITE, &log, NULL), SX_OK);
	fill_sample(log);
	ck_assert_int_eq(sx_dlog_count(log, &all, &count), SX_OK);
	ck_assert_uint_eq(count, 16);
	sx_dlog_close(log);
	/* CREATE on an existing log only opens it */
	ck_assert_int_eq(sx_dlog_open(path, SX_DLOG_WRITE | SX_DLOG_CREATE, &log, NULL), SX_OK);
	ck_assert_int_eq(sx_dlog_count(log, &all, &count), SX_OK);
	ck_assert_uint_eq(count, 16);
	sx_dlog_close(log);
}
END_TEST

static void write_file(const char *p, const char *text)
{
	FILE *fp = fopen(p, "wb");
	ck_assert_ptr_nonnull(fp);
	fputs(text, fp);
	fclose(fp);
}

static void make_db(const char *p, const char *sql)
{
	sqlite3 *db;
	ck_assert_int_eq(sqlite3_open(p, &db), SQLITE_OK);
	ck_assert_int_eq(sqlite3_exec(db, sql, NULL, NULL, NULL), SQLITE_OK);
	sqlite3_close(db);
}

/* Each refused file: how it is made, the flags, the status, words of the message. */
static const struct {
	const char *text; /* the file's text, or NULL for none */
	const char *sql;  /* or an SQLite database made with this SQL */
	unsigned flags;
	sx_status status;
	const char *words;
} refused[] = {
        {"MSH|^~\\&|LIS|WARD\r", NULL, SX_DLOG_READ, SX_EINVALID, "not an SQLite database"},
        {"MSH|^~\\&|LIS|WARD\r", NULL, SX_DLOG_WRITE | SX_DLOG_CREATE, SX_EINVALID,
         "not an SQLite database"},
        {"SQLite format 3\0", NULL, SX_DLOG_READ, SX_EINVALID, "not an SQLite database"},
        {NULL, "CREATE TABLE patients (name TEXT)", SX_DLOG_READ, SX_EINVALID, "another program"},
        {NULL, "CREATE TABLE patients (name TEXT)", SX_DLOG_WRITE | SX_DLOG_CREATE, SX_EINVALID,
         "another program"},
        {NULL, "PRAGMA application_id = 1400459896; PRAGMA user_version = 7; CREATE TABLE x (y)",
         SX_DLOG_READ, SX_EINVALID, "newer syrinx"},
        {"", NULL, SX_DLOG_READ, SX_EINVALID, "empty database"},
        {"", NULL, SX_DLOG_WRITE, SX_EINVALID, "empty database"},
        {NULL, NULL, SX_DLOG_READ, SX_ENOTFOUND, "No such file"},
        {NULL, NULL, SX_DLOG_WRITE, SX_ENOTFOUND, "No such file"},
};

START_TEST(foreign_files_are_refused)
{
	sx_dlog *log = (sx_dlog *)1;
	sx_diag_list diags;
	char p[160];
	snprintf(p, sizeof p, "%s/other", dir);
	if (refused[_i].text)
		write_file(p, refused[_i].text);
	else if (refused[_i].sql)
		make_db(p, refused[_i].sql);
	sx_diag_list_init(&diags);
	ck_assert_int_eq(sx_dlog_open(p, refused[_i].flags, &log, &diags), refused[_i].status);
	ck_assert_ptr_null(log);
	ck_assert_uint_eq(diags.count, 1);
	ck_assert_str_eq(diags.items[0].file, p);
	ck_assert_msg(strstr(diags.items[0].message, refused[_i].words), "message: %s",
	              diags.items[0].message);
	sx_diag_list_clear(&diags);
	/* 1400459896 is SX_DLOG_APPLICATION_ID written in decimal */
	ck_assert_int_eq(SX_DLOG_APPLICATION_ID, 1400459896);
}
END_TEST

/* The n-th allocation fails, for every n that the whole use makes: each
 * failure is SX_ENOMEM and leaves nothing behind (AddressSanitizer's leak
 * check watches), and the log is left usable. */
START_TEST(allocation_failures_are_clean)
{
	unsigned long total;
	sx_row_filter f;
	make_sample();
	sx_row_filter_init(&f);
	f.location = "ICU";
	for (unsigned long n = 1;; n++) {
		sx_dlog *log = NULL;
		sx_dlog_cursor *c = NULL;
		sx_status st;
		sx_alloc_fail_at(n);
		st = sx_dlog_open(path, SX_DLOG_WRITE | SX_DLOG_CREATE, &log, NULL);
		if (st == SX_OK) {
			st = sx_dlog_begin(log);
			ck_assert_int_eq(st, SX_OK);
			ck_assert_int_eq(sx_dlog_add(log, &sample[0]), SX_OK);
			ck_assert_int_eq(sx_dlog_commit(log), SX_OK);
			st = sx_dlog_query(log, &f, &c);
		}
		total = sx_alloc_fail_at(0);
		if (st == SX_OK) {
			sx_verdict_row r;
			bool got;
			ck_assert_int_eq(sx_dlog_next(c, &r, &got), SX_OK);
			ck_assert(got);
		} else {
			ck_assert_int_eq(st, SX_ENOMEM);
		}
		sx_dlog_cursor_close(c);
		sx_dlog_close(log);
		if (n > total)
			break;
	}
}
END_TEST

START_TEST(row_from_a_verdict)
{
	sx_specimen s;
	sx_verdict v;
	sx_row_builder b;
	sx_row_origin o = {NULL, NULL, "feed.xml:9", NULL, 0, SX_ROW_NO_TIME, "built-in 0.1"};
	char first[SX_SHA256_HEX];
	sx_diag_list diags;
	sx_where where = {"feed.xml", 9, 0, NULL, NULL};

	sx_diag_list_init(&diags);
	sx_specimen_init(&s);
	ck_assert_int_eq(sx_specimen_set(&s, SX_F_SPECIMEN_ID, "BG-1", 4, NULL, 0, &where, &diags),
	                 SX_OK);
	ck_assert_int_eq(sx_specimen_set(&s, SX_F_PATIENT_ID, "P-77", 4, NULL, 0, &where, &diags),
	                 SX_OK);
	ck_assert_int_eq(
	        sx_specimen_set(&s, SX_F_LOCATION, "ICU/BED03", 9, NULL, 0, &where, &diags), SX_OK);
	ck_assert_int_eq(sx_specimen_set(&s, SX_F_COLLECTED_AT, "2026-03-14T07:02+01:00", 22, NULL,
	                                 0, &where, &diags),
	                 SX_OK);
	ck_assert_int_eq(sx_specimen_set(&s, SX_F_ANALYSED_AT, "2026-03-14T07:48:30+01:00", 25,
	                                 NULL, 0, &where, &diags),
	                 SX_OK);
	ck_assert_int_eq(
	        sx_specimen_set(&s, SX_F_TRANSPORT, "pneumatic-tube", 14, NULL, 0, &where, &diags),
	        SX_OK);
	ck_assert_int_eq(sx_specimen_set(&s, SX_F_WBC, "13.234", 6, NULL, 0, &where, &diags),
	                 SX_OK);
	ck_assert_uint_eq(diags.count, 0);
	sx_verdict_init(&v);
	v.has_bias = true;
	v.bias_mmhg = (sx_estimate){-4.26, -7.64, -1.25};
	v.disposition = SX_COMMENT;
	sx_verdict_add_mechanism(&v, "metabolism", -4.26);
	sx_verdict_add_reason(&v, "delay-beyond-limit", SX_REASON_COMMENT, "built-in",
	                      "analysed \"46\" min after collection");
	sx_verdict_add_reason(&v, "bias-beyond-allowable", SX_REASON_COMMENT, "x.rules:4", "b");
	sx_verdict_add_warning(&v, "hb: not given");

	sx_row_builder_init(&b);
	ck_assert_int_eq(sx_verdict_row_build(&b, &s, &v, &o), SX_OK);
	ck_assert_str_eq(b.row.reason_codes, "delay-beyond-limit bias-beyond-allowable");
	ck_assert_str_eq(b.row.reasons_json,
	                 "[{\"code\":\"delay-beyond-limit\",\"severity\":\"comment\",\"message\":"
	                 "\"analysed \\\"46\\\" min after collection\",\"rule\":\"built-in\"},"
	                 "{\"code\":\"bias-beyond-allowable\",\"severity\":\"comment\","
	                 "\"message\":\"b\",\"rule\":\"x.rules:4\"}]");
	ck_assert_str_eq(b.row.mechanisms_json, "[{\"name\":\"metabolism\",\"bias_mmhg\":-4.3}]");
	ck_assert_str_eq(b.row.warnings_json, "[\"hb: not given\"]");
	ck_assert_str_eq(b.row.transport, "pneumatic-tube");
	ck_assert_ptr_null(b.row.storage);
	ck_assert_double_eq_tol(b.row.wbc, 13.23, 1e-9);
	ck_assert_double_eq_tol(b.row.delay_min, 46.5, 1e-9);
	ck_assert_double_eq_tol(b.row.bias_mmhg, -4.3, 1e-9);
	ck_assert_double_eq_tol(b.row.bias_low_mmhg, -7.6, 1e-9);
	ck_assert_double_eq_tol(b.row.bias_high_mmhg, -1.3, 1e-9);
	ck_assert(isnan(b.row.po2_mmhg));
	ck_assert(b.row.audit_ms == s.time[SX_F_COLLECTED_AT].utc_ms);
	ck_assert_uint_eq(strlen(b.row.input_sha256), 64);
	memcpy(first, b.row.input_sha256, sizeof first);

	/* the patient id is not in the fingerprint: another patient, same row */
	sx_specimen_set(&s, SX_F_PATIENT_ID, "P-78", 4, NULL, 0, &where, &diags);
	ck_assert_int_eq(sx_verdict_row_build(&b, &s, &v, &o), SX_OK);
	ck_assert_str_eq(b.row.input_sha256, first);
	/* but any other field is */
	sx_specimen_set(&s, SX_F_WBC, "13.235", 6, NULL, 0, &where, &diags);
	ck_assert_int_eq(sx_verdict_row_build(&b, &s, &v, &o), SX_OK);
	ck_assert_str_ne(b.row.input_sha256, first);
	/* with the input bytes given, those are fingerprinted (SHA-256 of "abc",
	 * FIPS 180-4 example) */
	o.input = "abc";
	o.input_len = 3;
	ck_assert_int_eq(sx_verdict_row_build(&b, &s, &v, &o), SX_OK);
	ck_assert_str_eq(b.row.input_sha256,
	                 "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");

	/* through the log and back: the same values */
	{
		sx_dlog *log = create_log();
		sx_dlog_cursor *c;
		sx_verdict_row r;
		sx_row_filter all;
		bool got;
		sx_row_filter_init(&all);
		ck_assert_int_eq(sx_dlog_begin(log), SX_OK);
		ck_assert_int_eq(sx_dlog_add(log, &b.row), SX_OK);
		ck_assert_int_eq(sx_dlog_commit(log), SX_OK);
		ck_assert_int_eq(sx_dlog_query(log, &all, &c), SX_OK);
		ck_assert_int_eq(sx_dlog_next(c, &r, &got), SX_OK);
		ck_assert(got);
		ck_assert_str_eq(r.reasons_json, b.row.reasons_json);
		ck_assert_str_eq(r.reason_codes, b.row.reason_codes);
		ck_assert(r.delay_min == b.row.delay_min && r.wbc == b.row.wbc);
		ck_assert(r.bias_mmhg == b.row.bias_mmhg);
		ck_assert(r.collected_ms == b.row.collected_ms);
		ck_assert(r.analysed_ms == b.row.analysed_ms);
		ck_assert(isnan(r.po2_mmhg));
		sx_dlog_cursor_close(c);
		sx_dlog_close(log);
	}
	sx_row_builder_free(&b);
	sx_specimen_clear(&s);
	sx_diag_list_clear(&diags);
}
END_TEST

START_TEST(time_text_is_fixed_width_and_sorts)
{
	static const struct {
		int64_t ms;
		const char *text;
	} cases[] = {
	        {0, "1970-01-01T00:00:00.000Z"},
	        {-1, "1969-12-31T23:59:59.999Z"},
	        /* 2026-03-14T07:02:00Z: 20526 days after 1970-01-01 (common practice:
	         * days-from-civil arithmetic, checked with Python's datetime) */
	        {(int64_t)20526 * 86400000 + 7 * 3600000 + 2 * 60000, "2026-03-14T07:02:00.000Z"},
	        {(int64_t)20526 * 86400000 + 7 * 3600000 + 2 * 60000 + 5,
	         "2026-03-14T07:02:00.005Z"},
	};
	char text[32], prev[32] = "";
	for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
		sx_row_time_text(cases[i].ms, text, sizeof text);
		ck_assert_str_eq(text, cases[i].text);
		ck_assert_uint_eq(strlen(text), 24);
	}
	for (int64_t ms = at(1, 0, 0); ms < at(3, 0, 0); ms += 3599999) {
		sx_row_time_text(ms, text, sizeof text);
		ck_assert_int_lt(strcmp(prev, text), 0);
		memcpy(prev, text, sizeof text);
	}
}
END_TEST

int main(void)
{
	Suite *s = suite_create("decision_log");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;

	tcase_add_checked_fixture(tc, setup, teardown);
	tcase_set_timeout(tc, 60);
	tcase_add_test(tc, create_gives_a_wal_file_of_our_schema);
	tcase_add_test(tc, rows_come_back_as_written);
	tcase_add_loop_test(tc, filters_take_the_right_rows, 0, sizeof filters / sizeof filters[0]);
	tcase_add_test(tc, count_agrees_with_the_query);
	tcase_add_test(tc, a_resent_message_gets_its_first_ack);
	tcase_add_test(tc, batches_commit_or_vanish);
	tcase_add_test(tc, reopen_keeps_the_rows);
	tcase_add_loop_test(tc, foreign_files_are_refused, 0, sizeof refused / sizeof refused[0]);
	tcase_add_test(tc, allocation_failures_are_clean);
	tcase_add_test(tc, row_from_a_verdict);
	tcase_add_test(tc, time_text_is_fixed_width_and_sorts);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
