/* SPDX-License-Identifier: MIT */
/*
 * sxtime.h - points in time as a specimen record keeps them.
 *
 * A time is kept in UTC milliseconds since 1970, together with the precision
 * that was sent (a time to the minute is not a time to the second) and
 * whether the sender gave an offset. Two text forms are read:
 *   ISO 8601:  2026-03-14T08:05:30.25+01:00, 2026-03-14T08:05Z, 2026-03-14 08:05
 *   HL7 DTM:   YYYY[MM[DD[HH[MM[SS[.S[S[S[S]]]]]]]]][+/-ZZZZ]
 * docs/units-and-times.md lists every accepted form with examples.
 *
 * Years 1900..2199 only: a year outside is SX_ETIME. Impossible calendar
 * dates (2026-02-30, 2100-02-29, month 13, day 00, hour 25, minute 60,
 * second 61) are SX_ETIME. Hour 24 (ISO 8601's "end of day", 24:00) is
 * rejected too: write 00:00 of the next day. Offsets beyond +/-14:00, or with
 * minutes 60 or more, are SX_ETIME. A leap second (second 60) is accepted
 * only where it can occur, at 23:59:60 UTC on the last day of a month, and is
 * kept as second 59 (the fraction, if any, is kept).
 * Fractions of a second are kept to the millisecond (further digits are cut,
 * not rounded).
 * Surrounding spaces and tabs are ignored.
 */
#ifndef SX_SXTIME_H
#define SX_SXTIME_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "core/status.h"

typedef enum sx_time_precision {
	SX_PREC_YEAR = 1,
	SX_PREC_MONTH,
	SX_PREC_DAY,
	SX_PREC_HOUR,
	SX_PREC_MINUTE,
	SX_PREC_SECOND,
	SX_PREC_FRACTION /* tenths to ten-thousandths of a second (ms kept) */
} sx_time_precision;

typedef struct sx_time {
	int64_t utc_ms;     /* UTC, ms since 1970-01-01T00:00:00Z */
	int16_t offset_min; /* the offset used to reach UTC (east positive):
	                     * UTC = local - offset */
	uint8_t precision;  /* sx_time_precision; 0 = no time */
	bool has_offset;    /* the text carried an offset (or Z) */
} sx_time;

/* Which text form to read. */
typedef enum sx_time_form {
	SX_TIME_ANY = 0, /* as sx_time_parse() decides */
	SX_TIME_ISO8601,
	SX_TIME_HL7
} sx_time_form;

/*
 * Parse text of length len (it need not be NUL-terminated). When the text
 * has no offset, default_offset_min is applied to reach UTC and has_offset
 * is false, so the caller can say in a warning which offset it assumed.
 *
 * ISO 8601 (extended or basic): a date YYYY-MM-DD, YYYY-MM, YYYY or
 * YYYYMMDD; then optionally 'T' (or 't' or a space) and a time hh, hh:mm,
 * hh:mm:ss or hh:mm:ss.f with 1 to 9 fraction digits ('.' or ','; basic
 * form hhmmss.f after a basic date); then optionally an offset Z, +hh:mm,
 * +hhmm or +hh. An offset directly after a date (2026-03-14+01:00, the
 * XML Schema xs:date form) is accepted.
 * HL7 DTM: 4, 6, 8, 10, 12 or 14 digits, a fraction of 1 to 4 digits only
 * after 14 digits, then optionally +ZZZZ or -ZZZZ.
 *
 * Returns SX_OK, SX_ETIME (the text is not such a time; *error_column, if
 * not NULL, is set to the 1-based column of the first wrong character, or
 * len + 1 when the text ends too early) or SX_EINVAL (text or out NULL, or
 * default_offset_min beyond +/-840). *out is written only on SX_OK, and
 * *error_column is then 0.
 */
sx_status sx_time_parse_iso8601(const char *text, size_t len, int default_offset_min, sx_time *out,
                                unsigned *error_column);
sx_status sx_time_parse_hl7(const char *text, size_t len, int default_offset_min, sx_time *out,
                            unsigned *error_column);

/* Either form: ISO 8601 when the text has a 'T', 'Z', ':' or an inner space
 * (none of which HL7 DTM has), or a '-' after 4 digits (except "YYYY-ZZZZ",
 * an HL7 year with an offset); HL7 DTM otherwise. Where both forms read a
 * text (20260314, 2026+0100), they read it the same. */
sx_status sx_time_parse(const char *text, size_t len, int default_offset_min, sx_time *out,
                        unsigned *error_column);

/* As above, for the given form, and on SX_ETIME also a constant sentence
 * saying what is wrong ("hour 24 (ISO 8601 end of day) is not accepted;
 * write 00:00 of the next day"). *reason (if reason is not NULL) is set to
 * NULL on success; the sentence is never freed. */
sx_status sx_time_parse_detailed(sx_time_form form, const char *text, size_t len,
                                 int default_offset_min, sx_time *out, unsigned *error_column,
                                 const char **reason);

/* Write the time in ISO 8601 in its own offset, to its own precision
 * (minute precision: 2026-03-14T08:05+01:00; the fraction as milliseconds
 * without trailing zeros: 08:05:30.25). The offset is written ("Z" for 0)
 * only when has_offset is true, so that parsing the text with the same
 * default offset gives the same sx_time back (a leap second aside).
 * Needs at most 40 bytes. Returns the length of the whole text (snprintf-
 * like: the text is cut when size is too small; buf may be NULL when size
 * is 0), 0 with an empty text for precision 0, -1 for a NULL t, an unknown
 * precision or an offset beyond +/-14:00. */
int sx_time_format_iso(const sx_time *t, char *buf, size_t size);

/* Write as HL7 DTM, to its own precision, the offset (+ZZZZ) only when
 * has_offset is true; fraction to 1..3 digits. Otherwise as above. */
int sx_time_format_hl7(const sx_time *t, char *buf, size_t size);

/* Minutes from a to b (b - a); negative when b is earlier; NaN if either is
 * NULL. Precision is not considered. */
double sx_time_minutes_between(const sx_time *a, const sx_time *b);

/* Days from civil date (proleptic Gregorian) to days since 1970-01-01, and
 * the inverse; exposed for tests and for the audit report's week grouping.
 * m is 1..12 and d 1..31 (not checked); |y| up to 10^12. */
int64_t sx_days_from_civil(int64_t y, unsigned m, unsigned d);
void sx_civil_from_days(int64_t z, int64_t *y, unsigned *m, unsigned *d);

/* Parse an offset "+01:00", "+0100", "+01", "-0530", "Z", "UTC" or a fixed
 * zone "UTC+2", "UTC-03:30" into minutes east. "UTC+2" means two hours east
 * of UTC, as people write it (the POSIX TZ variable would read it as west).
 * Surrounding spaces are ignored. Returns SX_OK, SX_ETIME (malformed or
 * beyond +/-14:00; *offset_min unchanged) or SX_EINVAL (NULL argument). */
sx_status sx_parse_offset(const char *text, int *offset_min);

#endif
