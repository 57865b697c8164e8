/* SPDX-License-Identifier: MIT */
/*
 * test_rules_compile.c - the rule compiler: names, units and choices
 * resolved with errors at their exact spot; warnings (unreachable rules,
 * unused limits and settings, reason codes defined twice, units left out);
 * settings through the parameter registry with their origin; passes; code
 * mappings; agent sensitivities; rulesets in folders with include, base,
 * replace and drop; all-or-nothing loading, also when memory runs out.
 */
#include <check.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "test_rules_util.h"

/* ---- errors and warnings, one each ------------------------------------------------------ */

/* Line 1 of every text is the version line load_text adds; a case with
 * warning: in want loads (status OK), one with error: does not. */
static const struct {
	const char *text;
	const char *want;
} cases[] = {
	/* names */
	{"rule r\n\tif dealy > 3 min\n\tdisposition comment\nend\n",
	 "3:5: error: unknown field or fact 'dealy' (did you mean 'delay'?)"},
	{"limit room = 30 min\nrule r\n\tif room > 3 min\n\tdisposition comment\nend\n",
	 "4:5: error: 'room' is a limit; a test starts with the field or fact (such as delay > "
	 "room)"},
	{"limit room = 30 min\nrule r\n\tif delay > rom\n\tdisposition comment\nend\n",
	 "4:13: error: unknown limit 'rom' (did you mean 'room'?)"},
	{"rule r\n\tif storage == ice\n\tdisposition comment\nend\n",
	 "3:16: error: 'ice' is not a choice of storage (room, iced, warm, unknown)"},
	{"rule r\n\tif bubbles in {small, big}\n\tdisposition comment\nend\n",
	 "3:24: error: 'big' is not a choice of bubbles (none, small, large, froth, expelled)"},
	{"rule r\n\tif storage > room\n\tdisposition comment\nend\n",
	 "3:13: error: storage is a choice; compare it with == or !=, or test it with 'in'"},
	{"rule r\n\tif wbc in {high}\n\tdisposition comment\nend\n",
	 "3:9: error: 'in' tests a choice field or agents; wbc is a number: compare it with <, "
	 "<=, >, >="},
	{"rule r\n\tif collected_at > 3 min\n\tdisposition comment\nend\n",
	 "3:18: error: collected_at is a time (compare the delays: delay, transport_time, "
	 "wait_time); it cannot be compared with <, <=, >, >=, ==, !="},
	{"rule r\n\tif wbc matches /x/\n\tdisposition comment\nend\n",
	 "3:5: error: matches tests a text field (comments, transport_note, location, ...); wbc "
	 "is not one"},
	{"rule r\n\tif agents in {halothan}\n\tdisposition comment\nend\n"
	 "classify agents\n\t/halo/i -> halothane\nend\n",
	 "3:16: error: 'halothan' is not a canonical agent name (classify agents gives them); "
	 "did you mean 'halothane'?"},
	{"rule r\n\tif delay > 3 min\n\tapply metabolsim\nend\n",
	 "4:8: error: unknown mechanism 'metabolsim' (did you mean 'metabolism'?)"},
	{"rule r\n\tif delay > 3 min\n\treason late\nend\n",
	 "4:9: error: reason code 'late' is not defined; define it with: reason late SEVERITY "
	 "\"message\""},
	{"rule r\n\tif delay > 3 min\n\tdisposition coment\nend\n",
	 "4:14: error: expected a disposition (accept, comment or reject), found 'coment'"},
	{"set site.altitud = 3 m\n",
	 "2:5: error: unknown setting 'site.altitud' (did you mean 'site.altitude'?)"},
	{"rule r\n\tapply metabolism with metabolism.q11 = 2\nend\n",
	 "3:24: error: unknown setting 'metabolism.q11' (did you mean 'metabolism.q10'?)"},
	/* units */
	{"rule r\n\tif delay > 30 mins\n\tdisposition comment\nend\n",
	 "3:16: error: unit 'mins' does not fit delay, a duration (min, s, h)"},
	{"rule r\n\tif po2 > 30 min\n\tdisposition comment\nend\n",
	 "3:14: error: unit 'min' does not fit po2, a pressure (mmHg, kPa)"},
	{"limit room = 30 min\nrule r\n\tif po2 > room\n\tdisposition comment\nend\n",
	 "4:11: error: limit 'room' is 30 min, which does not fit po2, a pressure (mmHg, kPa)"},
	{"limit x = 3 mins\n",
	 "2:13: error: unknown unit 'mins' (docs/units-and-times.md lists the units)"},
	{"rule r\n\tif fio2 > 40\n\tdisposition comment\nend\n",
	 "3:12: error: fio2 is a fraction; a bare 40 above 1 is not read as a percentage: write "
	 "40 %"},
	{"rule r\n\tif ph > 7 mmHg\n\tdisposition comment\nend\n",
	 "3:12: error: ph is a bare number; 'mmHg' does not fit it"},
	{"set site.altitude = 25 kPa\n",
	 "2:24: error: unit 'kPa' does not fit setting site.altitude, an altitude (m, ft)"},
	{"set metabolism.q10 = 9\n", "2:22: error: metabolism.q10 must lie within 1 to 5"},
	{"set metabolism.q10 = 4 (1.9 to 3)\n",
	 "2:22: error: metabolism.q10: the range must hold the value (low <= value <= high)"},
	{"set site.room_temperature = 22 (20 to 25 Cel)\n",
	 "2:33: error: site.room_temperature takes one value, not a range (only parameters with "
	 "a published range do)"},
	{"set site.utc_offset = 1\n", "2:23: error: site.utc_offset takes a UTC offset such as +01:00"},
	{"set metabolism.blood_rate = 0.01 mmHg\n",
	 "2:34: error: setting metabolism.blood_rate is in mL/dL/min; 'mmHg' does not fit it"},
	{"rule r\n\tbias local -2 min\nend\n",
	 "3:16: error: unit 'min' does not fit bias local, a pressure (mmHg, kPa)"},
	{"rule r\n\tbias local -2 mmHg (0 to 4 mmHg)\nend\n",
	 "3:13: error: the range must hold the bias (low <= value <= high)"},
	{"limit f = 2 min\nrule r\n\tif bias_abs > f * bias_low\n\tdisposition comment\nend\n",
	 "4:20: error: unknown limit 'bias_low'"},
	{"limit f = 2 min\nlimit a = 4 mmHg\nrule r\n\tif bias_abs > f * a\n\tdisposition "
	 "comment\nend\n",
	 "5:16: error: limit 'f' is 2 min, which does not fit a factor before '*', a bare number "
	 "(no unit)"},
	{"rule r\n\tif alveolar_excess > 7.5 % of delay\n\tdisposition comment\nend\n",
	 "3:32: error: delay is a duration; a share of it cannot be compared with "
	 "alveolar_excess"},
	{"rule r\n\tif po2 > delay\n\tdisposition comment\nend\n",
	 "3:11: error: delay is a duration; it cannot be compared with po2"},
	/* passes */
	{"rule r\n\tif bias_abs > 5 mmHg\n\tapply metabolism\nend\n",
	 "4:2: error: rule 'r' runs after the model (it reads the bias); 'apply' must come "
	 "before the model: put it in a rule of its own"},
	{"reason big comment \"bias {bias}\"\nrule r\n\treason big\n\tbias local 1 mmHg\nend\n",
	 "5:2: error: rule 'r' runs after the model (it reads the bias); 'bias' must come before "
	 "the model: put it in a rule of its own"},
	/* templates */
	{"reason late comment \"after {dealy}\"\n",
	 "2:29: error: unknown name 'dealy' in the message (did you mean 'delay'?)"},
	{"reason late comment \"after {delay:.9}\"\n",
	 "2:36: error: expected 0 to 6 decimals after '.' in a format"},
	{"reason late comment \"after {delay\"\n",
	 "2:28: error: '{' not closed in the message (write {{ for a brace)"},
	{"reason late comment \"after {}\"\n", "2:28: error: empty reference '{}' in the message"},
	/* definitions */
	{"reason Late comment \"x\"\n",
	 "2:8: error: reason code 'Late' is not kebab-case (lower-case words joined by '-', at "
	 "most 47 characters)"},
	{"reason late severe \"x\"\n",
	 "2:13: error: expected a severity (info, comment or reject), found 'severe'"},
	{"limit x = 3 min\nlimit x = 4 min\n",
	 "3:7: error: limit 'x' is defined twice (first at t.rules:2)"},
	{"limit delay = 3 min\n", "2:7: error: 'delay' is a field or fact; a limit needs a name of its own"},
	{"rule x\n\tdisposition comment\nend\nrule x\n\tdisposition comment\nend\n",
	 "5:6: error: rule 'x' is defined twice (first at t.rules:2)"},
	{"replace rule x\n\tdisposition comment\nend\n",
	 "2:14: error: there is no rule 'x' in the base to replace"},
	{"drop rule x\n", "2:11: error: there is no rule 'x' in the base to drop"},
	{"version \"a\"\nversion \"b\"\n",
	 "2:1: error: a ruleset has one version line; the first is at t.rules:1"},
	{"classify wbc from comments\n\t/x/ -> high\nend\n",
	 "2:10: error: wbc is not a choice field; classify fills a choice field (specimen_type, "
	 "container, ...) or agents"},
	{"classify transport from wbc\n\t/x/ -> hand\nend\n",
	 "2:25: error: wbc is not a text field; classify reads text fields (transport_note, "
	 "comments, ...)"},
	{"classify transport\n\t/x/ -> hand\nend\n",
	 "2:10: error: classify transport needs 'from' and the text fields to read"},
	{"classify agents from comments\n\t/x/ -> halothane\nend\n",
	 "2:22: error: classify agents reads the agent names themselves; it takes no 'from'"},
	{"classify transport from transport_note\n\t/x/ -> tube\nend\n",
	 "3:9: error: 'tube' is not a choice of transport (hand, pneumatic-tube, courier, other)"},
	{"classify agents\n\t/x/ -> Halothane\nend\n",
	 "3:9: error: an agent's canonical name is lower case letters, digits and '-' (such as "
	 "nitrous-oxide)"},
	{"classify transport from transport_note\n\t/tube(/i -> pneumatic-tube\nend\n",
	 "3:8: error: regular expression: missing closing parenthesis"},
	{"classify transport from transport_note\n\t/[z-a]/ -> pneumatic-tube\nend\n",
	 "3:6: error: regular expression: range out of order in character class"},
	{"sensitivity halothane = 0.03\n",
	 "2:13: error: 'halothane' is not a canonical agent name (classify agents gives them)"},
	{"classify agents\n\t/h/ -> halothane\nend\nsensitivity halothane = 0.03 %\n",
	 "5:30: error: a sensitivity is a bare number (the fraction of the reading per volume % "
	 "of agent); '%' does not fit it"},
	{"classify agents\n\t/h/ -> halothane\nend\nsensitivity halothane = 0.3 (0 to 2)\n",
	 "5:25: error: a sensitivity needs 0 <= low <= value <= high <= 1"},
	{"codes\n\tL X -> bubles\nend\n", "3:9: error: unknown field 'bubles' (did you mean 'bubbles'?)"},
	{"codes\n\tL X -> bubbles\n\tL X -> comments\nend\n",
	 "4:4: error: code L X is mapped twice (first at t.rules:3)"},
	/* warnings: the ruleset still loads */
	{"rule r\n\tif delay > 30\n\tdisposition comment\nend\n",
	 "3:13: warning: no unit after 30: read as 30 min, the unit of delay (a duration)"},
	{"limit l = 30\nrule r\n\tif delay > l\n\tdisposition comment\nend\n",
	 "4:13: warning: limit 'l' has no unit: read as 30 min for delay"},
	{"limit unused = 3 min\n",
	 "2:7: warning: unused limit 'unused': no condition or message reads it"},
	{"reason r comment \"x\"\n", "2:8: warning: reason code 'r' is defined but no rule gives it"},
	{"reason r comment \"x\"\nreason r reject \"y\"\nrule a\n\treason r\nend\n",
	 "3:8: warning: reason code 'r' is defined twice (first at t.rules:2); this definition "
	 "replaces it"},
	{"set site.altitude = 1 m\nset site.altitude = 2 m\n",
	 "2:5: warning: unused setting: site.altitude is set again at t.rules:3, so this value is "
	 "never used"},
	{"classify agents\n\t/h/ -> halothane\nend\nsensitivity halothane = 0.1\n"
	 "sensitivity halothane = 0.2\n",
	 "5:13: warning: unused setting: the sensitivity to halothane is set again at t.rules:6, "
	 "so this value is never used"},
	{"classify agents\n\t/h/ -> halothane\nend\nset electrode.halothane = 0.05\n"
	 "sensitivity halothane = 0.03\n",
	 "6:13: warning: the sensitivity to halothane is also set as electrode.halothane at "
	 "t.rules:5; this line wins (write one of the two)"},
	{"rule a\n\tdisposition reject final\nend\nrule b\n\tif delay > 1 min\n\tdisposition "
	 "comment\nend\n",
	 "5:1: warning: rule 'b' is never reached: rule 'a' at t.rules:2 gives every specimen a "
	 "final disposition"},
	{"rule c\n\tif delay < 10 min and delay > 20 min\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'c' never applies: its condition cannot hold (no value of delay "
	 "meets it)"},
	{"rule d\n\tif spo2 > 100 %\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'd' never applies: its condition cannot hold (no value of spo2 meets "
	 "it)"},
	{"rule e\n\tif storage == iced and storage == room\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'e' never applies: its condition cannot hold (no value of storage "
	 "meets it)"},
	{"rule f\n\tif storage in {}\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'f' never applies: its condition cannot hold (no value of storage "
	 "meets it)"},
	{"rule g\n\tif wbc is absent and wbc > 5 x10^9/L\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'g' never applies: its condition cannot hold (no value of wbc meets "
	 "it)"},
	{"rule h\n\tif not (delay >= 10 min) and delay > 20 min\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'h' never applies: its condition cannot hold (no value of delay "
	 "meets it)"},
	{"rule i\n\tif (delay < 10 min or delay > 20 min) and delay > 15 min and delay < 18 "
	 "min\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'i' never applies: its condition cannot hold (no value of delay "
	 "meets it)"},
	{"rule j\n\tif delay != 10 min and delay == 10 min\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'j' never applies: its condition cannot hold (no value of delay "
	 "meets it)"},
	{"rule k\n\tif bias_abs < 0 mmHg\n\tdisposition comment\nend\n",
	 "2:1: warning: rule 'k' never applies: its condition cannot hold (no value of bias_abs "
	 "meets it)"},
};

START_TEST(diagnostic_at_its_spot)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_status st = load_text(cases[_i].text, &rs, &d);
	bool warning = strstr(cases[_i].want, ": warning: ") != NULL;
	if (!has_diag(&d, cases[_i].want)) {
		fprintf(stderr, "case %d: want %s\ngot:\n", _i, cases[_i].want);
		dump_diags(&d);
	}
	ck_assert(has_diag(&d, cases[_i].want));
	if (warning) {
		ck_assert_int_eq(st, SX_OK);
		ck_assert_ptr_nonnull(rs);
	} else {
		ck_assert_int_eq(st, st == SX_ENOMEM ? SX_ENOMEM : SX_ESYNTAX);
		ck_assert_ptr_null(rs);
	}
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

/* Conditions that may hold give no warning (the check is not too eager). */
static const char *const reachable[] = {
	"(delay < 10 min or delay > 20 min) and delay > 15 min",
	"storage != iced or storage == iced",
	"not (storage == iced) and storage is absent",
	"delay >= 10 min and delay <= 10 min",
	"spo2 >= 100 %",
	"wbc is absent or wbc > 5 x10^9/L",
	"comments matches /air/ and not (comments matches /air/)",
	"alveolar_excess > 7.5 % of alveolar_po2 and alveolar_excess < 1 mmHg",
	"not (delay > 5 min and delay < 3 min)",
};

START_TEST(reachable_rules_give_no_warning)
{
	char text[512];
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	snprintf(text, sizeof text, "rule r\n\tif %s\n\tdisposition comment\nend\n", reachable[_i]);
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	if (d.count)
		dump_diags(&d);
	ck_assert_uint_eq(d.count, 0);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(mechanisms_not_built_are_named)
{
	for (int m = 0; m < SX_MECH_COUNT; m++) {
		char text[256], want[256];
		sx_ruleset *rs = NULL;
		sx_diag_list d;
		const char *name = sx_mechanism_name((sx_mechanism)m);
		snprintf(text, sizeof text, "rule r\n\tif delay > 1 min\n\tapply %s\nend\n", name);
		snprintf(want, sizeof want,
			 "4:8: warning: mechanism %s is not modelled by this build; switching it "
			 "on has no effect yet",
			 name);
		ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
		ck_assert_int_eq(has_diag(&d, want), !sx_mechanism_built((sx_mechanism)m));
		sx_ruleset_free(rs);
		sx_diag_list_clear(&d);
	}
}
END_TEST

/* ---- settings, passes, codes, sensitivities ------------------------------------------------- */

START_TEST(settings_through_the_registry)
{
	const char *text = "set site.altitude = 820 ft\n"            /* 2 */
			   "set blood.default_pco2 = 5.3 kPa\n"      /* 3 */
			   "set site.room_temperature = 71.6 [degF]\n" /* 4 */
			   "set metabolism.q10 = 2.5 (2 to 3)\n"     /* 5 */
			   "set site.utc_offset = -05:30\n"          /* 6 */
			   "set site.room_humidity = 40 %\n"         /* 7 */
			   "set metabolism.blood_rate = 0.009 mL/dL/min\n"; /* 8 */
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	const sx_settings *s;
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	ck_assert_uint_eq(d.count, 0);
	s = sx_ruleset_settings(rs);
	/* 1 ft = 0.3048 m exactly (international foot) */
	ck_assert_double_eq_tol(s->site_altitude_m, 249.936, 1e-9);
	/* 1 kPa = 7.50062 mmHg (core/units.h) */
	ck_assert_double_eq_tol(s->default_pco2, 5.3 * 7.50062, 1e-9);
	ck_assert_double_eq_tol(s->room_temp_c, 22.0, 1e-9);
	ck_assert_double_eq_tol(s->q10.low, 2.0, 1e-12);
	ck_assert_double_eq_tol(s->q10.nominal, 2.5, 1e-12);
	ck_assert_double_eq_tol(s->q10.high, 3.0, 1e-12);
	ck_assert_int_eq(s->utc_offset_min, -330);
	ck_assert_double_eq_tol(s->room_rel_humidity, 0.40, 1e-12);
	ck_assert_double_eq_tol(s->blood_vo2_37.nominal, 0.009, 1e-12);
	ck_assert_str_eq(sx_ruleset_origin(rs, "site.altitude"), "t.rules:2");
	ck_assert_str_eq(sx_ruleset_origin(rs, "metabolism.q10"), "t.rules:5");
	ck_assert_ptr_null(sx_ruleset_origin(rs, "alveolar.tolerance"));
	ck_assert_ptr_null(sx_ruleset_origin(rs, "no.such"));
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(passes_are_decided_when_compiled)
{
	const char *text = "reason big comment \"bias {bias:+.1}\"\n"
			   "reason late comment \"late\"\n"
			   "rule early\n\tif delay > 3 min\n\treason late\nend\n"
			   "rule by-condition\n\tif bias_abs > 5 mmHg\n\treason late\nend\n"
			   "rule by-message\n\tif delay > 3 min\n\treason big\nend\n"
			   "rule by-own-message\n\treason late \"{bias_percent}\"\nend\n"
			   "rule halothane-is-before\n\tif halothane > 1 %\n\treason late\nend\n";
	const char *want[] = {"early", "by-condition", "by-message", "by-own-message",
			      "halothane-is-before"};
	const sx_rule_pass pass[] = {SX_PASS_BEFORE_MODEL, SX_PASS_AFTER_MODEL,
				     SX_PASS_AFTER_MODEL, SX_PASS_AFTER_MODEL,
				     SX_PASS_BEFORE_MODEL};
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_ruleset_stats st;
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	for (size_t i = 0; i < 5; i++) {
		const char *name, *ref;
		sx_rule_pass p;
		ck_assert(sx_ruleset_rule_at(rs, i, &name, &p, &ref));
		ck_assert_str_eq(name, want[i]);
		ck_assert_int_eq(p, pass[i]);
	}
	ck_assert(!sx_ruleset_rule_at(rs, 5, NULL, NULL, NULL));
	sx_ruleset_stats_get(rs, &st);
	ck_assert_uint_eq(st.rules, 5);
	ck_assert_uint_eq(st.rules_before_model, 2);
	ck_assert_uint_eq(st.rules_after_model, 3);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(code_mapping)
{
	const char *text = "codes\n"
			   "\tL \"BUBBLES\" -> bubbles\n"
			   "\tL TRNOTE -> transport_note\n"
			   "\t99SBR \"FIO2-INSP\" -> fio2\n"
			   "\tLN \"2703-7\" -> po2\n"
			   "end\n";
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	ck_assert_int_eq(sx_ruleset_map_code(rs, "L", "BUBBLES"), SX_F_BUBBLES);
	ck_assert_int_eq(sx_ruleset_map_code(rs, "L", "TRNOTE"), SX_F_TRANSPORT_NOTE);
	ck_assert_int_eq(sx_ruleset_map_code(rs, "99SBR", "FIO2-INSP"), SX_F_FIO2);
	ck_assert_int_eq(sx_ruleset_map_code(rs, "LN", "2703-7"), SX_F_PO2);
	ck_assert_int_eq(sx_ruleset_map_code(rs, "LN", "BUBBLES"), -1);
	ck_assert_int_eq(sx_ruleset_map_code(rs, "L", "bubbles"), -1);
	ck_assert_int_eq(sx_ruleset_map_code(NULL, "L", "BUBBLES"), -1);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(agent_sensitivities)
{
	const char *text = "classify agents\n"
			   "\t/^(halothane|fluothane)$/i -> halothane\n"
			   "\t/^n2o$/i -> nitrous-oxide\n"
			   "end\n"
			   "sensitivity halothane = 0.03 (0 to 0.10)\n"
			   "sensitivity nitrous-oxide = 0\n";
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_range r;
	ck_assert_int_eq(load_text(text, &rs, &d), SX_OK);
	ck_assert(sx_ruleset_agent_sensitivity(rs, "halothane", &r));
	ck_assert_double_eq_tol(r.low, 0.0, 1e-12);
	ck_assert_double_eq_tol(r.nominal, 0.03, 1e-12);
	ck_assert_double_eq_tol(r.high, 0.10, 1e-12);
	ck_assert(sx_ruleset_agent_sensitivity(rs, "nitrous-oxide", &r));
	ck_assert_double_eq_tol(r.high, 0.0, 1e-12);
	ck_assert(!sx_ruleset_agent_sensitivity(rs, "fluothane", &r));
	ck_assert_double_eq_tol(r.nominal, 0.0, 1e-12);
	ck_assert(!sx_ruleset_agent_sensitivity(rs, "xenon", NULL));
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

/* ---- folders: include, base, replace, drop ------------------------------------------------ */

static char tmp_root[256];

static void write_file(const char *rel, const char *text)
{
	char path[512];
	FILE *fp;
	char *slash;
	snprintf(path, sizeof path, "%s/%s", tmp_root, rel);
	/* make the folders on the way */
	for (slash = strchr(path + strlen(tmp_root) + 1, '/'); slash; slash = strchr(slash + 1, '/')) {
		*slash = '\0';
		mkdir(path, 0700);
		*slash = '/';
	}
	fp = fopen(path, "w");
	ck_assert_ptr_nonnull(fp);
	fputs(text, fp);
	fclose(fp);
}

static void make_root(void)
{
	snprintf(tmp_root, sizeof tmp_root, "%s/sx-rules-XXXXXX",
		 getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp");
	ck_assert_ptr_nonnull(mkdtemp(tmp_root));
}

static void remove_root(void)
{
	char cmd[512];
	snprintf(cmd, sizeof cmd, "rm -rf '%s'", tmp_root);
	ck_assert_int_eq(system(cmd), 0);
}

static sx_status load_dir(const char *rel, sx_ruleset **rs, sx_diag_list *d)
{
	char path[512];
	snprintf(path, sizeof path, "%s/%s", tmp_root, rel);
	sx_diag_list_init(d);
	return sx_ruleset_load(path, rs, d);
}

/* The diagnostics with the temporary folder cut off their file names. */
static int has_diag_in(const sx_diag_list *d, const char *want)
{
	size_t n = strlen(tmp_root);
	for (size_t i = 0; i < d->count; i++) {
		char got[1024];
		const char *f = d->items[i].file ? d->items[i].file : "";
		if (strncmp(f, tmp_root, n) == 0)
			f += n + 1;
		snprintf(got, sizeof got, "%s:%u:%u: %s: %s", f, d->items[i].line,
			 d->items[i].column, sx_severity_name(d->items[i].severity),
			 d->items[i].message);
		if (strcmp(got, want) == 0)
			return 1;
	}
	for (size_t i = 0; i < d->count; i++)
		fprintf(stderr, "  %s:%u:%u: %s\n", d->items[i].file, d->items[i].line,
			d->items[i].column, d->items[i].message);
	return 0;
}

START_TEST(a_site_builds_on_its_base)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	const char *name, *ref;
	sx_rule_pass pass;
	const sx_settings *s;
	make_root();
	write_file("base/a.rules", "version \"base 1\"\n"
				   "set site.altitude = 100 m\n"
				   "limit room = 30 min\n"
				   "reason late comment \"late: {delay} against {room}\"\n"
				   "include \"more.inc\"\n"
				   "rule late-room\n\tif delay > room\n\treason late\nend\n"
				   "rule wall\n\tif container == plastic-syringe\n\tapply metabolism\nend\n"
				   "rule gone\n\tif delay > 1 min\n\treason late\nend\n");
	write_file("base/more.inc", "rule from-include\n\tif delay > 2 min\n\treason late\nend\n");
	write_file("site/site.rules", "version \"site 1\"\n"
				     "base \"../base\"\n"
				     "set site.altitude = 250 m\n"
				     "limit room = 15 min\n"
				     "replace rule wall\n\tif container == glass-syringe\n\tapply "
				     "metabolism\nend\n"
				     "drop rule gone\n"
				     "rule local\n\tif delay > 90 min\n\treason late\nend\n");
	ck_assert_int_eq(load_dir("site", &rs, &d), SX_OK);
	ck_assert_uint_eq(d.errors, 0);
	ck_assert_str_eq(sx_ruleset_version(rs), "site 1 on base 1");
	s = sx_ruleset_settings(rs);
	ck_assert_double_eq_tol(s->site_altitude_m, 250, 1e-12);
	ck_assert(strstr(sx_ruleset_origin(rs, "site.altitude"), "site/site.rules:3") != NULL);
	/* order: the base's rules (the replacement in place, the dropped one gone,
	 * the included one where its include stands), then the site's */
	ck_assert(sx_ruleset_rule_at(rs, 0, &name, &pass, &ref));
	ck_assert_str_eq(name, "from-include");
	ck_assert(strstr(ref, "base/more.inc:1") != NULL);
	ck_assert(sx_ruleset_rule_at(rs, 1, &name, &pass, &ref));
	ck_assert_str_eq(name, "late-room");
	ck_assert(sx_ruleset_rule_at(rs, 2, &name, &pass, &ref));
	ck_assert_str_eq(name, "wall");
	ck_assert(strstr(ref, "site/site.rules:5") != NULL);
	ck_assert(sx_ruleset_rule_at(rs, 3, &name, &pass, &ref));
	ck_assert_str_eq(name, "local");
	ck_assert(!sx_ruleset_rule_at(rs, 4, NULL, NULL, NULL));
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
	remove_root();
}
END_TEST

/* The site's limit is the one the base's rule compares against. */
START_TEST(a_site_limit_is_one_line)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_specimen s;
	sx_facts f;
	sx_rule_outcome o;
	const char *const pairs[] = {"specimen_id=X", NULL};
	const char *const facts20[] = {"delay=20", NULL};
	make_root();
	write_file("base/a.rules", "version \"base 1\"\nlimit room = 30 min\n"
				   "reason late comment \"{delay} against {room}\"\n"
				   "rule late-room\n\tif delay > room\n\treason late\nend\n");
	write_file("site/site.rules", "version \"site 1\"\nbase \"../base\"\nlimit room = 15 min\n");
	ck_assert_int_eq(load_dir("site", &rs, &d), SX_OK);
	build_specimen(&s, pairs);
	build_facts(&f, facts20);
	sx_rule_outcome_init(&o, rs);
	ck_assert_int_eq(sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, &f, &o), SX_OK);
	ck_assert_str_eq(reason_codes(&o), "late");
	ck_assert_str_eq(o.reasons[0].message, "20 min against 15 min");
	sx_specimen_clear(&s);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
	remove_root();
}
END_TEST

static const struct {
	const char *files[4][2];   /* relative path, text */
	const char *load;
	const char *want;          /* with the temporary folder cut off */
} folder_cases[] = {
	{{{"r/a.rules", "version \"a\"\ninclude \"missing.inc\"\n"}},
	 "r",
	 "r/a.rules:2:9: error: cannot open r/missing.inc: No such file or directory"},
	{{{"r/a.rules", "version \"a\"\ninclude \"b.rules\"\n"}, {"r/b.rules", "limit x = 1 min\n"}},
	 "r",
	 "r/a.rules:2:9: error: r/b.rules is a *.rules file of the ruleset folder and is read as "
	 "one; an included file needs another ending (such as .inc)"},
	{{{"r/a.rules", "version \"a\"\ninclude \"a.rules\"\n"}},
	 "r",
	 "r/a.rules:2:9: error: cannot include r/a.rules: it is read already"},
	{{{"r/a.rules", "version \"a\"\nbase \"../nowhere\"\n"}},
	 "r",
	 "r/a.rules:2:6: error: cannot open the ruleset folder nowhere: No such file or "
	 "directory"},
	{{{"r/a.rules", "version \"a\"\nbase \"../s\"\n"},
	  {"s/a.rules", "version \"s\"\nbase \"../r\"\n"}},
	 "r",
	 "s/a.rules:2:6: error: base r: a cycle (it builds on this ruleset)"},
	{{{"r/a.rules", "version \"a\"\nbase \"../s\"\nbase \"../s\"\n"}, {"s/a.rules", "version \"s\"\n"}},
	 "r",
	 "r/a.rules:3:1: error: a ruleset builds on one base; the first is at "},
	{{{"r/a.rules", "version \"a\"\n"}, {"r/b.rules", "version \"b\"\n"}},
	 "r",
	 "r/b.rules:1:1: error: a ruleset has one version line; the first is at "},
	{{{"r/a.rules", "limit x = 1 min\n"}},
	 "r",
	 "r/a.rules:0:0: error: the ruleset in "},
	{{{"r/notes.txt", "x"}},
	 "r",
	 "r:0:0: error: cannot load the ruleset folder: it holds no *.rules files"},
	{{{"r/a.rules", "version \"a\"\nbase \"../s\"\nrule x\n\tdisposition comment\nend\n"},
	  {"s/a.rules", "version \"s\"\nrule x\n\tdisposition reject\nend\n"}},
	 "r",
	 "r/a.rules:3:6: error: rule 'x' is already defined in the base at "},
	{{{"r/a.rules", "version \"a\"\nrule x\n\tdisposition comment\nend\nreplace rule x\n\t"
		       "disposition reject\nend\n"}},
	 "r",
	 "r/a.rules:5:14: error: replace changes a rule of the base; rule 'x' at "},
};

/* A prefix match is enough where the message ends in a path. */
static int has_diag_prefix(const sx_diag_list *d, const char *want)
{
	size_t n = strlen(tmp_root);
	for (size_t i = 0; i < d->count; i++) {
		char got[1024];
		const char *f = d->items[i].file ? d->items[i].file : "";
		if (strncmp(f, tmp_root, n) == 0)
			f += n + 1;
		else if (strcmp(f, tmp_root) == 0)
			f += n;
		snprintf(got, sizeof got, "%s:%u:%u: %s: %s", f, d->items[i].line,
			 d->items[i].column, sx_severity_name(d->items[i].severity),
			 d->items[i].message);
		/* messages quote paths with the temporary folder in them too */
		for (char *p; (p = strstr(got, tmp_root));)
			memmove(p, p + n + 1, strlen(p + n + 1) + 1);
		if (strncmp(got, want, strlen(want)) == 0)
			return 1;
	}
	return has_diag_in(d, want);
}

START_TEST(folder_problems)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	make_root();
	for (int k = 0; k < 4 && folder_cases[_i].files[k][0]; k++)
		write_file(folder_cases[_i].files[k][0], folder_cases[_i].files[k][1]);
	ck_assert_int_ne(load_dir(folder_cases[_i].load, &rs, &d), SX_OK);
	ck_assert_ptr_null(rs);
	ck_assert_msg(has_diag_prefix(&d, folder_cases[_i].want), "case %d: want %s", _i,
		      folder_cases[_i].want);
	sx_diag_list_clear(&d);
	remove_root();
}
END_TEST

START_TEST(includes_nest_eight_deep)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	char name[32], text[64];
	make_root();
	write_file("r/a.rules", "version \"a\"\ninclude \"1.inc\"\n");
	for (int i = 1; i <= 9; i++) {
		snprintf(name, sizeof name, "r/%d.inc", i);
		snprintf(text, sizeof text, "include \"%d.inc\"\n", i + 1);
		write_file(name, text);
	}
	write_file("r/10.inc", "limit x = 1 min\n");
	ck_assert_int_eq(load_dir("r", &rs, &d), SX_ESYNTAX);
	ck_assert_ptr_null(rs);
	ck_assert(has_diag_in(&d, "r/8.inc:1:1: error: includes nested more than 8 deep"));
	sx_diag_list_clear(&d);
	remove_root();
}
END_TEST

START_TEST(a_missing_folder)
{
	sx_ruleset *rs = (sx_ruleset *)1;
	sx_diag_list d;
	sx_diag_list_init(&d);
	ck_assert_int_eq(sx_ruleset_load("/nonexistent/rules", &rs, &d), SX_EIO);
	ck_assert_ptr_null(rs);
	ck_assert_str_eq(d.items[0].message,
			 "cannot open the ruleset folder: No such file or directory");
	ck_assert_int_eq(sx_ruleset_load(NULL, &rs, &d), SX_EINVAL);
	sx_diag_list_clear(&d);
}
END_TEST

/* ---- the shipped rulesets load; running out of memory loads nothing ----------------------- */

static void load_shipped(const char *which, size_t *warnings)
{
	char path[512];
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_status st;
	snprintf(path, sizeof path, "%s/rulesets/%s", srcdir(), which);
	sx_diag_list_init(&d);
	st = sx_ruleset_load(path, &rs, &d);
	if (st != SX_OK || d.errors)
		for (size_t i = 0; i < d.count; i++)
			fprintf(stderr, "%s:%u:%u: %s\n", d.items[i].file, d.items[i].line,
				d.items[i].column, d.items[i].message);
	ck_assert_int_eq(st, SX_OK);
	/* the only warnings allowed: mechanisms this build does not model yet */
	for (size_t i = 0; i < d.count; i++)
		ck_assert_msg(strstr(d.items[i].message, "is not modelled by this build") != NULL,
			      "unexpected: %s", d.items[i].message);
	*warnings = d.count;
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}

START_TEST(the_shipped_rulesets_load)
{
	size_t w;
	load_shipped("default", &w);
	load_shipped("site-template", &w);
}
END_TEST

START_TEST(out_of_memory_loads_nothing)
{
	char path[512];
	unsigned long total, n;
	snprintf(path, sizeof path, "%s/rulesets/site-template", srcdir());
	/* count the allocations of one load, then fail each in turn */
	{
		sx_ruleset *rs = NULL;
		sx_diag_list d;
		sx_diag_list_init(&d);
		sx_alloc_fail_at(0);
		ck_assert_int_eq(sx_ruleset_load(path, &rs, &d), SX_OK);
		total = sx_alloc_fail_at(0);
		sx_ruleset_free(rs);
		sx_diag_list_clear(&d);
	}
	ck_assert_uint_gt(total, 10);
	for (n = 1; n <= total; n++) {
		sx_ruleset *rs = NULL;
		sx_diag_list d;
		sx_status st;
		sx_diag_list_init(&d);
		sx_alloc_fail_at(n);
		st = sx_ruleset_load(path, &rs, &d);
		sx_alloc_fail_at(0);
		/* a failure either stops the load or hits something optional (the
		 * sorting of diagnostics); never a half-loaded ruleset */
		ck_assert_msg(st == SX_OK || st == SX_ENOMEM, "allocation %lu: status %d", n, st);
		if (st != SX_OK)
			ck_assert_ptr_null(rs);
		sx_ruleset_free(rs);
		sx_diag_list_clear(&d);
	}
}
END_TEST

static Suite *suite(void)
{
	Suite *s = suite_create("rules-compile");
	TCase *t = tcase_create("diagnostics");
	tcase_add_loop_test(t, diagnostic_at_its_spot, 0, sizeof cases / sizeof cases[0]);
	tcase_add_loop_test(t, reachable_rules_give_no_warning, 0,
			    sizeof reachable / sizeof reachable[0]);
	tcase_add_test(t, mechanisms_not_built_are_named);
	suite_add_tcase(s, t);
	t = tcase_create("compiled");
	tcase_add_test(t, settings_through_the_registry);
	tcase_add_test(t, passes_are_decided_when_compiled);
	tcase_add_test(t, code_mapping);
	tcase_add_test(t, agent_sensitivities);
	suite_add_tcase(s, t);
	t = tcase_create("folders");
	tcase_add_test(t, a_site_builds_on_its_base);
	tcase_add_test(t, a_site_limit_is_one_line);
	tcase_add_loop_test(t, folder_problems, 0, sizeof folder_cases / sizeof folder_cases[0]);
	tcase_add_test(t, includes_nest_eight_deep);
	tcase_add_test(t, a_missing_folder);
	tcase_add_test(t, the_shipped_rulesets_load);
	tcase_set_timeout(t, 120);
	tcase_add_test(t, out_of_memory_loads_nothing);
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
