# SPDX-License-Identifier: MIT
# Automake fragment of src/net (MLLP framing and the service), included by Makefile.am.
libsyrinx_a_SOURCES += src/net/mllp.c src/net/mllp.h src/net/server.c src/net/server.h
syrinx_SOURCES += src/cli/serve.c

UNIT_TESTS += tests/unit/test_mllp
tests_unit_test_mllp_SOURCES = tests/unit/test_mllp.c
tests_unit_test_mllp_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_mllp_LDADD = $(TEST_LIBS)
