/* SPDX-License-Identifier: MIT */
/*
 * atmosphere.h - air, water vapour, altitude and the alveolar gas equation.
 *
 * Units: pressures in mmHg, temperatures in degrees Celsius, altitude in
 * metres, relative humidity and FiO2 as fractions 0..1. Pure functions; an
 * argument outside its domain (a fraction outside 0..1, R <= 0, a negative
 * age, NaN) gives NaN.
 */
#ifndef SX_ATMOSPHERE_H
#define SX_ATMOSPHERE_H

/* O2 fraction of dry air. */
#define SX_AIR_O2_FRACTION 0.2095
/* Respiratory exchange ratio used by the alveolar gas equation by default. */
#define SX_RESPIRATORY_QUOTIENT 0.8
/* Water vapour pressure at 37 C as the clinical equation writes it. */
#define SX_PH2O_BODY_MMHG 47.0

/* ICAO standard atmosphere: Pb = 760 (1 - 2.25577e-5 h)^5.25588 (the
 * troposphere formula; 0 past h = 44330 m where the base reaches 0). */
double sx_barometric_from_altitude(double altitude_m);

/* Saturated water vapour pressure, Antoine (water, 1-100 C):
 * log10 P = 8.07131 - 1730.63 / (233.426 + T). Outside 1-100 C the formula
 * is extrapolated; NaN at or below -233.426 C. */
double sx_water_vapour_pressure(double temp_c);

/* pO2 of room air: 0.2095 (Pb - RH pH2O(T)); with RH 0 temp_c is not used. */
double sx_room_air_po2(double barometric, double temp_c, double rel_humidity);

/* Alveolar gas equation, short form: FiO2 (Pb - pH2O) - PaCO2 / R, with
 * pH2O = SX_PH2O_BODY_MMHG. Not clamped: a result <= 0 says the inputs leave
 * no O2 in the alveoli. */
double sx_alveolar_po2(double fio2, double barometric, double paco2,
		       double resp_quotient);

/* Full form: FiO2 (Pb - pH2O) - PaCO2 (FiO2 + (1 - FiO2)/R). */
double sx_alveolar_po2_full(double fio2, double barometric, double paco2,
			    double resp_quotient);

/* Expected normal A-a gradient for age in years: age/4 + 4 mmHg. */
double sx_aa_gradient_normal(double age_years);

#endif
