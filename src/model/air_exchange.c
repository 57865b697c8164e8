/* SPDX-License-Identifier: MIT */
/*
 * air_exchange.c - O2 exchange between an air bubble and the blood.
 *
 * Mass balance (MODEL-SOURCES, air bubbles [D]), per syringe, mL O2 STPD:
 *
 *   C(P) Vb / 100 + Va (P / 760) (273.15 / T) = C0 Vb / 100 + n0
 *
 * with C(P) = hufner Hb S(P) + alpha P the blood's content (mL/dL, oxygen.h),
 * Vb the blood volume (mL), Va the bubble volume (mL) held constant, T the
 * specimen's temperature (K) and n0 the bubble's O2 at the start: air
 * saturated with water vapour at T, pO2 0.2095 (Pb - pH2O(T)) (atmosphere.h).
 * Dividing by Vb / 100 turns the bubble into extra solubility per dL of
 * blood, and the equilibrium is the root of a strictly increasing function
 * (sx_air_exchange_shared_po2).
 *
 * Approach: first order, O2_blood -> O2_blood,eq with time constant tau.
 * Sources of the time constants: forced bubbling reached 95 % in 2.9-14 min
 * (a floor on tau); a pressure-sealed pneumatic carrier removed the tube's
 * effect (Collinson et al., J Clin Pathol 2002;55:105); a bubble of 0.5-1 %
 * of the sample changes pO2 measurably (Am J Clin Pathol 1976;65:242).
 */
#include "model/air_exchange.h"

#include <math.h>
#include <stddef.h>

#include "model/atmosphere.h"

#define STPD_K      273.15
#define STPD_MMHG   760.0
#define SHARED_ITER 100
#define SHARED_RTOL 1e-13

sx_air_params sx_air_exchange_defaults(void)
{
	sx_air_params p;

	p.tau_standing = 60.0;
	p.tau_hand = 15.0;
	p.tau_tube_motion = 15.0;
	p.tau_tube_pressure = 2.0;
	p.tau_mixing = 2.0;
	p.tau_floor = 2.9 / log(20.0);
	p.froth_factor = 10.0;
	p.small_fraction = 0.005;
	p.large_fraction = 0.03;
	p.froth_fraction = 0.05;
	return p;
}

void sx_air_exchange_bounds(sx_air_params *low, sx_air_params *high)
{
	if (low) {
		low->tau_standing = 15.0;
		low->tau_hand = 5.0;
		low->tau_tube_motion = 5.0;
		low->tau_tube_pressure = 1.0;
		low->tau_mixing = 1.0;
		low->tau_floor = 2.9 / log(20.0);
		low->froth_factor = 3.0;
		low->small_fraction = 0.001;
		low->large_fraction = 0.01;
		low->froth_fraction = 0.02;
	}
	if (high) {
		high->tau_standing = 480.0;
		high->tau_hand = 60.0;
		high->tau_tube_motion = 60.0;
		high->tau_tube_pressure = 10.0;
		high->tau_mixing = 10.0;
		high->tau_floor = 14.0 / log(20.0);
		high->froth_factor = 30.0;
		high->small_fraction = 0.01;
		high->large_fraction = 0.10;
		high->froth_fraction = 0.20;
	}
}

double sx_air_exchange_bubble_volume(const sx_air_params *p, sx_air_bubble_class cls,
                                     double blood_ml)
{
	if (!p || !(blood_ml > 0.0) || !isfinite(blood_ml))
		return NAN;
	switch (cls) {
	case SX_AIR_BUBBLE_NONE:
		return 0.0;
	case SX_AIR_BUBBLE_SMALL:
		return 1000.0 * p->small_fraction * blood_ml;
	case SX_AIR_BUBBLE_LARGE:
		return 1000.0 * p->large_fraction * blood_ml;
	case SX_AIR_BUBBLE_FROTH:
		return 1000.0 * p->froth_fraction * blood_ml;
	default:
		return NAN;
	}
}

double sx_air_exchange_tau(const sx_air_params *p, sx_agitation agitation, int froth)
{
	double tau;

	if (!p)
		return NAN;
	switch (agitation) {
	case SX_AGITATION_STANDING:
		tau = p->tau_standing;
		break;
	case SX_AGITATION_HAND:
		tau = p->tau_hand;
		break;
	case SX_AGITATION_TUBE:
		/* motion and pressure swings act in parallel: rates add */
		tau = 1.0 / (1.0 / p->tau_tube_motion + 1.0 / p->tau_tube_pressure);
		break;
	case SX_AGITATION_TUBE_SEALED:
		tau = p->tau_tube_motion;
		break;
	case SX_AGITATION_MIXING:
		tau = p->tau_mixing;
		break;
	default:
		return NAN;
	}
	if (froth && p->froth_factor > 0.0)
		tau /= p->froth_factor;
	return fmax(tau, p->tau_floor);
}

double sx_air_exchange_bubble_capacity(double bubble_ul, double temp_c)
{
	if (!(bubble_ul >= 0.0) || !isfinite(bubble_ul) || !(temp_c > -STPD_K))
		return NAN;
	return bubble_ul * 1e-3 / STPD_MMHG * STPD_K / (STPD_K + temp_c);
}

double sx_air_exchange_start_po2(double barometric, double temp_c)
{
	return sx_room_air_po2(barometric, temp_c, 1.0);
}

static int system_valid(const sx_air_system *sys)
{
	return sys && isfinite(sys->bubble_ul) && sys->bubble_ul >= 0.0 &&
	       isfinite(sys->blood_ml) && sys->blood_ml > 0.0 && isfinite(sys->barometric) &&
	       sys->barometric > 0.0;
}

static int state_valid(const sx_air_state *st)
{
	return st && isfinite(st->content) && st->content >= 0.0 && isfinite(st->bubble_o2_ml) &&
	       st->bubble_o2_ml >= 0.0;
}

sx_status sx_air_exchange_start(const sx_air_system *sys, double temp_c, double content,
                                sx_air_state *out)
{
	double cap, p0;

	if (!out || !system_valid(sys) || !isfinite(content) || content < 0.0)
		return SX_EINVAL;
	cap = sx_air_exchange_bubble_capacity(sys->bubble_ul, temp_c);
	p0 = sx_air_exchange_start_po2(sys->barometric, temp_c);
	if (!isfinite(cap) || !(p0 > 0.0))
		return SX_EINVAL;
	out->content = content;
	out->bubble_o2_ml = cap * p0;
	return SX_OK;
}

double sx_air_exchange_bubble_po2(const sx_air_system *sys, double temp_c,
                                  const sx_air_state *state)
{
	double cap;

	if (!system_valid(sys) || !state_valid(state))
		return NAN;
	cap = sx_air_exchange_bubble_capacity(sys->bubble_ul, temp_c);
	if (!isfinite(cap))
		return NAN;
	return cap > 0.0 ? state->bubble_o2_ml / cap : 0.0;
}

static int blood_valid(const sx_blood_state *b)
{
	return b && isfinite(b->temp_c) && isfinite(b->ph) && isfinite(b->pco2) && b->pco2 > 0.0 &&
	       isfinite(b->hb) && b->hb >= 0.0 && isfinite(b->hufner) && b->hufner >= 0.0;
}

/*
 * dS/dx of Severinghaus' standard curve, S = f / (f + 23400), f = x^3 + 150 x
 * (J Appl Physiol 1979): only a Newton slope; the root itself is defined by
 * oxygen.h's curve, so were the two ever to differ the bracket would still
 * converge, only more slowly.
 */
static double standard_slope(double x)
{
	double f = x * (x * x + 150.0), den = f + 23400.0;

	return 23400.0 * (3.0 * x * x + 150.0) / den / den;
}

/*
 * f(P) = cap S(P) + a P - total, a = alpha + extra, is strictly increasing and
 * a P <= f(P) + total, so the root lies in [0, total / a]. Ignoring a P, Hb
 * alone would hold the total at S = total / cap: a start at or above the root
 * (when total < cap). Newton steps run inside the bracket; a step that leaves
 * it is replaced by bisection; every evaluation narrows the bracket. The
 * curve under the blood state is the standard curve at the virtual pO2 g P
 * (oxygen.h), so g is computed once.
 */
sx_status sx_air_exchange_shared_po2(double total, double extra, const sx_blood_state *blood,
                                     double *po2, int *evals)
{
	double a, cap, g, lo, hi, p, next;
	int i;

	if (evals)
		*evals = 0;
	if (!po2 || !isfinite(total) || total < 0.0 || !isfinite(extra) || extra < 0.0 ||
	    !blood_valid(blood))
		return SX_EINVAL;
	if (total == 0.0) {
		*po2 = 0.0;
		return SX_OK;
	}
	a = sx_o2_solubility(blood->temp_c) + extra;
	cap = blood->hufner * blood->hb;
	lo = 0.0;
	hi = total / a;
	if (cap == 0.0) {
		*po2 = hi;
		return SX_OK;
	}
	g = sx_o2_virtual_po2(1.0, blood);
	if (!(g > 0.0) || !isfinite(g))
		return SX_EINVAL;
	p = hi;
	if (total < cap) {
		double guess = sx_o2_po2_standard(total / cap) / g;

		if (guess > 0.0 && guess < hi)
			p = guess;
	}
	for (i = 0; i < SHARED_ITER; i++) {
		double resid, deriv, step;

		resid = cap * sx_o2_sat_standard(g * p) + a * p - total;
		deriv = cap * g * standard_slope(g * p) + a;
		if (evals)
			(*evals)++;
		if (resid == 0.0) {
			*po2 = p;
			return SX_OK;
		}
		if (resid > 0.0)
			hi = p;
		else
			lo = p;
		step = resid / deriv;
		next = p - step;
		if (fabs(step) <= SHARED_RTOL * p) {
			*po2 = next;
			return SX_OK;
		}
		if (!(next > lo && next < hi))
			next = 0.5 * (lo + hi);
		if (hi - lo <= SHARED_RTOL * hi) {
			*po2 = next;
			return SX_OK;
		}
		p = next;
	}
	return SX_EMODEL;
}

sx_status sx_air_exchange_equilibrium(const sx_air_system *sys, const sx_blood_state *blood,
                                      const sx_air_state *state, sx_air_state *eq, double *po2)
{
	double cap, per_dl, total, p, blood_o2;
	sx_status status;

	if (!eq || !system_valid(sys) || !state_valid(state) || !blood_valid(blood))
		return SX_EINVAL;
	cap = sx_air_exchange_bubble_capacity(sys->bubble_ul, blood->temp_c);
	if (!isfinite(cap))
		return SX_EINVAL;
	per_dl = sys->blood_ml / 100.0;
	total = state->content * per_dl + state->bubble_o2_ml;
	status = sx_air_exchange_shared_po2(total / per_dl, cap / per_dl, blood, &p, NULL);
	if (status != SX_OK)
		return status;
	/* the blood's share from the curve; the bubble holds the rest, so the
	 * total is kept to rounding whatever the solver's last digit */
	blood_o2 = fmin(sx_o2_content(p, blood) * per_dl, total);
	eq->content = blood_o2 / per_dl;
	eq->bubble_o2_ml = total - blood_o2;
	if (po2)
		*po2 = p;
	return SX_OK;
}

sx_status sx_air_exchange_step(const sx_air_system *sys, const sx_blood_state *blood,
                               double tau_min, double dt_min, const sx_air_state *in,
                               sx_air_state *out)
{
	sx_air_state eq;
	double per_dl, total, blood_o2, blood_eq, decay;
	sx_status status;

	if (!out || !system_valid(sys) || !state_valid(in) || !blood_valid(blood) ||
	    isnan(tau_min) || tau_min < 0.0 || !isfinite(dt_min) || dt_min < 0.0)
		return SX_EINVAL;
	if (sys->bubble_ul == 0.0 || dt_min == 0.0 || isinf(tau_min)) {
		*out = *in;
		return SX_OK;
	}
	status = sx_air_exchange_equilibrium(sys, blood, in, &eq, NULL);
	if (status != SX_OK)
		return status;
	per_dl = sys->blood_ml / 100.0;
	blood_o2 = in->content * per_dl;
	total = blood_o2 + in->bubble_o2_ml;
	blood_eq = eq.content * per_dl;
	decay = tau_min > 0.0 ? exp(-dt_min / tau_min) : 0.0;
	blood_o2 = blood_eq + (blood_o2 - blood_eq) * decay;
	/* between the start and the equilibrium, both within [0, total] */
	blood_o2 = fmin(fmax(blood_o2, 0.0), total);
	out->content = blood_o2 / per_dl;
	out->bubble_o2_ml = total - blood_o2;
	return SX_OK;
}
