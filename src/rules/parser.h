/* SPDX-License-Identifier: MIT */
/*
 * parser.h - the rule language's recursive-descent parser (grammar in
 * docs/rules.md). Reads one file into an sx_ast_program, reporting every
 * syntax error with its exact position and carrying on at the next statement
 * (or the next action inside a rule), so one pass finds them all.
 */
#ifndef SX_RULES_PARSER_H
#define SX_RULES_PARSER_H

#include "rules/ast.h"
#include "rules/source.h"

typedef struct sx_rules_parse_env {
	sx_rules_arena *arena;
	sx_rules_report *report;
	/* `include "path"`: read the file named relative to from's folder and
	 * parse it into prog at depth + 1. NULL: includes are refused (rules
	 * loaded from memory). */
	void (*include)(void *ctx, const sx_rules_source *from, size_t off, const char *path,
			size_t path_len, sx_ast_program *prog, int depth);
	void *ctx;
	const char *no_include_reason; /* said when include is NULL */
} sx_rules_parse_env;

/* Returns false when the file's bytes cannot be read as text at all (a NUL,
 * not UTF-8): then nothing of it was parsed (the error is reported). */
bool sx_rules_parse(const sx_rules_parse_env *env, const sx_rules_source *src,
		    sx_ast_program *prog, int depth);

#endif
