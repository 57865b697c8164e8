/* SPDX-License-Identifier: MIT */
/*
 * verdict_row.c - a specimen and its verdict as one flat row; the filter
 * that audits and queries share.
 *
 * The JSON texts use the keys of the JSON Lines report (DESIGN.md) and its
 * rounding, so a row's reasons read the same in the log as in `syrinx check
 * --format json`. The filter here must take exactly the rows that the log's
 * SQL takes (decision_log.c); tests/unit/test_decision_log.c checks both on
 * the same rows.
 */
#include "store/verdict_row.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/sxtime.h"

static double rounded(double x, double step)
{
	double r = round(x / step) * step;
	return r == 0.0 ? 0.0 : r;
}

void sx_row_builder_init(sx_row_builder *b)
{
	memset(b, 0, sizeof *b);
	sx_strbuf_init(&b->codes, 0);
	sx_strbuf_init(&b->reasons, 0);
	sx_strbuf_init(&b->mechanisms, 0);
	sx_strbuf_init(&b->warnings, 0);
	sx_strbuf_init(&b->scratch, 0);
}

void sx_row_builder_free(sx_row_builder *b)
{
	sx_strbuf_free(&b->codes);
	sx_strbuf_free(&b->reasons);
	sx_strbuf_free(&b->mechanisms);
	sx_strbuf_free(&b->warnings);
	sx_strbuf_free(&b->scratch);
}

static const char *text_of(const sx_specimen *s, sx_field f)
{
	return s->present[f] && s->text[f] && s->text[f][0] ? s->text[f] : NULL;
}

static const char *choice_of(const sx_specimen *s, sx_field f)
{
	return s->present[f] ? sx_field_choice_name(f, s->choice[f]) : NULL;
}

static int64_t time_of(const sx_specimen *s, sx_field f)
{
	return s->present[f] ? s->time[f].utc_ms : SX_ROW_NO_TIME;
}

/* Every field but patient_id, one "name=value" a line, in table order. */
static void canonical_text(sx_strbuf *out, const sx_specimen *s)
{
	for (int f = 0; f < SX_FIELD_COUNT; f++) {
		const sx_field_info *info = sx_field_get((sx_field)f);
		if (f == SX_F_PATIENT_ID || !s->present[f])
			continue;
		sx_strbuf_puts(out, info->name);
		sx_strbuf_putc(out, '=');
		switch (info->kind) {
		case SX_KIND_TEXT:
			sx_strbuf_puts(out, s->text[f] ? s->text[f] : "");
			break;
		case SX_KIND_NUMBER:
			sx_strbuf_printf(out, "%.17g", s->number[f]);
			break;
		case SX_KIND_TIME:
			sx_strbuf_printf(out, "%lld/%d/%d", (long long)s->time[f].utc_ms,
			                 s->time[f].offset_min, s->time[f].precision);
			break;
		case SX_KIND_CHOICE:
			sx_strbuf_puts(out, sx_field_choice_name((sx_field)f, s->choice[f]));
			break;
		case SX_KIND_AGENTS:
			for (size_t i = 0; i < s->agent_count; i++)
				sx_strbuf_printf(out, "%s%s:%.17g", i ? ";" : "", s->agents[i].name,
				                 s->agents[i].percent);
			break;
		}
		sx_strbuf_putc(out, '\n');
	}
}

static void reasons_json(sx_strbuf *out, sx_strbuf *codes, const sx_verdict *v)
{
	sx_strbuf_putc(out, '[');
	for (size_t i = 0; i < v->reason_count; i++) {
		const sx_reason *r = &v->reasons[i];
		sx_strbuf_puts(out, i ? ",{\"code\":" : "{\"code\":");
		sx_strbuf_json_string(out, r->code);
		sx_strbuf_puts(out, ",\"severity\":");
		sx_strbuf_json_string(out, sx_reason_severity_name(r->severity));
		sx_strbuf_puts(out, ",\"message\":");
		sx_strbuf_json_string(out, r->message);
		sx_strbuf_puts(out, ",\"rule\":");
		sx_strbuf_json_string(out, r->rule);
		sx_strbuf_putc(out, '}');
		if (i)
			sx_strbuf_putc(codes, ' ');
		sx_strbuf_puts(codes, r->code);
	}
	sx_strbuf_putc(out, ']');
}

static void mechanisms_json(sx_strbuf *out, const sx_verdict *v)
{
	sx_strbuf_putc(out, '[');
	for (size_t i = 0; i < v->mechanism_count; i++) {
		sx_strbuf_puts(out, i ? ",{\"name\":" : "{\"name\":");
		sx_strbuf_json_string(out, v->mechanisms[i].name);
		sx_strbuf_printf(out, ",\"bias_mmhg\":%.1f}",
		                 rounded(v->mechanisms[i].bias_mmhg, 0.1));
	}
	sx_strbuf_putc(out, ']');
}

static void warnings_json(sx_strbuf *out, const sx_verdict *v)
{
	sx_strbuf_putc(out, '[');
	for (size_t i = 0; i < v->warning_count; i++) {
		if (i)
			sx_strbuf_putc(out, ',');
		sx_strbuf_json_string(out, v->warnings[i]);
	}
	sx_strbuf_putc(out, ']');
}

int64_t sx_verdict_row_audit_time(const sx_verdict_row *row)
{
	if (row->collected_ms != SX_ROW_NO_TIME)
		return row->collected_ms;
	if (row->analysed_ms != SX_ROW_NO_TIME)
		return row->analysed_ms;
	if (row->received_ms != SX_ROW_NO_TIME)
		return row->received_ms;
	return row->input_received_ms;
}

sx_status sx_verdict_row_build(sx_row_builder *b, const sx_specimen *s, const sx_verdict *v,
                               const sx_row_origin *o)
{
	sx_verdict_row *r = &b->row;
	unsigned char digest[SX_SHA256_BYTES];
	sx_status st;

	sx_strbuf_reset(&b->codes);
	sx_strbuf_reset(&b->reasons);
	sx_strbuf_reset(&b->mechanisms);
	sx_strbuf_reset(&b->warnings);
	sx_strbuf_reset(&b->scratch);
	memset(r, 0, sizeof *r);

	if (o->input) {
		sx_sha256_digest(o->input, o->input_len, digest);
	} else {
		canonical_text(&b->scratch, s);
		if ((st = sx_strbuf_status(&b->scratch)) != SX_OK)
			return st;
		sx_sha256_digest(b->scratch.data ? b->scratch.data : "", b->scratch.len, digest);
	}
	sx_sha256_hex(digest, b->sha256);
	/* an empty buffer has no data yet: make every text a real string */
	sx_strbuf_puts(&b->codes, "");
	reasons_json(&b->reasons, &b->codes, v);
	mechanisms_json(&b->mechanisms, v);
	warnings_json(&b->warnings, v);
	if ((st = sx_strbuf_status(&b->codes)) != SX_OK ||
	    (st = sx_strbuf_status(&b->reasons)) != SX_OK ||
	    (st = sx_strbuf_status(&b->mechanisms)) != SX_OK ||
	    (st = sx_strbuf_status(&b->warnings)) != SX_OK)
		return st;
	if (!b->codes.data)
		return SX_ENOMEM;

	r->sender = o->sender;
	r->control_id = o->control_id;
	r->source = o->source;
	r->input_sha256 = b->sha256;
	r->input_received_ms = o->input_received_ms;
	r->collected_ms = time_of(s, SX_F_COLLECTED_AT);
	r->received_ms = time_of(s, SX_F_RECEIVED_AT);
	r->analysed_ms = time_of(s, SX_F_ANALYSED_AT);
	r->audit_ms = sx_verdict_row_audit_time(r);
	r->specimen_id = text_of(s, SX_F_SPECIMEN_ID);
	r->location = text_of(s, SX_F_LOCATION);
	r->collector = text_of(s, SX_F_COLLECTOR);
	r->transport = choice_of(s, SX_F_TRANSPORT);
	r->storage = choice_of(s, SX_F_STORAGE);
	r->wbc = s->present[SX_F_WBC] ? rounded(s->number[SX_F_WBC], 0.01) : NAN;
	r->po2_mmhg = s->present[SX_F_PO2] ? rounded(s->number[SX_F_PO2], 0.1) : NAN;
	r->delay_min = NAN;
	if (r->collected_ms != SX_ROW_NO_TIME && r->analysed_ms != SX_ROW_NO_TIME)
		r->delay_min = rounded((double)(r->analysed_ms - r->collected_ms) / 60000.0, 0.1);
	r->disposition = v->disposition;
	r->bias_mmhg = r->bias_low_mmhg = r->bias_high_mmhg = NAN;
	if (v->has_bias) {
		r->bias_mmhg = rounded(v->bias_mmhg.estimate, 0.1);
		r->bias_low_mmhg = rounded(v->bias_mmhg.low, 0.1);
		r->bias_high_mmhg = rounded(v->bias_mmhg.high, 0.1);
	}
	r->reason_codes = b->codes.data;
	r->reasons_json = b->reasons.data;
	r->mechanisms_json = b->mechanisms.data;
	r->warnings_json = b->warnings.data;
	r->ruleset = o->ruleset;
	return SX_OK;
}

void sx_row_filter_init(sx_row_filter *f)
{
	memset(f, 0, sizeof *f);
	f->from_ms = SX_ROW_NO_TIME;
	f->to_ms = SX_ROW_NO_TIME;
	f->disposition = -1;
}

static bool same(const char *want, const char *have)
{
	return !want || (have && strcmp(want, have) == 0);
}

static bool location_matches(const char *want, const char *have)
{
	size_t n;
	if (!want)
		return true;
	if (!have)
		return false;
	n = strlen(want);
	return strncmp(want, have, n) == 0 && (have[n] == '\0' || have[n] == '/');
}

bool sx_reason_codes_have(const char *codes, const char *code)
{
	size_t n = strlen(code);
	const char *p = codes;
	if (!codes || n == 0)
		return false;
	while ((p = strstr(p, code)) != NULL) {
		bool start = p == codes || p[-1] == ' ';
		bool end = p[n] == '\0' || p[n] == ' ';
		if (start && end)
			return true;
		p += n;
	}
	return false;
}

bool sx_row_filter_match(const sx_row_filter *f, const sx_verdict_row *r)
{
	if (f->from_ms != SX_ROW_NO_TIME &&
	    (r->audit_ms == SX_ROW_NO_TIME || r->audit_ms < f->from_ms))
		return false;
	if (f->to_ms != SX_ROW_NO_TIME &&
	    (r->audit_ms == SX_ROW_NO_TIME || r->audit_ms >= f->to_ms))
		return false;
	if (f->disposition >= 0 && (int)r->disposition != f->disposition)
		return false;
	if (!location_matches(f->location, r->location) || !same(f->collector, r->collector) ||
	    !same(f->transport, r->transport))
		return false;
	if (f->reason_code && !sx_reason_codes_have(r->reason_codes, f->reason_code))
		return false;
	return true;
}

void sx_location_unit(const char *location, char *buf, size_t size)
{
	size_t n;
	if (!location || !location[0]) {
		snprintf(buf, size, "%s", "(no location)");
		return;
	}
	n = strcspn(location, "/");
	if (n == 0)
		n = strlen(location);
	snprintf(buf, size, "%.*s", (int)n, location);
}

void sx_row_time_text(int64_t utc_ms, char *buf, size_t size)
{
	int64_t days = utc_ms / 86400000, ms = utc_ms % 86400000, y;
	unsigned m, d;
	if (ms < 0) {
		ms += 86400000;
		days--;
	}
	sx_civil_from_days(days, &y, &m, &d);
	snprintf(buf, size, "%04lld-%02u-%02uT%02d:%02d:%02d.%03dZ", (long long)y, m, d,
	         (int)(ms / 3600000), (int)(ms / 60000 % 60), (int)(ms / 1000 % 60),
	         (int)(ms % 1000));
}
