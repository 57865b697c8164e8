/* SPDX-License-Identifier: MIT */
/*
 * simulate.c - stepping the specimen's state through its timeline.
 *
 * State: blood O2 content (mL/dL) and temperature. Temperature approaches the
 * phase's temperature exponentially from where it was (the patient's at
 * collection). Within a phase the state is advanced in steps of at most
 * STEP_MIN minutes; each mechanism acts on the content in turn (operator
 * splitting). The reading is the pO2 of the final content at 37 C, since the
 * analyser warms the sample to 37 C without changing its content.
 */
#include "model/simulate.h"

#include <math.h>
#include <string.h>

#define STEP_MIN 2.0

static double cooling_tau(const sx_phase_plan *p, const sx_draw *d)
{
	return p->iced ? d->cooling_ice_min : d->cooling_room_min;
}

/* Gauss-Legendre nodes and weights on [-1, 1], 4 points (Abramowitz & Stegun 25.4.30). */
static const double gl_x[4] = {-0.8611363115940526, -0.3399810435848563, 0.3399810435848563,
			       0.8611363115940526};
static const double gl_w[4] = {0.3478548451374538, 0.6521451548625461, 0.6521451548625461,
			       0.3478548451374538};

static double gl4(const sx_phase_plan *p, double start_temp, double tau, double ln_q10,
		  double a, double b)
{
	double sum = 0, half = (b - a) / 2, mid = (a + b) / 2;
	if (!(b > a))
		return 0;
	for (int k = 0; k < 4; k++) {
		double t = mid + half * gl_x[k];
		double temp = p->temp_c + (start_temp - p->temp_c) * exp(-t / tau);
		sum += gl_w[k] * exp(ln_q10 * (temp - 37.0) / 10.0);
	}
	return sum * half;
}

/* O2 used over a phase: the rate at 37 C times the integral of the Q10 factor as the
 * temperature approaches the phase's; the first three time constants, where it changes
 * fast, get quadratures of their own. */
static double metabolism_over(const sx_sim_input *in, const sx_draw *d, const sx_phase_plan *p,
			      double start_temp, double tau, double minutes)
{
	double rate37 = sx_metabolism_rate_37(&d->metabolism, in->wbc, in->platelets);
	double ln_q10 = log(d->metabolism.q10), split = fmin(minutes, 3 * tau);
	if (fabs(start_temp - p->temp_c) < 0.05)
		return rate37 * gl4(p, start_temp, tau, ln_q10, 0, minutes);
	return rate37 * (gl4(p, start_temp, tau, ln_q10, 0, split / 3) +
			 gl4(p, start_temp, tau, ln_q10, split / 3, split) +
			 gl4(p, start_temp, tau, ln_q10, split, minutes));
}

static sx_status po2_at_37(const sx_sim_input *in, const sx_draw *d, double content, double *po2)
{
	sx_blood_state b = in->blood;
	b.hb = d->hb;
	b.temp_c = 37.0;
	return sx_o2_po2_from_content(content, &b, po2);
}

sx_status sx_simulate(const sx_sim_input *in, const sx_draw *d, double po2_0,
		      sx_sim_result *out, sx_sim_trace *trace)
{
	sx_blood_state b37 = in->blood;
	double content, temp, scale;
	const sx_timeline *tl = in->timeline;
	sx_status st;

	memset(out, 0, sizeof *out);
	b37.hb = d->hb;
	b37.temp_c = 37.0;
	if (!(po2_0 >= 0) || !isfinite(po2_0))
		return SX_EINVAL;
	content = sx_o2_content(po2_0, &b37);
	temp = tl->start_temp_c;
	scale = tl->total_min > 0 ? d->total_min / tl->total_min : 0.0;
	if (trace) {
		memset(trace, 0, sizeof *trace);
		trace->po2_collection = po2_0;
	}
	for (size_t i = 0; i < tl->count; i++) {
		const sx_phase_plan *p = &tl->phases[i];
		double minutes = p->minutes * scale, tau = cooling_tau(p, d);
		double done = 0.0, start_temp = temp, start_content = content;
		sx_phase_trace *pt = trace && i < SX_MAX_PHASES ? &trace->phases[i] : NULL;
		double moved[SX_MECH_COUNT] = {0};
		if (!in->exchange) {
			/* Only content-removing mechanisms: one quadrature per phase. */
			if (in->on[SX_MECH_METABOLISM]) {
				double used = metabolism_over(in, d, p, start_temp, tau, minutes);
				if (used > content)
					used = content;
				content -= used;
				moved[SX_MECH_METABOLISM] -= used;
			}
		} else {
			size_t steps = (size_t)ceil(minutes / STEP_MIN);
			double dt = steps ? minutes / (double)steps : 0.0;
			for (size_t k = 0; k < steps; k++) {
				double t_mid = done + dt / 2;
				double t_here =
					p->temp_c + (start_temp - p->temp_c) * exp(-t_mid / tau);
				if (in->on[SX_MECH_METABOLISM]) {
					double used = sx_metabolism_rate(&d->metabolism, in->wbc,
									 in->platelets, t_here) *
						      dt;
					if (used > content)
						used = content;
					content -= used;
					moved[SX_MECH_METABOLISM] -= used;
				}
				done += dt;
			}
		}
		temp = p->temp_c + (start_temp - p->temp_c) * exp(-minutes / tau);
		for (int m = 0; m < SX_MECH_COUNT; m++)
			out->dcontent[m] += moved[m];
		if (pt) {
			memcpy(pt->name, p->name, sizeof pt->name);
			pt->minutes = minutes;
			pt->temp_start_c = start_temp;
			pt->temp_end_c = temp;
			st = po2_at_37(in, d, start_content, &pt->po2_start);
			if (st == SX_OK)
				st = po2_at_37(in, d, content, &pt->po2_end);
			if (st != SX_OK)
				return st;
			memcpy(pt->dcontent, moved, sizeof moved);
			trace->phase_count = i + 1;
		}
	}
	st = po2_at_37(in, d, content, &out->reading);
	if (st != SX_OK)
		return st;
	if (trace)
		trace->po2_reading = out->reading;
	return SX_OK;
}

sx_status sx_simulate_invert(const sx_sim_input *in, const sx_draw *d, double reading,
			     double *po2_0, sx_sim_result *out)
{
	/* f(x) = simulate(x) - reading rises with x. Start at the reading and at the reading
	 * corrected by the first run's shift; keep a bracket once the sign changes. */
	double x0 = reading, x1, f0, f1, lo = -1, hi = -1, flo = 0, fhi = 0;
	int side = 0;
	sx_status st;

	st = sx_simulate(in, d, x0, out, NULL);
	if (st != SX_OK)
		return st;
	if (!in->exchange) {
		/* What is removed does not depend on the pO2: add it back to the reading's content. */
		sx_blood_state b = in->blood;
		double removed = 0;
		b.hb = d->hb;
		b.temp_c = 37.0;
		for (int m = 0; m < SX_MECH_COUNT; m++)
			removed -= out->dcontent[m];
		st = sx_o2_po2_from_content(sx_o2_content(reading, &b) + removed, &b, po2_0);
		out->reading = reading;
		return st;
	}
	f0 = out->reading - reading;
	if (fabs(f0) < 1e-4) {
		*po2_0 = x0;
		return SX_OK;
	}
	x1 = fmax(0.0, x0 - f0);
	for (int iter = 0; iter < 60; iter++) {
		double x2;
		st = sx_simulate(in, d, x1, out, NULL);
		if (st != SX_OK)
			return st;
		f1 = out->reading - reading;
		if (fabs(f1) < 1e-4) {
			*po2_0 = x1;
			return SX_OK;
		}
		/* keep the bracket */
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
		if (f1 != f0)
			x2 = x1 - f1 * (x1 - x0) / (f1 - f0);
		else
			x2 = x1 - f1;
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
		x0 = x1;
		f0 = f1;
		x1 = x2;
	}
	return SX_EMODEL;
}
