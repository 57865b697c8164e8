/* SPDX-License-Identifier: MIT */
/*
 * explain.c - one specimen's story for `syrinx explain`: each phase of its
 * timeline, its duration and temperature, and what each mechanism did to the
 * pO2 (at the nominal values of the parameters).
 *
 * A mechanism's part of a phase's pO2 change is its share of the O2 content
 * moved in that phase: content is what the mechanisms move; pO2 follows
 * through the curve, so shares in content are shares in pO2 to first order.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/units.h"
#include "report/report.h"

static double clean(double x)
{
	double r = round(x * 10) / 10;
	return r == 0.0 ? 0.0 : r;
}

static const char *choice(const sx_specimen *s, sx_field f, const char *absent)
{
	const char *n = sx_specimen_has(s, f) ? sx_field_choice_name(f, s->choice[f]) : NULL;
	return n ? n : absent;
}

static void phase_shares(const sx_phase_trace *p, const bool *on, double *out)
{
	double total = 0, dp = p->po2_end - p->po2_start;
	for (int m = 0; m < SX_MECH_COUNT; m++)
		total += p->dcontent[m];
	for (int m = 0; m < SX_MECH_COUNT; m++)
		out[m] = on[m] && total != 0 ? dp * p->dcontent[m] / total : 0.0;
}

void sx_report_explain_text(sx_strbuf *out, const sx_specimen *s, const sx_explanation *ex)
{
	const sx_verdict *v = &ex->verdict;
	const char *id = sx_specimen_has(s, SX_F_SPECIMEN_ID) ? s->text[SX_F_SPECIMEN_ID] : "(no id)";
	int shown[SX_MECH_COUNT] = {0};

	sx_strbuf_printf(out, "syrinx explain - specimen %s (%s line %u)\n", id,
			 s->source ? s->source : "-", s->source_line);
	sx_strbuf_puts(out, "Caution: " SX_CAUTION "\n\n");
	sx_strbuf_printf(out, "Specimen:     %s, %s, %s; %s; stored %s; bubbles %s\n",
			 choice(s, SX_F_SPECIMEN_TYPE, "type not given"),
			 choice(s, SX_F_CONTAINER, "container not given"),
			 choice(s, SX_F_ANTICOAGULANT, "anticoagulant not given"),
			 choice(s, SX_F_TRANSPORT, "transport not given"),
			 choice(s, SX_F_STORAGE, "(not given)"), choice(s, SX_F_BUBBLES, "not given"));
	{
		const char *sep = " ";
		sx_strbuf_puts(out, "Blood:       ");
		if (sx_specimen_has(s, SX_F_HB))
			sx_strbuf_printf(out, "%sHb %.1f g/dL", sep, s->number[SX_F_HB]);
		else
			sx_strbuf_printf(out, "%sHb not given", sep);
		sep = "; ";
		if (sx_specimen_has(s, SX_F_WBC))
			sx_strbuf_printf(out, "%sleukocytes %.1f x10^9/L", sep, s->number[SX_F_WBC]);
		if (sx_specimen_has(s, SX_F_PLATELETS))
			sx_strbuf_printf(out, "%splatelets %.0f x10^9/L", sep,
					 s->number[SX_F_PLATELETS]);
		if (sx_specimen_has(s, SX_F_PH))
			sx_strbuf_printf(out, "%spH %.2f", sep, s->number[SX_F_PH]);
		if (sx_specimen_has(s, SX_F_PCO2))
			sx_strbuf_printf(out, "%spCO2 %.1f mmHg", sep, s->number[SX_F_PCO2]);
		sx_strbuf_putc(out, '\n');
	}
	sx_strbuf_printf(out, "Disposition:  %s\n", sx_disposition_name(v->disposition));
	if (v->has_bias)
		sx_strbuf_printf(out,
				 "pO2 bias:     %+.1f mmHg (likely %+.1f to %+.1f); %+.2f kPa\n",
				 clean(v->bias_mmhg.estimate), clean(v->bias_mmhg.low),
				 clean(v->bias_mmhg.high),
				 v->bias_mmhg.estimate / SX_MMHG_PER_KPA + 0.0);
	if (v->has_before && sx_specimen_has(s, SX_F_PO2))
		sx_strbuf_printf(out,
				 "Reading:      %.1f mmHg; at collection likely %.1f (%.1f to %.1f) "
				 "mmHg\n",
				 s->number[SX_F_PO2], clean(v->po2_before_mmhg.estimate),
				 clean(v->po2_before_mmhg.low), clean(v->po2_before_mmhg.high));
	if (ex->has_trace) {
		const sx_sim_trace *t = &ex->trace;
		double totals[SX_MECH_COUNT] = {0}, minutes = 0;
		sx_strbuf_puts(out, "\nTimeline at the nominal values (pO2 as the analyser would read "
				    "it, at 37 C):\n");
		sx_strbuf_printf(out, "  %-10s %8s  %-16s %-18s", "phase", "minutes",
				 "temperature C", "pO2 mmHg");
		for (int m = 0; m < SX_MECH_COUNT; m++)
			if (ex->on[m] && sx_mechanism_built((sx_mechanism)m)) {
				shown[m] = 1;
				sx_strbuf_printf(out, " %14s", sx_mechanism_name((sx_mechanism)m));
			}
		sx_strbuf_putc(out, '\n');
		for (size_t i = 0; i < t->phase_count; i++) {
			const sx_phase_trace *p = &t->phases[i];
			double sh[SX_MECH_COUNT];
			char temp[32], po2[32];
			phase_shares(p, ex->on, sh);
			snprintf(temp, sizeof temp, "%.1f -> %.1f", p->temp_start_c, p->temp_end_c);
			snprintf(po2, sizeof po2, "%.1f -> %.1f", p->po2_start, p->po2_end);
			sx_strbuf_printf(out, "  %-10s %8.1f  %-16s %-18s", p->name, p->minutes, temp,
					 po2);
			for (int m = 0; m < SX_MECH_COUNT; m++)
				if (shown[m]) {
					sx_strbuf_printf(out, " %+14.1f", clean(sh[m]));
					totals[m] += sh[m];
				}
			sx_strbuf_putc(out, '\n');
			minutes += p->minutes;
		}
		{
			char po2[32];
			snprintf(po2, sizeof po2, "%.1f -> %.1f", t->po2_collection, t->po2_reading);
			sx_strbuf_printf(out, "  %-10s %8.1f  %-16s %-18s", "total", minutes, "", po2);
			for (int m = 0; m < SX_MECH_COUNT; m++)
				if (shown[m])
					sx_strbuf_printf(out, " %+14.1f", clean(totals[m]));
			sx_strbuf_putc(out, '\n');
		}
		if (ex->timeline.count)
			sx_strbuf_puts(out, "  (agitation: ");
		for (size_t i = 0; i < ex->timeline.count; i++)
			sx_strbuf_printf(out, "%s%s %s", i ? "; " : "", ex->timeline.phases[i].name,
					 sx_agitation_name(ex->timeline.phases[i].agitation));
		if (ex->timeline.count)
			sx_strbuf_puts(out, ")\n");
	} else {
		sx_strbuf_puts(out, "\nNo timeline: the times do not allow one (see the notes).\n");
	}
	if (v->reason_count)
		sx_strbuf_puts(out, "\nReasons:\n");
	for (size_t i = 0; i < v->reason_count; i++)
		sx_strbuf_printf(out, "  %-8s %s: %s [rule %s]\n",
				 sx_reason_severity_name(v->reasons[i].severity), v->reasons[i].code,
				 v->reasons[i].message, v->reasons[i].rule);
	if (v->warning_count)
		sx_strbuf_puts(out, "\nNotes:\n");
	for (size_t i = 0; i < v->warning_count; i++)
		sx_strbuf_printf(out, "  %s\n", v->warnings[i]);
}
