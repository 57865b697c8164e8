/* SPDX-License-Identifier: MIT */
/*
 * audit_export.c - the audit's rows for spreadsheets and programs: CSV as
 * RFC 4180 writes it (CRLF line ends, fields with a comma, quote or line
 * break in double quotes, quotes doubled) and JSON (one array of objects).
 *
 * One row per verdict, the decision log's columns plus the unit; no patient
 * identifier is in a row to begin with (verdict_row.h). Times are UTC in the
 * log's fixed ISO 8601 form. Numbers have fixed decimals (mmHg and minutes
 * to 0.1, leukocytes to 0.01) in the C locale, so the same rows give the same
 * bytes. A text value that a spreadsheet would take for a formula (starting
 * with = + - @ or a tab) gets a leading apostrophe in the CSV (the usual
 * defence against formula injection, common practice); the JSON keeps it.
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "report/audit.h"

enum col_kind { K_ID, K_TIME, K_TEXT, K_NUMBER1, K_NUMBER2, K_JSON, K_UNIT, K_DISPOSITION };

typedef struct column {
	const char *name;
	enum col_kind kind;
	size_t offset;
} column;

#define COL(n, k, f)                                                                               \
	{                                                                                          \
		n, k, offsetof(sx_verdict_row, f)                                                  \
	}
static const column columns[] = {
        COL("id", K_ID, id),
        COL("audit_at", K_TIME, audit_ms),
        COL("specimen_id", K_TEXT, specimen_id),
        COL("location", K_TEXT, location),
        COL("unit", K_UNIT, location),
        COL("collector", K_TEXT, collector),
        COL("transport", K_TEXT, transport),
        COL("storage", K_TEXT, storage),
        COL("collected_at", K_TIME, collected_ms),
        COL("received_at", K_TIME, received_ms),
        COL("analysed_at", K_TIME, analysed_ms),
        COL("delay_min", K_NUMBER1, delay_min),
        COL("wbc", K_NUMBER2, wbc),
        COL("po2_mmhg", K_NUMBER1, po2_mmhg),
        COL("disposition", K_DISPOSITION, disposition),
        COL("bias_mmhg", K_NUMBER1, bias_mmhg),
        COL("bias_low_mmhg", K_NUMBER1, bias_low_mmhg),
        COL("bias_high_mmhg", K_NUMBER1, bias_high_mmhg),
        COL("reason_codes", K_TEXT, reason_codes),
        COL("reasons", K_JSON, reasons_json),
        COL("mechanisms", K_JSON, mechanisms_json),
        COL("warnings", K_JSON, warnings_json),
        COL("ruleset", K_TEXT, ruleset),
        COL("sender", K_TEXT, sender),
        COL("control_id", K_TEXT, control_id),
        COL("source", K_TEXT, source),
        COL("input_sha256", K_TEXT, input_sha256),
        COL("input_received_at", K_TIME, input_received_ms),
};
#define COLUMN_COUNT (sizeof columns / sizeof columns[0])

static const char *text_at(const sx_verdict_row *r, const column *c)
{
	return *(const char *const *)((const char *)r + c->offset);
}

static double number_at(const sx_verdict_row *r, const column *c)
{
	return *(const double *)((const char *)r + c->offset);
}

static int64_t time_at(const sx_verdict_row *r, const column *c)
{
	return *(const int64_t *)((const char *)r + c->offset);
}

static double clean(double x)
{
	return x == 0.0 ? 0.0 : x; /* no "-0.0" */
}

/* The value as text; false when it is absent. buf holds numbers and times. */
static bool value_text(const sx_verdict_row *r, const column *c, char *buf, size_t size,
                       const char **text)
{
	double x;
	int64_t t;
	*text = buf;
	switch (c->kind) {
	case K_ID:
		if (r->id <= 0)
			return false;
		snprintf(buf, size, "%lld", (long long)r->id);
		return true;
	case K_TIME:
		t = time_at(r, c);
		if (t == SX_ROW_NO_TIME)
			return false;
		sx_row_time_text(t, buf, size);
		return true;
	case K_NUMBER1:
	case K_NUMBER2:
		x = number_at(r, c);
		if (isnan(x))
			return false;
		snprintf(buf, size, c->kind == K_NUMBER1 ? "%.1f" : "%.2f",
		         clean(round(x * (c->kind == K_NUMBER1 ? 10 : 100)) /
		               (c->kind == K_NUMBER1 ? 10 : 100)));
		return true;
	case K_UNIT:
		sx_location_unit(r->location, buf, size);
		return true;
	case K_DISPOSITION:
		*text = sx_disposition_name(r->disposition);
		return true;
	case K_TEXT:
	case K_JSON:
		*text = text_at(r, c);
		return *text != NULL;
	}
	return false;
}

static void csv_field(sx_strbuf *out, const char *s, bool guard)
{
	bool quote = strpbrk(s, ",\"\r\n") != NULL;
	if (quote)
		sx_strbuf_putc(out, '"');
	if (guard && (s[0] == '=' || s[0] == '+' || s[0] == '-' || s[0] == '@' || s[0] == '\t'))
		sx_strbuf_putc(out, '\'');
	for (const char *p = s; *p; p++) {
		if (*p == '"')
			sx_strbuf_putc(out, '"');
		sx_strbuf_putc(out, *p);
	}
	if (quote)
		sx_strbuf_putc(out, '"');
}

void sx_audit_csv_header(sx_strbuf *out)
{
	for (size_t i = 0; i < COLUMN_COUNT; i++) {
		if (i)
			sx_strbuf_putc(out, ',');
		sx_strbuf_puts(out, columns[i].name);
	}
	sx_strbuf_puts(out, "\r\n");
}

void sx_audit_csv_row(sx_strbuf *out, const sx_verdict_row *r)
{
	char buf[64];
	const char *text;
	for (size_t i = 0; i < COLUMN_COUNT; i++) {
		const column *c = &columns[i];
		if (i)
			sx_strbuf_putc(out, ',');
		if (value_text(r, c, buf, sizeof buf, &text))
			csv_field(out, text, c->kind == K_TEXT || c->kind == K_UNIT);
	}
	sx_strbuf_puts(out, "\r\n");
}

void sx_audit_json_begin(sx_strbuf *out)
{
	sx_strbuf_puts(out, "[");
}

void sx_audit_json_row(sx_strbuf *out, const sx_verdict_row *r, bool first)
{
	char buf[64];
	const char *text;
	sx_strbuf_puts(out, first ? "\n{" : ",\n{");
	for (size_t i = 0; i < COLUMN_COUNT; i++) {
		const column *c = &columns[i];
		if (i)
			sx_strbuf_putc(out, ',');
		sx_strbuf_json_string(out, c->name);
		sx_strbuf_putc(out, ':');
		if (!value_text(r, c, buf, sizeof buf, &text))
			sx_strbuf_puts(out, "null");
		else if (c->kind == K_ID || c->kind == K_NUMBER1 || c->kind == K_NUMBER2)
			sx_strbuf_puts(out, text);
		else if (c->kind == K_JSON && text[0] == '[')
			sx_strbuf_puts(out, text); /* our own JSON, from the row builder */
		else
			sx_strbuf_json_string(out, text);
	}
	sx_strbuf_putc(out, '}');
}

void sx_audit_json_end(sx_strbuf *out)
{
	sx_strbuf_puts(out, "\n]\n");
}
