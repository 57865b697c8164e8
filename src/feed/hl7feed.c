/* SPDX-License-Identifier: MIT */
/*
 * hl7feed.c - the HL7 feed: a stream of messages (a file of messages, a
 * batch file, an MLLP dump) read one specimen at a time.
 *
 * The reader cuts the stream into messages; each message is read whole into
 * records, which are handed out one by one. Batch envelopes (FHS/BHS ...
 * BTS/FTS, HL7 v2.5.1 chapter 2 section 2.10.3) are checked, not required:
 * a BTS-1 message count that does not match is a warning. Memory stays
 * bounded by one message and its records.
 */
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "feed/feed.h"
#include "feed/hl7.h"

struct sx_hl7_feed {
	sx_hl7_reader *reader;
	sx_hl7_options opt;
	sx_hl7_result *res;
	size_t next_record;
	sx_diag_list pending; /* message-level diagnostics not handed out yet */
	sx_status pending_status;
	size_t messages;
	bool finished;
	char field_sep; /* of the last header, for batch trailers */
	bool in_batch;
	unsigned batch_line;
	size_t batch_messages;
};

sx_status sx_hl7_feed_open(sx_hl7_read_fn read, void *context, const sx_hl7_options *options,
                           sx_hl7_feed **out)
{
	sx_hl7_feed *f = sx_calloc(1, sizeof *f);
	sx_status st;
	*out = NULL;
	if (!f)
		return SX_ENOMEM;
	f->opt = *options;
	f->res = sx_malloc(sizeof *f->res);
	if (!f->res) {
		sx_free(f);
		return SX_ENOMEM;
	}
	sx_hl7_result_init(f->res);
	sx_diag_list_init(&f->pending);
	f->field_sep = '|';
	st = sx_hl7_reader_open(read, context, &f->reader);
	if (st != SX_OK) {
		sx_free(f->res);
		sx_free(f);
		return st;
	}
	*out = f;
	return SX_OK;
}

void sx_hl7_feed_close(sx_hl7_feed *f)
{
	if (!f)
		return;
	sx_hl7_reader_close(f->reader);
	sx_hl7_result_clear(f->res);
	sx_free(f->res);
	sx_diag_list_clear(&f->pending);
	sx_free(f);
}

size_t sx_hl7_feed_messages(const sx_hl7_feed *f)
{
	return f->messages;
}

static void note(sx_hl7_feed *f, sx_severity sev, sx_status st, unsigned line, const char *fmt, ...)
        __attribute__((format(printf, 5, 6)));
static void note(sx_hl7_feed *f, sx_severity sev, sx_status st, unsigned line, const char *fmt, ...)
{
	sx_where w = {f->opt.source, line, 0, NULL, NULL};
	va_list ap;
	va_start(ap, fmt);
	sx_diag_addv(&f->pending, sev, st, &w, fmt, ap);
	va_end(ap);
	if (sev == SX_ERROR && f->pending_status == SX_OK)
		f->pending_status = st;
}

/* BHS, BTS, FHS, FTS: open and close batches, check BTS-1. */
static void batch_segment(sx_hl7_feed *f, const sx_hl7_chunk *c)
{
	char id[4];
	memcpy(id, c->data, 3);
	id[3] = '\0';
	if ((strcmp(id, "BHS") == 0 || strcmp(id, "FHS") == 0) && c->len > 3)
		f->field_sep = c->data[3];
	if (strcmp(id, "BHS") == 0) {
		f->in_batch = true;
		f->batch_line = c->line;
		f->batch_messages = 0;
		return;
	}
	if (strcmp(id, "BTS") == 0) {
		/* BTS-1: batch message count */
		const char *p = memchr(c->data, f->field_sep, c->len);
		if (p) {
			const char *end = c->data + c->len;
			const char *q = memchr(p + 1, f->field_sep, (size_t)(end - p - 1));
			double n;
			if (!q)
				q = end;
			if (q > p + 1 &&
			    sx_parse_number(p + 1, (unsigned long)(q - p - 1), &n) == SX_OK &&
			    n != (double)f->batch_messages)
				note(f, SX_WARNING, SX_OK, c->line,
				     "BTS-1 counts %.0f messages, but the batch that starts at "
				     "line "
				     "%u held %zu",
				     n, f->batch_line, f->batch_messages);
		}
		f->in_batch = false;
	}
}

/* Read chunks until a message with records is loaded, or the end. */
static sx_status load(sx_hl7_feed *f)
{
	for (;;) {
		sx_hl7_chunk c;
		sx_status st = sx_hl7_reader_next(f->reader, &c);
		if (st != SX_OK) {
			f->finished = true;
			return st;
		}
		switch (c.kind) {
		case SX_HL7_CHUNK_END:
			f->finished = true;
			if (f->messages == 0 && f->pending.errors == 0)
				note(f, SX_ERROR, SX_ESYNTAX, c.line,
				     "no HL7 message (MSH segment) in the input");
			return SX_OK;
		case SX_HL7_CHUNK_BATCH:
			batch_segment(f, &c);
			continue;
		case SX_HL7_CHUNK_JUNK:
			note(f, SX_ERROR, SX_ESYNTAX, c.line,
			     "%zu bytes that are not an HL7 message (no MSH segment before them) "
			     "were skipped",
			     c.total);
			continue;
		case SX_HL7_CHUNK_OVERSIZE:
			f->messages++;
			f->batch_messages++;
			note(f, SX_ERROR, SX_ELIMIT, c.line,
			     "message at line %u: longer than the limit of %u bytes "
			     "(SX_HL7_MAX_MESSAGE_BYTES); it was skipped",
			     c.line, SX_HL7_MAX_MESSAGE_BYTES);
			continue;
		case SX_HL7_CHUNK_MESSAGE:
			f->messages++;
			f->batch_messages++;
			st = sx_hl7_read_message(c.data, c.len, c.line, &f->opt, f->res);
			if (st != SX_OK)
				return st;
			if (f->res->status != SX_OK && f->pending_status == SX_OK)
				f->pending_status = f->res->status;
			st = sx_diag_list_move(&f->pending, &f->res->diags);
			if (st != SX_OK)
				return st;
			f->next_record = 0;
			if (f->res->record_count)
				return SX_OK;
			continue;
		}
	}
}

sx_status sx_hl7_feed_next(sx_hl7_feed *f, sx_specimen *s, sx_feed_item *item, bool *got,
                           sx_diag_list *diags)
{
	sx_status st = SX_OK, out;

	*got = false;
	sx_specimen_clear(s);
	memset(item, 0, sizeof *item);
	if (f->next_record >= f->res->record_count && !f->finished)
		st = load(f);
	if (f->next_record < f->res->record_count) {
		sx_hl7_record *rec = &f->res->records[f->next_record++];
		*s = rec->specimen;
		sx_specimen_init(&rec->specimen);
		s->source = f->opt.source;
		item->input_errors = rec->input_errors;
		item->line = rec->line;
		sx_diag_list_move(diags, &f->pending);
		sx_diag_list_move(diags, &rec->diags);
		*got = true;
	} else {
		sx_diag_list_move(diags, &f->pending);
	}
	out = st != SX_OK ? st : f->pending_status;
	f->pending_status = SX_OK;
	return out;
}
