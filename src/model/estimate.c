/* SPDX-License-Identifier: MIT */
/*
 * estimate.c - Latin hypercube over the uncertain quantities, inversion per draw.
 *
 * Distributions: triangular (low, nominal, high) for every parameter given as a
 * range; the time from collection to analysis triangular within twice the
 * precision of the two times (the difference of two uniform errors); the pO2
 * expected without a reading normal around the alveolar gas equation minus a
 * normal A-a gradient for age (SD estimate.prior_spread: Cerveri et al. 1995 give
 * a standard error of 7.5 mmHg), narrowed by SpO2 through the curve when SpO2 is
 * below 97 % (above, the curve is too flat to tell).
 */
#include "model/estimate.h"

#include <math.h>
#include <string.h>

#include "model/atmosphere.h"
#include "model/sampling.h"

enum {
	DIM_BLOOD_RATE,
	DIM_WBC_RATE,
	DIM_PLT_RATE,
	DIM_Q10,
	DIM_TIME,
	DIM_COOL_ROOM,
	DIM_COOL_ICE,
	DIM_HB,
	DIM_PRIOR,
	DIM_TERMS,
	DIM_COUNT = DIM_TERMS + SX_MAX_EMPIRICAL
};

/* A fixed seed: the strata are the same for every specimen and every machine. */
#define SEED 0x5359524958ULL

static void nominal_draw(const sx_estimate_input *in, sx_draw *d)
{
	const sx_settings *st = in->settings;
	const sx_specimen *s = in->specimen;
	d->metabolism.blood_vo2_37 = st->blood_vo2_37.nominal;
	d->metabolism.wbc_vo2_37 = st->wbc_vo2_37.nominal;
	d->metabolism.wbc_reference = st->wbc_reference;
	d->metabolism.platelet_vo2_37 = st->platelet_vo2_37.nominal;
	d->metabolism.platelet_reference = st->platelet_reference;
	d->metabolism.q10 = st->q10.nominal;
	d->cooling_room_min = st->cooling_room_min.nominal;
	d->cooling_ice_min = st->cooling_ice_min.nominal;
	d->hb = sx_specimen_has(s, SX_F_HB) ? s->number[SX_F_HB] : st->default_hb.nominal;
	d->total_min = in->timeline->total_min;
}

static void sample_draw(const sx_estimate_input *in, const sx_sampler *smp, size_t i,
			sx_draw *d)
{
	const sx_settings *st = in->settings;
	double h = 2 * in->timeline->time_halfwidth_min, t = in->timeline->total_min;
	nominal_draw(in, d);
	d->metabolism.blood_vo2_37 = sx_triangular(st->blood_vo2_37, sx_sampler_u(smp, i, DIM_BLOOD_RATE));
	d->metabolism.wbc_vo2_37 = sx_triangular(st->wbc_vo2_37, sx_sampler_u(smp, i, DIM_WBC_RATE));
	d->metabolism.platelet_vo2_37 =
		sx_triangular(st->platelet_vo2_37, sx_sampler_u(smp, i, DIM_PLT_RATE));
	d->metabolism.q10 = sx_triangular(st->q10, sx_sampler_u(smp, i, DIM_Q10));
	d->total_min = fmax(0.0, sx_triangular((sx_range){t - h, t, t + h},
					       sx_sampler_u(smp, i, DIM_TIME)));
	d->cooling_room_min = sx_triangular(st->cooling_room_min, sx_sampler_u(smp, i, DIM_COOL_ROOM));
	d->cooling_ice_min = sx_triangular(st->cooling_ice_min, sx_sampler_u(smp, i, DIM_COOL_ICE));
	if (!sx_specimen_has(in->specimen, SX_F_HB))
		d->hb = sx_triangular(st->default_hb, sx_sampler_u(smp, i, DIM_HB));
}

static void sim_input(const sx_estimate_input *in, sx_sim_input *si)
{
	const sx_specimen *s = in->specimen;
	const sx_settings *st = in->settings;
	memset(si, 0, sizeof *si);
	si->timeline = in->timeline;
	si->blood = sx_blood_state_standard();
	si->blood.temp_c = 37.0;
	si->blood.ph = sx_specimen_has(s, SX_F_PH) ? s->number[SX_F_PH] : st->default_ph;
	si->blood.pco2 = sx_specimen_has(s, SX_F_PCO2) && s->number[SX_F_PCO2] > 0
				 ? s->number[SX_F_PCO2]
				 : st->default_pco2;
	si->blood.hufner = st->hufner;
	si->wbc = sx_specimen_has(s, SX_F_WBC) ? s->number[SX_F_WBC] : -1;
	si->platelets = sx_specimen_has(s, SX_F_PLATELETS) ? s->number[SX_F_PLATELETS] : -1;
	memcpy(si->on, in->on, sizeof si->on);
	si->exchange = in->on[SX_MECH_AIR_EXCHANGE] || in->on[SX_MECH_SYRINGE_WALL];
}

/* The expected pO2 at collection without a reading, and its spread. */
static void prior(const sx_estimate_input *in, const sx_sim_input *si, double *mean, double *sd)
{
	const sx_specimen *s = in->specimen;
	const sx_settings *st = in->settings;
	double fio2 = sx_specimen_has(s, SX_F_FIO2) ? s->number[SX_F_FIO2] : 0.21;
	double age = sx_specimen_has(s, SX_F_PATIENT_AGE_YEARS) ? s->number[SX_F_PATIENT_AGE_YEARS]
								: st->default_age_years;
	*mean = sx_alveolar_po2(fio2, in->barometric_mmhg, si->blood.pco2, st->resp_quotient) -
		sx_aa_gradient_normal(age);
	*sd = st->prior_sd_mmhg;
	if (sx_specimen_has(s, SX_F_SPO2) && s->number[SX_F_SPO2] < 97.0 &&
	    s->number[SX_F_SPO2] > 10.0) {
		sx_blood_state b = si->blood;
		double sat = s->number[SX_F_SPO2] / 100.0;
		double p = sx_o2_po2_from_saturation(sat, &b);
		double slope = sx_o2_sat_slope(p, &b);
		double sd2 = slope > 0 ? (st->spo2_accuracy / 100.0) / slope : INFINITY;
		if (isfinite(p) && isfinite(sd2) && sd2 > 0) {
			double w1 = 1 / (*sd * *sd), w2 = 1 / (sd2 * sd2);
			*mean = (*mean * w1 + p * w2) / (w1 + w2);
			*sd = sqrt(1 / (w1 + w2));
		}
	}
	if (*mean < 20.0)
		*mean = 20.0;
}

static void shares(const sx_sim_result *r, double bias, double *share)
{
	double total = 0;
	for (int m = 0; m < SX_MECH_COUNT; m++)
		total += r->dcontent[m];
	for (int m = 0; m < SX_MECH_COUNT; m++)
		share[m] = total != 0 ? bias * r->dcontent[m] / total : 0.0;
}

sx_status sx_estimate_run(const sx_estimate_input *in, sx_estimate_result *out,
			  sx_sim_trace *trace)
{
	static _Thread_local sx_sampler smp; /* large; kept off the stack */
	double bias[SX_MAX_SAMPLES], before[SX_MAX_SAMPLES];
	const sx_specimen *s = in->specimen;
	bool reading_known = sx_specimen_has(s, SX_F_PO2);
	double reading = reading_known ? s->number[SX_F_PO2] : 0;
	double prior_mean = 0, prior_sd = 0, term_nominal = 0;
	size_t n = (size_t)in->settings->samples;
	sx_sim_input si;
	sx_sim_result r;
	sx_draw d;
	sx_status st;

	memset(out, 0, sizeof *out);
	sim_input(in, &si);
	if (n < 1)
		n = 1;
	if (n > SX_MAX_SAMPLES)
		n = SX_MAX_SAMPLES;
	if (!reading_known)
		prior(in, &si, &prior_mean, &prior_sd);
	out->prior_po2 = prior_mean;
	for (size_t k = 0; k < in->term_count; k++)
		term_nominal += in->terms[k].nominal;

	/* the nominal run: shares and the trace */
	nominal_draw(in, &d);
	if (reading_known) {
		double p0;
		st = sx_simulate_invert(&si, &d, reading, &p0, &r);
		if (st == SX_OK && trace)
			st = sx_simulate(&si, &d, p0, &r, trace);
		if (st != SX_OK)
			return st;
		shares(&r, reading - p0, out->share);
	} else {
		st = sx_simulate(&si, &d, prior_mean, &r, trace);
		if (st != SX_OK)
			return st;
		shares(&r, r.reading - prior_mean, out->share);
	}
	for (size_t k = 0; k < in->term_count; k++)
		out->term_share[k] = in->terms[k].nominal;

	if (smp.samples != n || smp.dimensions != DIM_COUNT)
		sx_sampler_init(&smp, n, DIM_COUNT, SEED); /* the same strata every time */
	for (size_t i = 0; i < n; i++) {
		double terms = 0, p0;
		sample_draw(in, &smp, i, &d);
		for (size_t k = 0; k < in->term_count && k < SX_MAX_EMPIRICAL; k++)
			terms += sx_triangular(in->terms[k], sx_sampler_u(&smp, i, DIM_TERMS + k));
		if (reading_known) {
			st = sx_simulate_invert(&si, &d, reading - terms, &p0, &r);
			if (st != SX_OK)
				return st;
			bias[i] = reading - p0;
			before[i] = p0;
		} else {
			p0 = fmax(1.0, prior_mean + prior_sd * sx_normal_quantile(
								     sx_sampler_u(&smp, i, DIM_PRIOR)));
			st = sx_simulate(&si, &d, p0, &r, NULL);
			if (st != SX_OK)
				return st;
			bias[i] = r.reading + terms - p0;
		}
	}
	sx_sort_doubles(bias, n);
	out->bias = (sx_estimate){sx_quantile_sorted(bias, n, 0.5), sx_quantile_sorted(bias, n, 0.05),
				  sx_quantile_sorted(bias, n, 0.95)};
	if (reading_known) {
		sx_sort_doubles(before, n);
		out->has_before = true;
		out->before = (sx_estimate){sx_quantile_sorted(before, n, 0.5),
					    sx_quantile_sorted(before, n, 0.05),
					    sx_quantile_sorted(before, n, 0.95)};
	}
	out->samples = n;
	(void)term_nominal;
	return SX_OK;
}
