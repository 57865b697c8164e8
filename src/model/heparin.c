/* SPDX-License-Identifier: MIT */
/*
 * heparin.c - liquid-heparin dilution at sampling.
 *
 *   f = h / (h + blood);  h = 0.025 mL when not given (Ordog et al., Ann
 *   Emerg Med 1985;14:233: what stays after the heparin is expelled)
 *   P_sol = 0.2095 (Pb - RH pH2O(T_room))
 *   C_mix = (1 - f) C0 + f alpha(T_room) P_sol,  Hb_mix = (1 - f) Hb
 *   pCO2_mix = (1 - f) pCO2_0 + f pCO2_air       (Hansen & Simmons 1977)
 *   P_mix: the root of C(P; Hb_mix, pCO2_mix) = C_mix (oxygen.h)
 *
 * Significance thresholds: pCO2 above 5 % heparin by volume, pH above 10 %,
 * pO2 above 15 %, pO2 rose (Hamilton, Crockett & Alpers, Anaesth Intensive
 * Care 1978;6:251).
 */
#include "model/heparin.h"

#include <math.h>

#include "model/atmosphere.h"

sx_heparin_params sx_heparin_defaults(void)
{
	sx_heparin_params p;

	p.dead_space_ml = 0.025;
	p.solution_rh = 1.0;
	p.air_pco2 = 0.3;
	return p;
}

void sx_heparin_bounds(sx_heparin_params *low, sx_heparin_params *high)
{
	if (low) {
		low->dead_space_ml = 0.01;
		low->solution_rh = 0.5;
		low->air_pco2 = 0.2;
	}
	if (high) {
		high->dead_space_ml = 0.15;
		high->solution_rh = 1.0;
		high->air_pco2 = 0.5;
	}
}

double sx_heparin_fraction(const sx_heparin_params *p, double heparin_ml, double blood_ml)
{
	double h;

	if (!p || !isfinite(heparin_ml) || !isfinite(blood_ml) || !(blood_ml > 0.0))
		return NAN;
	h = heparin_ml < 0.0 ? p->dead_space_ml : heparin_ml;
	if (!(h >= 0.0) || !isfinite(h))
		return NAN;
	return h / (h + blood_ml);
}

double sx_heparin_solution_po2(const sx_heparin_params *p, double barometric, double room_temp_c)
{
	if (!p)
		return NAN;
	return sx_room_air_po2(barometric, room_temp_c, p->solution_rh);
}

static int inputs_valid(const sx_heparin_params *p, double f, const sx_blood_state *b,
                        double solution_po2, double room_temp_c)
{
	return p && b && isfinite(f) && f >= 0.0 && f < 1.0 && isfinite(solution_po2) &&
	       solution_po2 >= 0.0 && isfinite(room_temp_c) && isfinite(p->air_pco2) &&
	       p->air_pco2 >= 0.0 && isfinite(b->pco2) && b->pco2 > 0.0 && isfinite(b->hb);
}

sx_status sx_heparin_dilute(const sx_heparin_params *p, double f, const sx_blood_state *blood,
                            double content, double solution_po2, double room_temp_c,
                            sx_heparin_mix *out)
{
	sx_blood_state mix;
	double c;
	sx_status status;

	if (!out || !inputs_valid(p, f, blood, solution_po2, room_temp_c) || !isfinite(content) ||
	    content < 0.0)
		return SX_EINVAL;
	mix = *blood;
	mix.hb = (1.0 - f) * blood->hb;
	mix.pco2 = (1.0 - f) * blood->pco2 + f * p->air_pco2;
	c = (1.0 - f) * content + f * sx_o2_solubility(room_temp_c) * solution_po2;
	status = sx_o2_po2_from_content(c, &mix, &out->po2);
	if (status != SX_OK)
		return status;
	out->content = c;
	out->hb = mix.hb;
	out->pco2 = mix.pco2;
	return SX_OK;
}

sx_status sx_heparin_undilute(const sx_heparin_params *p, double f, const sx_blood_state *mixed,
                              double po2_mixed, double solution_po2, double room_temp_c,
                              double *po2_before, double *content0)
{
	sx_blood_state before;
	double c_mix, c0;
	sx_status status;

	if (!po2_before || !inputs_valid(p, f, mixed, solution_po2, room_temp_c) ||
	    !isfinite(po2_mixed) || po2_mixed < 0.0)
		return SX_EINVAL;
	before = *mixed;
	before.hb = mixed->hb / (1.0 - f);
	before.pco2 = (mixed->pco2 - f * p->air_pco2) / (1.0 - f);
	if (!(before.pco2 > 0.0))
		return SX_EINVAL;
	c_mix = sx_o2_content(po2_mixed, mixed);
	c0 = (c_mix - f * sx_o2_solubility(room_temp_c) * solution_po2) / (1.0 - f);
	if (!(c0 >= 0.0))
		return SX_ERANGE;
	status = sx_o2_po2_from_content(c0, &before, po2_before);
	if (status != SX_OK)
		return status;
	if (content0)
		*content0 = c0;
	return SX_OK;
}
