/* SPDX-License-Identifier: MIT */
/*
 * simulate.c - stepping the specimen's state through its timeline.
 *
 * State: the O2 content of the blood (mL/dL of the sample), the O2 in a bubble
 * (mL STPD), the O2 held by a plastic wall, and the temperature, which
 * approaches each phase's temperature exponentially from where it was (the
 * patient's at collection). Within a phase each mechanism acts on the content
 * in turn (operator splitting) over steps that are short while the syringe
 * cools (the first three cooling time constants, in three steps) and up to
 * STEADY_STEP_MIN after. Air exchange and the wall are closed-form relaxations
 * toward their equilibria, exact for any step at one temperature, so few steps
 * suffice. With only metabolism on, each phase is one quadrature.
 *
 * The reading is the pO2 of the final content at 37 C (the analyser warms the
 * sample without changing its content), plus what volatile agents add at the
 * electrode.
 */
#include "model/simulate.h"

#include <math.h>
#include <string.h>

#include "model/atmosphere.h"

#define STEADY_STEP_MIN 30.0
#define TRANSIENT_STEPS 2

/* Gauss-Legendre nodes and weights on [-1, 1], 4 points (Abramowitz & Stegun 25.4.30). */
static const double gl_x[4] = {-0.8611363115940526, -0.3399810435848563, 0.3399810435848563,
			       0.8611363115940526};
static const double gl_w[4] = {0.3478548451374538, 0.6521451548625461, 0.6521451548625461,
			       0.3478548451374538};

sx_blood_state sx_blood_at(const sx_blood_state *at37, double temp_c)
{
	sx_blood_state b = *at37;
	b.temp_c = temp_c;
	b.ph = at37->ph + 0.0147 * (37.0 - temp_c);
	b.pco2 = at37->pco2 * pow(10.0, -0.019 * (37.0 - temp_c));
	return b;
}

static double temp_at(const sx_phase_plan *p, double start_temp, double tau, double t)
{
	return p->temp_c + (start_temp - p->temp_c) * exp(-t / tau);
}

static double gl4(const sx_phase_plan *p, double start_temp, double tau, double ln_q10,
		  double a, double b)
{
	double sum = 0, half = (b - a) / 2, mid = (a + b) / 2;
	if (!(b > a))
		return 0;
	for (int k = 0; k < 4; k++) {
		double temp = temp_at(p, start_temp, tau, mid + half * gl_x[k]);
		sum += gl_w[k] * exp(ln_q10 * (temp - 37.0) / 10.0);
	}
	return sum * half;
}

/* O2 used between a and b minutes into a phase: the rate at 37 C times the integral of
 * the Q10 factor as the temperature approaches the phase's. */
static double metabolism_between(const sx_sim_input *in, const sx_draw *d,
				 const sx_phase_plan *p, double start_temp, double tau, double a,
				 double b)
{
	double rate37 = sx_metabolism_rate_37(&d->metabolism, in->wbc, in->platelets);
	double ln_q10 = log(d->metabolism.q10);
	double split = fmin(b, 3 * tau);
	if (fabs(start_temp - p->temp_c) < 0.05 || a >= split)
		return rate37 * gl4(p, start_temp, tau, ln_q10, a, b);
	return rate37 * (gl4(p, start_temp, tau, ln_q10, a, a + (split - a) / 3) +
			 gl4(p, start_temp, tau, ln_q10, a + (split - a) / 3, split) +
			 gl4(p, start_temp, tau, ln_q10, split, b));
}

static double cooling_tau(const sx_phase_plan *p, const sx_draw *d)
{
	return p->iced ? d->cooling_ice_min : d->cooling_room_min;
}

/* The state of the sample as the analyser measures it (after any heparin), at 37 C. */
static sx_blood_state mixture_37(const sx_sim_input *in, const sx_draw *d)
{
	sx_blood_state b = in->blood;
	b.hb = d->hb;
	b.temp_c = 37.0;
	return b;
}

static double heparin_fraction(const sx_sim_input *in, const sx_draw *d)
{
	return in->on[SX_MECH_HEPARIN_DILUTION] && d->heparin_fraction > 0 ? d->heparin_fraction
									    : 0.0;
}

/* Step boundaries of a phase: TRANSIENT_STEPS over the first three cooling time
 * constants, then steps of at most STEADY_STEP_MIN. Returns the count. */
static size_t step_bounds(double minutes, double tau, double *bounds, size_t max)
{
	size_t n = 0;
	double transient = fmin(minutes, 3 * tau);
	bounds[n++] = 0.0;
	for (int k = 1; k <= TRANSIENT_STEPS && n < max; k++)
		bounds[n++] = transient * k / TRANSIENT_STEPS;
	if (minutes > transient) {
		size_t steady = (size_t)ceil((minutes - transient) / STEADY_STEP_MIN);
		for (size_t k = 1; k <= steady && n < max; k++)
			bounds[n++] = transient + (minutes - transient) * (double)k / (double)steady;
	}
	return n;
}

sx_status sx_simulate(const sx_sim_input *in, const sx_draw *d, double po2_0,
		      sx_sim_result *out, sx_sim_trace *trace)
{
	const sx_timeline *tl = in->timeline;
	sx_blood_state mix = mixture_37(in, d), before = mix;
	double f = heparin_fraction(in, d), content, temp, scale, po2_mixed, true_reading;
	double total_dc = 0;
	sx_air_system sys = {d->bubble_ul, d->blood_ml, in->barometric_mmhg};
	sx_air_state air = {0, 0};
	sx_wall_state wall = {0, 0};
	bool air_on = in->on[SX_MECH_AIR_EXCHANGE] && d->bubble_ul > 0 && d->blood_ml > 0;
	bool wall_on = in->on[SX_MECH_SYRINGE_WALL] && in->wall == SX_WALL_PLASTIC;
	sx_status st;

	memset(out, 0, sizeof *out);
	if (!(po2_0 >= 0) || !isfinite(po2_0))
		return SX_EINVAL;
	/* At sampling: the blood (undiluted) meets the liquid heparin. */
	if (f > 0) {
		sx_heparin_mix m;
		double solution = sx_heparin_solution_po2(&d->heparin, in->barometric_mmhg,
							  in->room_temp_c);
		before.hb = mix.hb / (1.0 - f);
		before.pco2 = (mix.pco2 - f * d->heparin.air_pco2) / (1.0 - f);
		st = sx_heparin_dilute(&d->heparin, f, &before, sx_o2_content(po2_0, &before),
				       solution, in->room_temp_c, &m);
		if (st != SX_OK)
			return st;
		content = m.content;
	} else {
		content = sx_o2_content(po2_0, &mix);
	}
	po2_mixed = po2_0;
	if (f > 0) {
		st = sx_o2_po2_from_content(content, &mix, &po2_mixed);
		if (st != SX_OK)
			return st;
	}
	out->dpo2[SX_MECH_HEPARIN_DILUTION] = po2_mixed - po2_0;
	temp = tl->start_temp_c;
	if (air_on) {
		st = sx_air_exchange_start(&sys, temp, content, &air);
		if (st != SX_OK)
			return st;
	}
	if (wall_on)
		wall.wall_o2 = sx_syringe_wall_start(&d->wall, in->wall, in->room_temp_c,
						     in->room_air_po2);
	scale = tl->total_min > 0 ? d->total_min / tl->total_min : 0.0;
	if (trace) {
		memset(trace, 0, sizeof *trace);
		trace->po2_collection = po2_0;
		trace->po2_after_mixing = po2_mixed;
	}
	for (size_t i = 0; i < tl->count; i++) {
		const sx_phase_plan *p = &tl->phases[i];
		double minutes = p->minutes * scale, tau = cooling_tau(p, d);
		double start_temp = temp, start_content = content;
		double moved[SX_MECH_COUNT] = {0};

		if (!in->exchange) {
			if (in->on[SX_MECH_METABOLISM]) {
				double used =
					metabolism_between(in, d, p, start_temp, tau, 0, minutes);
				used = fmin(used, content);
				content -= used;
				moved[SX_MECH_METABOLISM] -= used;
			}
		} else {
			double bounds[TRANSIENT_STEPS + 64];
			size_t n = step_bounds(minutes, tau, bounds, sizeof bounds / sizeof bounds[0]);
			double air_tau = air_on ? sx_air_exchange_tau(&d->air, p->agitation, in->froth)
						: INFINITY;
			double ln_q10 = log(d->metabolism.q10);
			for (size_t k = 1; k < n; k++) {
				double a = bounds[k - 1], b = bounds[k], dt = b - a;
				sx_blood_state bt = sx_blood_at(&mix, temp_at(p, start_temp, tau,
									      (a + b) / 2));
				if (in->on[SX_MECH_METABOLISM]) {
					/* a step is short: one 4-point quadrature covers it */
					double used = fmin(
						content,
						sx_metabolism_rate_37(&d->metabolism, in->wbc,
								      in->platelets) *
							gl4(p, start_temp, tau, ln_q10, a, b));
					content -= used;
					moved[SX_MECH_METABOLISM] -= used;
				}
				if (air_on) {
					air.content = content;
					st = sx_air_exchange_step(&sys, &bt, air_tau, dt, &air, &air);
					if (st != SX_OK)
						return st;
					moved[SX_MECH_AIR_EXCHANGE] += air.content - content;
					content = air.content;
				}
				if (wall_on) {
					wall.content = content;
					st = sx_syringe_wall_step(&d->wall, in->wall, &bt, dt, &wall,
								  &wall);
					if (st != SX_OK)
						return st;
					moved[SX_MECH_SYRINGE_WALL] += wall.content - content;
					content = wall.content;
				}
			}
		}
		temp = temp_at(p, start_temp, tau, minutes);
		for (int m = 0; m < SX_MECH_COUNT; m++)
			out->dcontent[m] += moved[m];
		if (trace && i < SX_MAX_PHASES) {
			sx_phase_trace *pt = &trace->phases[i];
			memcpy(pt->name, p->name, sizeof pt->name);
			pt->minutes = minutes;
			pt->temp_start_c = start_temp;
			pt->temp_end_c = temp;
			st = sx_o2_po2_from_content(start_content, &mix, &pt->po2_start);
			if (st == SX_OK)
				st = sx_o2_po2_from_content(content, &mix, &pt->po2_end);
			if (st != SX_OK)
				return st;
			memcpy(pt->dcontent, moved, sizeof moved);
			trace->phase_count = i + 1;
		}
	}
	st = sx_o2_po2_from_content(content, &mix, &true_reading);
	if (st != SX_OK)
		return st;
	out->reading = true_reading;
	if (in->on[SX_MECH_ELECTRODE] && in->dose_count)
		out->reading = sx_electrode_reading(&d->electrode, true_reading, in->doses,
						    in->dose_count);
	out->dpo2[SX_MECH_ELECTRODE] = out->reading - true_reading;
	/* The content movers share the change between mixing and analysis. */
	for (int m = 0; m < SX_MECH_COUNT; m++)
		total_dc += out->dcontent[m];
	for (int m = 0; m < SX_MECH_COUNT; m++)
		if (out->dcontent[m] != 0 && total_dc != 0)
			out->dpo2[m] = (true_reading - po2_mixed) * out->dcontent[m] / total_dc;
	if (trace) {
		trace->po2_true_reading = true_reading;
		trace->po2_reading = out->reading;
	}
	return SX_OK;
}

/* Without a pO2-dependent mechanism: undo each step in turn. */
static sx_status invert_closed(const sx_sim_input *in, const sx_draw *d, double reading,
			       double *po2_0, sx_sim_result *out)
{
	sx_blood_state mix = mixture_37(in, d);
	double f = heparin_fraction(in, d), true_reading = reading, removed = 0, mixed;
	sx_status st;

	if (in->on[SX_MECH_ELECTRODE] && in->dose_count)
		true_reading = sx_electrode_true_po2(&d->electrode, reading, in->doses,
						     in->dose_count);
	/* what metabolism removed does not depend on the pO2 */
	st = sx_simulate(in, d, fmax(true_reading, 0.0), out, NULL);
	if (st != SX_OK)
		return st;
	for (int m = 0; m < SX_MECH_COUNT; m++)
		removed -= out->dcontent[m];
	st = sx_o2_po2_from_content(sx_o2_content(true_reading, &mix) + removed, &mix, &mixed);
	if (st != SX_OK)
		return st;
	if (f > 0) {
		double solution = sx_heparin_solution_po2(&d->heparin, in->barometric_mmhg,
							  in->room_temp_c);
		st = sx_heparin_undilute(&d->heparin, f, &mix, mixed, solution, in->room_temp_c,
					 po2_0, NULL);
		if (st == SX_ERANGE)
			*po2_0 = 0.0; /* the reading is below what the solution alone brings */
		else if (st != SX_OK)
			return st;
	} else {
		*po2_0 = mixed;
	}
	out->reading = reading;
	return SX_OK;
}

sx_status sx_simulate_invert(sx_sim_input *in, const sx_draw *d, double reading,
			     double *po2_0, sx_sim_result *out)
{
	/* f(x) = simulate(x) - reading rises with x. Without exchange the closed form is
	 * exact. With it, a secant starts from the last answer for this specimen (draws are
	 * close to each other) and stops once the next correction is below the tolerance:
	 * the curve is smooth enough that the step it predicts is the answer. A bracket is
	 * kept once the sign changes (Illinois) so that it cannot wander. */
	double x0, x1, f0, f1, lo = -1, hi = -1, flo = 0, fhi = 0;
	int side = 0;
	sx_status st;

	double closed;
	if (!in->exchange)
		return invert_closed(in, d, reading, po2_0, out);
	{
		/* the closed form without the exchanging mechanisms is cheap (no steps) */
		sx_sim_input plain = *in;
		plain.exchange = false;
		plain.on[SX_MECH_AIR_EXCHANGE] = plain.on[SX_MECH_SYRINGE_WALL] = false;
		st = invert_closed(&plain, d, reading, &closed, out);
		if (st != SX_OK)
			return st;
	}
	x0 = fmax(0.0, closed + in->offset_hint);
	st = sx_simulate(in, d, x0, out, NULL);
	if (st != SX_OK)
		return st;
	f0 = out->reading - reading;
	x1 = fmax(0.0, x0 - f0 / (in->slope_hint > 0.05 ? in->slope_hint : 1.0));
	/* With a slope known from an earlier draw (to a few per cent), a correction under
	 * SX_INVERT_TRUST mmHg lands within a few hundredths of the root: take it. */
	if (fabs(x1 - x0) < SX_INVERT_TOLERANCE ||
	    (in->slope_hint > 0.05 && fabs(x1 - x0) < SX_INVERT_TRUST)) {
		*po2_0 = x1;
		in->offset_hint = x1 - closed;
		return SX_OK;
	}
	for (int iter = 0; iter < 60; iter++) {
		double x2;
		st = sx_simulate(in, d, x1, out, NULL);
		if (st != SX_OK)
			return st;
		f1 = out->reading - reading;
		if (f1 < 0 && (lo < 0 || x1 > lo)) {
			lo = x1;
			flo = f1;
		}
		if (f1 > 0 && (hi < 0 || x1 < hi)) {
			hi = x1;
			fhi = f1;
		}
		if (f0 < 0 && (lo < 0 || x0 > lo)) {
			lo = x0;
			flo = f0;
		}
		if (f0 > 0 && (hi < 0 || x0 < hi)) {
			hi = x0;
			fhi = f0;
		}
		if (f1 == 0) {
			*po2_0 = x1;
			in->offset_hint = x1 - closed;
			return SX_OK;
		}
		if (f1 != f0 && x1 != x0) {
			double slope = (f1 - f0) / (x1 - x0);
			if (slope > 0.05)
				in->slope_hint = slope;
			x2 = x1 - f1 / slope;
		} else {
			x2 = x1 - f1;
		}
		if (lo >= 0 && hi >= 0) {
			if (!(x2 > lo && x2 < hi)) {
				/* Illinois: a false-position step, halving the stale end */
				if (side == 1)
					fhi /= 2;
				else if (side == -1)
					flo /= 2;
				x2 = lo - flo * (hi - lo) / (fhi - flo);
			}
			side = f1 < 0 ? -1 : 1;
		}
		if (x2 < 0)
			x2 = x1 / 2;
		if (fabs(x2 - x1) < SX_INVERT_TOLERANCE) {
			*po2_0 = x2;
			in->offset_hint = x2 - closed;
			return SX_OK;
		}
		x0 = x1;
		f0 = f1;
		x1 = x2;
	}
	return SX_EMODEL;
}
