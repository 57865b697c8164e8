/* SPDX-License-Identifier: MIT */
/*
 * hl7ack.c - writing HL7 v2: escaping text, and the original-mode
 * acknowledgement (ACK) of a received message.
 *
 * The ACK follows HL7 v2.5.1 chapter 2 (section 2.9.2, original
 * acknowledgement rules; MSA and ERR segment definitions in 2.14-2.15):
 * the receiver answers with the sender's own delimiters, swaps sending and
 * receiving application and facility, gives the ACK its own control id and
 * echoes the received MSH-10 in MSA-2. Each problem found becomes an ERR
 * segment with its location (ERL: segment ^ sequence ^ field ^ repetition ^
 * component ^ subcomponent), its code from HL7 table 0357 and its severity
 * (ERR-4). Versions before 2.5 have no ERR-2..ERR-8; there the ERR-1 form
 * (ELD: segment ^ sequence ^ field ^ code&text&HL70357) is written instead,
 * with the text in MSA-3.
 * Fields copied from the received MSH are copied raw: they are already
 * escaped for the delimiters the ACK uses.
 */
#include <stdio.h>
#include <string.h>

#include "feed/hl7.h"

const sx_hl7_delims sx_hl7_default_delims = {'|', '^', '~', '\\', '&', 0};

void sx_hl7_put_escaped(sx_strbuf *out, const sx_hl7_delims *d, const char *text, size_t len,
                        bool formatted)
{
	char e = d->escape ? d->escape : '\\';
	for (size_t i = 0; i < len; i++) {
		unsigned char c = (unsigned char)text[i];
		char code = 0;
		if (c == (unsigned char)e)
			code = 'E';
		else if (c == (unsigned char)d->field)
			code = 'F';
		else if (d->component && c == (unsigned char)d->component)
			code = 'S';
		else if (d->subcomponent && c == (unsigned char)d->subcomponent)
			code = 'T';
		else if (d->repetition && c == (unsigned char)d->repetition)
			code = 'R';
		else if (d->truncation && c == (unsigned char)d->truncation)
			code = 'P';
		if (code) {
			char seq[3] = {e, code, e};
			sx_strbuf_append(out, seq, 3);
			continue;
		}
		if ((c == '\r' || c == '\n') && formatted) {
			char seq[5] = {e, '.', 'b', 'r', e};
			if (c == '\r' && i + 1 < len && text[i + 1] == '\n')
				i++;
			sx_strbuf_append(out, seq, 5);
			continue;
		}
		if (c < 0x20 || c == 0x7f) {
			sx_strbuf_printf(out, "%cX%02X%c", e, c, e);
			continue;
		}
		sx_strbuf_putc(out, (char)c);
	}
}

void sx_hl7_put_encoding(sx_strbuf *out, const sx_hl7_delims *d)
{
	char enc[5];
	size_t n = 0;
	enc[n++] = d->component;
	enc[n++] = d->repetition;
	enc[n++] = d->escape;
	enc[n++] = d->subcomponent;
	if (d->truncation)
		enc[n++] = d->truncation;
	/* a delimiter the sender did not define ends the list (MSH-2 is
	 * positional) */
	for (size_t i = 0; i < n; i++)
		if (!enc[i]) {
			n = i;
			break;
		}
	sx_strbuf_append(out, enc, n);
}

static void put_raw(sx_strbuf *out, sx_hl7_view v)
{
	if (v.len)
		sx_strbuf_append(out, v.p, v.len);
}

/* v2.5 and later have ERR-2 to ERR-8; earlier versions only ERR-1. */
static bool version_has_erl(sx_hl7_view v)
{
	unsigned minor = 0;
	size_t i = 2;
	if (v.len < 3 || v.p[0] != '2' || v.p[1] != '.')
		return true; /* unknown: write the current form */
	for (; i < v.len && v.p[i] >= '0' && v.p[i] <= '9'; i++)
		if (minor < 1000)
			minor = minor * 10 + (unsigned)(v.p[i] - '0');
	return minor >= 5;
}

/* Before v2.3.1 MSH-9 had no message-structure component. */
static bool version_has_structure(sx_hl7_view v)
{
	return !(v.len == 3 && memcmp(v.p, "2.3", 3) == 0);
}

static const char *code_text(int code)
{
	switch (code) {
	case 0:
		return "Message accepted";
	case 100:
		return "Segment sequence error";
	case 101:
		return "Required field missing";
	case 102:
		return "Data type error";
	case 103:
		return "Table value not found";
	case 200:
		return "Unsupported message type";
	case 201:
		return "Unsupported event code";
	case 202:
		return "Unsupported processing id";
	case 203:
		return "Unsupported version id";
	case 207:
		return "Application internal error";
	}
	return "Application error";
}

static void put_erl(sx_strbuf *out, const sx_hl7_delims *d, const sx_hl7_issue *i)
{
	char c = d->component;
	if (!i->segment[0])
		return;
	sx_strbuf_printf(out, "%s%c%u", i->segment, c, i->seq);
	if (!i->field)
		return;
	sx_strbuf_printf(out, "%c%u%c%u", c, i->field, c, i->rep ? i->rep : 1);
	if (i->comp)
		sx_strbuf_printf(out, "%c%u", c, i->comp);
	if (i->sub)
		sx_strbuf_printf(out, "%c%u", c, i->sub);
}

static void put_err(sx_strbuf *out, const sx_hl7_delims *d, const sx_hl7_issue *i, bool erl)
{
	char f = d->field, c = d->component, s = d->subcomponent ? d->subcomponent : '&';
	sx_strbuf_puts(out, "ERR");
	if (!erl) {
		/* ERR-1 (ELD): segment ^ sequence ^ field ^ code & text & table */
		sx_strbuf_putc(out, f);
		if (i->segment[0])
			sx_strbuf_printf(out, "%s%c%u%c%u", i->segment, c, i->seq, c, i->field);
		else
			sx_strbuf_printf(out, "%c%c", c, c);
		sx_strbuf_printf(out, "%c%d%c", c, i->code, s);
		sx_hl7_put_escaped(out, d, code_text(i->code), strlen(code_text(i->code)), false);
		sx_strbuf_printf(out, "%cHL70357\r", s);
		return;
	}
	sx_strbuf_putc(out, f);
	sx_strbuf_putc(out, f);
	put_erl(out, d, i);
	sx_strbuf_printf(out, "%c%d%c", f, i->code, c);
	sx_hl7_put_escaped(out, d, code_text(i->code), strlen(code_text(i->code)), false);
	sx_strbuf_printf(out, "%cHL70357%c%c", c, f, i->severity ? i->severity : 'E');
	/* ERR-5 to ERR-7 empty, ERR-8 the user message */
	sx_strbuf_printf(out, "%c%c%c%c", f, f, f, f);
	sx_hl7_put_escaped(out, d, i->text, strlen(i->text), false);
	sx_strbuf_putc(out, '\r');
}

void sx_hl7_write_ack(sx_strbuf *out, const sx_hl7_result *res, const sx_hl7_ack_options *opt)
{
	static const sx_hl7_ack_options none = {NULL, NULL, NULL, NULL};
	sx_hl7_message m;
	const sx_hl7_segment *msh = NULL;
	const sx_hl7_delims *d = &sx_hl7_default_delims;
	sx_hl7_view version = {"2.5.1", 5}, v;
	bool erl;
	char f;

	if (!opt)
		opt = &none;
	memset(&m, 0, sizeof m);
	if (res->msh && sx_hl7_parse(res->msh, res->msh_len, 1, &m, NULL, 0) == SX_OK &&
	    m.segment_count) {
		msh = &m.segments[0];
		d = &m.delims;
		v = sx_hl7_get(&m, msh, 12, 1, 1, 0);
		if (v.len)
			version = sx_hl7_get(&m, msh, 12, 1, 0, 0);
	}
	f = d->field;
	erl = version_has_erl(sx_hl7_piece(version, d->component, 1));

	/* MSH */
	sx_strbuf_puts(out, "MSH");
	sx_strbuf_putc(out, f);
	sx_hl7_put_encoding(out, d);
	sx_strbuf_putc(out, f);
	v = sx_hl7_field(&m, msh, 5); /* our application: the one they sent to */
	if (v.len)
		put_raw(out, v);
	else if (opt->application)
		sx_hl7_put_escaped(out, d, opt->application, strlen(opt->application), false);
	else
		sx_strbuf_puts(out, "SYRINX");
	sx_strbuf_putc(out, f);
	v = sx_hl7_field(&m, msh, 6);
	if (v.len)
		put_raw(out, v);
	else if (opt->facility)
		sx_hl7_put_escaped(out, d, opt->facility, strlen(opt->facility), false);
	sx_strbuf_putc(out, f);
	put_raw(out, sx_hl7_field(&m, msh, 3));
	sx_strbuf_putc(out, f);
	put_raw(out, sx_hl7_field(&m, msh, 4));
	sx_strbuf_putc(out, f);
	if (opt->now) {
		char t[48];
		if (sx_time_format_hl7(opt->now, t, sizeof t) > 0)
			sx_strbuf_puts(out, t);
	}
	sx_strbuf_putc(out, f);
	sx_strbuf_putc(out, f);
	sx_strbuf_puts(out, "ACK");
	v = sx_hl7_get(&m, msh, 9, 1, 2, 0);
	sx_strbuf_putc(out, d->component);
	if (v.len)
		put_raw(out, v);
	if (version_has_structure(sx_hl7_piece(version, d->component, 1))) {
		sx_strbuf_putc(out, d->component);
		sx_strbuf_puts(out, "ACK");
	}
	sx_strbuf_putc(out, f);
	if (opt->control_id) {
		sx_hl7_put_escaped(out, d, opt->control_id, strlen(opt->control_id), false);
	} else {
		sx_strbuf_puts(out, "ACK");
		put_raw(out, sx_hl7_field(&m, msh, 10));
	}
	sx_strbuf_putc(out, f);
	v = sx_hl7_field(&m, msh, 11);
	if (v.len)
		put_raw(out, v);
	else
		sx_strbuf_puts(out, "P");
	sx_strbuf_putc(out, f);
	put_raw(out, version);
	sx_strbuf_putc(out, '\r');

	/* MSA */
	sx_strbuf_puts(out, "MSA");
	sx_strbuf_putc(out, f);
	sx_strbuf_puts(out, res->ack_code == SX_HL7_AA   ? "AA"
	                    : res->ack_code == SX_HL7_AE ? "AE"
	                                                 : "AR");
	sx_strbuf_putc(out, f);
	put_raw(out, sx_hl7_field(&m, msh, 10));
	if (!erl && res->issue_count) {
		sx_strbuf_putc(out, f);
		sx_hl7_put_escaped(out, d, res->issues[0].text, strlen(res->issues[0].text), false);
	}
	sx_strbuf_putc(out, '\r');

	/* ERR, one per issue */
	for (size_t i = 0; i < res->issue_count; i++)
		put_err(out, d, &res->issues[i], erl);
	if (res->issues_dropped) {
		sx_hl7_issue more;
		memset(&more, 0, sizeof more);
		more.code = 207;
		more.severity = 'W';
		snprintf(more.text, sizeof more.text, "%zu further problems were not listed",
		         res->issues_dropped);
		put_err(out, d, &more, erl);
	}
	sx_hl7_message_free(&m);
}

sx_status sx_hl7_receive(const char *data, size_t len, const sx_hl7_options *options,
                         const sx_hl7_ack_options *ack_options, sx_hl7_result *res, sx_strbuf *ack)
{
	sx_status st = sx_hl7_read_message(data, len, 1, options, res);
	if (st != SX_OK)
		return st;
	if (ack)
		sx_hl7_write_ack(ack, res, ack_options);
	return SX_OK;
}
