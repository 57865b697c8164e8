/* SPDX-License-Identifier: MIT */
/*
 * hl7out.c - one specimen's verdict as an ORU^R01 result message.
 *
 * The layout is described in report/hl7out.h and docs/hl7.md. Numbers are
 * written with fixed decimals in the C locale (mm[Hg] to 0.1, kPa to 0.01,
 * as the JSON writer does), so the same verdict gives the same bytes. Units
 * are UCUM codes (OBX-6: code ^ code ^ UCUM).
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/units.h"
#include "feed/hl7.h"
#include "report/hl7out.h"

#define RULE_TEXT 160

typedef struct writer {
	sx_strbuf *out;
	const sx_hl7_delims *d;
	unsigned obx;
	unsigned nte;
} writer;


static void sep(writer *w)
{
	sx_strbuf_putc(w->out, w->d->field);
}

static void comp(writer *w)
{
	sx_strbuf_putc(w->out, w->d->component);
}

static void text(writer *w, const char *s)
{
	if (s)
		sx_hl7_put_escaped(w->out, w->d, s, strlen(s), false);
}

static void time_field(writer *w, const sx_specimen *s, sx_field f)
{
	char t[48];
	if (s && s->present[f] && sx_time_format_hl7(&s->time[f], t, sizeof t) > 0)
		sx_strbuf_puts(w->out, t);
}

/* OBX|n|NM|code^name^99SYX|subid|value|unit^unit^UCUM|||||F */
static void obx_number(writer *w, const char *code, const char *name, const char *subid,
                       double value, int decimals, const char *unit)
{
	sx_strbuf_printf(w->out, "OBX%c%u%cNM%c", w->d->field, ++w->obx, w->d->field, w->d->field);
	text(w, code);
	comp(w);
	text(w, name);
	comp(w);
	sx_strbuf_puts(w->out, "99SYX");
	sep(w);
	text(w, subid);
	sep(w);
	sx_strbuf_printf(w->out, "%.*f", decimals, value);
	sep(w);
	text(w, unit);
	comp(w);
	text(w, unit);
	comp(w);
	sx_strbuf_puts(w->out, "UCUM");
	sx_strbuf_printf(w->out, "%c%c%c%c%cF\r", w->d->field, w->d->field, w->d->field,
	                 w->d->field, w->d->field);
}

static void interval(writer *w, const char *code, const char *name, const sx_estimate *e,
                     unsigned subid_mmhg)
{
	char code_low[64], code_high[64], name_low[96], name_high[96], sub[8];
	snprintf(code_low, sizeof code_low, "%s-LOW", code);
	snprintf(code_high, sizeof code_high, "%s-HIGH", code);
	snprintf(name_low, sizeof name_low, "%s, 5th percentile", name);
	snprintf(name_high, sizeof name_high, "%s, 95th percentile", name);

	snprintf(sub, sizeof sub, "%u", subid_mmhg);
	obx_number(w, code, name, sub, sx_report_round(e->estimate, 0.1), 1, "mm[Hg]");
	obx_number(w, code_low, name_low, sub, sx_report_round(e->low, 0.1), 1, "mm[Hg]");
	obx_number(w, code_high, name_high, sub, sx_report_round(e->high, 0.1), 1, "mm[Hg]");
	snprintf(sub, sizeof sub, "%u", subid_mmhg + 1);
	obx_number(w, code, name, sub, sx_report_round(e->estimate / SX_MMHG_PER_KPA, 0.01), 2, "kPa");
	obx_number(w, code_low, name_low, sub, sx_report_round(e->low / SX_MMHG_PER_KPA, 0.01), 2, "kPa");
	obx_number(w, code_high, name_high, sub, sx_report_round(e->high / SX_MMHG_PER_KPA, 0.01), 2, "kPa");
}

/* NTE|n|L|prefix text suffix|RE (NTE-3 is FT: line breaks become \.br\). */
static void nte(writer *w, const char *prefix, const char *s, const char *suffix)
{
	sx_strbuf_printf(w->out, "NTE%c%u%cL%c", w->d->field, ++w->nte, w->d->field, w->d->field);
	if (prefix)
		sx_hl7_put_escaped(w->out, w->d, prefix, strlen(prefix), true);
	if (s)
		sx_hl7_put_escaped(w->out, w->d, s, strlen(s), true);
	if (suffix)
		sx_hl7_put_escaped(w->out, w->d, suffix, strlen(suffix), true);
	sep(w);
	sx_strbuf_puts(w->out, "RE\r");
}

static const char *disposition_text(sx_disposition d)
{
	switch (d) {
	case SX_ACCEPT:
		return "Accept";
	case SX_COMMENT:
		return "Accept with a comment on the report";
	case SX_REJECT:
		return "Reject: ask for a new specimen";
	}
	return "";
}

static void specimen_type(writer *w, const sx_specimen *s)
{
	static const char *const hl7[] = {
	        [SX_TYPE_ARTERIAL] = "BLDA^Blood arterial^HL70487",
	        [SX_TYPE_VENOUS] = "BLDV^Blood venous^HL70487",
	        [SX_TYPE_CAPILLARY] = "BLDC^Blood capillary^HL70487",
	        [SX_TYPE_CORD] = "BLDCO^Blood cord^HL70487",
	};
	int t;
	const char *name;
	if (!s->present[SX_F_SPECIMEN_TYPE])
		return;
	t = s->choice[SX_F_SPECIMEN_TYPE];
	if (t > 0 && (size_t)t < sizeof hl7 / sizeof hl7[0] && hl7[t]) {
		/* written with the message's own component separator */
		for (const char *p = hl7[t]; *p; p++)
			sx_strbuf_putc(w->out, *p == '^' ? w->d->component : *p);
		return;
	}
	name = sx_field_choice_name(SX_F_SPECIMEN_TYPE, t);
	text(w, name);
	comp(w);
	text(w, name);
	comp(w);
	sx_strbuf_puts(w->out, "99SYX");
}

void sx_report_hl7(sx_strbuf *out, const sx_report_item *item, const sx_hl7_result_options *opt)
{
	static const sx_hl7_result_options none = {0};
	const sx_specimen *s = item->specimen;
	const sx_verdict *v = item->verdict;
	const char *id = s && s->present[SX_F_SPECIMEN_ID] ? s->text[SX_F_SPECIMEN_ID] : NULL;
	writer w;
	char now[48] = "";

	if (!opt)
		opt = &none;
	w.out = out;
	w.d = opt->delims ? opt->delims : &sx_hl7_default_delims;
	w.obx = 0;
	w.nte = 0;
	if (opt->now && sx_time_format_hl7(opt->now, now, sizeof now) <= 0)
		now[0] = '\0';

	/* MSH */
	sx_strbuf_puts(out, "MSH");
	sep(&w);
	sx_hl7_put_encoding(out, w.d);
	sep(&w);
	text(&w, opt->application ? opt->application : "SYRINX");
	sep(&w);
	text(&w, opt->facility);
	sep(&w);
	text(&w, opt->receiving_application);
	sep(&w);
	text(&w, opt->receiving_facility);
	sep(&w);
	sx_strbuf_puts(out, now);
	sep(&w);
	sep(&w);
	sx_strbuf_puts(out, "ORU");
	comp(&w);
	sx_strbuf_puts(out, "R01");
	comp(&w);
	sx_strbuf_puts(out, "ORU_R01");
	sep(&w);
	if (opt->control_id) {
		text(&w, opt->control_id);
	} else {
		sx_strbuf_puts(out, "SX-");
		text(&w, id ? id : "unidentified");
	}
	sx_strbuf_printf(out, "%cP%c2.5.1%c%c%c%c%c%cUNICODE UTF-8\r", w.d->field, w.d->field,
	                 w.d->field, w.d->field, w.d->field, w.d->field, w.d->field, w.d->field);

	/* PID: the identifier only */
	sx_strbuf_printf(out, "PID%c1%c%c", w.d->field, w.d->field, w.d->field);
	if (s && s->present[SX_F_PATIENT_ID])
		text(&w, s->text[SX_F_PATIENT_ID]);
	sx_strbuf_putc(out, '\r');

	/* OBR */
	sx_strbuf_printf(out, "OBR%c1%c%c", w.d->field, w.d->field, w.d->field);
	text(&w, id);
	sep(&w);
	sx_strbuf_puts(out, "SX-SCREEN");
	comp(&w);
	sx_strbuf_puts(out, "Preanalytical pO2 screen");
	comp(&w);
	sx_strbuf_puts(out, "99SYX");
	sep(&w); /* OBR-5 */
	sep(&w); /* OBR-6 */
	sep(&w); /* OBR-7 */
	time_field(&w, s, SX_F_COLLECTED_AT);
	for (int i = 8; i <= 14; i++)
		sep(&w);
	time_field(&w, s, SX_F_RECEIVED_AT); /* OBR-14 */
	for (int i = 15; i <= 22; i++)
		sep(&w);
	sx_strbuf_puts(out, now); /* OBR-22 results reported */
	sep(&w);
	sep(&w);
	sep(&w); /* OBR-25 result status */
	sx_strbuf_puts(out, v ? "F" : "X");
	sx_strbuf_putc(out, '\r');
	nte(&w, NULL, SX_CAUTION, NULL);

	if (v) {
		if (v->has_bias)
			interval(&w, "SX-PO2-BIAS", "pO2 bias (reading minus pO2 at collection)",
			         &v->bias_mmhg, 1);
		if (v->has_before)
			interval(&w, "SX-PO2-BEFORE-ERROR", "pO2 at collection",
			         &v->po2_before_mmhg, 3);
		for (size_t i = 0; i < v->mechanism_count; i++)
			obx_number(&w, "SX-MECHANISM-BIAS", "pO2 bias from one mechanism",
			           v->mechanisms[i].name, sx_report_round(v->mechanisms[i].bias_mmhg, 0.1), 1,
			           "mm[Hg]");
		sx_strbuf_printf(out, "OBX%c%u%cCWE%cSX-DISPOSITION%cDisposition%c99SYX%c%c",
		                 w.d->field, ++w.obx, w.d->field, w.d->field, w.d->component,
		                 w.d->component, w.d->field, w.d->field);
		text(&w, sx_disposition_name(v->disposition));
		comp(&w);
		text(&w, disposition_text(v->disposition));
		comp(&w);
		sx_strbuf_puts(out, "99SYX");
		sx_strbuf_printf(out, "%c%c%c%c%c%cF\r", w.d->field, w.d->field, w.d->field,
		                 w.d->field, w.d->field, w.d->field);
		for (size_t i = 0; i < v->reason_count; i++) {
			const sx_reason *r = &v->reasons[i];
			char head[96];
			snprintf(head, sizeof head, "%s (%s): ", r->code,
			         sx_reason_severity_name(r->severity));
			if (r->rule[0]) {
				char rule[RULE_TEXT];
				snprintf(rule, sizeof rule, " [rule %s]", r->rule);
				nte(&w, head, r->message, rule);
			} else {
				nte(&w, head, r->message, NULL);
			}
		}
		if (v->reasons_dropped) {
			char more[64];
			snprintf(more, sizeof more, "%zu further reasons were not kept",
			         v->reasons_dropped);
			nte(&w, NULL, more, NULL);
		}
		for (size_t i = 0; i < v->warning_count; i++)
			nte(&w, "warning: ", v->warnings[i], NULL);
	} else {
		sx_strbuf_printf(out, "OBX%c%u%cCWE%cSX-DISPOSITION%cDisposition%c99SYX",
		                 w.d->field, ++w.obx, w.d->field, w.d->field, w.d->component,
		                 w.d->component);
		sx_strbuf_printf(out, "%c%c%c%c%c%c%c%cX\r", w.d->field, w.d->field, w.d->field,
		                 w.d->field, w.d->field, w.d->field, w.d->field, w.d->field);
		nte(&w, NULL, "not screened: the input of this specimen had errors", NULL);
		for (size_t i = 0; i < item->error_count; i++)
			nte(&w, "error: ", item->errors[i]->message, NULL);
	}

	/* SPM: the specimen */
	sx_strbuf_printf(out, "SPM%c1%c", w.d->field, w.d->field);
	comp(&w);
	text(&w, id);
	sep(&w);
	sep(&w);
	if (s)
		specimen_type(&w, s);
	sx_strbuf_putc(out, '\r');
}
