/* SPDX-License-Identifier: MIT */
/*
 * diag.h - diagnostics as data.
 *
 * The library never prints. Where input is wrong it appends a record to an
 * sx_diag_list: severity, status code, where (file, line, column, and for a
 * specimen its id and the data-dictionary field or HL7 location), and a
 * message. The command decides how to show it.
 *
 * Ownership: the list owns every string in it; sx_diag_list_clear() frees
 * them; the list itself may live on the stack.
 */
#ifndef SX_DIAG_H
#define SX_DIAG_H

#include <stdarg.h>
#include <stddef.h>

#include "core/status.h"

typedef enum sx_severity {
	SX_NOTE = 0,
	SX_WARNING,
	SX_ERROR,
} sx_severity;

typedef struct sx_diag {
	sx_severity severity;
	sx_status code;
	char *file;        /* may be NULL (stdin is "-") */
	unsigned line;     /* 1-based; 0 = unknown */
	unsigned column;   /* 1-based; 0 = unknown */
	char *specimen_id; /* may be NULL */
	char *field;       /* data-dictionary field or HL7 location; may be NULL */
	char *message;
} sx_diag;

typedef struct sx_diag_list {
	sx_diag *items;
	size_t count;
	size_t capacity;
	size_t dropped;    /* past SX_MAX_DIAGS: counted, not kept */
	size_t errors;     /* how many of SX_ERROR were added (kept or dropped) */
	size_t warnings;
} sx_diag_list;

/* Where a diagnostic points. Fields may be NULL/0. */
typedef struct sx_where {
	const char *file;
	unsigned line;
	unsigned column;
	const char *specimen_id;
	const char *field;
} sx_where;

void sx_diag_list_init(sx_diag_list *list);
void sx_diag_list_clear(sx_diag_list *list);

/* Append one diagnostic. Returns SX_OK, or SX_ENOMEM (the diagnostic is then
 * only counted). The message is formatted with vsnprintf and cut at
 * SX_MAX_DIAG_MESSAGE bytes. */
sx_status sx_diag_add(sx_diag_list *list, sx_severity severity, sx_status code,
		      const sx_where *where, const char *fmt, ...)
	__attribute__((format(printf, 5, 6)));
sx_status sx_diag_addv(sx_diag_list *list, sx_severity severity, sx_status code,
		       const sx_where *where, const char *fmt, va_list ap);

/* Move every diagnostic of src to the end of dst (src is left empty). */
sx_status sx_diag_list_move(sx_diag_list *dst, sx_diag_list *src);

const char *sx_severity_name(sx_severity severity);

#endif
