/* SPDX-License-Identifier: MIT */
/*
 * regex.c - PCRE2 compile, JIT and match for the rule language (see regex.h).
 */
#define PCRE2_CODE_UNIT_WIDTH 8
#include "rules/regex.h"

#include <pcre2.h>
#include <stdio.h>

#include "core/alloc.h"
#include "rules/bounds.h"
#include "rules/lexer.h"

struct sx_rules_regex_context {
	pcre2_general_context *general;
	pcre2_compile_context *compile;
	pcre2_match_context *match;
};

struct sx_rules_regex {
	pcre2_code *code;
	bool jit;
};

static void *regex_malloc(PCRE2_SIZE size, void *data)
{
	(void)data;
	return sx_malloc(size);
}

static void regex_free(void *ptr, void *data)
{
	(void)data;
	sx_free(ptr);
}

sx_status sx_rules_regex_context_new(sx_rules_regex_context **out)
{
	sx_rules_regex_context *c = sx_calloc(1, sizeof *c);
	*out = NULL;
	if (!c)
		return SX_ENOMEM;
	c->general = pcre2_general_context_create(regex_malloc, regex_free, NULL);
	if (c->general) {
		c->compile = pcre2_compile_context_create(c->general);
		c->match = pcre2_match_context_create(c->general);
	}
	if (!c->general || !c->compile || !c->match) {
		sx_rules_regex_context_free(c);
		return SX_ENOMEM;
	}
	pcre2_set_max_pattern_length(c->compile, SX_RULES_MAX_REGEX);
	pcre2_set_match_limit(c->match, SX_RULES_MATCH_LIMIT);
	pcre2_set_depth_limit(c->match, SX_RULES_DEPTH_LIMIT);
	pcre2_set_heap_limit(c->match, SX_RULES_HEAP_LIMIT);
	*out = c;
	return SX_OK;
}

void sx_rules_regex_context_free(sx_rules_regex_context *c)
{
	if (!c)
		return;
	pcre2_match_context_free(c->match);
	pcre2_compile_context_free(c->compile);
	pcre2_general_context_free(c->general);
	sx_free(c);
}

sx_status sx_rules_regex_compile(sx_rules_regex_context *c, const char *pattern, size_t len,
				 unsigned flags, sx_rules_regex **out, size_t *error_offset,
				 char *message, size_t message_size)
{
	uint32_t options = PCRE2_UTF | PCRE2_UCP | PCRE2_MATCH_INVALID_UTF | PCRE2_NEVER_BACKSLASH_C;
	int error;
	PCRE2_SIZE offset = 0;
	sx_rules_regex *re;

	*out = NULL;
	*error_offset = 0;
	if (message_size)
		message[0] = '\0';
	if (flags & SX_REGEX_CASELESS)
		options |= PCRE2_CASELESS;
	re = sx_calloc(1, sizeof *re);
	if (!re)
		return SX_ENOMEM;
	re->code = pcre2_compile((PCRE2_SPTR)pattern, len, options, &error, &offset, c->compile);
	if (!re->code) {
		sx_free(re);
		if (error == PCRE2_ERROR_NOMEMORY || error == PCRE2_ERROR_HEAP_FAILED)
			return SX_ENOMEM;
		*error_offset = offset;
		if (pcre2_get_error_message(error, (PCRE2_UCHAR *)message, message_size) < 0 &&
		    message_size)
			snprintf(message, message_size, "PCRE2 error %d", error);
		return SX_ESYNTAX;
	}
	/* JIT when the platform has it; the interpreter otherwise (same results). */
	re->jit = pcre2_jit_compile(re->code, PCRE2_JIT_COMPLETE) == 0;
	*out = re;
	return SX_OK;
}

void sx_rules_regex_free(sx_rules_regex *re)
{
	if (!re)
		return;
	pcre2_code_free(re->code);
	sx_free(re);
}

sx_rules_regex_scratch *sx_rules_regex_scratch_new(const sx_rules_regex_context *c)
{
	return (sx_rules_regex_scratch *)pcre2_match_data_create(1, c->general);
}

void sx_rules_regex_scratch_free(sx_rules_regex_scratch *scratch)
{
	pcre2_match_data_free((pcre2_match_data *)scratch);
}

bool sx_rules_regex_match(const sx_rules_regex_context *c, const sx_rules_regex *re,
			  sx_rules_regex_scratch *scratch, const char *subject, size_t len)
{
	pcre2_match_data *md = (pcre2_match_data *)scratch;
	int rc;
	if (re->jit)
		rc = pcre2_jit_match(re->code, (PCRE2_SPTR)subject, len, 0, 0, md, c->match);
	else
		rc = pcre2_match(re->code, (PCRE2_SPTR)subject, len, 0, 0, md, c->match);
	return rc >= 0;
}
