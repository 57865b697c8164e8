/* SPDX-License-Identifier: MIT */
/*
 * screen.c - the screening pipeline for one specimen.
 *
 * Bias convention: bias = pO2 the analyser reads - pO2 at collection.
 *
 * With a measured pO2 the model runs backwards: the content at analysis
 * (at 37 C in the analyser) plus what the cells consumed gives the content at
 * collection, and through the curve the pO2 before the error. Without a
 * reading it runs forwards from a prior: the alveolar gas equation and a
 * normal A-a gradient for the patient's age.
 *
 * The interval: every parameter with a range (rates, Q10, time precision)
 * moves the bias in one direction, so the bias at the parameters' lower and
 * upper ends bounds it; the estimate uses the nominal values.
 */
#include "model/screen.h"

#include "core/alloc.h"

#include <math.h>
#include <stdio.h>

#include "model/atmosphere.h"
#include "model/consistency.h"
#include "model/metabolism.h"
#include "model/oxygen.h"

#define RULE_BUILTIN "built-in"

typedef struct timeline {
	sx_phase phases[2];
	size_t count;
	double total_min;
	bool known;
	double time_uncertainty_min;
} timeline;

static double storage_temp(const sx_specimen *s, const sx_settings *st, sx_verdict *v)
{
	double room = sx_specimen_has(s, SX_F_ROOM_TEMP_C) ? s->number[SX_F_ROOM_TEMP_C]
							    : st->room_temp_c;
	bool given = sx_specimen_has(s, SX_F_STORAGE_TEMP_C);
	if (!sx_specimen_has(s, SX_F_STORAGE)) {
		if (given)
			return s->number[SX_F_STORAGE_TEMP_C];
		sx_verdict_add_warning(v, "storage: not given; room temperature (%.0f C) assumed",
				       room);
		return room;
	}
	switch (s->choice[SX_F_STORAGE]) {
	case SX_STORAGE_ICED:
		return given ? s->number[SX_F_STORAGE_TEMP_C] : st->iced_temp_c;
	case SX_STORAGE_WARM:
		return given ? s->number[SX_F_STORAGE_TEMP_C] : st->warm_temp_c;
	case SX_STORAGE_ROOM:
		return given ? s->number[SX_F_STORAGE_TEMP_C] : room;
	default:
		sx_verdict_add_warning(v, "storage: unknown; room temperature (%.0f C) assumed",
				       room);
		return given ? s->number[SX_F_STORAGE_TEMP_C] : room;
	}
}

static double precision_halfwidth(const sx_time *t)
{
	switch (t->precision) {
	case SX_PREC_FRACTION:
	case SX_PREC_SECOND:
		return 0.5 / 60.0;
	case SX_PREC_MINUTE:
		return 0.5;
	case SX_PREC_HOUR:
		return 30.0;
	default:
		return 720.0;
	}
}

static void build_timeline(const sx_specimen *s, const sx_settings *st, sx_verdict *v,
			   timeline *tl)
{
	const sx_time *c = &s->time[SX_F_COLLECTED_AT];
	const sx_time *r = &s->time[SX_F_RECEIVED_AT];
	const sx_time *a = &s->time[SX_F_ANALYSED_AT];
	double temp;

	tl->count = 0;
	tl->known = false;
	tl->total_min = 0;
	if (!sx_specimen_has(s, SX_F_COLLECTED_AT) || !sx_specimen_has(s, SX_F_ANALYSED_AT)) {
		sx_verdict_add_warning(v, "%s: not given; the time before analysis is unknown and "
					  "time-dependent mechanisms are not estimated",
				       sx_specimen_has(s, SX_F_COLLECTED_AT) ? "analysed_at"
									     : "collected_at");
		return;
	}
	tl->total_min = sx_time_minutes_between(c, a);
	if (tl->total_min < 0) {
		sx_verdict_add_warning(v, "analysed_at: %.0f min before collected_at; the times "
					  "cannot both be right and the delay is not estimated",
				       -tl->total_min);
		return;
	}
	if (tl->total_min > SX_MAX_DELAY_MIN) {
		sx_verdict_add_warning(v, "analysed_at: %.1f h after collected_at, beyond the "
					  "model's range of %.0f h; the delay is not estimated",
				       tl->total_min / 60.0, SX_MAX_DELAY_MIN / 60.0);
		sx_verdict_add_reason(v, "delay-beyond-model", SX_REASON_REJECT, RULE_BUILTIN,
				      "analysed %.1f h after collection: far beyond any time "
				      "limit for blood gases",
				      tl->total_min / 60.0);
		return;
	}
	temp = storage_temp(s, st, v);
	if (sx_specimen_has(s, SX_F_RECEIVED_AT)) {
		double to_receipt = sx_time_minutes_between(c, r);
		if (to_receipt < 0 || to_receipt > tl->total_min) {
			sx_verdict_add_warning(v, "received_at: outside collected_at..analysed_at; "
						  "it is ignored");
		} else {
			tl->phases[tl->count++] = (sx_phase){to_receipt, temp};
			tl->phases[tl->count++] = (sx_phase){tl->total_min - to_receipt, temp};
		}
	}
	if (tl->count == 0)
		tl->phases[tl->count++] = (sx_phase){tl->total_min, temp};
	tl->time_uncertainty_min = fmax(precision_halfwidth(c), precision_halfwidth(a));
	if (tl->time_uncertainty_min < st->time_uncertainty_min &&
	    (c->precision <= SX_PREC_MINUTE || a->precision <= SX_PREC_MINUTE))
		tl->time_uncertainty_min = st->time_uncertainty_min;
	tl->known = true;
}

/* The metabolism parameters at one end of their ranges: which = -1 low, 0, +1 high. */
static sx_metabolism_params metabolism_at(const sx_settings *st, int which)
{
	sx_metabolism_params p;
#define PICK(r) (which < 0 ? (r).low : which > 0 ? (r).high : (r).nominal)
	p.blood_vo2_37 = PICK(st->blood_vo2_37);
	p.wbc_vo2_37 = PICK(st->wbc_vo2_37);
	p.platelet_vo2_37 = PICK(st->platelet_vo2_37);
	p.q10 = which < 0 ? st->q10.high : which > 0 ? st->q10.low : st->q10.nominal;
#undef PICK
	p.wbc_reference = st->wbc_reference;
	p.platelet_reference = st->platelet_reference;
	return p;
}

/* Q10 lowers the rate below 37 C more when larger, raises it above 37 C more: pick the end
 * that gives the lower consumption for the phases' mean temperature. */
static double consumed(const sx_settings *st, const timeline *tl, double wbc, double plt,
		       int which)
{
	sx_metabolism_params p = metabolism_at(st, which);
	sx_phase ph[2];
	double lo, hi, scale;
	for (size_t i = 0; i < tl->count; i++)
		ph[i] = tl->phases[i];
	scale = tl->total_min > 0 ? fmax(0.0, tl->total_min + which * tl->time_uncertainty_min) /
					    tl->total_min
				  : 0.0;
	for (size_t i = 0; i < tl->count; i++)
		ph[i].minutes *= scale;
	if (which == 0)
		return sx_metabolism_consumed(&p, wbc, plt, ph, tl->count);
	p.q10 = st->q10.low;
	lo = sx_metabolism_consumed(&p, wbc, plt, ph, tl->count);
	p.q10 = st->q10.high;
	hi = sx_metabolism_consumed(&p, wbc, plt, ph, tl->count);
	return which < 0 ? fmin(lo, hi) : fmax(lo, hi);
}

static double barometric(const sx_specimen *s, const sx_settings *st)
{
	if (sx_specimen_has(s, SX_F_BAROMETRIC_MMHG))
		return s->number[SX_F_BAROMETRIC_MMHG];
	if (sx_specimen_has(s, SX_F_SITE_ALTITUDE_M))
		return sx_barometric_from_altitude(s->number[SX_F_SITE_ALTITUDE_M]);
	if (st->barometric_mmhg > 0)
		return st->barometric_mmhg;
	return sx_barometric_from_altitude(st->site_altitude_m);
}

static sx_blood_state analyser_state(const sx_specimen *s, const sx_settings *st)
{
	sx_blood_state b = sx_blood_state_standard();
	b.temp_c = 37.0; /* the analyser measures at 37 C */
	b.ph = sx_specimen_has(s, SX_F_PH) ? s->number[SX_F_PH] : st->default_ph;
	b.pco2 = sx_specimen_has(s, SX_F_PCO2) && s->number[SX_F_PCO2] > 0
			 ? s->number[SX_F_PCO2]
			 : st->default_pco2;
	b.hb = sx_specimen_has(s, SX_F_HB) ? s->number[SX_F_HB] : st->default_hb;
	b.hufner = st->hufner;
	return b;
}

/* pO2 after removing `loss` mL/dL from a sample at po2 (loss < 0 adds O2). */
static sx_status shift_po2(double po2, double loss, const sx_blood_state *b, double *out)
{
	double c = sx_o2_content(po2, b) - loss;
	if (c < 0)
		c = 0;
	return sx_o2_po2_from_content(c, b, out);
}

static void check_alveolar(const sx_specimen *s, const sx_settings *st, double pb,
			   sx_verdict *v)
{
	sx_alveolar_check c;
	double pco2;
	int type = sx_specimen_has(s, SX_F_SPECIMEN_TYPE) ? s->choice[SX_F_SPECIMEN_TYPE] : 0;

	if (!sx_specimen_has(s, SX_F_PO2) || !sx_specimen_has(s, SX_F_FIO2))
		return;
	if (type == SX_TYPE_VENOUS || type == SX_TYPE_MIXED_VENOUS || type == SX_TYPE_CORD)
		return;
	pco2 = sx_specimen_has(s, SX_F_PCO2) ? s->number[SX_F_PCO2] : st->default_pco2;
	c = sx_consistency_alveolar(s->number[SX_F_PO2], s->number[SX_F_FIO2], pb, pco2,
				    st->resp_quotient, st->alveolar_tolerance_mmhg,
				    st->alveolar_tolerance_fraction);
	if (c.exceeded)
		sx_verdict_add_reason(v, "po2-above-alveolar", SX_REASON_REJECT, RULE_BUILTIN,
				      "pO2 %.0f mmHg is above the alveolar pO2 of %.0f mmHg that "
				      "FiO2 %.2f allows (alveolar gas equation); air in the "
				      "specimen or a wrong FiO2 is likely",
				      s->number[SX_F_PO2], c.pao2, s->number[SX_F_FIO2]);
}

static void check_delay(const sx_specimen *s, const sx_settings *st, const timeline *tl,
			sx_verdict *v)
{
	bool iced = sx_specimen_has(s, SX_F_STORAGE) &&
		    s->choice[SX_F_STORAGE] == SX_STORAGE_ICED;
	bool high_wbc = sx_specimen_has(s, SX_F_WBC) && s->number[SX_F_WBC] >= st->high_wbc;
	double limit = iced ? st->delay_limit_iced_min : st->delay_limit_room_min;
	const char *why = iced ? "iced" : "at room temperature";

	if (!tl->known)
		return;
	if (high_wbc && st->delay_limit_high_wbc_min < limit) {
		limit = st->delay_limit_high_wbc_min;
		why = "with a high leukocyte count";
	}
	if (tl->total_min > st->delay_reject_min)
		sx_verdict_add_reason(v, "delay-too-long", SX_REASON_REJECT, RULE_BUILTIN,
				      "analysed %.0f min after collection; the limit for any "
				      "storage is %.0f min",
				      tl->total_min, st->delay_reject_min);
	else if (tl->total_min > limit)
		sx_verdict_add_reason(v, "delay-beyond-limit", SX_REASON_COMMENT, RULE_BUILTIN,
				      "analysed %.0f min after collection; the limit %s is %.0f "
				      "min",
				      tl->total_min, why, limit);
}

static void note_unmodelled(const sx_specimen *s, sx_verdict *v)
{
	if (sx_specimen_has(s, SX_F_BUBBLES) &&
	    s->choice[SX_F_BUBBLES] != SX_BUBBLES_NONE)
		sx_verdict_add_warning(v, "bubbles: '%s' reported; air exchange is not modelled "
					  "in this version and is not in the estimate",
				       sx_field_choice_name(SX_F_BUBBLES, s->choice[SX_F_BUBBLES]));
	if (sx_specimen_has(s, SX_F_ANTICOAGULANT) &&
	    s->choice[SX_F_ANTICOAGULANT] == SX_ANTICOAG_LIQUID_HEPARIN)
		sx_verdict_add_warning(v, "anticoagulant: liquid heparin; dilution is not "
					  "modelled in this version and is not in the estimate");
	if (s->agent_count > 0)
		sx_verdict_add_warning(v, "agents: %zu volatile agent(s) listed; electrode "
					  "interference is not modelled in this version",
				       s->agent_count);
}

static void apply_policy(const sx_settings *st, double reading, sx_verdict *v)
{
	double allowable = fmax(st->allowable_error_mmhg, st->allowable_error_fraction * reading);
	double bias = v->bias_mmhg.estimate;
	if (fabs(bias) > st->reject_factor * allowable)
		sx_verdict_add_reason(v, "bias-reject", SX_REASON_REJECT, RULE_BUILTIN,
				      "estimated pO2 bias %+.1f mmHg is more than %.0f times the "
				      "allowable error of %.1f mmHg",
				      bias, st->reject_factor, allowable);
	else if (fabs(bias) > allowable)
		sx_verdict_add_reason(v, "bias-beyond-allowable", SX_REASON_COMMENT, RULE_BUILTIN,
				      "estimated pO2 bias %+.1f mmHg exceeds the allowable error "
				      "of %.1f mmHg",
				      bias, allowable);
}

sx_status sx_screen_specimen(const sx_specimen *s, const sx_settings *st, sx_verdict *v)
{
	timeline tl;
	sx_blood_state b = analyser_state(s, st);
	double pb = barometric(s, st);
	double wbc = sx_specimen_has(s, SX_F_WBC) ? s->number[SX_F_WBC] : -1;
	double plt = sx_specimen_has(s, SX_F_PLATELETS) ? s->number[SX_F_PLATELETS] : -1;
	double loss[3], reading, before[3];
	sx_status status;

	sx_verdict_init(v);
	if (!sx_specimen_has(s, SX_F_HB))
		sx_verdict_add_warning(v, "hb: not given; %.1f g/dL assumed", st->default_hb);
	build_timeline(s, st, v, &tl);
	check_alveolar(s, st, pb, v);
	note_unmodelled(s, v);
	check_delay(s, st, &tl, v);
	if (!tl.known)
		return SX_OK;

	for (int w = -1; w <= 1; w++)
		loss[w + 1] = consumed(st, &tl, wbc, plt, w);

	if (sx_specimen_has(s, SX_F_PO2)) {
		/* Backwards: the reading plus what was consumed. */
		reading = s->number[SX_F_PO2];
		for (int i = 0; i < 3; i++) {
			status = shift_po2(reading, -loss[i], &b, &before[i]);
			if (status != SX_OK)
				return status;
		}
		v->has_before = true;
		v->po2_before_mmhg = (sx_estimate){before[1], before[0], before[2]};
		v->bias_mmhg = (sx_estimate){reading - before[1], reading - before[2],
					     reading - before[0]};
	} else {
		/* Forwards from a prior: alveolar gas equation minus a normal A-a gradient. */
		double fio2 = sx_specimen_has(s, SX_F_FIO2) ? s->number[SX_F_FIO2] : 0.21;
		double age = sx_specimen_has(s, SX_F_PATIENT_AGE_YEARS)
				     ? s->number[SX_F_PATIENT_AGE_YEARS]
				     : 50.0;
		double prior, after[3];
		if (!sx_specimen_has(s, SX_F_FIO2))
			sx_verdict_add_warning(v, "fio2: not given; room air (0.21) assumed for the "
						  "expected pO2");
		prior = sx_alveolar_po2(fio2, pb, b.pco2, st->resp_quotient) -
			sx_aa_gradient_normal(age);
		if (prior < 20)
			prior = 20;
		reading = prior;
		for (int i = 0; i < 3; i++) {
			status = shift_po2(prior, loss[i], &b, &after[i]);
			if (status != SX_OK)
				return status;
		}
		v->bias_mmhg = (sx_estimate){after[1] - prior, after[2] - prior, after[0] - prior};
	}
	v->has_bias = true;
	sx_verdict_add_mechanism(v, "metabolism", v->bias_mmhg.estimate);
	apply_policy(st, reading, v);
	return SX_OK;
}

struct sx_screener {
	sx_settings settings;
};

sx_status sx_screener_new(const sx_settings *settings, sx_screener **out)
{
	sx_screener *s = sx_calloc(1, sizeof *s);
	*out = NULL;
	if (!s)
		return SX_ENOMEM;
	if (settings)
		s->settings = *settings;
	else
		sx_settings_defaults(&s->settings);
	*out = s;
	return SX_OK;
}

void sx_screener_free(sx_screener *s)
{
	sx_free(s);
}

const sx_settings *sx_screener_settings(const sx_screener *s)
{
	return &s->settings;
}

const char *sx_screener_version(const sx_screener *s)
{
	(void)s;
	return "built-in 0.1";
}

sx_status sx_screener_run(const sx_screener *s, sx_specimen *specimen, sx_verdict *verdict)
{
	return sx_screen_specimen(specimen, &s->settings, verdict);
}
