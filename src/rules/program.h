/* SPDX-License-Identifier: MIT */
/*
 * program.h - a compiled ruleset: the form that is evaluated per specimen.
 *
 * Nothing here is text to be read again: fields and facts are indices, units
 * were converted to the internal ones, choices and agent names are bit masks,
 * regular expressions are compiled (JIT), message templates are pieces of
 * literal text and references. Conditions are small trees in one array of
 * nodes, children by index. Rules are in evaluation order, each with its
 * pass decided.
 *
 * Ownership: struct sx_ruleset owns its arena (everything below lives in it),
 * its PCRE2 context and its compiled patterns; sx_ruleset_free releases all.
 */
#ifndef SX_RULES_PROGRAM_H
#define SX_RULES_PROGRAM_H

#include <stdbool.h>
#include <stdint.h>

#include "rules/ast.h"
#include "rules/regex.h"
#include "rules/ruleset.h"
#include "rules/source.h"

/* A value a rule can read: a field of the record or a fact. */
typedef enum sx_var_kind {
	SX_VAR_FIELD,
	SX_VAR_FACT,
} sx_var_kind;

typedef struct sx_var {
	uint8_t kind;              /* sx_var_kind */
	int16_t index;             /* sx_field or sx_fact */
} sx_var;

typedef enum sx_cnode_op {
	SX_CN_AND,
	SX_CN_OR,
	SX_CN_NOT,
	SX_CN_CMP,                 /* var cmp value */
	SX_CN_CMP_OF,              /* var cmp value x var2 */
	SX_CN_CHOICE_IN,           /* choice field's value in mask */
	SX_CN_AGENTS_IN,           /* one of the agents in mask (canonical indices) */
	SX_CN_PRESENT,
	SX_CN_MATCHES,             /* text field matches re */
} sx_cnode_op;

typedef struct sx_cnode {
	uint8_t op;                /* sx_cnode_op */
	uint8_t cmp;               /* sx_cmp without NE (compiled as NOT EQ) */
	sx_var var, var2;
	double value;              /* constant, or factor of var2 */
	uint64_t mask;
	int32_t a, b;              /* children */
	const sx_rules_regex *re;
} sx_cnode;

typedef enum sx_ref_kind {
	SX_REF_NONE = 0,           /* literal text only */
	SX_REF_FIELD,
	SX_REF_FACT,
	SX_REF_LIMIT,
	SX_REF_SETTING,
} sx_ref_kind;

typedef struct sx_tpiece {
	const char *text;          /* literal text before the reference */
	size_t len;
	uint8_t ref;               /* sx_ref_kind */
	int index;                 /* field, fact or limit */
	const sx_param_info *param;
	bool sign;                 /* {x:+} */
	int decimals;              /* {x:.1}; -1: as it comes */
} sx_tpiece;

typedef struct sx_template {
	sx_tpiece *pieces;
	size_t count;
	bool after_model;          /* reads a fact known only after the model */
} sx_template;

typedef struct sx_coverride {
	const sx_param_info *param;
	bool range;
	sx_range value;
} sx_coverride;

typedef struct sx_caction {
	sx_ast_action_kind kind;
	int mechanism;
	sx_coverride *overrides;
	size_t override_count;
	int reason;                /* index into reasons */
	const sx_template *message;
	char label[48];
	sx_range bias;
	int disposition;
	bool final;
} sx_caction;

typedef struct sx_crule {
	const char *name;
	char ref[SX_MAX_RULE_REF];
	sx_rule_pass pass;
	int32_t cond;              /* root node, -1: every specimen */
	sx_caction *actions;
	size_t action_count;
	const sx_rules_source *src; /* where it is: valid only while loading */
	size_t off;
} sx_crule;

typedef struct sx_creason {
	char code[48];
	sx_reason_severity severity;
	sx_template message;
	bool given;                /* some rule gives it */
	int layer;
	const sx_rules_source *src;
	size_t off;
} sx_creason;

typedef struct sx_climit {
	const char *name;
	double value;
	const char *unit;          /* NULL: bare */
	char shown[48];            /* as written, for messages: "30 min" */
	bool used;
	int layer;                 /* 0: the ruleset loaded; 1: its base ... */
	const sx_rules_source *src;
	size_t off;
} sx_climit;

typedef struct sx_cpattern {
	int target;                /* a choice field, or -1 for agents */
	int sources[4];
	size_t source_count;
	sx_rules_regex *re;
	int value;                 /* choice (index+1), or canonical agent index */
	char ref[SX_MAX_RULE_REF];
} sx_cpattern;

typedef struct sx_ccode {
	const char *system, *code;
	int field;
} sx_ccode;

typedef struct sx_cagent {
	const char *name;          /* canonical */
	bool has_sensitivity;
	sx_range sensitivity;
} sx_cagent;

struct sx_ruleset {
	sx_rules_arena arena;
	sx_rules_regex_context *rx;
	sx_rules_regex **regexes;  /* every compiled pattern, to free */
	size_t regex_count, regex_capacity;
	const char *version;
	sx_settings settings;
	const char **origins;      /* per parameter (sx_param_at order): "file:line" or NULL */
	sx_climit *limits;
	size_t limit_count;
	sx_creason *reasons;
	size_t reason_count;
	sx_cagent *agents;
	size_t agent_count;
	sx_cpattern *patterns;
	size_t pattern_count;
	sx_ccode *codes;
	size_t code_count;
	sx_crule *rules;
	size_t rule_count;
	size_t pass_count[2];
	sx_cnode *nodes;
	size_t node_count;
	unsigned file_count;
};

/* A ruleset layer as the loader found it: its folder and first file. */
typedef struct sx_rules_layer {
	const char *dir;
	const sx_rules_source *first;
	bool unreadable;           /* a file could not be read: say nothing of its version */
} sx_rules_layer;

/* Compile a whole program (loader.c gathered it). Returns NULL when out of
 * memory; errors go to r (the caller frees the ruleset when r->errors). */
sx_ruleset *sx_rules_compile(const sx_ast_program *prog, const sx_rules_layer *layers,
			     size_t layer_count, sx_rules_report *r);

/* The warnings that need the whole compiled ruleset (check.c): unreachable
 * rules, unused limits and reasons. */
void sx_rules_check(const sx_ruleset *rs, sx_rules_report *r);

/* Compile a message template ("analysed {delay} after collection"): references
 * to fields, facts, limits and settings are resolved; errors point into the
 * string. Returns false after reporting. */
bool sx_rules_template_compile(sx_ruleset *rs, sx_rules_report *r, const sx_ast_string *s,
			       sx_template *out);

/* Render a template for one specimen into buf (cut with "..." past size). */
void sx_rules_render(const sx_ruleset *rs, const sx_template *t, const sx_specimen *s,
		     const sx_facts *facts, const sx_settings *settings, char *buf, size_t size);

/* Quantity words for messages: "a pressure", "a duration", ... */
const char *sx_rules_quantity_name(sx_quantity q);
/* A few of the quantity's units, for messages: "min, s, h". */
const char *sx_rules_quantity_units(sx_quantity q);
/* The limit of that name, or -1. */
int sx_rules_limit_lookup(const sx_ruleset *rs, const char *name, size_t len);

#endif
