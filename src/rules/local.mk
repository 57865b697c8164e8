# SPDX-License-Identifier: MIT
# Automake fragment of src/rules, included by Makefile.am.
# The rule language (docs/rules.md): lexer, parser, compiler, checks,
# evaluator, PCRE2 wrapper; the `syrinx rules` linter; its tests.

libsyrinx_a_SOURCES += \
	src/rules/ast.h \
	src/rules/bounds.h \
	src/rules/check.c \
	src/rules/compile.c \
	src/rules/evaluate.c \
	src/rules/lexer.c src/rules/lexer.h \
	src/rules/load.h \
	src/rules/parser.c src/rules/parser.h \
	src/rules/program.h \
	src/rules/regex.c src/rules/regex.h \
	src/rules/ruleset.c src/rules/ruleset.h \
	src/rules/source.c src/rules/source.h \
	src/rules/template.c

syrinx_SOURCES += src/cli/rules.c

UNIT_TESTS += \
	tests/unit/test_rules_parse \
	tests/unit/test_rules_compile \
	tests/unit/test_rules_eval
tests_unit_test_rules_parse_SOURCES = tests/unit/test_rules_parse.c tests/unit/test_rules_util.h
tests_unit_test_rules_parse_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_rules_parse_LDADD = $(TEST_LIBS)
tests_unit_test_rules_compile_SOURCES = tests/unit/test_rules_compile.c tests/unit/test_rules_util.h
tests_unit_test_rules_compile_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_rules_compile_LDADD = $(TEST_LIBS)
tests_unit_test_rules_eval_SOURCES = tests/unit/test_rules_eval.c tests/unit/test_rules_util.h
tests_unit_test_rules_eval_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_rules_eval_LDADD = $(TEST_LIBS)

FUZZ_HARNESSES += tests/fuzz/fuzz_rules
tests_fuzz_fuzz_rules_SOURCES = tests/fuzz/fuzz_rules.c tests/fuzz/replay.c
tests_fuzz_fuzz_rules_LDADD = $(SX_LIBS)

# Built by `make check`, run by hand: rules evaluated per second over the demo feed.
check_PROGRAMS += tests/rules/bench_rules
tests_rules_bench_rules_SOURCES = tests/rules/bench_rules.c
tests_rules_bench_rules_LDADD = $(SX_LIBS)

SCRIPT_TESTS += tests/rules/docs-examples.sh

# The shipped rulesets, installed side by side (the site template's base is
# "../default") where sx_cli_find_data("rulesets/default") looks.
rulesets_defaultdir = $(pkgdatadir)/rulesets/default
dist_rulesets_default_DATA = \
	rulesets/default/00-site.rules \
	rulesets/default/10-limits.rules \
	rulesets/default/20-reasons.rules \
	rulesets/default/30-classify.rules \
	rulesets/default/40-agents.rules \
	rulesets/default/50-mechanisms.rules \
	rulesets/default/60-consistency.rules \
	rulesets/default/70-delay.rules \
	rulesets/default/80-policy.rules
rulesets_sitedir = $(pkgdatadir)/rulesets/site-template
dist_rulesets_site_DATA = rulesets/site-template/site.rules
