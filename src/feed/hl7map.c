/* SPDX-License-Identifier: MIT */
/*
 * hl7map.c - from a parsed HL7 v2 message to specimen records.
 *
 * The message is walked once and cut into units: an OBR or an SPM segment
 * with the OBX and NTE segments that follow it, each unit remembering the
 * patient (PID, PV1) it sits under. Units become records by the message
 * structure of HL7 v2.5.1:
 *   - order first (ORU^R01, chapter 7; OML^O21, chapter 4; also ORU^R30 to
 *     R32): an OBR, then its observations, then its SPM segments; one record
 *     per SPM, or one per OBR that has none;
 *   - specimen first (OUL^R22, chapter 7; OML^O33, chapter 4): an SPM, its
 *     observations, then the OBR segments of the orders on that specimen; one
 *     record per SPM with all its OBRs.
 * Observations (OBX) are read by hl7obx.c. Fields from segments (SPM-17,
 * OBR-7, ...) fill what the observations did not give. docs/hl7.md is the
 * reference for all of it.
 *
 * Names are never read: PID-5 (and the name components of XCN fields) are
 * skipped on purpose; PID-3 identifies the patient.
 */
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/alloc.h"
#include "feed/hl7internal.h"

typedef enum structure {
	ORDER_FIRST,
	SPECIMEN_FIRST,
} structure;

typedef struct msg_unit {
	size_t seg; /* index of the OBR or SPM segment */
	size_t end; /* one past its last attached segment */
	bool spm;
	long pid, pv1;                     /* segment indices, -1 when none */
	size_t patient_first, patient_end; /* PID-level OBX/NTE range */
} msg_unit;

/* ---- reporting --------------------------------------------------------------- */

static int table_0357(sx_status st)
{
	switch (st) {
	case SX_EUNIT:
	case SX_EINVAL:
	case SX_ENOTFOUND:
		return 103; /* table value not found */
	case SX_ESYNTAX:
	case SX_ETIME:
	case SX_ERANGE:
	case SX_ELIMIT:
		return 102; /* data type error */
	default:
		return 207; /* application internal error */
	}
}

static void add_issue(sx_hl7_result *res, const sx_hl7_segment *s, unsigned field, unsigned comp,
                      unsigned sub, int code, sx_severity sev, const char *text)
{
	sx_hl7_issue *i;
	if (res->issue_count >= SX_HL7_MAX_ISSUES) {
		res->issues_dropped++;
		return;
	}
	i = &res->issues[res->issue_count++];
	memset(i, 0, sizeof *i);
	if (s && s->id[0]) {
		memcpy(i->segment, s->id, 4);
		i->seq = s->seq;
		i->field = field;
		i->rep = field ? 1 : 0;
		i->comp = comp;
		i->sub = sub;
	}
	i->code = code;
	i->severity = sev == SX_ERROR ? 'E' : sev == SX_WARNING ? 'W' : 'I';
	/* cut to ERR-8's bound, not inside a UTF-8 sequence */
	{
		size_t n = strlen(text);
		if (n >= sizeof i->text) {
			n = sizeof i->text - 1;
			while (n > 0 && ((unsigned char)text[n] & 0xC0) == 0x80)
				n--;
		}
		memcpy(i->text, text, n);
		i->text[n] = '\0';
	}
}

void sx_hl7_report(sx_hl7_ctx *c, sx_hl7_record *rec, sx_severity sev, sx_status st, int code,
                   bool ack, const sx_hl7_segment *s, unsigned field, unsigned comp, unsigned sub,
                   const char *fmt, ...)
{
	char text[SX_MAX_DIAG_MESSAGE];
	char loc[48] = "";
	sx_where w = {c->opt->source, s ? s->line : c->res->line, 0, NULL, NULL};
	va_list ap;

	va_start(ap, fmt);
	vsnprintf(text, sizeof text, fmt, ap);
	va_end(ap);
	if (s) {
		sx_hl7_location(loc, sizeof loc, s, field, comp, sub);
		w.field = loc;
	}
	sx_diag_add(rec ? &rec->diags : &c->res->diags, sev, st, &w, "%s%s%s: %s", c->name,
	            s ? ", " : "", loc, text);
	if (sev == SX_ERROR || ack)
		add_issue(c->res, s, field, comp, sub, code, sev, text);
	if (!rec && sev == SX_ERROR && c->res->status == SX_OK)
		c->res->status = st != SX_OK ? st : SX_EINVAL;
}

/* ---- values ------------------------------------------------------------------ */

static bool blank(char ch)
{
	return ch == ' ' || ch == '\t';
}

/*
 * Decode the value at SEG-field.rep.comp.sub into one of the ring buffers.
 * The explicit null "" reads as empty. Returns the text (never NULL; "" on a
 * problem, which is reported) and its length.
 */
const char *sx_hl7_value(sx_hl7_ctx *c, sx_hl7_record *rec, const sx_hl7_segment *s, unsigned field,
                         unsigned rep, unsigned comp, unsigned sub, bool trim, size_t *len)
{
	sx_hl7_view raw = sx_hl7_get(c->m, s, field, rep, comp, sub);
	char *out = c->ring[c->ring_next++ % SX_HL7_RING];
	size_t n = 0;
	sx_status st;

	out[0] = '\0';
	*len = 0;
	if (raw.len == 0 || sx_hl7_is_null(raw))
		return out;
	if (raw.len > SX_HL7_MAX_VALUE) {
		sx_hl7_report(c, rec, SX_ERROR, SX_ELIMIT, 102, true, s, field, comp, sub,
		              "value of %zu bytes is longer than the limit of %d", raw.len,
		              SX_HL7_MAX_VALUE);
		return out;
	}
	st = sx_hl7_decode(&c->m->delims, c->m->charset, raw, out, SX_HL7_DECODE_SIZE, &n);
	if (st != SX_OK) {
		sx_hl7_report(c, rec, SX_ERROR, st, 207, true, s, field, comp, sub,
		              "value could not be decoded (%s)", sx_status_message(st));
		out[0] = '\0';
		return out;
	}
	if (trim) {
		size_t a = 0;
		while (a < n && blank(out[a]))
			a++;
		while (n > a && blank(out[n - 1]))
			n--;
		memmove(out, out + a, n - a);
		n -= a;
		out[n] = '\0';
	}
	*len = n;
	return out;
}

/* A value for quoting in a message: printable, cut at 60 bytes. */
const char *sx_hl7_quoted(const char *v, char *buf, size_t size)
{
	size_t n = 0;
	for (; v[n] && n < size - 4 && n < 60; n++)
		buf[n] = ((unsigned char)v[n] < 0x20 || v[n] == 0x7f) ? '?' : v[n];
	buf[n] = '\0';
	if (v[n])
		snprintf(buf + n, size - n, "...");
	return buf;
}

/* Copy a NUL-terminated text into dst (size bytes), cut if it is longer. */
void sx_hl7_copy_text(char *dst, size_t size, const char *src)
{
	size_t n = strlen(src);
	if (n >= size)
		n = size - 1;
	memcpy(dst, src, n);
	dst[n] = '\0';
}

bool sx_hl7_eq_nocase(const char *a, const char *b)
{
	for (; *a && *b; a++, b++) {
		char x = (*a >= 'a' && *a <= 'z') ? (char)(*a - 'a' + 'A') : *a;
		char y = (*b >= 'a' && *b <= 'z') ? (char)(*b - 'a' + 'A') : *b;
		if (x != y)
			return false;
	}
	return *a == *b;
}

static void format_offset(char *out, size_t size, int minutes)
{
	int m = minutes < 0 ? -minutes : minutes;
	snprintf(out, size, "%c%02d:%02d", minutes < 0 ? '-' : '+', m / 60, m % 60);
}

/* Set a field through the record's own parser (units, ranges, choices),
 * with its diagnostics re-told at the HL7 location. */
void sx_hl7_set_value(sx_hl7_ctx *c, sx_hl7_rec *r, sx_field f, const char *v, size_t len,
                      const char *unit, const sx_hl7_segment *s, unsigned field, unsigned comp,
                      unsigned unit_field)
{
	sx_diag_list tmp;
	sx_where w = {NULL, 0, 0, NULL, NULL};

	sx_diag_list_init(&tmp);
	sx_specimen_set(r->s, f, v, len, unit, c->offset_min, &w, &tmp);
	for (size_t i = 0; i < tmp.count; i++) {
		const sx_diag *d = &tmp.items[i];
		bool unit_problem = d->code == SX_EUNIT && unit_field;
		sx_hl7_report(c, r->rec, d->severity, d->code, table_0357(d->code), false, s,
		              unit_problem ? unit_field : field, unit_problem ? 1 : comp, 0, "%s",
		              d->message);
	}
	if (tmp.dropped)
		sx_hl7_report(c, r->rec, SX_ERROR, SX_ENOMEM, 207, false, s, field, comp, 0,
		              "%s: out of memory", sx_field_get(f)->name);
	sx_diag_list_clear(&tmp);
}

void sx_hl7_set_time(sx_hl7_ctx *c, sx_hl7_rec *r, sx_field f, const char *v, size_t len,
                     const sx_hl7_segment *s, unsigned field, unsigned comp, unsigned sub)
{
	const char *why = NULL;
	unsigned col = 0;
	char q[80];
	sx_time t;
	sx_status st;

	st = sx_time_parse_detailed(SX_TIME_HL7, v, len, c->offset_min, &t, &col, &why);
	if (st != SX_OK) {
		sx_hl7_report(c, r->rec, SX_ERROR, SX_ETIME, 102, false, s, field, comp, sub,
		              "%s: '%s' is not an HL7 date/time (%s; character %u)",
		              sx_field_get(f)->name, sx_hl7_quoted(v, q, sizeof q),
		              why ? why : "malformed", col);
		return;
	}
	if (!t.has_offset) {
		char off[16];
		format_offset(off, sizeof off, c->offset_min);
		sx_hl7_report(c, r->rec, SX_WARNING, SX_OK, 0, false, s, field, comp, sub,
		              "%s: '%s' has no UTC offset; %s %s was assumed",
		              sx_field_get(f)->name, sx_hl7_quoted(v, q, sizeof q),
		              c->offset_from_msh ? "MSH-7's offset" : "the site's offset", off);
	}
	r->s->time[f] = t;
	r->s->present[f] = true;
}

void sx_hl7_append_comment(sx_hl7_ctx *c, sx_hl7_rec *r, const char *text, size_t len,
                           const sx_hl7_segment *s, unsigned field)
{
	size_t room;
	if (len == 0)
		return;
	if (r->comments_cut)
		return;
	room = SX_MAX_TEXT - r->comments_len;
	if (r->comments_len) {
		if (room < 2) {
			room = 0;
		} else {
			memcpy(r->comments + r->comments_len, "; ", 2);
			r->comments_len += 2;
			room -= 2;
		}
	}
	if (len > room) {
		size_t n = room;
		/* do not cut a UTF-8 sequence */
		while (n > 0 && n < len && ((unsigned char)text[n] & 0xC0) == 0x80)
			n--;
		memcpy(r->comments + r->comments_len, text, n);
		r->comments_len += n;
		r->comments_cut = true;
		sx_hl7_report(c, r->rec, SX_WARNING, SX_ELIMIT, 0, false, s, field, 0, 0,
		              "comments: the notes are longer than %d bytes; the rest was left out",
		              SX_MAX_TEXT);
		return;
	}
	memcpy(r->comments + r->comments_len, text, len);
	r->comments_len += len;
	r->comments[r->comments_len] = '\0';
}

/* ---- segments ------------------------------------------------------------------ */

static const sx_hl7_segment *seg_at(sx_hl7_ctx *c, long i)
{
	return i >= 0 && (size_t)i < c->m->segment_count ? &c->m->segments[i] : NULL;
}

/* OBX and NTE of the segments [first, end). */
static void map_range(sx_hl7_ctx *c, sx_hl7_rec *r, size_t first, size_t end)
{
	for (size_t i = first; i < end && i < c->m->segment_count; i++) {
		const sx_hl7_segment *s = &c->m->segments[i];
		if (strcmp(s->id, "OBX") == 0) {
			sx_hl7_map_obx(c, r, s);
		} else if (strcmp(s->id, "NTE") == 0) {
			unsigned reps =
			        sx_hl7_pieces(sx_hl7_field(c->m, s, 3), c->m->delims.repetition);
			for (unsigned rep = 1; rep <= reps; rep++) {
				size_t n;
				const char *v = sx_hl7_value(c, r->rec, s, 3, rep, 0, 0, true, &n);
				sx_hl7_append_comment(c, r, v, n, s, 3);
			}
		}
	}
}

/* Specimen type from a code and its coding system: HL7 tables 0487 (v2.5+)
 * and 0070 (earlier), SNOMED CT, or the data-dictionary names under the
 * local systems. 0 when unknown; *whole_blood for BLD. */
static int specimen_type_of(const char *system, const char *code, bool *whole_blood)
{
	static const sx_hl7_code_row hl7_table[] = {
	        {"BLDA", SX_TYPE_ARTERIAL}, {"BLDV", SX_TYPE_VENOUS}, {"BLDC", SX_TYPE_CAPILLARY},
	        {"BLDCO", SX_TYPE_CORD},    {"BLD", SX_TYPE_UNKNOWN},
	};
	static const sx_hl7_code_row snomed[] = {
	        {"122552005", SX_TYPE_ARTERIAL},  /* Arterial blood specimen */
	        {"122555007", SX_TYPE_VENOUS},    /* Venous blood specimen */
	        {"122554006", SX_TYPE_CAPILLARY}, /* Capillary blood specimen */
	};
	bool any = !*system;
	*whole_blood = false;
	if (any || sx_hl7_eq_nocase(system, "HL70487") || sx_hl7_eq_nocase(system, "HL70070"))
		for (size_t i = 0; i < sizeof hl7_table / sizeof hl7_table[0]; i++)
			if (strcmp(code, hl7_table[i].code) == 0) {
				*whole_blood = hl7_table[i].field == SX_TYPE_UNKNOWN;
				return hl7_table[i].field;
			}
	if (any || sx_hl7_eq_nocase(system, "SCT") || sx_hl7_eq_nocase(system, "SNM") ||
	    sx_hl7_eq_nocase(system, "SNOMED") || sx_hl7_eq_nocase(system, "SNOMEDCT") ||
	    strcmp(system, "2.16.840.1.113883.6.96") == 0)
		for (size_t i = 0; i < sizeof snomed / sizeof snomed[0]; i++)
			if (strcmp(code, snomed[i].code) == 0)
				return snomed[i].field;
	if (any || sx_hl7_local_system(system))
		return sx_field_choice_lookup(SX_F_SPECIMEN_TYPE, code, strlen(code));
	return 0;
}

/* SPM-4 (code, then alternate code) or, before v2.5, OBR-15.1 (SPS). */
static void map_specimen_type(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *spm,
                              const sx_hl7_segment *obr)
{
	const sx_hl7_segment *s = spm ? spm : obr;
	unsigned field = spm ? 4 : 15;
	char code[64] = "", system[64] = "", q[80];
	bool whole = false, seen = false;
	int type = 0;
	size_t n;

	if (!s || r->s->present[SX_F_SPECIMEN_TYPE])
		return;
	for (unsigned alt = 0; alt < 2 && !type; alt++) {
		char cand[64], cand_sys[64];
		const char *v;
		if (spm) {
			v = sx_hl7_value(c, r->rec, s, field, 1, alt ? 4 : 1, 0, true, &n);
			sx_hl7_copy_text(cand, sizeof cand, v);
			v = sx_hl7_value(c, r->rec, s, field, 1, alt ? 6 : 3, 0, true, &n);
		} else {
			/* OBR-15 is SPS: its first component is a coded element
			 * whose parts are subcomponents */
			v = sx_hl7_value(c, r->rec, s, field, 1, 1, alt ? 4 : 1, true, &n);
			sx_hl7_copy_text(cand, sizeof cand, v);
			v = sx_hl7_value(c, r->rec, s, field, 1, 1, alt ? 6 : 3, true, &n);
		}
		sx_hl7_copy_text(cand_sys, sizeof cand_sys, v);
		if (!cand[0])
			continue;
		if (!seen) {
			/* the first code names the specimen type in a warning */
			memcpy(code, cand, sizeof code);
			memcpy(system, cand_sys, sizeof system);
		}
		seen = true;
		type = specimen_type_of(cand_sys, cand, &whole);
	}
	if (!seen)
		return;
	if (!type) {
		sx_hl7_report(
		        c, r->rec, SX_WARNING, SX_OK, 0, true, s, field, 1, spm ? 0 : 1,
		        "specimen type '%s'%s%s%s is not a blood-gas specimen type syrinx knows; "
		        "specimen_type is left absent",
		        sx_hl7_quoted(code, q, sizeof q), system[0] ? " (" : "", system,
		        system[0] ? ")" : "");
		return;
	}
	if (whole)
		sx_hl7_report(c, r->rec, SX_WARNING, SX_OK, 0, false, s, field, 1, spm ? 0 : 1,
		              "specimen type BLD (whole blood) does not say arterial or venous; "
		              "specimen_type is unknown");
	r->s->choice[SX_F_SPECIMEN_TYPE] = type;
	r->s->present[SX_F_SPECIMEN_TYPE] = true;
}

/* A time from SEG-field (.1 of TS; for SPM-17, a DR, .1.1) unless the field
 * is present already. */
static bool time_from(sx_hl7_ctx *c, sx_hl7_rec *r, sx_field f, const sx_hl7_segment *s,
                      unsigned field, unsigned comp, unsigned sub)
{
	size_t n;
	const char *v;
	if (!s || r->s->present[f])
		return false;
	v = sx_hl7_value(c, r->rec, s, field, 1, comp, sub, true, &n);
	if (n == 0)
		return false;
	sx_hl7_set_time(c, r, f, v, n, s, field, comp, sub);
	return true;
}

static void text_from(sx_hl7_ctx *c, sx_hl7_rec *r, sx_field f, const sx_hl7_segment *s,
                      unsigned field, unsigned rep, unsigned comp, unsigned sub)
{
	size_t n;
	const char *v;
	if (!s || r->s->present[f])
		return;
	v = sx_hl7_value(c, r->rec, s, field, rep, comp, sub, true, &n);
	if (n)
		sx_hl7_set_value(c, r, f, v, n, NULL, s, field, comp, 0);
}

/* PID-3: the identifier of type MR when there is one, else the first. */
static void map_patient_id(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *pid)
{
	unsigned reps, pick = 1;
	if (!pid || r->s->present[SX_F_PATIENT_ID])
		return;
	reps = sx_hl7_pieces(sx_hl7_field(c->m, pid, 3), c->m->delims.repetition);
	for (unsigned rep = 1; rep <= reps; rep++) {
		size_t n;
		const char *t = sx_hl7_value(c, r->rec, pid, 3, rep, 5, 0, true, &n);
		if (strcmp(t, "MR") == 0) {
			pick = rep;
			break;
		}
	}
	text_from(c, r, SX_F_PATIENT_ID, pid, 3, pick, 1, 0);
	if (!r->s->present[SX_F_PATIENT_ID])
		text_from(c, r, SX_F_PATIENT_ID, pid, 2, 1, 1, 0); /* v2.3 external id */
}

/* PV1-3: point of care / room / bed, the parts given, joined with '/'. */
static void map_location(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *pv1)
{
	char loc[3 * 128 + 3];
	size_t used = 0;
	if (!pv1 || r->s->present[SX_F_LOCATION])
		return;
	for (unsigned comp = 1; comp <= 3; comp++) {
		size_t n;
		const char *v = sx_hl7_value(c, r->rec, pv1, 3, 1, comp, 0, true, &n);
		if (n == 0)
			continue;
		if (n > 127)
			n = 127;
		if (used)
			loc[used++] = '/';
		memcpy(loc + used, v, n);
		used += n;
	}
	if (used)
		sx_hl7_set_value(c, r, SX_F_LOCATION, loc, used, NULL, pv1, 3, 0, 0);
}

/* SPM-12 collection amount (CQ: quantity ^ units). */
static void map_amount(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *spm)
{
	size_t n, un;
	const char *v, *unit;
	if (!spm || r->s->present[SX_F_FILL_VOLUME_ML] || r->twice[SX_F_FILL_VOLUME_ML])
		return;
	v = sx_hl7_value(c, r->rec, spm, 12, 1, 1, 0, true, &n);
	if (n == 0)
		return;
	unit = sx_hl7_value(c, r->rec, spm, 12, 1, 2, 1, true, &un);
	sx_hl7_set_value(c, r, SX_F_FILL_VOLUME_ML, v, n, un ? unit : NULL, spm, 12, 1, 12);
}

/* SPM-21 reject reason and SPM-24 condition: no field of the data
 * dictionary, so they go to comments (where the ruleset's text rules see
 * them) and into a warning. */
static void map_condition(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *spm)
{
	static const struct {
		unsigned field;
		const char *what;
		const char *table;
	} parts[] = {
	        {21, "specimen reject reason", "0490"},
	        {24, "specimen condition", "0493"},
	};
	if (!spm)
		return;
	for (size_t p = 0; p < 2; p++) {
		unsigned reps = sx_hl7_pieces(sx_hl7_field(c->m, spm, parts[p].field),
		                              c->m->delims.repetition);
		for (unsigned rep = 1; rep <= reps; rep++) {
			char line[300];
			size_t cn, tn;
			const char *code =
			        sx_hl7_value(c, r->rec, spm, parts[p].field, rep, 1, 0, true, &cn);
			const char *text =
			        sx_hl7_value(c, r->rec, spm, parts[p].field, rep, 2, 0, true, &tn);
			int k;
			if (!cn && !tn)
				continue;
			if (cn && tn)
				k = snprintf(line, sizeof line, "%s: %.120s (%.60s)", parts[p].what,
				             text, code);
			else
				k = snprintf(line, sizeof line, "%s: %.120s", parts[p].what,
				             tn ? text : code);
			if (k < 0)
				continue;
			sx_hl7_append_comment(c, r, line, strlen(line), spm, parts[p].field);
			sx_hl7_report(
			        c, r->rec, SX_WARNING, SX_OK, 0, true, spm, parts[p].field, 0, 0,
			        "%s (HL7 table %s); added to comments, as the data dictionary has "
			        "no field for it",
			        line, parts[p].table);
		}
	}
}

/* Age from PID-7 (date of birth) and the collection time, when no age was
 * given. */
static void map_age(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *pid)
{
	const char *why = NULL;
	unsigned col;
	size_t n;
	const char *v;
	sx_time birth;
	double years;
	char q[80];

	if (!pid || r->s->present[SX_F_PATIENT_AGE_YEARS] || !r->s->present[SX_F_COLLECTED_AT])
		return;
	v = sx_hl7_value(c, r->rec, pid, 7, 1, 1, 0, true, &n);
	if (n == 0)
		return;
	if (sx_time_parse_detailed(SX_TIME_HL7, v, n, c->offset_min, &birth, &col, &why) != SX_OK) {
		sx_hl7_report(c, r->rec, SX_WARNING, SX_ETIME, 102, true, pid, 7, 1, 0,
		              "date of birth '%s' is not an HL7 date (%s); the age is not known",
		              sx_hl7_quoted(v, q, sizeof q), why ? why : "malformed");
		return;
	}
	years = sx_time_minutes_between(&birth, &r->s->time[SX_F_COLLECTED_AT]) /
	        (60.0 * 24.0 * 365.2425);
	if (sx_specimen_set_number(r->s, SX_F_PATIENT_AGE_YEARS, years) != SX_OK)
		sx_hl7_report(
		        c, r->rec, SX_WARNING, SX_ERANGE, 102, true, pid, 7, 1, 0,
		        "date of birth '%s' gives an age of %.1f years at collection; the age is "
		        "not used",
		        sx_hl7_quoted(v, q, sizeof q), years);
}

/* The analysis time: OBX-19 of the pO2 observation, else its OBX-14, else
 * MSH-7 (the message was sent after the analysis). */
static void map_analysed(sx_hl7_ctx *c, sx_hl7_rec *r)
{
	const sx_hl7_segment *obx = r->po2_obx;
	if (r->s->present[SX_F_ANALYSED_AT] || !obx || !r->s->present[SX_F_PO2])
		return;
	if (time_from(c, r, SX_F_ANALYSED_AT, obx, 19, 1, 0))
		return;
	if (time_from(c, r, SX_F_ANALYSED_AT, obx, 14, 1, 0))
		return;
	if (c->has_msh7) {
		r->s->time[SX_F_ANALYSED_AT] = c->msh7;
		r->s->present[SX_F_ANALYSED_AT] = true;
		sx_hl7_report(
		        c, r->rec, SX_WARNING, SX_OK, 0, false, obx, 19, 0, 0,
		        "analysed_at: the pO2 observation has no OBX-19 or OBX-14; the message "
		        "time MSH-7 was taken, which may be later than the analysis");
	}
}

/* ---- records ------------------------------------------------------------------- */

typedef struct plan {
	long spm;         /* unit index or -1 */
	size_t obr_first; /* unit index */
	size_t obr_count;
} plan;

static int by_segment(const void *a, const void *b)
{
	const msg_unit *x = *(const msg_unit *const *)a, *y = *(const msg_unit *const *)b;
	return x->seg < y->seg ? -1 : x->seg > y->seg;
}

static void map_record(sx_hl7_ctx *c, const msg_unit *units, const plan *p, sx_hl7_record *rec)
{
	sx_hl7_rec *r = sx_calloc(1, sizeof *r);
	const msg_unit *list[1 + 64];
	size_t count = 0;
	const msg_unit *main_unit;
	const sx_hl7_segment *spm, *obr = NULL, *pid, *pv1;

	sx_specimen_init(&rec->specimen);
	sx_diag_list_init(&rec->diags);
	if (!r) {
		sx_hl7_report(c, rec, SX_ERROR, SX_ENOMEM, 207, false, NULL, 0, 0, 0,
		              "out of memory");
		rec->input_errors = 1;
		return;
	}
	r->rec = rec;
	r->s = &rec->specimen;
	r->s->source = c->opt->source;

	if (p->spm >= 0)
		list[count++] = &units[p->spm];
	for (size_t i = 0; i < p->obr_count && count < sizeof list / sizeof list[0]; i++)
		list[count++] = &units[p->obr_first + i];
	qsort(list, count, sizeof list[0], by_segment);
	main_unit = p->spm >= 0 ? &units[p->spm] : &units[p->obr_first];
	spm = p->spm >= 0 ? &c->m->segments[units[p->spm].seg] : NULL;
	if (p->obr_count)
		obr = &c->m->segments[units[p->obr_first].seg];
	pid = seg_at(c, main_unit->pid);
	pv1 = seg_at(c, main_unit->pv1);
	rec->line = (spm ? spm : obr)->line;
	r->s->source_line = rec->line;

	/* notes and observations, in message order: the message's, the
	 * patient's, then the units' */
	map_range(c, r, 1, c->message_end);
	if (main_unit->pid >= 0)
		map_range(c, r, main_unit->patient_first, main_unit->patient_end);
	for (size_t i = 0; i < count; i++)
		map_range(c, r, list[i]->seg + 1, list[i]->end);

	/* fields from segments, where the observations gave none */
	if (spm && !r->s->present[SX_F_SPECIMEN_ID]) {
		text_from(c, r, SX_F_SPECIMEN_ID, spm, 2, 1, 2, 1); /* filler id */
		text_from(c, r, SX_F_SPECIMEN_ID, spm, 2, 1, 1, 1); /* placer id */
	}
	for (size_t i = 0; i < p->obr_count && !r->s->present[SX_F_SPECIMEN_ID]; i++) {
		const sx_hl7_segment *o = &c->m->segments[units[p->obr_first + i].seg];
		text_from(c, r, SX_F_SPECIMEN_ID, o, 3, 1, 1, 0); /* filler order number */
		text_from(c, r, SX_F_SPECIMEN_ID, o, 2, 1, 1, 0); /* placer order number */
	}
	map_patient_id(c, r, pid);
	map_location(c, r, pv1);
	for (size_t i = 0; i < p->obr_count; i++) {
		const sx_hl7_segment *o = &c->m->segments[units[p->obr_first + i].seg];
		text_from(c, r, SX_F_COLLECTOR, o, 10, 1, 1, 0); /* XCN.1: the id, not the name */
	}
	map_specimen_type(c, r, spm, spm ? NULL : obr);
	if (spm)
		time_from(c, r, SX_F_COLLECTED_AT, spm, 17, 1, 1); /* DR: range start, TS.1 */
	if (spm)
		time_from(c, r, SX_F_RECEIVED_AT, spm, 18, 1, 0);
	for (size_t i = 0; i < p->obr_count; i++) {
		const sx_hl7_segment *o = &c->m->segments[units[p->obr_first + i].seg];
		time_from(c, r, SX_F_COLLECTED_AT, o, 7, 1, 0);
		time_from(c, r, SX_F_RECEIVED_AT, o, 14, 1, 0);
	}
	map_amount(c, r, spm);
	map_condition(c, r, spm);
	map_analysed(c, r);
	map_age(c, r, pid);
	sx_hl7_finish_agents(c, r);
	if (r->comments_len && !r->s->present[SX_F_COMMENTS])
		sx_hl7_set_value(c, r, SX_F_COMMENTS, r->comments, r->comments_len, NULL, NULL, 0,
		                 0, 0);
	else if (r->comments_len) {
		/* SX-COMMENTS observations and notes together */
		size_t old = strlen(r->s->text[SX_F_COMMENTS]);
		char *both = sx_malloc(old + 2 + r->comments_len + 1);
		if (both) {
			memcpy(both, r->s->text[SX_F_COMMENTS], old);
			memcpy(both + old, "; ", 2);
			memcpy(both + old + 2, r->comments, r->comments_len);
			both[old + 2 + r->comments_len] = '\0';
			sx_hl7_set_value(c, r, SX_F_COMMENTS, both,
			                 old + 2 + r->comments_len > SX_MAX_TEXT
			                         ? SX_MAX_TEXT
			                         : old + 2 + r->comments_len,
			                 NULL, NULL, 0, 0, 0);
			sx_free(both);
		}
	}
	if (!r->s->present[SX_F_SPECIMEN_ID]) {
		sx_hl7_report(
		        c, rec, SX_ERROR, SX_EINVAL, 101, false, spm ? spm : obr, spm ? 2 : 3, 0, 0,
		        "no specimen id (%s); the specimen at line %u cannot be identified",
		        spm ? "SPM-2, OBR-3 and OBR-2 are empty" : "OBR-3 and OBR-2 are empty",
		        rec->line);
	}
	rec->input_errors = rec->diags.errors;
	/* every diagnostic of the specimen gets its id */
	if (r->s->present[SX_F_SPECIMEN_ID])
		for (size_t i = 0; i < rec->diags.count; i++)
			if (!rec->diags.items[i].specimen_id)
				rec->diags.items[i].specimen_id =
				        sx_strdup(r->s->text[SX_F_SPECIMEN_ID]);
	sx_free(r);
}

/* ---- the message ----------------------------------------------------------------- */

typedef struct message_kind {
	const char *code, *event;
	structure shape;
} message_kind;

static const message_kind kinds[] = {
        {"ORU", "R01", ORDER_FIRST},    {"ORU", "R30", ORDER_FIRST},    {"ORU", "R31", ORDER_FIRST},
        {"ORU", "R32", ORDER_FIRST},    {"OUL", "R22", SPECIMEN_FIRST}, {"OML", "O21", ORDER_FIRST},
        {"OML", "O33", SPECIMEN_FIRST},
};

/* MSH-12: 2.3 up to 2.8 (and later 2.x, with a warning). 0 ok, 1 warn, -1
 * refuse. */
static int version_check(const char *v)
{
	long minor = 0;
	const char *p;
	if (strncmp(v, "2.", 2) != 0 || v[2] < '0' || v[2] > '9')
		return -1;
	for (p = v + 2; *p >= '0' && *p <= '9'; p++)
		if (minor < 1000)
			minor = minor * 10 + (*p - '0');
	if (*p && *p != '.')
		return -1;
	if (minor < 3)
		return -1;
	return minor > 8 ? 1 : 0;
}

static bool read_header(sx_hl7_ctx *c, structure *shape)
{
	const sx_hl7_segment *msh = &c->m->segments[0];
	const char *v, *code, *event;
	char q[80], code_buf[8], event_buf[8];
	size_t n, cn, en;
	bool known_code = false;
	int vc;

	/* MSH-10: the name of the message in every diagnostic */
	v = sx_hl7_value(c, NULL, msh, 10, 1, 0, 0, true, &n);
	if (n > SX_HL7_MAX_CONTROL_ID) {
		snprintf(c->name, sizeof c->name, "message at line %u", c->res->line);
		sx_hl7_report(c, NULL, SX_ERROR, SX_ELIMIT, 102, true, msh, 10, 0, 0,
		              "the message control id is %zu bytes long; the limit is %d", n,
		              SX_HL7_MAX_CONTROL_ID);
	} else if (n == 0) {
		snprintf(c->name, sizeof c->name, "message at line %u (no MSH-10)", c->res->line);
		sx_hl7_report(c, NULL, SX_ERROR, SX_EINVAL, 101, true, msh, 10, 0, 0,
		              "the message control id is missing");
	} else {
		memcpy(c->res->control_id, v, n + 1);
		c->res->has_control_id = true;
		snprintf(c->name, sizeof c->name, "message %s", c->res->control_id);
	}

	/* MSH-9: message type */
	code = sx_hl7_value(c, NULL, msh, 9, 1, 1, 0, true, &cn);
	sx_hl7_copy_text(code_buf, sizeof code_buf, code);
	event = sx_hl7_value(c, NULL, msh, 9, 1, 2, 0, true, &en);
	sx_hl7_copy_text(event_buf, sizeof event_buf, event);
	snprintf(c->res->type, sizeof c->res->type, "%s%s%s", code_buf, en ? "^" : "", event_buf);
	if (cn == 0) {
		sx_hl7_report(c, NULL, SX_ERROR, SX_EINVAL, 101, true, msh, 9, 1, 0,
		              "the message type is missing");
		c->res->ack_code = SX_HL7_AR;
		return false;
	}
	{
		bool found = false;
		for (size_t i = 0; i < sizeof kinds / sizeof kinds[0]; i++) {
			if (strcmp(kinds[i].code, code_buf) != 0)
				continue;
			known_code = true;
			if (strcmp(kinds[i].event, event_buf) == 0) {
				*shape = kinds[i].shape;
				found = true;
			}
		}
		if (!found) {
			sx_hl7_report(
			        c, NULL, SX_ERROR, SX_EINVAL, known_code ? 201 : 200, true, msh, 9,
			        known_code ? 2 : 1, 0,
			        "message type %s is not read by syrinx (it reads ORU^R01, "
			        "OUL^R22, OML^O21, OML^O33 and ORU^R30 to R32); the message was "
			        "skipped",
			        sx_hl7_quoted(c->res->type, q, sizeof q));
			c->res->ack_code = SX_HL7_AR;
			return false;
		}
	}

	/* MSH-12: version */
	v = sx_hl7_value(c, NULL, msh, 12, 1, 1, 0, true, &n);
	if (n == 0) {
		sx_hl7_report(c, NULL, SX_WARNING, SX_OK, 101, true, msh, 12, 0, 0,
		              "the version id is missing; the message was read as v2.5.1");
	} else if ((vc = version_check(v)) < 0) {
		sx_hl7_report(
		        c, NULL, SX_ERROR, SX_EINVAL, 203, true, msh, 12, 1, 0,
		        "version '%s' is not read by syrinx (it reads v2.3 to v2.8); the message "
		        "was skipped",
		        sx_hl7_quoted(v, q, sizeof q));
		c->res->ack_code = SX_HL7_AR;
		return false;
	} else if (vc > 0) {
		sx_hl7_report(c, NULL, SX_WARNING, SX_OK, 203, true, msh, 12, 1, 0,
		              "version '%s' is later than v2.8; it was read as v2.8",
		              sx_hl7_quoted(v, q, sizeof q));
	}

	/* MSH-7: its offset is the sender's for times without one */
	v = sx_hl7_value(c, NULL, msh, 7, 1, 1, 0, true, &n);
	if (n == 0) {
		sx_hl7_report(c, NULL, SX_ERROR, SX_EINVAL, 101, true, msh, 7, 0, 0,
		              "the message time is missing");
	} else {
		const char *why = NULL;
		unsigned col = 0;
		if (sx_time_parse_detailed(SX_TIME_HL7, v, n, c->opt->default_offset_min, &c->msh7,
		                           &col, &why) != SX_OK) {
			sx_hl7_report(
			        c, NULL, SX_ERROR, SX_ETIME, 102, true, msh, 7, 1, 0,
			        "message time '%s' is not an HL7 date/time (%s; character %u)",
			        sx_hl7_quoted(v, q, sizeof q), why ? why : "malformed", col);
		} else {
			c->has_msh7 = true;
			if (c->msh7.has_offset) {
				c->offset_min = c->msh7.offset_min;
				c->offset_from_msh = true;
			}
		}
	}

	if (c->m->charset == SX_HL7_OTHER) {
		v = sx_hl7_value(c, NULL, msh, 18, 1, 0, 0, true, &n);
		sx_hl7_report(
		        c, NULL, SX_WARNING, SX_OK, 0, true, msh, 18, 0, 0,
		        "character set '%s' is not one syrinx converts (ASCII, UNICODE UTF-8, "
		        "8859/1); the text was read as UTF-8",
		        sx_hl7_quoted(v, q, sizeof q));
	}
	return true;
}

/* Cut the message into units (see the top of the file). */
static size_t cut_units(sx_hl7_ctx *c, msg_unit *units, size_t max, size_t *dropped)
{
	size_t count = 0;
	long pid = -1, pv1 = -1;
	size_t patient_first = 0;
	bool patient_open = false;
	msg_unit *cur = NULL;

	c->message_end = c->m->segment_count;
	*dropped = 0;
	for (size_t i = 1; i < c->m->segment_count; i++) {
		const sx_hl7_segment *s = &c->m->segments[i];
		bool is_obr = strcmp(s->id, "OBR") == 0, is_spm = strcmp(s->id, "SPM") == 0;
		if (strcmp(s->id, "PID") == 0) {
			if (c->message_end == c->m->segment_count)
				c->message_end = i;
			if (cur)
				cur->end = i;
			cur = NULL;
			pid = (long)i;
			pv1 = -1;
			patient_first = i + 1;
			patient_open = true;
			continue;
		}
		if (strcmp(s->id, "PV1") == 0) {
			pv1 = (long)i;
			continue;
		}
		if (strcmp(s->id, "DSC") == 0) {
			sx_hl7_report(c, NULL, SX_WARNING, SX_OK, 0, true, s, 0, 0, 0,
			              "continuation (DSC) is not supported: only this part of the "
			              "message was read");
			continue;
		}
		if (strcmp(s->id, "MSH") == 0) {
			sx_hl7_report(
			        c, NULL, SX_ERROR, SX_ESYNTAX, 100, true, s, 0, 0, 0,
			        "a second MSH segment inside one message; the segments after it "
			        "were not read");
			break;
		}
		if (!s->id[0]) {
			char q[80], raw[16];
			sx_hl7_view id = sx_hl7_field(c->m, s, 0);
			size_t k = id.len < sizeof raw - 1 ? id.len : sizeof raw - 1;
			memcpy(raw, id.p, k);
			raw[k] = '\0';
			sx_hl7_report(c, NULL, SX_WARNING, SX_OK, 100, true, NULL, 0, 0, 0,
			              "line %u: '%s' is not a segment id; the segment was ignored",
			              s->line, sx_hl7_quoted(raw, q, sizeof q));
			continue;
		}
		if (!is_obr && !is_spm)
			continue;
		if (c->message_end == c->m->segment_count)
			c->message_end = i;
		if (cur)
			cur->end = i;
		if (count >= max) {
			(*dropped)++;
			cur = NULL;
			continue;
		}
		cur = &units[count++];
		cur->seg = i;
		cur->end = c->m->segment_count;
		cur->spm = is_spm;
		cur->pid = pid;
		cur->pv1 = pv1;
		cur->patient_first = patient_first;
		cur->patient_end = i;
		if (patient_open) {
			/* the patient's own observations end at the first unit */
			for (size_t k = 0; k < count - 1; k++)
				if (units[k].pid == pid)
					cur->patient_end = units[k].patient_end;
		}
	}
	return count;
}

/* Records from units by the message's structure. */
static size_t make_plans(const msg_unit *units, size_t count, structure shape, plan *plans)
{
	size_t n = 0, i = 0;
	while (i < count) {
		const msg_unit *u = &units[i];
		bool lead = shape == ORDER_FIRST ? !u->spm : u->spm;
		size_t j = i + 1;
		if (!lead) {
			/* a follower without its leader: a record on its own */
			plans[n].spm = u->spm ? (long)i : -1;
			plans[n].obr_first = i;
			plans[n].obr_count = u->spm ? 0 : 1;
			n++;
			i++;
			continue;
		}
		while (j < count && units[j].spm == (shape == ORDER_FIRST) &&
		       units[j].pid == u->pid)
			j++;
		if (shape == ORDER_FIRST) {
			if (j == i + 1) {
				plans[n++] = (plan){-1, i, 1};
			} else {
				for (size_t k = i + 1; k < j; k++)
					plans[n++] = (plan){(long)k, i, 1};
			}
		} else {
			plans[n++] = (plan){(long)i, i + 1, j - i - 1};
		}
		i = j;
	}
	return n;
}

void sx_hl7_result_init(sx_hl7_result *res)
{
	memset(res, 0, sizeof *res);
	sx_diag_list_init(&res->diags);
}

void sx_hl7_result_clear(sx_hl7_result *res)
{
	if (!res)
		return;
	for (size_t i = 0; i < res->record_count; i++) {
		sx_specimen_clear(&res->records[i].specimen);
		sx_diag_list_clear(&res->records[i].diags);
	}
	sx_free(res->records);
	sx_diag_list_clear(&res->diags);
	sx_free(res->msh);
	sx_hl7_result_init(res);
}

static void finish_ack_code(sx_hl7_result *res)
{
	if (res->ack_code == SX_HL7_AR)
		return;
	for (size_t i = 0; i < res->issue_count; i++)
		if (res->issues[i].severity == 'E')
			res->ack_code = SX_HL7_AE;
	if (res->issues_dropped)
		res->ack_code = SX_HL7_AE;
}

sx_status sx_hl7_map(const sx_hl7_message *m, const sx_hl7_options *opt, sx_hl7_result *res)
{
	sx_hl7_ctx c;
	msg_unit *units = NULL;
	plan *plans = NULL;
	size_t unit_count, plan_count, dropped;
	structure shape = ORDER_FIRST;
	sx_status st = SX_OK;

	sx_hl7_result_clear(res);
	memset(&c, 0, sizeof c);
	c.m = m;
	c.opt = opt;
	c.res = res;
	c.offset_min = opt->default_offset_min;
	res->line = m->first_line;
	snprintf(c.name, sizeof c.name, "message at line %u", m->first_line);
	for (int i = 0; i < SX_HL7_RING; i++) {
		c.ring[i] = sx_malloc(SX_HL7_DECODE_SIZE);
		if (!c.ring[i]) {
			st = SX_ENOMEM;
			goto out;
		}
	}
	if (m->segment_count) {
		const sx_hl7_segment *msh = &m->segments[0];
		res->msh_len = sx_hl7_field(m, msh, msh->count - 1).p +
		               sx_hl7_field(m, msh, msh->count - 1).len - m->data;
		res->msh = sx_strndup(m->data, res->msh_len);
		if (!res->msh) {
			st = SX_ENOMEM;
			goto out;
		}
	}
	if (!read_header(&c, &shape))
		goto out;

	units = sx_calloc(m->segment_count ? m->segment_count : 1, sizeof *units);
	if (!units) {
		st = SX_ENOMEM;
		goto out;
	}
	unit_count = cut_units(&c, units, m->segment_count, &dropped);
	if (unit_count == 0) {
		sx_hl7_report(&c, NULL, SX_ERROR, SX_EINVAL, 100, true, &m->segments[0], 0, 0, 0,
		              "no SPM or OBR segment: the message holds no specimen");
		goto out;
	}
	plans = sx_calloc(unit_count, sizeof *plans);
	if (!plans) {
		st = SX_ENOMEM;
		goto out;
	}
	plan_count = make_plans(units, unit_count, shape, plans);
	if (plan_count > SX_HL7_MAX_SPECIMENS) {
		sx_hl7_report(
		        &c, NULL, SX_ERROR, SX_ELIMIT, 207, true, &m->segments[0], 0, 0, 0,
		        "%zu specimens in one message; the limit is %d, the rest were not read",
		        plan_count, SX_HL7_MAX_SPECIMENS);
		plan_count = SX_HL7_MAX_SPECIMENS;
	}
	res->records = sx_calloc(plan_count, sizeof *res->records);
	if (!res->records) {
		st = SX_ENOMEM;
		goto out;
	}
	for (size_t i = 0; i < plan_count; i++) {
		map_record(&c, units, &plans[i], &res->records[i]);
		res->record_count++;
	}
out:
	finish_ack_code(res);
	for (int i = 0; i < SX_HL7_RING; i++)
		sx_free(c.ring[i]);
	sx_free(units);
	sx_free(plans);
	return st;
}

sx_status sx_hl7_read_message(const char *data, size_t len, unsigned line,
                              const sx_hl7_options *opt, sx_hl7_result *res)
{
	sx_hl7_message m;
	char why[SX_MAX_DIAG_MESSAGE];
	sx_status st;

	sx_hl7_result_clear(res);
	res->line = line;
	st = sx_hl7_parse(data, len, line, &m, why, sizeof why);
	if (st == SX_ENOMEM)
		return st;
	if (st != SX_OK) {
		sx_where w = {opt->source, line, 0, NULL, NULL};
		sx_diag_add(&res->diags, SX_ERROR, st, &w, "message at line %u: %s; it was skipped",
		            line, why);
		res->status = st;
		res->ack_code = SX_HL7_AR;
		add_issue(res, NULL, 0, 0, 0, st == SX_ELIMIT ? 207 : 102, SX_ERROR, why);
		return SX_OK;
	}
	st = sx_hl7_map(&m, opt, res);
	sx_hl7_message_free(&m);
	return st;
}
