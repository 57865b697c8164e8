/* SPDX-License-Identifier: MIT */
/*
 * atmosphere.c - the air a specimen and a patient meet: barometric pressure
 * from altitude (ICAO standard atmosphere), saturated water vapour pressure
 * (Antoine's equation for water), the pO2 of room air, and the pO2 expected
 * in the alveoli (alveolar gas equation, short and full form) with the
 * normal alveolar-arterial gradient for age. Pure functions; an argument
 * outside its domain gives NaN.
 */
#include <math.h>

#include "model/atmosphere.h"

/* ICAO: Pb = 760 (1 - L/T0 h)^(g M / (R L)), L 0.0065 K/m, T0 288.15 K. */
#define ICAO_PB0   760.0
#define ICAO_LAPSE 2.25577e-5
#define ICAO_EXPON 5.25588

/* Antoine constants for water, mmHg and C, valid 1-100 C. */
#define ANTOINE_A 8.07131
#define ANTOINE_B 1730.63
#define ANTOINE_C 233.426

double sx_barometric_from_altitude(double altitude_m)
{
	double base;

	if (isnan(altitude_m))
		return NAN;
	base = 1.0 - ICAO_LAPSE * altitude_m;
	if (base <= 0.0)
		return 0.0;
	return ICAO_PB0 * pow(base, ICAO_EXPON);
}

double sx_water_vapour_pressure(double temp_c)
{
	if (!(temp_c > -ANTOINE_C))
		return NAN;
	return pow(10.0, ANTOINE_A - ANTOINE_B / (ANTOINE_C + temp_c));
}

double sx_room_air_po2(double barometric, double temp_c, double rel_humidity)
{
	if (!(rel_humidity >= 0.0 && rel_humidity <= 1.0))
		return NAN;
	if (rel_humidity == 0.0)
		return SX_AIR_O2_FRACTION * barometric;
	return SX_AIR_O2_FRACTION * (barometric - rel_humidity * sx_water_vapour_pressure(temp_c));
}

static int alveolar_args_valid(double fio2, double resp_quotient)
{
	return fio2 >= 0.0 && fio2 <= 1.0 && resp_quotient > 0.0 && isfinite(resp_quotient);
}

double sx_alveolar_po2(double fio2, double barometric, double paco2, double resp_quotient)
{
	if (!alveolar_args_valid(fio2, resp_quotient))
		return NAN;
	return fio2 * (barometric - SX_PH2O_BODY_MMHG) - paco2 / resp_quotient;
}

double sx_alveolar_po2_full(double fio2, double barometric, double paco2, double resp_quotient)
{
	if (!alveolar_args_valid(fio2, resp_quotient))
		return NAN;
	return fio2 * (barometric - SX_PH2O_BODY_MMHG) -
	       paco2 * (fio2 + (1.0 - fio2) / resp_quotient);
}

double sx_aa_gradient_normal(double age_years)
{
	if (!(age_years >= 0.0))
		return NAN;
	return age_years / 4.0 + 4.0;
}
