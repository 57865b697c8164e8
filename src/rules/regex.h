/* SPDX-License-Identifier: MIT */
/*
 * regex.h - the PCRE2 wrapper of the rule language.
 *
 * Patterns are compiled once, in UTF mode with Unicode properties, with
 * PCRE2_MATCH_INVALID_UTF so that feed text that is not UTF-8 simply does not
 * match, and JIT-compiled when the platform supports it. Every allocation PCRE2
 * makes goes through core/alloc.h. Matching is bounded (bounds.h: match, depth
 * and heap limits); a match that hits a limit counts as no match.
 *
 * Ownership: the context owns nothing but PCRE2's contexts; compiled codes
 * are freed with sx_rules_regex_free. A context and its codes may be used
 * from several threads at once (matching allocates its own match data).
 */
#ifndef SX_RULES_REGEX_H
#define SX_RULES_REGEX_H

#include <stdbool.h>
#include <stddef.h>

#include "core/status.h"

typedef struct sx_rules_regex_context sx_rules_regex_context;
typedef struct sx_rules_regex sx_rules_regex;

sx_status sx_rules_regex_context_new(sx_rules_regex_context **out);
void sx_rules_regex_context_free(sx_rules_regex_context *ctx);

/* Compile pattern (len bytes; flags from lexer.h: SX_REGEX_CASELESS).
 * SX_ESYNTAX: *error_offset is PCRE2's offset of the error within the pattern
 * and message its own sentence. SX_ENOMEM. */
sx_status sx_rules_regex_compile(sx_rules_regex_context *ctx, const char *pattern, size_t len,
				 unsigned flags, sx_rules_regex **out, size_t *error_offset,
				 char *message, size_t message_size);
void sx_rules_regex_free(sx_rules_regex *re);

/* Working memory for matching (one per thread, reused from match to match). */
typedef struct sx_rules_regex_scratch sx_rules_regex_scratch;
sx_rules_regex_scratch *sx_rules_regex_scratch_new(const sx_rules_regex_context *ctx);
void sx_rules_regex_scratch_free(sx_rules_regex_scratch *scratch);

/* Whether the subject (len bytes) matches anywhere. */
bool sx_rules_regex_match(const sx_rules_regex_context *ctx, const sx_rules_regex *re,
			  sx_rules_regex_scratch *scratch, const char *subject, size_t len);

#endif
