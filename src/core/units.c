/* SPDX-License-Identifier: MIT */
/*
 * units.c - unit tables and the strict number reader.
 *
 * Each quantity has a table of the unit spellings it accepts and, for each,
 * how to reach the internal unit: out = (value + shift) * mul / div. The
 * tables are the whole truth about which spellings are known; a spelling not
 * in them is SX_EUNIT. Factors are definitions (SI prefixes, the
 * international foot, the Fahrenheit and Kelvin scales, UCUM's year and
 * month) except two figures of the trade: 7.50062 mmHg per kPa and
 * 1.611 g/dL per mmol/L of haemoglobin (monomer, 16.11 g/mmol).
 */
#include "core/units.h"

#include <errno.h>
#include <float.h>
#include <math.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* A spelling matched exactly, or with ASCII case folded. */
enum match { EXACT, FOLD };

/* A spelling that states the value is a fraction 0..1 (see units.h). */
enum { AS_FRACTION = 1 };

struct unit_spelling {
	const char *text;
	enum match match;
	double shift; /* added before scaling (temperatures) */
	double mul;
	double div;
	int flags;
};

/* clang-format off */

/* UTF-8: DEGREE SIGN U+00B0, MICRO SIGN U+00B5, GREEK SMALL LETTER MU U+03BC. */
#define DEG   "\xC2\xB0"
#define MICRO "\xC2\xB5"
#define MU    "\xCE\xBC"

/* Each table ends with a NULL spelling. */
static const struct unit_spelling dimensionless_units[] = {
	{ "1", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "[pH]", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "pH", FOLD, 0.0, 1.0, 1.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling pressure_units[] = {
	{ "mm[Hg]", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "mmHg", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "mm Hg", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "torr", FOLD, 0.0, 1.0, 1.0, 0 }, /* = mmHg to 1 part in 7 million */
	{ "kPa", FOLD, 0.0, SX_MMHG_PER_KPA, 1.0, 0 },
	/* exact only: with case folded, mPa and MPa (a factor of 10^6) merge */
	{ "Pa", EXACT, 0.0, SX_MMHG_PER_KPA, 1000.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling temperature_units[] = {
	{ "Cel", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "degC", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "C", EXACT, 0.0, 1.0, 1.0, 0 },
	{ DEG "C", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "[degF]", FOLD, -32.0, 5.0, 9.0, 0 },
	{ "degF", FOLD, -32.0, 5.0, 9.0, 0 },
	{ "F", EXACT, -32.0, 5.0, 9.0, 0 },
	{ DEG "F", EXACT, -32.0, 5.0, 9.0, 0 },
	{ "K", EXACT, -273.15, 1.0, 1.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling haemoglobin_units[] = {
	{ "g/dL", FOLD, 0.0, 1.0, 1.0, 0 },
	/* not folded: "G/L" is the UCUM code for 10^9/L, a cell count */
	{ "g/L", EXACT, 0.0, 1.0, 10.0, 0 },
	{ "g/l", EXACT, 0.0, 1.0, 10.0, 0 },
	{ "mmol/L", FOLD, 0.0, SX_GDL_PER_MMOL_HB, 1.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

/* 10^9/L = 1/nL = 10^3/uL; 1/uL = 10^6/L = 0.001 x 10^9/L. 10*6/uL (red
 * cells) is deliberately absent: a count in it is a mislabelled field. */
static const struct unit_spelling cell_count_units[] = {
	{ "10*9/L", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "10^9/L", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "x10^9/L", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "x10E9/L", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "G/L", EXACT, 0.0, 1.0, 1.0, 0 }, /* folded it would be g/L */
	{ "/nL", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "10*3/uL", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "10^3/uL", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "x10^3/uL", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "x10E3/uL", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "10*3/" MICRO "L", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "10*3/" MU "L", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "10^3/" MICRO "L", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "10^3/" MU "L", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "K/uL", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "K/" MICRO "L", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "K/" MU "L", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "10*3/mm3", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "10^3/mm3", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "/uL", FOLD, 0.0, 1.0, 1000.0, 0 },
	{ "/" MICRO "L", EXACT, 0.0, 1.0, 1000.0, 0 },
	{ "/" MU "L", EXACT, 0.0, 1.0, 1000.0, 0 },
	{ "/mm3", FOLD, 0.0, 1.0, 1000.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling volume_ml_units[] = {
	{ "mL", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "uL", FOLD, 0.0, 1.0, 1000.0, 0 },
	{ MICRO "L", EXACT, 0.0, 1.0, 1000.0, 0 },
	{ MU "L", EXACT, 0.0, 1.0, 1000.0, 0 },
	{ "L", FOLD, 0.0, 1000.0, 1.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling volume_ul_units[] = {
	{ "uL", FOLD, 0.0, 1.0, 1.0, 0 },
	{ MICRO "L", EXACT, 0.0, 1.0, 1.0, 0 },
	{ MU "L", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "mL", FOLD, 0.0, 1000.0, 1.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling fraction_units[] = {
	{ "1", EXACT, 0.0, 1.0, 1.0, AS_FRACTION },
	{ "fraction", FOLD, 0.0, 1.0, 1.0, AS_FRACTION },
	{ "%", EXACT, 0.0, 1.0, 100.0, 0 },
	{ "[%]", EXACT, 0.0, 1.0, 100.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling percent_units[] = {
	{ "%", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "[%]", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "1", EXACT, 0.0, 100.0, 1.0, AS_FRACTION },
	{ "fraction", FOLD, 0.0, 100.0, 1.0, AS_FRACTION },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling altitude_units[] = {
	{ "m", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "ft", FOLD, 0.0, 0.3048, 1.0, 0 }, /* international foot, exact */
	{ "[ft_i]", FOLD, 0.0, 0.3048, 1.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

static const struct unit_spelling duration_units[] = {
	{ "min", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "s", EXACT, 0.0, 1.0, 60.0, 0 },
	{ "h", EXACT, 0.0, 60.0, 1.0, 0 },
	{ "ms", EXACT, 0.0, 1.0, 60000.0, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};

/* UCUM: a = 365.25 d (Julian year), mo = a/12, wk = 7 d. */
static const struct unit_spelling age_units[] = {
	{ "a", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "yr", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "years", FOLD, 0.0, 1.0, 1.0, 0 },
	{ "y", EXACT, 0.0, 1.0, 1.0, 0 },
	{ "mo", EXACT, 0.0, 1.0, 12.0, 0 },
	{ "wk", FOLD, 0.0, 7.0, 365.25, 0 },
	{ "d", EXACT, 0.0, 1.0, 365.25, 0 },
	{ NULL, EXACT, 0.0, 1.0, 1.0, 0 },
};
/* clang-format on */

struct quantity_info {
	const struct unit_spelling *units;
	const char *internal; /* UCUM */
	const char *label;
	int empty_flags; /* flags of the "" / NULL unit */
};

static const struct quantity_info quantities[SX_QUANTITY_COUNT] = {
        [SX_Q_NONE] = {dimensionless_units, "1", "", 0},
        [SX_Q_PRESSURE] = {pressure_units, "mm[Hg]", "mmHg", 0},
        [SX_Q_TEMPERATURE] = {temperature_units, "Cel", DEG "C", 0},
        [SX_Q_HAEMOGLOBIN] = {haemoglobin_units, "g/dL", "g/dL", 0},
        [SX_Q_CELL_COUNT] = {cell_count_units, "10*9/L", "x10^9/L", 0},
        [SX_Q_VOLUME_ML] = {volume_ml_units, "mL", "mL", 0},
        [SX_Q_VOLUME_UL] = {volume_ul_units, "uL", "uL", 0},
        [SX_Q_FRACTION] = {fraction_units, "1", "", AS_FRACTION},
        [SX_Q_PERCENT] = {percent_units, "%", "%", 0},
        [SX_Q_ALTITUDE] = {altitude_units, "m", "m", 0},
        [SX_Q_DURATION] = {duration_units, "min", "min", 0},
        [SX_Q_AGE] = {age_units, "a", "years", 0},
};

static bool is_blank(char c)
{
	return c == ' ' || c == '\t' || c == '\r' || c == '\n';
}

static char fold(char c)
{
	return (c >= 'A' && c <= 'Z') ? (char)(c - 'A' + 'a') : c;
}

/* Does [text, text+len) spell s (NUL-terminated)? */
static bool spelled(const char *text, size_t len, const struct unit_spelling *s)
{
	size_t n = strlen(s->text);

	if (n != len)
		return false;
	if (s->match == EXACT)
		return memcmp(text, s->text, n) == 0;
	for (size_t i = 0; i < n; i++)
		if (fold(text[i]) != fold(s->text[i]))
			return false;
	return true;
}

sx_status sx_unit_convert(sx_quantity quantity, double value, const char *unit, double *out)
{
	const struct quantity_info *q;
	const struct unit_spelling *found = NULL;
	double shift = 0.0, mul = 1.0, div = 1.0, result;
	int flags;
	size_t start = 0, end = 0;

	if ((unsigned)quantity >= SX_QUANTITY_COUNT || !out || !isfinite(value))
		return SX_EINVAL;
	q = &quantities[quantity];
	if (unit) {
		end = strlen(unit);
		while (start < end && (unit[start] == ' ' || unit[start] == '\t'))
			start++;
		while (end > start && (unit[end - 1] == ' ' || unit[end - 1] == '\t'))
			end--;
	}
	if (start == end) {
		flags = q->empty_flags;
	} else {
		for (const struct unit_spelling *s = q->units; s->text; s++) {
			if (spelled(unit + start, end - start, s)) {
				found = s;
				break;
			}
		}
		if (!found)
			return SX_EUNIT;
		shift = found->shift;
		mul = found->mul;
		div = found->div;
		flags = found->flags;
	}
	if ((flags & AS_FRACTION) && fabs(value) > 1.0)
		return SX_ERANGE;
	result = (value + shift) * mul / div;
	if (!isfinite(result))
		return SX_ERANGE;
	*out = result;
	return SX_OK;
}

const char *sx_unit_internal(sx_quantity quantity)
{
	if ((unsigned)quantity >= SX_QUANTITY_COUNT)
		return "";
	return quantities[quantity].internal;
}

const char *sx_unit_label(sx_quantity quantity)
{
	if ((unsigned)quantity >= SX_QUANTITY_COUNT)
		return "";
	return quantities[quantity].label;
}

/*
 * The number reader. The grammar is checked by hand; the significant digits
 * are then written as an integer with an exponent ("12.5e3" becomes
 * "125e2"), which strtod reads the same in every locale because the decimal
 * point, the only locale-dependent part of its decimal syntax, is gone.
 * strtod does the correctly rounded conversion.
 */
enum { NUMBER_MAX_DIGITS = 64 };
/* Past this decimal exponent every value with <= 64 digits is out of the
 * double range anyway, so the exponent can be clamped without changing the
 * outcome. */
#define EXPONENT_CLAMP 100000

static bool is_digit(char c)
{
	return c >= '0' && c <= '9';
}

sx_status sx_parse_number(const char *s, unsigned long len, double *out)
{
	char digits[NUMBER_MAX_DIGITS + 1];
	char text[NUMBER_MAX_DIGITS + 32];
	size_t i, end, ndigits = 0, seen = 0;
	size_t pending_zeros = 0; /* zeros after the last non-zero digit */
	int64_t exp10 = 0, e = 0;
	bool negative = false, e_negative = false;
	double v;
	char *stop;

	if (!s || !out)
		return SX_EINVAL;
	i = 0;
	end = len;
	while (i < end && is_blank(s[i]))
		i++;
	while (end > i && is_blank(s[end - 1]))
		end--;
	if (i < end && (s[i] == '+' || s[i] == '-'))
		negative = s[i++] == '-';

	/* Mantissa: digits [. digits]. Leading zeros are dropped; zeros after
	 * the last non-zero digit are held back and only written when another
	 * non-zero digit follows, so that "1.000" is one digit. */
	for (bool fraction = false; i < end; i++) {
		char c = s[i];

		if (c == '.' && !fraction) {
			fraction = true;
			continue;
		}
		if (!is_digit(c))
			break;
		seen++;
		if (fraction)
			exp10--;
		if (c == '0') {
			if (ndigits > 0)
				pending_zeros++;
			continue;
		}
		if (ndigits + pending_zeros + 1 > NUMBER_MAX_DIGITS)
			return SX_ELIMIT;
		while (pending_zeros > 0) {
			digits[ndigits++] = '0';
			pending_zeros--;
		}
		digits[ndigits++] = c;
	}
	if (seen == 0)
		return SX_ESYNTAX;
	exp10 += (int64_t)pending_zeros;

	if (i < end && (s[i] == 'e' || s[i] == 'E')) {
		size_t first;

		i++;
		if (i < end && (s[i] == '+' || s[i] == '-'))
			e_negative = s[i++] == '-';
		first = i;
		for (; i < end && is_digit(s[i]); i++)
			if (e < EXPONENT_CLAMP)
				e = e * 10 + (s[i] - '0');
		if (i == first)
			return SX_ESYNTAX;
	}
	if (i != end)
		return SX_ESYNTAX;

	if (ndigits == 0) {
		*out = 0.0;
		return SX_OK;
	}
	exp10 += e_negative ? -e : e;
	if (exp10 > EXPONENT_CLAMP)
		exp10 = EXPONENT_CLAMP;
	if (exp10 < -EXPONENT_CLAMP)
		exp10 = -EXPONENT_CLAMP;
	digits[ndigits] = '\0';
	snprintf(text, sizeof text, "%s%se%lld", negative ? "-" : "", digits, (long long)exp10);

	errno = 0;
	v = strtod(text, &stop);
	if (*stop != '\0')
		return SX_ESYNTAX; /* cannot happen: the text was built above */
	if (errno == ERANGE || !isfinite(v) || fabs(v) < DBL_MIN)
		return SX_ERANGE;
	*out = v;
	return SX_OK;
}
