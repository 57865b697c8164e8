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

/* Mechanisms that act along the phases (the others act at sampling or analysis). */
static int at_phases(int m)
{
	return m != SX_MECH_HEPARIN_DILUTION && m != SX_MECH_ELECTRODE;
}

static int column_width(int m)
{
	int w = (int)strlen(sx_mechanism_name((sx_mechanism)m));
	return w < 10 ? 10 : w;
}

static void row_start(sx_strbuf *out, const char *name, double minutes, const sx_phase_trace *p,
		      double po2_from, double po2_to)
{
	char temp[32] = "", po2[32], mins[16] = "";
	if (p)
		snprintf(temp, sizeof temp, "%.1f -> %.1f", p->temp_start_c, p->temp_end_c);
	if (minutes > 0 || p)
		snprintf(mins, sizeof mins, "%.1f", minutes);
	snprintf(po2, sizeof po2, "%.1f -> %.1f", po2_from, po2_to);
	sx_strbuf_printf(out, "  %-10s %8s  %-16s %-18s", name, mins, temp, po2);
}

/* One value in the column of `only` (>= 0), the phase mechanisms' shares (-1), or every
 * column from values (-2). */
static void row_values(sx_strbuf *out, const int *shown, int only, double value,
		       const double *values)
{
	for (int m = 0; m < SX_MECH_COUNT; m++) {
		if (!shown[m])
			continue;
		if ((only >= 0 && m == only) || (only == -2) || (only == -1 && at_phases(m)))
			sx_strbuf_printf(out, " %+*.1f", column_width(m),
					 sx_report_round(only >= 0 ? value : values[m], 0.1));
		else
			sx_strbuf_printf(out, " %*s", column_width(m), "");
	}
	sx_strbuf_putc(out, '\n');
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
				 sx_report_round(v->bias_mmhg.estimate, 0.1), sx_report_round(v->bias_mmhg.low, 0.1),
				 sx_report_round(v->bias_mmhg.high, 0.1),
				 v->bias_mmhg.estimate / SX_MMHG_PER_KPA + 0.0);
	if (v->has_before && sx_specimen_has(s, SX_F_PO2))
		sx_strbuf_printf(out,
				 "Reading:      %.1f mmHg; at collection likely %.1f (%.1f to %.1f) "
				 "mmHg\n",
				 s->number[SX_F_PO2], sx_report_round(v->po2_before_mmhg.estimate, 0.1),
				 sx_report_round(v->po2_before_mmhg.low, 0.1), sx_report_round(v->po2_before_mmhg.high, 0.1));
	if (ex->has_trace) {
		const sx_sim_trace *t = &ex->trace;
		double totals[SX_MECH_COUNT] = {0}, minutes = 0;
		sx_strbuf_puts(out, "\nTimeline of the draw at the median (pO2 as the analyser would "
				    "read it, at 37 C):\n");
		sx_strbuf_printf(out, "  %-10s %8s  %-16s %-18s", "phase", "minutes",
				 "temperature C", "pO2 mmHg");
		for (int m = 0; m < SX_MECH_COUNT; m++)
			if (ex->on[m] && sx_mechanism_built((sx_mechanism)m)) {
				shown[m] = 1;
				sx_strbuf_printf(out, " %*s", column_width(m),
						 sx_mechanism_name((sx_mechanism)m));
			}
		sx_strbuf_putc(out, '\n');
		if (shown[SX_MECH_HEPARIN_DILUTION]) {
			double dp = t->po2_after_mixing - t->po2_collection;
			row_start(out, "sampling", 0, NULL, t->po2_collection, t->po2_after_mixing);
			totals[SX_MECH_HEPARIN_DILUTION] += dp;
			row_values(out, shown, SX_MECH_HEPARIN_DILUTION, dp, NULL);
		}
		for (size_t i = 0; i < t->phase_count; i++) {
			const sx_phase_trace *p = &t->phases[i];
			double sh[SX_MECH_COUNT];
			phase_shares(p, ex->on, sh);
			row_start(out, p->name, p->minutes, p, p->po2_start, p->po2_end);
			for (int m = 0; m < SX_MECH_COUNT; m++)
				if (at_phases(m))
					totals[m] += sh[m];
			row_values(out, shown, -1, 0, sh);
			minutes += p->minutes;
		}
		if (shown[SX_MECH_ELECTRODE]) {
			double dp = t->po2_reading - t->po2_true_reading;
			row_start(out, "analysis", 0, NULL, t->po2_true_reading, t->po2_reading);
			totals[SX_MECH_ELECTRODE] += dp;
			row_values(out, shown, SX_MECH_ELECTRODE, dp, NULL);
		}
		row_start(out, "total", minutes, NULL, t->po2_collection, t->po2_reading);
		row_values(out, shown, -2, 0, totals);
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
