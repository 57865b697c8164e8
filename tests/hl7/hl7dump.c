/* SPDX-License-Identifier: MIT */
/*
 * hl7dump.c - print every message of an HL7 v2 file as syrinx's parser sees
 * it, one JSON line per message, for the differential test against
 * node-hl7-client (tests/hl7/differential.sh).
 *
 * A line is an array of segments; a segment is [id, field1, field2, ...];
 * MSH-1 and MSH-2 are strings; any other field is an array of repetitions,
 * a repetition an array of components, a component an array of decoded
 * subcomponents (strings). An empty field, repetition or component is [].
 * Strings are written as JavaScript's JSON.stringify writes them, so the two
 * outputs can be compared byte for byte.
 *
 * usage: hl7dump FILE
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "feed/hl7parse.h"

static int file_read(void *context, char *buf, int len)
{
	FILE *fp = context;
	size_t n = fread(buf, 1, (size_t)len, fp);
	if (n == 0 && ferror(fp))
		return -1;
	return (int)n;
}

static void json_string(const char *s, size_t n)
{
	putchar('"');
	for (size_t i = 0; i < n; i++) {
		unsigned char c = (unsigned char)s[i];
		switch (c) {
		case '"':
			fputs("\\\"", stdout);
			break;
		case '\\':
			fputs("\\\\", stdout);
			break;
		case '\b':
			fputs("\\b", stdout);
			break;
		case '\f':
			fputs("\\f", stdout);
			break;
		case '\n':
			fputs("\\n", stdout);
			break;
		case '\r':
			fputs("\\r", stdout);
			break;
		case '\t':
			fputs("\\t", stdout);
			break;
		default:
			if (c < 0x20)
				printf("\\u%04x", c);
			else
				putchar(c);
		}
	}
	putchar('"');
}

static char decoded[3 * SX_HL7_MAX_MESSAGE_BYTES + 1];

static void value(const sx_hl7_message *m, sx_hl7_view v)
{
	size_t n = 0;
	if (sx_hl7_decode(&m->delims, m->charset, v, decoded, sizeof decoded, &n) != SX_OK)
		n = 0;
	json_string(decoded, n);
}

/* An array of the pieces of v cut at sep, each written by inner (or as a
 * decoded string when inner is 0). [] when v is empty. */
static void level(const sx_hl7_message *m, sx_hl7_view v, const char *seps, int depth)
{
	unsigned n;
	if (depth == 3) {
		value(m, v);
		return;
	}
	putchar('[');
	n = v.len ? sx_hl7_pieces(v, seps[depth]) : 0;
	for (unsigned i = 1; i <= n; i++) {
		if (i > 1)
			putchar(',');
		level(m, sx_hl7_piece(v, seps[depth], i), seps, depth + 1);
	}
	putchar(']');
}

static void dump(const sx_hl7_message *m)
{
	char seps[3] = {m->delims.repetition, m->delims.component, m->delims.subcomponent};
	putchar('[');
	for (size_t i = 0; i < m->segment_count; i++) {
		const sx_hl7_segment *s = &m->segments[i];
		bool header = strcmp(s->id, "MSH") == 0;
		sx_hl7_view id = sx_hl7_field(m, s, 0);
		if (i)
			putchar(',');
		putchar('[');
		json_string(id.p, id.len);
		for (unsigned f = 1; f < s->count; f++) {
			sx_hl7_view v = sx_hl7_field(m, s, f);
			putchar(',');
			if (header && f <= 2)
				json_string(v.p, v.len);
			else
				level(m, v, seps, 0);
		}
		putchar(']');
	}
	fputs("]\n", stdout);
}

int main(int argc, char **argv)
{
	sx_hl7_reader *r;
	FILE *fp;
	int status = 0;

	if (argc != 2) {
		fputs("usage: hl7dump FILE\n", stderr);
		return 2;
	}
	fp = fopen(argv[1], "rb");
	if (!fp) {
		perror(argv[1]);
		return 1;
	}
	if (sx_hl7_reader_open(file_read, fp, &r) != SX_OK) {
		fclose(fp);
		return 1;
	}
	for (;;) {
		sx_hl7_chunk c;
		sx_hl7_message m;
		char why[256];
		if (sx_hl7_reader_next(r, &c) != SX_OK) {
			fputs("hl7dump: read error\n", stderr);
			status = 1;
			break;
		}
		if (c.kind == SX_HL7_CHUNK_END)
			break;
		if (c.kind != SX_HL7_CHUNK_MESSAGE) {
			fprintf(stderr, "hl7dump: line %u: skipped %zu bytes\n", c.line, c.total);
			continue;
		}
		if (sx_hl7_parse(c.data, c.len, c.line, &m, why, sizeof why) != SX_OK) {
			fprintf(stderr, "hl7dump: line %u: %s\n", c.line, why);
			puts("null");
			status = 1;
			continue;
		}
		dump(&m);
		sx_hl7_message_free(&m);
	}
	sx_hl7_reader_close(r);
	fclose(fp);
	return status;
}
