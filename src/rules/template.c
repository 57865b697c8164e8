/* SPDX-License-Identifier: MIT */
/*
 * template.c - reason messages with values in them.
 *
 * A template is text with references in braces: {delay}, {po2}, {room_delay}
 * (a limit), {metabolism.q10} (a setting). A reference may carry a
 * format: {bias:+.1} (sign, one decimal), {delay:.0}. {{ writes a brace.
 * Numbers are written with their unit ("42 min", "4.5 mmHg"); a value the
 * specimen lacks is written "not given". Compiling resolves every name once;
 * rendering only formats.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/sxtime.h"
#include "rules/bounds.h"
#include "rules/program.h"

#define MAX_PIECES 32

/* ---- compiling ------------------------------------------------------------------- */

static bool resolve(sx_ruleset *rs, sx_rules_report *r, const sx_rules_source *src, size_t off,
		    const char *name, size_t len, sx_tpiece *p, bool *after)
{
	const char *cands[SX_FIELD_COUNT + SX_FACT_COUNT + 1];
	const char *hint;
	size_t n = 0;
	int i;

	if ((i = sx_field_lookup(name, len)) >= 0) {
		p->ref = SX_REF_FIELD;
		p->index = i;
		return true;
	}
	if ((i = sx_fact_lookup(name, len)) >= 0) {
		p->ref = SX_REF_FACT;
		p->index = i;
		if (i >= SX_FACTS_AFTER_MODEL)
			*after = true;
		return true;
	}
	if ((i = sx_rules_limit_lookup(rs, name, len)) >= 0) {
		p->ref = SX_REF_LIMIT;
		p->index = i;
		rs->limits[i].used = true;
		return true;
	}
	if ((p->param = sx_param_lookup(name, len)) != NULL) {
		p->ref = SX_REF_SETTING;
		return true;
	}
	for (int f = 0; f < SX_FIELD_COUNT; f++)
		cands[n++] = sx_field_get((sx_field)f)->name;
	for (int f = 0; f < SX_FACT_COUNT; f++)
		cands[n++] = sx_fact_get((sx_fact)f)->name;
	cands[n] = NULL;
	hint = sx_rules_closest(name, len, cands, n);
	if (!hint)
		for (size_t k = 0; k < rs->limit_count && !hint; k++)
			hint = sx_rules_closest(name, len, &rs->limits[k].name, 1);
	sx_rules_error(r, src, off, SX_ENOTFOUND,
		       "unknown name '%.*s' in the message%s%s%s", (int)len, name,
		       hint ? " (did you mean '" : "", hint ? hint : "", hint ? "'?)" : "");
	return false;
}

bool sx_rules_template_compile(sx_ruleset *rs, sx_rules_report *r, const sx_ast_string *s,
			       sx_template *out)
{
	const sx_rules_source *src = s->pos.src;
	const char *raw = src->text + s->raw_off;
	size_t n = s->raw_len, i = 0, o = 0, lit_start = 0;
	sx_tpiece pieces[MAX_PIECES];
	size_t count = 0;
	char *text = sx_rules_arena_alloc(&rs->arena, n + 1);
	bool ok = true;

	memset(out, 0, sizeof *out);
	if (!text)
		return false;
	while (i < n) {
		char c = raw[i];
		if (c == '\\' && i + 1 < n) {
			text[o++] = raw[i + 1];
			i += 2;
			continue;
		}
		if (c == '{' && i + 1 < n && raw[i + 1] == '{') {
			text[o++] = '{';
			i += 2;
			continue;
		}
		if (c == '}' && i + 1 < n && raw[i + 1] == '}') {
			text[o++] = '}';
			i += 2;
			continue;
		}
		if (c == '{') {
			size_t open = i, name_start = i + 1, name_end, j = i + 1;
			sx_tpiece *p;
			while (j < n && raw[j] != '}' && raw[j] != ':' && raw[j] != '{')
				j++;
			name_end = j;
			if (count == MAX_PIECES) {
				sx_rules_error(r, src, s->raw_off + open, SX_ELIMIT,
					       "more than %d references in one message",
					       MAX_PIECES - 1);
				return false;
			}
			p = &pieces[count];
			memset(p, 0, sizeof *p);
			p->decimals = -1;
			if (j < n && raw[j] == ':') {
				j++;
				if (j < n && raw[j] == '+') {
					p->sign = true;
					j++;
				}
				if (j < n && raw[j] == '.') {
					j++;
					if (j < n && raw[j] >= '0' && raw[j] <= '6') {
						p->decimals = raw[j] - '0';
						j++;
					} else {
						sx_rules_error(r, src, s->raw_off + j, SX_ESYNTAX,
							       "expected 0 to 6 decimals after '.' "
							       "in a format");
						return false;
					}
				}
			}
			if (j >= n || raw[j] != '}') {
				sx_rules_error(r, src, s->raw_off + (j < n ? j : open), SX_ESYNTAX,
					       j < n ? "expected '}' closing the reference (a format is "
						       ":+, :.1 or :+.1)"
						     : "'{' not closed in the message (write {{ for a "
						       "brace)");
				return false;
			}
			if (name_end == name_start) {
				sx_rules_error(r, src, s->raw_off + open, SX_ESYNTAX,
					       "empty reference '{}' in the message");
				return false;
			}
			p->text = text + lit_start;
			p->len = o - lit_start;
			if (!resolve(rs, r, src, s->raw_off + name_start, raw + name_start,
				     name_end - name_start, p, &out->after_model))
				ok = false;
			count++;
			lit_start = o;
			i = j + 1;
			continue;
		}
		text[o++] = c;
		i++;
	}
	if (!ok)
		return false;
	/* the literal tail */
	pieces[count].text = text + lit_start;
	pieces[count].len = o - lit_start;
	pieces[count].ref = SX_REF_NONE;
	count++;
	out->pieces = sx_rules_arena_alloc(&rs->arena, count * sizeof *pieces);
	if (!out->pieces)
		return false;
	memcpy(out->pieces, pieces, count * sizeof *pieces);
	out->count = count;
	return true;
}

/* ---- rendering --------------------------------------------------------------------- */

typedef struct out_buf {
	char *buf;
	size_t size, len;
	bool cut;
} out_buf;

static void put(out_buf *b, const char *s, size_t n)
{
	if (b->len + n + 1 > b->size) {
		n = b->size > b->len + 1 ? b->size - b->len - 1 : 0;
		b->cut = true;
	}
	memcpy(b->buf + b->len, s, n);
	b->len += n;
	b->buf[b->len] = '\0';
}

static void puts_(out_buf *b, const char *s)
{
	put(b, s, strlen(s));
}

static void put_number(out_buf *b, double v, bool sign, int decimals, const char *unit)
{
	char num[64];
	bool trim = decimals < 0;
	if (trim) {
		double a = fabs(v);
		decimals = a >= 100 ? 0 : a >= 10 ? 1 : a >= 1 ? 2 : 3;
	}
	snprintf(num, sizeof num, sign ? "%+.*f" : "%.*f", decimals, v);
	if (trim && strchr(num, '.')) {
		size_t n = strlen(num);
		while (num[n - 1] == '0')
			num[--n] = '\0';
		if (num[n - 1] == '.')
			num[--n] = '\0';
	}
	if (num[0] == '-' || num[0] == '+') {
		/* a value that rounds to zero has no sign */
		bool zero = true;
		for (const char *q = num + 1; *q; q++)
			if (*q != '0' && *q != '.')
				zero = false;
		if (zero)
			memmove(num, num + 1, strlen(num));
	}
	puts_(b, num);
	if (unit && *unit && strcmp(unit, "1") != 0) {
		puts_(b, " ");
		puts_(b, unit);
	}
}

static void put_field(out_buf *b, const sx_tpiece *p, const sx_specimen *s)
{
	sx_field f = (sx_field)p->index;
	const sx_field_info *info = sx_field_get(f);
	char t[48];
	if (!s || !sx_specimen_has(s, f) || (f == SX_F_AGENTS && s->agent_count == 0)) {
		puts_(b, "not given");
		return;
	}
	switch (info->kind) {
	case SX_KIND_NUMBER:
		put_number(b, s->number[f], p->sign, p->decimals, sx_unit_label(info->quantity));
		return;
	case SX_KIND_CHOICE: {
		const char *name = sx_field_choice_name(f, s->choice[f]);
		puts_(b, name ? name : "?");
		return;
	}
	case SX_KIND_TEXT: {
		const char *text = s->text[f] ? s->text[f] : "";
		size_t n = strlen(text);
		if (n > 80) {
			/* cut on a character boundary */
			n = 80;
			while (n > 0 && ((unsigned char)text[n] & 0xC0) == 0x80)
				n--;
			put(b, text, n);
			puts_(b, "...");
		} else {
			put(b, text, n);
		}
		return;
	}
	case SX_KIND_TIME:
		if (sx_time_format_iso(&s->time[f], t, sizeof t) > 0)
			puts_(b, t);
		return;
	case SX_KIND_AGENTS:
		for (size_t i = 0; i < s->agent_count; i++) {
			if (i)
				puts_(b, ", ");
			puts_(b, s->agents[i].name);
			if (s->agents[i].percent >= 0) {
				puts_(b, " ");
				put_number(b, s->agents[i].percent, false, -1, "%");
			}
		}
		return;
	}
}

void sx_rules_render(const sx_ruleset *rs, const sx_template *t, const sx_specimen *s,
		     const sx_facts *facts, const sx_settings *settings, char *buf, size_t size)
{
	out_buf b = {buf, size, 0, false};
	if (size == 0)
		return;
	buf[0] = '\0';
	for (size_t i = 0; i < t->count; i++) {
		const sx_tpiece *p = &t->pieces[i];
		put(&b, p->text, p->len);
		switch ((sx_ref_kind)p->ref) {
		case SX_REF_NONE:
			break;
		case SX_REF_FIELD:
			put_field(&b, p, s);
			break;
		case SX_REF_FACT:
			if (facts && facts->has[p->index])
				put_number(&b, facts->value[p->index], p->sign, p->decimals,
					   sx_unit_label(sx_fact_get((sx_fact)p->index)->quantity));
			else
				puts_(&b, "not known");
			break;
		case SX_REF_LIMIT: {
			const sx_climit *l = &rs->limits[p->index];
			if (p->decimals >= 0 || p->sign)
				put_number(&b, l->value, p->sign, p->decimals, l->unit);
			else
				puts_(&b, l->shown);
			break;
		}
		case SX_REF_SETTING: {
			sx_range v = sx_param_get(settings, p->param);
			if (p->param->kind == SX_PARAM_OFFSET) {
				char off[16];
				int m = (int)v.nominal, a = m < 0 ? -m : m;
				snprintf(off, sizeof off, "%c%02d:%02d", m < 0 ? '-' : '+', a / 60,
					 a % 60);
				puts_(&b, off);
			} else {
				put_number(&b, v.nominal, p->sign, p->decimals, p->param->unit_label);
			}
			break;
		}
		}
	}
	if (b.cut && size > 4) {
		/* say that it was cut, on a character boundary */
		size_t n = size - 4;
		while (n > 0 && ((unsigned char)buf[n] & 0xC0) == 0x80)
			n--;
		memcpy(buf + n, "...", 4);
	}
}
