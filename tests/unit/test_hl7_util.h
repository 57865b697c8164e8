/* SPDX-License-Identifier: MIT */
/*
 * test_hl7_util.h - helpers shared by the HL7 test suites: reading fixtures,
 * an in-memory reader that hands bytes out in small chunks, and searching
 * diagnostics. Header-only (static functions), included once per suite.
 */
#ifndef SX_TEST_HL7_UTIL_H
#define SX_TEST_HL7_UTIL_H

#include <check.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/diag.h"

#ifndef SX_TEST_FIXTURES
#define SX_TEST_FIXTURES "fixtures"
#endif

/* The bytes of fixtures/<rel> (NUL-terminated for convenience; *len without
 * the NUL). Fails the test when the file cannot be read. */
static inline char *fixture(const char *rel, size_t *len)
{
	char path[1024];
	FILE *fp;
	long n;
	char *buf;
	snprintf(path, sizeof path, "%s/%s", SX_TEST_FIXTURES, rel);
	fp = fopen(path, "rb");
	ck_assert_msg(fp != NULL, "cannot open %s", path);
	fseek(fp, 0, SEEK_END);
	n = ftell(fp);
	rewind(fp);
	buf = malloc((size_t)n + 1);
	ck_assert_ptr_nonnull(buf);
	ck_assert_uint_eq(fread(buf, 1, (size_t)n, fp), (size_t)n);
	buf[n] = '\0';
	fclose(fp);
	*len = (size_t)n;
	return buf;
}

typedef struct mem_input {
	const char *data;
	size_t len, pos, chunk;
} mem_input;

/* Like read(2) over memory, at most chunk bytes a call (0: no limit). */
static inline int mem_read(void *context, char *buf, int len)
{
	mem_input *m = context;
	size_t n = m->len - m->pos;
	if (n > (size_t)len)
		n = (size_t)len;
	if (m->chunk && n > m->chunk)
		n = m->chunk;
	memcpy(buf, m->data + m->pos, n);
	m->pos += n;
	return (int)n;
}

/* The first diagnostic whose message contains text, or NULL. */
static inline const sx_diag *find_diag(const sx_diag_list *d, const char *text)
{
	for (size_t i = 0; i < d->count; i++)
		if (strstr(d->items[i].message, text))
			return &d->items[i];
	return NULL;
}

#endif
