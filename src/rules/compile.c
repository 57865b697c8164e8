/* SPDX-License-Identifier: MIT */
/*
 * compile.c - from the parsed statements of every file to a compiled ruleset.
 *
 * Names are resolved (fields, facts, limits, choices, agents, settings,
 * mechanisms, reason codes), units converted to the internal ones, regular
 * expressions compiled, each rule's pass decided (after the model when its
 * condition or message reads a fact of SX_FACTS_AFTER_MODEL), and layers
 * merged: a ruleset's own `set`, `limit`, `sensitivity`, `reason` and `codes`
 * entries replace its base's, `replace rule` and `drop rule` change the
 * base's rules in place. Every problem is reported with its position; the
 * caller throws the result away when there was an error.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "rules/bounds.h"
#include "rules/lexer.h"
#include "rules/program.h"

typedef struct compiler {
	sx_ruleset *rs;
	sx_rules_report *r;
	const sx_ast_program *prog;
	sx_cnode *nodes;           /* grows; copied into the arena at the end */
	size_t node_count, node_capacity;
	bool after;                /* the rule being compiled reads an after-model fact */
	const sx_ast_set **set_by; /* per parameter: the last `set` of it */
	const sx_ast_limit **limit_def;
	const sx_ast_sensitivity **sens_def;
	const sx_ast_reason **reason_def;
	const sx_ast_code **code_def;
} compiler;

#define ERR(c, pos, code, ...) sx_rules_error((c)->r, (pos).src, (pos).off, code, __VA_ARGS__)
#define WARN(c, pos, ...) sx_rules_warning((c)->r, (pos).src, (pos).off, __VA_ARGS__)

static const struct {
	const char *name, *units;
} quantity_words[SX_QUANTITY_COUNT] = {
	[SX_Q_NONE] = {"a bare number", "no unit"},
	[SX_Q_PRESSURE] = {"a pressure", "mmHg, kPa"},
	[SX_Q_TEMPERATURE] = {"a temperature", "Cel, \xC2\xB0" "C, [degF], K"},
	[SX_Q_HAEMOGLOBIN] = {"a haemoglobin concentration", "g/dL, g/L, mmol/L"},
	[SX_Q_CELL_COUNT] = {"a cell count", "x10^9/L, 10*9/L, /nL, 10*3/uL"},
	[SX_Q_VOLUME_ML] = {"a volume", "mL, uL"},
	[SX_Q_VOLUME_UL] = {"a volume", "uL, mL"},
	[SX_Q_FRACTION] = {"a fraction", "%, or a bare fraction such as 0.21"},
	[SX_Q_PERCENT] = {"a percentage", "%"},
	[SX_Q_ALTITUDE] = {"an altitude", "m, ft"},
	[SX_Q_DURATION] = {"a duration", "min, s, h"},
	[SX_Q_AGE] = {"an age", "a, mo, wk, d"},
};

const char *sx_rules_quantity_name(sx_quantity q)
{
	return (unsigned)q < SX_QUANTITY_COUNT ? quantity_words[q].name : "a value";
}

const char *sx_rules_quantity_units(sx_quantity q)
{
	return (unsigned)q < SX_QUANTITY_COUNT ? quantity_words[q].units : "";
}

static bool needs_unit(sx_quantity q)
{
	return q != SX_Q_NONE && q != SX_Q_FRACTION && q != SX_Q_PERCENT;
}

/* A copy in the ruleset's own arena: the parsed text is freed after loading. */
static const char *keep(compiler *c, const char *text)
{
	return sx_rules_arena_strndup(&c->rs->arena, text, strlen(text));
}

static bool same_layer(sx_ast_pos a, sx_ast_pos b)
{
	return a.src->layer == b.src->layer;
}

static void where(sx_ast_pos pos, char *buf, size_t size)
{
	sx_rules_ref(pos.src, pos.off, buf, size);
}

static bool is_kebab(const char *s, size_t n)
{
	if (n == 0 || !(s[0] >= 'a' && s[0] <= 'z') || s[n - 1] == '-')
		return false;
	for (size_t i = 0; i < n; i++) {
		char c = s[i];
		if (!((c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '-'))
			return false;
		if (c == '-' && s[i + 1] == '-')
			return false;
	}
	return true;
}

/* ---- numbers and units -------------------------------------------------------------- */

/* The number as written ("30", "0.075"). */
static void number_text(const sx_ast_qty *q, char *buf, size_t size)
{
	size_t n = q->num_len < size - 1 ? q->num_len : size - 1;
	memcpy(buf, q->pos.src->text + q->pos.off, n);
	buf[n] = '\0';
}

/*
 * Convert q into the internal unit of quantity. what names the thing compared
 * or set ("delay", "setting site.altitude"). A bare number where a unit is
 * expected is read in the internal unit with a warning.
 */
static bool convert(compiler *c, const sx_ast_qty *q, sx_quantity quantity, const char *what,
		    double *out)
{
	char num[40];
	sx_status st;
	number_text(q, num, sizeof num);
	if (!q->unit) {
		st = sx_unit_convert(quantity, q->value, NULL, out);
		if (st == SX_ERANGE) {
			ERR(c, q->pos, SX_ERANGE,
			    "%s is %s; a bare %s above 1 is not read as a percentage: write %s %%",
			    what, sx_rules_quantity_name(quantity), num, num);
			return false;
		}
		if (st != SX_OK) {
			ERR(c, q->pos, st, "%s cannot take the number %s", what, num);
			return false;
		}
		if (needs_unit(quantity))
			WARN(c, q->pos, "no unit after %s: read as %s %s, the unit of %s (%s)", num,
			     num, sx_unit_label(quantity), what, sx_rules_quantity_name(quantity));
		return true;
	}
	if (quantity == SX_Q_NONE) {
		ERR(c, q->unit_pos, SX_EUNIT, "%s is a bare number; '%s' does not fit it", what,
		    q->unit);
		return false;
	}
	st = sx_unit_convert(quantity, q->value, q->unit, out);
	if (st == SX_EUNIT) {
		ERR(c, q->unit_pos, SX_EUNIT, "unit '%s' does not fit %s, %s (%s)", q->unit, what,
		    sx_rules_quantity_name(quantity), sx_rules_quantity_units(quantity));
		return false;
	}
	if (st == SX_ERANGE) {
		ERR(c, q->pos, SX_ERANGE, "%s %s is out of range for %s", num, q->unit, what);
		return false;
	}
	return st == SX_OK;
}

/* Is the unit known for some quantity? (limits are checked where they are used) */
static bool unit_known(const char *unit)
{
	double out;
	for (int q = 0; q < SX_QUANTITY_COUNT; q++)
		if (sx_unit_convert((sx_quantity)q, 1.0, unit, &out) == SX_OK)
			return true;
	return false;
}

/* A parameter's value: quantity units, or for a bare-number parameter its own
 * unit label written literally ("mL/dL/min") or nothing. */
static bool param_number(compiler *c, const sx_param_info *p, const sx_ast_qty *q, double *out)
{
	char what[96];
	snprintf(what, sizeof what, "setting %s", p->name);
	if (p->quantity == SX_Q_NONE) {
		if (q->unit && strcmp(q->unit, p->unit_label) != 0 && strcmp(q->unit, "1") != 0) {
			ERR(c, q->unit_pos, SX_EUNIT, "%s is in %s; '%s' does not fit it", what,
			    p->unit_label, q->unit);
			return false;
		}
		*out = q->value;
		return true;
	}
	return convert(c, q, p->quantity, what, out);
}

/* Set a parameter from a value; reports and returns false on a problem. */
static bool set_param(compiler *c, sx_settings *st, const sx_param_info *p,
		      const sx_ast_value *v, sx_range *value, bool *is_range)
{
	sx_status s;
	char lo[24], hi[24];
	*is_range = false;
	if (p->kind == SX_PARAM_OFFSET) {
		if (v->kind != SX_AV_OFFSET) {
			ERR(c, v->pos, SX_EINVAL, "%s takes a UTC offset such as +01:00", p->name);
			return false;
		}
		*value = (sx_range){v->offset_min, v->offset_min, v->offset_min};
		return sx_param_set(st, p, v->offset_min) == SX_OK;
	}
	if (v->kind == SX_AV_OFFSET) {
		ERR(c, v->pos, SX_EINVAL, "%s takes a number, not a UTC offset", p->name);
		return false;
	}
	if (!param_number(c, p, &v->nominal, &value->nominal))
		return false;
	value->low = value->high = value->nominal;
	if (v->kind == SX_AV_RANGE) {
		if (p->kind != SX_PARAM_RANGE) {
			ERR(c, v->low.pos, SX_EINVAL,
			    "%s takes one value, not a range (only parameters with a published "
			    "range do)",
			    p->name);
			return false;
		}
		if (!param_number(c, p, &v->low, &value->low) ||
		    !param_number(c, p, &v->high, &value->high))
			return false;
		*is_range = true;
	}
	snprintf(lo, sizeof lo, "%g", p->min);
	snprintf(hi, sizeof hi, "%g", p->max);
	if (*is_range) {
		if (!(value->low <= value->nominal && value->nominal <= value->high)) {
			ERR(c, v->pos, SX_ERANGE,
			    "%s: the range must hold the value (low <= value <= high)", p->name);
			return false;
		}
		s = sx_param_set_range(st, p, *value);
	} else {
		s = sx_param_set(st, p, value->nominal);
	}
	if (s != SX_OK) {
		ERR(c, v->pos, SX_ERANGE, "%s must lie within %s to %s%s%s", p->name, lo, hi,
		    strcmp(p->unit_label, "1") == 0 ? "" : " ",
		    strcmp(p->unit_label, "1") == 0 ? "" : p->unit_label);
		return false;
	}
	return true;
}

/* ---- regular expressions ----------------------------------------------------------------- */

static sx_rules_regex *compile_regex(compiler *c, const sx_ast_regex *re)
{
	sx_ruleset *rs = c->rs;
	const char *pattern = re->pos.src->text + re->pattern_off;
	sx_rules_regex *out = NULL;
	size_t erroff;
	char msg[256];
	sx_status st;

	if (rs->regex_count == rs->regex_capacity) {
		size_t cap = rs->regex_capacity ? rs->regex_capacity * 2 : 32;
		sx_rules_regex **more = sx_realloc(rs->regexes, cap * sizeof *more);
		if (!more) {
			c->r->fatal = SX_ENOMEM;
			return NULL;
		}
		rs->regexes = more;
		rs->regex_capacity = cap;
	}
	st = sx_rules_regex_compile(rs->rx, pattern, re->pattern_len, re->flags, &out, &erroff,
				    msg, sizeof msg);
	if (st == SX_ENOMEM) {
		c->r->fatal = SX_ENOMEM;
		return NULL;
	}
	if (st != SX_OK) {
		if (erroff > re->pattern_len)
			erroff = re->pattern_len;
		sx_rules_error(c->r, re->pos.src, re->pattern_off + erroff, SX_ESYNTAX,
			       "regular expression: %s", msg);
		return NULL;
	}
	rs->regexes[rs->regex_count++] = out;
	return out;
}

/* ---- limits ------------------------------------------------------------------------------ */

int sx_rules_limit_lookup(const sx_ruleset *rs, const char *name, size_t len)
{
	for (size_t i = 0; i < rs->limit_count; i++)
		if (strlen(rs->limits[i].name) == len && memcmp(rs->limits[i].name, name, len) == 0)
			return (int)i;
	return -1;
}

static void compile_limits(compiler *c)
{
	sx_ruleset *rs = c->rs;
	const sx_ast_limit *l;
	size_t n = 0;

	if (c->prog->limits.count > SX_RULES_MAX_LIMITS && c->prog->limits.head) {
		ERR(c, c->prog->limits.head->pos, SX_ELIMIT, "more than %d limits",
		    SX_RULES_MAX_LIMITS);
		return;
	}
	rs->limits = sx_rules_arena_alloc(&rs->arena, (c->prog->limits.count + 1) * sizeof *rs->limits);
	c->limit_def = sx_rules_arena_alloc(&rs->arena,
					    (c->prog->limits.count + 1) * sizeof *c->limit_def);
	if (!rs->limits || !c->limit_def)
		return;
	for (l = c->prog->limits.head; l; l = l->next) {
		int i = sx_rules_limit_lookup(rs, l->name.text, l->name.len);
		sx_climit *cl;
		char num[40];
		if (sx_field_lookup(l->name.text, l->name.len) >= 0 ||
		    sx_fact_lookup(l->name.text, l->name.len) >= 0) {
			ERR(c, l->name.pos, SX_EINVAL,
			    "'%s' is a field or fact; a limit needs a name of its own", l->name.text);
			continue;
		}
		if (l->qty.unit && !unit_known(l->qty.unit)) {
			ERR(c, l->qty.unit_pos, SX_EUNIT,
			    "unknown unit '%s' (docs/units-and-times.md lists the units)",
			    l->qty.unit);
			continue;
		}
		if (i >= 0 && same_layer(c->limit_def[i]->pos, l->pos)) {
			char first[SX_MAX_RULE_REF];
			where(c->limit_def[i]->pos, first, sizeof first);
			ERR(c, l->name.pos, SX_EINVAL, "limit '%s' is defined twice (first at %s)",
			    l->name.text, first);
			continue;
		}
		if (i < 0)
			i = (int)n++;
		cl = &rs->limits[i];
		c->limit_def[i] = l;
		cl->name = keep(c, l->name.text);
		cl->value = l->qty.value;
		cl->unit = l->qty.unit ? keep(c, l->qty.unit) : NULL;
		cl->src = l->name.pos.src;
		cl->off = l->name.pos.off;
		cl->layer = l->pos.src->layer;
		number_text(&l->qty, num, sizeof num);
		snprintf(cl->shown, sizeof cl->shown, "%s%s%s", num, l->qty.unit ? " " : "",
			 l->qty.unit ? l->qty.unit : "");
		rs->limit_count = n;
	}
}

/* A limit's value in the internal unit of quantity (for a comparison with
 * what). ref is where the limit is used. */
static bool limit_value(compiler *c, int i, sx_quantity quantity, const char *what,
			sx_ast_pos ref, double *out)
{
	const sx_ast_limit *l = c->limit_def[i];
	sx_climit *cl = &c->rs->limits[i];
	sx_status st;
	cl->used = true;
	if (!l->qty.unit) {
		*out = l->qty.value;
		if (quantity == SX_Q_FRACTION && fabs(*out) > 1) {
			ERR(c, ref, SX_ERANGE,
			    "limit '%s' is the bare number %s, which is not a fraction; "
			    "write it with %%",
			    cl->name, cl->shown);
			return false;
		}
		if (needs_unit(quantity))
			WARN(c, ref, "limit '%s' has no unit: read as %s %s for %s", cl->name, cl->shown,
			     sx_unit_label(quantity), what);
		return true;
	}
	st = quantity == SX_Q_NONE ? SX_EUNIT : sx_unit_convert(quantity, l->qty.value, l->qty.unit, out);
	if (st != SX_OK) {
		ERR(c, ref, SX_EUNIT, "limit '%s' is %s, which does not fit %s, %s (%s)", cl->name,
		    cl->shown, what, sx_rules_quantity_name(quantity),
		    sx_rules_quantity_units(quantity));
		return false;
	}
	return true;
}

/* ---- settings, reasons, agents, patterns, codes ------------------------------------------- */

static const char *param_hint(const char *name, size_t len)
{
	const char *names[128];
	size_t n = sx_param_count();
	if (n > 127)
		n = 127;
	for (size_t i = 0; i < n; i++)
		names[i] = sx_param_at(i)->name;
	names[n] = NULL;
	return sx_rules_closest(name, len, names, n);
}

static void compile_settings(compiler *c)
{
	sx_ruleset *rs = c->rs;
	size_t np = sx_param_count();
	rs->origins = sx_rules_arena_alloc(&rs->arena, (np + 1) * sizeof *rs->origins);
	c->set_by = sx_rules_arena_alloc(&rs->arena, (np + 1) * sizeof *c->set_by);
	if (!rs->origins || !c->set_by)
		return;
	for (const sx_ast_set *s = c->prog->sets.head; s; s = s->next) {
		const sx_param_info *p = sx_param_lookup(s->param.text, s->param.len);
		size_t idx;
		sx_range v;
		bool range;
		char *ref;
		if (!p) {
			const char *hint = param_hint(s->param.text, s->param.len);
			ERR(c, s->param.pos, SX_ENOTFOUND, "unknown setting '%s'%s%s%s", s->param.text,
			    hint ? " (did you mean '" : "", hint ? hint : "", hint ? "'?)" : "");
			continue;
		}
		if (!set_param(c, &rs->settings, p, &s->value, &v, &range))
			continue;
		idx = (size_t)(p - sx_param_at(0));
		if (c->set_by[idx] && same_layer(c->set_by[idx]->pos, s->pos)) {
			char later[SX_MAX_RULE_REF];
			where(s->pos, later, sizeof later);
			WARN(c, c->set_by[idx]->param.pos,
			     "unused setting: %s is set again at %s, so this value is never used",
			     p->name, later);
		}
		c->set_by[idx] = s;
		ref = sx_rules_arena_alloc(&rs->arena, SX_MAX_RULE_REF);
		if (!ref)
			return;
		where(s->pos, ref, SX_MAX_RULE_REF);
		rs->origins[idx] = ref;
	}
}

static int severity_of(const sx_ast_name *n)
{
	if (strcmp(n->text, "info") == 0)
		return SX_REASON_INFO;
	if (strcmp(n->text, "comment") == 0)
		return SX_REASON_COMMENT;
	if (strcmp(n->text, "reject") == 0)
		return SX_REASON_REJECT;
	return -1;
}

static int reason_lookup(const sx_ruleset *rs, const char *code)
{
	for (size_t i = 0; i < rs->reason_count; i++)
		if (strcmp(rs->reasons[i].code, code) == 0)
			return (int)i;
	return -1;
}

static void compile_reasons(compiler *c)
{
	sx_ruleset *rs = c->rs;
	size_t n = 0, cap = c->prog->reasons.count;
	if (cap > SX_RULES_MAX_REASONS && c->prog->reasons.head) {
		ERR(c, c->prog->reasons.head->pos, SX_ELIMIT, "more than %d reason codes",
		    SX_RULES_MAX_REASONS);
		return;
	}
	rs->reasons = sx_rules_arena_alloc(&rs->arena, (cap + 1) * sizeof *rs->reasons);
	c->reason_def = sx_rules_arena_alloc(&rs->arena, (cap + 1) * sizeof *c->reason_def);
	if (!rs->reasons || !c->reason_def)
		return;
	for (const sx_ast_reason *d = c->prog->reasons.head; d; d = d->next) {
		int sev = severity_of(&d->severity);
		int i;
		sx_creason *cr;
		if (!is_kebab(d->code.text, d->code.len) || d->code.len >= sizeof cr->code) {
			ERR(c, d->code.pos, SX_EINVAL,
			    "reason code '%s' is not kebab-case (lower-case words joined by '-', "
			    "at most %zu characters)",
			    d->code.text, sizeof cr->code - 1);
			continue;
		}
		if (sev < 0) {
			ERR(c, d->severity.pos, SX_EINVAL,
			    "expected a severity (info, comment or reject), found '%s'",
			    d->severity.text);
			continue;
		}
		i = reason_lookup(rs, d->code.text);
		if (i >= 0 && same_layer(c->reason_def[i]->pos, d->pos)) {
			char first[SX_MAX_RULE_REF];
			where(c->reason_def[i]->pos, first, sizeof first);
			WARN(c, d->code.pos,
			     "reason code '%s' is defined twice (first at %s); this definition "
			     "replaces it",
			     d->code.text, first);
		}
		if (i < 0)
			i = (int)n++;
		cr = &rs->reasons[i];
		memset(cr, 0, sizeof *cr);
		c->reason_def[i] = d;
		snprintf(cr->code, sizeof cr->code, "%s", d->code.text);
		cr->severity = (sx_reason_severity)sev;
		cr->src = d->code.pos.src;
		cr->off = d->code.pos.off;
		cr->layer = d->pos.src->layer;
		rs->reason_count = n;
		sx_rules_template_compile(rs, c->r, &d->message, &cr->message);
	}
}

static int agent_lookup(const sx_ruleset *rs, const char *name, size_t len)
{
	for (size_t i = 0; i < rs->agent_count; i++)
		if (strlen(rs->agents[i].name) == len && memcmp(rs->agents[i].name, name, len) == 0)
			return (int)i;
	return -1;
}

static const char *agent_hint(const sx_ruleset *rs, const char *name, size_t len)
{
	const char *names[SX_RULES_MAX_AGENT_NAMES + 1];
	for (size_t i = 0; i < rs->agent_count; i++)
		names[i] = rs->agents[i].name;
	names[rs->agent_count] = NULL;
	return sx_rules_closest(name, len, names, rs->agent_count);
}

/* "room, iced, warm, unknown" */
static void choice_list(sx_field f, char *buf, size_t size)
{
	size_t o = 0;
	buf[0] = '\0';
	for (int i = 1; sx_field_choice_name(f, i) && o < size; i++)
		o += (size_t)snprintf(buf + o, size - o, "%s%s", i > 1 ? ", " : "",
				      sx_field_choice_name(f, i));
}

static bool is_agent_name(const sx_ast_name *n)
{
	for (size_t i = 0; i < n->len; i++) {
		char ch = n->text[i];
		if (!((ch >= 'a' && ch <= 'z') || (ch >= '0' && ch <= '9') || ch == '-'))
			return false;
	}
	return n->len > 0 && n->len < SX_MAX_AGENT_NAME;
}

static void compile_patterns(compiler *c)
{
	sx_ruleset *rs = c->rs;
	size_t cap = c->prog->patterns.count;

	if (cap > SX_RULES_MAX_PATTERNS && c->prog->patterns.head) {
		ERR(c, c->prog->patterns.head->pos, SX_ELIMIT, "more than %d classify patterns",
		    SX_RULES_MAX_PATTERNS);
		return;
	}
	rs->patterns = sx_rules_arena_alloc(&rs->arena, (cap + 1) * sizeof *rs->patterns);
	rs->agents = sx_rules_arena_alloc(&rs->arena,
					  (SX_RULES_MAX_AGENT_NAMES + 1) * sizeof *rs->agents);
	if (!rs->patterns || !rs->agents)
		return;
	for (const sx_ast_pattern *p = c->prog->patterns.head; p; p = p->next) {
		sx_cpattern *cp = &rs->patterns[rs->pattern_count];
		bool agents = strcmp(p->target.text, "agents") == 0;
		int f = agents ? SX_F_AGENTS : sx_field_lookup(p->target.text, p->target.len);
		bool ok = true;

		memset(cp, 0, sizeof *cp);
		if (f < 0 || (!agents && sx_field_get((sx_field)f)->kind != SX_KIND_CHOICE)) {
			ERR(c, p->target.pos, SX_EINVAL,
			    f < 0 ? "unknown field '%s'; classify fills a choice field or agents"
				  : "%s is not a choice field; classify fills a choice field "
				    "(specimen_type, container, ...) or agents",
			    p->target.text);
			/* skip the rest of this block */
			while (p->next && p->next->target.pos.src == p->target.pos.src &&
			       p->next->target.pos.off == p->target.pos.off)
				p = p->next;
			continue;
		}
		if (agents && p->source_count > 0) {
			ERR(c, p->sources[0].pos, SX_EINVAL,
			    "classify agents reads the agent names themselves; it takes no 'from'");
			ok = false;
		}
		if (!agents && p->source_count == 0) {
			ERR(c, p->target.pos, SX_EINVAL,
			    "classify %s needs 'from' and the text fields to read", p->target.text);
			ok = false;
		}
		for (size_t i = 0; i < p->source_count && ok; i++) {
			int s = sx_field_lookup(p->sources[i].text, p->sources[i].len);
			if (s < 0 || sx_field_get((sx_field)s)->kind != SX_KIND_TEXT) {
				ERR(c, p->sources[i].pos, SX_EINVAL,
				    s < 0 ? "unknown field '%s'; classify reads text fields "
					    "(transport_note, comments, ...)"
					  : "%s is not a text field; classify reads text fields "
					    "(transport_note, comments, ...)",
				    p->sources[i].text);
				ok = false;
			}
			cp->sources[i] = s;
		}
		if (!ok) {
			while (p->next && p->next->target.pos.src == p->target.pos.src &&
			       p->next->target.pos.off == p->target.pos.off)
				p = p->next;
			continue;
		}
		cp->source_count = p->source_count;
		cp->target = agents ? -1 : f;
		if (agents) {
			int a;
			if (!is_agent_name(&p->value)) {
				ERR(c, p->value.pos, SX_EINVAL,
				    "an agent's canonical name is lower case letters, digits and '-' "
				    "(such as nitrous-oxide)");
				continue;
			}
			a = agent_lookup(rs, p->value.text, p->value.len);
			if (a < 0) {
				if (rs->agent_count == SX_RULES_MAX_AGENT_NAMES) {
					ERR(c, p->value.pos, SX_ELIMIT,
					    "more than %d canonical agent names",
					    SX_RULES_MAX_AGENT_NAMES);
					continue;
				}
				a = (int)rs->agent_count++;
				rs->agents[a].name = keep(c, p->value.text);
			}
			cp->value = a;
		} else {
			cp->value = sx_field_choice_lookup((sx_field)f, p->value.text, p->value.len);
			if (cp->value == 0) {
				char list[160];
				choice_list((sx_field)f, list, sizeof list);
				ERR(c, p->value.pos, SX_EINVAL, "'%s' is not a choice of %s (%s)",
				    p->value.text, p->target.text, list);
				continue;
			}
		}
		sx_rules_ref(p->regex.pos.src, p->regex.pos.off, cp->ref, sizeof cp->ref);
		cp->re = compile_regex(c, &p->regex);
		if (cp->re)
			rs->pattern_count++;
	}
}

/* The model's parameter for an agent's sensitivity, "electrode.nitrous_oxide"
 * for nitrous-oxide, or NULL. */
static const sx_param_info *sensitivity_lookup(const char *agent)
{
	char name[SX_RULES_MAX_NAME + 16];
	size_t n = (size_t)snprintf(name, sizeof name, "electrode.%s", agent);
	for (size_t i = 0; i < n; i++)
		if (name[i] == '-')
			name[i] = '_';
	return n < sizeof name ? sx_param_lookup(name, n) : NULL;
}

/* `sensitivity AGENT = ...` is `set electrode.AGENT = ...` where the model has
 * that parameter: it goes through the registry like every setting. */
static void sensitivity_param(compiler *c, const sx_ast_sensitivity *s, sx_range r)
{
	const sx_param_info *p = sensitivity_lookup(s->agent.text);
	size_t idx;
	char *ref;
	if (!p)
		return;
	idx = (size_t)(p - sx_param_at(0));
	if (c->set_by && c->set_by[idx] && same_layer(c->set_by[idx]->pos, s->pos)) {
		char at[SX_MAX_RULE_REF];
		where(c->set_by[idx]->pos, at, sizeof at);
		WARN(c, s->agent.pos,
		     "the sensitivity to %s is also set as %s at %s; this line wins (write one "
		     "of the two)",
		     s->agent.text, p->name, at);
	}
	if ((p->kind == SX_PARAM_RANGE ? sx_param_set_range(&c->rs->settings, p, r)
				       : sx_param_set(&c->rs->settings, p, r.nominal)) != SX_OK) {
		ERR(c, s->value.pos, SX_ERANGE, "%s must lie within %g to %g", p->name, p->min,
		    p->max);
		return;
	}
	ref = sx_rules_arena_alloc(&c->rs->arena, SX_MAX_RULE_REF);
	if (!ref || !c->rs->origins)
		return;
	where(s->pos, ref, SX_MAX_RULE_REF);
	c->rs->origins[idx] = ref;
}

static void compile_sensitivities(compiler *c)
{
	sx_ruleset *rs = c->rs;
	c->sens_def = sx_rules_arena_alloc(&rs->arena,
					   (SX_RULES_MAX_AGENT_NAMES + 1) * sizeof *c->sens_def);
	if (!c->sens_def)
		return;
	for (const sx_ast_sensitivity *s = c->prog->sensitivities.head; s; s = s->next) {
		int a = agent_lookup(rs, s->agent.text, s->agent.len);
		const sx_ast_value *v = &s->value;
		sx_range r;
		if (a < 0) {
			const char *hint = agent_hint(rs, s->agent.text, s->agent.len);
			ERR(c, s->agent.pos, SX_ENOTFOUND,
			    "'%s' is not a canonical agent name (classify agents gives them)%s%s%s",
			    s->agent.text, hint ? "; did you mean '" : "", hint ? hint : "",
			    hint ? "'?" : "");
			continue;
		}
		if (v->kind == SX_AV_OFFSET) {
			ERR(c, v->pos, SX_EINVAL, "a sensitivity is a number");
			continue;
		}
		if (v->nominal.unit) {
			ERR(c, v->nominal.unit_pos, SX_EUNIT,
			    "a sensitivity is a bare number (the fraction of the reading per "
			    "volume %% of agent); '%s' does not fit it",
			    v->nominal.unit);
			continue;
		}
		r.nominal = v->nominal.value;
		r.low = v->kind == SX_AV_RANGE ? v->low.value : r.nominal;
		r.high = v->kind == SX_AV_RANGE ? v->high.value : r.nominal;
		if (!(0 <= r.low && r.low <= r.nominal && r.nominal <= r.high && r.high <= 1)) {
			ERR(c, v->pos, SX_ERANGE,
			    "a sensitivity needs 0 <= low <= value <= high <= 1");
			continue;
		}
		if (c->sens_def[a] && same_layer(c->sens_def[a]->pos, s->pos)) {
			char later[SX_MAX_RULE_REF];
			where(s->pos, later, sizeof later);
			WARN(c, c->sens_def[a]->agent.pos,
			     "unused setting: the sensitivity to %s is set again at %s, so this "
			     "value is never used",
			     s->agent.text, later);
		}
		c->sens_def[a] = s;
		rs->agents[a].has_sensitivity = true;
		rs->agents[a].sensitivity = r;
		sensitivity_param(c, s, r);
	}
}

static void compile_codes(compiler *c)
{
	sx_ruleset *rs = c->rs;
	size_t cap = c->prog->codes.count;
	if (cap > SX_RULES_MAX_CODES && c->prog->codes.head) {
		ERR(c, c->prog->codes.head->pos, SX_ELIMIT, "more than %d code mappings",
		    SX_RULES_MAX_CODES);
		return;
	}
	rs->codes = sx_rules_arena_alloc(&rs->arena, (cap + 1) * sizeof *rs->codes);
	c->code_def = sx_rules_arena_alloc(&rs->arena, (cap + 1) * sizeof *c->code_def);
	if (!rs->codes || !c->code_def)
		return;
	for (const sx_ast_code *d = c->prog->codes.head; d; d = d->next) {
		int f = sx_field_lookup(d->field.text, d->field.len);
		size_t i;
		if (f < 0) {
			const char *names[SX_FIELD_COUNT + 1];
			const char *hint;
			for (int k = 0; k < SX_FIELD_COUNT; k++)
				names[k] = sx_field_get((sx_field)k)->name;
			names[SX_FIELD_COUNT] = NULL;
			hint = sx_rules_closest(d->field.text, d->field.len, names, SX_FIELD_COUNT);
			ERR(c, d->field.pos, SX_ENOTFOUND, "unknown field '%s'%s%s%s", d->field.text,
			    hint ? " (did you mean '" : "", hint ? hint : "", hint ? "'?)" : "");
			continue;
		}
		for (i = 0; i < rs->code_count; i++)
			if (strcmp(rs->codes[i].system, d->system.text) == 0 &&
			    strcmp(rs->codes[i].code, d->code.text) == 0)
				break;
		if (i < rs->code_count && same_layer(c->code_def[i]->pos, d->pos)) {
			char first[SX_MAX_RULE_REF];
			where(c->code_def[i]->pos, first, sizeof first);
			ERR(c, d->code.pos, SX_EINVAL, "code %s %s is mapped twice (first at %s)",
			    d->system.text, d->code.text, first);
			continue;
		}
		if (i == rs->code_count)
			rs->code_count++;
		c->code_def[i] = d;
		rs->codes[i].system = keep(c, d->system.text);
		rs->codes[i].code = keep(c, d->code.text);
		rs->codes[i].field = f;
	}
}

/* ---- conditions ---------------------------------------------------------------------------- */

typedef struct subject {
	sx_var var;
	sx_quantity quantity;
	sx_field_kind kind;         /* SX_KIND_NUMBER for facts */
	const char *name;
} subject;

static int32_t add_node(compiler *c, const sx_cnode *n)
{
	if (c->node_count == c->node_capacity) {
		size_t cap = c->node_capacity ? c->node_capacity * 2 : 256;
		sx_cnode *more = sx_realloc(c->nodes, cap * sizeof *more);
		if (!more) {
			c->r->fatal = SX_ENOMEM;
			return -1;
		}
		c->nodes = more;
		c->node_capacity = cap;
	}
	c->nodes[c->node_count] = *n;
	return (int32_t)c->node_count++;
}

static const char *name_hint(compiler *c, const char *name, size_t len)
{
	const char *cands[SX_FIELD_COUNT + SX_FACT_COUNT + 1];
	size_t n = 0;
	for (int f = 0; f < SX_FIELD_COUNT; f++)
		cands[n++] = sx_field_get((sx_field)f)->name;
	for (int f = 0; f < SX_FACT_COUNT; f++)
		cands[n++] = sx_fact_get((sx_fact)f)->name;
	cands[n] = NULL;
	(void)c;
	return sx_rules_closest(name, len, cands, n);
}

static bool resolve_subject(compiler *c, const sx_ast_name *n, subject *s)
{
	int i;
	s->name = n->text;
	if ((i = sx_field_lookup(n->text, n->len)) >= 0) {
		const sx_field_info *info = sx_field_get((sx_field)i);
		s->var = (sx_var){SX_VAR_FIELD, (int16_t)i};
		s->kind = info->kind;
		s->quantity = info->quantity;
		return true;
	}
	if ((i = sx_fact_lookup(n->text, n->len)) >= 0) {
		s->var = (sx_var){SX_VAR_FACT, (int16_t)i};
		s->kind = SX_KIND_NUMBER;
		s->quantity = sx_fact_get((sx_fact)i)->quantity;
		if (i >= SX_FACTS_AFTER_MODEL)
			c->after = true;
		return true;
	}
	if (sx_rules_limit_lookup(c->rs, n->text, n->len) >= 0) {
		ERR(c, n->pos, SX_EINVAL,
		    "'%s' is a limit; a test starts with the field or fact (such as delay > %s)",
		    n->text, n->text);
		return false;
	}
	{
		const char *hint = name_hint(c, n->text, n->len);
		ERR(c, n->pos, SX_ENOTFOUND, "unknown field or fact '%s'%s%s%s", n->text,
		    hint ? " (did you mean '" : "", hint ? hint : "", hint ? "'?)" : "");
	}
	return false;
}

static int32_t not_of(compiler *c, int32_t a)
{
	sx_cnode n;
	if (a < 0)
		return -1;
	memset(&n, 0, sizeof n);
	n.op = SX_CN_NOT;
	n.a = a;
	return add_node(c, &n);
}

static int32_t compile_in(compiler *c, const sx_ast_expr *e, const subject *s)
{
	sx_cnode n;
	bool ok = true;
	memset(&n, 0, sizeof n);
	n.var = s->var;
	if (s->var.kind == SX_VAR_FIELD && s->kind == SX_KIND_CHOICE) {
		char list[160];
		n.op = SX_CN_CHOICE_IN;
		for (size_t i = 0; i < e->set_count; i++) {
			int ch = sx_field_choice_lookup((sx_field)s->var.index, e->set[i].text,
							e->set[i].len);
			if (ch == 0) {
				choice_list((sx_field)s->var.index, list, sizeof list);
				ERR(c, e->set[i].pos, SX_EINVAL, "'%s' is not a choice of %s (%s)",
				    e->set[i].text, s->name, list);
				ok = false;
				continue;
			}
			n.mask |= 1ull << ch;
		}
	} else if (s->var.kind == SX_VAR_FIELD && s->kind == SX_KIND_AGENTS) {
		n.op = SX_CN_AGENTS_IN;
		for (size_t i = 0; i < e->set_count; i++) {
			int a = agent_lookup(c->rs, e->set[i].text, e->set[i].len);
			if (a < 0) {
				const char *hint = agent_hint(c->rs, e->set[i].text, e->set[i].len);
				ERR(c, e->set[i].pos, SX_ENOTFOUND,
				    "'%s' is not a canonical agent name (classify agents gives "
				    "them)%s%s%s",
				    e->set[i].text, hint ? "; did you mean '" : "", hint ? hint : "",
				    hint ? "'?" : "");
				ok = false;
				continue;
			}
			n.mask |= 1ull << a;
		}
	} else {
		ERR(c, e->op_pos, SX_EINVAL,
		    "'in' tests a choice field or agents; %s is %s: compare it with <, <=, >, >=",
		    s->name,
		    s->kind == SX_KIND_TEXT	? "a text (use matches)"
		    : s->kind == SX_KIND_TIME ? "a time (test the delays)"
					      : "a number");
		return -1;
	}
	if (!ok)
		return -1;
	return e->negated ? not_of(c, add_node(c, &n)) : add_node(c, &n);
}

/* The right side of a numeric comparison. */
static bool compile_numeric_rhs(compiler *c, const sx_ast_operand *o, const subject *s,
				sx_cnode *n)
{
	const sx_ast_name *name = o->kind == SX_OPD_NAME ? &o->name : NULL;
	int li;
	n->op = SX_CN_CMP;
	switch (o->kind) {
	case SX_OPD_QTY:
		return convert(c, &o->qty, s->quantity, s->name, &n->value);
	case SX_OPD_NAME:
		li = sx_rules_limit_lookup(c->rs, name->text, name->len);
		if (li >= 0)
			return limit_value(c, li, s->quantity, s->name, name->pos, &n->value);
		if (sx_field_lookup(name->text, name->len) >= 0 ||
		    sx_fact_lookup(name->text, name->len) >= 0) {
			subject other;
			if (!resolve_subject(c, name, &other))
				return false;
			if (other.kind != SX_KIND_NUMBER || other.quantity != s->quantity) {
				ERR(c, name->pos, SX_EINVAL, "%s is %s; it cannot be compared with %s",
				    other.name, sx_rules_quantity_name(other.quantity), s->name);
				return false;
			}
			n->op = SX_CN_CMP_OF;
			n->var2 = other.var;
			n->value = 1.0;
			return true;
		} else {
			const char *names[SX_RULES_MAX_LIMITS + 1];
			const char *hint;
			for (size_t i = 0; i < c->rs->limit_count; i++)
				names[i] = c->rs->limits[i].name;
			names[c->rs->limit_count] = NULL;
			hint = sx_rules_closest(name->text, name->len, names, c->rs->limit_count);
			ERR(c, name->pos, SX_ENOTFOUND, "unknown limit '%s'%s%s%s", name->text,
			    hint ? " (did you mean '" : "", hint ? hint : "", hint ? "'?)" : "");
			return false;
		}
	case SX_OPD_SCALED: {
		double v;
		li = sx_rules_limit_lookup(c->rs, o->name.text, o->name.len);
		if (li < 0) {
			ERR(c, o->name.pos, SX_ENOTFOUND, "unknown limit '%s'", o->name.text);
			return false;
		}
		if (!limit_value(c, li, s->quantity, s->name, o->name.pos, &v))
			return false;
		if (o->factor_is_limit) {
			double f;
			int fi = sx_rules_limit_lookup(c->rs, o->factor.text, o->factor.len);
			if (fi < 0) {
				ERR(c, o->factor.pos, SX_ENOTFOUND, "unknown limit '%s'", o->factor.text);
				return false;
			}
			if (!limit_value(c, fi, SX_Q_NONE, "a factor before '*'", o->factor.pos, &f))
				return false;
			n->value = f * v;
			return true;
		}
		n->value = o->qty.value * v;
		return true;
	}
	case SX_OPD_OF: {
		subject other;
		double f;
		if (o->fraction_is_limit) {
			li = sx_rules_limit_lookup(c->rs, o->name.text, o->name.len);
			if (li < 0) {
				ERR(c, o->name.pos, SX_ENOTFOUND, "unknown limit '%s'", o->name.text);
				return false;
			}
			if (!limit_value(c, li, SX_Q_FRACTION, "a share 'of' a value", o->name.pos, &f))
				return false;
		} else if (!convert(c, &o->qty, SX_Q_FRACTION, "a share 'of' a value", &f)) {
			return false;
		}
		if (!resolve_subject(c, &o->of, &other))
			return false;
		if (other.kind != SX_KIND_NUMBER || other.quantity != s->quantity) {
			ERR(c, o->of.pos, SX_EINVAL, "%s is %s; a share of it cannot be compared with %s",
			    other.name,
			    other.kind == SX_KIND_NUMBER ? sx_rules_quantity_name(other.quantity)
							 : "not a number",
			    s->name);
			return false;
		}
		n->op = SX_CN_CMP_OF;
		n->var2 = other.var;
		n->value = f;
		return true;
	}
	}
	return false;
}

static int32_t compile_cmp(compiler *c, const sx_ast_expr *e, const subject *s)
{
	sx_cnode n;
	memset(&n, 0, sizeof n);
	n.var = s->var;
	if (s->kind == SX_KIND_CHOICE) {
		int ch;
		char list[160];
		if (e->cmp != SX_CMP_EQ && e->cmp != SX_CMP_NE) {
			ERR(c, e->op_pos, SX_EINVAL,
			    "%s is a choice; compare it with == or !=, or test it with 'in'", s->name);
			return -1;
		}
		if (e->rhs.kind != SX_OPD_NAME) {
			choice_list((sx_field)s->var.index, list, sizeof list);
			ERR(c, e->rhs.pos, SX_EINVAL, "%s is a choice: one of %s", s->name, list);
			return -1;
		}
		ch = sx_field_choice_lookup((sx_field)s->var.index, e->rhs.name.text, e->rhs.name.len);
		if (ch == 0) {
			choice_list((sx_field)s->var.index, list, sizeof list);
			ERR(c, e->rhs.name.pos, SX_EINVAL, "'%s' is not a choice of %s (%s)",
			    e->rhs.name.text, s->name, list);
			return -1;
		}
		n.op = SX_CN_CHOICE_IN;
		n.mask = 1ull << ch;
		return e->cmp == SX_CMP_NE ? not_of(c, add_node(c, &n)) : add_node(c, &n);
	}
	if (s->kind != SX_KIND_NUMBER) {
		ERR(c, e->op_pos, SX_EINVAL, "%s is %s; it cannot be compared with %s", s->name,
		    s->kind == SX_KIND_TEXT   ? "a text (test it with matches /.../)"
		    : s->kind == SX_KIND_TIME ? "a time (compare the delays: delay, transport_time, "
						"wait_time)"
					      : "a list (test it with 'in' or 'is present')",
		    "<, <=, >, >=, ==, !=");
		return -1;
	}
	if (!compile_numeric_rhs(c, &e->rhs, s, &n))
		return -1;
	n.cmp = (uint8_t)(e->cmp == SX_CMP_NE ? SX_CMP_EQ : e->cmp);
	return e->cmp == SX_CMP_NE ? not_of(c, add_node(c, &n)) : add_node(c, &n);
}

static int32_t compile_expr(compiler *c, const sx_ast_expr *e)
{
	sx_cnode n;
	subject s;
	memset(&n, 0, sizeof n);
	switch (e->kind) {
	case SX_AE_AND:
	case SX_AE_OR: {
		int32_t a = compile_expr(c, e->a);
		int32_t b = compile_expr(c, e->b);
		if (a < 0 || b < 0)
			return -1;
		n.op = e->kind == SX_AE_AND ? SX_CN_AND : SX_CN_OR;
		n.a = a;
		n.b = b;
		return add_node(c, &n);
	}
	case SX_AE_NOT:
		return not_of(c, compile_expr(c, e->a));
	case SX_AE_IS:
		if (!resolve_subject(c, &e->subject, &s))
			return -1;
		n.op = SX_CN_PRESENT;
		n.var = s.var;
		return e->negated ? not_of(c, add_node(c, &n)) : add_node(c, &n);
	case SX_AE_IN:
		if (!resolve_subject(c, &e->subject, &s))
			return -1;
		return compile_in(c, e, &s);
	case SX_AE_MATCHES:
		if (!resolve_subject(c, &e->subject, &s))
			return -1;
		if (s.var.kind != SX_VAR_FIELD || s.kind != SX_KIND_TEXT) {
			ERR(c, e->subject.pos, SX_EINVAL,
			    "matches tests a text field (comments, transport_note, location, ...); "
			    "%s is not one",
			    s.name);
			return -1;
		}
		n.op = SX_CN_MATCHES;
		n.var = s.var;
		n.re = compile_regex(c, &e->regex);
		return n.re ? add_node(c, &n) : -1;
	case SX_AE_CMP:
		if (!resolve_subject(c, &e->subject, &s))
			return -1;
		return compile_cmp(c, e, &s);
	}
	return -1;
}

/* ---- rules ------------------------------------------------------------------------------------- */

static int disposition_of(const char *w)
{
	if (strcmp(w, "accept") == 0)
		return SX_ACCEPT;
	if (strcmp(w, "comment") == 0)
		return SX_COMMENT;
	if (strcmp(w, "reject") == 0)
		return SX_REJECT;
	return -1;
}

static bool compile_apply(compiler *c, const sx_ast_action *a, sx_caction *ca)
{
	sx_settings scratch = c->rs->settings;
	bool ok = true;
	ca->mechanism = sx_mechanism_lookup(a->name.text, a->name.len);
	if (ca->mechanism < 0) {
		const char *names[SX_MECH_COUNT + 1];
		const char *hint;
		for (int m = 0; m < SX_MECH_COUNT; m++)
			names[m] = sx_mechanism_name((sx_mechanism)m);
		names[SX_MECH_COUNT] = NULL;
		hint = sx_rules_closest(a->name.text, a->name.len, names, SX_MECH_COUNT);
		ERR(c, a->name.pos, SX_ENOTFOUND, "unknown mechanism '%s'%s%s%s", a->name.text,
		    hint ? " (did you mean '" : "", hint ? hint : "", hint ? "'?)" : "");
		return false;
	}
	if (!sx_mechanism_built((sx_mechanism)ca->mechanism))
		WARN(c, a->name.pos,
		     "mechanism %s is not modelled by this build; switching it on has no effect "
		     "yet",
		     a->name.text);
	ca->overrides = sx_rules_arena_alloc(&c->rs->arena,
					     (a->override_count + 1) * sizeof *ca->overrides);
	if (!ca->overrides)
		return false;
	for (size_t i = 0; i < a->override_count; i++) {
		const sx_ast_override *o = &a->overrides[i];
		const sx_param_info *p = sx_param_lookup(o->param.text, o->param.len);
		sx_coverride *co = &ca->overrides[ca->override_count];
		if (!p) {
			const char *hint = param_hint(o->param.text, o->param.len);
			ERR(c, o->param.pos, SX_ENOTFOUND, "unknown setting '%s'%s%s%s", o->param.text,
			    hint ? " (did you mean '" : "", hint ? hint : "", hint ? "'?)" : "");
			ok = false;
			continue;
		}
		if (!set_param(c, &scratch, p, &o->value, &co->value, &co->range)) {
			ok = false;
			continue;
		}
		co->param = p;
		ca->override_count++;
	}
	return ok;
}

static bool compile_action(compiler *c, const sx_ast_action *a, sx_caction *ca)
{
	ca->kind = a->kind;
	switch (a->kind) {
	case SX_AA_APPLY:
		return compile_apply(c, a, ca);
	case SX_AA_REASON: {
		int i = reason_lookup(c->rs, a->name.text);
		sx_template *t;
		if (i < 0) {
			const char *names[SX_RULES_MAX_REASONS + 1];
			const char *hint;
			for (size_t k = 0; k < c->rs->reason_count; k++)
				names[k] = c->rs->reasons[k].code;
			names[c->rs->reason_count] = NULL;
			hint = sx_rules_closest(a->name.text, a->name.len, names,
						c->rs->reason_count);
			if (hint)
				ERR(c, a->name.pos, SX_ENOTFOUND,
				    "reason code '%s' is not defined (did you mean '%s'?)",
				    a->name.text, hint);
			else
				ERR(c, a->name.pos, SX_ENOTFOUND,
				    "reason code '%s' is not defined; define it with: reason %s "
				    "SEVERITY \"message\"",
				    a->name.text, a->name.text);
			return false;
		}
		ca->reason = i;
		c->rs->reasons[i].given = true;
		if (!a->has_message) {
			ca->message = &c->rs->reasons[i].message;
			if (ca->message->after_model)
				c->after = true;
			return true;
		}
		t = sx_rules_arena_alloc(&c->rs->arena, sizeof *t);
		if (!t || !sx_rules_template_compile(c->rs, c->r, &a->message, t))
			return false;
		if (t->after_model)
			c->after = true;
		ca->message = t;
		return true;
	}
	case SX_AA_BIAS: {
		const sx_ast_value *v = &a->bias;
		char what[80];
		if (a->name.len >= sizeof ca->label) {
			ERR(c, a->name.pos, SX_ELIMIT, "a bias label has at most %zu characters",
			    sizeof ca->label - 1);
			return false;
		}
		snprintf(ca->label, sizeof ca->label, "%s", a->name.text);
		snprintf(what, sizeof what, "bias %s", a->name.text);
		if (v->kind == SX_AV_OFFSET) {
			ERR(c, v->pos, SX_EINVAL, "a bias is a pressure, such as -2 mmHg (-4 to 0 mmHg)");
			return false;
		}
		if (!convert(c, &v->nominal, SX_Q_PRESSURE, what, &ca->bias.nominal))
			return false;
		ca->bias.low = ca->bias.high = ca->bias.nominal;
		if (v->kind == SX_AV_RANGE &&
		    (!convert(c, &v->low, SX_Q_PRESSURE, what, &ca->bias.low) ||
		     !convert(c, &v->high, SX_Q_PRESSURE, what, &ca->bias.high)))
			return false;
		if (!(ca->bias.low <= ca->bias.nominal && ca->bias.nominal <= ca->bias.high)) {
			ERR(c, v->pos, SX_ERANGE,
			    "the range must hold the bias (low <= value <= high)");
			return false;
		}
		return true;
	}
	case SX_AA_DISPOSITION:
		ca->disposition = disposition_of(a->name.text);
		ca->final = a->final;
		if (ca->disposition < 0) {
			ERR(c, a->name.pos, SX_EINVAL,
			    "expected a disposition (accept, comment or reject), found '%s'",
			    a->name.text);
			return false;
		}
		return true;
	}
	return false;
}

/* Where a rule of that name is (the last definition in load order), or NULL. */
static sx_ast_rule *find_rule(const sx_ast_program *prog, const sx_ast_rule *upto,
			      const char *name)
{
	sx_ast_rule *found = NULL;
	for (sx_ast_rule *r = prog->rules.head; r && r != upto; r = r->next)
		if (strcmp(r->name.text, name) == 0)
			found = r;
	return found;
}

/* Replace and drop: mark the base's rules. */
static void merge_rules(compiler *c)
{
	const sx_ast_program *prog = c->prog;
	char first[SX_MAX_RULE_REF];
	for (sx_ast_rule *r = prog->rules.head; r; r = r->next) {
		sx_ast_rule *old = find_rule(prog, r, r->name.text);
		if (r->mode == SX_RULE_NEW) {
			if (old) {
				where(old->pos, first, sizeof first);
				if (old->pos.src->layer > r->pos.src->layer)
					ERR(c, r->name.pos, SX_EINVAL,
					    "rule '%s' is already defined in the base at %s; write "
					    "'replace rule %s' to change it",
					    r->name.text, first, r->name.text);
				else
					ERR(c, r->name.pos, SX_EINVAL,
					    "rule '%s' is defined twice (first at %s)", r->name.text,
					    first);
			}
			continue;
		}
		if (!old || old->pos.src->layer <= r->pos.src->layer) {
			if (old) {
				where(old->pos, first, sizeof first);
				ERR(c, r->name.pos, SX_EINVAL,
				    "replace changes a rule of the base; rule '%s' at %s is in this "
				    "ruleset: edit it there",
				    r->name.text, first);
			} else {
				ERR(c, r->name.pos, SX_ENOTFOUND,
				    "there is no rule '%s' in the base to replace", r->name.text);
			}
			continue;
		}
		if (old->dropped) {
			ERR(c, r->name.pos, SX_EINVAL, "rule '%s' was dropped; it cannot be replaced",
			    r->name.text);
			continue;
		}
		old->replaced = true;
		old->replacement = r;
	}
	for (const sx_ast_drop *d = prog->drops.head; d; d = d->next) {
		sx_ast_rule *old = find_rule(prog, NULL, d->name.text);
		/* the current definition: follow replacements */
		while (old && old->replaced)
			old = old->replacement;
		if (!old || old->pos.src->layer <= d->pos.src->layer) {
			if (old) {
				where(old->pos, first, sizeof first);
				ERR(c, d->name.pos, SX_EINVAL,
				    "drop removes a rule of the base; rule '%s' at %s is in this "
				    "ruleset: delete it there",
				    d->name.text, first);
			} else {
				ERR(c, d->name.pos, SX_ENOTFOUND,
				    "there is no rule '%s' in the base to drop", d->name.text);
			}
			continue;
		}
		old->dropped = true;
	}
}

static void compile_rule(compiler *c, const sx_ast_rule *r, sx_crule *cr)
{
	size_t errors = c->r->errors;
	memset(cr, 0, sizeof *cr);
	c->after = false;
	cr->name = keep(c, r->name.text);
	cr->src = r->pos.src;
	cr->off = r->pos.off;
	sx_rules_ref(r->pos.src, r->pos.off, cr->ref, sizeof cr->ref);
	cr->cond = r->cond ? compile_expr(c, r->cond) : -1;
	cr->actions = sx_rules_arena_alloc(&c->rs->arena,
					   (r->action_count + 1) * sizeof *cr->actions);
	if (!cr->actions)
		return;
	for (size_t i = 0; i < r->action_count; i++) {
		if (compile_action(c, &r->actions[i], &cr->actions[cr->action_count]))
			cr->action_count++;
	}
	cr->pass = c->after ? SX_PASS_AFTER_MODEL : SX_PASS_BEFORE_MODEL;
	if (cr->pass == SX_PASS_AFTER_MODEL && c->r->errors == errors) {
		for (size_t i = 0; i < r->action_count; i++) {
			const sx_ast_action *a = &r->actions[i];
			if (a->kind == SX_AA_APPLY || a->kind == SX_AA_BIAS)
				ERR(c, a->pos, SX_EINVAL,
				    "rule '%s' runs after the model (it reads the bias); '%s' must "
				    "come before the model: put it in a rule of its own",
				    r->name.text, a->kind == SX_AA_APPLY ? "apply" : "bias");
		}
	}
}

static void compile_rules(compiler *c)
{
	sx_ruleset *rs = c->rs;
	size_t cap = c->prog->rules.count;
	if (cap > SX_RULES_MAX_RULES && c->prog->rules.head) {
		ERR(c, c->prog->rules.head->pos, SX_ELIMIT, "more than %d rules",
		    SX_RULES_MAX_RULES);
		return;
	}
	merge_rules(c);
	rs->rules = sx_rules_arena_alloc(&rs->arena, (cap + 1) * sizeof *rs->rules);
	if (!rs->rules)
		return;
	/* the order of the first definition; a replacement takes the place of
	 * the rule it replaces */
	for (const sx_ast_rule *r = c->prog->rules.head; r; r = r->next) {
		const sx_ast_rule *eff = r;
		if (r->mode == SX_RULE_REPLACE)
			continue;
		while (eff->replaced && eff->replacement)
			eff = eff->replacement;
		if (eff->dropped)
			continue;
		compile_rule(c, eff, &rs->rules[rs->rule_count]);
		rs->pass_count[rs->rules[rs->rule_count].pass]++;
		rs->rule_count++;
	}
}

/* ---- versions ------------------------------------------------------------------------------------ */

static void compile_versions(compiler *c, const sx_rules_layer *layers, size_t layer_count)
{
	char text[(SX_RULES_MAX_NAME + 4) * (SX_RULES_MAX_BASE_DEPTH + 1) + 1];
	size_t o = 0;
	text[0] = '\0';
	for (size_t l = 0; l < layer_count; l++) {
		const sx_ast_version *first = NULL;
		for (const sx_ast_version *v = c->prog->versions.head; v; v = v->next) {
			if (v->pos.src->layer != (int)l)
				continue;
			if (first) {
				char at[SX_MAX_RULE_REF];
				where(first->pos, at, sizeof at);
				ERR(c, v->pos, SX_EINVAL,
				    "a ruleset has one version line; the first is at %s", at);
				continue;
			}
			first = v;
			if (v->text.len == 0 || v->text.len > SX_RULES_MAX_NAME) {
				ERR(c, v->text.pos, SX_EINVAL,
				    "a version is 1 to %d characters, such as \"default 1\"",
				    SX_RULES_MAX_NAME);
				continue;
			}
			if (o < sizeof text)
				o += (size_t)snprintf(text + o, sizeof text - o, "%s%.*s",
						      l ? " on " : "", (int)v->text.len, v->text.text);
		}
		if (!first && layers[l].first && !layers[l].unreadable)
			sx_rules_error(c->r, layers[l].first, SX_RULES_NO_OFFSET, SX_ESYNTAX,
				       "the ruleset in %s has no version line (write one, such as: "
				       "version \"site 1\")",
				       layers[l].dir);
	}
	c->rs->version = sx_rules_arena_strndup(&c->rs->arena, text, strlen(text));
}

sx_ruleset *sx_rules_compile(const sx_ast_program *prog, const sx_rules_layer *layers,
			     size_t layer_count, sx_rules_report *r)
{
	compiler c;
	sx_ruleset *rs = sx_calloc(1, sizeof *rs);
	if (!rs) {
		r->fatal = SX_ENOMEM;
		return NULL;
	}
	sx_rules_arena_init(&rs->arena);
	sx_settings_defaults(&rs->settings);
	if (sx_rules_regex_context_new(&rs->rx) != SX_OK) {
		r->fatal = SX_ENOMEM;
		sx_ruleset_free(rs);
		return NULL;
	}
	memset(&c, 0, sizeof c);
	c.rs = rs;
	c.r = r;
	c.prog = prog;
	compile_versions(&c, layers, layer_count);
	compile_limits(&c);
	compile_settings(&c);
	compile_reasons(&c);
	compile_patterns(&c);
	compile_sensitivities(&c);
	compile_codes(&c);
	compile_rules(&c);
	if (c.node_count) {
		rs->nodes = sx_rules_arena_alloc(&rs->arena, c.node_count * sizeof *rs->nodes);
		if (rs->nodes)
			memcpy(rs->nodes, c.nodes, c.node_count * sizeof *rs->nodes);
		rs->node_count = c.node_count;
	}
	sx_free(c.nodes);
	if (rs->arena.failed)
		r->fatal = SX_ENOMEM;
	return rs;
}
