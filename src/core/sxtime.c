/* SPDX-License-Identifier: MIT */
/*
 * sxtime.c - reading and writing ISO 8601 and HL7 DTM times.
 *
 * Both readers walk the text once with a cursor, check each field as soon
 * as it is read (so the first wrong character is the one reported), and
 * end in the same place: the calendar fields, a precision and an offset,
 * turned into UTC milliseconds with the civil-date arithmetic below. The
 * writers do the inverse in the time's own offset. Nothing here looks at
 * the process's time zone or locale.
 */
#include "core/sxtime.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#define MS_PER_MINUTE  INT64_C(60000)
#define MS_PER_DAY     INT64_C(86400000)
#define MAX_OFFSET_MIN (14 * 60)
#define YEAR_MIN       1900
#define YEAR_MAX       2199

/*
 * Civil dates: Howard Hinnant's public-domain algorithms days_from_civil and
 * civil_from_days ("chrono-Compatible Low-Level Date Algorithms"), with the
 * year shifted to start on 1 March so that the leap day comes last.
 */
int64_t sx_days_from_civil(int64_t y, unsigned m, unsigned d)
{
	int64_t era, yoe, doy, doe;

	y -= m <= 2;
	era = (y >= 0 ? y : y - 399) / 400;
	yoe = y - era * 400; /* [0, 399] */
	doy = (153 * (int64_t)(m > 2 ? m - 3 : m + 9) + 2) / 5 + (int64_t)d - 1;
	doe = yoe * 365 + yoe / 4 - yoe / 100 + doy; /* [0, 146096] */
	return era * 146097 + doe - 719468;
}

void sx_civil_from_days(int64_t z, int64_t *y, unsigned *m, unsigned *d)
{
	int64_t era, doe, yoe, doy, mp, year;
	unsigned month;

	z += 719468;
	era = (z >= 0 ? z : z - 146096) / 146097;
	doe = z - era * 146097;                                      /* [0, 146096] */
	yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365; /* [0, 399] */
	year = yoe + era * 400;
	doy = doe - (365 * yoe + yoe / 4 - yoe / 100); /* [0, 365] */
	mp = (5 * doy + 2) / 153;                      /* [0, 11] */
	month = (unsigned)(mp < 10 ? mp + 3 : mp - 9);
	if (d)
		*d = (unsigned)(doy - (153 * mp + 2) / 5 + 1);
	if (m)
		*m = month;
	if (y)
		*y = year + (month <= 2);
}

static bool is_leap(int64_t y)
{
	return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
}

static unsigned days_in_month(int64_t y, unsigned m)
{
	static const unsigned char days[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
	if (m == 2 && is_leap(y))
		return 29;
	return days[m - 1];
}

static int64_t floor_div(int64_t a, int64_t b)
{
	int64_t q = a / b;

	if ((a % b != 0) && ((a < 0) != (b < 0)))
		q--;
	return q;
}

/* ---- reading ---------------------------------------------------------- */

struct cursor {
	const char *s;
	size_t pos, end; /* indices into the caller's text */
	size_t fail_pos;
	const char *reason;
};

struct fields {
	int year, month, day, hour, minute, second, ms;
	int precision;
	bool has_offset;
	int offset;
	size_t second_pos;
};

static bool fail(struct cursor *c, size_t at, const char *reason)
{
	c->fail_pos = at;
	c->reason = reason;
	return false;
}

static bool is_digit(char ch)
{
	return ch >= '0' && ch <= '9';
}

static bool digit_at(const struct cursor *c, size_t at)
{
	return at < c->end && is_digit(c->s[at]);
}

static bool char_at(const struct cursor *c, size_t at, char ch)
{
	return at < c->end && c->s[at] == ch;
}

/* Exactly n digits at the cursor. */
static bool take(struct cursor *c, int n, int *value)
{
	int v = 0;

	for (int i = 0; i < n; i++) {
		if (!digit_at(c, c->pos))
			return fail(c, c->pos,
			            c->pos < c->end ? "expected a digit"
			                            : "the time ends too early");
		v = v * 10 + (c->s[c->pos++] - '0');
	}
	*value = v;
	return true;
}

static bool take_year(struct cursor *c, struct fields *f)
{
	size_t at = c->pos;

	if (!take(c, 4, &f->year))
		return false;
	if (f->year < YEAR_MIN || f->year > YEAR_MAX)
		return fail(c, at, "year outside 1900..2199");
	f->precision = SX_PREC_YEAR;
	return true;
}

static bool take_month(struct cursor *c, struct fields *f)
{
	size_t at = c->pos;

	if (!take(c, 2, &f->month))
		return false;
	if (f->month < 1 || f->month > 12)
		return fail(c, at, "month outside 01..12");
	f->precision = SX_PREC_MONTH;
	return true;
}

static bool take_day(struct cursor *c, struct fields *f)
{
	size_t at = c->pos;

	if (!take(c, 2, &f->day))
		return false;
	if (f->day < 1)
		return fail(c, at, "day 00 does not exist");
	if ((unsigned)f->day > days_in_month(f->year, (unsigned)f->month)) {
		if (f->month == 2 && f->day == 29)
			return fail(c, at, "29 February in a year that is not a leap year");
		return fail(c, at, "this month has fewer days");
	}
	f->precision = SX_PREC_DAY;
	return true;
}

static bool take_hour(struct cursor *c, struct fields *f)
{
	size_t at = c->pos;

	if (!take(c, 2, &f->hour))
		return false;
	if (f->hour == 24)
		return fail(c, at,
		            "hour 24 (ISO 8601 end of day) is not accepted; "
		            "write 00:00 of the next day");
	if (f->hour > 23)
		return fail(c, at, "hour outside 00..23");
	f->precision = SX_PREC_HOUR;
	return true;
}

static bool take_minute(struct cursor *c, struct fields *f)
{
	size_t at = c->pos;

	if (!take(c, 2, &f->minute))
		return false;
	if (f->minute > 59)
		return fail(c, at, "minute outside 00..59");
	f->precision = SX_PREC_MINUTE;
	return true;
}

/* Second 60 passes here; finish() decides whether it is a leap second. */
static bool take_second(struct cursor *c, struct fields *f)
{
	f->second_pos = c->pos;
	if (!take(c, 2, &f->second))
		return false;
	if (f->second > 60)
		return fail(c, f->second_pos, "second outside 00..59");
	f->precision = SX_PREC_SECOND;
	return true;
}

/* After '.' or ',': 1..max digits, kept to the millisecond. */
static bool take_fraction(struct cursor *c, struct fields *f, int max)
{
	int n = 0, ms = 0;

	c->pos++;
	while (digit_at(c, c->pos)) {
		if (n == max)
			return fail(c, c->pos,
			            max == 4 ? "more than 4 fraction digits"
			                     : "more than 9 fraction digits");
		if (n < 3)
			ms = ms * 10 + (c->s[c->pos] - '0');
		n++;
		c->pos++;
	}
	if (n == 0)
		return fail(c, c->pos,
		            c->pos < c->end ? "expected a digit" : "the time ends too early");
	for (int i = n; i < 3; i++)
		ms *= 10;
	f->ms = ms;
	f->precision = SX_PREC_FRACTION;
	return true;
}

/*
 * An offset at the cursor, which is on its sign: hours (min_hour_digits or
 * 2 digits), then minutes as ":mm" (if colon_ok), "mm", or none (unless
 * need_minutes).
 */
static bool take_offset(struct cursor *c, int min_hour_digits, bool colon_ok, bool need_minutes,
                        int *offset)
{
	int sign = c->s[c->pos] == '-' ? -1 : 1;
	int h = 0, m = 0, n = 0;
	size_t hour_at, minute_at;

	c->pos++;
	hour_at = c->pos;
	while (n < 2 && digit_at(c, c->pos)) {
		h = h * 10 + (c->s[c->pos++] - '0');
		n++;
	}
	if (n < min_hour_digits)
		return fail(c, c->pos,
		            c->pos < c->end ? "expected a digit" : "the offset ends too early");
	minute_at = c->pos;
	if (colon_ok && char_at(c, c->pos, ':')) {
		c->pos++;
		minute_at = c->pos;
		if (!take(c, 2, &m))
			return false;
	} else if (digit_at(c, c->pos) || need_minutes) {
		if (!take(c, 2, &m))
			return false;
	}
	if (h > 14)
		return fail(c, hour_at, "offset beyond +/-14:00");
	if (m > 59)
		return fail(c, minute_at, "offset minutes outside 00..59");
	if (h * 60 + m > MAX_OFFSET_MIN)
		return fail(c, minute_at, "offset beyond +/-14:00");
	*offset = sign * (h * 60 + m);
	return true;
}

/* "-dd:" at the cursor: an offset -hh:mm, not a month or a day. */
static bool offset_follows(const struct cursor *c)
{
	return char_at(c, c->pos, '-') && digit_at(c, c->pos + 1) && digit_at(c, c->pos + 2) &&
	       char_at(c, c->pos + 3, ':');
}

static int64_t to_utc_ms(const struct fields *f, int second)
{
	int64_t days = sx_days_from_civil(f->year, (unsigned)f->month, (unsigned)f->day);
	int64_t ms = ((int64_t)f->hour * 60 + f->minute) * MS_PER_MINUTE + (int64_t)second * 1000 +
	             f->ms;

	return days * MS_PER_DAY + ms - (int64_t)f->offset * MS_PER_MINUTE;
}

/* The end of the text, the leap second, and the result. A leap second is
 * inserted only as the last second of a UTC month (ITU-R TF.460, from
 * memory), so 23:59:60 is checked against the UTC time, not the local one. */
static bool finish(struct cursor *c, struct fields *f, sx_time *out)
{
	int64_t utc;

	if (c->pos != c->end)
		return fail(c, c->pos, "unexpected character");
	utc = to_utc_ms(f, f->second == 60 ? 59 : f->second);
	if (f->second == 60) {
		int64_t day = floor_div(utc, MS_PER_DAY);
		int64_t y;
		unsigned m, d;

		sx_civil_from_days(day, &y, &m, &d);
		if (utc - day * MS_PER_DAY < MS_PER_DAY - 1000 || d != days_in_month(y, m))
			return fail(c, f->second_pos,
			            "second 60 is a leap second only at 23:59:60 UTC "
			            "on the last day of a month");
	}
	out->utc_ms = utc;
	out->offset_min = (int16_t)f->offset;
	out->precision = (uint8_t)f->precision;
	out->has_offset = f->has_offset;
	return true;
}

static bool parse_iso_time(struct cursor *c, struct fields *f, bool basic)
{
	if (!take_hour(c, f))
		return false;
	if (basic ? digit_at(c, c->pos) : char_at(c, c->pos, ':')) {
		c->pos += !basic;
		if (!take_minute(c, f))
			return false;
		if (basic ? digit_at(c, c->pos) : char_at(c, c->pos, ':')) {
			c->pos += !basic;
			if (!take_second(c, f))
				return false;
			if (char_at(c, c->pos, '.') || char_at(c, c->pos, ','))
				return take_fraction(c, f, 9);
			return true;
		}
	}
	if (char_at(c, c->pos, '.') || char_at(c, c->pos, ','))
		return fail(c, c->pos, "fractions of an hour or a minute are not accepted");
	return true;
}

static bool parse_iso(struct cursor *c, struct fields *f)
{
	bool basic = false;

	if (!take_year(c, f))
		return false;
	if (char_at(c, c->pos, '-')) {
		if (!offset_follows(c)) {
			c->pos++;
			if (!take_month(c, f))
				return false;
			if (char_at(c, c->pos, '-') && !offset_follows(c)) {
				c->pos++;
				if (!take_day(c, f))
					return false;
			}
		}
	} else if (digit_at(c, c->pos)) {
		basic = true;
		if (!take_month(c, f) || !take_day(c, f))
			return false;
	}
	if (c->pos < c->end &&
	    (c->s[c->pos] == 'T' || c->s[c->pos] == 't' || c->s[c->pos] == ' ')) {
		if (f->precision != SX_PREC_DAY)
			return fail(c, c->pos, "a time needs a whole date (YYYY-MM-DD)");
		c->pos++;
		if (!parse_iso_time(c, f, basic))
			return false;
	}
	if (char_at(c, c->pos, 'Z') || char_at(c, c->pos, 'z')) {
		c->pos++;
		f->has_offset = true;
		f->offset = 0;
	} else if (char_at(c, c->pos, '+') || char_at(c, c->pos, '-')) {
		if (!take_offset(c, 2, true, false, &f->offset))
			return false;
		f->has_offset = true;
	}
	return true;
}

static bool parse_hl7(struct cursor *c, struct fields *f)
{
	size_t start = c->pos, n = 0;

	while (digit_at(c, start + n))
		n++;
	if (!take_year(c, f))
		return false;
	if (n >= 6 && !take_month(c, f))
		return false;
	if (n >= 8 && !take_day(c, f))
		return false;
	if (n >= 10 && !take_hour(c, f))
		return false;
	if (n >= 12 && !take_minute(c, f))
		return false;
	if (n >= 14 && !take_second(c, f))
		return false;
	if (n > 14)
		return fail(c, start + 14, "more than 14 digits before the fraction");
	if (n > 4 && n % 2 != 0)
		return fail(c, start + n,
		            start + n < c->end ? "digits come in pairs after the year"
		                               : "the time ends too early");
	if (char_at(c, c->pos, '.')) {
		if (n != 14)
			return fail(c, c->pos, "a fraction of a second needs the seconds");
		if (!take_fraction(c, f, 4))
			return false;
	}
	if (char_at(c, c->pos, '+') || char_at(c, c->pos, '-')) {
		if (!take_offset(c, 2, false, true, &f->offset))
			return false;
		f->has_offset = true;
	}
	return true;
}

static bool is_blank(char ch)
{
	return ch == ' ' || ch == '\t';
}

/* 'T', 'Z', ':' or a space anywhere (none of them can be in HL7 DTM), or
 * "YYYY-" that is not the HL7 "YYYY-ZZZZ". */
static bool looks_iso(const char *s, size_t start, size_t end)
{
	size_t n = end - start;

	for (size_t i = start; i < end; i++)
		if (strchr("TtZz: ", s[i]) && s[i] != '\0')
			return true;
	for (size_t i = 0; i < 4; i++)
		if (i >= n || !is_digit(s[start + i]))
			return false;
	if (n < 5 || s[start + 4] != '-')
		return false;
	if (n == 9) {
		for (size_t i = 5; i < 9; i++)
			if (!is_digit(s[start + i]))
				return true;
		return false;
	}
	return true;
}

sx_status sx_time_parse_detailed(sx_time_form form, const char *text, size_t len,
                                 int default_offset_min, sx_time *out, unsigned *error_column,
                                 const char **reason)
{
	struct cursor c = {.s = text, .pos = 0, .end = len};
	struct fields f = {.month = 1, .day = 1, .offset = default_offset_min};
	bool ok;

	if (error_column)
		*error_column = 0;
	if (reason)
		*reason = NULL;
	if (!text || !out || default_offset_min < -MAX_OFFSET_MIN ||
	    default_offset_min > MAX_OFFSET_MIN)
		return SX_EINVAL;
	while (c.pos < c.end && is_blank(text[c.pos]))
		c.pos++;
	while (c.end > c.pos && is_blank(text[c.end - 1]))
		c.end--;
	if (form == SX_TIME_ANY)
		form = looks_iso(text, c.pos, c.end) ? SX_TIME_ISO8601 : SX_TIME_HL7;
	if (form == SX_TIME_ISO8601)
		ok = parse_iso(&c, &f);
	else if (form == SX_TIME_HL7)
		ok = parse_hl7(&c, &f);
	else
		return SX_EINVAL;
	if (ok)
		ok = finish(&c, &f, out);
	if (ok)
		return SX_OK;
	if (error_column)
		*error_column = (unsigned)(c.fail_pos + 1);
	if (reason)
		*reason = c.reason;
	return SX_ETIME;
}

sx_status sx_time_parse_iso8601(const char *text, size_t len, int default_offset_min, sx_time *out,
                                unsigned *error_column)
{
	return sx_time_parse_detailed(SX_TIME_ISO8601, text, len, default_offset_min, out,
	                              error_column, NULL);
}

sx_status sx_time_parse_hl7(const char *text, size_t len, int default_offset_min, sx_time *out,
                            unsigned *error_column)
{
	return sx_time_parse_detailed(SX_TIME_HL7, text, len, default_offset_min, out, error_column,
	                              NULL);
}

sx_status sx_time_parse(const char *text, size_t len, int default_offset_min, sx_time *out,
                        unsigned *error_column)
{
	return sx_time_parse_detailed(SX_TIME_ANY, text, len, default_offset_min, out, error_column,
	                              NULL);
}

sx_status sx_parse_offset(const char *text, int *offset_min)
{
	struct cursor c = {.s = text};
	int offset = 0;

	if (!text || !offset_min)
		return SX_EINVAL;
	c.end = strlen(text);
	while (c.pos < c.end && is_blank(text[c.pos]))
		c.pos++;
	while (c.end > c.pos && is_blank(text[c.end - 1]))
		c.end--;
	if (c.end - c.pos == 1 && (text[c.pos] == 'Z' || text[c.pos] == 'z')) {
		*offset_min = 0;
		return SX_OK;
	}
	if (c.end - c.pos >= 3 && memcmp(text + c.pos, "UTC", 3) == 0) {
		c.pos += 3;
		if (c.pos == c.end) {
			*offset_min = 0;
			return SX_OK;
		}
		if (!(char_at(&c, c.pos, '+') || char_at(&c, c.pos, '-')) ||
		    !take_offset(&c, 1, true, false, &offset))
			return SX_ETIME;
	} else {
		if (!(char_at(&c, c.pos, '+') || char_at(&c, c.pos, '-')) ||
		    !take_offset(&c, 2, true, false, &offset))
			return SX_ETIME;
	}
	if (c.pos != c.end)
		return SX_ETIME;
	*offset_min = offset;
	return SX_OK;
}

/* ---- writing ---------------------------------------------------------- */

struct text {
	char buf[64];
	size_t n;
};

static void put(struct text *t, const char *fmt, ...) __attribute__((format(printf, 2, 3)));

static void put(struct text *t, const char *fmt, ...)
{
	va_list ap;
	int k;

	va_start(ap, fmt);
	k = vsnprintf(t->buf + t->n, sizeof t->buf - t->n, fmt, ap);
	va_end(ap);
	if (k > 0)
		t->n += (size_t)k; /* the buffer is larger than any text written */
}

/* Fraction as milliseconds without trailing zeros: .25, .5, .125, .0 */
static void put_fraction(struct text *t, int ms)
{
	if (ms % 100 == 0)
		put(t, ".%d", ms / 100);
	else if (ms % 10 == 0)
		put(t, ".%02d", ms / 10);
	else
		put(t, ".%03d", ms);
}

static int format_time(const sx_time *t, char *buf, size_t size, bool hl7)
{
	struct text out = {.n = 0};
	int64_t local, day, rem, y;
	unsigned m, d;
	int hh, mi, ss, ms, off;

	if (!t || t->precision > SX_PREC_FRACTION || t->offset_min < -MAX_OFFSET_MIN ||
	    t->offset_min > MAX_OFFSET_MIN)
		return -1;
	if (t->precision != 0) {
		local = t->utc_ms + (int64_t)t->offset_min * MS_PER_MINUTE;
		day = floor_div(local, MS_PER_DAY);
		rem = local - day * MS_PER_DAY;
		sx_civil_from_days(day, &y, &m, &d);
		if (y < 0 || y > 9999)
			return -1;
		hh = (int)(rem / 3600000);
		mi = (int)(rem / 60000 % 60);
		ss = (int)(rem / 1000 % 60);
		ms = (int)(rem % 1000);

		put(&out, "%04d", (int)y);
		if (t->precision >= SX_PREC_MONTH)
			put(&out, hl7 ? "%02u" : "-%02u", m);
		if (t->precision >= SX_PREC_DAY)
			put(&out, hl7 ? "%02u" : "-%02u", d);
		if (t->precision >= SX_PREC_HOUR)
			put(&out, hl7 ? "%02d" : "T%02d", hh);
		if (t->precision >= SX_PREC_MINUTE)
			put(&out, hl7 ? "%02d" : ":%02d", mi);
		if (t->precision >= SX_PREC_SECOND)
			put(&out, hl7 ? "%02d" : ":%02d", ss);
		if (t->precision >= SX_PREC_FRACTION)
			put_fraction(&out, ms);
		if (t->has_offset) {
			off = t->offset_min < 0 ? -t->offset_min : t->offset_min;
			if (!hl7 && off == 0)
				put(&out, "Z");
			else
				put(&out, hl7 ? "%c%02d%02d" : "%c%02d:%02d",
				    t->offset_min < 0 ? '-' : '+', off / 60, off % 60);
		}
	}
	if (size > 0) {
		size_t k = out.n < size - 1 ? out.n : size - 1;

		memcpy(buf, out.buf, k);
		buf[k] = '\0';
	}
	return (int)out.n;
}

int sx_time_format_iso(const sx_time *t, char *buf, size_t size)
{
	return format_time(t, buf, size, false);
}

int sx_time_format_hl7(const sx_time *t, char *buf, size_t size)
{
	return format_time(t, buf, size, true);
}

double sx_time_minutes_between(const sx_time *a, const sx_time *b)
{
	if (!a || !b)
		return NAN;
	return (double)(b->utc_ms - a->utc_ms) / 60000.0;
}
