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
#include <string.h>

#include "model/atmosphere.h"
#include "model/consistency.h"
#include "model/estimate.h"
#include "model/oxygen.h"
#include "model/timeline.h"

#define RULE_BUILTIN "built-in"

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

static void check_delay(const sx_specimen *s, const sx_settings *st, const sx_timeline *tl,
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

/* Which mechanisms apply to this specimen (until the ruleset decides). */
static void switch_on(const sx_specimen *s, bool *on)
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

static sx_status screen(const sx_specimen *s, const sx_settings *st, sx_verdict *v,
			sx_explanation *ex)
{
	sx_timeline tl;
	sx_estimate_input in;
	sx_estimate_result r;
	double pb = barometric(s, st);
	double reading;
	sx_status status;

	sx_verdict_init(v);
	if (!sx_specimen_has(s, SX_F_HB))
		sx_verdict_add_warning(v, "hb: not given; %.1f g/dL (%.0f to %.0f) assumed",
				       st->default_hb.nominal, st->default_hb.low,
				       st->default_hb.high);
	sx_timeline_build(s, st, &tl, v);
	if (ex) {
		ex->timeline = tl;
		ex->has_trace = false;
	}
	if (sx_specimen_has(s, SX_F_COLLECTED_AT) && sx_specimen_has(s, SX_F_ANALYSED_AT) &&
	    tl.total_min > SX_MAX_DELAY_MIN)
		sx_verdict_add_reason(v, "delay-beyond-model", SX_REASON_REJECT, RULE_BUILTIN,
				      "analysed %.1f h after collection: far beyond any time "
				      "limit for blood gases",
				      tl.total_min / 60.0);
	check_alveolar(s, st, pb, v);
	check_delay(s, st, &tl, v);
	if (!tl.known)
		return SX_OK;

	memset(&in, 0, sizeof in);
	in.specimen = s;
	in.settings = st;
	in.timeline = &tl;
	in.barometric_mmhg = pb;
	switch_on(s, in.on);
	if (!sx_specimen_has(s, SX_F_PO2) && !sx_specimen_has(s, SX_F_FIO2))
		sx_verdict_add_warning(v, "fio2: not given; room air (0.21) assumed for the "
					  "expected pO2");
	status = sx_estimate_run(&in, &r, ex ? &ex->trace : NULL);
	if (status != SX_OK)
		return status;
	if (ex) {
		ex->timeline = tl;
		ex->has_trace = true;
		memcpy(ex->on, in.on, sizeof ex->on);
	}
	v->has_bias = true;
	v->bias_mmhg = r.bias;
	v->has_before = r.has_before;
	if (r.implausible)
		sx_verdict_add_warning(v, "po2: the mechanisms modelled can explain this reading only "
					  "with a pO2 at collection above the %.0f mmHg the FiO2 "
					  "allows; the estimate is unreliable",
				       r.po2_ceiling);
	v->po2_before_mmhg = r.before;
	for (int m = 0; m < SX_MECH_COUNT; m++)
		if (in.on[m] && sx_mechanism_built((sx_mechanism)m))
			sx_verdict_add_mechanism(v, sx_mechanism_name((sx_mechanism)m), r.share[m]);
	reading = sx_specimen_has(s, SX_F_PO2) ? s->number[SX_F_PO2] : r.prior_po2;
	apply_policy(st, reading, v);
	return SX_OK;
}

sx_status sx_screen_specimen(const sx_specimen *s, const sx_settings *st, sx_verdict *v)
{
	return screen(s, st, v, NULL);
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

sx_status sx_screener_explain(const sx_screener *s, sx_specimen *specimen, sx_explanation *out)
{
	memset(out, 0, sizeof *out);
	return screen(specimen, &s->settings, &out->verdict, out);
}
