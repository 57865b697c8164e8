/* SPDX-License-Identifier: MIT */
/*
 * test_rules_util.h - what the rule-language suites share: loading rules from
 * a string, reading diagnostics as "line:column: severity: message", building
 * specimens and facts. Header-only (static functions) so each suite stays one
 * program.
 */
#ifndef SX_TEST_RULES_UTIL_H
#define SX_TEST_RULES_UTIL_H

#include <check.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/alloc.h"
#include "rules/load.h"
#include "rules/ruleset.h"

/* Every test ruleset gets this first line unless it has a version of its own. */
#define VERSION_LINE "version \"test 1\"\n"

/* Load text (with a version line put first when it has none) as "t.rules". */
static inline sx_status load_text(const char *text, sx_ruleset **rs, sx_diag_list *d)
{
	size_t n = strlen(VERSION_LINE) + strlen(text) + 1;
	char *buf = malloc(n);
	sx_status st;
	ck_assert_ptr_nonnull(buf);
	sx_diag_list_init(d);
	if (!strstr(text, "version \""))
		snprintf(buf, n, "%s%s", VERSION_LINE, text);
	else
		snprintf(buf, n, "%s", text);
	st = sx_rules_load_buffer("t.rules", buf, strlen(buf), rs, d);
	free(buf);
	return st;
}

/* "line:col: severity: message" of diagnostic i ("" past the end). Lines count
 * from the text as given to load_text (the version line added is line 1). */
static inline const char *diag_text(const sx_diag_list *d, size_t i)
{
	static char out[SX_MAX_DIAG_MESSAGE + 64];
	if (i >= d->count)
		return "";
	snprintf(out, sizeof out, "%u:%u: %s: %s", d->items[i].line, d->items[i].column,
		 sx_severity_name(d->items[i].severity), d->items[i].message);
	return out;
}

/* Whether some diagnostic reads exactly want. */
static inline int has_diag(const sx_diag_list *d, const char *want)
{
	for (size_t i = 0; i < d->count; i++)
		if (strcmp(diag_text(d, i), want) == 0)
			return 1;
	return 0;
}

static inline void dump_diags(const sx_diag_list *d)
{
	for (size_t i = 0; i < d->count; i++)
		fprintf(stderr, "  %s\n", diag_text(d, i));
}

/* A specimen from "field=value" pairs (units as the internal ones, times with
 * their offset); agents as "agent=name:percent". */
static inline void build_specimen(sx_specimen *s, const char *const *pairs)
{
	sx_diag_list d;
	sx_diag_list_init(&d);
	sx_specimen_init(s);
	for (; pairs && *pairs; pairs++) {
		const char *eq = strchr(*pairs, '=');
		int f;
		ck_assert_ptr_nonnull(eq);
		if (strncmp(*pairs, "agent=", 6) == 0) {
			const char *colon = strchr(eq + 1, ':');
			double pct = colon ? strtod(colon + 1, NULL) : -1.0;
			size_t len = colon ? (size_t)(colon - eq - 1) : strlen(eq + 1);
			ck_assert_int_eq(sx_specimen_add_agent(s, eq + 1, len, pct), SX_OK);
			continue;
		}
		f = sx_field_lookup(*pairs, (size_t)(eq - *pairs));
		ck_assert_msg(f >= 0, "unknown field in %s", *pairs);
		ck_assert_msg(sx_specimen_set(s, (sx_field)f, eq + 1, strlen(eq + 1), NULL, 0, NULL,
					      &d) == SX_OK,
			      "cannot set %s", *pairs);
	}
	sx_diag_list_clear(&d);
}

/* Facts from "name=value" pairs. */
static inline void build_facts(sx_facts *f, const char *const *pairs)
{
	memset(f, 0, sizeof *f);
	for (; pairs && *pairs; pairs++) {
		const char *eq = strchr(*pairs, '=');
		int i;
		ck_assert_ptr_nonnull(eq);
		i = sx_fact_lookup(*pairs, (size_t)(eq - *pairs));
		ck_assert_msg(i >= 0, "unknown fact in %s", *pairs);
		f->has[i] = true;
		f->value[i] = strtod(eq + 1, NULL);
	}
}

/* "code,code,..." of the outcome's reasons in order. */
static inline const char *reason_codes(const sx_rule_outcome *o)
{
	static char out[1024];
	size_t n = 0;
	out[0] = '\0';
	for (size_t i = 0; i < o->reason_count; i++)
		n += (size_t)snprintf(out + n, sizeof out - n, "%s%s", i ? "," : "",
				      o->reasons[i].code);
	return out;
}

/* "name,name,..." of the mechanisms switched on. */
static inline const char *mechanisms_on(const sx_rule_outcome *o)
{
	static char out[256];
	size_t n = 0;
	out[0] = '\0';
	for (int m = 0; m < SX_MECH_COUNT; m++)
		if (o->mechanism_on[m])
			n += (size_t)snprintf(out + n, sizeof out - n, "%s%s", n ? "," : "",
					      sx_mechanism_name((sx_mechanism)m));
	return out;
}

/* The source tree (for rulesets/ and fixtures/): $SX_SRCDIR or "../..". */
static inline const char *srcdir(void)
{
	const char *s = getenv("SX_SRCDIR");
	return s && *s ? s : "../..";
}

#endif
