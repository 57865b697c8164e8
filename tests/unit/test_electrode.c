/* SPDX-License-Identifier: MIT */
/*
 * test_electrode.c - unit tests of src/model/electrode.c: agent names, the
 * reading a volatile agent gives at the O2 electrode and its inverse. Each
 * published figure is checked with its source beside it, tagged as
 * /work/shared/MODEL-SOURCES.md tags it ([R] read in the source, [M] from
 * memory).
 */
#include <check.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "model/electrode.h"

#define ARRAY_SIZE(a) (sizeof(a) / sizeof((a)[0]))

static double reading1(const sx_electrode_params *p, double po2, sx_agent_kind a, double pct)
{
	sx_agent_dose d = {a, pct};

	return sx_electrode_reading(p, po2, &d, 1);
}

static const struct {
	const char *name;
	int agent;
} names[] = {
        {"halothane", SX_AGENT_HALOTHANE},
        {"Halothane", SX_AGENT_HALOTHANE},
        {"ENFLURANE", SX_AGENT_ENFLURANE},
        {"isoflurane", SX_AGENT_ISOFLURANE},
        {"sevoflurane", SX_AGENT_SEVOFLURANE},
        {"desflurane", SX_AGENT_DESFLURANE},
        {"nitrous oxide", SX_AGENT_NITROUS_OXIDE},
        {"Nitrous-Oxide", SX_AGENT_NITROUS_OXIDE},
        {"nitrous_oxide", SX_AGENT_NITROUS_OXIDE},
        {"N2O", SX_AGENT_NITROUS_OXIDE},
        {"xenon", -1},
        {"halo", -1},
        {"halothanes", -1},
        {"", -1},
};

START_TEST(test_lookup)
{
	const char *n = names[_i].name;

	ck_assert_int_eq(sx_electrode_agent_lookup(n, strlen(n)), names[_i].agent);
}
END_TEST

START_TEST(test_names)
{
	int a;

	for (a = 0; a < SX_AGENT_COUNT; a++) {
		const char *n = sx_electrode_agent_name((sx_agent_kind)a);

		ck_assert_ptr_nonnull(n);
		ck_assert_int_eq(sx_electrode_agent_lookup(n, strlen(n)), a);
	}
	ck_assert_ptr_null(sx_electrode_agent_name(SX_AGENT_COUNT));
	ck_assert_int_eq(sx_electrode_agent_lookup(NULL, 0), -1);
	/* the length counts, not a terminating NUL */
	ck_assert_int_eq(sx_electrode_agent_lookup("n2o, 1 %", 3), SX_AGENT_NITROUS_OXIDE);
}
END_TEST

START_TEST(test_defaults)
{
	/* McHugh et al., Anesthesiology 1979 [R]: halothane reads high; size 0.03
	 * per vol % with range 0-0.10 [M, low confidence]; the others 0 with
	 * range 0-0.005 [M] */
	sx_electrode_params d = sx_electrode_defaults(), lo, hi;
	int a;

	sx_electrode_bounds(&lo, &hi);
	ck_assert_double_eq_tol(d.sensitivity[SX_AGENT_HALOTHANE], 0.03, 1e-15);
	ck_assert_double_eq_tol(hi.sensitivity[SX_AGENT_HALOTHANE], 0.10, 1e-15);
	for (a = 0; a < SX_AGENT_COUNT; a++) {
		ck_assert(lo.sensitivity[a] <= d.sensitivity[a]);
		ck_assert(d.sensitivity[a] <= hi.sensitivity[a]);
		ck_assert_double_eq_tol(lo.sensitivity[a], 0.0, 1e-300);
		ck_assert_double_eq_tol(d.additive[a], 0.0, 1e-300);
		if (a != SX_AGENT_HALOTHANE) {
			ck_assert_double_eq_tol(d.sensitivity[a], 0.0, 1e-300);
			ck_assert_double_eq_tol(hi.sensitivity[a], 0.005, 1e-15);
		}
	}
	sx_electrode_bounds(NULL, NULL);
}
END_TEST

START_TEST(test_halothane_reads_high)
{
	/* McHugh et al. 1979 [R] in MODEL-SOURCES: 1 % halothane raised the
	 * current at every polarising voltage tried; the default reads 3 % high
	 * per vol % [M] */
	sx_electrode_params p = sx_electrode_defaults();
	double po2;

	for (po2 = 20.0; po2 <= 600.0; po2 += 20.0) {
		ck_assert(reading1(&p, po2, SX_AGENT_HALOTHANE, 1.0) > po2);
		ck_assert_double_eq_tol(reading1(&p, po2, SX_AGENT_HALOTHANE, 1.0), po2 * 1.03,
		                        1e-12 * po2);
	}
}
END_TEST

START_TEST(test_zero_percent_and_none)
{
	/* no agent, or 0 %: the reading is the pO2 */
	sx_electrode_params p = sx_electrode_defaults();
	int a;

	ck_assert_double_eq_tol(sx_electrode_reading(&p, 95.0, NULL, 0), 95.0, 1e-300);
	for (a = 0; a < SX_AGENT_COUNT; a++)
		ck_assert_double_eq_tol(reading1(&p, 95.0, (sx_agent_kind)a, 0.0), 95.0, 1e-300);
}
END_TEST

START_TEST(test_enflurane_no_effect)
{
	/* McHugh et al. 1979 [R] in MODEL-SOURCES: 2 % enflurane had no effect;
	 * N2O negligible, isoflurane, sevoflurane, desflurane none known [M] */
	sx_electrode_params p = sx_electrode_defaults();
	int a;

	ck_assert_double_eq_tol(reading1(&p, 95.0, SX_AGENT_ENFLURANE, 2.0), 95.0, 1e-300);
	for (a = SX_AGENT_ENFLURANE; a < SX_AGENT_COUNT; a++)
		ck_assert_double_eq_tol(reading1(&p, 95.0, (sx_agent_kind)a, 5.0), 95.0, 1e-300);
}
END_TEST

START_TEST(test_linear_in_percent)
{
	/* the model (electrode.h): the extra reading is linear in the percent */
	sx_electrode_params p = sx_electrode_defaults();
	double base, pct;

	p.additive[SX_AGENT_HALOTHANE] = 1.5;
	base = reading1(&p, 200.0, SX_AGENT_HALOTHANE, 1.0) - 200.0;
	for (pct = 0.0; pct <= 5.0; pct += 0.25)
		ck_assert_double_eq_tol(reading1(&p, 200.0, SX_AGENT_HALOTHANE, pct) - 200.0,
		                        base * pct, 1e-12);
	ck_assert_double_eq_tol(base, 200.0 * 0.03 + 1.5, 1e-12);
}
END_TEST

START_TEST(test_agents_add)
{
	sx_electrode_params p = sx_electrode_defaults();
	sx_agent_dose d[] = {{SX_AGENT_HALOTHANE, 1.0},
	                     {SX_AGENT_NITROUS_OXIDE, 60.0},
	                     {SX_AGENT_HALOTHANE, 0.5}};

	p.sensitivity[SX_AGENT_NITROUS_OXIDE] = 0.001;
	ck_assert_double_eq_tol(sx_electrode_reading(&p, 100.0, d, ARRAY_SIZE(d)),
	                        100.0 * (1.0 + 0.03 * 1.5 + 0.001 * 60.0), 1e-12);
}
END_TEST

START_TEST(test_inverse)
{
	/* reading -> true pO2 is exact [D] */
	sx_electrode_params lo, hi;
	sx_agent_dose d[] = {{SX_AGENT_HALOTHANE, 1.2}, {SX_AGENT_ISOFLURANE, 1.0}};
	double po2;

	sx_electrode_bounds(&lo, &hi);
	hi.additive[SX_AGENT_HALOTHANE] = 2.0;
	for (po2 = 0.0; po2 <= 700.0; po2 += 7.0) {
		double r = sx_electrode_reading(&hi, po2, d, ARRAY_SIZE(d));

		ck_assert(r >= po2);
		ck_assert_double_eq_tol(sx_electrode_true_po2(&hi, r, d, ARRAY_SIZE(d)), po2,
		                        1e-12 * (po2 + 1.0));
		ck_assert_double_eq_tol(sx_electrode_true_po2(&lo, po2, d, ARRAY_SIZE(d)), po2,
		                        1e-300);
	}
}
END_TEST

START_TEST(test_invalid)
{
	sx_electrode_params p = sx_electrode_defaults();
	sx_agent_dose bad_pct = {SX_AGENT_HALOTHANE, -1.0};
	sx_agent_dose bad_agent = {(sx_agent_kind)SX_AGENT_COUNT, 1.0};
	sx_agent_dose nan_pct = {SX_AGENT_HALOTHANE, NAN};

	ck_assert(isnan(sx_electrode_reading(&p, 90.0, &bad_pct, 1)));
	ck_assert(isnan(sx_electrode_reading(&p, 90.0, &bad_agent, 1)));
	ck_assert(isnan(sx_electrode_reading(&p, 90.0, &nan_pct, 1)));
	ck_assert(isnan(sx_electrode_reading(&p, -1.0, NULL, 0)));
	ck_assert(isnan(sx_electrode_reading(&p, 90.0, NULL, 1)));
	ck_assert(isnan(sx_electrode_reading(NULL, 90.0, NULL, 0)));
	ck_assert(isnan(sx_electrode_true_po2(&p, NAN, NULL, 0)));
	ck_assert(isnan(sx_electrode_true_po2(&p, 90.0, &bad_pct, 1)));
}
END_TEST

static Suite *electrode_suite(void)
{
	Suite *suite = suite_create("electrode");
	TCase *tc;

	tc = tcase_create("agents");
	tcase_add_loop_test(tc, test_lookup, 0, ARRAY_SIZE(names));
	tcase_add_test(tc, test_names);
	tcase_add_test(tc, test_defaults);
	suite_add_tcase(suite, tc);

	tc = tcase_create("reading");
	tcase_add_test(tc, test_halothane_reads_high);
	tcase_add_test(tc, test_zero_percent_and_none);
	tcase_add_test(tc, test_enflurane_no_effect);
	tcase_add_test(tc, test_linear_in_percent);
	tcase_add_test(tc, test_agents_add);
	tcase_add_test(tc, test_inverse);
	tcase_add_test(tc, test_invalid);
	suite_add_tcase(suite, tc);
	return suite;
}

int main(void)
{
	SRunner *runner;
	int failed;

	runner = srunner_create(electrode_suite());
	srunner_run_all(runner, CK_NORMAL);
	failed = srunner_ntests_failed(runner);
	srunner_free(runner);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
