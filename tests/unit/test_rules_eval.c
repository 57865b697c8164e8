/* SPDX-License-Identifier: MIT */
/*
 * test_rules_eval.c - the evaluator: conditions over fields and facts with
 * units, sets, presence and their negations; actions (mechanisms with
 * parameter overrides, reasons with rendered messages, bias terms,
 * dispositions and final); the two passes; classification of free text; and
 * the shipped default ruleset against the checks screen.c hard-coded.
 */
#include <check.h>
#include <stdio.h>
#include <string.h>

#include "test_rules_util.h"

/* ---- conditions ---------------------------------------------------------------------- */

#define COND_PRELUDE                                                   \
	"reason hit info \"hit\"\n"                                    \
	"limit room = 30 min\nlimit frac = 7.5 %\nlimit two = 2\n"      \
	"limit tol = 4.5 mmHg\n"                                       \
	"classify agents\n\t/^halothane$/ -> halothane\n\t/^n2o$/ -> nitrous-oxide\nend\n"

static const struct {
	const char *cond;
	const char *fields[6];
	const char *facts[4];
	int want;
} conds[] = {
	{"delay > 30 min", {NULL}, {"delay=31"}, 1},
	{"delay > 30 min", {NULL}, {"delay=30"}, 0},
	{"delay > 30 min", {NULL}, {NULL}, 0},
	{"not (delay > 30 min)", {NULL}, {NULL}, 1},
	{"delay > room", {NULL}, {"delay=30.5"}, 1},
	{"delay >= 0.5 h", {NULL}, {"delay=30"}, 1},
	{"delay < 1800 s", {NULL}, {"delay=29.9"}, 1},
	/* 8 kPa = 60.005 mmHg (1 kPa = 7.50062 mmHg, core/units.h) */
	{"po2 > 8 kPa", {"po2=60.01"}, {NULL}, 1},
	{"po2 > 8 kPa", {"po2=60"}, {NULL}, 0},
	{"wbc >= 100 x10^9/L", {"wbc=100"}, {NULL}, 1},
	{"wbc >= 100 10*3/uL", {"wbc=99.9"}, {NULL}, 0},
	{"fio2 > 21 %", {"fio2=0.3"}, {NULL}, 1},
	{"fio2 == 21 %", {"fio2=0.21"}, {NULL}, 1},
	{"fio2 != 21 %", {"fio2=0.21"}, {NULL}, 0},
	{"fio2 != 21 %", {NULL}, {NULL}, 1},
	{"hb < 7 g/dL", {"hb=6.5"}, {NULL}, 1},
	{"patient_temp_c > 100 [degF]", {"patient_temp_c=38"}, {NULL}, 1},
	{"storage == iced", {"storage=iced"}, {NULL}, 1},
	{"storage != iced", {NULL}, {NULL}, 1},
	{"storage != iced", {"storage=iced"}, {NULL}, 0},
	{"storage in {iced, warm}", {"storage=warm"}, {NULL}, 1},
	{"storage in {iced}", {NULL}, {NULL}, 0},
	{"storage not in {iced, warm}", {NULL}, {NULL}, 1},
	{"storage not in {iced, warm}", {"storage=room"}, {NULL}, 1},
	{"storage is absent", {NULL}, {NULL}, 1},
	{"storage is present", {"storage=room"}, {NULL}, 1},
	{"bubbles in {small, large, froth} or transport == pneumatic-tube",
	 {"transport=pneumatic-tube"}, {NULL}, 1},
	{"bubbles in {small, large, froth} or transport == pneumatic-tube",
	 {"bubbles=none", "transport=hand"}, {NULL}, 0},
	{"agents in {halothane}", {"agent=halothane:1"}, {NULL}, 1},
	{"agents in {halothane}", {"agent=n2o:50"}, {NULL}, 0},
	{"agents is present", {"agent=xenon"}, {NULL}, 1},
	{"agents is absent", {NULL}, {NULL}, 1},
	{"comments matches /froth/i", {"comments=Frothy on arrival"}, {NULL}, 1},
	{"comments matches /froth/", {"comments=Frothy on arrival"}, {NULL}, 0},
	{"not (comments matches /froth/)", {NULL}, {NULL}, 1},
	{"alveolar_excess > frac of alveolar_po2", {NULL},
	 {"alveolar_excess=8", "alveolar_po2=100"}, 1},
	{"alveolar_excess > frac of alveolar_po2", {NULL},
	 {"alveolar_excess=7", "alveolar_po2=100"}, 0},
	{"alveolar_excess > 7.5 % of alveolar_po2", {NULL}, {"alveolar_excess=8"}, 0},
	{"bias_abs > two * tol", {NULL}, {"bias_abs=9.1"}, 1},
	{"bias_abs > two * tol", {NULL}, {"bias_abs=9"}, 0},
	{"bias_abs > 2 * tol", {NULL}, {"bias_abs=9.1"}, 1},
	{"spo2 > saturation_from_po2", {"spo2=97"}, {"saturation_from_po2=60"}, 1},
	{"spo2_gap > 15 %", {NULL}, {"spo2_gap=37"}, 1},
	{"halothane >= 1 %", {NULL}, {"halothane=1"}, 1},
	{"(delay > 5 min or wbc > 50 x10^9/L) and not (storage == iced)", {"wbc=80"}, {NULL}, 1},
	{"(delay > 5 min or wbc > 50 x10^9/L) and not (storage == iced)",
	 {"wbc=80", "storage=iced"}, {NULL}, 0},
	{"location matches /^ICU\\//", {"location=ICU/BED03"}, {NULL}, 1},
	{"specimen_type not in {venous, mixed-venous, cord}", {NULL}, {NULL}, 1},
};

START_TEST(condition_holds_or_not)
{
	char text[2048];
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_specimen s;
	sx_facts f;
	sx_rule_outcome o;
	snprintf(text, sizeof text, "%srule t\n\tif %s\n\treason hit\nend\n", COND_PRELUDE,
		 conds[_i].cond);
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	build_specimen(&s, conds[_i].fields);
	build_facts(&f, conds[_i].facts);
	sx_rule_outcome_init(&o, rs);
	ck_assert_int_eq(sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, &f, &o), SX_OK);
	ck_assert_int_eq(sx_ruleset_evaluate(rs, SX_PASS_AFTER_MODEL, &s, &f, &o), SX_OK);
	ck_assert_msg((int)o.reason_count == conds[_i].want, "%s: got %zu", conds[_i].cond,
		      o.reason_count);
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

/* ---- actions ---------------------------------------------------------------------------- */

START_TEST(actions_and_outcome)
{
	const char *text = "reason late comment \"late\"\n"
			   "reason bad reject \"bad\"\n"
			   "reason note info \"note\"\n"
			   "rule on\n\tif delay is present\n"
			   "\tapply metabolism with metabolism.q10 = 2.5 (2 to 3), "
			   "site.room_temperature = 25 Cel\n"
			   "\tbias local-cold -2 mmHg (-4 to 0 kPa)\nend\n"
			   "rule info-only\n\treason note\nend\n"
			   "rule late\n\tif delay > 30 min\n\treason late\nend\n"
			   "rule again\n\tif delay > 30 min\n\tapply metabolism\nend\n"
			   "rule after\n\tif bias_abs > 10 mmHg\n\treason bad\nend\n";
	const char *const facts[] = {"delay=45", "bias_abs=12", NULL};
	const char *const fields[] = {"specimen_id=X", NULL};
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_specimen s;
	sx_facts f;
	sx_rule_outcome o;
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	build_specimen(&s, fields);
	build_facts(&f, facts);
	sx_rule_outcome_init(&o, rs);
	ck_assert_int_eq(o.disposition, -1);
	ck_assert_int_eq(sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, &f, &o), SX_OK);
	ck_assert_str_eq(mechanisms_on(&o), "metabolism");
	ck_assert_str_eq(o.mechanism_rule[SX_MECH_METABOLISM], "t.rules:5"); /* the first */
	ck_assert_double_eq_tol(o.settings.q10.low, 2.0, 1e-12);
	ck_assert_double_eq_tol(o.settings.q10.nominal, 2.5, 1e-12);
	ck_assert_double_eq_tol(o.settings.room_temp_c, 25.0, 1e-12);
	/* the ruleset's own settings are untouched */
	ck_assert_double_eq_tol(sx_ruleset_settings(rs)->room_temp_c, 22.0, 1e-12);
	ck_assert_uint_eq(o.term_count, 1);
	ck_assert_str_eq(o.terms[0].label, "local-cold");
	ck_assert_double_eq_tol(o.terms[0].bias_mmhg.nominal, -2.0, 1e-12);
	/* 0 kPa and -4 mmHg: the range keeps each number's own unit */
	ck_assert_double_eq_tol(o.terms[0].bias_mmhg.low, -4.0 * 7.50062, 1e-9);
	ck_assert_double_eq_tol(o.terms[0].bias_mmhg.high, 0.0, 1e-12);
	ck_assert_str_eq(reason_codes(&o), "note,late");
	ck_assert_int_eq(o.reasons[0].severity, SX_REASON_INFO);
	ck_assert_str_eq(o.reasons[1].rule, "t.rules:13");
	ck_assert_int_eq(o.disposition, SX_COMMENT);
	ck_assert_str_eq(o.disposition_rule, "t.rules:13");
	ck_assert_int_eq(sx_ruleset_evaluate(rs, SX_PASS_AFTER_MODEL, &s, &f, &o), SX_OK);
	ck_assert_str_eq(reason_codes(&o), "note,late,bad");
	ck_assert_int_eq(o.disposition, SX_REJECT);
	ck_assert_str_eq(o.disposition_rule, "t.rules:21");
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(final_ends_both_passes)
{
	const char *text = "reason late comment \"late\"\n"
			   "reason big reject \"big\"\n"
			   "rule accept-icu\n\tif location matches /^ICU/\n\tdisposition accept final\nend\n"
			   "rule late\n\tif delay > 30 min\n\treason late\nend\n"
			   "rule big\n\tif bias_abs > 1 mmHg\n\treason big\nend\n";
	const char *const icu[] = {"location=ICU/BED1", NULL};
	const char *const ward[] = {"location=WARD7", NULL};
	const char *const facts[] = {"delay=45", "bias_abs=5", NULL};
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_specimen s;
	sx_facts f;
	sx_rule_outcome o;
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	build_facts(&f, facts);
	build_specimen(&s, icu);
	sx_rule_outcome_init(&o, rs);
	sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, &f, &o);
	sx_ruleset_evaluate(rs, SX_PASS_AFTER_MODEL, &s, &f, &o);
	ck_assert(o.final);
	ck_assert_int_eq(o.disposition, SX_ACCEPT);
	ck_assert_str_eq(o.disposition_rule, "t.rules:4");
	ck_assert_uint_eq(o.reason_count, 0);
	sx_specimen_clear(&s);
	build_specimen(&s, ward);
	sx_rule_outcome_init(&o, rs);
	sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, &f, &o);
	sx_ruleset_evaluate(rs, SX_PASS_AFTER_MODEL, &s, &f, &o);
	ck_assert(!o.final);
	ck_assert_str_eq(reason_codes(&o), "late,big");
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(reasons_past_the_maximum_are_counted)
{
	char text[16384];
	size_t n = 0;
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_specimen s;
	sx_rule_outcome o;
	n += (size_t)snprintf(text + n, sizeof text - n, "reason r info \"r\"\n");
	for (int i = 0; i < SX_MAX_REASONS + 5; i++)
		n += (size_t)snprintf(text + n, sizeof text - n, "rule r%d\n\treason r\nend\n", i);
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	build_specimen(&s, NULL);
	sx_rule_outcome_init(&o, rs);
	sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, NULL, &o);
	ck_assert_uint_eq(o.reason_count, SX_MAX_REASONS);
	ck_assert_uint_eq(o.reasons_dropped, 5);
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(bad_arguments)
{
	sx_rule_outcome o;
	sx_specimen s;
	sx_specimen_init(&s);
	sx_rule_outcome_init(&o, NULL);
	ck_assert_int_eq(o.disposition, -1);
	ck_assert_int_eq(sx_ruleset_evaluate(NULL, SX_PASS_BEFORE_MODEL, &s, NULL, &o), SX_EINVAL);
	ck_assert_int_eq(sx_ruleset_classify(NULL, &s, NULL), SX_EINVAL);
	ck_assert_ptr_null(sx_ruleset_settings(NULL));
	ck_assert_str_eq(sx_ruleset_version(NULL), "");
	sx_ruleset_free(NULL);
}
END_TEST

/* ---- messages ------------------------------------------------------------------------------ */

static const struct {
	const char *tpl;
	const char *fields[6];
	const char *facts[3];
	const char *want;
} messages[] = {
	{"analysed {delay} after collection", {NULL}, {"delay=42"}, "analysed 42 min after collection"},
	{"{delay:.0}", {NULL}, {"delay=42.4"}, "42 min"},
	{"{delay:.2}", {NULL}, {"delay=42.4"}, "42.40 min"},
	{"{bias:+.1}", {NULL}, {"bias=5.24"}, "+5.2 mmHg"},
	{"{bias:+.1}", {NULL}, {"bias=-0.04"}, "0.0 mmHg"},
	{"{bias}", {NULL}, {"bias=-12.345"}, "-12.3 mmHg"},
	{"{bias}", {NULL}, {NULL}, "not known"},
	{"{po2}", {"po2=140"}, {NULL}, "140 mmHg"},
	{"{po2}", {NULL}, {NULL}, "not given"},
	{"FiO2 {fio2} ({fio2:.2})", {"fio2=0.21"}, {NULL}, "FiO2 0.21 (0.21)"},
	{"{spo2}", {"spo2=97"}, {NULL}, "97 %"},
	{"{wbc}", {"wbc=80"}, {NULL}, "80 x10^9/L"},
	{"{patient_temp_c}", {"patient_temp_c=37.4"}, {NULL}, "37.4 \xC2\xB0" "C"},
	{"{storage}", {"storage=iced"}, {NULL}, "iced"},
	{"{agents}", {"agent=halothane:1", "agent=nitrous-oxide:66"}, {NULL},
	 "halothane 1 %, nitrous-oxide 66 %"},
	{"{agents}", {"agent=xenon"}, {NULL}, "xenon"},
	{"{collected_at}", {"collected_at=2026-03-14T07:02+01:00"}, {NULL}, "2026-03-14T07:02+01:00"},
	{"{location}", {"location=ICU/BED03"}, {NULL}, "ICU/BED03"},
	{"{room} and {room:.1}", {NULL}, {NULL}, "30 min and 30.0 min"},
	{"{site.altitude} {site.utc_offset} {metabolism.q10}", {NULL}, {NULL}, "250 m +01:00 2"},
	{"{{literal}} and \\\"quoted\\\"", {NULL}, {NULL}, "{literal} and \"quoted\""},
	{"brace } alone", {NULL}, {NULL}, "brace } alone"},
};

START_TEST(message_rendering)
{
	char text[2048];
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_specimen s;
	sx_facts f;
	sx_rule_outcome o;
	snprintf(text, sizeof text,
		 "set site.altitude = 250 m\nset site.utc_offset = +01:00\n"
		 "limit room = 30 min\nreason m info \"%s\"\nrule t\n\treason m\nend\n"
		 "rule u\n\tif bias is present or bias is absent\n\treason m\nend\n",
		 messages[_i].tpl);
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	build_specimen(&s, messages[_i].fields);
	build_facts(&f, messages[_i].facts);
	sx_rule_outcome_init(&o, rs);
	sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, &f, &o);
	sx_ruleset_evaluate(rs, SX_PASS_AFTER_MODEL, &s, &f, &o);
	ck_assert_uint_ge(o.reason_count, 1);
	ck_assert_str_eq(o.reasons[0].message, messages[_i].want);
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(long_messages_are_cut_visibly)
{
	char text[4096], comments[600];
	const char *fields[] = {"comments=", NULL};
	char pair[700];
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_specimen s;
	sx_rule_outcome o;
	size_t len;
	memset(comments, 'x', sizeof comments - 1);
	comments[sizeof comments - 1] = '\0';
	snprintf(pair, sizeof pair, "comments=%s", comments);
	fields[0] = pair;
	snprintf(text, sizeof text,
		 "reason m info \"%s {comments} %s\"\nrule t\n\treason m\nend\n",
		 "the comments of the reception desk were these, in full:",
		 "and this text goes on beyond what a reason message can hold, so it is cut "
		 "with three dots at its end: so far, so good; more words to make it long "
		 "enough: one two three four five six seven eight nine ten eleven twelve");
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	build_specimen(&s, fields);
	sx_rule_outcome_init(&o, rs);
	sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, NULL, &o);
	len = strlen(o.reasons[0].message);
	ck_assert_uint_eq(len, sizeof o.reasons[0].message - 1);
	ck_assert_str_eq(o.reasons[0].message + len - 3, "...");
	/* a text field is quoted to 80 bytes at most */
	ck_assert(strstr(o.reasons[0].message, "xxx...") != NULL);
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

/* ---- classification ---------------------------------------------------------------------- */

#define CLASSIFY_RULES                                                          \
	"classify transport from transport_note, comments\n"                    \
	"\t/\\b(pneumatic|tube)\\b/i -> pneumatic-tube\n"                       \
	"\t/\\b(porter|walked|hand)\\b/i -> hand\n"                             \
	"end\n"                                                                 \
	"classify bubbles from comments\n"                                      \
	"\t/\\b(froth|foam)/i -> froth\n"                                       \
	"\t/\\bair bubbles?\\b/i -> small\n"                                    \
	"end\n"                                                                 \
	"classify agents\n"                                                     \
	"\t/^\\s*(halothane|fluothane)\\s*$/i -> halothane\n"                   \
	"\t/^\\s*(nitrous[ -]?oxide|n2o)\\s*$/i -> nitrous-oxide\n"             \
	"end\n"

static const struct {
	const char *fields[5];
	const char *field;   /* what to look at */
	const char *want;    /* its value after classifying ("" absent) */
	size_t notes;        /* warnings added */
} classify_cases[] = {
	{{"transport_note=sent by tube, carrier not sealed"}, "transport", "pneumatic-tube", 1},
	{{"transport_note=walked over by porter"}, "transport", "hand", 1},
	{{"transport_note=Pneumatic station 7"}, "transport", "pneumatic-tube", 1},
	/* the feed's value is never changed */
	{{"transport=courier", "transport_note=sent by tube"}, "transport", "courier", 0},
	/* the first pattern that matches decides */
	{{"transport_note=porter took it to the tube station"}, "transport", "pneumatic-tube", 1},
	/* patterns come first: the first pattern that matches in any source decides */
	{{"transport_note=walked", "comments=tube"}, "transport", "pneumatic-tube", 1},
	/* then the sources in the order written: transport_note before comments */
	{{"transport_note=hand carried", "comments=walked"}, "transport", "hand", 1},
	{{"comments=tube"}, "transport", "pneumatic-tube", 1},
	{{"transport_note=by ambulance"}, "transport", "", 0},
	{{"comments=specimen frothy on arrival"}, "bubbles", "froth", 1},
	{{"comments=one air bubble seen"}, "bubbles", "small", 1},
	{{"agent=Fluothane:1"}, "agents", "halothane", 1},
	{{"agent=halothane:1"}, "agents", "halothane", 0},
	{{"agent=N2O:50"}, "agents", "nitrous-oxide", 1},
	{{"agent=nitrous oxide:50"}, "agents", "nitrous-oxide", 1},
	{{"agent=xenon:50"}, "agents", "xenon", 1},
};

START_TEST(classification)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d, notes;
	sx_specimen s;
	char got[64] = "";
	int f;
	ck_assert_int_eq(load_text(CLASSIFY_RULES, &rs, &d), SX_OK);
	build_specimen(&s, classify_cases[_i].fields);
	s.source = "feed.xml";
	s.source_line = 7;
	sx_diag_list_init(&notes);
	ck_assert_int_eq(sx_ruleset_classify(rs, &s, &notes), SX_OK);
	f = sx_field_lookup(classify_cases[_i].field, strlen(classify_cases[_i].field));
	if (f == SX_F_AGENTS)
		snprintf(got, sizeof got, "%s", s.agents[0].name);
	else if (sx_specimen_has(&s, (sx_field)f))
		snprintf(got, sizeof got, "%s", sx_field_choice_name((sx_field)f, s.choice[f]));
	ck_assert_str_eq(got, classify_cases[_i].want);
	ck_assert_uint_eq(notes.count, classify_cases[_i].notes);
	for (size_t i = 0; i < notes.count; i++) {
		ck_assert_int_eq(notes.items[i].severity, SX_WARNING);
		ck_assert_str_eq(notes.items[i].file, "feed.xml");
		ck_assert_uint_eq(notes.items[i].line, 7);
	}
	sx_diag_list_clear(&notes);
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(classification_notes_say_what_and_where)
{
	const char *const fields[] = {"specimen_id=BG-1", "transport_note=sent by tube",
				      "agent=Fluothane:1", "agent=xenon", NULL};
	sx_ruleset *rs = NULL;
	sx_diag_list d, notes;
	sx_specimen s;
	ck_assert_int_eq(load_text(CLASSIFY_RULES, &rs, &d), SX_OK);
	build_specimen(&s, fields);
	sx_diag_list_init(&notes);
	ck_assert_int_eq(sx_ruleset_classify(rs, &s, &notes), SX_OK);
	ck_assert_uint_eq(notes.count, 3);
	ck_assert_str_eq(notes.items[0].message,
			 "transport: pneumatic-tube, read from transport_note \"sent by tube\" "
			 "(t.rules:3)");
	ck_assert_str_eq(notes.items[0].specimen_id, "BG-1");
	ck_assert_str_eq(notes.items[0].field, "transport");
	ck_assert_str_eq(notes.items[1].message, "agents: 'fluothane' read as halothane (t.rules:11)");
	ck_assert_str_eq(notes.items[2].message,
			 "agents: 'xenon' is not an agent the ruleset knows; it is kept as given");
	sx_diag_list_clear(&notes);
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

/* ---- the default ruleset against what screen.c hard-coded --------------------------------- */

static sx_ruleset *default_rules;

static void load_default(void)
{
	char path[512];
	sx_diag_list d;
	snprintf(path, sizeof path, "%s/rulesets/default", srcdir());
	sx_diag_list_init(&d);
	ck_assert_int_eq(sx_ruleset_load(path, &default_rules, &d), SX_OK);
	sx_diag_list_clear(&d);
}

static void free_default(void)
{
	sx_ruleset_free(default_rules);
	default_rules = NULL;
}

/*
 * Each row is a situation of src/model/screen.c's check_delay(), check_alveolar()
 * and apply_policy(), with the reasons those gave; sources of the thresholds are
 * in rulesets/default/10-limits.rules (CLSI C46-A2 [M]: 30 min room, 5 min high
 * leukocytes; one hospital laboratory [R]: 60 min any storage; analyser
 * performance [R, quoted]: 0.6 kPa and 7.5 %).
 */
static const struct {
	const char *fields[6];
	const char *facts[5];
	const char *reasons;
	int disposition;
	const char *message;   /* of the first reason, when given */
} policy_cases[] = {
	{{"storage=room", "wbc=7"}, {"delay=45"}, "delay-beyond-limit", SX_COMMENT,
	 "analysed 45 min after collection; the limit at room temperature is 30 min"},
	{{"storage=room"}, {"delay=30"}, "", -1, NULL},
	{{NULL}, {"delay=45"}, "delay-beyond-limit", SX_COMMENT, NULL},
	{{"storage=room"}, {"delay=75"}, "delay-too-long", SX_REJECT,
	 "analysed 75 min after collection; the limit for any storage is 60 min"},
	{{"storage=iced"}, {"delay=45"}, "", -1, NULL},
	{{"storage=iced"}, {"delay=61"}, "delay-too-long", SX_REJECT, NULL},
	{{"storage=room", "wbc=80"}, {"delay=10"}, "delay-beyond-limit", SX_COMMENT,
	 "analysed 10 min after collection; the limit with a high leukocyte count (80 x10^9/L) "
	 "is 5 min"},
	{{"storage=iced", "wbc=400"}, {"delay=5"}, "", -1, NULL},
	{{"storage=iced", "wbc=310"}, {"delay=40"}, "delay-beyond-limit", SX_COMMENT, NULL},
	{{"storage=room", "wbc=50"}, {"delay=61"}, "delay-too-long", SX_REJECT, NULL},
	/* alveolar gas: 140 mmHg on room air */
	{{"specimen_type=arterial", "po2=140", "fio2=0.21"},
	 {"alveolar_po2=100", "alveolar_excess=40"},
	 "po2-above-alveolar", SX_REJECT,
	 "pO2 140 mmHg is above the alveolar pO2 of 100 mmHg that FiO2 0.21 allows (alveolar gas "
	 "equation); air in the specimen or a wrong FiO2 is likely"},
	{{"po2=140", "fio2=0.21"}, {"alveolar_po2=100", "alveolar_excess=40"},
	 "po2-above-alveolar", SX_REJECT, NULL},
	{{"specimen_type=venous", "po2=140", "fio2=0.21"},
	 {"alveolar_po2=100", "alveolar_excess=40"}, "", -1, NULL},
	{{"specimen_type=cord", "po2=140"}, {"alveolar_po2=100", "alveolar_excess=40"}, "", -1, NULL},
	/* within the larger of 4.5 mmHg and 7.5 % of the alveolar pO2 */
	{{"specimen_type=arterial"}, {"alveolar_po2=100", "alveolar_excess=6"}, "", -1, NULL},
	{{"specimen_type=arterial"}, {"alveolar_po2=40", "alveolar_excess=4"}, "", -1, NULL},
	{{"specimen_type=arterial"}, {"alveolar_po2=40", "alveolar_excess=5"},
	 "po2-above-alveolar", SX_REJECT, NULL},
	/* arterial that looks venous */
	{{"specimen_type=arterial", "po2=32", "spo2=97"},
	 {"saturation_from_po2=60", "spo2_gap=37"}, "arterial-looks-venous", SX_COMMENT,
	 "an arterial pO2 of 32 mmHg gives a saturation of 60 % against an SpO2 of 97 %: the "
	 "specimen looks venous"},
	{{"specimen_type=capillary"}, {"spo2_gap=37"}, "", -1, NULL},
	/* the bias after the model: the larger of 4.5 mmHg and 7.5 % of the reading */
	{{NULL}, {"bias=-5", "bias_abs=5", "bias_percent=5"}, "", -1, NULL},
	{{NULL}, {"bias=-8", "bias_abs=8", "bias_percent=16"}, "bias-beyond-allowable", SX_COMMENT,
	 "estimated pO2 bias -8.0 mmHg exceeds the allowable error (the larger of 0.6 kPa and "
	 "7.5 % of the reading)"},
	{{NULL}, {"bias=-10", "bias_abs=10", "bias_percent=10"}, "bias-beyond-allowable",
	 SX_COMMENT, NULL},
	{{NULL}, {"bias=20", "bias_abs=20", "bias_percent=20"}, "bias-reject", SX_REJECT,
	 "estimated pO2 bias +20.0 mmHg is more than 2 times the allowable error (the larger of "
	 "0.6 kPa and 7.5 % of the reading)"},
	{{NULL}, {"bias=-20", "bias_abs=20", "bias_percent=10"}, "bias-beyond-allowable",
	 SX_COMMENT, NULL},
	{{NULL}, {"bias=-4", "bias_abs=4", "bias_percent=50"}, "", -1, NULL},
};

START_TEST(default_policy)
{
	sx_specimen s;
	sx_facts f;
	sx_rule_outcome o;
	build_specimen(&s, policy_cases[_i].fields);
	build_facts(&f, policy_cases[_i].facts);
	sx_rule_outcome_init(&o, default_rules);
	ck_assert_int_eq(sx_ruleset_evaluate(default_rules, SX_PASS_BEFORE_MODEL, &s, &f, &o), SX_OK);
	ck_assert_int_eq(sx_ruleset_evaluate(default_rules, SX_PASS_AFTER_MODEL, &s, &f, &o), SX_OK);
	ck_assert_str_eq(reason_codes(&o), policy_cases[_i].reasons);
	ck_assert_int_eq(o.disposition, policy_cases[_i].disposition);
	if (policy_cases[_i].message)
		ck_assert_str_eq(o.reasons[0].message, policy_cases[_i].message);
	for (size_t i = 0; i < o.reason_count; i++)
		ck_assert(strstr(o.reasons[i].rule, "default/") != NULL);
	sx_specimen_clear(&s);
}
END_TEST

static const struct {
	const char *fields[4];
	const char *facts[2];
	const char *mechanisms;
} mechanism_cases[] = {
	{{NULL}, {"delay=4"}, "metabolism"},
	{{NULL}, {NULL}, ""},
	{{"bubbles=small"}, {NULL}, "air-exchange"},
	{{"bubbles=none", "transport=pneumatic-tube"}, {NULL}, "air-exchange"},
	{{"bubbles=expelled", "transport=hand"}, {NULL}, ""},
	{{"container=plastic-syringe"}, {"delay=4"}, "metabolism,syringe-wall"},
	{{"container=glass-syringe"}, {NULL}, ""},
	{{"anticoagulant=liquid-heparin"}, {NULL}, "heparin-dilution"},
	{{"agent=sevoflurane:2.1"}, {NULL}, "electrode-interference"},
};

START_TEST(default_mechanisms)
{
	sx_specimen s;
	sx_facts f;
	sx_rule_outcome o;
	build_specimen(&s, mechanism_cases[_i].fields);
	build_facts(&f, mechanism_cases[_i].facts);
	sx_rule_outcome_init(&o, default_rules);
	ck_assert_int_eq(sx_ruleset_evaluate(default_rules, SX_PASS_BEFORE_MODEL, &s, &f, &o), SX_OK);
	ck_assert_str_eq(mechanisms_on(&o), mechanism_cases[_i].mechanisms);
	sx_specimen_clear(&s);
}
END_TEST

START_TEST(default_agents_and_spellings)
{
	const char *const fields[] = {"agent=Fluothane:1", "agent=N2O:66", "agent=sevo:2",
				      "agent=Forane:1.1", "agent=des:6", "agent=nitrous oxide:50",
				      NULL};
	const char *want[] = {"halothane", "nitrous-oxide", "sevoflurane", "isoflurane",
			      "desflurane", "nitrous-oxide"};
	sx_specimen s;
	sx_diag_list notes;
	sx_range r;
	build_specimen(&s, fields);
	sx_diag_list_init(&notes);
	ck_assert_int_eq(sx_ruleset_classify(default_rules, &s, &notes), SX_OK);
	for (size_t i = 0; i < 6; i++)
		ck_assert_str_eq(s.agents[i].name, want[i]);
	/* halothane: 0.03 of the reading per % (0 to 0.10): McHugh et al. 1979 [R] for the
	 * direction, the size [M, low confidence] (rulesets/default/40-agents.rules) */
	ck_assert(sx_ruleset_agent_sensitivity(default_rules, "halothane", &r));
	ck_assert_double_eq_tol(r.nominal, 0.03, 1e-12);
	ck_assert_double_eq_tol(r.high, 0.10, 1e-12);
	ck_assert(sx_ruleset_agent_sensitivity(default_rules, "sevoflurane", &r));
	ck_assert_double_eq_tol(r.nominal, 0.0, 1e-12);
	ck_assert_double_eq_tol(r.high, 0.005, 1e-12);
	sx_diag_list_clear(&notes);
	sx_specimen_clear(&s);
}
END_TEST

static Suite *suite(void)
{
	Suite *s = suite_create("rules-eval");
	TCase *t = tcase_create("conditions");
	tcase_add_loop_test(t, condition_holds_or_not, 0, sizeof conds / sizeof conds[0]);
	suite_add_tcase(s, t);
	t = tcase_create("actions");
	tcase_add_test(t, actions_and_outcome);
	tcase_add_test(t, final_ends_both_passes);
	tcase_add_test(t, reasons_past_the_maximum_are_counted);
	tcase_add_test(t, bad_arguments);
	tcase_add_loop_test(t, message_rendering, 0, sizeof messages / sizeof messages[0]);
	tcase_add_test(t, long_messages_are_cut_visibly);
	suite_add_tcase(s, t);
	t = tcase_create("classify");
	tcase_add_loop_test(t, classification, 0, sizeof classify_cases / sizeof classify_cases[0]);
	tcase_add_test(t, classification_notes_say_what_and_where);
	suite_add_tcase(s, t);
	t = tcase_create("default");
	tcase_add_unchecked_fixture(t, load_default, free_default);
	tcase_add_loop_test(t, default_policy, 0, sizeof policy_cases / sizeof policy_cases[0]);
	tcase_add_loop_test(t, default_mechanisms, 0,
			    sizeof mechanism_cases / sizeof mechanism_cases[0]);
	tcase_add_test(t, default_agents_and_spellings);
	suite_add_tcase(s, t);
	return s;
}

int main(void)
{
	SRunner *r = srunner_create(suite());
	int failed;
	srunner_run_all(r, CK_NORMAL);
	failed = srunner_ntests_failed(r);
	srunner_free(r);
	return failed ? 1 : 0;
}
