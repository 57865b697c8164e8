/* SPDX-License-Identifier: MIT */
/*
 * strbuf.c - bounded growable text buffer.
 */
#include "core/strbuf.h"

#include <stdio.h>
#include <string.h>

#include "core/alloc.h"

void sx_strbuf_init(sx_strbuf *b, size_t max)
{
	memset(b, 0, sizeof *b);
	b->max = max ? max : SX_STRBUF_DEFAULT_MAX;
}

void sx_strbuf_free(sx_strbuf *b)
{
	if (!b)
		return;
	sx_free(b->data);
	b->data = NULL;
	b->len = b->capacity = 0;
}

void sx_strbuf_reset(sx_strbuf *b)
{
	b->len = 0;
	if (b->data)
		b->data[0] = '\0';
	b->status = SX_OK;
}

static bool reserve(sx_strbuf *b, size_t extra)
{
	size_t need, cap;
	char *data;
	if (b->status != SX_OK)
		return false;
	if (extra > b->max || b->len + extra + 1 > b->max) {
		b->status = SX_ELIMIT;
		return false;
	}
	need = b->len + extra + 1;
	if (need <= b->capacity)
		return true;
	cap = b->capacity ? b->capacity : 256;
	while (cap < need)
		cap *= 2;
	if (cap > b->max)
		cap = b->max;
	data = sx_realloc(b->data, cap);
	if (!data) {
		b->status = SX_ENOMEM;
		return false;
	}
	b->data = data;
	b->capacity = cap;
	return true;
}

void sx_strbuf_append(sx_strbuf *b, const char *s, size_t len)
{
	if (!reserve(b, len))
		return;
	memcpy(b->data + b->len, s, len);
	b->len += len;
	b->data[b->len] = '\0';
}

void sx_strbuf_puts(sx_strbuf *b, const char *s)
{
	sx_strbuf_append(b, s, strlen(s));
}

void sx_strbuf_putc(sx_strbuf *b, char c)
{
	sx_strbuf_append(b, &c, 1);
}

void sx_strbuf_printf(sx_strbuf *b, const char *fmt, ...)
{
	va_list ap;
	int n;
	char small[256];

	va_start(ap, fmt);
	n = vsnprintf(small, sizeof small, fmt, ap);
	va_end(ap);
	if (n < 0)
		return;
	if ((size_t)n < sizeof small) {
		sx_strbuf_append(b, small, (size_t)n);
		return;
	}
	if (!reserve(b, (size_t)n))
		return;
	va_start(ap, fmt);
	vsnprintf(b->data + b->len, (size_t)n + 1, fmt, ap);
	va_end(ap);
	b->len += (size_t)n;
}

void sx_strbuf_json_string(sx_strbuf *b, const char *s)
{
	static const char hex[] = "0123456789abcdef";
	sx_strbuf_putc(b, '"');
	for (const unsigned char *p = (const unsigned char *)s; p && *p; p++) {
		switch (*p) {
		case '"':
			sx_strbuf_puts(b, "\\\"");
			break;
		case '\\':
			sx_strbuf_puts(b, "\\\\");
			break;
		case '\n':
			sx_strbuf_puts(b, "\\n");
			break;
		case '\r':
			sx_strbuf_puts(b, "\\r");
			break;
		case '\t':
			sx_strbuf_puts(b, "\\t");
			break;
		default:
			if (*p < 0x20 || *p == 0x7f) {
				char esc[6] = {'\\', 'u', '0', '0', hex[*p >> 4], hex[*p & 15]};
				sx_strbuf_append(b, esc, 6);
			} else {
				sx_strbuf_putc(b, (char)*p);
			}
		}
	}
	sx_strbuf_putc(b, '"');
}

sx_status sx_strbuf_status(const sx_strbuf *b)
{
	return b->status;
}
