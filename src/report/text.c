/* SPDX-License-Identifier: MIT */
/*
 * text.c - the verdicts for people at the reception bench.
 *
 * One block per specimen: id and disposition first (what to do), then the
 * size of the likely pO2 error with its interval in mmHg and kPa, the reasons
 * with the rule that gave each, the mechanisms' shares, and input warnings.
 */
#include <math.h>
#include <stdio.h>

#include "core/units.h"
#include "report/report.h"


void sx_report_text_header(sx_strbuf *out)
{
	sx_strbuf_puts(out, "syrinx - preanalytical screening of blood-gas pO2\n");
	sx_strbuf_puts(out, "Caution: " SX_CAUTION "\n\n");
}

static const char *label(const sx_verdict *v)
{
	if (!v)
		return "NOT SCREENED";
	switch (v->disposition) {
	case SX_ACCEPT:
		return "ACCEPT";
	case SX_COMMENT:
		return "ACCEPT WITH COMMENT";
	case SX_REJECT:
		return "REJECT - ask for a new specimen";
	}
	return "REJECT";
}

void sx_report_text(sx_strbuf *out, const sx_report_item *item)
{
	const sx_specimen *s = item->specimen;
	const sx_verdict *v = item->verdict;
	const char *id = s->present[SX_F_SPECIMEN_ID] ? s->text[SX_F_SPECIMEN_ID] : "(no id)";

	sx_strbuf_printf(out, "%s  %s\n", id, label(v));
	if (s->present[SX_F_LOCATION])
		sx_strbuf_printf(out, "  from:       %s\n", s->text[SX_F_LOCATION]);
	if (!v) {
		sx_strbuf_printf(out, "  input errors (%s line %u), fix and resend:\n",
				 s->source ? s->source : "-", s->source_line);
		for (size_t i = 0; i < item->error_count; i++)
			sx_strbuf_printf(out, "    line %u: %s\n", item->errors[i]->line,
					 item->errors[i]->message);
		sx_strbuf_putc(out, '\n');
		return;
	}
	if (v->has_bias) {
		const sx_estimate *b = &v->bias_mmhg;
		sx_strbuf_printf(out,
				 "  pO2 bias:   %+.1f mmHg (likely %+.1f to %+.1f); %+.2f kPa "
				 "(%+.2f to %+.2f)\n",
				 sx_report_round(b->estimate, 0.1), sx_report_round(b->low, 0.1), sx_report_round(b->high, 0.1),
				 sx_report_round(b->estimate / SX_MMHG_PER_KPA, 0.01),
				 sx_report_round(b->low / SX_MMHG_PER_KPA, 0.01),
				 sx_report_round(b->high / SX_MMHG_PER_KPA, 0.01));
	} else {
		sx_strbuf_puts(out, "  pO2 bias:   not estimated (see notes)\n");
	}
	if (v->has_before && s->present[SX_F_PO2])
		sx_strbuf_printf(out,
				 "  reading:    %.1f mmHg; at collection likely %.1f (%.1f to "
				 "%.1f) mmHg\n",
				 s->number[SX_F_PO2], sx_report_round(v->po2_before_mmhg.estimate, 0.1),
				 sx_report_round(v->po2_before_mmhg.low, 0.1),
				 sx_report_round(v->po2_before_mmhg.high, 0.1));
	for (size_t i = 0; i < v->reason_count; i++) {
		const sx_reason *r = &v->reasons[i];
		sx_strbuf_printf(out, "  %-11s %s (%s; rule %s)\n",
				 i == 0 ? "why:" : "", r->message, r->code, r->rule);
	}
	for (size_t i = 0; i < v->mechanism_count; i++)
		sx_strbuf_printf(out, "  %-11s %s %+.1f mmHg\n", i == 0 ? "mechanisms:" : "",
				 v->mechanisms[i].name, sx_report_round(v->mechanisms[i].bias_mmhg, 0.1));
	for (size_t i = 0; i < v->warning_count; i++)
		sx_strbuf_printf(out, "  %-11s %s\n", i == 0 ? "note:" : "", v->warnings[i]);
	sx_strbuf_putc(out, '\n');
}

void sx_report_text_summary(sx_strbuf *out, const sx_tally *t)
{
	size_t total = t->accept + t->comment + t->reject + t->not_screened;
	sx_strbuf_printf(out,
			 "%zu specimen%s: %zu accept, %zu accept with comment, %zu reject, %zu "
			 "not screened\n",
			 total, total == 1 ? "" : "s", t->accept, t->comment, t->reject,
			 t->not_screened);
	sx_strbuf_puts(out, "Caution: " SX_CAUTION "\n");
}
