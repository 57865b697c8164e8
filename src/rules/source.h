/* SPDX-License-Identifier: MIT */
/*
 * source.h - what every stage of the rule loader shares: the text of a rule
 * file with its line index, a memory arena for everything built while
 * loading, diagnostics that point at a byte of a file, and file names.
 *
 * Positions are byte offsets into a file's text; line and column are worked
 * out only when a diagnostic is made. A column counts characters (UTF-8 code
 * points), so a caret printed under the line lines up; a tab counts as one
 * column and the command reproduces it when it prints the caret line.
 *
 * Ownership: the arena owns every block it hands out and frees them all at
 * once (sx_rules_arena_free). A source belongs to the loader's file table.
 */
#ifndef SX_RULES_SOURCE_H
#define SX_RULES_SOURCE_H

#include <stdbool.h>
#include <stddef.h>

#include "core/diag.h"
#include "core/status.h"

/* ---- arena ------------------------------------------------------------------ */

typedef struct sx_rules_chunk sx_rules_chunk;

typedef struct sx_rules_arena {
	sx_rules_chunk *head;
	bool failed;               /* an allocation failed: the load reports SX_ENOMEM */
} sx_rules_arena;

void sx_rules_arena_init(sx_rules_arena *a);
void sx_rules_arena_free(sx_rules_arena *a);
/* Zeroed memory, aligned for any type; NULL (and a->failed) when out of memory. */
void *sx_rules_arena_alloc(sx_rules_arena *a, size_t size);
char *sx_rules_arena_strndup(sx_rules_arena *a, const char *s, size_t n);

/* ---- files -------------------------------------------------------------------- */

typedef struct sx_rules_source {
	char *path;                /* as diagnostics and rule references show it */
	char *text;                /* the bytes, NUL-terminated (a NUL inside is an error) */
	size_t len;
	size_t *line_starts;       /* byte offset of each line's first byte */
	size_t line_count;
	int layer;                 /* 0: the ruleset loaded; 1: its base; 2: the base's base */
	unsigned order;            /* position in the file table: diagnostics sort by it */
} sx_rules_source;

/* Build a source over a copy of bytes (the memory entry point and tests). */
sx_status sx_rules_source_make(sx_rules_arena *a, const char *path, const char *bytes,
			       size_t len, sx_rules_source **out);

/* 1-based line and column (in characters) of a byte offset; an offset past the
 * end is placed after the last character. */
void sx_rules_position(const sx_rules_source *src, size_t offset, unsigned *line,
		       unsigned *column);

/* Read a whole file of at most max bytes into *text (sx_malloc'd, NUL added).
 * SX_EIO (errno-based *why), SX_ELIMIT past max. */
sx_status sx_rules_read_file(const char *path, size_t max, char **text, size_t *len,
			     const char **why);

/* ---- file names --------------------------------------------------------------- */

/* dir + "/" + rel made tidy without touching the file system ("a/./b" -> "a/b",
 * "a/x/../b" -> "a/b", leading "./" dropped); rel is used as it is when
 * absolute. Returns an arena string, or NULL when longer than
 * SX_RULES_MAX_PATH or out of memory. dir may be NULL or "". */
char *sx_rules_path_join(sx_rules_arena *a, const char *dir, const char *rel, size_t rel_len);
/* The folder part of a file name ("." when there is none), as an arena string. */
char *sx_rules_path_dir(sx_rules_arena *a, const char *path);

/* ---- diagnostics ---------------------------------------------------------------- */

typedef struct sx_rules_report {
	sx_diag_list *diags;
	size_t errors;             /* errors reported by this load */
	size_t warnings;
	sx_status fatal;           /* SX_ENOMEM or SX_EIO seen (beside syntax errors) */
} sx_rules_report;

#define SX_RULES_NO_OFFSET ((size_t)-1)

/* Report at a byte of src (offset SX_RULES_NO_OFFSET: the file as a whole; src
 * NULL: no file). */
void sx_rules_error(sx_rules_report *r, const sx_rules_source *src, size_t offset,
		    sx_status code, const char *fmt, ...) __attribute__((format(printf, 5, 6)));
void sx_rules_warning(sx_rules_report *r, const sx_rules_source *src, size_t offset,
		      const char *fmt, ...) __attribute__((format(printf, 4, 5)));
/* "path:line" of a byte of src, for references in messages and outcomes;
 * long paths keep their end ("...les/default/delay.rules:12"). */
void sx_rules_ref(const sx_rules_source *src, size_t offset, char *buf, size_t size);

/* The closest of names (within two edits) to the text, or NULL: for "did you
 * mean" hints. names is NULL-terminated or n long (n = (size_t)-1: until NULL). */
const char *sx_rules_closest(const char *text, size_t len, const char *const *names, size_t n);

#endif
