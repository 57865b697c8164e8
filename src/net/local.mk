# SPDX-License-Identifier: MIT
# Automake fragment of src/net (MLLP framing and the service), included by Makefile.am.
libsyrinx_a_SOURCES += src/net/mllp.c src/net/mllp.h src/net/server.c src/net/server.h
syrinx_SOURCES += src/cli/serve.c

UNIT_TESTS += tests/unit/test_mllp
tests_unit_test_mllp_SOURCES = tests/unit/test_mllp.c
tests_unit_test_mllp_CFLAGS = $(TEST_CFLAGS)
tests_unit_test_mllp_LDADD = $(TEST_LIBS)

# syrinx serve end to end (tests/serve/): real MLLP peers, framing faults, error ACKs,
# resends, signals, and kill -9 in the middle of a burst. Python standard library;
# loopback only. The peers' tests skip (77) where node or python3-hl7 cannot be had.
SCRIPT_TESTS += tests/serve/framing.sh tests/serve/errors.sh tests/serve/resend.sh \
	tests/serve/signals.sh tests/serve/crash.sh tests/serve/node-client.sh \
	tests/serve/mllp-send.sh tests/serve/forward.sh

# make bench-serve: messages per second and latency of syrinx serve (not in make check;
# figures in docs/performance.md). BENCH_SERVE_ARGS passes options to tests/bench/serve.py.
bench-serve: syrinx
	SX_BUILDDIR='$(abs_top_builddir)' /usr/bin/python3 $(srcdir)/tests/bench/serve.py \
		$(BENCH_SERVE_ARGS)
.PHONY: bench-serve
