# SPDX-License-Identifier: MIT
# Automake fragment of src/feed, included by Makefile.am.

# ---- HL7 v2: parser, mapping, writers, feed ---------------------------------
libsyrinx_a_SOURCES += \
	src/feed/hl7limits.h \
	src/feed/hl7parse.c src/feed/hl7parse.h \
	src/feed/hl7map.c src/feed/hl7obx.c src/feed/hl7internal.h src/feed/hl7.h \
	src/feed/hl7ack.c \
	src/feed/hl7feed.c \
	src/report/hl7out.c src/report/hl7out.h

UNIT_TESTS += \
	tests/unit/test_hl7_parse \
	tests/unit/test_hl7_map \
	tests/unit/test_hl7_write
tests_unit_test_hl7_parse_SOURCES = tests/unit/test_hl7_parse.c tests/unit/test_hl7_util.h
tests_unit_test_hl7_parse_CFLAGS = $(TEST_CFLAGS) -DSX_TEST_FIXTURES='"$(abs_top_srcdir)/fixtures"'
tests_unit_test_hl7_parse_LDADD = $(TEST_LIBS)
tests_unit_test_hl7_map_SOURCES = tests/unit/test_hl7_map.c tests/unit/test_hl7_util.h
tests_unit_test_hl7_map_CFLAGS = $(TEST_CFLAGS) -DSX_TEST_FIXTURES='"$(abs_top_srcdir)/fixtures"'
tests_unit_test_hl7_map_LDADD = $(TEST_LIBS)
tests_unit_test_hl7_write_SOURCES = tests/unit/test_hl7_write.c tests/unit/test_hl7_util.h
tests_unit_test_hl7_write_CFLAGS = $(TEST_CFLAGS) -DSX_TEST_FIXTURES='"$(abs_top_srcdir)/fixtures"'
tests_unit_test_hl7_write_LDADD = $(TEST_LIBS)

# the fuzz harness, replayed over tests/fuzz/corpus/hl7 by tests/fuzz/replay.sh
FUZZ_HARNESSES += tests/fuzz/fuzz_hl7
tests_fuzz_fuzz_hl7_SOURCES = tests/fuzz/fuzz_hl7.c tests/fuzz/replay.c
tests_fuzz_fuzz_hl7_LDADD = $(SX_LIBS)

# the differential test against node-hl7-client (skipped without node)
check_PROGRAMS += tests/hl7/hl7dump
tests_hl7_hl7dump_SOURCES = tests/hl7/hl7dump.c
tests_hl7_hl7dump_LDADD = $(SX_LIBS)
SCRIPT_TESTS += tests/hl7/differential.sh tests/hl7/demo.sh
