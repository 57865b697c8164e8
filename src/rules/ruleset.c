/* SPDX-License-Identifier: MIT */
/*
 * ruleset.c - loading a ruleset folder (its *.rules files in name order, what
 * they include, the base it builds on), compiling it all-or-nothing, and the
 * read-only questions the rest of libsyrinx asks a loaded ruleset.
 *
 * Load order: the base's statements come before the ruleset's own (a base of
 * a base before both); within a ruleset, files in byte order of their names;
 * an included file's statements stand where its include stands. Diagnostics
 * are sorted by file (in load order), line and column before they are handed
 * back, so they read top to bottom.
 */
#include <dirent.h>
#include <errno.h>
#include <limits.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "core/alloc.h"
#include "rules/bounds.h"
#include "rules/load.h"
#include "rules/parser.h"
#include "rules/program.h"

#ifndef PATH_MAX
#define PATH_MAX 4096
#endif

typedef struct loader {
	sx_rules_arena arena;
	sx_rules_report report;
	sx_rules_parse_env env;
	sx_diag_list local;
	sx_rules_source *files[SX_RULES_MAX_FILES];
	char *real[SX_RULES_MAX_FILES];
	const sx_rules_source *included_from[SX_RULES_MAX_FILES]; /* NULL: a file of the folder */
	size_t included_at[SX_RULES_MAX_FILES];
	size_t file_count;
	bool too_many_files;
	sx_rules_layer layers[SX_RULES_MAX_BASE_DEPTH + 1];
	char *layer_real[SX_RULES_MAX_BASE_DEPTH + 1];
	size_t layer_count;
} loader;

/* An error about a folder or file with no position in a rule file. */
static void path_error(loader *L, const char *path, sx_status code, const char *fmt, ...)
	__attribute__((format(printf, 4, 5)));

static void path_error(loader *L, const char *path, sx_status code, const char *fmt, ...)
{
	sx_where w = {path, 0, 0, NULL, NULL};
	va_list ap;
	va_start(ap, fmt);
	L->report.errors++;
	if (sx_diag_addv(L->report.diags, SX_ERROR, code, &w, fmt, ap) == SX_ENOMEM)
		L->report.fatal = SX_ENOMEM;
	va_end(ap);
}

/* Report at from:off when there is a place to point at, else at path. */
static void load_error(loader *L, const sx_rules_source *from, size_t off, const char *path,
		       sx_status code, const char *what, const char *why)
{
	if (from)
		sx_rules_error(&L->report, from, off, code, "%s %s: %s", what, path, why);
	else
		path_error(L, path, code, "%s: %s", what, why);
}

static sx_rules_source *read_source(loader *L, const char *path, int layer,
				    const sx_rules_source *from, size_t off)
{
	char real[PATH_MAX];
	char *text = NULL;
	size_t len = 0;
	const char *why = NULL;
	sx_rules_source *src = NULL;
	sx_status st;

	if (L->file_count == SX_RULES_MAX_FILES) {
		if (!L->too_many_files)
			load_error(L, from, off, path, SX_ELIMIT, "cannot read",
				   "a ruleset has at most 64 files (SX_RULES_MAX_FILES)");
		L->too_many_files = true;
		return NULL;
	}
	if (!realpath(path, real)) {
		load_error(L, from, off, path, SX_EIO, "cannot open", strerror(errno));
		return NULL;
	}
	for (size_t i = 0; i < L->file_count; i++) {
		if (strcmp(L->real[i], real) != 0)
			continue;
		if (from)
			sx_rules_error(&L->report, from, off, SX_EINVAL,
				       "cannot include %s: it is read already", path);
		else if (L->included_from[i])
			sx_rules_error(&L->report, L->included_from[i], L->included_at[i],
				       SX_EINVAL,
				       "%s is a *.rules file of the ruleset folder and is read as "
				       "one; an included file needs another ending (such as .inc)",
				       path);
		else
			path_error(L, path, SX_EINVAL, "this file is read twice");
		return NULL;
	}
	st = sx_rules_read_file(path, SX_RULES_MAX_FILE_BYTES, &text, &len, &why);
	if (st == SX_ENOMEM) {
		L->report.fatal = SX_ENOMEM;
		return NULL;
	}
	if (st == SX_ELIMIT) {
		load_error(L, from, off, path, SX_ELIMIT, "cannot read",
			   "larger than 1 MiB (SX_RULES_MAX_FILE_BYTES)");
		return NULL;
	}
	if (st != SX_OK) {
		load_error(L, from, off, path, SX_EIO, "cannot read", why ? why : "read error");
		return NULL;
	}
	st = sx_rules_source_make(&L->arena, path, text, len, &src);
	sx_free(text);
	L->real[L->file_count] = sx_rules_arena_strndup(&L->arena, real, strlen(real));
	if (st != SX_OK || !L->real[L->file_count]) {
		L->report.fatal = SX_ENOMEM;
		return NULL;
	}
	src->layer = layer;
	src->order = (unsigned)L->file_count;
	L->included_from[L->file_count] = from;
	L->included_at[L->file_count] = off;
	L->files[L->file_count++] = src;
	return src;
}

static void include_file(void *ctx, const sx_rules_source *from, size_t off, const char *path,
			 size_t path_len, sx_ast_program *prog, int depth)
{
	loader *L = ctx;
	char *dir = sx_rules_path_dir(&L->arena, from->path);
	char *full = dir ? sx_rules_path_join(&L->arena, dir, path, path_len) : NULL;
	sx_rules_source *src;
	if (!full) {
		if (L->arena.failed)
			L->report.fatal = SX_ENOMEM;
		else
			sx_rules_error(&L->report, from, off, SX_ELIMIT,
				       "file name longer than %d bytes", SX_RULES_MAX_PATH);
		return;
	}
	src = read_source(L, full, from->layer, from, off);
	if (src && !sx_rules_parse(&L->env, src, prog, depth))
		L->layers[from->layer].unreadable = true;
}

static int name_cmp(const void *a, const void *b)
{
	return strcmp(*(char *const *)a, *(char *const *)b);
}

static bool has_suffix(const char *s, const char *suffix)
{
	size_t n = strlen(s), k = strlen(suffix);
	return n > k && strcmp(s + n - k, suffix) == 0;
}

/* The *.rules files of dir, sorted; NULL (reported) when it cannot be listed. */
static char **list_dir(loader *L, const char *dir, const sx_rules_source *from, size_t off,
		       size_t *count)
{
	DIR *d = opendir(dir);
	struct dirent *e;
	char **names;
	size_t n = 0;

	*count = 0;
	if (!d) {
		load_error(L, from, off, dir, SX_EIO, "cannot open the ruleset folder",
			   strerror(errno));
		return NULL;
	}
	names = sx_rules_arena_alloc(&L->arena, (SX_RULES_MAX_FILES + 1) * sizeof *names);
	if (!names) {
		closedir(d);
		L->report.fatal = SX_ENOMEM;
		return NULL;
	}
	while ((e = readdir(d))) {
		char *path;
		struct stat st;
		if (e->d_name[0] == '.' || !has_suffix(e->d_name, ".rules"))
			continue;
		path = sx_rules_path_join(&L->arena, dir, e->d_name, strlen(e->d_name));
		if (!path || stat(path, &st) != 0 || !S_ISREG(st.st_mode))
			continue;
		if (n == SX_RULES_MAX_FILES) {
			load_error(L, from, off, dir, SX_ELIMIT, "cannot load the ruleset folder",
				   "more than 64 *.rules files (SX_RULES_MAX_FILES)");
			closedir(d);
			return NULL;
		}
		names[n++] = sx_rules_arena_strndup(&L->arena, e->d_name, strlen(e->d_name));
		if (!names[n - 1]) {
			closedir(d);
			L->report.fatal = SX_ENOMEM;
			return NULL;
		}
	}
	closedir(d);
	if (n == 0) {
		load_error(L, from, off, dir, SX_ENOTFOUND, "cannot load the ruleset folder",
			   "it holds no *.rules files");
		return NULL;
	}
	qsort(names, n, sizeof *names, name_cmp);
	*count = n;
	return names;
}

static void load_layer(loader *L, const char *dir, int layer, const sx_rules_source *from,
		       size_t off, sx_ast_program *out)
{
	char real[PATH_MAX];
	sx_ast_program own;
	char **names;
	size_t n;

	if (layer > SX_RULES_MAX_BASE_DEPTH) {
		sx_rules_error(&L->report, from, off, SX_ELIMIT,
			       "bases nested more than %d deep (SX_RULES_MAX_BASE_DEPTH)",
			       SX_RULES_MAX_BASE_DEPTH);
		return;
	}
	if (!realpath(dir, real)) {
		load_error(L, from, off, dir, SX_EIO, "cannot open the ruleset folder",
			   strerror(errno));
		return;
	}
	for (size_t i = 0; i < (size_t)layer; i++)
		if (L->layer_real[i] && strcmp(L->layer_real[i], real) == 0) {
			sx_rules_error(&L->report, from, off, SX_EINVAL,
				       "base %s: a cycle (it builds on this ruleset)", dir);
			return;
		}
	L->layer_real[layer] = sx_rules_arena_strndup(&L->arena, real, strlen(real));
	names = list_dir(L, dir, from, off, &n);
	if (!names)
		return;
	L->layers[layer].dir = dir;
	if ((size_t)layer + 1 > L->layer_count)
		L->layer_count = (size_t)layer + 1;
	sx_ast_program_init(&own);
	for (size_t i = 0; i < n; i++) {
		char *path = sx_rules_path_join(&L->arena, dir, names[i], strlen(names[i]));
		sx_rules_source *src = path ? read_source(L, path, layer, NULL, 0) : NULL;
		if (!src)
			continue;
		if (!L->layers[layer].first)
			L->layers[layer].first = src;
		if (!sx_rules_parse(&L->env, src, &own, 0))
			L->layers[layer].unreadable = true;
	}
	if (own.bases.count > 1) {
		char first[SX_MAX_RULE_REF];
		sx_rules_ref(own.bases.head->pos.src, own.bases.head->pos.off, first, sizeof first);
		for (const sx_ast_base *b = own.bases.head->next; b; b = b->next)
			sx_rules_error(&L->report, b->pos.src, b->pos.off, SX_EINVAL,
				       "a ruleset builds on one base; the first is at %s", first);
	} else if (own.bases.count == 1) {
		const sx_ast_base *b = own.bases.head;
		char *bdir = sx_rules_path_dir(&L->arena, b->pos.src->path);
		char *full = bdir ? sx_rules_path_join(&L->arena, bdir, b->path.text, b->path.len)
				  : NULL;
		if (full)
			load_layer(L, full, layer + 1, b->path.pos.src, b->path.pos.off, out);
		else if (!L->arena.failed)
			sx_rules_error(&L->report, b->pos.src, b->pos.off, SX_ELIMIT,
				       "folder name longer than %d bytes", SX_RULES_MAX_PATH);
	}
	sx_ast_program_splice(out, &own);
}

/* ---- finishing a load: compile, check, sort the diagnostics ---------------------------- */

typedef struct keyed {
	sx_diag d;
	int layer;             /* deeper bases first: they load first */
	unsigned order;
	size_t index;
} keyed;

static int keyed_cmp(const void *pa, const void *pb)
{
	const keyed *a = pa, *b = pb;
	if (a->layer != b->layer)
		return a->layer > b->layer ? -1 : 1;
	if (a->order != b->order)
		return a->order < b->order ? -1 : 1;
	if (a->d.line != b->d.line)
		return a->d.line < b->d.line ? -1 : 1;
	if (a->d.column != b->d.column)
		return a->d.column < b->d.column ? -1 : 1;
	return a->index < b->index ? -1 : a->index > b->index;
}

static void sort_diags(loader *L)
{
	sx_diag_list *list = &L->local;
	keyed *k;
	if (list->count < 2)
		return;
	k = sx_malloc(list->count * sizeof *k);
	if (!k)
		return; /* unsorted is still right */
	for (size_t i = 0; i < list->count; i++) {
		k[i].d = list->items[i];
		k[i].index = i;
		k[i].order = 0;
		k[i].layer = (int)L->layer_count;
		for (size_t f = 0; f < L->file_count; f++)
			if (list->items[i].file && strcmp(list->items[i].file, L->files[f]->path) == 0) {
				k[i].order = L->files[f]->order + 1;
				k[i].layer = L->files[f]->layer;
				break;
			}
	}
	qsort(k, list->count, sizeof *k, keyed_cmp);
	for (size_t i = 0; i < list->count; i++)
		list->items[i] = k[i].d;
	sx_free(k);
}

static sx_status finish(loader *L, const sx_ast_program *prog, sx_ruleset **out,
			sx_diag_list *diags)
{
	sx_ruleset *rs = NULL;
	sx_status status = SX_OK;
	bool only_io = true;

	if (!L->report.fatal && !L->arena.failed)
		rs = sx_rules_compile(prog, L->layers, L->layer_count, &L->report);
	if (L->arena.failed)
		L->report.fatal = SX_ENOMEM;
	if (rs && L->report.errors == 0 && !L->report.fatal) {
		sx_rules_check(rs, &L->report);
		rs->file_count = (unsigned)L->file_count;
	}
	if (rs) {
		/* the files go with the loader */
		for (size_t i = 0; i < rs->rule_count; i++)
			rs->rules[i].src = NULL;
		for (size_t i = 0; i < rs->limit_count; i++)
			rs->limits[i].src = NULL;
		for (size_t i = 0; i < rs->reason_count; i++)
			rs->reasons[i].src = NULL;
	}
	sort_diags(L);
	for (size_t i = 0; i < L->local.count; i++)
		if (L->local.items[i].severity == SX_ERROR && L->local.items[i].code != SX_EIO)
			only_io = false;
	if (L->report.fatal)
		status = L->report.fatal;
	else if (L->report.errors)
		status = only_io ? SX_EIO : SX_ESYNTAX;
	if (status != SX_OK) {
		sx_ruleset_free(rs);
		rs = NULL;
	}
	if (diags && sx_diag_list_move(diags, &L->local) != SX_OK && status == SX_OK) {
		sx_ruleset_free(rs);
		rs = NULL;
		status = SX_ENOMEM;
	}
	sx_diag_list_clear(&L->local);
	sx_rules_arena_free(&L->arena);
	*out = rs;
	return status;
}

static void loader_init(loader *L)
{
	memset(L, 0, sizeof *L);
	sx_rules_arena_init(&L->arena);
	sx_diag_list_init(&L->local);
	L->report.diags = &L->local;
	L->env.arena = &L->arena;
	L->env.report = &L->report;
	L->env.include = include_file;
	L->env.ctx = L;
}

sx_status sx_ruleset_load(const char *dir, sx_ruleset **out, sx_diag_list *diags)
{
	loader *L;
	sx_ast_program prog;
	char *tidy;
	sx_status st;

	if (!out)
		return SX_EINVAL;
	*out = NULL;
	if (!dir)
		return SX_EINVAL;
	L = sx_malloc(sizeof *L);
	if (!L)
		return SX_ENOMEM;
	loader_init(L);
	sx_ast_program_init(&prog);
	tidy = sx_rules_path_join(&L->arena, NULL, dir, strlen(dir));
	if (!tidy) {
		if (!L->arena.failed)
			path_error(L, dir, SX_ELIMIT, "folder name longer than %d bytes",
				   SX_RULES_MAX_PATH);
	} else {
		load_layer(L, tidy, 0, NULL, 0, &prog);
	}
	st = finish(L, &prog, out, diags);
	sx_free(L);
	return st;
}

sx_status sx_rules_load_buffer(const char *name, const char *bytes, size_t len,
			       sx_ruleset **out, sx_diag_list *diags)
{
	loader *L;
	sx_ast_program prog;
	sx_rules_source *src = NULL;
	sx_status st;

	if (!out)
		return SX_EINVAL;
	*out = NULL;
	if (!name || (!bytes && len))
		return SX_EINVAL;
	L = sx_malloc(sizeof *L);
	if (!L)
		return SX_ENOMEM;
	loader_init(L);
	L->env.include = NULL;
	L->env.no_include_reason = "rules loaded from memory";
	sx_ast_program_init(&prog);
	if (len > SX_RULES_MAX_FILE_BYTES) {
		path_error(L, name, SX_ELIMIT, "larger than 1 MiB (SX_RULES_MAX_FILE_BYTES)");
	} else if (sx_rules_source_make(&L->arena, name, bytes ? bytes : "", len, &src) != SX_OK) {
		L->report.fatal = SX_ENOMEM;
	} else {
		L->files[L->file_count++] = src;
		L->layers[0].dir = name;
		L->layers[0].first = src;
		L->layer_count = 1;
		L->layers[0].unreadable = !sx_rules_parse(&L->env, src, &prog, 0);
	}
	st = finish(L, &prog, out, diags);
	sx_free(L);
	return st;
}

/* ---- the loaded ruleset ------------------------------------------------------------------ */

void sx_ruleset_free(sx_ruleset *rs)
{
	if (!rs)
		return;
	for (size_t i = 0; i < rs->regex_count; i++)
		sx_rules_regex_free(rs->regexes[i]);
	sx_free(rs->regexes);
	sx_rules_regex_context_free(rs->rx);
	sx_rules_arena_free(&rs->arena);
	sx_free(rs);
}

const char *sx_ruleset_version(const sx_ruleset *rs)
{
	return rs && rs->version ? rs->version : "";
}

const sx_settings *sx_ruleset_settings(const sx_ruleset *rs)
{
	return rs ? &rs->settings : NULL;
}

const char *sx_ruleset_origin(const sx_ruleset *rs, const char *name)
{
	const sx_param_info *p;
	if (!rs || !name || !rs->origins)
		return NULL;
	p = sx_param_lookup(name, strlen(name));
	return p ? rs->origins[p - sx_param_at(0)] : NULL;
}

int sx_ruleset_map_code(const sx_ruleset *rs, const char *system, const char *code)
{
	if (!rs || !system || !code)
		return -1;
	for (size_t i = 0; i < rs->code_count; i++)
		if (strcmp(rs->codes[i].code, code) == 0 && strcmp(rs->codes[i].system, system) == 0)
			return rs->codes[i].field;
	return -1;
}

bool sx_ruleset_agent_sensitivity(const sx_ruleset *rs, const char *agent, sx_range *out)
{
	sx_range none = {0, 0, 0};
	char name[SX_RULES_MAX_NAME + 16];
	size_t n;
	const sx_param_info *p;
	if (out)
		*out = none;
	if (!rs || !agent)
		return false;
	/* an agent the model has a parameter for: the registry holds the value */
	n = (size_t)snprintf(name, sizeof name, "electrode.%s", agent);
	for (size_t i = 0; i < n && i < sizeof name; i++)
		if (name[i] == '-')
			name[i] = '_';
	if (n < sizeof name && (p = sx_param_lookup(name, n)) != NULL) {
		if (out)
			*out = sx_param_get(&rs->settings, p);
		return true;
	}
	for (size_t i = 0; i < rs->agent_count; i++)
		if (rs->agents[i].has_sensitivity && strcmp(rs->agents[i].name, agent) == 0) {
			if (out)
				*out = rs->agents[i].sensitivity;
			return true;
		}
	return false;
}

void sx_ruleset_stats_get(const sx_ruleset *rs, sx_ruleset_stats *out)
{
	memset(out, 0, sizeof *out);
	if (!rs)
		return;
	out->files = rs->file_count;
	out->rules = rs->rule_count;
	out->rules_before_model = rs->pass_count[SX_PASS_BEFORE_MODEL];
	out->rules_after_model = rs->pass_count[SX_PASS_AFTER_MODEL];
	out->limits = rs->limit_count;
	out->reasons = rs->reason_count;
	out->patterns = rs->pattern_count;
	out->agents = rs->agent_count;
	out->codes = rs->code_count;
	for (size_t i = 0; i < sx_param_count(); i++)
		if (rs->origins && rs->origins[i])
			out->settings++;
}

bool sx_ruleset_rule_at(const sx_ruleset *rs, size_t i, const char **name, sx_rule_pass *pass,
			const char **ref)
{
	if (!rs || i >= rs->rule_count)
		return false;
	if (name)
		*name = rs->rules[i].name;
	if (pass)
		*pass = rs->rules[i].pass;
	if (ref)
		*ref = rs->rules[i].ref;
	return true;
}

char *sx_ruleset_source_line(const char *file, unsigned line)
{
	char *text = NULL, *out = NULL;
	size_t len = 0, start = 0, end;
	const char *why;
	unsigned at = 1;
	if (!file || line == 0 ||
	    sx_rules_read_file(file, SX_RULES_MAX_FILE_BYTES, &text, &len, &why) != SX_OK)
		return NULL;
	if (len >= 3 && memcmp(text, "\xEF\xBB\xBF", 3) == 0)
		start = 3; /* a byte-order mark is not shown */
	while (at < line && start < len) {
		if (text[start] == '\n')
			at++;
		start++;
	}
	if (at == line) {
		end = start;
		while (end < len && text[end] != '\n')
			end++;
		if (end > start && text[end - 1] == '\r')
			end--;
		out = sx_strndup(text + start, end - start);
	}
	sx_free(text);
	return out;
}

void sx_ruleset_caret_line(const char *line_text, unsigned column, char *buf, size_t size)
{
	size_t o = 0;
	unsigned col = 1;
	if (size == 0)
		return;
	for (const char *p = line_text ? line_text : ""; *p && col < column && o + 2 < size; p++) {
		if (((unsigned char)*p & 0xC0) == 0x80)
			continue;
		buf[o++] = *p == '\t' ? '\t' : ' ';
		col++;
	}
	while (col < column && o + 2 < size) {
		buf[o++] = ' ';
		col++;
	}
	if (o + 1 < size)
		buf[o++] = '^';
	buf[o] = '\0';
}
