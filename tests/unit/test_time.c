/* SPDX-License-Identifier: MIT */
/*
 * test_time.c - Check suite for core/sxtime: ISO 8601 and HL7 DTM times read
 * to the right UTC instant, precision and offset; impossible dates refused
 * at the right column; writing and reading back gives the same time, over a
 * table and over a loop of generated times; the civil-date arithmetic and
 * the offset reader.
 */
#include <check.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "core/sxtime.h"

/* Default offset used where a row does not care (+01:00). */
#define CET 60

/*
 * Cross-check. Every utc_ms below was computed at authoring time with
 * GNU coreutils date 9.1, as $(( s * 1000 + 10#ms )) where
 *   s=$(date -u -d '<the text in the comment>' +%s)
 *   ms=$(date -u -d '<the text in the comment>' +%3N)
 * (date reads the same instant; HL7 rows were rewritten in ISO form for it,
 * and the default offset written out; %3N cuts, as syrinx does). Not
 * +%s%3N: before 1970 that glues floor seconds to the milliseconds
 * ("-1" "500" for -0.5 s).
 */
struct reading {
	sx_time_form form;
	const char *text;
	int default_offset;
	int64_t utc_ms;
	int precision;
	int offset;
	bool has_offset;
};

static const struct reading readings[] = {
        /* 2026-03-14T08:05:30.25+01:00 */
        {SX_TIME_ISO8601, "2026-03-14T08:05:30.25+01:00", 0, INT64_C(1773471930250),
         SX_PREC_FRACTION, 60, true},
        /* 2026-03-14T08:05:30.25+01:00 */
        {SX_TIME_ISO8601, "2026-03-14T08:05:30.25+0100", 0, INT64_C(1773471930250),
         SX_PREC_FRACTION, 60, true},
        /* 2026-03-14T08:05:30.25+01:00 */
        {SX_TIME_ISO8601, "2026-03-14T08:05:30.25+01", 0, INT64_C(1773471930250), SX_PREC_FRACTION,
         60, true},
        /* 2026-03-14T08:05:30.25+01:00 (comma as the decimal sign, ISO 8601) */
        {SX_TIME_ISO8601, "2026-03-14T08:05:30,25+01:00", 0, INT64_C(1773471930250),
         SX_PREC_FRACTION, 60, true},
        /* 2026-03-14T08:05Z */
        {SX_TIME_ISO8601, "2026-03-14T08:05Z", CET, INT64_C(1773475500000), SX_PREC_MINUTE, 0,
         true},
        /* 2026-03-14 08:05+01:00 (no offset: the default +01:00) */
        {SX_TIME_ISO8601, "2026-03-14 08:05", CET, INT64_C(1773471900000), SX_PREC_MINUTE, 60,
         false},
        /* 2026-03-14 00:00Z */
        {SX_TIME_ISO8601, "2026-03-14", 0, INT64_C(1773446400000), SX_PREC_DAY, 0, false},
        /* 2000-02-29T23:59:59.999Z */
        {SX_TIME_ISO8601, "2000-02-29T23:59:59.999Z", CET, INT64_C(951868799999), SX_PREC_FRACTION,
         0, true},
        /* 1900-01-01T00:00:00Z */
        {SX_TIME_ISO8601, "1900-01-01T00:00:00Z", CET, INT64_C(-2208988800000), SX_PREC_SECOND, 0,
         true},
        /* 2199-12-31T23:59:59-14:00 */
        {SX_TIME_ISO8601, "2199-12-31T23:59:59-14:00", CET, INT64_C(7258168799000), SX_PREC_SECOND,
         -840, true},
        /* 1969-12-31T23:59:59.5Z */
        {SX_TIME_ISO8601, "1969-12-31T23:59:59.5Z", CET, INT64_C(-500), SX_PREC_FRACTION, 0, true},
        /* 2026-10-25T02:30:00+02:00 (a fixed offset: no zone rules involved) */
        {SX_TIME_ISO8601, "2026-10-25T02:30:00+02:00", CET, INT64_C(1792888200000), SX_PREC_SECOND,
         120, true},
        /* 2026-03-14T08:05:30.123456789-05:30 */
        {SX_TIME_ISO8601, "2026-03-14T08:05:30.123456789-05:30", CET, INT64_C(1773495330123),
         SX_PREC_FRACTION, -330, true},
        /* 2026-03-14T08:05:30Z (ISO 8601 basic form) */
        {SX_TIME_ISO8601, "20260314T080530Z", CET, INT64_C(1773475530000), SX_PREC_SECOND, 0, true},
        /* 1999-12-31T23:59:59.999+05:45 */
        {SX_TIME_ISO8601, "1999-12-31T23:59:59.999+05:45", CET, INT64_C(946664099999),
         SX_PREC_FRACTION, 345, true},
        /* 2016-12-31T23:59:59Z (a leap second, kept as :59) */
        {SX_TIME_ISO8601, "2016-12-31T23:59:60Z", CET, INT64_C(1483228799000), SX_PREC_SECOND, 0,
         true},
        /* 2017-01-01 00:59:59+01:00 (the same leap second seen from +01:00) */
        {SX_TIME_ISO8601, "2017-01-01T00:59:60+01:00", 0, INT64_C(1483228799000), SX_PREC_SECOND,
         60, true},
        /* 1900-01-01 00:30+01:00 (year as written is in range; UTC is in 1899) */
        {SX_TIME_ISO8601, "1900-01-01T00:30+01:00", 0, INT64_C(-2208990600000), SX_PREC_MINUTE, 60,
         true},
        /* 2026-03-14 08:05:30.2545+01:00 */
        {SX_TIME_HL7, "20260314080530.2545+0100", 0, INT64_C(1773471930254), SX_PREC_FRACTION, 60,
         true},
        /* 2026-03-14 08:05-05:00 */
        {SX_TIME_HL7, "202603140805-0500", CET, INT64_C(1773493500000), SX_PREC_MINUTE, -300, true},
        /* 2026-03-14 00:00-05:00 (default -05:00) */
        {SX_TIME_HL7, "20260314", -300, INT64_C(1773464400000), SX_PREC_DAY, -300, false},
        /* 2026-01-01 00:00Z */
        {SX_TIME_HL7, "2026", 0, INT64_C(1767225600000), SX_PREC_YEAR, 0, false},
        /* 2026-02-01 00:00+14:00 */
        {SX_TIME_HL7, "202602+1400", CET, INT64_C(1769853600000), SX_PREC_MONTH, 840, true},
        /* 2100-02-28 23:59:59+00:00 */
        {SX_TIME_HL7, "21000228235959+0000", CET, INT64_C(4107542399000), SX_PREC_SECOND, 0, true},
        /* 2026-03-14 08:00-03:30 */
        {SX_TIME_HL7, "2026031408-0330", CET, INT64_C(1773487800000), SX_PREC_HOUR, -210, true},
        /* 1900-03-01 12:00+00:00 */
        {SX_TIME_HL7, "190003011200", 0, INT64_C(-2203848000000), SX_PREC_MINUTE, 0, false},
        /* 2026-03-14 08:05:30.5Z */
        {SX_TIME_HL7, "20260314080530.5", 0, INT64_C(1773475530500), SX_PREC_FRACTION, 0, false},
        /* 2026-03-14 08:05:30.999+14:00 */
        {SX_TIME_HL7, "20260314080530.999+1400", 0, INT64_C(1773425130999), SX_PREC_FRACTION, 840,
         true},
        /* either form, chosen by sx_time_parse():
         * 2026-01-01 00:00-05:00 (HL7 year with offset, not ISO "2026-05") */
        {SX_TIME_ANY, "2026-0500", CET, INT64_C(1767243600000), SX_PREC_YEAR, -300, true},
        /* 2026-03-14T08:05:30Z */
        {SX_TIME_ANY, "20260314T080530Z", CET, INT64_C(1773475530000), SX_PREC_SECOND, 0, true},
        /* 2026-01-01 00:00Z */
        {SX_TIME_ANY, "2026Z", CET, INT64_C(1767225600000), SX_PREC_YEAR, 0, true},
        /* 2026-01-01 00:00+01:00 */
        {SX_TIME_ANY, "2026-01-01", CET, INT64_C(1767222000000), SX_PREC_DAY, 60, false},
        /* 2026-03-14 08:05-05:00 */
        {SX_TIME_ANY, "202603140805-0500", CET, INT64_C(1773493500000), SX_PREC_MINUTE, -300, true},
        /* 2026-03-14 08:05+01:00 (surrounding blanks ignored) */
        {SX_TIME_ANY, "  2026-03-14 08:05\t", CET, INT64_C(1773471900000), SX_PREC_MINUTE, 60,
         false},
        /* 2026-03-14 00:00-05:00 (xs:date with an offset) */
        {SX_TIME_ANY, "2026-03-14-05:00", CET, INT64_C(1773464400000), SX_PREC_DAY, -300, true},
        /* 2026-03-01 00:00-05:00 (xs:gYearMonth with an offset) */
        {SX_TIME_ANY, "2026-03-05:00", CET, INT64_C(1772341200000), SX_PREC_MONTH, -300, true},
};

static sx_status parse_form(sx_time_form form, const char *text, int default_offset, sx_time *t,
                            unsigned *column)
{
	size_t len = strlen(text);

	switch (form) {
	case SX_TIME_ISO8601:
		return sx_time_parse_iso8601(text, len, default_offset, t, column);
	case SX_TIME_HL7:
		return sx_time_parse_hl7(text, len, default_offset, t, column);
	default:
		return sx_time_parse(text, len, default_offset, t, column);
	}
}

/* Checks only on a mismatch: Check's per-assertion bookkeeping would make
 * the generated loops below slow. */
static void assert_same_time(const sx_time *a, const sx_time *b, const char *what)
{
	if (a->utc_ms != b->utc_ms || a->offset_min != b->offset_min ||
	    a->precision != b->precision || a->has_offset != b->has_offset)
		ck_abort_msg("%s: {%lld, %d, %d, %d} != {%lld, %d, %d, %d}", what,
		             (long long)a->utc_ms, a->offset_min, a->precision, a->has_offset,
		             (long long)b->utc_ms, b->offset_min, b->precision, b->has_offset);
}

static void assert_parsed(sx_status st, const char *text)
{
	if (st != SX_OK)
		ck_abort_msg("\"%s\": status %d", text, st);
}

START_TEST(test_reading_table)
{
	const struct reading *r = &readings[_i];
	sx_time t;
	unsigned column = 99;
	sx_status st = parse_form(r->form, r->text, r->default_offset, &t, &column);

	ck_assert_msg(st == SX_OK, "\"%s\": status %d at column %u", r->text, st, column);
	ck_assert_uint_eq(column, 0);
	ck_assert_msg(t.utc_ms == r->utc_ms, "\"%s\": utc_ms %lld, date(1) says %lld", r->text,
	              (long long)t.utc_ms, (long long)r->utc_ms);
	ck_assert_int_eq(t.precision, r->precision);
	ck_assert_int_eq(t.offset_min, r->offset);
	ck_assert_int_eq(t.has_offset, r->has_offset);
}
END_TEST

/* Parse, write in both forms, parse again: the same time (the table above;
 * the leap-second rows come back as :59, which is what they were read as). */
START_TEST(test_reading_round_trip)
{
	const struct reading *r = &readings[_i];
	sx_time t, back;
	char text[64];
	int n;

	ck_assert_int_eq(parse_form(r->form, r->text, r->default_offset, &t, NULL), SX_OK);
	n = sx_time_format_iso(&t, text, sizeof text);
	ck_assert_int_eq(n, (int)strlen(text));
	ck_assert_int_eq(sx_time_parse_iso8601(text, (size_t)n, r->default_offset, &back, NULL),
	                 SX_OK);
	assert_same_time(&back, &t, text);
	ck_assert_int_eq(sx_time_parse(text, (size_t)n, r->default_offset, &back, NULL), SX_OK);
	assert_same_time(&back, &t, text);

	n = sx_time_format_hl7(&t, text, sizeof text);
	ck_assert_int_eq(n, (int)strlen(text));
	ck_assert_int_eq(sx_time_parse_hl7(text, (size_t)n, r->default_offset, &back, NULL), SX_OK);
	assert_same_time(&back, &t, text);
	ck_assert_int_eq(sx_time_parse(text, (size_t)n, r->default_offset, &back, NULL), SX_OK);
	assert_same_time(&back, &t, text);
}
END_TEST

/* Refused texts and the column of the first wrong character. Calendar
 * facts: Gregorian leap years (2000 leap, 2100 not), common practice. */
struct refusal {
	sx_time_form form;
	const char *text;
	unsigned column;
	const char *why;
};

static const struct refusal refusals[] = {
        {SX_TIME_ISO8601, "2026-02-30", 9, "30 February"},
        {SX_TIME_ISO8601, "2100-02-29", 9, "2100 is not a leap year"},
        {SX_TIME_ISO8601, "2026-02-29", 9, "2026 is not a leap year"},
        {SX_TIME_ISO8601, "2026-04-31", 9, "30 days hath April"},
        {SX_TIME_ISO8601, "2026-13-01", 6, "month 13"},
        {SX_TIME_ISO8601, "2026-00-01", 6, "month 00"},
        {SX_TIME_ISO8601, "2026-03-00", 9, "day 00"},
        {SX_TIME_ISO8601, "2026-03-14T24:00", 12, "hour 24 (ISO end of day)"},
        {SX_TIME_ISO8601, "2026-03-14T25:00", 12, "hour 25"},
        {SX_TIME_ISO8601, "2026-03-14T08:60", 15, "minute 60"},
        {SX_TIME_ISO8601, "2026-03-14T08:05:61", 18, "second 61"},
        {SX_TIME_ISO8601, "2026-03-14T08:05:60Z", 18, "second 60 not at a leap second"},
        {SX_TIME_ISO8601, "2016-12-30T23:59:60Z", 18, "not the last day of a month"},
        {SX_TIME_ISO8601, "2016-12-31T23:59:60+01:00", 18, "23:59:60 local is not UTC"},
        {SX_TIME_ISO8601, "2026-03-14T08:05+15:00", 18, "offset beyond +14:00"},
        {SX_TIME_ISO8601, "2026-03-14T08:05-14:30", 21, "offset beyond -14:00"},
        {SX_TIME_ISO8601, "2026-03-14T08:05+01:60", 21, "offset minutes 60"},
        {SX_TIME_ISO8601, "2026-03-14T08:05+1", 19, "offset hour of one digit"},
        {SX_TIME_ISO8601, "1899-12-31", 1, "year before 1900"},
        {SX_TIME_ISO8601, "2200-01-01", 1, "year after 2199"},
        {SX_TIME_ISO8601, "2026-03-14T08:05:30.1234567891", 30, "10 fraction digits"},
        {SX_TIME_ISO8601, "2026-03-14T08:05:30.", 21, "fraction without digits"},
        {SX_TIME_ISO8601, "2026-03-14T08.5", 14, "fraction of an hour"},
        {SX_TIME_ISO8601, "2026-03-14T08:05.5", 17, "fraction of a minute"},
        {SX_TIME_ISO8601, "2026-03-14T08:05:30.25+01:00x", 29, "trailing junk"},
        {SX_TIME_ISO8601, "2026-3-14", 7, "one-digit month"},
        {SX_TIME_ISO8601, "2026-03-14T", 12, "ends after T"},
        {SX_TIME_ISO8601, "2026-03-14T0805", 14, "basic time after an extended date"},
        {SX_TIME_ISO8601, "2026-03T08:00", 8, "time after a month"},
        {SX_TIME_ISO8601, "26-03-14", 3, "two-digit year"},
        {SX_TIME_ISO8601, "", 1, "empty"},
        {SX_TIME_ISO8601, "   ", 4, "blank"},
        {SX_TIME_ISO8601, "2026-03-14T08:05:30Z ", 0, "trailing blank is fine (column 0 = ok)"},
        {SX_TIME_HL7, "20260230", 7, "30 February"},
        {SX_TIME_HL7, "21000229", 7, "2100 is not a leap year"},
        {SX_TIME_HL7, "202613", 5, "month 13"},
        {SX_TIME_HL7, "2026031424", 9, "hour 24"},
        {SX_TIME_HL7, "202603140860", 11, "minute 60"},
        {SX_TIME_HL7, "20260314080561", 13, "second 61"},
        {SX_TIME_HL7, "20260314080530.12345", 20, "5 fraction digits (HL7 allows 4)"},
        {SX_TIME_HL7, "202603140805.5", 13, "fraction without seconds"},
        {SX_TIME_HL7, "20260314+1500", 10, "offset beyond +14:00"},
        {SX_TIME_HL7, "20260314+0160", 12, "offset minutes 60"},
        {SX_TIME_HL7, "20260314+01:00", 12, "a colon in an HL7 offset"},
        {SX_TIME_HL7, "20260314+01", 12, "HL7 offset of two digits"},
        {SX_TIME_HL7, "2026031", 8, "odd digit count"},
        {SX_TIME_HL7, "202603141+0100", 10, "odd digit count before an offset"},
        {SX_TIME_HL7, "202603140805301", 15, "15 digits"},
        {SX_TIME_HL7, "18991231", 1, "year before 1900"},
        {SX_TIME_HL7, "18001", 1, "bad year before the odd count"},
        {SX_TIME_HL7, "2026Z", 5, "Z is not HL7"},
        {SX_TIME_HL7, "2026-03-14", 8, "ISO text read as HL7: -03 then 14"},
        {SX_TIME_HL7, "  20260230", 9, "columns count the blanks"},
        {SX_TIME_HL7, "", 1, "empty"},
        {SX_TIME_ANY, "2026-02-30T08:00Z", 9, "30 February"},
        {SX_TIME_ANY, "20260230", 7, "30 February"},
        {SX_TIME_ANY, "14.03.2026", 3, "not a form we read"},
};

START_TEST(test_refusal_table)
{
	const struct refusal *r = &refusals[_i];
	sx_time t = {.utc_ms = 42};
	unsigned column = 99;
	sx_status st = parse_form(r->form, r->text, CET, &t, &column);

	if (r->column == 0) {
		ck_assert_msg(st == SX_OK, "\"%s\" (%s): status %d", r->text, r->why, st);
		return;
	}
	ck_assert_msg(st == SX_ETIME, "\"%s\" (%s): status %d", r->text, r->why, st);
	ck_assert_msg(column == r->column, "\"%s\" (%s): column %u, want %u", r->text, r->why,
	              column, r->column);
	ck_assert_int_eq(t.utc_ms, 42); /* untouched */
}
END_TEST

START_TEST(test_reasons)
{
	static const char hour24[] = "2026-03-14T24:00";
	const char *reason = (const char *)1;
	unsigned column;
	sx_time t;

	ck_assert_int_eq(sx_time_parse_detailed(SX_TIME_ANY, hour24, strlen(hour24), 0, &t, &column,
	                                        &reason),
	                 SX_ETIME);
	ck_assert_uint_eq(column, 12);
	ck_assert_ptr_nonnull(reason);
	ck_assert_ptr_nonnull(strstr(reason, "24"));
	ck_assert_ptr_nonnull(strstr(reason, "next day"));

	ck_assert_int_eq(
	        sx_time_parse_detailed(SX_TIME_HL7, "21000229", 8, 0, &t, &column, &reason),
	        SX_ETIME);
	ck_assert_ptr_nonnull(strstr(reason, "leap"));

	ck_assert_int_eq(
	        sx_time_parse_detailed(SX_TIME_ISO8601, "2026-03-14", 10, 0, &t, &column, &reason),
	        SX_OK);
	ck_assert_ptr_null(reason);
	ck_assert_uint_eq(column, 0);
}
END_TEST

START_TEST(test_bad_arguments)
{
	sx_time t;
	unsigned column;

	ck_assert_int_eq(sx_time_parse(NULL, 0, 0, &t, &column), SX_EINVAL);
	ck_assert_int_eq(sx_time_parse("2026", 4, 0, NULL, &column), SX_EINVAL);
	ck_assert_int_eq(sx_time_parse("2026", 4, 841, &t, &column), SX_EINVAL);
	ck_assert_int_eq(sx_time_parse("2026", 4, -841, &t, &column), SX_EINVAL);
	ck_assert_int_eq(sx_time_parse("2026", 4, 840, &t, NULL), SX_OK);
	ck_assert_int_eq(sx_time_parse_detailed((sx_time_form)7, "2026", 4, 0, &t, NULL, NULL),
	                 SX_EINVAL);
	/* only [text, text+len) is read */
	ck_assert_int_eq(sx_time_parse("20260314xyz", 8, 0, &t, &column), SX_OK);
	ck_assert_int_eq(t.precision, SX_PREC_DAY);
	/* a NUL inside the length is a wrong character */
	ck_assert_int_eq(sx_time_parse_hl7("2026\0"
	                                   "03",
	                                   7, 0, &t, &column),
	                 SX_ETIME);
	ck_assert_uint_eq(column, 5);
}
END_TEST

/* How times are written. */
struct writing {
	sx_time_form form;
	const char *text;
	int default_offset;
	const char *iso;
	const char *hl7;
};

static const struct writing writings[] = {
        {SX_TIME_ANY, "2026-03-14T08:05:30.25+01:00", 0, "2026-03-14T08:05:30.25+01:00",
         "20260314080530.25+0100"},
        {SX_TIME_ANY, "2026-03-14T08:05Z", CET, "2026-03-14T08:05Z", "202603140805+0000"},
        {SX_TIME_ANY, "2026-03-14 08:05", CET, "2026-03-14T08:05", "202603140805"},
        {SX_TIME_ANY, "20260314080530.2545+0100", 0, "2026-03-14T08:05:30.254+01:00",
         "20260314080530.254+0100"},
        {SX_TIME_ANY, "2026-03-14T08:05:30.5-05:30", 0, "2026-03-14T08:05:30.5-05:30",
         "20260314080530.5-0530"},
        {SX_TIME_ANY, "2026-03-14T08:05:30.000Z", 0, "2026-03-14T08:05:30.0Z",
         "20260314080530.0+0000"},
        {SX_TIME_ANY, "2026-03-14T08:05:30.07Z", 0, "2026-03-14T08:05:30.07Z",
         "20260314080530.07+0000"},
        {SX_TIME_ANY, "2026", CET, "2026", "2026"},
        {SX_TIME_ANY, "202603-0500", CET, "2026-03-05:00", "202603-0500"},
        {SX_TIME_ANY, "2026-03-14+01:00", 0, "2026-03-14+01:00", "20260314+0100"},
        {SX_TIME_ANY, "2026-03-14T08", 0, "2026-03-14T08", "2026031408"},
        {SX_TIME_ANY, "2026-03-14T08:05:30.123456789+0100", 0, "2026-03-14T08:05:30.123+01:00",
         "20260314080530.123+0100"},
        {SX_TIME_ANY, "2016-12-31T23:59:60Z", 0, "2016-12-31T23:59:59Z", "20161231235959+0000"},
        {SX_TIME_ANY, "1900-01-01T00:30+01:00", 0, "1900-01-01T00:30+01:00", "190001010030+0100"},
        {SX_TIME_ANY, "2199-12-31T23:59:59.999-14:00", 0, "2199-12-31T23:59:59.999-14:00",
         "21991231235959.999-1400"},
};

START_TEST(test_writing_table)
{
	const struct writing *w = &writings[_i];
	sx_time t;
	char text[64];

	ck_assert_int_eq(parse_form(w->form, w->text, w->default_offset, &t, NULL), SX_OK);
	ck_assert_int_eq(sx_time_format_iso(&t, text, sizeof text), (int)strlen(w->iso));
	ck_assert_str_eq(text, w->iso);
	ck_assert_int_eq(sx_time_format_hl7(&t, text, sizeof text), (int)strlen(w->hl7));
	ck_assert_str_eq(text, w->hl7);
}
END_TEST

START_TEST(test_writing_edges)
{
	sx_time t;
	char small[8];
	int n;

	ck_assert_int_eq(sx_time_parse("2026-03-14T08:05:30.25+01:00", 28, 0, &t, NULL), SX_OK);
	/* snprintf-like: the whole length, the text cut and terminated */
	memset(small, 'x', sizeof small);
	n = sx_time_format_iso(&t, small, sizeof small);
	ck_assert_int_eq(n, 28);
	ck_assert_str_eq(small, "2026-03");
	ck_assert_int_eq(sx_time_format_iso(&t, NULL, 0), 28);
	ck_assert_int_eq(sx_time_format_hl7(&t, NULL, 0), 22);
	/* the header's promise: 40 bytes are enough (the longest form) */
	ck_assert_int_lt(sx_time_format_iso(&t, NULL, 0), 40);

	t.precision = 0;
	small[0] = 'x';
	ck_assert_int_eq(sx_time_format_iso(&t, small, sizeof small), 0);
	ck_assert_str_eq(small, "");
	t.precision = SX_PREC_FRACTION + 1;
	ck_assert_int_eq(sx_time_format_iso(&t, small, sizeof small), -1);
	ck_assert_int_eq(sx_time_format_hl7(NULL, small, sizeof small), -1);
	t.precision = SX_PREC_DAY;
	t.offset_min = 900;
	ck_assert_int_eq(sx_time_format_hl7(&t, small, sizeof small), -1);
}
END_TEST

/* A small deterministic generator (Knuth's MMIX LCG constants, from memory;
 * any fixed sequence would do). */
static uint64_t lcg_state;

static unsigned next_below(unsigned n)
{
	lcg_state = lcg_state * UINT64_C(6364136223846793005) + UINT64_C(1442695040888963407);
	return (unsigned)((lcg_state >> 33) % n);
}

/* Generated times at every precision, offset and has_offset: write each in
 * both forms, read it back (with the form named and with either form), and
 * require the very same sx_time. */
START_TEST(test_generated_round_trip)
{
	lcg_state = 20260314;
	for (int i = 0; i < 40000; i++) {
		int64_t y = 1900 + next_below(300);
		unsigned m = 1 + next_below(12);
		int64_t first = sx_days_from_civil(y, m, 1);
		int64_t next =
		        m == 12 ? sx_days_from_civil(y + 1, 1, 1) : sx_days_from_civil(y, m + 1, 1);
		unsigned d = 1 + next_below((unsigned)(next - first));
		int prec = 1 + (int)next_below(7);
		int hh = prec >= SX_PREC_HOUR ? (int)next_below(24) : 0;
		int mi = prec >= SX_PREC_MINUTE ? (int)next_below(60) : 0;
		int ss = prec >= SX_PREC_SECOND ? (int)next_below(60) : 0;
		int ms = prec >= SX_PREC_FRACTION ? (int)next_below(1000) : 0;
		int offset = ((int)next_below(113) - 56) * 15;
		bool has_offset = next_below(2);
		int default_offset = has_offset ? -offset : offset; /* ignored when given */
		sx_time t, back;
		char text[64];
		int n;

		if (prec < SX_PREC_MONTH)
			m = 1;
		if (prec < SX_PREC_DAY)
			d = 1;
		t.utc_ms = sx_days_from_civil(y, m, d) * 86400000 +
		           (((int64_t)hh * 60 + mi) * 60 + ss) * 1000 + ms -
		           (int64_t)offset * 60000;
		t.offset_min = (int16_t)offset;
		t.precision = (uint8_t)prec;
		t.has_offset = has_offset;

		n = sx_time_format_iso(&t, text, sizeof text);
		if (n <= 0 || n >= 40)
			ck_abort_msg("iteration %d: ISO length %d", i, n);
		assert_parsed(sx_time_parse_iso8601(text, (size_t)n, default_offset, &back, NULL),
		              text);
		assert_same_time(&back, &t, text);
		assert_parsed(sx_time_parse(text, (size_t)n, default_offset, &back, NULL), text);
		assert_same_time(&back, &t, text);

		n = sx_time_format_hl7(&t, text, sizeof text);
		if (n <= 0 || n >= 40)
			ck_abort_msg("iteration %d: HL7 length %d", i, n);
		assert_parsed(sx_time_parse_hl7(text, (size_t)n, default_offset, &back, NULL),
		              text);
		assert_same_time(&back, &t, text);
		assert_parsed(sx_time_parse(text, (size_t)n, default_offset, &back, NULL), text);
		assert_same_time(&back, &t, text);
	}
}
END_TEST

/* Days since 1970-01-01, computed at authoring time with GNU coreutils
 * date 9.1: $(( $(date -u -d '<date> 00:00Z' +%s) / 86400 )). */
struct civil {
	int64_t y;
	unsigned m, d;
	int64_t days;
};

static const struct civil civils[] = {
        {1900, 1, 1, -25567},    {1900, 3, 1, -25508},   {1969, 12, 31, -1},
        {1970, 1, 1, 0},         {2000, 2, 29, 11016},   {2000, 3, 1, 11017},
        {2024, 2, 29, 19782},    {2100, 2, 28, 47540},   {2100, 3, 1, 47541},
        {2199, 12, 31, 84005},   {1600, 2, 29, -135081}, {1, 1, 1, -719162},
        {9999, 12, 31, 2932896},
};

START_TEST(test_civil_table)
{
	const struct civil *c = &civils[_i];
	int64_t y;
	unsigned m, d;

	ck_assert_int_eq(sx_days_from_civil(c->y, c->m, c->d), c->days);
	sx_civil_from_days(c->days, &y, &m, &d);
	ck_assert_int_eq(y, c->y);
	ck_assert_uint_eq(m, c->m);
	ck_assert_uint_eq(d, c->d);
}
END_TEST

/* Every day from 1600-01-01 to 2400-12-31 goes there and back, and the days
 * follow each other in calendar order. */
START_TEST(test_civil_every_day)
{
	int64_t y = 1600;
	unsigned m = 1, d = 1;
	int64_t z = sx_days_from_civil(1600, 1, 1);

	for (; y <= 2400; z++) {
		int64_t yy;
		unsigned mm, dd;
		bool leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
		unsigned last = m == 2                                    ? 28u + leap
		                : (m == 4 || m == 6 || m == 9 || m == 11) ? 30u
		                                                          : 31u;

		if (sx_days_from_civil(y, m, d) != z)
			ck_abort_msg("%lld-%02u-%02u is not day %lld", (long long)y, m, d,
			             (long long)z);
		sx_civil_from_days(z, &yy, &mm, &dd);
		if (yy != y || mm != m || dd != d)
			ck_abort_msg("day %lld is not %lld-%02u-%02u", (long long)z, (long long)y,
			             m, d);
		if (++d > last) {
			d = 1;
			if (++m > 12) {
				m = 1;
				y++;
			}
		}
	}
}
END_TEST

struct offset {
	const char *text;
	sx_status status;
	int minutes;
};

static const struct offset offsets[] = {
        {"+01:00", SX_OK, 60},
        {"-0530", SX_OK, -330},
        {"Z", SX_OK, 0},
        {"z", SX_OK, 0},
        {"UTC", SX_OK, 0},
        {"UTC+2", SX_OK, 120},
        {"UTC-03:30", SX_OK, -210},
        {"UTC+0530", SX_OK, 330},
        {"UTC+14", SX_OK, 840},
        {"+01", SX_OK, 60},
        {" +05:45 ", SX_OK, 345},
        {"-14:00", SX_OK, -840},
        {"-00:00", SX_OK, 0},
        {"", SX_ETIME, 0},
        {"+1", SX_ETIME, 0},
        {"+15:00", SX_ETIME, 0},
        {"+14:01", SX_ETIME, 0},
        {"+01:60", SX_ETIME, 0},
        {"UTC+", SX_ETIME, 0},
        {"UTC2", SX_ETIME, 0},
        {"GMT+2", SX_ETIME, 0},
        {"01:00", SX_ETIME, 0},
        {"+01:00x", SX_ETIME, 0},
        {"UTC+2:3", SX_ETIME, 0},
        {"UTC +2", SX_ETIME, 0},
        {"utc", SX_ETIME, 0},
        {"Europe/Paris", SX_ETIME, 0},
};

START_TEST(test_offset_table)
{
	const struct offset *o = &offsets[_i];
	int minutes = 12345;
	sx_status st = sx_parse_offset(o->text, &minutes);

	ck_assert_msg(st == o->status, "\"%s\": status %d", o->text, st);
	ck_assert_int_eq(minutes, o->status == SX_OK ? o->minutes : 12345);
}
END_TEST

START_TEST(test_offset_null)
{
	int minutes;

	ck_assert_int_eq(sx_parse_offset(NULL, &minutes), SX_EINVAL);
	ck_assert_int_eq(sx_parse_offset("Z", NULL), SX_EINVAL);
}
END_TEST

START_TEST(test_minutes_between)
{
	sx_time a, b;

	ck_assert_int_eq(sx_time_parse("2026-03-14T08:05Z", 17, 0, &a, NULL), SX_OK);
	ck_assert_int_eq(sx_time_parse("2026-03-14T09:05+01:00", 22, 0, &b, NULL), SX_OK);
	ck_assert_double_eq_tol(sx_time_minutes_between(&a, &b), 0.0, 1e-12);
	ck_assert_int_eq(sx_time_parse("20260314083530", 14, 0, &b, NULL), SX_OK);
	ck_assert_double_eq_tol(sx_time_minutes_between(&a, &b), 30.5, 1e-12);
	ck_assert_double_eq_tol(sx_time_minutes_between(&b, &a), -30.5, 1e-12);
	/* across midnight and an offset: 23:50-05:00 is 04:50Z next day */
	ck_assert_int_eq(sx_time_parse("202603132350-0500", 17, 0, &b, NULL), SX_OK);
	ck_assert_double_eq_tol(sx_time_minutes_between(&b, &a), 195.0, 1e-12);
	ck_assert(isnan(sx_time_minutes_between(NULL, &a)));
	ck_assert(isnan(sx_time_minutes_between(&a, NULL)));
}
END_TEST

static Suite *time_suite(void)
{
	Suite *s = suite_create("time");
	TCase *tc = tcase_create("parse");

	tcase_add_loop_test(tc, test_reading_table, 0, (int)(sizeof readings / sizeof *readings));
	tcase_add_loop_test(tc, test_reading_round_trip, 0,
	                    (int)(sizeof readings / sizeof *readings));
	tcase_add_loop_test(tc, test_refusal_table, 0, (int)(sizeof refusals / sizeof *refusals));
	tcase_add_test(tc, test_reasons);
	tcase_add_test(tc, test_bad_arguments);
	suite_add_tcase(s, tc);

	tc = tcase_create("format");
	tcase_add_loop_test(tc, test_writing_table, 0, (int)(sizeof writings / sizeof *writings));
	tcase_add_test(tc, test_writing_edges);
	tcase_add_test(tc, test_generated_round_trip);
	tcase_set_timeout(tc, 60);
	suite_add_tcase(s, tc);

	tc = tcase_create("calendar");
	tcase_add_loop_test(tc, test_civil_table, 0, (int)(sizeof civils / sizeof *civils));
	tcase_add_test(tc, test_civil_every_day);
	tcase_add_loop_test(tc, test_offset_table, 0, (int)(sizeof offsets / sizeof *offsets));
	tcase_add_test(tc, test_offset_null);
	tcase_add_test(tc, test_minutes_between);
	tcase_set_timeout(tc, 60);
	suite_add_tcase(s, tc);
	return s;
}

int main(void)
{
	SRunner *sr = srunner_create(time_suite());
	int failed;

	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
