/* SPDX-License-Identifier: MIT */
/*
 * parser.c - recursive descent over the rule language (docs/rules.md has the
 * grammar in EBNF; the functions below follow it production by production).
 *
 * Error recovery: a statement with an error is reported once and skipped up to
 * the next word that starts a statement; inside a rule, up to the next action
 * or `end`. After SX_RULES_MAX_ERRORS errors the rest of the file is not read.
 */
#include "rules/parser.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "core/limits.h"
#include "core/record.h"
#include "model/facts.h"
#include "rules/bounds.h"
#include "rules/lexer.h"

typedef struct parser {
	const sx_rules_parse_env *env;
	const sx_rules_source *src;
	sx_ast_program *prog;
	sx_lexer lx;
	sx_token cur;
	int depth;           /* include depth */
	size_t errors;       /* in this file */
	bool gave_up;
	int nesting;         /* inside a condition */
	size_t nodes;        /* of the condition being read */
} parser;

static const char *const statement_words[] = {
	"version", "base", "include", "set", "limit", "sensitivity", "reason",
	"classify", "codes", "rule", "replace", "drop", NULL,
};
static const char *const action_words[] = {"apply", "reason", "bias", "disposition", NULL};

/* ---- tokens ------------------------------------------------------------------ */

static void advance(parser *p)
{
	p->cur = sx_lex_next(&p->lx);
}

static bool is_word(const parser *p, const sx_token *t, const char *w)
{
	size_t n = strlen(w);
	return t->kind == TK_NAME && t->len == n && memcmp(p->lx.text + t->off, w, n) == 0;
}

static bool at_word(const parser *p, const char *w)
{
	return is_word(p, &p->cur, w);
}

static bool at_any(const parser *p, const char *const *words)
{
	for (size_t i = 0; words[i]; i++)
		if (at_word(p, words[i]))
			return true;
	return false;
}

static sx_ast_pos here(const parser *p, size_t off)
{
	sx_ast_pos pos = {p->src, off};
	return pos;
}

static void error_at(parser *p, size_t off, const char *fmt, ...)
	__attribute__((format(printf, 3, 4)));

static void error_at(parser *p, size_t off, const char *fmt, ...)
{
	char msg[SX_MAX_DIAG_MESSAGE];
	va_list ap;
	if (p->gave_up)
		return;
	va_start(ap, fmt);
	vsnprintf(msg, sizeof msg, fmt, ap);
	va_end(ap);
	p->errors++;
	if (p->errors > SX_RULES_MAX_ERRORS) {
		sx_rules_error(p->env->report, p->src, off, SX_ELIMIT,
			       "more than %d errors in this file; the rest of it is not read",
			       SX_RULES_MAX_ERRORS);
		p->gave_up = true;
		return;
	}
	sx_rules_error(p->env->report, p->src, off, SX_ESYNTAX, "%s", msg);
}

/* "expected X, found Y" at the current token (or the lexer's own complaint). */
static void expected(parser *p, const char *what)
{
	char found[64];
	if (p->cur.kind == TK_ERROR) {
		if (strcmp(p->cur.error, "unexpected character") == 0)
			error_at(p, p->cur.error_off, "unexpected character '%.*s'",
				 (int)p->cur.len, p->lx.text + p->cur.off);
		else
			error_at(p, p->cur.error_off, "%s", p->cur.error);
		return;
	}
	sx_lex_describe(&p->lx, &p->cur, found, sizeof found);
	error_at(p, p->cur.off, "expected %s, found %s", what, found);
}

static bool accept(parser *p, sx_tok_kind k)
{
	if (p->cur.kind != k)
		return false;
	advance(p);
	return true;
}

static bool expect(parser *p, sx_tok_kind k, const char *what)
{
	if (accept(p, k))
		return true;
	expected(p, what);
	return false;
}

static bool expect_word(parser *p, const char *w)
{
	char what[48];
	if (at_word(p, w)) {
		advance(p);
		return true;
	}
	snprintf(what, sizeof what, "'%s'", w);
	expected(p, what);
	return false;
}

static bool take_name(parser *p, sx_ast_name *n, const char *what)
{
	if (p->cur.kind != TK_NAME || sx_lex_is_keyword(p->lx.text + p->cur.off, p->cur.len)) {
		expected(p, what);
		return false;
	}
	if (p->cur.len > SX_RULES_MAX_NAME) {
		error_at(p, p->cur.off, "name longer than %d bytes", SX_RULES_MAX_NAME);
		return false;
	}
	n->text = sx_rules_arena_strndup(p->env->arena, p->lx.text + p->cur.off, p->cur.len);
	n->len = p->cur.len;
	n->pos = here(p, p->cur.off);
	advance(p);
	return n->text != NULL;
}

/* A string token into s (escapes resolved). */
static bool take_string(parser *p, sx_ast_string *s, const char *what)
{
	const char *raw;
	char *out;
	size_t o = 0;
	if (p->cur.kind != TK_STRING) {
		expected(p, what);
		return false;
	}
	if (p->cur.inner_len > SX_RULES_MAX_STRING) {
		error_at(p, p->cur.off, "string longer than %d bytes", SX_RULES_MAX_STRING);
		return false;
	}
	raw = p->lx.text + p->cur.inner_off;
	out = sx_rules_arena_alloc(p->env->arena, p->cur.inner_len + 1);
	if (!out)
		return false;
	for (size_t i = 0; i < p->cur.inner_len; i++) {
		if (raw[i] == '\\' && i + 1 < p->cur.inner_len)
			i++;
		out[o++] = raw[i];
	}
	s->text = out;
	s->len = o;
	s->pos = here(p, p->cur.off);
	s->raw_off = p->cur.inner_off;
	s->raw_len = p->cur.inner_len;
	advance(p);
	return true;
}

/* A code system or a code: a string, or a word of letters, digits and
 * _ . - ^ (it may start with a digit: 99SBR, 2703-7), kept as a string. */
static bool take_key(parser *p, sx_ast_string *s, const char *what)
{
	const char *t = p->lx.text;
	size_t start = p->cur.off, end = start;
	if (p->cur.kind == TK_STRING)
		return take_string(p, s, what);
	while (end < p->lx.len) {
		char c = t[end];
		bool word = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') ||
			    (c >= '0' && c <= '9') || c == '_' || c == '.' || c == '^' || c == '-';
		if (!word || (c == '-' && end + 1 < p->lx.len && t[end + 1] == '>'))
			break;
		end++;
	}
	if (end == start || p->cur.kind == TK_EOF) {
		expected(p, what);
		return false;
	}
	if (end - start > SX_RULES_MAX_NAME) {
		error_at(p, start, "code longer than %d bytes", SX_RULES_MAX_NAME);
		return false;
	}
	s->text = sx_rules_arena_strndup(p->env->arena, t + start, end - start);
	s->len = end - start;
	s->pos = here(p, start);
	s->raw_off = start;
	s->raw_len = end - start;
	p->lx.pos = end;
	advance(p);
	return s->text != NULL;
}

static bool take_regex(parser *p, sx_ast_regex *re)
{
	if (p->cur.kind != TK_SLASH) {
		expected(p, "a regular expression /.../");
		return false;
	}
	p->cur = sx_lex_regex(&p->lx, p->cur.off);
	if (p->cur.kind == TK_ERROR) {
		expected(p, "a regular expression");
		advance(p);
		return false;
	}
	if (p->cur.inner_len > SX_RULES_MAX_REGEX) {
		error_at(p, p->cur.off, "regular expression longer than %d bytes",
			 SX_RULES_MAX_REGEX);
		advance(p);
		return false;
	}
	re->pos = here(p, p->cur.off);
	re->pattern_off = p->cur.inner_off;
	re->pattern_len = p->cur.inner_len;
	re->flags = p->cur.flags;
	advance(p);
	return true;
}

/* The current token is a number: take it and a unit written after it. */
static bool take_qty(parser *p, sx_ast_qty *q, const char *what)
{
	size_t uoff, ulen, end;
	if (p->cur.kind != TK_NUMBER) {
		expected(p, what);
		return false;
	}
	q->value = p->cur.number;
	q->pos = here(p, p->cur.off);
	q->num_len = p->cur.len;
	q->unit = NULL;
	end = p->cur.off + p->cur.len;
	if (sx_lex_unit(&p->lx, end, &uoff, &ulen)) {
		if (ulen > 32) {
			error_at(p, uoff, "unit longer than 32 bytes");
			return false;
		}
		q->unit = sx_rules_arena_strndup(p->env->arena, p->lx.text + uoff, ulen);
		q->unit_pos = here(p, uoff);
		p->lx.pos = uoff + ulen;
	}
	advance(p);
	return true;
}

/* ---- recovery ------------------------------------------------------------------ */

static void sync_statement(parser *p)
{
	while (p->cur.kind != TK_EOF && !at_any(p, statement_words)) {
		if (p->cur.kind == TK_SLASH)
			p->cur = sx_lex_regex(&p->lx, p->cur.off); /* skip a pattern whole */
		advance(p);
	}
}

/* Inside a rule: to the next action, `end`, or a statement word. */
static void sync_action(parser *p)
{
	while (p->cur.kind != TK_EOF && !at_any(p, action_words) && !at_word(p, "end") &&
	       !at_any(p, statement_words)) {
		if (p->cur.kind == TK_SLASH)
			p->cur = sx_lex_regex(&p->lx, p->cur.off);
		advance(p);
	}
}

/* Inside a classify or codes block: to the next line's entry or `end`. */
static void sync_entry(parser *p, size_t line_of)
{
	unsigned l0, c0, l, c;
	sx_rules_position(p->src, line_of, &l0, &c0);
	while (p->cur.kind != TK_EOF && !at_word(p, "end") && !at_any(p, statement_words)) {
		sx_rules_position(p->src, p->cur.off, &l, &c);
		if (l > l0)
			return;
		if (p->cur.kind == TK_SLASH)
			p->cur = sx_lex_regex(&p->lx, p->cur.off);
		advance(p);
	}
}

/* ---- values ---------------------------------------------------------------------- */

static void borrow_units(sx_ast_qty *const *q, size_t n)
{
	for (size_t i = 0; i < n; i++) {
		if (q[i]->unit)
			continue;
		for (size_t j = i + 1; j < n && !q[i]->unit; j++)
			if (q[j]->unit) {
				q[i]->unit = q[j]->unit;
				q[i]->unit_pos = q[j]->unit_pos;
			}
		for (size_t j = i; j-- > 0 && !q[i]->unit;)
			if (q[j]->unit) {
				q[i]->unit = q[j]->unit;
				q[i]->unit_pos = q[j]->unit_pos;
			}
	}
}

/* value = offset | quantity [ "(" quantity "to" quantity ")" ] */
static bool parse_value(parser *p, sx_ast_value *v)
{
	v->pos = here(p, p->cur.off);
	if (p->cur.kind == TK_OFFSET) {
		v->kind = SX_AV_OFFSET;
		v->offset_min = p->cur.offset_min;
		advance(p);
		return true;
	}
	if (!take_qty(p, &v->nominal, "a number"))
		return false;
	v->kind = SX_AV_QTY;
	if (accept(p, TK_LPAREN)) {
		sx_ast_qty *all[3] = {&v->nominal, &v->low, &v->high};
		if (!take_qty(p, &v->low, "the low end of a range (a number)") ||
		    !expect_word(p, "to") || !take_qty(p, &v->high, "the high end of a range") ||
		    !expect(p, TK_RPAREN, "')' closing the range"))
			return false;
		v->kind = SX_AV_RANGE;
		borrow_units(all, 3);
	}
	return true;
}

/* ---- conditions ------------------------------------------------------------------- */

/* A name that can be tested: not a word of the language, except a field or
 * fact that happens to be one (the fact `bias`). */
static bool at_value_name(const parser *p)
{
	const char *t = p->lx.text + p->cur.off;
	return p->cur.kind == TK_NAME &&
	       (!sx_lex_is_keyword(t, p->cur.len) || sx_fact_lookup(t, p->cur.len) >= 0 ||
		sx_field_lookup(t, p->cur.len) >= 0);
}

/* take_name for such a name. */
static bool take_value_name(parser *p, sx_ast_name *n, const char *what)
{
	if (!at_value_name(p)) {
		expected(p, what);
		return false;
	}
	if (p->cur.len > SX_RULES_MAX_NAME) {
		error_at(p, p->cur.off, "name longer than %d bytes", SX_RULES_MAX_NAME);
		return false;
	}
	n->text = sx_rules_arena_strndup(p->env->arena, p->lx.text + p->cur.off, p->cur.len);
	n->len = p->cur.len;
	n->pos = here(p, p->cur.off);
	advance(p);
	return n->text != NULL;
}

static sx_ast_expr *parse_or(parser *p);

static sx_ast_expr *new_expr(parser *p, sx_ast_expr_kind k, size_t off)
{
	sx_ast_expr *e;
	if (++p->nodes > SX_RULES_MAX_NODES) {
		if (p->nodes == SX_RULES_MAX_NODES + 1)
			error_at(p, off, "condition with more than %d tests and operators",
				 SX_RULES_MAX_NODES);
		return NULL;
	}
	e = sx_rules_arena_alloc(p->env->arena, sizeof *e);
	if (e) {
		e->kind = k;
		e->pos = here(p, off);
	}
	return e;
}

static bool parse_operand(parser *p, sx_ast_operand *o)
{
	o->pos = here(p, p->cur.off);
	if (p->cur.kind == TK_NUMBER) {
		if (!take_qty(p, &o->qty, "a number"))
			return false;
		if (p->cur.kind == TK_STAR) {
			if (o->qty.unit) {
				error_at(p, o->qty.unit_pos.off,
					 "a factor before '*' is a bare number, without a unit");
				return false;
			}
			advance(p);
			o->kind = SX_OPD_SCALED;
			return take_name(p, &o->name, "a limit after '*'");
		}
		if (at_word(p, "of")) {
			advance(p);
			o->kind = SX_OPD_OF;
			return take_value_name(p, &o->of, "a field or fact after 'of'");
		}
		o->kind = SX_OPD_QTY;
		return true;
	}
	if (at_value_name(p)) {
		if (!take_value_name(p, &o->name, "a name"))
			return false;
		if (p->cur.kind == TK_STAR) {
			advance(p);
			o->kind = SX_OPD_SCALED;
			o->factor_is_limit = true;
			o->factor = o->name;
			return take_name(p, &o->name, "a limit after '*'");
		}
		if (at_word(p, "of")) {
			advance(p);
			o->kind = SX_OPD_OF;
			o->fraction_is_limit = true;
			return take_value_name(p, &o->of, "a field or fact after 'of'");
		}
		o->kind = SX_OPD_NAME;
		return true;
	}
	expected(p, "a number with its unit, a limit or a choice");
	return false;
}

static bool parse_set(parser *p, sx_ast_expr *e)
{
	sx_ast_name members[SX_RULES_MAX_SET];
	size_t n = 0;
	if (!expect(p, TK_LBRACE, "'{' starting a set"))
		return false;
	if (p->cur.kind != TK_RBRACE) {
		do {
			if (n == SX_RULES_MAX_SET) {
				error_at(p, p->cur.off, "set with more than %d members",
					 SX_RULES_MAX_SET);
				return false;
			}
			if (!take_name(p, &members[n], "a choice"))
				return false;
			n++;
		} while (accept(p, TK_COMMA));
	}
	if (!expect(p, TK_RBRACE, "',' or '}' closing the set"))
		return false;
	e->set = sx_rules_arena_alloc(p->env->arena, (n ? n : 1) * sizeof *e->set);
	if (!e->set)
		return false;
	memcpy(e->set, members, n * sizeof *members);
	e->set_count = n;
	return true;
}

/* test = name ( "is" ("present"|"absent") | ["not"] "in" set | "matches" regex
 *             | cmp operand ) */
static sx_ast_expr *parse_test(parser *p)
{
	sx_ast_expr *e = new_expr(p, SX_AE_CMP, p->cur.off);
	if (!e)
		return NULL;
	if (!take_value_name(p, &e->subject, "a field or fact to test"))
		return NULL;
	if (at_word(p, "is")) {
		advance(p);
		e->kind = SX_AE_IS;
		if (at_word(p, "present")) {
			advance(p);
		} else if (at_word(p, "absent")) {
			e->negated = true;
			advance(p);
		} else {
			expected(p, "'present' or 'absent' after 'is'");
			return NULL;
		}
		return e;
	}
	if (at_word(p, "not")) {
		advance(p);
		if (!at_word(p, "in")) {
			expected(p, "'in' after 'not'");
			return NULL;
		}
		e->negated = true;
	}
	if (at_word(p, "in")) {
		e->op_pos = here(p, p->cur.off);
		advance(p);
		e->kind = SX_AE_IN;
		return parse_set(p, e) ? e : NULL;
	}
	if (at_word(p, "matches")) {
		advance(p);
		e->kind = SX_AE_MATCHES;
		return take_regex(p, &e->regex) ? e : NULL;
	}
	e->op_pos = here(p, p->cur.off);
	switch (p->cur.kind) {
	case TK_LT:
		e->cmp = SX_CMP_LT;
		break;
	case TK_LE:
		e->cmp = SX_CMP_LE;
		break;
	case TK_GT:
		e->cmp = SX_CMP_GT;
		break;
	case TK_GE:
		e->cmp = SX_CMP_GE;
		break;
	case TK_EQ:
		e->cmp = SX_CMP_EQ;
		break;
	case TK_NE:
		e->cmp = SX_CMP_NE;
		break;
	case TK_ASSIGN:
		error_at(p, p->cur.off, "'=' sets a value; write '==' to compare");
		return NULL;
	default: {
		char what[160];
		snprintf(what, sizeof what,
			 "a comparison (<, <=, >, >=, ==, !=), 'in', 'is' or 'matches' after "
			 "'%s'",
			 e->subject.text);
		expected(p, what);
		return NULL;
	}
	}
	advance(p);
	return parse_operand(p, &e->rhs) ? e : NULL;
}

/* unary = "not" unary | "(" condition ")" | test */
static sx_ast_expr *parse_unary(parser *p)
{
	sx_ast_expr *e;
	if (++p->nesting > SX_RULES_MAX_NESTING) {
		error_at(p, p->cur.off, "condition nested more than %d deep",
			 SX_RULES_MAX_NESTING);
		p->nesting--;
		return NULL;
	}
	if (at_word(p, "not")) {
		e = new_expr(p, SX_AE_NOT, p->cur.off);
		advance(p);
		if (e && !(e->a = parse_unary(p)))
			e = NULL;
	} else if (p->cur.kind == TK_LPAREN) {
		size_t open = p->cur.off;
		advance(p);
		e = parse_or(p);
		if (e && p->cur.kind != TK_RPAREN) {
			char what[80];
			unsigned l, c;
			sx_rules_position(p->src, open, &l, &c);
			snprintf(what, sizeof what, "')' closing the '(' of line %u column %u", l, c);
			expected(p, what);
			e = NULL;
		} else if (e) {
			advance(p);
		}
	} else {
		e = parse_test(p);
	}
	p->nesting--;
	return e;
}

static sx_ast_expr *parse_and(parser *p)
{
	sx_ast_expr *left = parse_unary(p);
	while (left && at_word(p, "and")) {
		sx_ast_expr *e = new_expr(p, SX_AE_AND, p->cur.off);
		advance(p);
		if (!e)
			return NULL;
		e->a = left;
		if (!(e->b = parse_unary(p)))
			return NULL;
		left = e;
	}
	return left;
}

/* condition = conjunction { "or" conjunction } */
static sx_ast_expr *parse_or(parser *p)
{
	sx_ast_expr *left = parse_and(p);
	while (left && at_word(p, "or")) {
		sx_ast_expr *e = new_expr(p, SX_AE_OR, p->cur.off);
		advance(p);
		if (!e)
			return NULL;
		e->a = left;
		if (!(e->b = parse_and(p)))
			return NULL;
		left = e;
	}
	return left;
}

/* ---- rules ------------------------------------------------------------------------ */

static bool parse_override(parser *p, sx_ast_override *o)
{
	return take_name(p, &o->param, "a parameter (such as metabolism.q10)") &&
	       expect(p, TK_ASSIGN, "'=' after the parameter") && parse_value(p, &o->value);
}

static bool parse_action(parser *p, sx_ast_action *a)
{
	a->pos = here(p, p->cur.off);
	if (at_word(p, "apply")) {
		sx_ast_override ov[SX_RULES_MAX_OVERRIDES];
		size_t n = 0;
		a->kind = SX_AA_APPLY;
		advance(p);
		if (!take_name(p, &a->name, "a mechanism after 'apply'"))
			return false;
		if (at_word(p, "with")) {
			advance(p);
			do {
				if (n == SX_RULES_MAX_OVERRIDES) {
					error_at(p, p->cur.off,
						 "more than %d parameters in one apply",
						 SX_RULES_MAX_OVERRIDES);
					return false;
				}
				if (!parse_override(p, &ov[n]))
					return false;
				n++;
			} while (accept(p, TK_COMMA));
			a->overrides = sx_rules_arena_alloc(p->env->arena, n * sizeof *ov);
			if (!a->overrides)
				return false;
			memcpy(a->overrides, ov, n * sizeof *ov);
			a->override_count = n;
		}
		return true;
	}
	if (at_word(p, "reason")) {
		a->kind = SX_AA_REASON;
		advance(p);
		if (!take_name(p, &a->name, "a reason code after 'reason'"))
			return false;
		if (p->cur.kind == TK_STRING) {
			a->has_message = true;
			return take_string(p, &a->message, "a message");
		}
		return true;
	}
	if (at_word(p, "bias")) {
		a->kind = SX_AA_BIAS;
		advance(p);
		if (p->cur.kind == TK_STRING) {
			sx_ast_string s;
			if (!take_string(p, &s, "a label"))
				return false;
			a->name.text = s.text;
			a->name.len = s.len;
			a->name.pos = s.pos;
		} else if (!take_name(p, &a->name, "a label for the bias term")) {
			return false;
		}
		return parse_value(p, &a->bias);
	}
	if (at_word(p, "disposition")) {
		a->kind = SX_AA_DISPOSITION;
		advance(p);
		if (!take_name(p, &a->name, "accept, comment or reject"))
			return false;
		if (at_word(p, "final")) {
			a->final = true;
			a->final_pos = here(p, p->cur.off);
			advance(p);
		}
		return true;
	}
	expected(p, "an action (apply, reason, bias, disposition) or 'end'");
	return false;
}

/* rule = "rule" name [ "if" condition ] action { action } "end" */
static void parse_rule(parser *p, sx_ast_rule_mode mode)
{
	sx_ast_rule *r = sx_rules_arena_alloc(p->env->arena, sizeof *r);
	sx_ast_action acts[SX_RULES_MAX_ACTIONS];
	size_t n = 0;
	bool ok = true;

	if (!r)
		return;
	r->mode = mode;
	r->pos = here(p, p->cur.off);
	advance(p); /* rule, or replace */
	if (mode == SX_RULE_REPLACE && !expect_word(p, "rule")) {
		sync_statement(p);
		return;
	}
	if (!take_name(p, &r->name, "a rule name")) {
		sync_statement(p);
		return;
	}
	if (at_word(p, "if")) {
		r->if_pos = here(p, p->cur.off);
		advance(p);
		p->nesting = 0;
		p->nodes = 0;
		r->cond = parse_or(p);
		if (!r->cond) {
			ok = false;
			sync_action(p);
		}
	}
	for (;;) {
		if (at_word(p, "end")) {
			if (n == 0 && ok)
				error_at(p, p->cur.off, "rule '%s' has no action", r->name.text);
			advance(p);
			break;
		}
		if (p->cur.kind == TK_EOF || (at_any(p, statement_words) && !at_word(p, "reason"))) {
			unsigned l, c;
			sx_rules_position(p->src, r->pos.off, &l, &c);
			if (ok || p->cur.kind == TK_EOF)
				error_at(p, p->cur.off,
					 "expected 'end' closing rule '%s' of line %u before this",
					 r->name.text, l);
			ok = false;
			break;
		}
		if (n == SX_RULES_MAX_ACTIONS) {
			error_at(p, p->cur.off, "rule with more than %d actions",
				 SX_RULES_MAX_ACTIONS);
			ok = false;
			sync_statement(p);
			break;
		}
		memset(&acts[n], 0, sizeof acts[n]);
		if (parse_action(p, &acts[n])) {
			n++;
		} else {
			ok = false;
			sync_action(p);
		}
	}
	/* A rule with a syntax error is kept (marked broken) so that the compiler
	 * still checks what could be read of it; nothing is loaded anyway. */
	r->broken = !ok;
	r->actions = sx_rules_arena_alloc(p->env->arena, (n ? n : 1) * sizeof *acts);
	if (!r->actions)
		return;
	memcpy(r->actions, acts, n * sizeof *acts);
	r->action_count = n;
	SX_AST_LIST_ADD(p->prog->rules, r);
}

/* ---- other statements ------------------------------------------------------------- */

static void parse_version(parser *p)
{
	sx_ast_version *v = sx_rules_arena_alloc(p->env->arena, sizeof *v);
	if (!v)
		return;
	v->pos = here(p, p->cur.off);
	advance(p);
	if (!take_string(p, &v->text, "the version in quotes, such as \"default 1\"")) {
		sync_statement(p);
		return;
	}
	SX_AST_LIST_ADD(p->prog->versions, v);
}

static void parse_base(parser *p)
{
	sx_ast_base *b = sx_rules_arena_alloc(p->env->arena, sizeof *b);
	if (!b)
		return;
	b->pos = here(p, p->cur.off);
	advance(p);
	if (!take_string(p, &b->path, "the base ruleset's folder in quotes")) {
		sync_statement(p);
		return;
	}
	if (!p->env->include) {
		error_at(p, b->pos.off, "base is not allowed here (%s)", p->env->no_include_reason);
		return;
	}
	SX_AST_LIST_ADD(p->prog->bases, b);
}

static void parse_include(parser *p)
{
	sx_ast_string path;
	size_t at = p->cur.off;
	advance(p);
	if (!take_string(p, &path, "the file to include in quotes")) {
		sync_statement(p);
		return;
	}
	if (!p->env->include) {
		error_at(p, at, "include is not allowed here (%s)", p->env->no_include_reason);
		return;
	}
	if (p->depth + 1 > SX_RULES_MAX_INCLUDE_DEPTH) {
		error_at(p, at, "includes nested more than %d deep", SX_RULES_MAX_INCLUDE_DEPTH);
		return;
	}
	p->env->include(p->env->ctx, p->src, path.pos.off, path.text, path.len, p->prog,
			p->depth + 1);
}

static void parse_set_statement(parser *p)
{
	sx_ast_set *s = sx_rules_arena_alloc(p->env->arena, sizeof *s);
	if (!s)
		return;
	s->pos = here(p, p->cur.off);
	advance(p);
	if (!take_name(p, &s->param, "a setting (such as site.altitude)") ||
	    !expect(p, TK_ASSIGN, "'=' after the setting") || !parse_value(p, &s->value)) {
		sync_statement(p);
		return;
	}
	SX_AST_LIST_ADD(p->prog->sets, s);
}

static void parse_limit(parser *p)
{
	sx_ast_limit *l = sx_rules_arena_alloc(p->env->arena, sizeof *l);
	if (!l)
		return;
	l->pos = here(p, p->cur.off);
	advance(p);
	if (!take_name(p, &l->name, "the limit's name") ||
	    !expect(p, TK_ASSIGN, "'=' after the limit's name") ||
	    !take_qty(p, &l->qty, "a number with its unit, such as 30 min")) {
		sync_statement(p);
		return;
	}
	if (p->cur.kind == TK_LPAREN) {
		error_at(p, p->cur.off, "a limit is one value; ranges are for settings and bias");
		sync_statement(p);
		return;
	}
	SX_AST_LIST_ADD(p->prog->limits, l);
}

static void parse_sensitivity(parser *p)
{
	sx_ast_sensitivity *s = sx_rules_arena_alloc(p->env->arena, sizeof *s);
	if (!s)
		return;
	s->pos = here(p, p->cur.off);
	advance(p);
	if (!take_name(p, &s->agent, "an agent's canonical name") ||
	    !expect(p, TK_ASSIGN, "'=' after the agent") || !parse_value(p, &s->value)) {
		sync_statement(p);
		return;
	}
	SX_AST_LIST_ADD(p->prog->sensitivities, s);
}

static void parse_reason_def(parser *p)
{
	sx_ast_reason *r = sx_rules_arena_alloc(p->env->arena, sizeof *r);
	if (!r)
		return;
	r->pos = here(p, p->cur.off);
	advance(p);
	if (!take_name(p, &r->code, "a reason code (kebab-case)") ||
	    !take_name(p, &r->severity, "a severity: info, comment or reject") ||
	    !take_string(p, &r->message, "the message in quotes")) {
		sync_statement(p);
		return;
	}
	SX_AST_LIST_ADD(p->prog->reasons, r);
}

/* classify = "classify" target [ "from" name { "," name } ] { regex "->" name } "end" */
static void parse_classify(parser *p)
{
	sx_ast_name target, sources[SX_RULES_MAX_SOURCES];
	size_t nsrc = 0, start = p->cur.off;

	advance(p);
	if (!take_name(p, &target, "the field to fill (or agents)")) {
		sync_statement(p);
		return;
	}
	if (at_word(p, "from")) {
		advance(p);
		do {
			if (nsrc == SX_RULES_MAX_SOURCES) {
				error_at(p, p->cur.off, "more than %d text fields to read",
					 SX_RULES_MAX_SOURCES);
				sync_statement(p);
				return;
			}
			if (!take_name(p, &sources[nsrc], "a text field")) {
				sync_statement(p);
				return;
			}
			nsrc++;
		} while (accept(p, TK_COMMA));
	}
	for (;;) {
		sx_ast_pattern *pt;
		size_t entry = p->cur.off;
		if (at_word(p, "end")) {
			advance(p);
			return;
		}
		if (p->cur.kind == TK_EOF || at_any(p, statement_words)) {
			unsigned l, c;
			sx_rules_position(p->src, start, &l, &c);
			error_at(p, p->cur.off,
				 "expected 'end' closing the classify block of line %u before this", l);
			return;
		}
		pt = sx_rules_arena_alloc(p->env->arena, sizeof *pt);
		if (!pt)
			return;
		pt->target = target;
		memcpy(pt->sources, sources, nsrc * sizeof *sources);
		pt->source_count = nsrc;
		pt->pos = here(p, p->cur.off);
		if (!take_regex(p, &pt->regex) ||
		    !expect(p, TK_ARROW, "'->' after the regular expression") ||
		    !take_name(p, &pt->value, "the value it means")) {
			sync_entry(p, entry);
			continue;
		}
		SX_AST_LIST_ADD(p->prog->patterns, pt);
	}
}

/* codes = "codes" { key key "->" name } "end" */
static void parse_codes(parser *p)
{
	size_t start = p->cur.off;
	advance(p);
	for (;;) {
		sx_ast_code *c;
		size_t entry = p->cur.off;
		if (at_word(p, "end")) {
			advance(p);
			return;
		}
		if (p->cur.kind == TK_EOF || at_any(p, statement_words)) {
			unsigned l, col;
			sx_rules_position(p->src, start, &l, &col);
			error_at(p, p->cur.off,
				 "expected 'end' closing the codes block of line %u before this", l);
			return;
		}
		c = sx_rules_arena_alloc(p->env->arena, sizeof *c);
		if (!c)
			return;
		c->pos = here(p, p->cur.off);
		if (!take_key(p, &c->system, "a coding system (such as L or LN)") ||
		    !take_key(p, &c->code, "a code") ||
		    !expect(p, TK_ARROW, "'->' after the code") ||
		    !take_name(p, &c->field, "a data-dictionary field")) {
			sync_entry(p, entry);
			continue;
		}
		SX_AST_LIST_ADD(p->prog->codes, c);
	}
}

static void parse_drop(parser *p)
{
	sx_ast_drop *d = sx_rules_arena_alloc(p->env->arena, sizeof *d);
	if (!d)
		return;
	d->pos = here(p, p->cur.off);
	advance(p);
	if (!expect_word(p, "rule") || !take_name(p, &d->name, "the name of the rule to drop")) {
		sync_statement(p);
		return;
	}
	SX_AST_LIST_ADD(p->prog->drops, d);
}

static void parse_statement(parser *p)
{
	if (at_word(p, "version"))
		parse_version(p);
	else if (at_word(p, "base"))
		parse_base(p);
	else if (at_word(p, "include"))
		parse_include(p);
	else if (at_word(p, "set"))
		parse_set_statement(p);
	else if (at_word(p, "limit"))
		parse_limit(p);
	else if (at_word(p, "sensitivity"))
		parse_sensitivity(p);
	else if (at_word(p, "reason"))
		parse_reason_def(p);
	else if (at_word(p, "classify"))
		parse_classify(p);
	else if (at_word(p, "codes"))
		parse_codes(p);
	else if (at_word(p, "rule"))
		parse_rule(p, SX_RULE_NEW);
	else if (at_word(p, "replace"))
		parse_rule(p, SX_RULE_REPLACE);
	else if (at_word(p, "drop"))
		parse_drop(p);
	else {
		expected(p, "a statement (version, base, include, set, limit, sensitivity, "
			    "reason, classify, codes, rule, replace, drop)");
		advance(p);
		sync_statement(p);
	}
}

/* Bytes a rule file may not hold: NUL, and anything that is not UTF-8
 * (overlong forms and surrogates included). */
static bool check_bytes(parser *p)
{
	const unsigned char *s = (const unsigned char *)p->src->text;
	size_t n = p->src->len;
	for (size_t i = 0; i < n;) {
		unsigned c = s[i], lo = 0x80, hi = 0xBF;
		size_t k;
		if (c == 0) {
			error_at(p, i, "NUL byte in a rule file");
			return false;
		}
		if (c < 0x80) {
			i++;
			continue;
		}
		if (c >= 0xC2 && c <= 0xDF)
			k = 1;
		else if (c >= 0xE0 && c <= 0xEF)
			k = 2;
		else if (c >= 0xF0 && c <= 0xF4)
			k = 3;
		else
			k = 0;
		if (c == 0xE0)
			lo = 0xA0;
		else if (c == 0xED)
			hi = 0x9F;
		else if (c == 0xF0)
			lo = 0x90;
		else if (c == 0xF4)
			hi = 0x8F;
		for (size_t j = 1; k && j <= k; j++) {
			unsigned b = i + j < n ? s[i + j] : 0;
			if (j == 1 ? (b < lo || b > hi) : (b & 0xC0) != 0x80)
				k = 0;
		}
		if (k == 0) {
			error_at(p, i, "not UTF-8 text (byte 0x%02X)", c);
			return false;
		}
		i += k + 1;
	}
	return true;
}

bool sx_rules_parse(const sx_rules_parse_env *env, const sx_rules_source *src,
		    sx_ast_program *prog, int depth)
{
	parser p;
	memset(&p, 0, sizeof p);
	p.env = env;
	p.src = src;
	p.prog = prog;
	p.depth = depth;
	sx_lex_init(&p.lx, src->text, src->len);
	if (!check_bytes(&p))
		return false;
	/* a byte-order mark, as some editors write one */
	if (src->len >= 3 && memcmp(src->text, "\xEF\xBB\xBF", 3) == 0)
		p.lx.pos = 3;
	advance(&p);
	while (p.cur.kind != TK_EOF && !p.gave_up && !env->arena->failed)
		parse_statement(&p);
	return true;
}

void sx_ast_program_init(sx_ast_program *p)
{
	SX_AST_LIST_INIT(p->versions);
	SX_AST_LIST_INIT(p->bases);
	SX_AST_LIST_INIT(p->sets);
	SX_AST_LIST_INIT(p->limits);
	SX_AST_LIST_INIT(p->sensitivities);
	SX_AST_LIST_INIT(p->reasons);
	SX_AST_LIST_INIT(p->patterns);
	SX_AST_LIST_INIT(p->codes);
	SX_AST_LIST_INIT(p->rules);
	SX_AST_LIST_INIT(p->drops);
}

void sx_ast_program_splice(sx_ast_program *dst, sx_ast_program *src)
{
	SX_AST_LIST_SPLICE(dst->versions, src->versions);
	SX_AST_LIST_SPLICE(dst->bases, src->bases);
	SX_AST_LIST_SPLICE(dst->sets, src->sets);
	SX_AST_LIST_SPLICE(dst->limits, src->limits);
	SX_AST_LIST_SPLICE(dst->sensitivities, src->sensitivities);
	SX_AST_LIST_SPLICE(dst->reasons, src->reasons);
	SX_AST_LIST_SPLICE(dst->patterns, src->patterns);
	SX_AST_LIST_SPLICE(dst->codes, src->codes);
	SX_AST_LIST_SPLICE(dst->rules, src->rules);
	SX_AST_LIST_SPLICE(dst->drops, src->drops);
}
