# SPDX-License-Identifier: MIT
# Automake fragment of src/model, included by Makefile.am.

# Mechanisms of the specimen-oxygen model (air exchange, syringe wall, liquid
# heparin, electrode interference) and the oximetry check; docs/model-mechanisms.md.
libsyrinx_a_SOURCES += \
	src/model/air_exchange.c src/model/air_exchange.h \
	src/model/syringe_wall.c src/model/syringe_wall.h \
	src/model/heparin.c src/model/heparin.h \
	src/model/electrode.c src/model/electrode.h \
	src/model/oximetry.c src/model/oximetry.h

UNIT_TESTS += \
	tests/unit/test_air_exchange \
	tests/unit/test_syringe_wall \
	tests/unit/test_heparin \
	tests/unit/test_electrode \
	tests/unit/test_oximetry
tests_unit_test_air_exchange_SOURCES = tests/unit/test_air_exchange.c
tests_unit_test_air_exchange_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_air_exchange_LDADD = $(TEST_LIBS)
tests_unit_test_syringe_wall_SOURCES = tests/unit/test_syringe_wall.c
tests_unit_test_syringe_wall_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_syringe_wall_LDADD = $(TEST_LIBS)
tests_unit_test_heparin_SOURCES = tests/unit/test_heparin.c
tests_unit_test_heparin_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_heparin_LDADD = $(TEST_LIBS)
tests_unit_test_electrode_SOURCES = tests/unit/test_electrode.c
tests_unit_test_electrode_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_electrode_LDADD = $(TEST_LIBS)
tests_unit_test_oximetry_SOURCES = tests/unit/test_oximetry.c
tests_unit_test_oximetry_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_oximetry_LDADD = $(TEST_LIBS)

# scipy cross-checks of the mechanisms and the syringe-wall fit (77 without scipy)
SCRIPT_TESTS += tests/reference/mechanisms_scipy.sh
