/* SPDX-License-Identifier: MIT */
/*
 * ruleset.h - a compiled ruleset, as the rest of libsyrinx uses it.
 *
 * A ruleset is a directory of rule files (*.rules, read in name order, plus
 * what they include). Loading is all-or-nothing: sx_ruleset_load() reports
 * every error in one pass (file:line:column, in diags) and returns no ruleset
 * at all when there was one. A loaded ruleset is immutable and may be shared.
 *
 * Per specimen, in this order:
 *   1. sx_ruleset_classify()  free text -> data-dictionary values (PCRE2);
 *   2. sx_ruleset_evaluate(..., SX_PASS_BEFORE_MODEL, ...)  rules over fields
 *      and facts known before the model: switch mechanisms on (with parameter
 *      overrides), add reasons, empirical bias terms, a disposition;
 *   3. the model runs (model/screen.c) with outcome->settings and the
 *      mechanisms that are on, and fills the after-model facts;
 *   4. sx_ruleset_evaluate(..., SX_PASS_AFTER_MODEL, ...)  rules that test
 *      the bias.
 * Every reason carries the file:line of the rule that gave it.
 *
 * Ownership: sx_ruleset_free() frees a ruleset (NULL is fine). Outcomes are
 * plain structs owned by the caller.
 */
#ifndef SX_RULESET_H
#define SX_RULESET_H

#include <stdbool.h>
#include <stddef.h>

#include "core/diag.h"
#include "core/record.h"
#include "model/facts.h"
#include "model/mechanism.h"
#include "model/settings.h"
#include "model/verdict.h"

typedef struct sx_ruleset sx_ruleset;

typedef enum sx_rule_pass {
	SX_PASS_BEFORE_MODEL = 0,
	SX_PASS_AFTER_MODEL,
} sx_rule_pass;

#define SX_MAX_TERMS 8
#define SX_MAX_RULE_REF 128

/* A bias added from local knowledge: `bias LABEL -2 mmHg (-4 to 0 mmHg)`. */
typedef struct sx_empirical_term {
	char label[48];
	sx_range bias_mmhg;
	char rule[SX_MAX_RULE_REF];
} sx_empirical_term;

typedef struct sx_rule_outcome {
	sx_settings settings;                     /* ruleset settings + overrides */
	bool mechanism_on[SX_MECH_COUNT];
	char mechanism_rule[SX_MECH_COUNT][SX_MAX_RULE_REF];
	sx_reason reasons[SX_MAX_REASONS];
	size_t reason_count;
	sx_empirical_term terms[SX_MAX_TERMS];
	size_t term_count;
	int disposition;                          /* -1: no rule set one */
	char disposition_rule[SX_MAX_RULE_REF];
	/* Added with the rule language (issue 4): */
	bool final;                               /* a final disposition ended the rules */
	size_t reasons_dropped;                   /* past SX_MAX_REASONS, counted */
	size_t terms_dropped;                     /* past SX_MAX_TERMS, counted */
} sx_rule_outcome;

/*
 * Load every *.rules file of dir. On any error: diags holds all of them,
 * *out is NULL and the status is SX_ESYNTAX (or SX_EIO, SX_ENOMEM). Warnings
 * (unreachable rule, unused limit or setting, reason code defined twice, a
 * number written without its unit, a mechanism this build does not model)
 * go to diags too and do not stop loading; docs/rules.md lists exactly what
 * is detected. A unit that does not fit the field cannot be compiled, so it
 * is an error. Diagnostics come sorted by file (in load order), line, column.
 */
sx_status sx_ruleset_load(const char *dir, sx_ruleset **out, sx_diag_list *diags);
void sx_ruleset_free(sx_ruleset *rs);

/* The `version` line of the ruleset (its first file's), e.g. "default 1". */
const char *sx_ruleset_version(const sx_ruleset *rs);
/* Settings after every `set` of the ruleset; and where a setting was set
 * ("rulesets/default/site.rules:12"), or NULL when it keeps its default. */
const sx_settings *sx_ruleset_settings(const sx_ruleset *rs);
const char *sx_ruleset_origin(const sx_ruleset *rs, const char *param_name);

/* Fill choice fields that are absent from free text (transport_note,
 * comments, container descriptions) and put agent names into canonical form.
 * Never overrides a value the feed gave. Notes what it did as warnings. */
sx_status sx_ruleset_classify(const sx_ruleset *rs, sx_specimen *specimen,
			      sx_diag_list *diags);

/* Start an outcome: settings from the ruleset, nothing on, no reasons. */
void sx_rule_outcome_init(sx_rule_outcome *o, const sx_ruleset *rs);

/* Run the rules of one pass over the specimen and facts, adding to o. */
sx_status sx_ruleset_evaluate(const sx_ruleset *rs, sx_rule_pass pass,
			      const sx_specimen *specimen, const sx_facts *facts,
			      sx_rule_outcome *o);

/* HL7 code mapping: the data-dictionary field (or -1) a site's local
 * observation code maps to, given coding system and code ("L", "BUBBLES"). */
int sx_ruleset_map_code(const sx_ruleset *rs, const char *system, const char *code);

/* ---- added with the rule language (issue 4) -------------------------------- */

/*
 * The analyser's sensitivity to a volatile agent, for the electrode-
 * interference mechanism: the fraction of the pO2 reading added per volume %
 * of the agent in the breathing gas, as {low, nominal, high} (the estimate
 * uses nominal, the interval the ends). agent is a canonical name as
 * `classify agents` gives it ("halothane", "nitrous-oxide"). For an agent the
 * model has a parameter for (electrode.halothane, electrode.nitrous_oxide,
 * ...) the value is that parameter's in the ruleset's settings, which the
 * statement `sensitivity AGENT = ...` sets; for another agent, what the
 * ruleset's `sensitivity` says. Returns false and {0, 0, 0} when there is
 * neither.
 */
bool sx_ruleset_agent_sensitivity(const sx_ruleset *rs, const char *agent, sx_range *out);

/* What a ruleset holds, for `syrinx rules` and audits. */
typedef struct sx_ruleset_stats {
	size_t files;
	size_t rules, rules_before_model, rules_after_model;
	size_t limits, reasons, patterns, agents, codes, settings;
} sx_ruleset_stats;
void sx_ruleset_stats_get(const sx_ruleset *rs, sx_ruleset_stats *out);

/* Rule i in evaluation order (i < stats.rules): its name, pass and
 * file:line. Returns false past the end. */
bool sx_ruleset_rule_at(const sx_ruleset *rs, size_t i, const char **name, sx_rule_pass *pass,
			const char **ref);

/*
 * For showing a diagnostic under its source line (the library never prints):
 * the text of line `line` of a file without its line end, sx_malloc'd (the
 * caller frees it with sx_free), or NULL when it cannot be read; and the
 * caret line for a column: a space for every character before it (a tab
 * where the source has a tab, so the caret lines up), then '^'.
 */
char *sx_ruleset_source_line(const char *file, unsigned line);
void sx_ruleset_caret_line(const char *line_text, unsigned column, char *buf, size_t size);

#endif
