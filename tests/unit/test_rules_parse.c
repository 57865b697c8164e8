/* SPDX-License-Identifier: MIT */
/*
 * test_rules_parse.c - the rule language's lexer and parser: tokens, units
 * after numbers, regular expressions, offsets; syntax errors at their exact
 * line and column; every error of a file in one pass; recovery that does not
 * cascade; bytes a rule file may not hold.
 */
#include <check.h>
#include <stdio.h>
#include <string.h>

#include "rules/lexer.h"
#include "rules/source.h"
#include "test_rules_util.h"

/* ---- lexer ------------------------------------------------------------------ */

static const struct {
	const char *text;
	const char *kinds; /* one letter a token: n name, 9 number, s string, o offset,
			    * ( ) { } , = E(==) N(!=) < L(<=) > G(>=) A(->) * / x(error) */
} token_cases[] = {
	{"rule delay-room end", "nnn"},
	{"set site.altitude = 250", "nn=9"},
	{"a == b != c <= d >= e < f > g", "nEnNnLnGn<n>n"},
	{"{small, large} (x) -> y * z", "{n,n}(n)An*n"},
	{"# a comment\nname # another\n", "n"},
	{"\"text with \\\"quote\\\"\" -4 +2.5 .5 1e-3", "s9999"},
	{"+01:00 -05:30", "oo"},
	{"/ @", "/x"},
	{"\"open", "x"},
	{"\"bad \\n escape\"", "x"},
	{"name- name.", "nxnx"},
};

static char kind_letter(sx_tok_kind k)
{
	switch (k) {
	case TK_NAME: return 'n';
	case TK_NUMBER: return '9';
	case TK_STRING: return 's';
	case TK_OFFSET: return 'o';
	case TK_LPAREN: return '(';
	case TK_RPAREN: return ')';
	case TK_LBRACE: return '{';
	case TK_RBRACE: return '}';
	case TK_COMMA: return ',';
	case TK_ASSIGN: return '=';
	case TK_EQ: return 'E';
	case TK_NE: return 'N';
	case TK_LT: return '<';
	case TK_LE: return 'L';
	case TK_GT: return '>';
	case TK_GE: return 'G';
	case TK_ARROW: return 'A';
	case TK_STAR: return '*';
	case TK_SLASH: return '/';
	case TK_ERROR: return 'x';
	default: return '?';
	}
}

START_TEST(tokens)
{
	sx_lexer lx;
	char got[64];
	size_t n = 0;
	sx_token t;
	sx_lex_init(&lx, token_cases[_i].text, strlen(token_cases[_i].text));
	while ((t = sx_lex_next(&lx)).kind != TK_EOF && n < sizeof got - 1)
		got[n++] = kind_letter(t.kind);
	got[n] = '\0';
	ck_assert_str_eq(got, token_cases[_i].kinds);
}
END_TEST

START_TEST(numbers_and_offsets)
{
	sx_lexer lx;
	sx_token t;
	const char *text = "0.075 -4 +01:30 1e3";
	sx_lex_init(&lx, text, strlen(text));
	t = sx_lex_next(&lx);
	ck_assert_int_eq(t.kind, TK_NUMBER);
	ck_assert_double_eq_tol(t.number, 0.075, 1e-12);
	t = sx_lex_next(&lx);
	ck_assert_double_eq_tol(t.number, -4, 1e-12);
	t = sx_lex_next(&lx);
	ck_assert_int_eq(t.kind, TK_OFFSET);
	ck_assert_int_eq(t.offset_min, 90);
	t = sx_lex_next(&lx);
	ck_assert_double_eq_tol(t.number, 1000, 1e-9);
}
END_TEST

/* A unit is read only after a number and on its line; keywords are never units. */
static const struct {
	const char *text; /* a number, then what follows */
	const char *unit; /* NULL: no unit */
} unit_cases[] = {
	{"30 min", "min"},
	{"30min", "min"},
	{"8 kPa)", "kPa"},
	{"100 x10^9/L and", "x10^9/L"},
	{"100 10*9/L", "10*9/L"},
	{"7.5 % of x", "%"},
	{"22 \xC2\xB0" "C", "\xC2\xB0" "C"},
	{"5 \xC2\xB5L", "\xC2\xB5L"},
	{"30 and delay", NULL},
	{"30 to 40", NULL},
	{"2 * limit", NULL},
	{"30\nmin", NULL},
	{"0.5 (0 to 1)", NULL},
	{"12 34", NULL},
	{"mm[Hg],", "mm[Hg]"},
};

START_TEST(units_after_numbers)
{
	sx_lexer lx;
	sx_token t;
	size_t off = 0, len = 0;
	bool has;
	const char *text = unit_cases[_i].text;
	char got[64] = "";
	sx_lex_init(&lx, text, strlen(text));
	t = sx_lex_next(&lx);
	if (t.kind == TK_NUMBER)
		has = sx_lex_unit(&lx, t.off + t.len, &off, &len);
	else
		has = sx_lex_unit(&lx, 0, &off, &len); /* the unit alone */
	if (has)
		snprintf(got, sizeof got, "%.*s", (int)len, text + off);
	if (unit_cases[_i].unit)
		ck_assert_str_eq(got, unit_cases[_i].unit);
	else
		ck_assert_msg(!has, "'%s' read a unit '%s'", text, got);
}
END_TEST

START_TEST(regular_expressions)
{
	sx_lexer lx;
	sx_token t;
	const char *ok = "/a\\/b(c)/i -> x";
	const char *open = "/abc\n/";
	const char *flag = "/abc/g";
	sx_lex_init(&lx, ok, strlen(ok));
	t = sx_lex_regex(&lx, 0);
	ck_assert_int_eq(t.kind, TK_REGEX);
	ck_assert_uint_eq(t.inner_off, 1);
	ck_assert_uint_eq(t.inner_len, 7);
	ck_assert_uint_eq(t.flags, SX_REGEX_CASELESS);
	ck_assert_int_eq(sx_lex_next(&lx).kind, TK_ARROW);
	sx_lex_init(&lx, open, strlen(open));
	t = sx_lex_regex(&lx, 0);
	ck_assert_int_eq(t.kind, TK_ERROR);
	sx_lex_init(&lx, flag, strlen(flag));
	t = sx_lex_regex(&lx, 0);
	ck_assert_int_eq(t.kind, TK_ERROR);
	ck_assert_uint_eq(t.error_off, 5);
}
END_TEST

/* ---- positions ------------------------------------------------------------------ */

START_TEST(columns_count_characters)
{
	sx_rules_arena a;
	sx_rules_source *src;
	unsigned line, col;
	const char *text = "ab\n\xC2\xB0" "C x\n\tz";
	sx_rules_arena_init(&a);
	ck_assert_int_eq(sx_rules_source_make(&a, "t", text, strlen(text), &src), SX_OK);
	sx_rules_position(src, 0, &line, &col);
	ck_assert_uint_eq(line, 1);
	ck_assert_uint_eq(col, 1);
	sx_rules_position(src, 7, &line, &col); /* 'x' after a two-byte degree sign */
	ck_assert_uint_eq(line, 2);
	ck_assert_uint_eq(col, 4);
	sx_rules_position(src, 10, &line, &col); /* 'z' after a tab */
	ck_assert_uint_eq(line, 3);
	ck_assert_uint_eq(col, 2);
	sx_rules_arena_free(&a);
}
END_TEST

static const struct {
	const char *dir, *rel, *want;
} path_cases[] = {
	{"rulesets/site-template", "../default", "rulesets/default"},
	{".", "x.rules", "x.rules"},
	{"./a/./b", "c", "a/b/c"},
	{"a", "../../b", "../b"},
	{"/srv/r", "../x", "/srv/x"},
	{"/", "../x", "/x"},
	{"a", "/abs/y", "/abs/y"},
	{NULL, "a//b/", "a/b"},
	{"a", "..", "."},
};

START_TEST(tidy_paths)
{
	sx_rules_arena a;
	char *got;
	sx_rules_arena_init(&a);
	got = sx_rules_path_join(&a, path_cases[_i].dir, path_cases[_i].rel,
				 strlen(path_cases[_i].rel));
	ck_assert_ptr_nonnull(got);
	ck_assert_str_eq(got, path_cases[_i].want);
	sx_rules_arena_free(&a);
}
END_TEST

/* ---- syntax errors: one each, at the exact spot --------------------------------------- */

/* Line 1 of every text is the version line load_text adds. */
static const struct {
	const char *text;
	const char *want;
} syntax_cases[] = {
	{"rule r\n\tif delay > 30 min and\n\tdisposition reject\nend\n",
	 "4:2: error: expected a field or fact to test, found 'disposition'"},
	{"rule r\n\tif delay = 30 min\n\tdisposition reject\nend\n",
	 "3:11: error: '=' sets a value; write '==' to compare"},
	{"rule r\n\tif (delay > 30 min\n\tdisposition reject\nend\n",
	 "4:2: error: expected ')' closing the '(' of line 3 column 5, found 'disposition'"},
	{"rule r\n\tif delay > 30 min\n\tapply\nend\n",
	 "5:1: error: expected a mechanism after 'apply', found 'end'"},
	{"rule r\n\tif delay => 30 min\n\tdisposition reject\nend\n",
	 "3:11: error: '=' sets a value; write '==' to compare"},
	{"rule r\n\tif delay 30 min\n\tdisposition reject\nend\n",
	 "3:11: error: expected a comparison (<, <=, >, >=, ==, !=), 'in', 'is' or 'matches' "
	 "after 'delay', found the number 30"},
	{"rule r\n\tif wbc is given\n\tdisposition reject\nend\n",
	 "3:12: error: expected 'present' or 'absent' after 'is', found 'given'"},
	{"rule r\n\tif storage not {iced}\n\tdisposition reject\nend\n",
	 "3:17: error: expected 'in' after 'not', found '{'"},
	{"rule r\n\tif storage in {iced room}\n\tdisposition reject\nend\n",
	 "3:22: error: expected ',' or '}' closing the set, found 'room'"},
	{"rule r\n\tif delay > 30 min\n\tdisposition reject\n",
	 "5:1: error: expected 'end' closing rule 'r' of line 2 before this"},
	{"rule r\n\tdisposition reject\nrule s\n\tdisposition reject\nend\n",
	 "4:1: error: expected 'end' closing rule 'r' of line 2 before this"},
	{"rule r\nend\n", "3:1: error: rule 'r' has no action"},
	{"rule r\n\tif delay > 30 min\n\tstop\nend\n",
	 "4:2: error: expected an action (apply, reason, bias, disposition) or 'end', found 'stop'"},
	{"rule end\n", "2:6: error: expected a rule name, found 'end'"},
	{"limit x = min\n", "2:11: error: expected a number with its unit, such as 30 min, found 'min'"},
	{"limit x = 3 min (1 to 4 min)\n",
	 "2:17: error: a limit is one value; ranges are for settings and bias"},
	{"set site.altitude 250 m\n", "2:19: error: expected '=' after the setting, found the number 250"},
	{"set metabolism.q10 = 2 (1.9 3)\n",
	 "2:29: error: expected 'to', found the number 3"},
	{"reason code comment\n", "3:1: error: expected the message in quotes, found the end of the file"},
	{"version 1\n", "2:9: error: expected the version in quotes, such as \"default 1\", found the number 1"},
	{"classify transport from transport_note\n\t/tube/i pneumatic-tube\nend\n",
	 "3:10: error: expected '->' after the regular expression, found 'pneumatic-tube'"},
	{"classify transport from transport_note\n\ttube -> pneumatic-tube\nend\n",
	 "3:2: error: expected a regular expression /.../, found 'tube'"},
	{"classify transport from transport_note\n\t/tube/g -> pneumatic-tube\nend\n",
	 "3:8: error: unknown flag after a regular expression (only i, ignore case)"},
	{"classify transport from transport_note\n\t/tube -> pneumatic-tube\nend\n",
	 "3:2: error: regular expression not closed on this line (write \\/ for a slash inside "
	 "it)"},
	{"classify transport from transport_note\n\t/tube/ -> pneumatic-tube\n",
	 "4:1: error: expected 'end' closing the classify block of line 2 before this"},
	{"codes\n\tL \"X\" bubbles\nend\n", "3:8: error: expected '->' after the code, found 'bubbles'"},
	{"drop r\n", "2:6: error: expected 'rule', found 'r'"},
	{"when delay > 5 min\n",
	 "2:1: error: expected a statement (version, base, include, set, limit, sensitivity, "
	 "reason, classify, codes, rule, replace, drop), found 'when'"},
	{"reason code comment \"open\n", "2:21: error: string not closed on this line"},
	{"limit x = 3 min @\n", "2:17: error: unexpected character '@'"},
	{"include \"other.rules\"\n",
	 "2:1: error: include is not allowed here (rules loaded from memory)"},
	{"base \"../default\"\n", "2:1: error: base is not allowed here (rules loaded from memory)"},
	{"rule r\n\tbias local -2 mmHg (-4 0 mmHg)\nend\n",
	 "3:25: error: expected 'to', found the number 0"},
	{"rule r\n\tapply metabolism with metabolism.q10 2\nend\n",
	 "3:39: error: expected '=' after the parameter, found the number 2"},
	{"rule r\n\tdisposition\nend\n",
	 "4:1: error: expected accept, comment or reject, found 'end'"},
	{"limit x = 1e999 min\n", "2:11: error: number too large or too small"},
};

START_TEST(syntax_error_at_its_spot)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_status st = load_text(syntax_cases[_i].text, &rs, &d);
	if (!has_diag(&d, syntax_cases[_i].want)) {
		fprintf(stderr, "case %d: want %s\ngot:\n", _i, syntax_cases[_i].want);
		dump_diags(&d);
	}
	ck_assert(has_diag(&d, syntax_cases[_i].want));
	ck_assert_int_ne(st, SX_OK);
	ck_assert_ptr_null(rs);
	sx_diag_list_clear(&d);
}
END_TEST

/* Every error of a file in one pass, and nothing else: no cascade. */
START_TEST(every_error_in_one_pass)
{
	const char *text = "limit a = 3 mins\n"                        /* 2 */
			   "rule r\n\tif delay > 30 min and\n\tdisposition reject\nend\n" /* 5 */
			   "rule s\n\tif delay = 3 min\n\tdisposition reject\nend\n"  /* 8 */
			   "rule t\n\tdisposition bad\nend\n"              /* 12 */
			   "set site.altitude 2 m\n"                       /* 14 */
			   "classify transport from transport_note\n\t/(/ -> hand\nend\n"; /* 16 */
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	ck_assert_int_eq(load_text(text, &rs, &d), SX_ESYNTAX);
	ck_assert_ptr_null(rs);
	if (d.count != 6)
		dump_diags(&d);
	ck_assert_uint_eq(d.count, 6);
	ck_assert_uint_eq(d.errors, 6);
	ck_assert_str_eq(diag_text(&d, 0),
			 "2:13: error: unknown unit 'mins' (docs/units-and-times.md lists the units)");
	ck_assert_str_eq(diag_text(&d, 1),
			 "5:2: error: expected a field or fact to test, found 'disposition'");
	ck_assert_str_eq(diag_text(&d, 2), "8:11: error: '=' sets a value; write '==' to compare");
	ck_assert_str_eq(diag_text(&d, 3),
			 "12:14: error: expected a disposition (accept, comment or reject), found "
			 "'bad'");
	ck_assert_str_eq(diag_text(&d, 4),
			 "14:19: error: expected '=' after the setting, found the number 2");
	ck_assert_str_eq(diag_text(&d, 5),
			 "16:4: error: regular expression: missing closing parenthesis");
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(too_many_errors_stop_the_file)
{
	char text[8192];
	size_t n = 0;
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	for (int i = 0; i < 150; i++)
		n += (size_t)snprintf(text + n, sizeof text - n, "limit x%d = y\n", i);
	ck_assert_int_eq(load_text(text, &rs, &d), SX_ESYNTAX);
	/* 100 errors, then one that says the rest is not read */
	ck_assert_uint_eq(d.count, 101);
	ck_assert(strstr(d.items[100].message, "the rest of it is not read") != NULL);
	sx_diag_list_clear(&d);
}
END_TEST

static const struct {
	const char *bytes;
	size_t len;
	const char *want;
} byte_cases[] = {
	{"version \"a\"\nrule\0", 17, "2:5: error: NUL byte in a rule file"},
	{"version \"a\"\n# \xC3\x28\n", 0, "2:3: error: not UTF-8 text (byte 0xC3)"},
	{"version \"a\"\n# \xED\xA0\x80 surrogate\n", 0, "2:3: error: not UTF-8 text (byte 0xED)"},
	{"version \"a\"\n# \xF0\x9F\x98\x80 fine\n", 0, NULL},
	/* a byte-order mark is skipped, and counts as no column */
	{"\xEF\xBB\xBFversion \"a\"\r\nlimit x = 3 min\r\n", 0, NULL},
	{"\xEF\xBB\xBFversion 1\r\n", 0, "1:9: error: expected the version in quotes, such as "
					  "\"default 1\", found the number 1"},
};

START_TEST(bytes_a_rule_file_may_not_hold)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_status st;
	sx_diag_list_init(&d);
	st = sx_rules_load_buffer("t.rules", byte_cases[_i].bytes,
				  byte_cases[_i].len ? byte_cases[_i].len : strlen(byte_cases[_i].bytes),
				  &rs, &d);
	if (byte_cases[_i].want) {
		ck_assert_int_eq(st, SX_ESYNTAX);
		if (!has_diag(&d, byte_cases[_i].want))
			dump_diags(&d);
		ck_assert(has_diag(&d, byte_cases[_i].want));
	} else {
		ck_assert_int_eq(st, SX_OK);
	}
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(a_clean_file_parses)
{
	const char *text = "version \"clean 1\"\n"
			   "set site.altitude = 250 m # a comment\n"
			   "set metabolism.q10 = 2.2 (1.9 to 3.0)\n"
			   "set site.utc_offset = -05:30\n"
			   "limit room = 30 min\n"
			   "reason late comment \"analysed {delay:.0} after collection\"\n"
			   "classify transport from transport_note, comments\n"
			   "\t/\\btube\\b/i -> pneumatic-tube\n"
			   "end\n"
			   "codes\n\tL \"BUBBLES\" -> bubbles\n\tLN \"2703-7\" -> po2\nend\n"
			   "rule late-room\n"
			   "\tif (delay > room or transport_time > 20 min) and not (storage == iced)\n"
			   "\treason late\n"
			   "\tdisposition comment\n"
			   "end\n";
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_status st = load_text(text, &rs, &d);
	if (st != SX_OK)
		dump_diags(&d);
	ck_assert_int_eq(st, SX_OK);
	ck_assert_uint_eq(d.count, 0);
	ck_assert_str_eq(sx_ruleset_version(rs), "clean 1");
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
}
END_TEST

static Suite *suite(void)
{
	Suite *s = suite_create("rules-parse");
	TCase *t = tcase_create("lexer");
	tcase_add_loop_test(t, tokens, 0, sizeof token_cases / sizeof token_cases[0]);
	tcase_add_test(t, numbers_and_offsets);
	tcase_add_loop_test(t, units_after_numbers, 0, sizeof unit_cases / sizeof unit_cases[0]);
	tcase_add_test(t, regular_expressions);
	tcase_add_test(t, columns_count_characters);
	tcase_add_loop_test(t, tidy_paths, 0, sizeof path_cases / sizeof path_cases[0]);
	suite_add_tcase(s, t);
	t = tcase_create("parser");
	tcase_add_loop_test(t, syntax_error_at_its_spot, 0,
			    sizeof syntax_cases / sizeof syntax_cases[0]);
	tcase_add_test(t, every_error_in_one_pass);
	tcase_add_test(t, too_many_errors_stop_the_file);
	tcase_add_loop_test(t, bytes_a_rule_file_may_not_hold, 0,
			    sizeof byte_cases / sizeof byte_cases[0]);
	tcase_add_test(t, a_clean_file_parses);
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
