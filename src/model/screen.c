/* SPDX-License-Identifier: MIT */
/*
 * screen.c - the screening pipeline for one specimen.
 *
 *   1. classify free text into fields (the ruleset's PCRE2 patterns);
 *   2. the timeline from the times, and the facts known before the model
 *      (delays, alveolar pO2, saturation from the reading, shares of bubble and
 *      heparin, halothane);
 *   3. the rules' first pass: which mechanisms apply, with which parameters,
 *      reasons, empirical bias terms, a disposition;
 *   4. the model (model/estimate.c): the bias with its interval, the pO2
 *      before the error, each mechanism's share;
 *   5. the facts after the model (the bias) and the rules' second pass.
 *
 * Policy lives in the ruleset only. Without one, every mechanism the record
 * gives grounds for is on and nothing decides: the model alone, for tests and
 * for callers that want numbers only.
 *
 * Bias convention: bias = pO2 the analyser reads - pO2 at collection.
 */
#include "model/screen.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "model/atmosphere.h"
#include "model/estimate.h"
#include "model/facts.h"
#include "model/oxygen.h"
#include "model/timeline.h"
#include "rules/ruleset.h"

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

static void fact(sx_facts *f, sx_fact which, double value)
{
	if (isfinite(value)) {
		f->has[which] = true;
		f->value[which] = value;
	}
}

/* What is known before the model. */
static void facts_before(const sx_specimen *s, const sx_settings *st, double pb, sx_facts *f)
{
	const sx_time *c = &s->time[SX_F_COLLECTED_AT], *r = &s->time[SX_F_RECEIVED_AT],
		      *a = &s->time[SX_F_ANALYSED_AT];
	bool hc = sx_specimen_has(s, SX_F_COLLECTED_AT), hr = sx_specimen_has(s, SX_F_RECEIVED_AT),
	     ha = sx_specimen_has(s, SX_F_ANALYSED_AT);
	double pco2 = sx_specimen_has(s, SX_F_PCO2) && s->number[SX_F_PCO2] > 0
			      ? s->number[SX_F_PCO2]
			      : st->default_pco2;

	memset(f, 0, sizeof *f);
	if (hc && ha)
		fact(f, SX_FACT_DELAY_MIN, sx_time_minutes_between(c, a));
	if (hc && hr)
		fact(f, SX_FACT_TRANSPORT_MIN, sx_time_minutes_between(c, r));
	if (hr && ha)
		fact(f, SX_FACT_WAIT_MIN, sx_time_minutes_between(r, a));
	fact(f, SX_FACT_BAROMETRIC_MMHG, pb);
	if (sx_specimen_has(s, SX_F_FIO2)) {
		double pao2 = sx_alveolar_po2(s->number[SX_F_FIO2], pb, pco2, st->resp_quotient);
		fact(f, SX_FACT_ALVEOLAR_PO2_MMHG, pao2);
		if (sx_specimen_has(s, SX_F_PO2))
			fact(f, SX_FACT_ALVEOLAR_EXCESS_MMHG, s->number[SX_F_PO2] - pao2);
	}
	if (sx_specimen_has(s, SX_F_PO2)) {
		sx_blood_state b = sx_blood_state_standard();
		double sat;
		b.ph = sx_specimen_has(s, SX_F_PH) ? s->number[SX_F_PH] : st->default_ph;
		b.pco2 = pco2;
		sat = 100.0 * sx_o2_saturation(s->number[SX_F_PO2], &b);
		fact(f, SX_FACT_SAT_FROM_PO2, sat);
		if (sx_specimen_has(s, SX_F_SPO2))
			fact(f, SX_FACT_SPO2_GAP, s->number[SX_F_SPO2] - sat);
	}
	if (sx_specimen_has(s, SX_F_BUBBLE_VOLUME_UL) && sx_specimen_has(s, SX_F_FILL_VOLUME_ML) &&
	    s->number[SX_F_FILL_VOLUME_ML] > 0)
		fact(f, SX_FACT_BUBBLE_FRACTION,
		     100.0 * s->number[SX_F_BUBBLE_VOLUME_UL] / 1000.0 /
			     s->number[SX_F_FILL_VOLUME_ML]);
	if (sx_specimen_has(s, SX_F_HEPARIN_VOLUME_ML) && sx_specimen_has(s, SX_F_FILL_VOLUME_ML)) {
		double h = s->number[SX_F_HEPARIN_VOLUME_ML], b = s->number[SX_F_FILL_VOLUME_ML];
		if (h + b > 0)
			fact(f, SX_FACT_HEPARIN_FRACTION, 100.0 * h / (h + b));
	}
	for (size_t i = 0; i < s->agent_count; i++)
		if (strcmp(s->agents[i].name, "halothane") == 0)
			fact(f, SX_FACT_AGENT_HALOTHANE,
			     s->agents[i].percent >= 0 ? s->agents[i].percent
						       : st->default_agent_percent);
}

static void facts_after(const sx_specimen *s, const sx_verdict *v, sx_facts *f)
{
	if (!v->has_bias)
		return;
	fact(f, SX_FACT_BIAS_MMHG, v->bias_mmhg.estimate);
	fact(f, SX_FACT_BIAS_LOW_MMHG, v->bias_mmhg.low);
	fact(f, SX_FACT_BIAS_HIGH_MMHG, v->bias_mmhg.high);
	fact(f, SX_FACT_BIAS_ABS_MMHG, fabs(v->bias_mmhg.estimate));
	if (sx_specimen_has(s, SX_F_PO2) && s->number[SX_F_PO2] > 0)
		fact(f, SX_FACT_BIAS_PERCENT,
		     100.0 * fabs(v->bias_mmhg.estimate) / s->number[SX_F_PO2]);
}

/* The model alone: every mechanism the record gives grounds for. */
static void switch_on_all(const sx_specimen *s, bool *on)
{
	int bubbles = sx_specimen_has(s, SX_F_BUBBLES) ? s->choice[SX_F_BUBBLES] : 0;
	on[SX_MECH_METABOLISM] = true;
	on[SX_MECH_AIR_EXCHANGE] = bubbles == SX_BUBBLES_SMALL || bubbles == SX_BUBBLES_LARGE ||
				   bubbles == SX_BUBBLES_FROTH ||
				   (sx_specimen_has(s, SX_F_BUBBLE_VOLUME_UL) &&
				    s->number[SX_F_BUBBLE_VOLUME_UL] > 0);
	on[SX_MECH_SYRINGE_WALL] = sx_specimen_has(s, SX_F_CONTAINER) &&
				   s->choice[SX_F_CONTAINER] == SX_CONTAINER_PLASTIC;
	on[SX_MECH_HEPARIN_DILUTION] = sx_specimen_has(s, SX_F_ANTICOAGULANT) &&
				       s->choice[SX_F_ANTICOAGULANT] == SX_ANTICOAG_LIQUID_HEPARIN;
	on[SX_MECH_ELECTRODE] = s->agent_count > 0;
}

/* The outcome's reasons and disposition into the verdict. */
static void take_outcome(const sx_rule_outcome *o, size_t from, sx_verdict *v)
{
	for (size_t i = from; i < o->reason_count; i++) {
		const sx_reason *r = &o->reasons[i];
		sx_verdict_add_reason(v, r->code, r->severity, r->rule, "%s", r->message);
	}
	if (o->disposition >= 0)
		sx_verdict_raise(v, (sx_disposition)o->disposition);
}

static sx_status screen(sx_specimen *s, const sx_settings *base, const sx_ruleset *rs,
			sx_verdict *v, sx_explanation *ex)
{
	static _Thread_local sx_rule_outcome outcome; /* large: off the stack */
	const sx_settings *st = base;
	sx_timeline tl;
	sx_estimate_input in;
	sx_estimate_result r;
	sx_facts facts;
	size_t taken = 0;
	double pb;
	sx_status status;

	sx_verdict_init(v);
	if (rs) {
		sx_diag_list notes;
		sx_diag_list_init(&notes);
		status = sx_ruleset_classify(rs, s, &notes);
		for (size_t i = 0; i < notes.count; i++)
			sx_verdict_add_warning(v, "%s", notes.items[i].message);
		sx_diag_list_clear(&notes);
		if (status != SX_OK)
			return status;
		sx_rule_outcome_init(&outcome, rs);
		st = &outcome.settings;
	}
	pb = barometric(s, st);
	facts_before(s, st, pb, &facts);
	memset(&in, 0, sizeof in);
	if (rs) {
		status = sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, s, &facts, &outcome);
		if (status != SX_OK)
			return status;
		for (int m = 0; m < SX_MECH_COUNT; m++)
			in.on[m] = outcome.mechanism_on[m] && sx_mechanism_built((sx_mechanism)m);
		take_outcome(&outcome, 0, v);
		taken = outcome.reason_count;
		for (size_t k = 0; k < outcome.term_count && k < SX_MAX_EMPIRICAL; k++) {
			in.terms[k] = outcome.terms[k].bias_mmhg;
			in.term_labels[k] = outcome.terms[k].label;
			in.term_count++;
		}
	} else {
		switch_on_all(s, in.on);
	}
	if (!sx_specimen_has(s, SX_F_HB))
		sx_verdict_add_warning(v, "hb: not given; %.1f g/dL (%.0f to %.0f) assumed",
				       st->default_hb.nominal, st->default_hb.low,
				       st->default_hb.high);
	sx_timeline_build(s, st, &tl, v);
	if (ex) {
		ex->timeline = tl;
		ex->has_trace = false;
	}
	if (tl.known && !(rs && outcome.final)) {
		in.specimen = s;
		in.settings = st;
		in.timeline = &tl;
		in.barometric_mmhg = pb;
		if (!sx_specimen_has(s, SX_F_PO2) && !sx_specimen_has(s, SX_F_FIO2))
			sx_verdict_add_warning(v, "fio2: not given; room air (0.21) assumed for the "
						  "expected pO2");
		status = sx_estimate_run(&in, &r, ex ? &ex->trace : NULL);
		if (status != SX_OK)
			return status;
		if (ex) {
			ex->has_trace = true;
			memcpy(ex->on, in.on, sizeof ex->on);
		}
		v->has_bias = true;
		v->bias_mmhg = r.bias;
		v->has_before = r.has_before;
		v->po2_before_mmhg = r.before;
		if (r.implausible)
			sx_verdict_add_warning(v, "po2: the mechanisms modelled can explain this "
						  "reading only with a pO2 at collection above the "
						  "%.0f mmHg the FiO2 allows; the estimate is unreliable",
					       r.po2_ceiling);
		for (int m = 0; m < SX_MECH_COUNT; m++)
			if (in.on[m])
				sx_verdict_add_mechanism(v, sx_mechanism_name((sx_mechanism)m),
							 r.share[m]);
		for (size_t k = 0; k < in.term_count; k++) {
			char name[32];
			snprintf(name, sizeof name, "local:%s", in.term_labels[k]);
			sx_verdict_add_mechanism(v, name, r.term_share[k]);
		}
	}
	if (rs && !outcome.final) {
		facts_after(s, v, &facts);
		status = sx_ruleset_evaluate(rs, SX_PASS_AFTER_MODEL, s, &facts, &outcome);
		if (status != SX_OK)
			return status;
		take_outcome(&outcome, taken, v);
	}
	if (rs && (outcome.reasons_dropped || outcome.terms_dropped))
		sx_verdict_add_warning(v, "ruleset: %zu reasons and %zu bias terms past the limits "
					  "were not kept",
				       outcome.reasons_dropped, outcome.terms_dropped);
	return SX_OK;
}

sx_status sx_screen_specimen(sx_specimen *s, const sx_settings *st, const sx_ruleset *rs,
			     sx_verdict *v)
{
	return screen(s, st, rs, v, NULL);
}

struct sx_screener {
	sx_settings settings;
	sx_ruleset *rules;      /* owned; NULL for the model alone */
	char version[160];
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
	snprintf(s->version, sizeof s->version, "model only (no ruleset)");
	*out = s;
	return SX_OK;
}

sx_status sx_screener_load(const char *dir, sx_screener **out, sx_diag_list *diags)
{
	sx_screener *s;
	sx_status st;
	*out = NULL;
	s = sx_calloc(1, sizeof *s);
	if (!s)
		return SX_ENOMEM;
	st = sx_ruleset_load(dir, &s->rules, diags);
	if (st != SX_OK) {
		sx_free(s);
		return st;
	}
	s->settings = *sx_ruleset_settings(s->rules);
	snprintf(s->version, sizeof s->version, "%s", sx_ruleset_version(s->rules));
	*out = s;
	return SX_OK;
}

void sx_screener_free(sx_screener *s)
{
	if (!s)
		return;
	sx_ruleset_free(s->rules);
	sx_free(s);
}

const sx_settings *sx_screener_settings(const sx_screener *s)
{
	return &s->settings;
}

const char *sx_screener_version(const sx_screener *s)
{
	return s->version;
}

int sx_screener_map_code(void *screener, const char *system, const char *code)
{
	const sx_screener *s = screener;
	return s && s->rules ? sx_ruleset_map_code(s->rules, system, code) : -1;
}

sx_status sx_screener_run(const sx_screener *s, sx_specimen *specimen, sx_verdict *verdict)
{
	return screen(specimen, &s->settings, s->rules, verdict, NULL);
}

sx_status sx_screener_explain(const sx_screener *s, sx_specimen *specimen, sx_explanation *out)
{
	memset(out, 0, sizeof *out);
	return screen(specimen, &s->settings, s->rules, &out->verdict, out);
}
