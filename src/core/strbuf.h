/* SPDX-License-Identifier: MIT */
/*
 * strbuf.h - a growable text buffer with a maximum size.
 *
 * Reporters render into an sx_strbuf; the command (or the daemon) decides
 * where the bytes go. Past max the buffer stops growing and remembers that it
 * overflowed (sx_strbuf_status() is then SX_ELIMIT): text is never cut
 * silently.
 *
 * Ownership: the buffer owns data; sx_strbuf_free() releases it.
 */
#ifndef SX_STRBUF_H
#define SX_STRBUF_H

#include <stdarg.h>
#include <stdbool.h>
#include <stddef.h>

#include "core/status.h"

typedef struct sx_strbuf {
	char *data;       /* always NUL-terminated when not NULL */
	size_t len;
	size_t capacity;
	size_t max;       /* 0 = SX_STRBUF_DEFAULT_MAX */
	sx_status status; /* first failure: SX_ENOMEM or SX_ELIMIT */
} sx_strbuf;

#define SX_STRBUF_DEFAULT_MAX (64u << 20)

void sx_strbuf_init(sx_strbuf *b, size_t max);
void sx_strbuf_free(sx_strbuf *b);
void sx_strbuf_reset(sx_strbuf *b);  /* length 0, keeps memory and status cleared */
void sx_strbuf_append(sx_strbuf *b, const char *s, size_t len);
void sx_strbuf_puts(sx_strbuf *b, const char *s);
void sx_strbuf_putc(sx_strbuf *b, char c);
void sx_strbuf_printf(sx_strbuf *b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* JSON string with quotes, escaping per RFC 8259. */
void sx_strbuf_json_string(sx_strbuf *b, const char *s);
sx_status sx_strbuf_status(const sx_strbuf *b);

#endif
