/* SPDX-License-Identifier: MIT */
/*
 * diag.c - the diagnostics list.
 */
#include "core/diag.h"

#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "core/limits.h"

void sx_diag_list_init(sx_diag_list *list)
{
	memset(list, 0, sizeof *list);
}

static void diag_free(sx_diag *d)
{
	sx_free(d->file);
	sx_free(d->specimen_id);
	sx_free(d->field);
	sx_free(d->message);
}

void sx_diag_list_clear(sx_diag_list *list)
{
	if (!list)
		return;
	for (size_t i = 0; i < list->count; i++)
		diag_free(&list->items[i]);
	sx_free(list->items);
	sx_diag_list_init(list);
}

const char *sx_severity_name(sx_severity severity)
{
	switch (severity) {
	case SX_NOTE:
		return "note";
	case SX_WARNING:
		return "warning";
	case SX_ERROR:
		return "error";
	}
	return "error";
}

static void count(sx_diag_list *list, sx_severity severity)
{
	if (severity == SX_ERROR)
		list->errors++;
	else if (severity == SX_WARNING)
		list->warnings++;
}

sx_status sx_diag_addv(sx_diag_list *list, sx_severity severity, sx_status code,
		       const sx_where *where, const char *fmt, va_list ap)
{
	char text[SX_MAX_DIAG_MESSAGE];
	sx_diag d;

	count(list, severity);
	if (list->count >= SX_MAX_DIAGS) {
		list->dropped++;
		return SX_OK;
	}
	if (list->count == list->capacity) {
		size_t cap = list->capacity ? list->capacity * 2 : 16;
		sx_diag *items = sx_realloc(list->items, cap * sizeof *items);
		if (!items) {
			list->dropped++;
			return SX_ENOMEM;
		}
		list->items = items;
		list->capacity = cap;
	}
	vsnprintf(text, sizeof text, fmt, ap);
	memset(&d, 0, sizeof d);
	d.severity = severity;
	d.code = code;
	if (where) {
		d.file = sx_strdup(where->file);
		d.line = where->line;
		d.column = where->column;
		d.specimen_id = sx_strdup(where->specimen_id);
		d.field = sx_strdup(where->field);
	}
	d.message = sx_strdup(text);
	if (!d.message || (where && ((where->file && !d.file) ||
				     (where->specimen_id && !d.specimen_id) ||
				     (where->field && !d.field)))) {
		diag_free(&d);
		list->dropped++;
		return SX_ENOMEM;
	}
	list->items[list->count++] = d;
	return SX_OK;
}

sx_status sx_diag_add(sx_diag_list *list, sx_severity severity, sx_status code,
		      const sx_where *where, const char *fmt, ...)
{
	va_list ap;
	sx_status st;
	va_start(ap, fmt);
	st = sx_diag_addv(list, severity, code, where, fmt, ap);
	va_end(ap);
	return st;
}

sx_status sx_diag_list_move(sx_diag_list *dst, sx_diag_list *src)
{
	size_t need = dst->count + src->count;
	if (src->count == 0) {
		dst->dropped += src->dropped;
		dst->errors += src->errors;
		dst->warnings += src->warnings;
		sx_free(src->items);
		sx_diag_list_init(src);
		return SX_OK;
	}
	if (need > dst->capacity) {
		sx_diag *items = sx_realloc(dst->items, need * sizeof *items);
		if (!items)
			return SX_ENOMEM;
		dst->items = items;
		dst->capacity = need;
	}
	memcpy(dst->items + dst->count, src->items, src->count * sizeof *src->items);
	dst->count = need;
	dst->dropped += src->dropped;
	dst->errors += src->errors;
	dst->warnings += src->warnings;
	sx_free(src->items);
	sx_diag_list_init(src);
	return SX_OK;
}
