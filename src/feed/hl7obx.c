/* SPDX-License-Identifier: MIT */
/*
 * hl7obx.c - observations (OBX) into the specimen record: which field an
 * observation belongs to, its value type, value, unit and status.
 *
 * OBX-3 is looked up with its code and coding system, then with its
 * alternate code (OBX-3.4 to .6): first in the site's mapping (a callback,
 * sx_hl7_options.map_code), then LOINC, then syrinx's local codes SX-<NAME>
 * (every data-dictionary field, and SX-AGENT-PERCENT). OBX-5 is read by its
 * type (OBX-2: NM, SN, ST/TX/FT, CWE/CE, DTM/TS), OBX-6 is the unit (UCUM
 * code, else its text), OBX-11 the result status (HL7 table 0085). HL7
 * v2.5.1 chapter 7, section 7.4.2 (OBX), and docs/hl7.md.
 */
#include <stdio.h>
#include <string.h>

#include "feed/hl7internal.h"

static void upper(char *s)
{
	for (; *s; s++)
		if (*s >= 'a' && *s <= 'z')
			*s = (char)(*s - 'a' + 'A');
}

/* ---- observation codes --------------------------------------------------------- */

/* LOINC codes (Regenstrief LOINC; the arterial-blood set as HL7-NOTES.md
 * lists it, plus the venous pO2/pCO2 and 30525-0 Age). */
static const sx_hl7_code_row loinc[] = {
        {"2703-7", SX_F_PO2},            /* Oxygen [Partial pressure] in Arterial blood */
        {"2705-2", SX_F_PO2},            /* Oxygen [Partial pressure] in Venous blood */
        {"2019-8", SX_F_PCO2},           /* Carbon dioxide [Partial pressure] in Arterial blood */
        {"2021-4", SX_F_PCO2},           /* Carbon dioxide [Partial pressure] in Venous blood */
        {"2744-1", SX_F_PH},             /* pH of Arterial blood */
        {"2708-6", SX_F_SO2},            /* Oxygen saturation in Arterial blood */
        {"59408-5", SX_F_SPO2},          /* Oxygen saturation ... by Pulse oximetry */
        {"3150-0", SX_F_FIO2},           /* Inhaled oxygen concentration */
        {"19996-8", SX_F_FIO2},          /* Oxygen/Inspired gas ... on ventilator */
        {"8310-5", SX_F_PATIENT_TEMP_C}, /* Body temperature */
        {"6690-2", SX_F_WBC},            /* Leukocytes [#/volume] in Blood */
        {"718-7", SX_F_HB},              /* Hemoglobin [Mass/volume] in Blood */
        {"777-3", SX_F_PLATELETS},       /* Platelets [#/volume] in Blood */
        {"30525-0", SX_F_PATIENT_AGE_YEARS}, /* Age */
};

static bool is_loinc_system(const char *system)
{
	return !*system || sx_hl7_eq_nocase(system, "LN") || sx_hl7_eq_nocase(system, "LOINC") ||
	       strcmp(system, "2.16.840.1.113883.6.1") == 0;
}

bool sx_hl7_local_system(const char *system)
{
	return !*system || strcmp(system, "L") == 0 || sx_hl7_eq_nocase(system, "99SYX");
}

/* The SX- local code of a field: "SX-" and the data-dictionary name in upper
 * case with hyphens (bubbles -> SX-BUBBLES, fill_volume_ml ->
 * SX-FILL-VOLUME-ML). */
static int local_code(const char *code)
{
	if (strncmp(code, "SX-", 3) != 0)
		return -1;
	if (strcmp(code, "SX-AGENT-PERCENT") == 0)
		return SX_HL7_AGENT_PERCENT;
	for (int f = 0; f < SX_FIELD_COUNT; f++) {
		const char *n = sx_field_get((sx_field)f)->name;
		const char *k = code + 3;
		for (; *n && *k; n++, k++) {
			char want = *n == '_'                  ? '-'
			            : (*n >= 'a' && *n <= 'z') ? (char)(*n - 'a' + 'A')
			                                       : *n;
			if (*k != want)
				break;
		}
		if (!*n && !*k)
			return f;
	}
	return -1;
}

static int lookup_code(sx_hl7_ctx *c, const char *system, const char *code)
{
	if (!*code)
		return -1;
	if (c->opt->map_code) {
		int f = c->opt->map_code(c->opt->map_context, system, code);
		if ((f >= 0 && f < SX_FIELD_COUNT) || f == SX_HL7_AGENT_PERCENT)
			return f;
	}
	if (is_loinc_system(system))
		for (size_t i = 0; i < sizeof loinc / sizeof loinc[0]; i++)
			if (strcmp(loinc[i].code, code) == 0)
				return loinc[i].field;
	if (sx_hl7_local_system(system))
		return local_code(code);
	return -1;
}

/* ---- OBX ---------------------------------------------------------------------- */

static bool type_is(const char *type, const char *const *list)
{
	for (; *list; list++)
		if (strcmp(type, *list) == 0)
			return true;
	return false;
}

static const char *const coded_types[] = {"CWE", "CE", "CNE", "CF", NULL};
static const char *const text_types[] = {"ST", "TX", "FT", "ID", "IS", "", NULL};
static const char *const number_types[] = {"NM", "SN", "ST", "", NULL};
static const char *const time_types[] = {"TS", "DTM", "DT", "ST", "", NULL};

/* The number of an OBX-5 of type NM or SN; false (reported) when there is
 * none. The text goes to *num (a ring buffer). */
static bool obx_number(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *s, const char *type,
                       const char *what, const char **num, size_t *num_len)
{
	char q[80];
	if (strcmp(type, "SN") == 0) {
		size_t lc, l3, l4;
		const char *cmp = sx_hl7_value(c, r->rec, s, 5, 1, 1, 0, true, &lc);
		const char *sep = sx_hl7_value(c, r->rec, s, 5, 1, 3, 0, true, &l3);
		const char *n2;
		*num = sx_hl7_value(c, r->rec, s, 5, 1, 2, 0, true, num_len);
		n2 = sx_hl7_value(c, r->rec, s, 5, 1, 4, 0, true, &l4);
		if (l3 || l4) {
			sx_hl7_report(c, r->rec, SX_ERROR, SX_EINVAL, 102, false, s, 5, 0, 0,
			              "%s: '%s%s%s' is a range or ratio, not one value", what, *num,
			              sep, n2);
			return false;
		}
		if (*num_len == 0) {
			sx_hl7_report(c, r->rec, SX_ERROR, SX_ESYNTAX, 102, false, s, 5, 2, 0,
			              "%s: the structured numeric value has no number", what);
			return false;
		}
		if (lc && strcmp(cmp, "=") != 0) {
			if (strcmp(cmp, ">") && strcmp(cmp, "<") && strcmp(cmp, ">=") &&
			    strcmp(cmp, "<=") && strcmp(cmp, "<>")) {
				sx_hl7_report(c, r->rec, SX_ERROR, SX_ESYNTAX, 102, false, s, 5, 1,
				              0,
				              "%s: '%s' is not a comparator of the SN data type "
				              "(>, <, >=, <=, =, <>)",
				              what, sx_hl7_quoted(cmp, q, sizeof q));
				return false;
			}
			sx_hl7_report(c, r->rec, SX_WARNING, SX_OK, 0, true, s, 5, 0, 0,
			              "%s: '%s%s' is a limit, not a measured value; %s was used",
			              what, cmp, *num, *num);
		}
		return true;
	}
	*num = sx_hl7_value(c, r->rec, s, 5, 1, 0, 0, true, num_len);
	return true;
}

/* The unit of an OBX: OBX-6.1 (UCUM code, or the usual spelling), else
 * OBX-6.2 (its text). */
static const char *obx_unit(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *s)
{
	size_t n;
	const char *u = sx_hl7_value(c, r->rec, s, 6, 1, 1, 0, true, &n);
	if (n == 0)
		u = sx_hl7_value(c, r->rec, s, 6, 1, 2, 0, true, &n);
	return u;
}

/* A choice from a code or text: exact, then lower case, then HL7 table 0136
 * (Y / N) for yes/no fields. 0 when none fits. */
static int choice_of(sx_field f, const char *v, size_t len)
{
	char low[64];
	int ch = sx_field_choice_lookup(f, v, len);
	if (ch || len == 0 || len >= sizeof low)
		return ch;
	for (size_t i = 0; i < len; i++)
		low[i] = (v[i] >= 'A' && v[i] <= 'Z') ? (char)(v[i] - 'A' + 'a') : v[i];
	low[len] = '\0';
	for (size_t i = 0; i < len; i++)
		if (low[i] == ' ' || low[i] == '_')
			low[i] = '-';
	ch = sx_field_choice_lookup(f, low, len);
	if (ch)
		return ch;
	if (f == SX_F_SEALED_CARRIER) {
		if (strcmp(low, "y") == 0)
			return SX_YES;
		if (strcmp(low, "n") == 0)
			return SX_NO;
	}
	return 0;
}

/* The OBX-4 sub-id of an agent observation. */
static void obx_subid(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *s, char *out, size_t size)
{
	size_t n;
	const char *v = sx_hl7_value(c, r->rec, s, 4, 1, 0, 0, true, &n);
	sx_hl7_copy_text(out, size, v);
}

static void obx_agent(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *s, const char *type,
                      bool percent)
{
	sx_hl7_agent_obx *a;
	char q[80];
	size_t n;
	const char *v;

	if (percent ? r->percent_count >= SX_HL7_MAX_AGENT_OBX
	            : r->agent_count >= SX_HL7_MAX_AGENT_OBX) {
		sx_hl7_report(c, r->rec, SX_ERROR, SX_ELIMIT, 102, false, s, 3, 0, 0,
		              "agents: more than %d agent observations in one specimen",
		              SX_HL7_MAX_AGENT_OBX);
		return;
	}
	a = percent ? &r->percents[r->percent_count] : &r->agents[r->agent_count];
	memset(a, 0, sizeof *a);
	a->seg = s;
	obx_subid(c, r, s, a->subid, sizeof a->subid);
	if (percent) {
		const char *unit;
		double pct;
		sx_status st;
		if (!type_is(type, number_types)) {
			sx_hl7_report(
			        c, r->rec, SX_ERROR, SX_EINVAL, 102, false, s, 2, 0, 0,
			        "agents: value type '%s' cannot carry a percentage (NM or SN)",
			        type);
			return;
		}
		if (!obx_number(c, r, s, type, "agents", &v, &n))
			return;
		unit = obx_unit(c, r, s);
		if (*unit && strcmp(unit, "%") && strcmp(unit, "[%]") && strcmp(unit, "vol%")) {
			sx_hl7_report(
			        c, r->rec, SX_ERROR, SX_EUNIT, 103, false, s, 6, 1, 0,
			        "agents: unit '%s' of an agent's concentration; it is given in %%",
			        sx_hl7_quoted(unit, q, sizeof q));
			return;
		}
		st = sx_parse_number(v, n, &pct);
		if (st != SX_OK || pct < 0 || pct > 100) {
			sx_hl7_report(c, r->rec, SX_ERROR, st ? st : SX_ERANGE, 102, false, s, 5, 0,
			              0, "agents: '%s' is not a percentage from 0 to 100",
			              sx_hl7_quoted(v, q, sizeof q));
			return;
		}
		a->percent = pct;
		r->percent_count++;
		return;
	}
	if (type_is(type, coded_types)) {
		v = sx_hl7_value(c, r->rec, s, 5, 1, 1, 0, true, &n);
		if (n == 0)
			v = sx_hl7_value(c, r->rec, s, 5, 1, 2, 0, true, &n);
	} else {
		v = sx_hl7_value(c, r->rec, s, 5, 1, 0, 0, true, &n);
	}
	if (n == 0) {
		sx_hl7_report(c, r->rec, SX_WARNING, SX_OK, 0, false, s, 5, 0, 0,
		              "agents: the observation has no agent name; ignored");
		return;
	}
	if (n >= SX_MAX_AGENT_NAME) {
		sx_hl7_report(c, r->rec, SX_ERROR, SX_ELIMIT, 102, false, s, 5, 0, 0,
		              "agents: agent name '%s' is longer than %d bytes",
		              sx_hl7_quoted(v, q, sizeof q), SX_MAX_AGENT_NAME - 1);
		return;
	}
	memcpy(a->name, v, n + 1);
	a->percent = -1.0;
	r->agent_count++;
}

/* Pair agents with their percentages by OBX-4 sub-id. */
void sx_hl7_finish_agents(sx_hl7_ctx *c, sx_hl7_rec *r)
{
	for (size_t i = 0; i < r->agent_count; i++) {
		sx_hl7_agent_obx *a = &r->agents[i];
		double pct = -1.0;
		sx_status st;
		for (size_t k = 0; k < r->percent_count; k++) {
			sx_hl7_agent_obx *p = &r->percents[k];
			bool alone = r->agent_count == 1 && r->percent_count == 1;
			if (p->used || !(alone || (a->subid[0] && strcmp(a->subid, p->subid) == 0)))
				continue;
			p->used = true;
			pct = p->percent;
			break;
		}
		st = sx_specimen_add_agent(r->s, a->name, strlen(a->name), pct);
		if (st == SX_ELIMIT)
			sx_hl7_report(c, r->rec, SX_ERROR, st, 102, false, a->seg, 5, 0, 0,
			              "agents: more than %d agents", SX_MAX_AGENTS);
		else if (st != SX_OK)
			sx_hl7_report(c, r->rec, SX_ERROR, st, 102, false, a->seg, 5, 0, 0,
			              "agents: agent '%s' is not usable (%s)", a->name,
			              sx_status_message(st));
	}
	for (size_t k = 0; k < r->percent_count; k++)
		if (!r->percents[k].used)
			sx_hl7_report(c, r->rec, SX_ERROR, SX_EINVAL, 102, false,
			              r->percents[k].seg, 4, 0, 0,
			              "agents: a percentage (SX-AGENT-PERCENT, sub-id '%s') with "
			              "no agent "
			              "(SX-AGENTS) of the same OBX-4 sub-id",
			              r->percents[k].subid);
}

/* Result statuses (OBX-11, HL7 table 0085) whose value is not a result. */
static bool status_unused(const char *st)
{
	return strcmp(st, "D") == 0 || strcmp(st, "W") == 0 || strcmp(st, "X") == 0 ||
	       strcmp(st, "N") == 0 || strcmp(st, "I") == 0;
}

void sx_hl7_map_obx(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *s)
{
	char code[128], system[64], type[8];
	const sx_field_info *info;
	size_t n;
	const char *v;
	int target = -1;
	sx_field f;

	for (unsigned alt = 0; alt < 2 && target < 0; alt++) {
		v = sx_hl7_value(c, r->rec, s, 3, 1, alt ? 4 : 1, 0, true, &n);
		sx_hl7_copy_text(code, sizeof code, v);
		v = sx_hl7_value(c, r->rec, s, 3, 1, alt ? 6 : 3, 0, true, &n);
		sx_hl7_copy_text(system, sizeof system, v);
		target = lookup_code(c, system, code);
	}
	if (target < 0)
		return; /* not an observation syrinx reads */
	v = sx_hl7_value(c, r->rec, s, 11, 1, 0, 0, true, &n);
	if (status_unused(v)) {
		sx_hl7_report(c, r->rec, SX_WARNING, SX_OK, 0, false, s, 11, 0, 0,
		              "%s: result status '%s' (HL7 table 0085: %s); the value is not used",
		              code, v,
		              v[0] == 'D'   ? "deleted"
		              : v[0] == 'W' ? "wrong"
		              : v[0] == 'X' ? "cannot be obtained"
		              : v[0] == 'N' ? "not asked"
		                            : "pending");
		return;
	}
	v = sx_hl7_value(c, r->rec, s, 2, 1, 0, 0, true, &n);
	sx_hl7_copy_text(type, sizeof type, v);
	upper(type);
	if (target == SX_HL7_AGENT_PERCENT || target == SX_F_AGENTS) {
		obx_agent(c, r, s, type, target == SX_HL7_AGENT_PERCENT);
		return;
	}
	f = (sx_field)target;
	info = sx_field_get(f);
	if (f == SX_F_COMMENTS) {
		for (unsigned rep = 1;
		     rep <= sx_hl7_pieces(sx_hl7_field(c->m, s, 5), c->m->delims.repetition);
		     rep++) {
			v = sx_hl7_value(c, r->rec, s, 5, rep, type_is(type, coded_types) ? 2 : 0,
			                 0, false, &n);
			sx_hl7_append_comment(c, r, v, n, s, 5);
		}
		return;
	}
	if (r->twice[f])
		return;
	if (r->first_obx[f]) {
		char first[48];
		sx_hl7_location(first, sizeof first, r->first_obx[f], 0, 0, 0);
		sx_hl7_report(c, r->rec, SX_ERROR, SX_EINVAL, 102, false, s, 3, 0, 0,
		              "%s: given twice (first in %s); neither value is used", info->name,
		              first);
		r->twice[f] = true;
		r->s->present[f] = false;
		return;
	}
	r->first_obx[f] = s;
	if (sx_hl7_field(c->m, s, 5).len == 0 || sx_hl7_is_null(sx_hl7_field(c->m, s, 5))) {
		sx_hl7_report(c, r->rec, SX_WARNING, SX_OK, 0, false, s, 5, 0, 0,
		              "%s: the observation has no value", info->name);
		return;
	}
	if (f == SX_F_PO2)
		r->po2_obx = s;

	switch (info->kind) {
	case SX_KIND_NUMBER: {
		const char *unit;
		if (!type_is(type, number_types)) {
			sx_hl7_report(c, r->rec, SX_ERROR, SX_EINVAL, 102, false, s, 2, 0, 0,
			              "%s: value type '%s' cannot carry a number (NM or SN)",
			              info->name, type);
			return;
		}
		if (!obx_number(c, r, s, type, info->name, &v, &n))
			return;
		unit = obx_unit(c, r, s);
		sx_hl7_set_value(c, r, f, v, n, unit, s, 5, 0, 6);
		return;
	}
	case SX_KIND_CHOICE: {
		int ch;
		bool coded = type_is(type, coded_types);
		if (!coded && !type_is(type, text_types)) {
			sx_hl7_report(c, r->rec, SX_ERROR, SX_EINVAL, 102, false, s, 2, 0, 0,
			              "%s: value type '%s' cannot carry a choice (CWE or ST)",
			              info->name, type);
			return;
		}
		v = sx_hl7_value(c, r->rec, s, 5, 1, coded ? 1 : 0, 0, true, &n);
		ch = choice_of(f, v, n);
		if (!ch && coded) {
			size_t tn;
			const char *text = sx_hl7_value(c, r->rec, s, 5, 1, 2, 0, true, &tn);
			ch = choice_of(f, text, tn);
		}
		if (ch) {
			r->s->choice[f] = ch;
			r->s->present[f] = true;
			return;
		}
		sx_hl7_set_value(c, r, f, v, n, NULL, s, 5, coded ? 1 : 0, 0);
		return;
	}
	case SX_KIND_TIME:
		if (!type_is(type, time_types)) {
			sx_hl7_report(c, r->rec, SX_ERROR, SX_EINVAL, 102, false, s, 2, 0, 0,
			              "%s: value type '%s' cannot carry a date/time (DTM or TS)",
			              info->name, type);
			return;
		}
		v = sx_hl7_value(c, r->rec, s, 5, 1, 1, 0, true, &n);
		sx_hl7_set_time(c, r, f, v, n, s, 5, 1, 0);
		return;
	case SX_KIND_TEXT: {
		unsigned comp = type_is(type, coded_types) ? 2 : 0;
		v = sx_hl7_value(c, r->rec, s, 5, 1, comp, 0, false, &n);
		if (n == 0 && comp) {
			comp = 1;
			v = sx_hl7_value(c, r->rec, s, 5, 1, comp, 0, false, &n);
		}
		sx_hl7_set_value(c, r, f, v, n, NULL, s, 5, comp, 0);
		return;
	}
	case SX_KIND_AGENTS:
		return;
	}
}
