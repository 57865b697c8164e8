/* SPDX-License-Identifier: MIT */
/*
 * oxygen.h - oxygen in blood: dissociation curve, solubility and content.
 *
 * Units: pO2 in mmHg, saturation S as a fraction 0..1, temperature in
 * degrees Celsius, haemoglobin in g/dL, content in mL O2 per dL of blood.
 *
 * The curve is Severinghaus' equation (J Appl Physiol 1979;46:599) at
 * standard conditions (37 C, pH 7.40, pCO2 40 mmHg); other conditions are
 * reached through the virtual pO2 of Kelman (J Appl Physiol 1966):
 *   x = P * 10^(0.024 (37 - T) + 0.40 (pH - 7.40) + 0.06 log10(40 / pCO2)).
 * pO2 is always derived from content through the curve (sx_o2_po2_from_content).
 */
#ifndef SX_OXYGEN_H
#define SX_OXYGEN_H

#include "core/status.h"

/* Conditions of the blood for the curve. */
typedef struct sx_blood_state {
	double temp_c;   /* blood temperature, C */
	double ph;       /* pH at that temperature; 7.40 when unknown */
	double pco2;     /* mmHg; 40 when unknown */
	double hb;       /* g/dL */
	double hufner;   /* mL O2 per g Hb; 1.39 theoretical, 1.34-1.368 in use */
} sx_blood_state;

/* Standard conditions: 37 C, pH 7.40, pCO2 40, Hb 15, Huefner 1.39. */
sx_blood_state sx_blood_state_standard(void);

/* Severinghaus 1979 at standard conditions: S = 1/(23400/(P^3+150P)+1).
 * P <= 0 gives 0. */
double sx_o2_sat_standard(double po2);

/* Exact inverse at standard conditions: the real root of P^3 + 150P - K = 0
 * with K = 23400 S/(1-S) (Cardano). S <= 0 gives 0; S >= 1 gives +inf. */
double sx_o2_po2_standard(double sat);

/* Kelman's virtual pO2: the pO2 at standard conditions that has the same
 * saturation as po2 under state. state->pco2 must be > 0 (else NaN). */
double sx_o2_virtual_po2(double po2, const sx_blood_state *state);

/* Saturation at po2 under state (through the virtual pO2). */
double sx_o2_saturation(double po2, const sx_blood_state *state);

/* pO2 that gives saturation sat under state (exact inverse). */
double sx_o2_po2_from_saturation(double sat, const sx_blood_state *state);

/* dS/dP at po2 under state, per mmHg (analytic: Severinghaus' derivative at
 * the virtual pO2 x = g P, times g). 0 for po2 < 0. */
double sx_o2_sat_slope(double po2, const sx_blood_state *state);

/* Physically dissolved O2 solubility in blood, mL O2/dL/mmHg:
 * 0.0031 at 37 C, -d ln(alpha)/dT = 0.012 per K (Siggaard-Andersen):
 * alpha(T) = 0.0031 exp(0.012 (37 - T)). */
double sx_o2_solubility(double temp_c);

/* Total O2 content, mL/dL: hufner Hb S + alpha P. po2 <= 0 gives 0. */
double sx_o2_content(double po2, const sx_blood_state *state);

/*
 * pO2 whose content under state equals content (content is strictly
 * increasing in pO2, so the root is unique). Solved by a safeguarded
 * Newton/bisection inside the bracket [0, content / alpha] (the step test is
 * 1e-13 relative; measured agreement with scipy's brentq is 1e-14). Content
 * 0 gives 0; Hb 0 (or hufner 0) gives content / alpha. Returns SX_EINVAL for
 * content < 0, non-finite input, a NULL pointer, or a state with a
 * non-finite field, pco2 <= 0, hb < 0 or hufner < 0 (*po2 is then not
 * written); SX_EMODEL if the iteration did not converge (not seen);
 * SX_OK otherwise.
 */
sx_status sx_o2_po2_from_content(double content, const sx_blood_state *state,
				 double *po2);

/* Severinghaus' temperature coefficient of a closed blood sample:
 * d lnP / dT = 0.058 / ((0.243 P/100)^3.88 + 1) + 0.013, per C.
 * po2 <= 0 gives the low-pO2 limit 0.071. */
double sx_o2_dlnp_dt(double po2);

/* pO2 of a closed sample measured at t_from, brought to t_to, by integrating
 * sx_o2_dlnp_dt (Severinghaus 1979) in ln P with classical Runge-Kutta,
 * fixed steps of at most 0.1 C (1e-11 relative against scipy's solve_ivp).
 * po2 <= 0 gives 0; a non-finite temperature or a span over 200 C gives NaN. */
double sx_o2_temperature_correct(double po2, double t_from, double t_to);

/* Severinghaus' Bohr coefficient: d lnP / d pH = (P/26.6)^0.184 - 2.2.
 * po2 <= 0 gives -2.2. */
double sx_o2_dlnp_dph(double po2);

#endif
