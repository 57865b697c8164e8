/* SPDX-License-Identifier: MIT */
/*
 * units.h - converting measured values into syrinx's internal units.
 *
 * Every numeric field of the specimen record has a quantity; each quantity
 * has one internal unit (mmHg, degrees Celsius, g/dL, 10^9/L, mL, uL,
 * fraction, percent, metres, minutes, years). A value arrives with a unit
 * text (UCUM code or a usual spelling); sx_unit_convert() turns it into the
 * internal unit, or fails with SX_EUNIT when the unit is not known for that
 * quantity. Nothing is ever guessed. docs/units-and-times.md lists every
 * accepted spelling.
 */
#ifndef SX_UNITS_H
#define SX_UNITS_H

#include "core/status.h"

/* 1 kPa = 7.50062 mmHg (the conversion the trade uses; 760/101.325 rounded
 * to six significant figures). Torr is taken as equal to mmHg. */
#define SX_MMHG_PER_KPA 7.50062

/* 1 mmol/L of haemoglobin (as the monomer, 16.11 g/mmol) = 1.611 g/dL. */
#define SX_GDL_PER_MMOL_HB 1.611

typedef enum sx_quantity {
	SX_Q_NONE = 0,    /* dimensionless (pH); only "", "1", "[pH]", "pH" */
	SX_Q_PRESSURE,    /* internal mmHg; accepts mmHg, mm[Hg], mm Hg, torr, kPa, Pa;
	                   * not cmH2O (no blood-gas analyser reports in it) */
	SX_Q_TEMPERATURE, /* internal Cel; accepts Cel, C, degC, °C, [degF], F, degF, °F, K */
	SX_Q_HAEMOGLOBIN, /* internal g/dL; accepts g/dL, g/L, mmol/L (x 1.611, Hb monomer) */
	SX_Q_CELL_COUNT,  /* internal 10*9/L; accepts 10*9/L, 10^9/L, x10^9/L, x10E9/L, G/L,
	                   * /nL, 10*3/uL, 10^3/uL, K/uL, 10*3/mm3, /uL, /mm3;
	                   * refuses 10*6/uL and 10*12/L (red-cell scales) */
	SX_Q_VOLUME_ML,   /* internal mL; accepts mL, ml, uL, µL, L */
	SX_Q_VOLUME_UL,   /* internal uL; accepts uL, µL, mL, ml */
	SX_Q_FRACTION,    /* internal fraction 0..1; accepts "1", "", fraction, %, "[%]" */
	SX_Q_PERCENT,     /* internal percent; accepts %, "[%]", "" and "1" / fraction (x 100) */
	SX_Q_ALTITUDE,    /* internal m; accepts m, ft, [ft_i] */
	SX_Q_DURATION,    /* internal min; accepts min, s, h, ms */
	SX_Q_AGE,         /* internal years; accepts a, yr, years, y, mo (/12), wk, d */
	SX_QUANTITY_COUNT
} sx_quantity;

/*
 * Convert value given in unit into the quantity's internal unit.
 *
 * unit may be NULL or "" to mean "already internal". Surrounding spaces and
 * tabs are ignored. Matching is exact (UCUM is case-sensitive) except for
 * spellings that cannot be mistaken for another unit once case is folded:
 * MMHG, mmhg, KPA, ML, G/DL are accepted, but "G/L" (10^9/L) never matches
 * g/L, and one-letter symbols (C, F, K, m, s, h, a, y, d) and Pa are exact.
 * Case folding is ASCII only and does not depend on the locale.
 *
 * A value given as a fraction (unit "", "1" or "fraction" for SX_Q_FRACTION;
 * "1" or "fraction" for SX_Q_PERCENT) must not exceed 1 in magnitude: a bare FiO2 of 40
 * is SX_ERANGE, never read as 40 %. That is the only range check done here;
 * plausibility of the converted value is the record's business.
 *
 * Returns SX_OK; SX_EINVAL (quantity unknown, out NULL, value not finite;
 * checked first); SX_EUNIT (unit unknown for this quantity); SX_ERANGE (a
 * fraction above 1 as above, or a result that overflows). *out is written
 * only on SX_OK.
 */
sx_status sx_unit_convert(sx_quantity quantity, double value, const char *unit, double *out);

/* The internal unit's UCUM code, e.g. "mm[Hg]", "Cel", "g/dL", "10*9/L";
 * "" for an unknown quantity (never NULL). */
const char *sx_unit_internal(sx_quantity quantity);

/* A short human label for the internal unit: "mmHg", "°C", "g/dL",
 * "x10^9/L" (ASCII rather than "×10⁹/L"), "" for dimensionless quantities
 * and an unknown quantity (never NULL). */
const char *sx_unit_label(sx_quantity quantity);

/*
 * Parse a decimal number that fills the whole [s, s+len) (surrounding
 * spaces, tabs, CR and LF allowed): an optional sign, digits with an
 * optional '.' (at least one digit; ".5" and "5." are accepted), and an
 * optional exponent (e or E, optional sign, digits). No hex, no inf/nan, no
 * comma, no trailing junk, no NUL inside. Locale-independent: the text is
 * checked by hand and rewritten without a decimal point before strtod sees
 * it. "-0" gives 0.
 * Returns SX_OK; SX_EINVAL (s or out NULL); SX_ESYNTAX (not such a number);
 * SX_ERANGE (magnitude above DBL_MAX, or non-zero below DBL_MIN);
 * SX_ELIMIT (more than 64 significant digits). *out is written only on SX_OK.
 */
sx_status sx_parse_number(const char *s, unsigned long len, double *out);

#endif
