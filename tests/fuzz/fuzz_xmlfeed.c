/* SPDX-License-Identifier: MIT */
/*
 * fuzz_xmlfeed.c - fuzz harness for the XML feed reader (libFuzzer entry
 * point; replayed over tests/fuzz/corpus/xmlfeed by `make check`).
 * Build for fuzzing: clang -fsanitize=fuzzer,address -Isrc ... (DEVELOPERS.md).
 */
#include <stdint.h>
#include <string.h>

#include "feed/xmlfeed.h"

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
	memcpy(buf, m->data + m->pos, n);
	m->pos += n;
	return (int)n;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	memory m = {data, size, 0};
	sx_xml_feed *f;
	sx_specimen s;
	sx_feed_item item;
	sx_diag_list d;
	bool got = true;
	int guard = 0;

	sx_diag_list_init(&d);
	sx_specimen_init(&s);
	if (sx_xml_feed_open(memory_read, &m, "fuzz.xml", 0, &f) != SX_OK)
		return 0;
	while (got && guard++ < 100000) {
		sx_xml_feed_next(f, &s, &item, &got, &d);
		sx_diag_list_clear(&d);
	}
	sx_specimen_clear(&s);
	sx_xml_feed_close(f);
	sx_diag_list_clear(&d);
	return 0;
}
