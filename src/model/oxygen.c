/* SPDX-License-Identifier: MIT */
/*
 * oxygen.c - the oxygen dissociation curve, O2 solubility and O2 content.
 *
 * The curve is Severinghaus' equation at standard conditions (J Appl Physiol
 * 1979;46:599), S = 1 / (23400 / (P^3 + 150 P) + 1), with its exact inverse
 * (the one real root of the cubic P^3 + 150 P - K = 0, Cardano). Conditions
 * other than 37 C, pH 7.40 and pCO2 40 mmHg move the curve through Kelman's
 * virtual pO2 (J Appl Physiol 1966). Content is Huefner's factor times Hb
 * times S plus the dissolved O2, whose solubility follows Siggaard-Andersen's
 * temperature coefficient. pO2 is derived from content by a safeguarded
 * Newton iteration that keeps a bracket and falls back to bisection.
 * Everything here is a pure function of its arguments.
 */
#include <math.h>

#include "model/oxygen.h"

/* Severinghaus 1979: S = 1 / (SEV_K / (P^3 + SEV_B P) + 1). */
#define SEV_K 23400.0
#define SEV_B 150.0

/* Dissolved O2 at 37 C, mL/dL/mmHg, and -d ln(alpha)/dT per K. */
#define ALPHA_37     0.0031
#define ALPHA_TEMPCO 0.012

/* pO2 from content: relative step at which the iteration stops, and a bound
 * on iterations (bisection alone halves the bracket every step, so this is
 * never reached for valid input). */
#define CONTENT_RTOL 1e-13
#define CONTENT_ITER 200

/* Temperature correction: the largest integration step, C, and the largest
 * span accepted (anything wider is not a blood temperature change). */
#define TEMP_STEP_MAX 0.1
#define TEMP_SPAN_MAX 200.0

sx_blood_state sx_blood_state_standard(void)
{
	sx_blood_state s = {
	        .temp_c = 37.0,
	        .ph = 7.40,
	        .pco2 = 40.0,
	        .hb = 15.0,
	        .hufner = 1.39,
	};
	return s;
}

double sx_o2_sat_standard(double po2)
{
	double f;

	if (isnan(po2))
		return NAN;
	if (po2 <= 0.0)
		return 0.0;
	f = po2 * (po2 * po2 + SEV_B);
	/* The paper's form: stays exact for tiny P and gives 1 when f is inf. */
	return 1.0 / (SEV_K / f + 1.0);
}

/*
 * The real root of t^3 + p t - K = 0 with p = 150 > 0 and K > 0. Cardano
 * gives t = u - v with u = cbrt(K/2 + sqrt(K^2/4 + p^3/27)) and u v = p/3.
 * Written as t = (u^3 - v^3) / (u^2 + u v + v^2) = K / (u^2 + p/3 + v^2) it
 * has no cancellation for small K, where u and v are almost equal. One
 * Newton step then polishes the last bits.
 */
static double cubic_root(double k)
{
	const double p3 = SEV_B / 3.0;
	const double d0 = sqrt(p3 * p3 * p3); /* sqrt(p^3/27) */
	double u, v, t;

	u = cbrt(0.5 * k + hypot(0.5 * k, d0));
	v = p3 / u;
	t = k / (u * u + p3 + v * v);
	t -= (t * (t * t + SEV_B) - k) / (3.0 * t * t + SEV_B);
	return t;
}

double sx_o2_po2_standard(double sat)
{
	if (isnan(sat))
		return NAN;
	if (sat <= 0.0)
		return 0.0;
	if (sat >= 1.0)
		return INFINITY;
	return cubic_root(SEV_K * sat / (1.0 - sat));
}

/* 10^(0.024 (37 - T) + 0.40 (pH - 7.40) + 0.06 log10(40 / pCO2)), Kelman. */
static double virtual_factor(const sx_blood_state *state)
{
	double e;

	e = 0.024 * (37.0 - state->temp_c) + 0.40 * (state->ph - 7.40) +
	    0.06 * log10(40.0 / state->pco2);
	return pow(10.0, e);
}

double sx_o2_virtual_po2(double po2, const sx_blood_state *state)
{
	return po2 * virtual_factor(state);
}

double sx_o2_saturation(double po2, const sx_blood_state *state)
{
	return sx_o2_sat_standard(sx_o2_virtual_po2(po2, state));
}

double sx_o2_po2_from_saturation(double sat, const sx_blood_state *state)
{
	return sx_o2_po2_standard(sat) / virtual_factor(state);
}

/* dS/dx of Severinghaus' equation at virtual pO2 x:
 * S = f / (f + K), f = x^3 + 150 x, so dS/dx = K f' / (f + K)^2. */
static double sat_standard_slope(double x)
{
	double f, den;

	if (isnan(x))
		return NAN;
	if (x < 0.0)
		return 0.0;
	f = x * (x * x + SEV_B);
	den = f + SEV_K;
	return SEV_K * (3.0 * x * x + SEV_B) / den / den;
}

double sx_o2_sat_slope(double po2, const sx_blood_state *state)
{
	double g = virtual_factor(state);

	/* chain rule through x = g P */
	return sat_standard_slope(po2 * g) * g;
}

double sx_o2_solubility(double temp_c)
{
	return ALPHA_37 * exp(ALPHA_TEMPCO * (37.0 - temp_c));
}

double sx_o2_content(double po2, const sx_blood_state *state)
{
	if (isnan(po2))
		return NAN;
	if (po2 <= 0.0)
		return 0.0;
	return state->hufner * state->hb * sx_o2_saturation(po2, state) +
	       sx_o2_solubility(state->temp_c) * po2;
}

static int state_valid(const sx_blood_state *state)
{
	return state && isfinite(state->temp_c) && isfinite(state->ph) && isfinite(state->pco2) &&
	       state->pco2 > 0.0 && isfinite(state->hb) && state->hb >= 0.0 &&
	       isfinite(state->hufner) && state->hufner >= 0.0;
}

/*
 * content(P) = cap S(P) + alpha P is strictly increasing, and alpha P <=
 * content(P), so the root lies in [0, content / alpha]. When Hb carries O2,
 * ignoring the dissolved part gives a start at or above the root: the pO2 at
 * which Hb alone would hold all of it. From there Newton steps run inside
 * the bracket; a step that leaves it is replaced by bisection, and every
 * evaluation narrows the bracket by the sign of the residual.
 */
sx_status sx_o2_po2_from_content(double content, const sx_blood_state *state, double *po2)
{
	double alpha, cap, lo, hi, p, next, g;
	int i;

	if (!po2 || !isfinite(content) || content < 0.0 || !state_valid(state))
		return SX_EINVAL;
	if (content == 0.0) {
		*po2 = 0.0;
		return SX_OK;
	}
	alpha = sx_o2_solubility(state->temp_c);
	cap = state->hufner * state->hb;
	lo = 0.0;
	hi = content / alpha;
	if (cap == 0.0) {
		*po2 = hi;
		return SX_OK;
	}
	/* The curve's shift is the same at every pO2 of this state: compute it once (the
	 * same arithmetic as sx_o2_content and sx_o2_sat_slope, so the same results). */
	g = virtual_factor(state);
	p = hi;
	if (content < cap) {
		double guess = sx_o2_po2_standard(content / cap) / g;

		if (guess > 0.0 && guess < hi)
			p = guess;
	}
	for (i = 0; i < CONTENT_ITER; i++) {
		double resid, deriv, step;

		resid = (p <= 0.0 ? 0.0 : cap * sx_o2_sat_standard(p * g) + alpha * p) - content;
		if (resid == 0.0) {
			*po2 = p;
			return SX_OK;
		}
		if (resid > 0.0)
			hi = p;
		else
			lo = p;
		deriv = cap * (sat_standard_slope(p * g) * g) + alpha;
		step = resid / deriv;
		next = p - step;
		/* converged: taken before the bracket test, because a step below
		 * one ulp lands on the bracket end that p has just become */
		if (fabs(step) <= CONTENT_RTOL * p) {
			*po2 = next;
			return SX_OK;
		}
		if (!(next > lo && next < hi))
			next = 0.5 * (lo + hi);
		if (hi - lo <= CONTENT_RTOL * hi) {
			*po2 = next;
			return SX_OK;
		}
		p = next;
	}
	return SX_EMODEL;
}

double sx_o2_dlnp_dt(double po2)
{
	if (isnan(po2))
		return NAN;
	if (po2 <= 0.0)
		po2 = 0.0;
	return 0.058 / (pow(0.243 * po2 / 100.0, 3.88) + 1.0) + 0.013;
}

/* Classical Runge-Kutta on y = ln P, dy/dT = sx_o2_dlnp_dt(e^y). */
double sx_o2_temperature_correct(double po2, double t_from, double t_to)
{
	double span, h, y;
	int n, i;

	if (isnan(po2) || !isfinite(t_from) || !isfinite(t_to))
		return NAN;
	if (po2 <= 0.0)
		return 0.0;
	span = t_to - t_from;
	if (fabs(span) > TEMP_SPAN_MAX)
		return NAN;
	if (span == 0.0 || isinf(po2))
		return po2;
	n = (int)ceil(fabs(span) / TEMP_STEP_MAX - 1e-9);
	if (n < 1)
		n = 1;
	h = span / n;
	y = log(po2);
	for (i = 0; i < n; i++) {
		double k1, k2, k3, k4;

		k1 = sx_o2_dlnp_dt(exp(y));
		k2 = sx_o2_dlnp_dt(exp(y + 0.5 * h * k1));
		k3 = sx_o2_dlnp_dt(exp(y + 0.5 * h * k2));
		k4 = sx_o2_dlnp_dt(exp(y + h * k3));
		y += h * (k1 + 2.0 * k2 + 2.0 * k3 + k4) / 6.0;
	}
	return exp(y);
}

double sx_o2_dlnp_dph(double po2)
{
	if (isnan(po2))
		return NAN;
	if (po2 <= 0.0)
		po2 = 0.0;
	return pow(po2 / 26.6, 0.184) - 2.2;
}
