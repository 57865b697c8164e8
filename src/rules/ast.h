/* SPDX-License-Identifier: MIT */
/*
 * ast.h - a ruleset as the parser reads it, before names are resolved.
 *
 * Everything lives in the loader's arena. Every element keeps the file and
 * byte offset it came from, so the compiler can point at it. The statements
 * of all files are gathered into one sx_ast_program, kind by kind, in load
 * order: the deepest base first, then each ruleset's files in name order,
 * an included file's statements at the place of its include.
 */
#ifndef SX_RULES_AST_H
#define SX_RULES_AST_H

#include <stdbool.h>
#include <stddef.h>

#include "rules/source.h"

typedef struct sx_ast_pos {
	const sx_rules_source *src;
	size_t off;
} sx_ast_pos;

typedef struct sx_ast_name {
	const char *text;          /* arena copy, NUL-terminated */
	size_t len;
	sx_ast_pos pos;
} sx_ast_name;

typedef struct sx_ast_string {
	const char *text;          /* decoded (escapes resolved) */
	size_t len;
	sx_ast_pos pos;            /* the opening quote */
	size_t raw_off, raw_len;   /* the bytes between the quotes */
} sx_ast_string;

/* A number with an optional unit: `30 min`, `8 kPa`, `0.075`. */
typedef struct sx_ast_qty {
	double value;
	sx_ast_pos pos;            /* the number */
	size_t num_len;
	const char *unit;          /* NULL: no unit written */
	sx_ast_pos unit_pos;
} sx_ast_qty;

typedef enum sx_ast_value_kind {
	SX_AV_QTY,                 /* 2.0 */
	SX_AV_RANGE,               /* 2.0 (1.9 to 3.0) */
	SX_AV_OFFSET,              /* +01:00 */
} sx_ast_value_kind;

typedef struct sx_ast_value {
	sx_ast_value_kind kind;
	sx_ast_qty nominal, low, high;
	int offset_min;
	sx_ast_pos pos;
} sx_ast_value;

typedef struct sx_ast_regex {
	sx_ast_pos pos;            /* the opening slash */
	size_t pattern_off, pattern_len;
	unsigned flags;
} sx_ast_regex;

/* ---- conditions ------------------------------------------------------------ */

typedef enum sx_ast_operand_kind {
	SX_OPD_QTY,                /* 30 min */
	SX_OPD_NAME,               /* a limit (numbers) or a choice (== on choices) */
	SX_OPD_SCALED,             /* 2 * allowable_error, reject_factor * allowable_error */
	SX_OPD_OF,                 /* 7.5 % of alveolar_po2, tolerance_fraction of alveolar_po2 */
} sx_ast_operand_kind;

typedef struct sx_ast_operand {
	sx_ast_operand_kind kind;
	sx_ast_qty qty;            /* QTY; the factor of SCALED; the fraction of OF */
	sx_ast_name name;          /* NAME; the limit of SCALED; OF: the fraction's limit */
	bool fraction_is_limit;    /* OF: the fraction is a limit name, not a number */
	bool factor_is_limit;      /* SCALED: the factor is a limit (factor), not qty */
	sx_ast_name factor;
	sx_ast_name of;            /* OF: the field or fact */
	sx_ast_pos pos;
} sx_ast_operand;

typedef enum sx_ast_expr_kind {
	SX_AE_AND,
	SX_AE_OR,
	SX_AE_NOT,
	SX_AE_CMP,                 /* subject op operand */
	SX_AE_IN,                  /* subject [not] in { ... } */
	SX_AE_IS,                  /* subject is present | absent */
	SX_AE_MATCHES,             /* subject matches /re/ */
} sx_ast_expr_kind;

typedef enum sx_cmp {
	SX_CMP_LT,
	SX_CMP_LE,
	SX_CMP_GT,
	SX_CMP_GE,
	SX_CMP_EQ,
	SX_CMP_NE,
} sx_cmp;

typedef struct sx_ast_expr {
	sx_ast_expr_kind kind;
	sx_ast_pos pos;
	struct sx_ast_expr *a, *b;  /* AND, OR: both; NOT: a */
	sx_ast_name subject;
	sx_cmp cmp;
	sx_ast_pos op_pos;
	sx_ast_operand rhs;
	bool negated;              /* IN: not in; IS: absent */
	sx_ast_name *set;          /* IN */
	size_t set_count;
	sx_ast_regex regex;        /* MATCHES */
} sx_ast_expr;

/* ---- actions and rules -------------------------------------------------------- */

typedef enum sx_ast_action_kind {
	SX_AA_APPLY,
	SX_AA_REASON,
	SX_AA_BIAS,
	SX_AA_DISPOSITION,
} sx_ast_action_kind;

typedef struct sx_ast_override {
	sx_ast_name param;
	sx_ast_value value;
} sx_ast_override;

typedef struct sx_ast_action {
	sx_ast_action_kind kind;
	sx_ast_pos pos;            /* the keyword */
	sx_ast_name name;          /* mechanism, reason code, bias label, disposition */
	sx_ast_override *overrides;
	size_t override_count;
	bool has_message;
	sx_ast_string message;
	sx_ast_value bias;
	bool final;
	sx_ast_pos final_pos;
} sx_ast_action;

typedef enum sx_ast_rule_mode {
	SX_RULE_NEW,
	SX_RULE_REPLACE,
} sx_ast_rule_mode;

typedef struct sx_ast_rule {
	struct sx_ast_rule *next;
	sx_ast_rule_mode mode;
	sx_ast_pos pos;            /* `rule` (or `replace`) */
	sx_ast_name name;
	sx_ast_expr *cond;         /* NULL: every specimen */
	sx_ast_pos if_pos;
	sx_ast_action *actions;
	size_t action_count;
	bool broken;               /* had a syntax error: checked, never loaded */
	bool dropped;              /* by a later `drop rule` */
	bool replaced;             /* by a later `replace rule` */
	struct sx_ast_rule *replacement;
} sx_ast_rule;

typedef struct sx_ast_drop {
	struct sx_ast_drop *next;
	sx_ast_pos pos;
	sx_ast_name name;
} sx_ast_drop;

/* ---- definitions ---------------------------------------------------------------- */

typedef struct sx_ast_set {
	struct sx_ast_set *next;
	sx_ast_pos pos;
	sx_ast_name param;
	sx_ast_value value;
} sx_ast_set;

typedef struct sx_ast_limit {
	struct sx_ast_limit *next;
	sx_ast_pos pos;
	sx_ast_name name;
	sx_ast_qty qty;
} sx_ast_limit;

typedef struct sx_ast_sensitivity {
	struct sx_ast_sensitivity *next;
	sx_ast_pos pos;
	sx_ast_name agent;
	sx_ast_value value;
} sx_ast_sensitivity;

typedef struct sx_ast_reason {
	struct sx_ast_reason *next;
	sx_ast_pos pos;
	sx_ast_name code;
	sx_ast_name severity;
	sx_ast_string message;
} sx_ast_reason;

typedef struct sx_ast_pattern {
	struct sx_ast_pattern *next;
	sx_ast_pos pos;            /* the regular expression */
	sx_ast_name target;        /* a choice field, or `agents` */
	sx_ast_name sources[4];    /* text fields read (none for agents) */
	size_t source_count;
	sx_ast_regex regex;
	sx_ast_name value;         /* a choice of target, or a canonical agent name */
} sx_ast_pattern;

typedef struct sx_ast_code {
	struct sx_ast_code *next;
	sx_ast_pos pos;
	sx_ast_string system, code; /* words are kept as strings too */
	sx_ast_name field;
} sx_ast_code;

typedef struct sx_ast_version {
	struct sx_ast_version *next;
	sx_ast_pos pos;
	sx_ast_string text;
} sx_ast_version;

typedef struct sx_ast_base {
	struct sx_ast_base *next;
	sx_ast_pos pos;
	sx_ast_string path;
} sx_ast_base;

#define SX_AST_LIST(type, name) \
	struct {                \
		type *head;     \
		type **tail;    \
		size_t count;   \
	} name

/* The statements of one ruleset layer, or of the whole program. */
typedef struct sx_ast_program {
	SX_AST_LIST(sx_ast_version, versions);
	SX_AST_LIST(sx_ast_base, bases);
	SX_AST_LIST(sx_ast_set, sets);
	SX_AST_LIST(sx_ast_limit, limits);
	SX_AST_LIST(sx_ast_sensitivity, sensitivities);
	SX_AST_LIST(sx_ast_reason, reasons);
	SX_AST_LIST(sx_ast_pattern, patterns);
	SX_AST_LIST(sx_ast_code, codes);
	SX_AST_LIST(sx_ast_rule, rules);
	SX_AST_LIST(sx_ast_drop, drops);
} sx_ast_program;

#define SX_AST_LIST_INIT(l) ((l).head = NULL, (l).tail = &(l).head, (l).count = 0)
#define SX_AST_LIST_ADD(l, item) (*(l).tail = (item), (l).tail = &(item)->next, (l).count++)
/* Append every item of src to dst (src is left empty). */
#define SX_AST_LIST_SPLICE(dst, src)                        \
	do {                                                \
		if ((src).head) {                           \
			*(dst).tail = (src).head;           \
			(dst).tail = (src).tail;            \
			(dst).count += (src).count;         \
		}                                           \
		SX_AST_LIST_INIT(src);                      \
	} while (0)

void sx_ast_program_init(sx_ast_program *p);
/* Append every statement of src to dst, kind by kind. */
void sx_ast_program_splice(sx_ast_program *dst, sx_ast_program *src);

#endif
