/* SPDX-License-Identifier: MIT */
/*
 * check.c - warnings that need the whole compiled ruleset.
 *
 * What is detected, exactly (docs/rules.md says the same):
 *
 * 1. A rule whose condition can never hold. The condition is rewritten with
 *    `not` pushed down to the tests and `and` spread over `or`, giving up to
 *    SX_RULES_MAX_ALTERNATIVES alternatives (past that nothing is said). An
 *    alternative cannot hold when, for one field or fact, its tests leave no
 *    value: bounds that do not overlap (delay < 10 min and delay > 20 min), a
 *    bound outside what is physically possible for the field (the record's
 *    range, such as spo2 > 100 %; for facts only bias_abs, bias_percent >= 0,
 *    heparin_fraction, halothane and saturation_from_po2 within 0..100 %),
 *    choices that exclude each other (storage == iced and storage == room,
 *    or `in { }`), or a value required
 *    both present and absent. The rule never applies when no alternative can
 *    hold. Tests of text (matches), agents and comparisons of two values
 *    (x > 7.5 % of y) only require their values to be present.
 * 2. A rule that comes after a rule without `if` that sets a final
 *    disposition: rules run before-model pass first, then after-model, each
 *    in load order, and a final disposition ends the evaluation.
 * 3. A limit that no condition or message reads; a reason code that no rule
 *    gives (both only for the ruleset loaded, not its base).
 */
#include <math.h>
#include <string.h>

#include "rules/bounds.h"
#include "rules/program.h"

enum { L_PRESENT, L_ABSENT, L_LO, L_HI, L_MASK, L_OPAQUE };

#define MAX_LITS 16

typedef struct lit {
	int var;
	int kind;
	bool strict;
	double v;
	uint64_t mask;
} lit;

typedef struct conj {
	size_t n;
	lit l[MAX_LITS];
} conj;

typedef struct dnf {
	conj *c;
	size_t n;
} dnf;

typedef struct analysis {
	const sx_ruleset *rs;
	sx_rules_arena *scratch;
	bool unknown;              /* too large to expand: say nothing */
} analysis;

static int var_id(sx_var v)
{
	return v.kind == SX_VAR_FIELD ? v.index : SX_FIELD_COUNT + v.index;
}

static dnf make(analysis *an, size_t n)
{
	dnf d = {NULL, 0};
	if (n > SX_RULES_MAX_ALTERNATIVES) {
		an->unknown = true;
		return d;
	}
	d.c = sx_rules_arena_alloc(an->scratch, (n ? n : 1) * sizeof *d.c);
	if (!d.c)
		an->unknown = true;
	else
		d.n = n;
	return d;
}

/* One alternative with the given literals (0, 1 or 2 of them). */
static dnf single(analysis *an, const lit *a, const lit *b)
{
	dnf d = make(an, 1);
	if (!d.c)
		return d;
	if (a)
		d.c[0].l[d.c[0].n++] = *a;
	if (b)
		d.c[0].l[d.c[0].n++] = *b;
	return d;
}

static dnf concat(analysis *an, dnf a, dnf b)
{
	dnf d = {NULL, 0};
	if (an->unknown)
		return d;
	d = make(an, a.n + b.n);
	if (!d.c)
		return d;
	memcpy(d.c, a.c, a.n * sizeof *a.c);
	memcpy(d.c + a.n, b.c, b.n * sizeof *b.c);
	return d;
}

static dnf cross(analysis *an, dnf a, dnf b)
{
	dnf d = {NULL, 0};
	size_t k = 0;
	if (an->unknown)
		return d;
	d = make(an, a.n * b.n);
	if (!d.c)
		return d;
	for (size_t i = 0; i < a.n; i++)
		for (size_t j = 0; j < b.n; j++, k++) {
			if (a.c[i].n + b.c[j].n > MAX_LITS) {
				an->unknown = true;
				d.n = 0;
				return d;
			}
			d.c[k] = a.c[i];
			memcpy(d.c[k].l + d.c[k].n, b.c[j].l, b.c[j].n * sizeof *b.c[j].l);
			d.c[k].n += b.c[j].n;
		}
	return d;
}

static lit mk(int var, int kind, double v, bool strict, uint64_t mask)
{
	lit l = {var, kind, strict, v, mask};
	return l;
}

static uint64_t valid_choices(int var)
{
	uint64_t m = 0;
	if (var >= SX_FIELD_COUNT)
		return 0;
	for (int i = 1; i < 64 && sx_field_choice_name((sx_field)var, i); i++)
		m |= 1ull << i;
	return m;
}

static dnf expand(analysis *an, int32_t at, bool neg)
{
	const sx_cnode *n = &an->rs->nodes[at];
	int v = var_id(n->var);
	lit a, b;
	dnf none = {NULL, 0};

	if (an->unknown)
		return none;
	switch ((sx_cnode_op)n->op) {
	case SX_CN_AND:
	case SX_CN_OR: {
		dnf x = expand(an, n->a, neg), y;
		if (an->unknown)
			return none;
		y = expand(an, n->b, neg);
		if (an->unknown)
			return none;
		return (n->op == SX_CN_AND) != neg ? cross(an, x, y) : concat(an, x, y);
	}
	case SX_CN_NOT:
		return expand(an, n->a, !neg);
	case SX_CN_PRESENT:
		a = mk(v, neg ? L_ABSENT : L_PRESENT, 0, false, 0);
		return single(an, &a, NULL);
	case SX_CN_CMP: {
		sx_cmp cmp = (sx_cmp)n->cmp;
		if (!neg) {
			switch (cmp) {
			case SX_CMP_LT:
			case SX_CMP_LE:
				a = mk(v, L_HI, n->value, cmp == SX_CMP_LT, 0);
				return single(an, &a, NULL);
			case SX_CMP_GT:
			case SX_CMP_GE:
				a = mk(v, L_LO, n->value, cmp == SX_CMP_GT, 0);
				return single(an, &a, NULL);
			default:
				a = mk(v, L_LO, n->value, false, 0);
				b = mk(v, L_HI, n->value, false, 0);
				return single(an, &a, &b);
			}
		}
		a = mk(v, L_ABSENT, 0, false, 0);
		{
			dnf absent = single(an, &a, NULL), rest;
			switch (cmp) {
			case SX_CMP_LT:
			case SX_CMP_LE:
				b = mk(v, L_LO, n->value, cmp == SX_CMP_LE, 0);
				rest = single(an, &b, NULL);
				break;
			case SX_CMP_GT:
			case SX_CMP_GE:
				b = mk(v, L_HI, n->value, cmp == SX_CMP_GE, 0);
				rest = single(an, &b, NULL);
				break;
			default:
				b = mk(v, L_HI, n->value, true, 0);
				rest = single(an, &b, NULL);
				b = mk(v, L_LO, n->value, true, 0);
				rest = concat(an, rest, single(an, &b, NULL));
				break;
			}
			return concat(an, absent, rest);
		}
	}
	case SX_CN_CHOICE_IN:
		if (!neg) {
			a = mk(v, L_MASK, 0, false, n->mask);
			return single(an, &a, NULL);
		}
		a = mk(v, L_ABSENT, 0, false, 0);
		b = mk(v, L_MASK, 0, false, valid_choices(v) & ~n->mask);
		return concat(an, single(an, &a, NULL), single(an, &b, NULL));
	case SX_CN_CMP_OF:
		if (neg)
			return single(an, NULL, NULL);
		a = mk(v, L_OPAQUE, 0, false, 0);
		b = mk(var_id(n->var2), L_OPAQUE, 0, false, 0);
		return single(an, &a, &b);
	case SX_CN_AGENTS_IN:
	case SX_CN_MATCHES:
		if (neg)
			return single(an, NULL, NULL);
		a = mk(v, L_OPAQUE, 0, false, 0);
		return single(an, &a, NULL);
	}
	an->unknown = true;
	return none;
}

/* What is possible for a value before any test: the record's range for
 * numeric fields, and for the facts that are sizes or shares by definition. */
static void natural_range(int var, double *lo, double *hi)
{
	*lo = -INFINITY;
	*hi = INFINITY;
	if (var < SX_FIELD_COUNT) {
		const sx_field_info *info = sx_field_get((sx_field)var);
		if (info->kind == SX_KIND_NUMBER) {
			*lo = info->min;
			*hi = info->max;
		}
		return;
	}
	switch (var - SX_FIELD_COUNT) {
	case SX_FACT_BIAS_ABS_MMHG:
	case SX_FACT_BIAS_PERCENT:
		*lo = 0;
		break;
	case SX_FACT_HEPARIN_FRACTION:
	case SX_FACT_AGENT_HALOTHANE:
	case SX_FACT_SAT_FROM_PO2:
		*lo = 0;
		*hi = 100;
		break;
	default:
		break;
	}
}

/* The first value that no assignment satisfies in c, or -1. */
static int contradiction(const conj *c)
{
	for (size_t i = 0; i < c->n; i++) {
		int var = c->l[i].var;
		bool present = false, absent = false, masked = false;
		double lo, hi;
		bool lo_strict = false, hi_strict = false;
		uint64_t mask = valid_choices(var);
		bool seen_before = false;
		for (size_t k = 0; k < i; k++)
			if (c->l[k].var == var)
				seen_before = true;
		if (seen_before)
			continue;
		natural_range(var, &lo, &hi);
		for (size_t k = i; k < c->n; k++) {
			const lit *l = &c->l[k];
			if (l->var != var)
				continue;
			switch (l->kind) {
			case L_ABSENT:
				absent = true;
				break;
			case L_PRESENT:
			case L_OPAQUE:
				present = true;
				break;
			case L_LO:
				present = true;
				if (l->v > lo || (l->v == lo && l->strict)) {
					lo = l->v;
					lo_strict = l->strict;
				}
				break;
			case L_HI:
				present = true;
				if (l->v < hi || (l->v == hi && l->strict)) {
					hi = l->v;
					hi_strict = l->strict;
				}
				break;
			case L_MASK:
				present = true;
				masked = true;
				mask &= l->mask;
				break;
			}
		}
		if (present && absent)
			return var;
		if (present && (lo > hi || (lo == hi && (lo_strict || hi_strict))))
			return var;
		if (masked && mask == 0)
			return var;
	}
	return -1;
}

static const char *var_name(int var)
{
	return var < SX_FIELD_COUNT ? sx_field_get((sx_field)var)->name
				    : sx_fact_get((sx_fact)(var - SX_FIELD_COUNT))->name;
}

/* The value that makes the condition impossible, or -1 when it may hold. */
static int never_holds(const sx_ruleset *rs, int32_t root)
{
	sx_rules_arena scratch;
	analysis an = {rs, &scratch, false};
	int first = -1;
	dnf d;
	sx_rules_arena_init(&scratch);
	d = expand(&an, root, false);
	if (!an.unknown) {
		for (size_t i = 0; i < d.n; i++) {
			int var = contradiction(&d.c[i]);
			if (var < 0) {
				first = -1;
				break;
			}
			if (first < 0)
				first = var;
		}
	}
	sx_rules_arena_free(&scratch);
	return an.unknown ? -1 : first;
}

static bool sets_final(const sx_crule *r)
{
	for (size_t i = 0; i < r->action_count; i++)
		if (r->actions[i].kind == SX_AA_DISPOSITION && r->actions[i].final)
			return true;
	return false;
}

void sx_rules_check(const sx_ruleset *rs, sx_rules_report *r)
{
	const sx_crule *stopper = NULL;
	for (int pass = 0; pass < 2; pass++) {
		for (size_t i = 0; i < rs->rule_count; i++) {
			const sx_crule *cr = &rs->rules[i];
			int var;
			if ((int)cr->pass != pass)
				continue;
			if (stopper) {
				sx_rules_warning(r, cr->src, cr->off,
						 "rule '%s' is never reached: rule '%s' at %s gives "
						 "every specimen a final disposition",
						 cr->name, stopper->name, stopper->ref);
				continue;
			}
			if (cr->cond >= 0 && (var = never_holds(rs, cr->cond)) >= 0)
				sx_rules_warning(r, cr->src, cr->off,
						 "rule '%s' never applies: its condition cannot hold "
						 "(no value of %s meets it)",
						 cr->name, var_name(var));
			if (cr->cond < 0 && sets_final(cr))
				stopper = cr;
		}
	}
	/* unused: only what the ruleset being loaded defines (a base's limit that a
	 * site leaves unused is the site's choice, not a slip) */
	for (size_t i = 0; i < rs->limit_count; i++)
		if (!rs->limits[i].used && rs->limits[i].layer == 0)
			sx_rules_warning(r, rs->limits[i].src, rs->limits[i].off,
					 "unused limit '%s': no condition or message reads it",
					 rs->limits[i].name);
	for (size_t i = 0; i < rs->reason_count; i++)
		if (!rs->reasons[i].given && rs->reasons[i].layer == 0)
			sx_rules_warning(r, rs->reasons[i].src, rs->reasons[i].off,
					 "reason code '%s' is defined but no rule gives it",
					 rs->reasons[i].code);
}
