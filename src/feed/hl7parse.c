/* SPDX-License-Identifier: MIT */
/*
 * hl7parse.c - HL7 v2 encoding rules: the message index, value access,
 * escape decoding and the reader that cuts a stream into messages.
 *
 * Design notes. The parser never copies a value: a message becomes a table of
 * segments and a table of field views, and components are found by scanning
 * one field when read. Decoding (escapes, character set) happens last and only
 * for values the mapping reads, into a caller's buffer; this is the order HL7
 * v2.5.1 section 2.7 asks for (split first, then unescape), so an escaped
 * delimiter never splits a value.
 *
 * Tolerances, each from what real feeds send (HL7-NOTES.md in the project
 * notes; docs/hl7.md): CRLF is read as CR; LF ends segments only when the
 * message holds no CR at all (then a literal LF inside text survives); empty
 * segments are skipped; a UTF-8 byte order mark and the MLLP frame bytes
 * (0x0B, 0x1C) around a message are skipped; MSH-2 may hold 1 to 5
 * characters (4 until v2.6, a fifth truncation character from v2.7).
 */
#include "feed/hl7parse.h"

#include <limits.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"

#define MLLP_START 0x0B
#define MLLP_END   0x1C

static bool is_alnum(unsigned char c)
{
	return (c >= '0' && c <= '9') || (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z');
}

static bool is_upper_alnum(unsigned char c)
{
	return (c >= '0' && c <= '9') || (c >= 'A' && c <= 'Z');
}

static bool is_frame_byte(unsigned char c)
{
	return c == '\r' || c == '\n' || c == MLLP_START || c == MLLP_END;
}

static void say(char *why, size_t size, const char *fmt, ...) __attribute__((format(printf, 3, 4)));
static void say(char *why, size_t size, const char *fmt, ...)
{
	va_list ap;
	if (!why || !size)
		return;
	va_start(ap, fmt);
	vsnprintf(why, size, fmt, ap);
	va_end(ap);
}

/* Printable form of a few bytes for a message: control bytes become '?'. */
static void shown(char *out, size_t size, const char *p, size_t len)
{
	size_t n = len < size - 1 ? len : size - 1;
	for (size_t i = 0; i < n; i++) {
		unsigned char c = (unsigned char)p[i];
		out[i] = (c >= 0x20 && c < 0x7f) ? (char)c : '?';
	}
	out[n] = '\0';
}

unsigned sx_hl7_count_lines(const char *p, size_t len)
{
	char term;
	unsigned n = 0;
	if (!p || !len)
		return 0;
	term = memchr(p, '\r', len) ? '\r' : '\n';
	for (size_t i = 0; i < len; i++)
		if (p[i] == term)
			n++;
	return n;
}

/* ---- the message index --------------------------------------------------- */

void sx_hl7_message_free(sx_hl7_message *m)
{
	if (!m)
		return;
	sx_free(m->segments);
	sx_free(m->fields);
	memset(m, 0, sizeof *m);
}

static bool add_field(sx_hl7_message *m, const char *p, size_t len)
{
	if (m->field_count == m->field_cap) {
		size_t cap = m->field_cap ? m->field_cap * 2 : 64;
		sx_hl7_view *f;
		if (cap > SX_HL7_MAX_MESSAGE_FIELDS)
			cap = SX_HL7_MAX_MESSAGE_FIELDS;
		f = sx_realloc(m->fields, cap * sizeof *f);
		if (!f)
			return false;
		m->fields = f;
		m->field_cap = cap;
	}
	m->fields[m->field_count].p = p;
	m->fields[m->field_count].len = len;
	m->field_count++;
	return true;
}

/* Occurrence counts of segment ids, for the "OBX[3]" sequence numbers. */
typedef struct id_count {
	char id[4];
	unsigned n;
} id_count;

#define ID_TABLE 64

static unsigned next_seq(id_count *table, size_t *used, const sx_hl7_message *m, const char *id)
{
	for (size_t i = 0; i < *used; i++)
		if (memcmp(table[i].id, id, 4) == 0)
			return ++table[i].n;
	if (*used < ID_TABLE) {
		memcpy(table[*used].id, id, 4);
		table[*used].n = 1;
		(*used)++;
		return 1;
	}
	/* more distinct ids than the table holds: count by hand */
	{
		unsigned n = 1;
		for (size_t i = 0; i < m->segment_count; i++)
			if (memcmp(m->segments[i].id, id, 4) == 0)
				n++;
		return n;
	}
}

static bool is_header_id(const char *p)
{
	return memcmp(p, "MSH", 3) == 0 || memcmp(p, "FHS", 3) == 0 || memcmp(p, "BHS", 3) == 0;
}

/* Index one segment [p, p+len). Returns SX_OK or SX_ELIMIT / SX_ENOMEM. */
static sx_status index_segment(sx_hl7_message *m, const char *p, size_t len, unsigned line,
                               id_count *ids, size_t *ids_used, char *why, size_t why_size)
{
	char fs = m->delims.field;
	sx_hl7_segment seg;
	size_t i, start;

	if (m->segment_count >= SX_HL7_MAX_SEGMENTS) {
		say(why, why_size, "the message has more than %d segments (the limit)",
		    SX_HL7_MAX_SEGMENTS);
		return SX_ELIMIT;
	}
	if (m->segment_count == m->segment_cap) {
		size_t cap = m->segment_cap ? m->segment_cap * 2 : 16;
		sx_hl7_segment *s = sx_realloc(m->segments, cap * sizeof *s);
		if (!s)
			return SX_ENOMEM;
		m->segments = s;
		m->segment_cap = cap;
	}
	memset(&seg, 0, sizeof seg);
	seg.line = line;
	seg.first = m->field_count;

	/* field 0: the id */
	for (i = 0; i < len && p[i] != fs; i++)
		;
	if (i == 3 && is_upper_alnum((unsigned char)p[0]) && is_upper_alnum((unsigned char)p[1]) &&
	    is_upper_alnum((unsigned char)p[2]))
		memcpy(seg.id, p, 3);
	if (!add_field(m, p, i))
		return SX_ENOMEM;
	if (seg.id[0] && is_header_id(seg.id) && len >= 4) {
		/* MSH-1 is the separator itself; MSH-2 runs to the next separator
		 * and is never split (section 2.5.4 of chapter 2) */
		size_t e = 4;
		while (e < len && p[e] != fs)
			e++;
		if (!add_field(m, p + 3, 1) || !add_field(m, p + 4, e - 4))
			return SX_ENOMEM;
		i = e;
	}
	while (i < len) {
		/* p[i] is a field separator */
		start = ++i;
		while (i < len && p[i] != fs)
			i++;
		if (m->field_count - seg.first >= SX_HL7_MAX_SEGMENT_FIELDS) {
			say(why, why_size,
			    "segment %s at line %u has more than %d fields (the limit)",
			    seg.id[0] ? seg.id : "?", line, SX_HL7_MAX_SEGMENT_FIELDS - 1);
			return SX_ELIMIT;
		}
		if (m->field_count >= SX_HL7_MAX_MESSAGE_FIELDS) {
			say(why, why_size, "the message has more than %d fields (the limit)",
			    SX_HL7_MAX_MESSAGE_FIELDS);
			return SX_ELIMIT;
		}
		if (!add_field(m, p + start, i - start))
			return SX_ENOMEM;
	}
	seg.count = (unsigned)(m->field_count - seg.first);
	seg.seq = seg.id[0] ? next_seq(ids, ids_used, m, seg.id) : 0;
	m->segments[m->segment_count++] = seg;
	return SX_OK;
}

static bool delimiter_ok(unsigned char c)
{
	return c > 0x20 && c < 0x7f && !is_alnum(c);
}

static sx_hl7_charset charset_of(sx_hl7_view v)
{
	char text[32];
	size_t n = 0;
	while (v.len && (*v.p == ' ' || *v.p == '\t')) {
		v.p++;
		v.len--;
	}
	while (v.len && (v.p[v.len - 1] == ' ' || v.p[v.len - 1] == '\t'))
		v.len--;
	if (v.len == 0)
		return SX_HL7_ASCII;
	if (v.len >= sizeof text)
		return SX_HL7_OTHER;
	for (n = 0; n < v.len; n++) {
		char c = v.p[n];
		text[n] = (c >= 'a' && c <= 'z') ? (char)(c - 'a' + 'A') : c;
	}
	text[n] = '\0';
	if (strcmp(text, "ASCII") == 0)
		return SX_HL7_ASCII;
	if (strcmp(text, "UNICODE UTF-8") == 0 || strcmp(text, "UTF-8") == 0 ||
	    strcmp(text, "UTF8") == 0)
		return SX_HL7_UTF8;
	if (strcmp(text, "8859/1") == 0 || strcmp(text, "ISO-8859-1") == 0 ||
	    strcmp(text, "ISO8859/1") == 0)
		return SX_HL7_LATIN1;
	return SX_HL7_OTHER;
}

sx_status sx_hl7_parse(const char *data, size_t len, unsigned first_line, sx_hl7_message *m,
                       char *why, size_t why_size)
{
	id_count ids[ID_TABLE];
	size_t ids_used = 0;
	char enc[8];
	size_t i, e, enc_len;
	unsigned line;
	sx_status st;
	char term;

	memset(m, 0, sizeof *m);
	say(why, why_size, "%s", "");
	if (!data)
		len = 0;
	/* frame bytes and a byte order mark before the message */
	for (;;) {
		if (len >= 3 && (unsigned char)data[0] == 0xEF && (unsigned char)data[1] == 0xBB &&
		    (unsigned char)data[2] == 0xBF) {
			data += 3;
			len -= 3;
			continue;
		}
		if (len && is_frame_byte((unsigned char)data[0])) {
			if (data[0] == '\r' || (data[0] == '\n'))
				first_line++;
			if (data[0] == '\r' && len > 1 && data[1] == '\n') {
				data++;
				len--;
			}
			data++;
			len--;
			continue;
		}
		break;
	}
	while (len && is_frame_byte((unsigned char)data[len - 1]))
		len--;
	if (len > SX_HL7_MAX_MESSAGE_BYTES) {
		say(why, why_size, "the message is %zu bytes long; the limit is %u", len,
		    SX_HL7_MAX_MESSAGE_BYTES);
		return SX_ELIMIT;
	}
	if (len < 3 || memcmp(data, "MSH", 3) != 0) {
		char head[16];
		shown(head, sizeof head, data ? data : "", len < 8 ? len : 8);
		say(why, why_size, "a message starts with an MSH segment, not '%s'", head);
		return SX_ESYNTAX;
	}
	if (len < 4 || !delimiter_ok((unsigned char)data[3])) {
		say(why, why_size,
		    "MSH-1 (the field separator) is missing or is a letter, digit, "
		    "space or control character");
		return SX_ESYNTAX;
	}
	m->delims.field = data[3];
	for (e = 4; e < len && data[e] != data[3] && data[e] != '\r' && data[e] != '\n'; e++)
		;
	enc_len = e - 4;
	shown(enc, sizeof enc, data + 4, enc_len < 7 ? enc_len : 7);
	if (enc_len == 0) {
		say(why, why_size, "MSH-2 (the encoding characters) is empty");
		return SX_ESYNTAX;
	}
	if (enc_len > 5) {
		say(why, why_size,
		    "MSH-2 '%s...' has %zu characters; it holds 4 (5 from v2.7, with the "
		    "truncation character)",
		    enc, enc_len);
		return SX_ESYNTAX;
	}
	for (i = 0; i < enc_len; i++) {
		unsigned char c = (unsigned char)data[4 + i];
		if (!delimiter_ok(c) || c == (unsigned char)data[3] ||
		    memchr(data + 4, c, i) != NULL) {
			say(why, why_size,
			    "MSH-2 '%s': encoding character %zu is a letter, digit, space or "
			    "control "
			    "character, or repeats another delimiter",
			    enc, i + 1);
			return SX_ESYNTAX;
		}
	}
	m->delims.component = data[4];
	m->delims.repetition = enc_len > 1 ? data[5] : 0;
	m->delims.escape = enc_len > 2 ? data[6] : 0;
	m->delims.subcomponent = enc_len > 3 ? data[7] : 0;
	m->delims.truncation = enc_len > 4 ? data[8] : 0;

	m->data = data;
	m->len = len;
	m->first_line = first_line;
	m->lf_only = memchr(data, '\r', len) == NULL;
	term = m->lf_only ? '\n' : '\r';

	line = first_line;
	i = 0;
	while (i < len) {
		const char *end = memchr(data + i, term, len - i);
		size_t seg_end = end ? (size_t)(end - data) : len;
		size_t s = i, n = seg_end - i;
		bool blank = true;
		for (size_t k = 0; k < n; k++)
			if (data[s + k] != ' ' && data[s + k] != '\t') {
				blank = false;
				break;
			}
		if (!blank) {
			st = index_segment(m, data + s, n, line, ids, &ids_used, why, why_size);
			if (st != SX_OK) {
				if (st == SX_ENOMEM)
					say(why, why_size, "out of memory");
				sx_hl7_message_free(m);
				return st;
			}
		}
		if (!end)
			break;
		line++;
		i = seg_end + 1;
		if (!m->lf_only && i < len && data[i] == '\n')
			i++;
	}
	m->lines = line - first_line;
	m->charset = charset_of(sx_hl7_get(m, &m->segments[0], 18, 1, 1, 0));
	return SX_OK;
}

const sx_hl7_segment *sx_hl7_find(const sx_hl7_message *m, const char *id, size_t *from)
{
	for (size_t i = *from; i < m->segment_count; i++)
		if (memcmp(m->segments[i].id, id, 3) == 0) {
			*from = i + 1;
			return &m->segments[i];
		}
	*from = m->segment_count;
	return NULL;
}

/* ---- access -------------------------------------------------------------- */

sx_hl7_view sx_hl7_piece(sx_hl7_view v, char sep, unsigned n)
{
	sx_hl7_view none = {v.p, 0};
	size_t start = 0;
	unsigned k = 1;
	if (n == 0 || v.len == 0)
		return none;
	if (!sep)
		return n == 1 ? v : none;
	for (size_t i = 0; i < v.len; i++) {
		if (v.p[i] != sep)
			continue;
		if (k == n) {
			sx_hl7_view r = {v.p + start, i - start};
			return r;
		}
		k++;
		start = i + 1;
	}
	if (k == n) {
		sx_hl7_view r = {v.p + start, v.len - start};
		return r;
	}
	return none;
}

unsigned sx_hl7_pieces(sx_hl7_view v, char sep)
{
	unsigned n = 1;
	if (v.len == 0)
		return 0;
	if (!sep)
		return 1;
	for (size_t i = 0; i < v.len; i++)
		if (v.p[i] == sep)
			n++;
	return n;
}

bool sx_hl7_is_null(sx_hl7_view v)
{
	return v.len == 2 && v.p[0] == '"' && v.p[1] == '"';
}

sx_hl7_view sx_hl7_field(const sx_hl7_message *m, const sx_hl7_segment *s, unsigned field)
{
	sx_hl7_view none = {NULL, 0};
	if (!m || !s || field >= s->count)
		return none;
	return m->fields[s->first + field];
}

sx_hl7_view sx_hl7_get(const sx_hl7_message *m, const sx_hl7_segment *s, unsigned field,
                       unsigned rep, unsigned comp, unsigned sub)
{
	sx_hl7_view v = sx_hl7_field(m, s, field);
	if (!s || field == 0 || (field <= 2 && is_header_id(s->id)))
		return v;
	v = sx_hl7_piece(v, m->delims.repetition, rep ? rep : 1);
	if (comp) {
		v = sx_hl7_piece(v, m->delims.component, comp);
		if (sub)
			v = sx_hl7_piece(v, m->delims.subcomponent, sub);
	}
	return v;
}

char *sx_hl7_location(char *out, size_t size, const sx_hl7_segment *s, unsigned field,
                      unsigned comp, unsigned sub)
{
	const char *id = s && s->id[0] ? s->id : "???";
	unsigned seq = s ? s->seq : 0;
	if (field == 0)
		snprintf(out, size, "%s[%u]", id, seq);
	else if (comp == 0)
		snprintf(out, size, "%s[%u]-%u", id, seq, field);
	else if (sub == 0)
		snprintf(out, size, "%s[%u]-%u.%u", id, seq, field, comp);
	else
		snprintf(out, size, "%s[%u]-%u.%u.%u", id, seq, field, comp, sub);
	return out;
}

/* ---- decoding ------------------------------------------------------------ */

typedef struct out_buf {
	char *p;
	size_t size, len;
	bool full;
} out_buf;

static void put(out_buf *o, const char *s, size_t n)
{
	if (o->full)
		return;
	if (o->len + n + 1 > o->size) {
		o->full = true;
		return;
	}
	memcpy(o->p + o->len, s, n);
	o->len += n;
}

/* One byte of message text, in the message's character set. */
static void put_byte(out_buf *o, unsigned char b, sx_hl7_charset cs)
{
	if (cs == SX_HL7_LATIN1 && b >= 0x80) {
		char u[2] = {(char)(0xC0 | (b >> 6)), (char)(0x80 | (b & 0x3F))};
		put(o, u, 2);
		return;
	}
	put(o, (const char *)&b, 1);
}

static void put_text(out_buf *o, const char *s, size_t n, sx_hl7_charset cs)
{
	if (cs != SX_HL7_LATIN1) {
		put(o, s, n);
		return;
	}
	for (size_t i = 0; i < n; i++)
		put_byte(o, (unsigned char)s[i], cs);
}

static int hex_value(char c)
{
	if (c >= '0' && c <= '9')
		return c - '0';
	if (c >= 'A' && c <= 'F')
		return c - 'A' + 10;
	if (c >= 'a' && c <= 'f')
		return c - 'a' + 10;
	return -1;
}

/* A formatting command's optional argument: spaces, a sign, digits. */
static bool plain_argument(const char *s, size_t n)
{
	for (size_t i = 0; i < n; i++)
		if (!(s[i] == ' ' || s[i] == '+' || s[i] == '-' || (s[i] >= '0' && s[i] <= '9')))
			return false;
	return true;
}

/* Decode the sequence between two escape characters. false: not one we
 * interpret (the caller keeps it as it is). */
static bool decode_sequence(const sx_hl7_delims *d, sx_hl7_charset cs, const char *s, size_t n,
                            out_buf *o)
{
	char c;
	if (n == 0)
		return false;
	if (n == 1) {
		switch (s[0]) {
		case 'F':
			c = d->field;
			break;
		case 'S':
			c = d->component;
			break;
		case 'T':
			c = d->subcomponent;
			break;
		case 'R':
			c = d->repetition;
			break;
		case 'E':
			c = d->escape;
			break;
		case 'P':
			c = d->truncation;
			break;
		case 'H':
		case 'N':
			return true; /* highlighting on / off: no text */
		case 'X':
			return true; /* hexadecimal data without a byte */
		default:
			return false;
		}
		if (!c)
			return false;
		put(o, &c, 1);
		return true;
	}
	if (s[0] == 'X') {
		if ((n - 1) % 2 != 0)
			return false;
		for (size_t i = 1; i < n; i++)
			if (hex_value(s[i]) < 0)
				return false;
		for (size_t i = 1; i < n; i += 2)
			put_byte(o, (unsigned char)(hex_value(s[i]) * 16 + hex_value(s[i + 1])),
			         cs);
		return true;
	}
	if (s[0] == '.' && n >= 3) {
		const char *arg = s + 3;
		size_t arg_len = n - 3;
		if (!plain_argument(arg, arg_len))
			return false;
		if (memcmp(s, ".br", 3) == 0 || memcmp(s, ".ce", 3) == 0) {
			if (arg_len)
				return false;
			put(o, "\n", 1);
			return true;
		}
		if (memcmp(s, ".sp", 3) == 0) {
			put(o, "\n", 1);
			return true;
		}
		if (memcmp(s, ".sk", 3) == 0) {
			put(o, " ", 1);
			return true;
		}
		if (memcmp(s, ".fi", 3) == 0 || memcmp(s, ".nf", 3) == 0)
			return arg_len == 0;
		if (memcmp(s, ".in", 3) == 0 || memcmp(s, ".ti", 3) == 0)
			return true;
	}
	return false;
}

/* Length of a valid UTF-8 sequence at p (at most n bytes), 0 if invalid. */
static size_t utf8_length(const unsigned char *p, size_t n)
{
	size_t need;
	unsigned cp;
	if (p[0] < 0x80)
		return 1;
	if (p[0] >= 0xC2 && p[0] <= 0xDF) {
		need = 2;
		cp = p[0] & 0x1F;
	} else if (p[0] >= 0xE0 && p[0] <= 0xEF) {
		need = 3;
		cp = p[0] & 0x0F;
	} else if (p[0] >= 0xF0 && p[0] <= 0xF4) {
		need = 4;
		cp = p[0] & 0x07;
	} else {
		return 0;
	}
	if (n < need)
		return 0;
	for (size_t i = 1; i < need; i++) {
		if ((p[i] & 0xC0) != 0x80)
			return 0;
		cp = (cp << 6) | (p[i] & 0x3F);
	}
	if ((need == 3 && cp < 0x800) || (need == 4 && (cp < 0x10000 || cp > 0x10FFFF)) ||
	    (cp >= 0xD800 && cp <= 0xDFFF))
		return 0;
	return need;
}

/* Replace bytes that are not UTF-8 with U+FFFD, in place. */
static sx_status repair_utf8(out_buf *o)
{
	size_t bad = 0, i = 0;
	char *copy;
	out_buf w;
	while (i < o->len) {
		size_t k = utf8_length((const unsigned char *)o->p + i, o->len - i);
		if (k == 0) {
			bad++;
			i++;
		} else {
			i += k;
		}
	}
	if (bad == 0)
		return SX_OK;
	if (o->len + 2 * bad + 1 > o->size)
		return SX_ELIMIT;
	copy = sx_malloc(o->len ? o->len : 1);
	if (!copy)
		return SX_ENOMEM;
	memcpy(copy, o->p, o->len);
	w = (out_buf){o->p, o->size, 0, false};
	for (i = 0; i < o->len;) {
		size_t k = utf8_length((const unsigned char *)copy + i, o->len - i);
		if (k == 0) {
			put(&w, "\xEF\xBF\xBD", 3);
			i++;
		} else {
			put(&w, copy + i, k);
			i += k;
		}
	}
	sx_free(copy);
	o->len = w.len;
	return SX_OK;
}

sx_status sx_hl7_decode(const sx_hl7_delims *d, sx_hl7_charset cs, sx_hl7_view raw, char *out,
                        size_t size, size_t *out_len)
{
	out_buf o = {out, size, 0, false};
	char esc = d->escape;
	size_t i = 0;

	if (out_len)
		*out_len = 0;
	if (!out || size == 0)
		return SX_ELIMIT;
	out[0] = '\0';
	while (i < raw.len) {
		const char *next;
		size_t run;
		if (raw.p[i] == esc && esc) {
			const char *end = memchr(raw.p + i + 1, esc, raw.len - i - 1);
			size_t j;
			if (!end) {
				/* unterminated: the rest stays as it is */
				put_text(&o, raw.p + i, raw.len - i, cs);
				break;
			}
			j = (size_t)(end - raw.p);
			if (!decode_sequence(d, cs, raw.p + i + 1, j - i - 1, &o))
				put_text(&o, raw.p + i, j - i + 1, cs);
			i = j + 1;
			continue;
		}
		next = esc ? memchr(raw.p + i, esc, raw.len - i) : NULL;
		run = next ? (size_t)(next - raw.p) - i : raw.len - i;
		put_text(&o, raw.p + i, run, cs);
		i += run;
	}
	if (o.full)
		return SX_ELIMIT;
	if (cs != SX_HL7_LATIN1) {
		sx_status st = repair_utf8(&o);
		if (st != SX_OK)
			return st;
	}
	out[o.len] = '\0';
	if (out_len)
		*out_len = o.len;
	return SX_OK;
}

/* ---- the reader ------------------------------------------------------------ */

#define READ_CHUNK 65536
#define BUFFER_MAX ((size_t)SX_HL7_MAX_MESSAGE_BYTES + READ_CHUNK)
#define HEAD_KEEP  64
#define NOT_FOUND  ((size_t)-1)

struct sx_hl7_reader {
	sx_hl7_read_fn read;
	void *context;
	char *buf;
	size_t cap, len, pos;
	size_t scan; /* boundary search resumes at pos + scan */
	bool scan_cr; /* the bytes scanned so far hold a CR */
	bool eof;
	bool failed;
	unsigned line;        /* line of buf[pos] */
	char head[HEAD_KEEP]; /* first bytes of a skipped region */
};

sx_status sx_hl7_reader_open(sx_hl7_read_fn read, void *context, sx_hl7_reader **out)
{
	sx_hl7_reader *r = sx_calloc(1, sizeof *r);
	*out = NULL;
	if (!r)
		return SX_ENOMEM;
	r->cap = READ_CHUNK;
	r->buf = sx_malloc(r->cap);
	if (!r->buf) {
		sx_free(r);
		return SX_ENOMEM;
	}
	r->read = read;
	r->context = context;
	r->line = 1;
	*out = r;
	return SX_OK;
}

void sx_hl7_reader_close(sx_hl7_reader *r)
{
	if (!r)
		return;
	sx_free(r->buf);
	sx_free(r);
}

/* Read more input. Moves the unread bytes to the front first; grows the
 * buffer up to BUFFER_MAX when it is full. */
static sx_status fill(sx_hl7_reader *r)
{
	size_t room;
	int n;
	if (r->eof)
		return SX_OK;
	if (r->pos > 0) {
		memmove(r->buf, r->buf + r->pos, r->len - r->pos);
		r->len -= r->pos;
		r->pos = 0;
	}
	if (r->len == r->cap) {
		size_t cap = r->cap * 2;
		char *b;
		if (r->cap >= BUFFER_MAX)
			return SX_OK; /* full: the caller decides */
		if (cap > BUFFER_MAX)
			cap = BUFFER_MAX;
		b = sx_realloc(r->buf, cap);
		if (!b)
			return SX_ENOMEM;
		r->buf = b;
		r->cap = cap;
	}
	room = r->cap - r->len;
	if (room > INT_MAX)
		room = INT_MAX;
	n = r->read(r->context, r->buf + r->len, (int)room);
	if (n < 0) {
		r->failed = true;
		r->eof = true;
		return SX_EIO;
	}
	if (n == 0)
		r->eof = true;
	r->len += (size_t)n;
	return SX_OK;
}

static sx_status ensure(sx_hl7_reader *r, size_t n)
{
	while (r->len - r->pos < n && !r->eof) {
		size_t before = r->len - r->pos;
		sx_status st = fill(r);
		if (st != SX_OK)
			return st;
		if (r->len - r->pos == before && !r->eof)
			break; /* buffer full */
	}
	return SX_OK;
}

static bool is_boundary_id(const char *p)
{
	return memcmp(p, "MSH", 3) == 0 || memcmp(p, "FHS", 3) == 0 || memcmp(p, "BHS", 3) == 0 ||
	       memcmp(p, "BTS", 3) == 0 || memcmp(p, "FTS", 3) == 0;
}

/* The next segment start at or after pos + r->scan (never at pos itself) that
 * opens a message or a batch segment; NOT_FOUND when the bytes read so far
 * hold none (r->scan then says where to resume). */
static size_t find_boundary(sx_hl7_reader *r)
{
	size_t k = r->pos + (r->scan ? r->scan : 1);
	if (!r->scan)
		r->scan_cr = false;
	for (; k < r->len; k++) {
		size_t id = k;
		char prev = r->buf[k - 1];
		if (prev == '\r')
			r->scan_cr = true;
		if (!is_frame_byte((unsigned char)prev))
			continue;
		/* once segments end with CR, a lone LF is text, not a segment end
		 * (HL7-NOTES.md: tolerate a literal LF inside text) */
		if (prev == '\n' && r->scan_cr && k - 1 > r->pos && r->buf[k - 2] != '\r')
			continue;
		if ((unsigned char)r->buf[k] == 0xEF) {
			/* a byte order mark before the next message: it starts there */
			if (k + 3 > r->len)
				break; /* not enough bytes to tell */
			if ((unsigned char)r->buf[k + 1] != 0xBB ||
			    (unsigned char)r->buf[k + 2] != 0xBF)
				continue;
			id = k + 3;
		}
		if (id + 3 > r->len || (id + 3 == r->len && !r->eof))
			break; /* not enough bytes to tell */
		if (!is_boundary_id(r->buf + id))
			continue;
		if (id + 3 < r->len && is_alnum((unsigned char)r->buf[id + 3]))
			continue;
		r->scan = 0;
		return k;
	}
	r->scan = k - r->pos;
	return NOT_FOUND;
}

/* Lines in skipped bytes: CR, and LF not after a CR. */
static unsigned count_any_lines(const char *p, size_t n, bool *after_cr)
{
	unsigned lines = 0;
	for (size_t i = 0; i < n; i++) {
		if (p[i] == '\r') {
			lines++;
			*after_cr = true;
		} else {
			if (p[i] == '\n' && !*after_cr)
				lines++;
			*after_cr = false;
		}
	}
	return lines;
}

/* Skip bytes up to the next boundary (or the end), keeping the first ones. */
static sx_status skip_region(sx_hl7_reader *r, sx_hl7_chunk_kind kind, sx_hl7_chunk *c)
{
	size_t total = 0, k;
	unsigned start_line = r->line;
	bool after_cr = false;
	size_t head = r->len - r->pos < HEAD_KEEP ? r->len - r->pos : HEAD_KEEP;
	sx_status st;

	memcpy(r->head, r->buf + r->pos, head);
	for (;;) {
		k = find_boundary(r);
		if (k != NOT_FOUND) {
			r->line += count_any_lines(r->buf + r->pos, k - r->pos, &after_cr);
			total += k - r->pos;
			r->pos = k;
			break;
		}
		if (r->eof) {
			r->line += count_any_lines(r->buf + r->pos, r->len - r->pos, &after_cr);
			total += r->len - r->pos;
			r->pos = r->len;
			break;
		}
		/* drop what was scanned, keeping four bytes to see a boundary in */
		if (r->len - r->pos > 4) {
			size_t n = r->len - r->pos - 4;
			r->line += count_any_lines(r->buf + r->pos, n, &after_cr);
			total += n;
			r->pos += n;
			r->scan = 1;
		}
		st = fill(r);
		if (st != SX_OK)
			return st;
	}
	r->scan = 0;
	c->kind = kind;
	c->data = r->head;
	c->len = head;
	c->total = total;
	c->line = start_line;
	return SX_OK;
}

sx_status sx_hl7_reader_next(sx_hl7_reader *r, sx_hl7_chunk *c)
{
	bool after_cr = false, after_fs = false;
	sx_status st;
	size_t k, e;

	memset(c, 0, sizeof *c);
	if (r->failed)
		return SX_EIO;
	/* separators, frame bytes and byte order marks between messages */
	for (;;) {
		unsigned char b;
		st = ensure(r, 3);
		if (st != SX_OK)
			return st;
		if (r->pos == r->len) {
			c->kind = SX_HL7_CHUNK_END;
			c->line = r->line;
			return SX_OK;
		}
		b = (unsigned char)r->buf[r->pos];
		if (b == 0xEF && r->len - r->pos >= 3 &&
		    (unsigned char)r->buf[r->pos + 1] == 0xBB &&
		    (unsigned char)r->buf[r->pos + 2] == 0xBF) {
			r->pos += 3;
			continue;
		}
		if (b == '\r') {
			if (!after_fs)
				r->line++;
			after_cr = true;
			after_fs = false;
		} else if (b == '\n') {
			if (!after_cr && !after_fs)
				r->line++;
			after_cr = false;
			after_fs = false;
		} else if (b == MLLP_START || b == MLLP_END || b == ' ' || b == '\t') {
			after_fs = b == MLLP_END;
			after_cr = false;
		} else {
			break;
		}
		r->pos++;
	}
	st = ensure(r, 4);
	if (st != SX_OK)
		return st;
	r->scan = 0;
	if (r->len - r->pos < 3 || !is_boundary_id(r->buf + r->pos) ||
	    (r->len - r->pos > 3 && is_alnum((unsigned char)r->buf[r->pos + 3])))
		return skip_region(r, SX_HL7_CHUNK_JUNK, c);

	if (memcmp(r->buf + r->pos, "MSH", 3) != 0) {
		/* a batch segment: to the end of its line */
		for (;;) {
			const char *cr = memchr(r->buf + r->pos, '\r', r->len - r->pos);
			const char *lf = memchr(r->buf + r->pos, '\n', r->len - r->pos);
			const char *t = cr && (!lf || cr < lf) ? cr : lf;
			if (t || r->eof) {
				e = t ? (size_t)(t - r->buf) : r->len;
				break;
			}
			if (r->len - r->pos >= SX_HL7_MAX_MESSAGE_BYTES)
				return skip_region(r, SX_HL7_CHUNK_OVERSIZE, c);
			st = fill(r);
			if (st != SX_OK)
				return st;
		}
		c->kind = SX_HL7_CHUNK_BATCH;
		c->data = r->buf + r->pos;
		c->len = c->total = e - r->pos;
		c->line = r->line;
		r->pos = e;
		return SX_OK;
	}
	for (;;) {
		k = find_boundary(r);
		if (k != NOT_FOUND)
			break;
		if (r->eof) {
			k = r->len;
			break;
		}
		if (r->len - r->pos > SX_HL7_MAX_MESSAGE_BYTES)
			return skip_region(r, SX_HL7_CHUNK_OVERSIZE, c);
		st = fill(r);
		if (st != SX_OK)
			return st;
	}
	/* the message ends before the terminators and frame bytes that precede
	 * the next one; those are counted by the separator loop next time */
	for (e = k; e > r->pos && is_frame_byte((unsigned char)r->buf[e - 1]); e--)
		;
	if (e - r->pos > SX_HL7_MAX_MESSAGE_BYTES) {
		r->scan = 0;
		return skip_region(r, SX_HL7_CHUNK_OVERSIZE, c);
	}
	c->kind = SX_HL7_CHUNK_MESSAGE;
	c->data = r->buf + r->pos;
	c->len = c->total = e - r->pos;
	c->line = r->line;
	r->line += sx_hl7_count_lines(c->data, c->len);
	r->pos = e;
	return SX_OK;
}
