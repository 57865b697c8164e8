/* SPDX-License-Identifier: MIT */
/*
 * alloc.c - allocation wrappers with failure injection for tests.
 */
#include "core/alloc.h"

#include <stdlib.h>
#include <string.h>

static unsigned long fail_at;   /* 0 = never */
static unsigned long counter;   /* allocations since the last sx_alloc_fail_at */

static int should_fail(void)
{
	counter++;
	return fail_at != 0 && counter == fail_at;
}

unsigned long sx_alloc_fail_at(unsigned long n)
{
	unsigned long made = counter;
	fail_at = n;
	counter = 0;
	return made;
}

void *sx_malloc(size_t size)
{
	if (should_fail())
		return NULL;
	return malloc(size ? size : 1);
}

void *sx_calloc(size_t count, size_t size)
{
	if (should_fail())
		return NULL;
	return calloc(count ? count : 1, size ? size : 1);
}

void *sx_realloc(void *ptr, size_t size)
{
	if (should_fail())
		return NULL;
	return realloc(ptr, size ? size : 1);
}

char *sx_strndup(const char *s, size_t n)
{
	char *copy;
	if (!s)
		return NULL;
	copy = sx_malloc(n + 1);
	if (!copy)
		return NULL;
	memcpy(copy, s, n);
	copy[n] = '\0';
	return copy;
}

char *sx_strdup(const char *s)
{
	return s ? sx_strndup(s, strlen(s)) : NULL;
}

void sx_free(void *ptr)
{
	free(ptr);
}
