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
	DIM_AIR_TAU,
	DIM_FROTH,
	DIM_BUBBLE,
	DIM_WALL_CAPACITY,
	DIM_WALL_RATE,
	DIM_HEPARIN,
	DIM_ELECTRODE,
	DIM_FILL,
	DIM_TERMS,
	DIM_COUNT = DIM_TERMS + SX_MAX_EMPIRICAL
};

/* A fixed seed: the strata are the same for every specimen and every machine. */
#define SEED 0x5359524958ULL

/* The mechanisms' parameters at probabilities u (NULL: the nominal values). */
static void draw_mechanisms(const sx_estimate_input *in, sx_draw *d, const sx_sampler *smp,
			    size_t i)
{
	const sx_settings *st = in->settings;
	const sx_specimen *s = in->specimen;
#define AT(r, dim) (smp ? sx_triangular_scaled((r), sx_sampler_u(smp, i, (dim))) : (r).nominal)
	double u_tau = smp ? sx_sampler_u(smp, i, DIM_AIR_TAU) : -1;
	/* one common factor for how fast a syringe exchanges, whatever the agitation */
#define TAU(r) (u_tau < 0 ? (r).nominal : sx_triangular_scaled((r), u_tau))
	d->air.tau_standing = TAU(st->air_tau_standing);
	d->air.tau_hand = TAU(st->air_tau_hand);
	d->air.tau_tube_motion = TAU(st->air_tau_tube_motion);
	d->air.tau_tube_pressure = TAU(st->air_tau_tube_pressure);
	d->air.tau_mixing = TAU(st->air_tau_mixing);
	d->air.tau_floor = st->air_tau_floor.nominal;
#undef TAU
	d->air.froth_factor = AT(st->air_froth_factor, DIM_FROTH);
	d->air.small_fraction = AT(st->air_small_bubble, DIM_BUBBLE);
	d->air.large_fraction = AT(st->air_large_bubble, DIM_BUBBLE);
	d->air.froth_fraction = AT(st->air_froth_bubble, DIM_BUBBLE);
	d->wall.capacity_room = AT(st->wall_capacity_room, DIM_WALL_CAPACITY);
	d->wall.capacity_iced = AT(st->wall_capacity_iced, DIM_WALL_CAPACITY);
	d->wall.rate_room = AT(st->wall_rate_room, DIM_WALL_RATE);
	d->wall.rate_iced = AT(st->wall_rate_iced, DIM_WALL_RATE);
	d->heparin.dead_space_ml = AT(st->heparin_dead_space_ml, DIM_HEPARIN);
	d->heparin.solution_rh = st->heparin_solution_humidity.nominal;
	d->heparin.air_pco2 = st->heparin_air_pco2.nominal;
	for (int k = 0; k < SX_AGENT_COUNT; k++)
		d->electrode.sensitivity[k] = AT(st->electrode_sensitivity[k], DIM_ELECTRODE);
	d->blood_ml = sx_specimen_has(s, SX_F_FILL_VOLUME_ML) && s->number[SX_F_FILL_VOLUME_ML] > 0
			      ? s->number[SX_F_FILL_VOLUME_ML]
			      : AT(st->default_fill_ml, DIM_FILL);
#undef AT
	/* the bubble: a measured volume, else the class's share of the blood */
	d->bubble_ul = 0;
	if (sx_specimen_has(s, SX_F_BUBBLE_VOLUME_UL))
		d->bubble_ul = s->number[SX_F_BUBBLE_VOLUME_UL];
	else if (sx_specimen_has(s, SX_F_BUBBLES)) {
		int b = s->choice[SX_F_BUBBLES];
		sx_air_bubble_class cls = b == SX_BUBBLES_SMALL   ? SX_AIR_BUBBLE_SMALL
					  : b == SX_BUBBLES_LARGE ? SX_AIR_BUBBLE_LARGE
					  : b == SX_BUBBLES_FROTH ? SX_AIR_BUBBLE_FROTH
								  : SX_AIR_BUBBLE_NONE;
		double v = sx_air_exchange_bubble_volume(&d->air, cls, d->blood_ml);
		d->bubble_ul = isfinite(v) ? v : 0;
	}
	d->heparin_fraction = sx_heparin_fraction(
		&d->heparin,
		sx_specimen_has(s, SX_F_HEPARIN_VOLUME_ML) ? s->number[SX_F_HEPARIN_VOLUME_ML] : -1,
		d->blood_ml);
	if (!isfinite(d->heparin_fraction) || d->heparin_fraction < 0)
		d->heparin_fraction = 0;
}

/* Everything but the mechanisms' parameters at their nominal values. */
static void base_draw(const sx_estimate_input *in, sx_draw *d)
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
	d->air = sx_air_exchange_defaults();
	d->wall = sx_syringe_wall_defaults();
	d->heparin = sx_heparin_defaults();
	d->electrode = sx_electrode_defaults();
}

static void sample_draw(const sx_estimate_input *in, const sx_sampler *smp, size_t i,
			sx_draw *d)
{
	const sx_settings *st = in->settings;
	double h = 2 * in->timeline->time_halfwidth_min, t = in->timeline->total_min;
	base_draw(in, d);
	d->metabolism.blood_vo2_37 = sx_triangular_scaled(st->blood_vo2_37, sx_sampler_u(smp, i, DIM_BLOOD_RATE));
	d->metabolism.wbc_vo2_37 = sx_triangular_scaled(st->wbc_vo2_37, sx_sampler_u(smp, i, DIM_WBC_RATE));
	d->metabolism.platelet_vo2_37 =
		sx_triangular_scaled(st->platelet_vo2_37, sx_sampler_u(smp, i, DIM_PLT_RATE));
	d->metabolism.q10 = sx_triangular(st->q10, sx_sampler_u(smp, i, DIM_Q10));
	d->total_min = fmax(0.0, sx_triangular((sx_range){t - h, t, t + h},
					       sx_sampler_u(smp, i, DIM_TIME)));
	d->cooling_room_min = sx_triangular_scaled(st->cooling_room_min, sx_sampler_u(smp, i, DIM_COOL_ROOM));
	d->cooling_ice_min = sx_triangular_scaled(st->cooling_ice_min, sx_sampler_u(smp, i, DIM_COOL_ICE));
	if (!sx_specimen_has(in->specimen, SX_F_HB))
		d->hb = sx_triangular(st->default_hb, sx_sampler_u(smp, i, DIM_HB));
	draw_mechanisms(in, d, smp, i);
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
	si->barometric_mmhg = in->barometric_mmhg;
	si->room_temp_c = sx_specimen_has(s, SX_F_ROOM_TEMP_C) ? s->number[SX_F_ROOM_TEMP_C]
							       : st->room_temp_c;
	si->room_air_po2 = sx_room_air_po2(in->barometric_mmhg, si->room_temp_c,
					   st->room_rel_humidity);
	si->wall = sx_specimen_has(s, SX_F_CONTAINER) &&
				   s->choice[SX_F_CONTAINER] == SX_CONTAINER_PLASTIC
			   ? SX_WALL_PLASTIC
			   : SX_WALL_GLASS;
	si->froth = sx_specimen_has(s, SX_F_BUBBLES) && s->choice[SX_F_BUBBLES] == SX_BUBBLES_FROTH;
	for (size_t k = 0; k < s->agent_count && si->dose_count < SX_MAX_AGENTS; k++) {
		const sx_agent *a = &s->agents[k];
		int kind = sx_electrode_agent_lookup(a->name, strlen(a->name));
		if (kind < 0)
			continue;
		si->doses[si->dose_count].agent = (sx_agent_kind)kind;
		si->doses[si->dose_count].percent = a->percent >= 0 ? a->percent
								    : st->default_agent_percent;
		si->dose_count++;
	}
	si->exchange = (in->on[SX_MECH_AIR_EXCHANGE] &&
			sx_specimen_has(s, SX_F_BUBBLES) &&
			s->choice[SX_F_BUBBLES] != SX_BUBBLES_NONE &&
			s->choice[SX_F_BUBBLES] != SX_BUBBLES_EXPELLED) ||
		       (in->on[SX_MECH_AIR_EXCHANGE] && sx_specimen_has(s, SX_F_BUBBLE_VOLUME_UL) &&
			s->number[SX_F_BUBBLE_VOLUME_UL] > 0) ||
		       (in->on[SX_MECH_SYRINGE_WALL] && si->wall == SX_WALL_PLASTIC);
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

/* No arterial pO2 exceeds the alveolar pO2: FiO2 from the record (pure O2 when not
 * given), with the analyser's allowable error on top. */
static double po2_ceiling(const sx_estimate_input *in, const sx_sim_input *si)
{
	const sx_specimen *s = in->specimen;
	const sx_settings *st = in->settings;
	double fio2 = sx_specimen_has(s, SX_F_FIO2) ? s->number[SX_F_FIO2] : 1.0;
	double pao2 = sx_alveolar_po2(fio2, in->barometric_mmhg, si->blood.pco2,
				      st->resp_quotient);
	return pao2 + fmax(st->alveolar_tolerance_mmhg, st->alveolar_tolerance_fraction * pao2);
}

static void shares(const sx_sim_result *r, double *share)
{
	for (int m = 0; m < SX_MECH_COUNT; m++)
		share[m] = r->dpo2[m];
}

sx_status sx_estimate_run(const sx_estimate_input *in, sx_estimate_result *out,
			  sx_sim_trace *trace)
{
	static _Thread_local sx_sampler smp; /* large; kept off the stack */
	double bias[SX_MAX_SAMPLES], before[SX_MAX_SAMPLES], sorted[SX_MAX_SAMPLES];
	size_t index[SX_MAX_SAMPLES], median_at = 0;
	const sx_specimen *s = in->specimen;
	bool reading_known = sx_specimen_has(s, SX_F_PO2);
	double reading = reading_known ? s->number[SX_F_PO2] : 0;
	double prior_mean = 0, prior_sd = 0;
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

	if (smp.samples != n || smp.dimensions != DIM_COUNT)
		sx_sampler_init(&smp, n, DIM_COUNT, SEED); /* the same strata every time */
	out->po2_ceiling = po2_ceiling(in, &si);
	for (size_t i = 0; i < n; i++) {
		double terms = 0, p0;
		sample_draw(in, &smp, i, &d);
		for (size_t k = 0; k < in->term_count && k < SX_MAX_EMPIRICAL; k++)
			terms += sx_triangular(in->terms[k], sx_sampler_u(&smp, i, DIM_TERMS + k));
		index[i] = i;
		if (reading_known) {
			st = sx_simulate_invert(&si, &d, reading - terms, &p0, &r);
			if (st != SX_OK)
				return st;
			bias[i] = reading - p0;
			before[i] = p0;
		} else {
			p0 = fmax(1.0, prior_mean + prior_sd * sx_normal_quantile(
								     sx_sampler_u(&smp, i, DIM_PRIOR)));
			p0 = fmin(p0, out->po2_ceiling);
			st = sx_simulate(&si, &d, p0, &r, NULL);
			if (st != SX_OK)
				return st;
			bias[i] = r.reading + terms - p0;
			before[i] = p0;
		}
	}
	if (reading_known) {
		/* Keep the draws that physiology allows; when too few are left, the reading is
		 * hard to explain by what is modelled: keep them all and say so. */
		size_t kept = 0;
		for (size_t i = 0; i < n; i++)
			if (before[i] <= out->po2_ceiling)
				kept++;
		if (kept * 5 < n) {
			out->implausible = true;
		} else {
			size_t j = 0;
			for (size_t i = 0; i < n; i++)
				if (before[i] <= out->po2_ceiling) {
					bias[j] = bias[i];
					before[j] = before[i];
					index[j] = index[i];
					j++;
				}
			out->excluded = n - kept;
			n = kept;
		}
	}
	memcpy(sorted, bias, n * sizeof *bias);
	sx_sort_doubles(sorted, n);
	out->bias = (sx_estimate){sx_quantile_sorted(sorted, n, 0.5),
				  sx_quantile_sorted(sorted, n, 0.05),
				  sx_quantile_sorted(sorted, n, 0.95)};
	/* The draw nearest the median gives the shares and the trace: a real, consistent run
	 * whose parts add up to the estimate (to within the median's interpolation). */
	for (size_t i = 1; i < n; i++)
		if (fabs(bias[i] - out->bias.estimate) < fabs(bias[median_at] - out->bias.estimate))
			median_at = i;
	sample_draw(in, &smp, index[median_at], &d);
	st = sx_simulate(&si, &d, before[median_at], &r, trace);
	if (st != SX_OK)
		return st;
	shares(&r, out->share);
	for (size_t k = 0; k < in->term_count && k < SX_MAX_EMPIRICAL; k++)
		out->term_share[k] = sx_triangular(in->terms[k],
						   sx_sampler_u(&smp, index[median_at], DIM_TERMS + k));
	if (reading_known) {
		memcpy(sorted, before, n * sizeof *before);
		sx_sort_doubles(sorted, n);
		out->has_before = true;
		out->before = (sx_estimate){sx_quantile_sorted(sorted, n, 0.5),
					    sx_quantile_sorted(sorted, n, 0.05),
					    sx_quantile_sorted(sorted, n, 0.95)};
	}
	out->samples = n;
	return SX_OK;
}
