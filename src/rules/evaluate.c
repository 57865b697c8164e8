/* SPDX-License-Identifier: MIT */
/*
 * evaluate.c - running a compiled ruleset over one specimen: classifying its
 * free text, then the rules of a pass in order.
 *
 * Semantics (docs/rules.md): a test of a value the specimen lacks is false;
 * `not`, `!=` and `not in` are its negation, so they hold for a lacking value;
 * `is present` / `is absent` test presence itself. A reason of severity
 * comment or reject raises the disposition to that; `disposition X` raises it
 * to X (never lowers it); `final` also ends the evaluation: no later rule of
 * this pass or the next runs. Nothing here allocates except the PCRE2 match
 * data for classifying and for `matches` tests.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "rules/program.h"

typedef struct run {
	const sx_ruleset *rs;
	const sx_specimen *s;
	const sx_facts *facts;
	sx_rules_regex_scratch *scratch;
	uint64_t agent_mask;
	bool agent_mask_known;
	bool nomem;                /* match data could not be made */
} run;

static bool var_present(const run *x, sx_var v)
{
	if (v.kind == SX_VAR_FACT)
		return x->facts && x->facts->has[v.index];
	if (v.index == SX_F_AGENTS)
		return x->s->agent_count > 0;
	return x->s->present[v.index];
}

static double var_number(const run *x, sx_var v)
{
	return v.kind == SX_VAR_FACT ? x->facts->value[v.index] : x->s->number[v.index];
}

static bool compare(double a, sx_cmp cmp, double b)
{
	switch (cmp) {
	case SX_CMP_LT:
		return a < b;
	case SX_CMP_LE:
		return a <= b;
	case SX_CMP_GT:
		return a > b;
	case SX_CMP_GE:
		return a >= b;
	default:
		/* equal within a part in 10^9: values met unit conversions */
		return fabs(a - b) <= 1e-9 * fmax(1.0, fabs(b));
	}
}

static uint64_t agent_mask(run *x)
{
	if (!x->agent_mask_known) {
		x->agent_mask = 0;
		for (size_t i = 0; i < x->s->agent_count; i++)
			for (size_t a = 0; a < x->rs->agent_count; a++)
				if (strcmp(x->s->agents[i].name, x->rs->agents[a].name) == 0)
					x->agent_mask |= 1ull << a;
		x->agent_mask_known = true;
	}
	return x->agent_mask;
}

static bool test(run *x, int32_t at)
{
	const sx_cnode *n = &x->rs->nodes[at];
	switch ((sx_cnode_op)n->op) {
	case SX_CN_AND:
		return test(x, n->a) && test(x, n->b);
	case SX_CN_OR:
		return test(x, n->a) || test(x, n->b);
	case SX_CN_NOT:
		return !test(x, n->a);
	case SX_CN_PRESENT:
		return var_present(x, n->var);
	case SX_CN_CMP:
		return var_present(x, n->var) &&
		       compare(var_number(x, n->var), (sx_cmp)n->cmp, n->value);
	case SX_CN_CMP_OF:
		return var_present(x, n->var) && var_present(x, n->var2) &&
		       compare(var_number(x, n->var), (sx_cmp)n->cmp,
			       n->value * var_number(x, n->var2));
	case SX_CN_CHOICE_IN:
		return x->s->present[n->var.index] &&
		       x->s->choice[n->var.index] > 0 && x->s->choice[n->var.index] < 64 &&
		       (n->mask >> x->s->choice[n->var.index]) & 1;
	case SX_CN_AGENTS_IN:
		return (agent_mask(x) & n->mask) != 0;
	case SX_CN_MATCHES: {
		const char *t = x->s->text[n->var.index];
		if (!x->s->present[n->var.index] || !t)
			return false;
		if (!x->scratch)
			x->scratch = sx_rules_regex_scratch_new(x->rs->rx);
		if (!x->scratch) {
			x->nomem = true;
			return false;
		}
		return sx_rules_regex_match(x->rs->rx, n->re, x->scratch, t, strlen(t));
	}
	}
	return false;
}

static void raise_to(sx_rule_outcome *o, int d, const char *ref)
{
	if (d > o->disposition) {
		o->disposition = d;
		snprintf(o->disposition_rule, sizeof o->disposition_rule, "%s", ref);
	}
}

static void act(run *x, const sx_crule *r, const sx_caction *a, sx_rule_outcome *o)
{
	switch (a->kind) {
	case SX_AA_APPLY:
		if (!o->mechanism_on[a->mechanism]) {
			o->mechanism_on[a->mechanism] = true;
			snprintf(o->mechanism_rule[a->mechanism], sizeof o->mechanism_rule[0], "%s",
				 r->ref);
		}
		for (size_t i = 0; i < a->override_count; i++) {
			const sx_coverride *ov = &a->overrides[i];
			/* checked when compiled: cannot fail */
			if (ov->range)
				sx_param_set_range(&o->settings, ov->param, ov->value);
			else
				sx_param_set(&o->settings, ov->param, ov->value.nominal);
		}
		return;
	case SX_AA_REASON: {
		const sx_creason *cr = &x->rs->reasons[a->reason];
		sx_reason *out;
		if (o->reason_count >= SX_MAX_REASONS) {
			o->reasons_dropped++;
		} else {
			out = &o->reasons[o->reason_count++];
			memset(out, 0, sizeof *out);
			snprintf(out->code, sizeof out->code, "%s", cr->code);
			out->severity = cr->severity;
			snprintf(out->rule, sizeof out->rule, "%s", r->ref);
			sx_rules_render(x->rs, a->message, x->s, x->facts, &o->settings,
					out->message, sizeof out->message);
		}
		if (cr->severity == SX_REASON_COMMENT)
			raise_to(o, SX_COMMENT, r->ref);
		else if (cr->severity == SX_REASON_REJECT)
			raise_to(o, SX_REJECT, r->ref);
		return;
	}
	case SX_AA_BIAS:
		if (o->term_count >= SX_MAX_TERMS) {
			o->terms_dropped++;
			return;
		}
		snprintf(o->terms[o->term_count].label, sizeof o->terms[0].label, "%s", a->label);
		o->terms[o->term_count].bias_mmhg = a->bias;
		snprintf(o->terms[o->term_count].rule, sizeof o->terms[0].rule, "%s", r->ref);
		o->term_count++;
		return;
	case SX_AA_DISPOSITION:
		raise_to(o, a->disposition, r->ref);
		if (a->final)
			o->final = true;
		return;
	}
}

void sx_rule_outcome_init(sx_rule_outcome *o, const sx_ruleset *rs)
{
	memset(o, 0, sizeof *o);
	if (rs)
		o->settings = rs->settings;
	else
		sx_settings_defaults(&o->settings);
	o->disposition = -1;
}

sx_status sx_ruleset_evaluate(const sx_ruleset *rs, sx_rule_pass pass, const sx_specimen *s,
			      const sx_facts *facts, sx_rule_outcome *o)
{
	run x;
	if (!rs || !s || !o || (pass != SX_PASS_BEFORE_MODEL && pass != SX_PASS_AFTER_MODEL))
		return SX_EINVAL;
	memset(&x, 0, sizeof x);
	x.rs = rs;
	x.s = s;
	x.facts = facts;
	for (size_t i = 0; i < rs->rule_count && !o->final; i++) {
		const sx_crule *r = &rs->rules[i];
		if (r->pass != pass)
			continue;
		if (r->cond >= 0 && !test(&x, r->cond))
			continue;
		for (size_t k = 0; k < r->action_count; k++)
			act(&x, r, &r->actions[k], o);
	}
	sx_rules_regex_scratch_free(x.scratch);
	return x.nomem ? SX_ENOMEM : SX_OK;
}

/* ---- classification ------------------------------------------------------------------- */

static void note(sx_diag_list *diags, const sx_specimen *s, sx_field f, const char *fmt, ...)
	__attribute__((format(printf, 4, 5)));

static void note(sx_diag_list *diags, const sx_specimen *s, sx_field f, const char *fmt, ...)
{
	sx_where w = {s->source, s->source_line, 0, s->text[SX_F_SPECIMEN_ID],
		      sx_field_get(f)->name};
	va_list ap;
	if (!diags)
		return;
	va_start(ap, fmt);
	sx_diag_addv(diags, SX_WARNING, SX_OK, &w, fmt, ap);
	va_end(ap);
}

/* Up to 40 bytes of text for quoting, cut on a character boundary. */
static int quote_len(const char *t)
{
	size_t n = strlen(t);
	if (n <= 40)
		return (int)n;
	n = 40;
	while (n > 0 && ((unsigned char)t[n] & 0xC0) == 0x80)
		n--;
	return (int)n;
}

sx_status sx_ruleset_classify(const sx_ruleset *rs, sx_specimen *s, sx_diag_list *diags)
{
	bool known[SX_MAX_AGENTS] = {false};
	sx_rules_regex_scratch *scratch;

	if (!rs || !s)
		return SX_EINVAL;
	if (rs->pattern_count == 0)
		return SX_OK;
	scratch = sx_rules_regex_scratch_new(rs->rx);
	if (!scratch)
		return SX_ENOMEM;
	for (size_t i = 0; i < rs->pattern_count; i++) {
		const sx_cpattern *p = &rs->patterns[i];
		if (p->target < 0) {
			const char *canon = rs->agents[p->value].name;
			for (size_t a = 0; a < s->agent_count; a++) {
				sx_agent *ag = &s->agents[a];
				if (known[a] ||
				    !sx_rules_regex_match(rs->rx, p->re, scratch, ag->name, strlen(ag->name)))
					continue;
				known[a] = true;
				if (strcmp(ag->name, canon) != 0) {
					note(diags, s, SX_F_AGENTS, "agents: '%s' read as %s (%s)",
					     ag->name, canon, p->ref);
					snprintf(ag->name, sizeof ag->name, "%s", canon);
				}
			}
			continue;
		}
		if (s->present[p->target])
			continue; /* given by the feed, or filled by an earlier pattern */
		for (size_t k = 0; k < p->source_count; k++) {
			const char *t = s->text[p->sources[k]];
			if (!s->present[p->sources[k]] || !t ||
			    !sx_rules_regex_match(rs->rx, p->re, scratch, t, strlen(t)))
				continue;
			s->present[p->target] = true;
			s->choice[p->target] = p->value;
			note(diags, s, (sx_field)p->target, "%s: %s, read from %s \"%.*s%s\" (%s)",
			     sx_field_get((sx_field)p->target)->name,
			     sx_field_choice_name((sx_field)p->target, p->value),
			     sx_field_get((sx_field)p->sources[k])->name, quote_len(t), t,
			     (size_t)quote_len(t) < strlen(t) ? "..." : "", p->ref);
			break;
		}
	}
	for (size_t a = 0; a < s->agent_count; a++) {
		bool canonical = false;
		if (known[a])
			continue;
		for (size_t k = 0; k < rs->agent_count; k++)
			if (strcmp(s->agents[a].name, rs->agents[k].name) == 0)
				canonical = true;
		if (!canonical && rs->agent_count > 0)
			note(diags, s, SX_F_AGENTS,
			     "agents: '%s' is not an agent the ruleset knows; it is kept as given",
			     s->agents[a].name);
	}
	sx_rules_regex_scratch_free(scratch);
	return SX_OK;
}
