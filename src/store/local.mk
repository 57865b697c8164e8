# SPDX-License-Identifier: MIT
# Automake fragment of src/store (the decision log), the SHA-256 it uses,
# and `syrinx audit` with its reports; included by Makefile.am.

libsyrinx_a_SOURCES += \
	src/core/sha256.c src/core/sha256.h \
	src/store/verdict_row.c src/store/verdict_row.h \
	src/store/decision_log.c src/store/decision_log.h \
	src/report/audit.c src/report/audit.h src/report/audit_page.h \
	src/report/audit_svg.c src/report/audit_html.c src/report/audit_export.c

syrinx_SOURCES += src/cli/audit.c

UNIT_TESTS += tests/unit/test_sha256 tests/unit/test_decision_log
tests_unit_test_sha256_SOURCES = tests/unit/test_sha256.c
tests_unit_test_sha256_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_sha256_LDADD = $(TEST_LIBS)
tests_unit_test_decision_log_SOURCES = tests/unit/test_decision_log.c
tests_unit_test_decision_log_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_decision_log_LDADD = $(TEST_LIBS)
UNIT_TESTS += tests/unit/test_audit
tests_unit_test_audit_SOURCES = tests/unit/test_audit.c
tests_unit_test_audit_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_audit_LDADD = $(TEST_LIBS)

# tools of the audit tests: the demo month's generator and a log writer
check_PROGRAMS += tests/audit/genmonth tests/audit/makelog
tests_audit_genmonth_SOURCES = tests/audit/genmonth.c
tests_audit_genmonth_LDADD = -lm
tests_audit_makelog_SOURCES = tests/audit/makelog.c
tests_audit_makelog_LDADD = $(SX_LIBS)

SCRIPT_TESTS += tests/audit/genmonth.sh tests/audit/roundtrip.sh tests/audit/page.sh \
	tests/audit/render.sh
