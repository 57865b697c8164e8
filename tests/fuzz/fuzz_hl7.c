/* SPDX-License-Identifier: MIT */
/*
 * fuzz_hl7.c - fuzz harness for the HL7 v2 reader and writers (libFuzzer
 * entry point; replayed over tests/fuzz/corpus/hl7 by `make check`).
 *
 * Each input is read three ways: as one message with its acknowledgement
 * (the MLLP path), as a stream of messages through the feed (the file path),
 * and value by value, where decoding, escaping and decoding again must give
 * the same text (an oracle: a mismatch aborts). The verdict writer is given
 * each specimen too, so the result message's escaping runs on fuzzed text.
 * Build for fuzzing: clang -fsanitize=fuzzer,address -Isrc ... (DEVELOPERS.md).
 */
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "core/alloc.h"
#include "feed/feed.h"
#include "feed/hl7.h"
#include "report/hl7out.h"

typedef struct memory {
	const uint8_t *data;
	size_t len, pos;
} memory;

static int memory_read(void *context, char *buf, int len)
{
	memory *m = context;
	size_t n = m->len - m->pos;
	if (n > (size_t)len)
		n = (size_t)len;
	/* small, odd-sized reads move message boundaries around the buffer */
	if (n > 1000)
		n = 1000;
	memcpy(buf, m->data + m->pos, n);
	m->pos += n;
	return (int)n;
}

/* decode(escape(decode(raw))) == decode(raw), for every field of the message */
static void check_escaping(const char *data, size_t len)
{
	static char a[3 * SX_HL7_MAX_VALUE + 1], b[3 * SX_HL7_MAX_VALUE + 1];
	sx_hl7_message m;
	sx_strbuf esc;
	if (sx_hl7_parse(data, len, 1, &m, NULL, 0) != SX_OK)
		return;
	if (!m.delims.escape || !m.delims.repetition || !m.delims.subcomponent) {
		sx_hl7_message_free(&m);
		return;
	}
	sx_strbuf_init(&esc, 0);
	for (size_t i = 0; i < m.segment_count && i < 64; i++) {
		const sx_hl7_segment *s = &m.segments[i];
		for (unsigned f = 1; f < s->count && f < 32; f++) {
			sx_hl7_view raw = sx_hl7_get(&m, s, f, 1, 1, 1);
			sx_hl7_view again;
			size_t na, nb;
			if (raw.len > SX_HL7_MAX_VALUE)
				continue;
			if (sx_hl7_decode(&m.delims, m.charset, raw, a, sizeof a, &na) != SX_OK)
				continue;
			sx_strbuf_reset(&esc);
			sx_hl7_put_escaped(&esc, &m.delims, a, na, false);
			if (sx_strbuf_status(&esc) != SX_OK || esc.len > SX_HL7_MAX_VALUE)
				continue;
			again.p = esc.data ? esc.data : "";
			again.len = esc.len;
			if (sx_hl7_decode(&m.delims, SX_HL7_UTF8, again, b, sizeof b, &nb) !=
			            SX_OK ||
			    nb != na || memcmp(a, b, na) != 0)
				abort();
		}
	}
	sx_strbuf_free(&esc);
	sx_hl7_message_free(&m);
}

static void report_all(const sx_specimen *s)
{
	sx_report_item item = {s, NULL, NULL, 0};
	sx_strbuf out;
	sx_strbuf_init(&out, 0);
	sx_report_hl7(&out, &item, NULL);
	sx_strbuf_free(&out);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	sx_hl7_options opt = {60, "fuzz.hl7", NULL, NULL};
	sx_hl7_ack_options ack_opt = {"ACK1", NULL, NULL, NULL};
	sx_hl7_result res;
	sx_strbuf ack;
	memory mem = {data, size, 0};
	sx_hl7_feed *feed;
	sx_specimen s;
	sx_feed_item item;
	sx_diag_list d;
	bool got = true;
	int guard = 0;

	/* one message, with its acknowledgement */
	sx_hl7_result_init(&res);
	sx_strbuf_init(&ack, 0);
	sx_hl7_receive((const char *)data, size, &opt, &ack_opt, &res, &ack);
	for (size_t i = 0; i < res.record_count; i++)
		report_all(&res.records[i].specimen);
	sx_hl7_result_clear(&res);
	sx_strbuf_free(&ack);

	/* the same bytes as a stream of messages */
	sx_diag_list_init(&d);
	sx_specimen_init(&s);
	if (sx_hl7_feed_open(memory_read, &mem, &opt, &feed) == SX_OK) {
		while (got && guard++ < 100000) {
			sx_hl7_feed_next(feed, &s, &item, &got, &d);
			sx_diag_list_clear(&d);
		}
		sx_hl7_feed_close(feed);
	}
	sx_specimen_clear(&s);
	sx_diag_list_clear(&d);

	check_escaping((const char *)data, size);
	return 0;
}
