/* SPDX-License-Identifier: MIT */
/*
 * test_units.c - Check suite for core/units: every accepted spelling of every
 * quantity converts by the right factor, spellings that are unknown or
 * ambiguous are refused, the fraction guard holds, and the number reader is
 * strict and locale-independent.
 *
 * Each table row names where its expected value comes from.
 */
#include <check.h>
#include <float.h>
#include <locale.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "core/units.h"

struct conversion {
	sx_quantity q;
	double value;
	const char *unit;
	double expected;
	double tol;
	const char *source;
};

/* Sources named in the rows:
 *  "issue"     1 kPa = 7.50062 mmHg, the figure the project fixes (760/101.325
 *              to six figures: standard atmosphere 101.325 kPa = 760 mmHg,
 *              common practice)
 *  "SI"        SI prefixes and the definition of the degree Celsius
 *              (T/K = t/°C + 273.15), BIPM SI Brochure, 9th edition
 *  "F scale"   t/°C = (t/°F - 32) x 5/9, definition of the Fahrenheit scale,
 *              common practice
 *  "Hb"        conventional conversion, Hb monomer 16.11 g/mmol, common
 *              practice: 1 mmol/L = 1.611 g/dL
 *  "foot"      international foot = 0.3048 m exactly (international yard and
 *              pound agreement, 1959; common practice)
 *  "UCUM"      UCUM 2.1 codes a, mo, wk, d, [ft_i], mm[Hg]; a = 365.25 d (the
 *              Julian year of the UCUM table); mo = a/12, wk = 7 d (from memory)
 */
static const struct conversion conversions[] = {
        /* pressure, internal mmHg */
        {SX_Q_PRESSURE, 95.0, "mmHg", 95.0, 1e-12, "identity"},
        {SX_Q_PRESSURE, 95.0, "mm[Hg]", 95.0, 1e-12, "identity (UCUM code)"},
        {SX_Q_PRESSURE, 95.0, "MMHG", 95.0, 1e-12, "identity"},
        {SX_Q_PRESSURE, 95.0, "mmhg", 95.0, 1e-12, "identity"},
        {SX_Q_PRESSURE, 95.0, "MM[HG]", 95.0, 1e-12, "identity (UCUM case-insensitive)"},
        {SX_Q_PRESSURE, 95.0, "mm Hg", 95.0, 1e-12, "identity"},
        {SX_Q_PRESSURE, 95.0, "torr", 95.0, 1e-12, "torr = mmHg, common practice"},
        {SX_Q_PRESSURE, 95.0, "Torr", 95.0, 1e-12, "torr = mmHg, common practice"},
        {SX_Q_PRESSURE, 95.0, "", 95.0, 1e-12, "identity (empty = internal)"},
        {SX_Q_PRESSURE, 95.0, NULL, 95.0, 1e-12, "identity (NULL = internal)"},
        {SX_Q_PRESSURE, 1.0, "kPa", 7.50062, 1e-12, "issue"},
        {SX_Q_PRESSURE, 12.7, "kPa", 95.257874, 1e-9, "issue: 12.7 x 7.50062"},
        {SX_Q_PRESSURE, 12.7, "KPA", 95.257874, 1e-9, "issue"},
        {SX_Q_PRESSURE, 12.7, "kpa", 95.257874, 1e-9, "issue"},
        {SX_Q_PRESSURE, 101.325, "kPa", 760.0003, 1e-4, "issue; 1 atm = 760 mmHg to 4e-7"},
        {SX_Q_PRESSURE, 1000.0, "Pa", 7.50062, 1e-12, "issue and SI (1 kPa = 1000 Pa)"},
        {SX_Q_PRESSURE, 5.3, " kPa ", 39.753286, 1e-9, "issue: 5.3 x 7.50062"},
        {SX_Q_PRESSURE, -1.0, "kPa", -7.50062, 1e-12, "issue (sign kept; range is not ours)"},
        /* temperature, internal Cel */
        {SX_Q_TEMPERATURE, 37.0, "Cel", 37.0, 1e-12, "identity (UCUM)"},
        {SX_Q_TEMPERATURE, 37.0, "CEL", 37.0, 1e-12, "identity (UCUM case-insensitive)"},
        {SX_Q_TEMPERATURE, 37.0, "C", 37.0, 1e-12, "identity"},
        {SX_Q_TEMPERATURE, 37.0, "degC", 37.0, 1e-12, "identity"},
        {SX_Q_TEMPERATURE, 37.0,
         "\xC2\xB0"
         "C",
         37.0, 1e-12, "identity (UTF-8 degree sign)"},
        {SX_Q_TEMPERATURE, 98.6, "[degF]", 37.0, 1e-12, "F scale"},
        {SX_Q_TEMPERATURE, 98.6, "degF", 37.0, 1e-12, "F scale"},
        {SX_Q_TEMPERATURE, 98.6, "F", 37.0, 1e-12, "F scale"},
        {SX_Q_TEMPERATURE, 98.6,
         "\xC2\xB0"
         "F",
         37.0, 1e-12, "F scale"},
        {SX_Q_TEMPERATURE, 32.0, "F", 0.0, 1e-12, "F scale"},
        {SX_Q_TEMPERATURE, -40.0, "degF", -40.0, 1e-12, "F scale"},
        {SX_Q_TEMPERATURE, 212.0, "[DEGF]", 100.0, 1e-12, "F scale"},
        {SX_Q_TEMPERATURE, 310.15, "K", 37.0, 1e-9, "SI"},
        {SX_Q_TEMPERATURE, 273.15, "K", 0.0, 1e-9, "SI"},
        /* haemoglobin, internal g/dL */
        {SX_Q_HAEMOGLOBIN, 14.2, "g/dL", 14.2, 1e-12, "identity"},
        {SX_Q_HAEMOGLOBIN, 14.2, "g/dl", 14.2, 1e-12, "identity"},
        {SX_Q_HAEMOGLOBIN, 14.2, "G/DL", 14.2, 1e-12, "identity (UCUM case-insensitive)"},
        {SX_Q_HAEMOGLOBIN, 142.0, "g/L", 14.2, 1e-12, "SI (1 dL = 0.1 L)"},
        {SX_Q_HAEMOGLOBIN, 142.0, "g/l", 14.2, 1e-12, "SI (1 dL = 0.1 L)"},
        {SX_Q_HAEMOGLOBIN, 1.0, "mmol/L", 1.611, 1e-12, "Hb"},
        {SX_Q_HAEMOGLOBIN, 8.8, "mmol/L", 14.1768, 1e-9, "Hb: 8.8 x 1.611"},
        {SX_Q_HAEMOGLOBIN, 8.8, "MMOL/L", 14.1768, 1e-9, "Hb"},
        /* cell count, internal 10^9/L */
        {SX_Q_CELL_COUNT, 7.5, "10*9/L", 7.5, 1e-12, "identity (UCUM)"},
        {SX_Q_CELL_COUNT, 7.5, "10^9/L", 7.5, 1e-12, "identity"},
        {SX_Q_CELL_COUNT, 7.5, "10^9/l", 7.5, 1e-12, "identity"},
        {SX_Q_CELL_COUNT, 7.5, "x10^9/L", 7.5, 1e-12, "identity"},
        {SX_Q_CELL_COUNT, 7.5, "x10E9/L", 7.5, 1e-12, "identity"},
        {SX_Q_CELL_COUNT, 7.5, "X10E9/L", 7.5, 1e-12, "identity"},
        {SX_Q_CELL_COUNT, 7.5, "G/L", 7.5, 1e-12, "SI (G = 10^9)"},
        {SX_Q_CELL_COUNT, 7.5, "/nL", 7.5, 1e-12, "SI (1/nL = 10^9/L)"},
        {SX_Q_CELL_COUNT, 7.5, "10*3/uL", 7.5, 1e-12, "SI (10^3/uL = 10^9/L)"},
        {SX_Q_CELL_COUNT, 7.5, "10^3/uL", 7.5, 1e-12, "SI"},
        {SX_Q_CELL_COUNT, 7.5, "x10^3/uL", 7.5, 1e-12, "SI"},
        {SX_Q_CELL_COUNT, 7.5, "x10E3/uL", 7.5, 1e-12, "SI"},
        {SX_Q_CELL_COUNT, 7.5, "10^3/\xC2\xB5L", 7.5, 1e-12, "SI (micro sign)"},
        {SX_Q_CELL_COUNT, 7.5, "10^3/\xCE\xBCL", 7.5, 1e-12, "SI (Greek mu)"},
        {SX_Q_CELL_COUNT, 7.5, "K/uL", 7.5, 1e-12, "SI (K = 10^3, common practice)"},
        {SX_Q_CELL_COUNT, 7.5, "K/UL", 7.5, 1e-12, "SI"},
        {SX_Q_CELL_COUNT, 7.5, "10*3/mm3", 7.5, 1e-12, "SI (1 mm3 = 1 uL)"},
        {SX_Q_CELL_COUNT, 250.0, "10^3/mm3", 250.0, 1e-12, "SI"},
        {SX_Q_CELL_COUNT, 7500.0, "/uL", 7.5, 1e-12, "SI (1/uL = 10^6/L)"},
        {SX_Q_CELL_COUNT, 7500.0, "/\xC2\xB5L", 7.5, 1e-12, "SI"},
        {SX_Q_CELL_COUNT, 7500.0, "/mm3", 7.5, 1e-12, "SI"},
        /* volumes */
        {SX_Q_VOLUME_ML, 1.5, "mL", 1.5, 1e-12, "identity"},
        {SX_Q_VOLUME_ML, 1.5, "ml", 1.5, 1e-12, "identity"},
        {SX_Q_VOLUME_ML, 1.5, "ML", 1.5, 1e-12, "identity (UCUM case-insensitive)"},
        {SX_Q_VOLUME_ML, 50.0, "uL", 0.05, 1e-12, "SI"},
        {SX_Q_VOLUME_ML, 50.0, "\xC2\xB5L", 0.05, 1e-12, "SI"},
        {SX_Q_VOLUME_ML, 50.0, "\xCE\xBCL", 0.05, 1e-12, "SI"},
        {SX_Q_VOLUME_ML, 0.003, "L", 3.0, 1e-12, "SI"},
        {SX_Q_VOLUME_ML, 0.003, "l", 3.0, 1e-12, "SI"},
        {SX_Q_VOLUME_UL, 50.0, "uL", 50.0, 1e-12, "identity"},
        {SX_Q_VOLUME_UL, 50.0, "\xC2\xB5L", 50.0, 1e-12, "identity"},
        {SX_Q_VOLUME_UL, 0.05, "mL", 50.0, 1e-12, "SI"},
        {SX_Q_VOLUME_UL, 0.05, "ml", 50.0, 1e-12, "SI"},
        /* FiO2, internal fraction */
        {SX_Q_FRACTION, 40.0, "%", 0.40, 1e-12, "definition of per cent"},
        {SX_Q_FRACTION, 40.0, "[%]", 0.40, 1e-12, "definition of per cent (UCUM)"},
        {SX_Q_FRACTION, 0.4, "1", 0.4, 1e-12, "identity"},
        {SX_Q_FRACTION, 0.4, "", 0.4, 1e-12, "identity"},
        {SX_Q_FRACTION, 0.4, NULL, 0.4, 1e-12, "identity"},
        {SX_Q_FRACTION, 0.4, "fraction", 0.4, 1e-12, "identity"},
        {SX_Q_FRACTION, 1.0, "", 1.0, 1e-12, "identity (1 is a fraction)"},
        {SX_Q_FRACTION, 100.0, "%", 1.0, 1e-12, "definition of per cent"},
        /* SpO2 / SO2, internal percent */
        {SX_Q_PERCENT, 97.0, "%", 97.0, 1e-12, "identity"},
        {SX_Q_PERCENT, 97.0, "[%]", 97.0, 1e-12, "identity"},
        {SX_Q_PERCENT, 97.0, "", 97.0, 1e-12, "identity"},
        {SX_Q_PERCENT, 97.0, NULL, 97.0, 1e-12, "identity"},
        {SX_Q_PERCENT, 0.97, "1", 97.0, 1e-12, "definition of per cent"},
        {SX_Q_PERCENT, 0.97, "fraction", 97.0, 1e-12, "definition of per cent"},
        /* altitude, internal m */
        {SX_Q_ALTITUDE, 1600.0, "m", 1600.0, 1e-12, "identity"},
        {SX_Q_ALTITUDE, 5280.0, "ft", 1609.344, 1e-9, "foot (1 mile = 1609.344 m)"},
        {SX_Q_ALTITUDE, 5280.0, "[ft_i]", 1609.344, 1e-9, "foot, UCUM"},
        {SX_Q_ALTITUDE, 5280.0, "FT", 1609.344, 1e-9, "foot"},
        /* duration, internal min */
        {SX_Q_DURATION, 25.0, "min", 25.0, 1e-12, "identity"},
        {SX_Q_DURATION, 90.0, "s", 1.5, 1e-12, "SI-accepted units (1 min = 60 s)"},
        {SX_Q_DURATION, 1.5, "h", 90.0, 1e-12, "SI-accepted units (1 h = 60 min)"},
        {SX_Q_DURATION, 90000.0, "ms", 1.5, 1e-12, "SI"},
        /* age, internal years */
        {SX_Q_AGE, 64.0, "a", 64.0, 1e-12, "identity (UCUM)"},
        {SX_Q_AGE, 64.0, "yr", 64.0, 1e-12, "identity"},
        {SX_Q_AGE, 64.0, "years", 64.0, 1e-12, "identity"},
        {SX_Q_AGE, 64.0, "y", 64.0, 1e-12, "identity"},
        {SX_Q_AGE, 18.0, "mo", 1.5, 1e-12, "UCUM (mo = a/12)"},
        {SX_Q_AGE, 365.25, "d", 1.0, 1e-12, "UCUM (a = 365.25 d)"},
        {SX_Q_AGE, 52.0, "wk", 0.99657768651608487, 1e-12, "UCUM (52 x 7 / 365.25)"},
        /* dimensionless */
        {SX_Q_NONE, 7.40, "", 7.40, 1e-12, "identity"},
        {SX_Q_NONE, 7.40, "1", 7.40, 1e-12, "identity"},
        {SX_Q_NONE, 7.40, "[pH]", 7.40, 1e-12, "identity (UCUM)"},
        {SX_Q_NONE, 7.40, "pH", 7.40, 1e-12, "identity"},
};

START_TEST(test_convert_table)
{
	const struct conversion *c = &conversions[_i];
	double out = NAN;
	sx_status st = sx_unit_convert(c->q, c->value, c->unit, &out);

	ck_assert_msg(st == SX_OK, "row %d (%g %s): status %d", _i, c->value,
	              c->unit ? c->unit : "(null)", st);
	ck_assert_double_eq_tol(out, c->expected, c->tol);
}
END_TEST

struct refusal {
	sx_quantity q;
	double value;
	const char *unit;
	sx_status status;
	const char *why;
};

static const struct refusal refusals[] = {
        {SX_Q_PRESSURE, 95.0, "cmH2O", SX_EUNIT, "not a blood-gas unit"},
        {SX_Q_PRESSURE, 95.0, "mbar", SX_EUNIT, "not in the table"},
        {SX_Q_PRESSURE, 95.0, "PA", SX_EUNIT, "Pa is exact only"},
        {SX_Q_PRESSURE, 95.0, "pa", SX_EUNIT, "Pa is exact only"},
        {SX_Q_PRESSURE, 95.0, "mm", SX_EUNIT, "a length"},
        {SX_Q_PRESSURE, 95.0, "kPa kPa", SX_EUNIT, "junk"},
        {SX_Q_PRESSURE, 12.7, "g/dL", SX_EUNIT, "another quantity's unit"},
        {SX_Q_TEMPERATURE, 37.0, "c", SX_EUNIT, "c is centi/speed of light"},
        {SX_Q_TEMPERATURE, 98.6, "f", SX_EUNIT, "f is femto"},
        {SX_Q_TEMPERATURE, 310.0, "k", SX_EUNIT, "k is kilo"},
        {SX_Q_TEMPERATURE, 37.0,
         "\xC2\xBA"
         "C",
         SX_EUNIT, "masculine ordinal is not a degree sign"},
        {SX_Q_TEMPERATURE, 37.0,
         "\xB0"
         "C",
         SX_EUNIT, "Latin-1 degree sign: UTF-8 only"},
        {SX_Q_TEMPERATURE, 37.0, "mmHg", SX_EUNIT, "another quantity's unit"},
        {SX_Q_HAEMOGLOBIN, 142.0, "G/L", SX_EUNIT, "G/L is 10^9/L, never g/L"},
        {SX_Q_HAEMOGLOBIN, 14.2, "g%", SX_EUNIT, "not in the table"},
        {SX_Q_HAEMOGLOBIN, 142.0, "mg/dL", SX_EUNIT, "not in the table"},
        {SX_Q_CELL_COUNT, 4.5, "10*6/uL", SX_EUNIT, "red-cell scale: mislabelled count"},
        {SX_Q_CELL_COUNT, 4.5, "10^6/uL", SX_EUNIT, "red-cell scale"},
        {SX_Q_CELL_COUNT, 4.5, "10*12/L", SX_EUNIT, "red-cell scale"},
        {SX_Q_CELL_COUNT, 7.5, "g/L", SX_EUNIT, "grams are not a count"},
        {SX_Q_CELL_COUNT, 7.5, "g/l", SX_EUNIT, "grams are not a count"},
        {SX_Q_CELL_COUNT, 7.5, "/L", SX_EUNIT, "not in the table"},
        {SX_Q_VOLUME_ML, 1.5, "cc", SX_EUNIT, "not in the table"},
        {SX_Q_VOLUME_UL, 1.5, "L", SX_EUNIT, "not in the table"},
        {SX_Q_FRACTION, 40.0, "", SX_ERANGE, "a bare 40 is never read as 40 %"},
        {SX_Q_FRACTION, 40.0, NULL, SX_ERANGE, "a bare 40 is never read as 40 %"},
        {SX_Q_FRACTION, 40.0, "1", SX_ERANGE, "a fraction above 1"},
        {SX_Q_FRACTION, 1.01, "fraction", SX_ERANGE, "a fraction above 1"},
        {SX_Q_FRACTION, 40.0, "percent", SX_EUNIT, "not in the table"},
        {SX_Q_PERCENT, 97.0, "1", SX_ERANGE, "a fraction above 1"},
        {SX_Q_PERCENT, 97.0, "fraction", SX_ERANGE, "a fraction above 1"},
        {SX_Q_ALTITUDE, 1600.0, "M", SX_EUNIT, "M is molar"},
        {SX_Q_ALTITUDE, 1.6, "km", SX_EUNIT, "not in the table"},
        {SX_Q_DURATION, 90.0, "S", SX_EUNIT, "S is siemens"},
        {SX_Q_DURATION, 1.5, "H", SX_EUNIT, "H is henry"},
        {SX_Q_AGE, 64.0, "Y", SX_EUNIT, "Y is yotta"},
        {SX_Q_AGE, 18.0, "MO", SX_EUNIT, "mo is exact only"},
        {SX_Q_NONE, 7.4, "%", SX_EUNIT, "not dimensionless"},
        {SX_Q_PRESSURE, NAN, "kPa", SX_EINVAL, "not finite"},
        {SX_Q_PRESSURE, INFINITY, "kPa", SX_EINVAL, "not finite"},
        {SX_Q_PRESSURE, -INFINITY, "mmHg", SX_EINVAL, "not finite"},
        {SX_Q_PRESSURE, NAN, "bogus", SX_EINVAL, "the value is checked first"},
        {SX_Q_PRESSURE, DBL_MAX, "kPa", SX_ERANGE, "result overflows"},
        {SX_QUANTITY_COUNT, 1.0, "", SX_EINVAL, "unknown quantity"},
        {(sx_quantity)-1, 1.0, "", SX_EINVAL, "unknown quantity"},
};

START_TEST(test_refusal_table)
{
	const struct refusal *r = &refusals[_i];
	double out = 12345.0;
	sx_status st = sx_unit_convert(r->q, r->value, r->unit, &out);

	ck_assert_msg(st == r->status, "row %d (%s): status %d, want %d (%s)", _i,
	              r->unit ? r->unit : "(null)", st, r->status, r->why);
	ck_assert_double_eq(out, 12345.0); /* untouched on failure */
}
END_TEST

START_TEST(test_convert_null_out)
{
	ck_assert_int_eq(sx_unit_convert(SX_Q_PRESSURE, 1.0, "kPa", NULL), SX_EINVAL);
}
END_TEST

START_TEST(test_constants)
{
	/* the issue fixes the figure; 760/101.325 = 7.500616... (common practice) */
	ck_assert_double_eq(SX_MMHG_PER_KPA, 7.50062);
	ck_assert_double_eq_tol(SX_MMHG_PER_KPA, 760.0 / 101.325, 5e-6);
	/* Hb monomer 16.11 g/mmol, common practice */
	ck_assert_double_eq(SX_GDL_PER_MMOL_HB, 1.611);
}
END_TEST

struct internal_unit {
	sx_quantity q;
	const char *ucum;
	const char *label;
};

static const struct internal_unit internals[] = {
        {SX_Q_NONE, "1", ""},
        {SX_Q_PRESSURE, "mm[Hg]", "mmHg"},
        {SX_Q_TEMPERATURE, "Cel",
         "\xC2\xB0"
         "C"},
        {SX_Q_HAEMOGLOBIN, "g/dL", "g/dL"},
        {SX_Q_CELL_COUNT, "10*9/L", "x10^9/L"},
        {SX_Q_VOLUME_ML, "mL", "mL"},
        {SX_Q_VOLUME_UL, "uL", "uL"},
        {SX_Q_FRACTION, "1", ""},
        {SX_Q_PERCENT, "%", "%"},
        {SX_Q_ALTITUDE, "m", "m"},
        {SX_Q_DURATION, "min", "min"},
        {SX_Q_AGE, "a", "years"},
        {SX_QUANTITY_COUNT, "", ""},
};

START_TEST(test_internal_table)
{
	const struct internal_unit *u = &internals[_i];
	double out;

	ck_assert_str_eq(sx_unit_internal(u->q), u->ucum);
	ck_assert_str_eq(sx_unit_label(u->q), u->label);
	/* the internal code is itself accepted, as the identity (UCUM) */
	if (u->q != SX_QUANTITY_COUNT) {
		ck_assert_int_eq(sx_unit_convert(u->q, 0.5, u->ucum, &out), SX_OK);
		ck_assert_double_eq_tol(out, 0.5, 1e-15);
	}
}
END_TEST

/* ---- sx_parse_number ---- */

struct number {
	const char *text;
	sx_status status;
	double expected; /* C literal of the same decimal (the compiler's reading) */
};

static const struct number numbers[] = {
        {"0", SX_OK, 0.0},
        {"7.40", SX_OK, 7.40},
        {"95", SX_OK, 95.0},
        {"-12.5", SX_OK, -12.5},
        {"+12.5", SX_OK, 12.5},
        {"  12.5\t", SX_OK, 12.5},
        {"\r\n12.5\r\n", SX_OK, 12.5},
        {".5", SX_OK, 0.5},
        {"5.", SX_OK, 5.0},
        {"-0", SX_OK, 0.0},
        {"0.000", SX_OK, 0.0},
        {"00012.50", SX_OK, 12.5},
        {"1e3", SX_OK, 1000.0},
        {"1E3", SX_OK, 1000.0},
        {"1.5e-3", SX_OK, 1.5e-3},
        {"2.5E+2", SX_OK, 250.0},
        {"100", SX_OK, 100.0},
        {"0.1", SX_OK, 0.1},
        {"7.50062", SX_OK, 7.50062},
        {"0.000001", SX_OK, 1e-6},
        {"123456789012345678", SX_OK, 123456789012345678.0},
        {"1.7976931348623157e308", SX_OK, 1.7976931348623157e308},
        {"2.2250738585072014e-308", SX_OK, 2.2250738585072014e-308},
        {"1e0000000000000000000000000000000000000000000000000000001", SX_OK, 10.0},
        {"", SX_ESYNTAX, 0},
        {"   ", SX_ESYNTAX, 0},
        {"1,5", SX_ESYNTAX, 0},
        {"1 5", SX_ESYNTAX, 0},
        {"0x10", SX_ESYNTAX, 0},
        {"inf", SX_ESYNTAX, 0},
        {"-inf", SX_ESYNTAX, 0},
        {"infinity", SX_ESYNTAX, 0},
        {"nan", SX_ESYNTAX, 0},
        {"NAN", SX_ESYNTAX, 0},
        {"12abc", SX_ESYNTAX, 0},
        {"abc", SX_ESYNTAX, 0},
        {".", SX_ESYNTAX, 0},
        {"-", SX_ESYNTAX, 0},
        {"+-1", SX_ESYNTAX, 0},
        {"1.2.3", SX_ESYNTAX, 0},
        {"1e", SX_ESYNTAX, 0},
        {"1e+", SX_ESYNTAX, 0},
        {"e5", SX_ESYNTAX, 0},
        {"1e5.5", SX_ESYNTAX, 0},
        {"1d5", SX_ESYNTAX, 0},
        {">700", SX_ESYNTAX, 0},
        {"1e999", SX_ERANGE, 0},
        {"-1e999", SX_ERANGE, 0},
        {"1.8e308", SX_ERANGE, 0},
        {"1e-999", SX_ERANGE, 0},
        {"1e-310", SX_ERANGE, 0}, /* subnormal */
        {"1e99999999999999999999999", SX_ERANGE, 0},
        {"0e999", SX_OK, 0.0}, /* zero is zero at any scale */
        {"1.0000000000000000000000000000000000000000000000000000000000000001", SX_ELIMIT, 0},
};

START_TEST(test_number_table)
{
	const struct number *n = &numbers[_i];
	double out = 12345.0;
	sx_status st = sx_parse_number(n->text, strlen(n->text), &out);

	ck_assert_msg(st == n->status, "\"%s\": status %d, want %d", n->text, st, n->status);
	if (n->status == SX_OK)
		ck_assert_double_eq(out, n->expected); /* correctly rounded: exact */
	else
		ck_assert_double_eq(out, 12345.0);
}
END_TEST

START_TEST(test_number_length_bounds)
{
	/* only [s, s+len) is read: the rest is not looked at */
	double out;

	ck_assert_int_eq(sx_parse_number("12.5kPa", 4, &out), SX_OK);
	ck_assert_double_eq(out, 12.5);
	ck_assert_int_eq(sx_parse_number("12.5kPa", 5, &out), SX_ESYNTAX);
	/* a NUL inside the length is not a digit */
	ck_assert_int_eq(sx_parse_number("1\0"
	                                 "2",
	                                 3, &out),
	                 SX_ESYNTAX);
	ck_assert_int_eq(sx_parse_number(NULL, 0, &out), SX_EINVAL);
	ck_assert_int_eq(sx_parse_number("1", 1, NULL), SX_EINVAL);
}
END_TEST

START_TEST(test_number_trailing_zeros_many)
{
	/* 64 significant digits are accepted; zeros after the last non-zero
	 * digit do not count */
	char text[200];
	double out;

	memset(text, '0', sizeof text);
	text[0] = '1';
	text[1] = '.';
	ck_assert_int_eq(sx_parse_number(text, sizeof text, &out), SX_OK);
	ck_assert_double_eq(out, 1.0);
	memset(text, '1', 65);
	ck_assert_int_eq(sx_parse_number(text, 64, &out), SX_OK);
	ck_assert_double_eq_tol(out, 1.1111111111111111e63, 1e48);
	ck_assert_int_eq(sx_parse_number(text, 65, &out), SX_ELIMIT);
}
END_TEST

/* The reader must not depend on LC_NUMERIC: under a locale whose decimal
 * point is a comma, "12.5" is still 12.5 and "12,5" still refused. Skipped
 * (passes) when no such locale is installed. */
START_TEST(test_number_locale)
{
	static const char *const comma_locales[] = {"de_DE.UTF-8", "fr_FR.UTF-8", "de_DE.utf8",
	                                            "nl_NL.UTF-8"};
	const char *set = NULL;
	double out;

	for (size_t i = 0; i < sizeof comma_locales / sizeof *comma_locales && !set; i++)
		set = setlocale(LC_NUMERIC, comma_locales[i]);
	ck_assert_int_eq(sx_parse_number("12.5", 4, &out), SX_OK);
	ck_assert_double_eq(out, 12.5);
	ck_assert_int_eq(sx_parse_number("12,5", 4, &out), SX_ESYNTAX);
	ck_assert_int_eq(sx_parse_number("-1.25e-1", 8, &out), SX_OK);
	ck_assert_double_eq(out, -0.125);
	setlocale(LC_NUMERIC, "C");
}
END_TEST

static Suite *units_suite(void)
{
	Suite *s = suite_create("units");
	TCase *tc = tcase_create("convert");

	tcase_add_loop_test(tc, test_convert_table, 0,
	                    (int)(sizeof conversions / sizeof *conversions));
	tcase_add_loop_test(tc, test_refusal_table, 0, (int)(sizeof refusals / sizeof *refusals));
	tcase_add_test(tc, test_convert_null_out);
	tcase_add_test(tc, test_constants);
	tcase_add_loop_test(tc, test_internal_table, 0,
	                    (int)(sizeof internals / sizeof *internals));
	suite_add_tcase(s, tc);

	tc = tcase_create("number");
	tcase_add_loop_test(tc, test_number_table, 0, (int)(sizeof numbers / sizeof *numbers));
	tcase_add_test(tc, test_number_length_bounds);
	tcase_add_test(tc, test_number_trailing_zeros_many);
	tcase_add_test(tc, test_number_locale);
	suite_add_tcase(s, tc);
	return s;
}

int main(void)
{
	SRunner *sr = srunner_create(units_suite());
	int failed;

	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
