/* SPDX-License-Identifier: MIT */
/*
 * heparin.h - dilution of the specimen by liquid heparin at sampling.
 *
 * The blood mixes with a fraction f of heparin solution that was in
 * equilibrium with room air. Per dL of the mixture [D in MODEL-SOURCES]:
 *
 *   (1 - f) k Hb S(P) + alpha P = (1 - f) C(P0) + f alpha_room P_sol
 *
 * so the mixture is blood with Hb (1 - f) Hb and content (1 - f) C0 + f
 * alpha_room P_sol; pCO2 falls in proportion (Hansen & Simmons 1977):
 * (1 - f) pCO2_0 + f pCO2_air. pO2 moves toward the solution's (about 155
 * mmHg), little where Hb buffers. Equations, parameters and what is not
 * covered: docs/model-mechanisms.md, section Liquid heparin.
 *
 * Units: volumes in mL, pressures in mmHg, content in mL O2/dL, Hb in g/dL,
 * temperature in degrees C. Nothing allocates.
 */
#ifndef SX_HEPARIN_H
#define SX_HEPARIN_H

#include "core/status.h"
#include "model/oxygen.h"

typedef struct sx_heparin_params {
	double dead_space_ml; /* 0.025 [0.01, 0.15]: stays in the syringe after the
	                       * heparin is expelled (Ordog et al., Ann Emerg Med
	                       * 1985;14:233 [R]); range [J]: needle hubs differ */
	double solution_rh;   /* 1.0 [0.5, 1.0]: relative humidity of the air the
	                       * solution was in equilibrium with (a vial's head
	                       * space is saturated) [J] */
	double air_pco2;      /* 0.3 [0.2, 0.5] mmHg: CO2 of room air, about 0.04 %
	                       * of dry air (common knowledge): 0.0004 x 713 = 0.29
	                       * [D]; the range allows indoor air */
} sx_heparin_params;

sx_heparin_params sx_heparin_defaults(void);
void sx_heparin_bounds(sx_heparin_params *low, sx_heparin_params *high);

/* Volume fraction of heparin in the mixture: h / (h + blood). h < 0 (not
 * given) takes dead_space_ml: liquid heparin expelled before sampling.
 * NaN for blood_ml <= 0 or non-finite input. */
double sx_heparin_fraction(const sx_heparin_params *p, double heparin_ml, double blood_ml);

/* pO2 of the air-equilibrated solution: 0.2095 (Pb - RH pH2O(T_room)),
 * about 155 mmHg at sea level and 22 C with RH 1 [D]. */
double sx_heparin_solution_po2(const sx_heparin_params *p, double barometric, double room_temp_c);

/* The mixture. */
typedef struct sx_heparin_mix {
	double po2;     /* mmHg, at the blood state's temperature */
	double content; /* mL O2/dL of mixture */
	double hb;      /* g/dL of mixture */
	double pco2;    /* mmHg */
} sx_heparin_mix;

/*
 * Mix blood (state *blood, content mL/dL) with a fraction f (0 <= f < 1) of
 * solution at solution_po2 that dissolved its O2 at room_temp_c (solubility
 * of blood, oxygen.h, at that temperature). The pO2 of the mixture is solved
 * at the blood's temperature and pH with the diluted Hb and pCO2. SX_EINVAL
 * for bad input.
 */
sx_status sx_heparin_dilute(const sx_heparin_params *p, double f, const sx_blood_state *blood,
                            double content, double solution_po2, double room_temp_c,
                            sx_heparin_mix *out);

/*
 * The inverse: the blood's pO2 before mixing from the mixture's pO2.
 * *mixed is the state of the mixture (its Hb and pCO2 are the diluted ones,
 * as an analyser measures them); the blood before had Hb / (1 - f) and
 * (pCO2 - f pCO2_air) / (1 - f). *content0 (if not NULL) receives the
 * blood's content. SX_ERANGE when the reading is below what the solution
 * alone brings (no blood content can explain it).
 */
sx_status sx_heparin_undilute(const sx_heparin_params *p, double f, const sx_blood_state *mixed,
                              double po2_mixed, double solution_po2, double room_temp_c,
                              double *po2_before, double *content0);

#endif
