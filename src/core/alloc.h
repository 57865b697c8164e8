/* SPDX-License-Identifier: MIT */
/*
 * alloc.h - every allocation of libsyrinx goes through these wrappers, so a
 * test can make the n-th allocation fail and check that the error path is
 * clean (no leak, no crash, a status of SX_ENOMEM).
 *
 * Ownership: memory from sx_malloc/sx_calloc/sx_realloc/sx_strdup/sx_strndup
 * is released with sx_free (sx_free(NULL) is fine).
 */
#ifndef SX_ALLOC_H
#define SX_ALLOC_H

#include <stddef.h>

void *sx_malloc(size_t size);
void *sx_calloc(size_t count, size_t size);
void *sx_realloc(void *ptr, size_t size);
char *sx_strdup(const char *s);
char *sx_strndup(const char *s, size_t n);
void sx_free(void *ptr);

/* Tests only: the n-th allocation from now fails (1 = the next one); 0 turns
 * failure injection off. Returns how many allocations were made since the last
 * call, so a test can loop n = 1..count. Not thread-safe by design. */
unsigned long sx_alloc_fail_at(unsigned long n);

#endif
