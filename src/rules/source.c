/* SPDX-License-Identifier: MIT */
/*
 * source.c - rule files, positions, the loader's arena, diagnostics at a byte
 * of a file, tidy file names and "did you mean" hints.
 */
#include "rules/source.h"

#include <errno.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "rules/bounds.h"

/* ---- arena ------------------------------------------------------------------ */

#define CHUNK_MIN 16384

struct sx_rules_chunk {
	sx_rules_chunk *next;
	size_t used, size;
	max_align_t data[];
};

void sx_rules_arena_init(sx_rules_arena *a)
{
	a->head = NULL;
	a->failed = false;
}

void sx_rules_arena_free(sx_rules_arena *a)
{
	sx_rules_chunk *c, *next;
	if (!a)
		return;
	for (c = a->head; c; c = next) {
		next = c->next;
		sx_free(c);
	}
	a->head = NULL;
}

void *sx_rules_arena_alloc(sx_rules_arena *a, size_t size)
{
	const size_t align = sizeof(max_align_t);
	sx_rules_chunk *c = a->head;
	void *p;

	size = (size + align - 1) / align * align;
	if (size == 0)
		size = align;
	if (!c || c->size - c->used < size) {
		size_t n = size > CHUNK_MIN ? size : CHUNK_MIN;
		if (size > SIZE_MAX / 2) {
			a->failed = true;
			return NULL;
		}
		c = sx_malloc(sizeof *c + n);
		if (!c) {
			a->failed = true;
			return NULL;
		}
		c->used = 0;
		c->size = n;
		c->next = a->head;
		a->head = c;
	}
	p = (char *)c->data + c->used;
	c->used += size;
	memset(p, 0, size);
	return p;
}

char *sx_rules_arena_strndup(sx_rules_arena *a, const char *s, size_t n)
{
	char *p = sx_rules_arena_alloc(a, n + 1);
	if (p && n)
		memcpy(p, s, n);
	return p;
}

/* ---- files -------------------------------------------------------------------- */

sx_status sx_rules_source_make(sx_rules_arena *a, const char *path, const char *bytes,
			       size_t len, sx_rules_source **out)
{
	sx_rules_source *s = sx_rules_arena_alloc(a, sizeof *s);
	size_t lines = 1, k = 0;

	*out = NULL;
	if (!s)
		return SX_ENOMEM;
	s->path = sx_rules_arena_strndup(a, path, strlen(path));
	s->text = sx_rules_arena_strndup(a, bytes, len);
	if (!s->path || !s->text)
		return SX_ENOMEM;
	s->len = len;
	for (size_t i = 0; i < len; i++)
		if (bytes[i] == '\n')
			lines++;
	s->line_starts = sx_rules_arena_alloc(a, lines * sizeof *s->line_starts);
	if (!s->line_starts)
		return SX_ENOMEM;
	s->line_starts[k++] = 0;
	for (size_t i = 0; i < len; i++)
		if (bytes[i] == '\n')
			s->line_starts[k++] = i + 1;
	s->line_count = k;
	*out = s;
	return SX_OK;
}

void sx_rules_position(const sx_rules_source *src, size_t offset, unsigned *line,
		       unsigned *column)
{
	size_t lo = 0, hi = src->line_count, col = 1;
	if (offset > src->len)
		offset = src->len;
	/* the last line that starts at or before offset */
	while (hi - lo > 1) {
		size_t mid = lo + (hi - lo) / 2;
		if (src->line_starts[mid] <= offset)
			lo = mid;
		else
			hi = mid;
	}
	for (size_t i = src->line_starts[lo]; i < offset; i++)
		if (((unsigned char)src->text[i] & 0xC0) != 0x80)
			col++;
	/* a byte-order mark is no column */
	if (lo == 0 && offset >= 3 && src->len >= 3 && memcmp(src->text, "\xEF\xBB\xBF", 3) == 0)
		col--;
	*line = (unsigned)(lo + 1);
	*column = (unsigned)col;
}

sx_status sx_rules_read_file(const char *path, size_t max, char **text, size_t *len,
			     const char **why)
{
	FILE *fp = fopen(path, "rb");
	char *buf = NULL;
	size_t n = 0, cap = 0;

	*text = NULL;
	*len = 0;
	*why = NULL;
	if (!fp) {
		*why = strerror(errno);
		return SX_EIO;
	}
	for (;;) {
		size_t got;
		if (n == cap) {
			size_t more = cap ? cap * 2 : 4096;
			char *p;
			if (more > max + 1)
				more = max + 1;
			if (more <= cap) {
				sx_free(buf);
				fclose(fp);
				return SX_ELIMIT;
			}
			p = sx_realloc(buf, more + 1);
			if (!p) {
				sx_free(buf);
				fclose(fp);
				return SX_ENOMEM;
			}
			buf = p;
			cap = more;
		}
		got = fread(buf + n, 1, cap - n, fp);
		n += got;
		if (got == 0)
			break;
	}
	if (ferror(fp)) {
		*why = strerror(errno);
		sx_free(buf);
		fclose(fp);
		return SX_EIO;
	}
	fclose(fp);
	if (n > max) {
		sx_free(buf);
		return SX_ELIMIT;
	}
	buf[n] = '\0';
	*text = buf;
	*len = n;
	return SX_OK;
}

/* ---- file names --------------------------------------------------------------- */

char *sx_rules_path_join(sx_rules_arena *a, const char *dir, const char *rel, size_t rel_len)
{
	char whole[SX_RULES_MAX_PATH * 2 + 2];
	char out[SX_RULES_MAX_PATH + 1];
	size_t seg_start[SX_RULES_MAX_PATH / 2 + 1];
	size_t nseg = 0, o = 0, w = 0, i = 0;
	bool absolute;

	if (rel_len > SX_RULES_MAX_PATH || (dir && strlen(dir) > SX_RULES_MAX_PATH))
		return NULL;
	if ((rel_len > 0 && rel[0] == '/') || !dir || !*dir) {
		memcpy(whole, rel, rel_len);
		w = rel_len;
	} else {
		size_t d = strlen(dir);
		memcpy(whole, dir, d);
		whole[d] = '/';
		memcpy(whole + d + 1, rel, rel_len);
		w = d + 1 + rel_len;
	}
	whole[w] = '\0';
	absolute = w > 0 && whole[0] == '/';
	if (absolute)
		out[o++] = '/';
	while (i < w) {
		size_t j = i;
		while (j < w && whole[j] != '/')
			j++;
		if (j - i == 0 || (j - i == 1 && whole[i] == '.')) {
			/* empty or "." */
		} else if (j - i == 2 && whole[i] == '.' && whole[i + 1] == '.' && nseg > 0 &&
			   !(o - seg_start[nseg - 1] == 2 && out[seg_start[nseg - 1]] == '.' &&
			     out[seg_start[nseg - 1] + 1] == '.')) {
			o = seg_start[--nseg];
			if (o > (absolute ? 1u : 0u))
				o--; /* the slash before it */
		} else if (j - i == 2 && whole[i] == '.' && whole[i + 1] == '.' && absolute) {
			/* "/.." is "/" */
		} else {
			if (o > (absolute ? 1u : 0u)) {
				if (o >= SX_RULES_MAX_PATH)
					return NULL;
				out[o++] = '/';
			}
			if (o + (j - i) > SX_RULES_MAX_PATH || nseg >= sizeof seg_start / sizeof *seg_start)
				return NULL;
			seg_start[nseg++] = o;
			memcpy(out + o, whole + i, j - i);
			o += j - i;
		}
		i = j + 1;
	}
	if (o == 0)
		out[o++] = '.';
	return sx_rules_arena_strndup(a, out, o);
}

char *sx_rules_path_dir(sx_rules_arena *a, const char *path)
{
	const char *slash = strrchr(path, '/');
	if (!slash)
		return sx_rules_arena_strndup(a, ".", 1);
	if (slash == path)
		return sx_rules_arena_strndup(a, "/", 1);
	return sx_rules_arena_strndup(a, path, (size_t)(slash - path));
}

/* ---- diagnostics ---------------------------------------------------------------- */

static void report(sx_rules_report *r, sx_severity sev, const sx_rules_source *src,
		   size_t offset, sx_status code, const char *fmt, va_list ap)
{
	sx_where w = {0};
	if (src) {
		w.file = src->path;
		if (offset != SX_RULES_NO_OFFSET)
			sx_rules_position(src, offset, &w.line, &w.column);
	}
	if (sev == SX_ERROR)
		r->errors++;
	else
		r->warnings++;
	if (sx_diag_addv(r->diags, sev, code, &w, fmt, ap) == SX_ENOMEM)
		r->fatal = SX_ENOMEM;
}

void sx_rules_error(sx_rules_report *r, const sx_rules_source *src, size_t offset,
		    sx_status code, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	report(r, SX_ERROR, src, offset, code, fmt, ap);
	va_end(ap);
}

void sx_rules_warning(sx_rules_report *r, const sx_rules_source *src, size_t offset,
		      const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	report(r, SX_WARNING, src, offset, SX_OK, fmt, ap);
	va_end(ap);
}

void sx_rules_ref(const sx_rules_source *src, size_t offset, char *buf, size_t size)
{
	unsigned line, col;
	char num[24];
	size_t plen, nlen;

	if (size == 0)
		return;
	if (!src) {
		snprintf(buf, size, "built-in");
		return;
	}
	sx_rules_position(src, offset, &line, &col);
	nlen = (size_t)snprintf(num, sizeof num, ":%u", line);
	{
		/* A reference names the ruleset's folder and the file ("default/80-policy.rules"):
		 * the same wherever the ruleset is installed or checked out. */
		const char *path = src->path, *last = strrchr(path, '/');
		if (last && last > path) {
			const char *prev = last - 1;
			while (prev > path && *prev != '/')
				prev--;
			path = *prev == '/' ? prev + 1 : prev;
		}
		plen = strlen(path);
		if (plen + nlen < size) {
			snprintf(buf, size, "%s%s", path, num);
			return;
		}
	}
	plen = strlen(src->path);
	if (plen + nlen < size) {
		snprintf(buf, size, "%s%s", src->path, num);
	} else if (size > nlen + 4) {
		size_t keep = size - 1 - nlen - 3;
		snprintf(buf, size, "...%s%s", src->path + plen - keep, num);
	} else {
		snprintf(buf, size, "%s", num);
	}
}

/* Edit distance, stopping early above 2 (names are short). */
static size_t distance(const char *a, size_t la, const char *b, size_t lb)
{
	size_t prev[SX_RULES_MAX_NAME + 1], cur[SX_RULES_MAX_NAME + 1];
	if (la > SX_RULES_MAX_NAME || lb > SX_RULES_MAX_NAME)
		return 99;
	for (size_t j = 0; j <= lb; j++)
		prev[j] = j;
	for (size_t i = 1; i <= la; i++) {
		size_t best = cur[0] = i;
		for (size_t j = 1; j <= lb; j++) {
			size_t sub = prev[j - 1] + (a[i - 1] != b[j - 1]);
			size_t del = prev[j] + 1, ins = cur[j - 1] + 1;
			cur[j] = sub < del ? (sub < ins ? sub : ins) : (del < ins ? del : ins);
			if (cur[j] < best)
				best = cur[j];
		}
		if (best > 2)
			return 99;
		memcpy(prev, cur, (lb + 1) * sizeof *prev);
	}
	return prev[lb];
}

const char *sx_rules_closest(const char *text, size_t len, const char *const *names, size_t n)
{
	const char *best = NULL;
	size_t best_d = 3;
	for (size_t i = 0; i < n && names[i]; i++) {
		size_t d = distance(text, len, names[i], strlen(names[i]));
		if (d < best_d) {
			best_d = d;
			best = names[i];
		}
	}
	return best;
}
