/* SPDX-License-Identifier: MIT */
/*
 * json.c - JSON Lines: one object per specimen, keys as DESIGN.md names them.
 *
 * Numbers are written with fixed decimals (mmHg to 0.1, kPa to 0.01) in the C
 * locale, and -0.0 as 0.0, so that the same input gives the same bytes on any
 * machine.
 */
#include <math.h>
#include <stdio.h>

#include "core/units.h"
#include "report/report.h"


static void estimate_mmhg(sx_strbuf *out, const char *key, const sx_estimate *e)
{
	sx_strbuf_printf(out, ",\"%s\":{\"estimate\":%.1f,\"low\":%.1f,\"high\":%.1f}", key,
			 sx_report_round(e->estimate, 0.1), sx_report_round(e->low, 0.1), sx_report_round(e->high, 0.1));
}

static void estimate_kpa(sx_strbuf *out, const char *key, const sx_estimate *e)
{
	sx_strbuf_printf(out, ",\"%s\":{\"estimate\":%.2f,\"low\":%.2f,\"high\":%.2f}", key,
			 sx_report_round(e->estimate / SX_MMHG_PER_KPA, 0.01),
			 sx_report_round(e->low / SX_MMHG_PER_KPA, 0.01),
			 sx_report_round(e->high / SX_MMHG_PER_KPA, 0.01));
}

static void key_string(sx_strbuf *out, const char *key, const char *value)
{
	sx_strbuf_printf(out, ",\"%s\":", key);
	if (value)
		sx_strbuf_json_string(out, value);
	else
		sx_strbuf_puts(out, "null");
}

static void errors(sx_strbuf *out, const sx_report_item *item)
{
	sx_strbuf_puts(out, ",\"errors\":[");
	for (size_t i = 0; i < item->error_count; i++) {
		const sx_diag *d = item->errors[i];
		sx_strbuf_puts(out, i ? ",{" : "{");
		sx_strbuf_puts(out, "\"field\":");
		if (d->field)
			sx_strbuf_json_string(out, d->field);
		else
			sx_strbuf_puts(out, "null");
		sx_strbuf_printf(out, ",\"line\":%u", d->line);
		key_string(out, "message", d->message);
		sx_strbuf_putc(out, '}');
	}
	sx_strbuf_putc(out, ']');
}

void sx_report_json(sx_strbuf *out, const sx_report_item *item)
{
	const sx_specimen *s = item->specimen;
	const sx_verdict *v = item->verdict;
	char where[512];

	sx_strbuf_puts(out, "{\"specimen_id\":");
	if (s->present[SX_F_SPECIMEN_ID])
		sx_strbuf_json_string(out, s->text[SX_F_SPECIMEN_ID]);
	else
		sx_strbuf_puts(out, "null");
	snprintf(where, sizeof where, "%s:%u", s->source ? s->source : "-", s->source_line);
	key_string(out, "source", where);
	if (!v) {
		sx_strbuf_puts(out, ",\"screened\":false,\"disposition\":null");
		errors(out, item);
		sx_strbuf_puts(out, "}\n");
		return;
	}
	sx_strbuf_puts(out, ",\"screened\":true");
	key_string(out, "disposition", sx_disposition_name(v->disposition));
	if (v->has_bias) {
		estimate_mmhg(out, "po2_bias_mmhg", &v->bias_mmhg);
		estimate_kpa(out, "po2_bias_kpa", &v->bias_mmhg);
	} else {
		sx_strbuf_puts(out, ",\"po2_bias_mmhg\":null,\"po2_bias_kpa\":null");
	}
	if (v->has_before)
		estimate_mmhg(out, "po2_before_error_mmhg", &v->po2_before_mmhg);
	sx_strbuf_puts(out, ",\"mechanisms\":[");
	for (size_t i = 0; i < v->mechanism_count; i++) {
		sx_strbuf_puts(out, i ? ",{\"name\":" : "{\"name\":");
		sx_strbuf_json_string(out, v->mechanisms[i].name);
		sx_strbuf_printf(out, ",\"bias_mmhg\":%.1f}",
				 sx_report_round(v->mechanisms[i].bias_mmhg, 0.1));
	}
	sx_strbuf_puts(out, "],\"reasons\":[");
	for (size_t i = 0; i < v->reason_count; i++) {
		const sx_reason *r = &v->reasons[i];
		sx_strbuf_puts(out, i ? ",{\"code\":" : "{\"code\":");
		sx_strbuf_json_string(out, r->code);
		key_string(out, "severity", sx_reason_severity_name(r->severity));
		key_string(out, "message", r->message);
		key_string(out, "rule", r->rule);
		sx_strbuf_putc(out, '}');
	}
	sx_strbuf_puts(out, "],\"warnings\":[");
	for (size_t i = 0; i < v->warning_count; i++) {
		if (i)
			sx_strbuf_putc(out, ',');
		sx_strbuf_json_string(out, v->warnings[i]);
	}
	sx_strbuf_puts(out, "]}\n");
}

void sx_tally_add(sx_tally *t, const sx_report_item *item)
{
	if (!item->verdict) {
		t->not_screened++;
		return;
	}
	switch (item->verdict->disposition) {
	case SX_ACCEPT:
		t->accept++;
		break;
	case SX_COMMENT:
		t->comment++;
		break;
	case SX_REJECT:
		t->reject++;
		break;
	}
}
