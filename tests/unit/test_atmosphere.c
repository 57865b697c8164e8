/* SPDX-License-Identifier: MIT */
/*
 * test_atmosphere.c - unit tests of src/model/atmosphere.c: barometric
 * pressure from altitude, water vapour pressure, room-air pO2, the alveolar
 * gas equation and the normal A-a gradient. Every published figure is
 * checked with its source beside the check, tagged as
 * /work/shared/MODEL-SOURCES.md tags it ([R] read in the source, [M] from
 * memory, [D] derived from tagged inputs).
 */
#include <check.h>
#include <math.h>
#include <stdlib.h>

#include "model/atmosphere.h"

#define ARRAY_SIZE(a) (sizeof(a) / sizeof((a)[0]))

/* ---- barometric pressure ---- */

static const struct {
	double altitude_m, pb, tol;
} icao_checks[] = {
        /* ICAO standard atmosphere [M; 101325 Pa, 288.15 K and 0.0065 K/m are R]
         * in MODEL-SOURCES: 760 mmHg at 0 m */
        {0.0, 760.0, 1e-12},
        /* ICAO standard atmosphere: about 674 mmHg at 1000 m [D] in MODEL-SOURCES */
        {1000.0, 674.0, 0.5},
};

START_TEST(test_icao_check_values)
{
	ck_assert_double_eq_tol(sx_barometric_from_altitude(icao_checks[_i].altitude_m),
	                        icao_checks[_i].pb, icao_checks[_i].tol);
}
END_TEST

START_TEST(test_icao_constants)
{
	/* ICAO [R] in MODEL-SOURCES: 0.0065 K/m over 288.15 K is the 2.25577e-5
	 * per m of the formula; 101325 Pa is 760 mmHg to 0.001 (1 mmHg =
	 * 133.322387415 Pa, common practice; the torr, 101325/760 Pa, differs by
	 * 1.4e-7) */
	double h;

	ck_assert_double_eq_tol(0.0065 / 288.15, 2.25577e-5, 5e-11);
	ck_assert_double_eq_tol(101325.0 / 133.322387415, 760.0, 0.001);
	for (h = -500.0; h <= 9000.0; h += 250.0) {
		double want = 760.0 * pow(1.0 - 0.0065 * h / 288.15, 5.25588);

		ck_assert_double_eq_tol(sx_barometric_from_altitude(h), want, 1e-6 * want);
	}
}
END_TEST

START_TEST(test_icao_shape)
{
	/* ICAO [M] in MODEL-SOURCES: pressure falls with altitude; below sea
	 * level it is above 760; past the formula's zero it is 0 */
	double h, prev = INFINITY;

	for (h = -430.0; h <= 12000.0; h += 10.0) {
		double pb = sx_barometric_from_altitude(h);

		ck_assert(pb < prev);
		prev = pb;
	}
	ck_assert(sx_barometric_from_altitude(-430.0) > 760.0);
	ck_assert_double_eq_tol(sx_barometric_from_altitude(50000.0), 0.0, 1e-300);
	ck_assert(isnan(sx_barometric_from_altitude(NAN)));
}
END_TEST

/* ---- water vapour ---- */

START_TEST(test_antoine)
{
	/* Antoine (water, 1-100 C) [R] in MODEL-SOURCES: 47 mmHg at 37 C */
	ck_assert_double_eq_tol(sx_water_vapour_pressure(37.0), 47.0, 0.2);
	ck_assert_double_eq_tol(sx_water_vapour_pressure(37.0), SX_PH2O_BODY_MMHG, 0.2);
	/* common practice: water boils at 100 C under 760 mmHg */
	ck_assert_double_eq_tol(sx_water_vapour_pressure(100.0), 760.0, 1.0);
	/* Antoine [R]: the formula itself */
	ck_assert_double_eq_tol(sx_water_vapour_pressure(22.0),
	                        pow(10.0, 8.07131 - 1730.63 / (233.426 + 22.0)), 1e-12);
	ck_assert(isnan(sx_water_vapour_pressure(-300.0)));
	ck_assert(isnan(sx_water_vapour_pressure(NAN)));
}
END_TEST

START_TEST(test_antoine_monotone)
{
	/* Antoine [R] in MODEL-SOURCES: rises with temperature over 1-100 C */
	double t, prev = 0.0;

	for (t = 1.0; t <= 100.0; t += 0.5) {
		double p = sx_water_vapour_pressure(t);

		ck_assert(p > prev);
		prev = p;
	}
}
END_TEST

/* ---- room air ---- */

static const struct {
	double pb, temp_c, rh, po2;
} room_air_checks[] = {
        /* room-air pO2 = 0.2095 (Pb - RH pH2O(T_room)): 159 mmHg dry [D] in
         * MODEL-SOURCES */
        {760.0, 22.0, 0.0, 159.0},
        /* about 157 at 22 C and 50 % RH [D] in MODEL-SOURCES */
        {760.0, 22.0, 0.5, 157.0},
};

START_TEST(test_room_air_check_values)
{
	ck_assert_double_eq_tol(sx_room_air_po2(room_air_checks[_i].pb, room_air_checks[_i].temp_c,
	                                        room_air_checks[_i].rh),
	                        room_air_checks[_i].po2, 0.5);
}
END_TEST

START_TEST(test_room_air_formula)
{
	/* O2 fraction of dry air 0.2095 [R] in MODEL-SOURCES */
	ck_assert_double_eq_tol(SX_AIR_O2_FRACTION, 0.2095, 1e-15);
	ck_assert_double_eq_tol(sx_room_air_po2(760.0, 22.0, 0.0), 0.2095 * 760.0, 1e-12);
	/* room-air pO2 = 0.2095 (Pb - RH pH2O(T_room)) [D] in MODEL-SOURCES, at
	 * 1000 m (ICAO [D]) and 25 C, 100 % RH */
	ck_assert_double_eq_tol(
	        sx_room_air_po2(sx_barometric_from_altitude(1000.0), 25.0, 1.0),
	        0.2095 * (sx_barometric_from_altitude(1000.0) - sx_water_vapour_pressure(25.0)),
	        1e-12);
	ck_assert(isnan(sx_room_air_po2(760.0, 22.0, 1.5)));
	ck_assert(isnan(sx_room_air_po2(760.0, 22.0, -0.1)));
	ck_assert(isnan(sx_room_air_po2(760.0, 22.0, NAN)));
}
END_TEST

/* ---- alveolar gas equation ---- */

START_TEST(test_alveolar_worked_example)
{
	/* Alveolar gas equation [R, clinical references], worked example: sea
	 * level, FiO2 0.21, PaCO2 40 -> 99.7 mmHg (101.8 full) [D] in
	 * MODEL-SOURCES */
	ck_assert_double_eq_tol(SX_RESPIRATORY_QUOTIENT, 0.8, 1e-15);
	ck_assert_double_eq_tol(SX_PH2O_BODY_MMHG, 47.0, 1e-15);
	ck_assert_double_eq_tol(sx_alveolar_po2(0.21, 760.0, 40.0, SX_RESPIRATORY_QUOTIENT), 99.7,
	                        0.05);
	ck_assert_double_eq_tol(sx_alveolar_po2_full(0.21, 760.0, 40.0, SX_RESPIRATORY_QUOTIENT),
	                        101.8, 0.05);
}
END_TEST

static const struct {
	double fio2, pb, paco2;
} alveolar_cases[] = {
        {0.21, 760.0, 40.0}, {0.21, 674.0, 35.0}, {0.30, 760.0, 40.0},
        {0.50, 760.0, 60.0}, {1.00, 760.0, 40.0}, {0.21, 500.0, 30.0},
};

START_TEST(test_alveolar_forms)
{
	/* Alveolar gas equation [R, clinical references] in MODEL-SOURCES: both
	 * forms as written; with R < 1 the full form subtracts less, by PaCO2
	 * FiO2 (1/R - 1), and at FiO2 1 it subtracts PaCO2 itself (arithmetic) */
	double f = alveolar_cases[_i].fio2, pb = alveolar_cases[_i].pb;
	double c = alveolar_cases[_i].paco2, r = SX_RESPIRATORY_QUOTIENT;
	double shortf = sx_alveolar_po2(f, pb, c, r);
	double full = sx_alveolar_po2_full(f, pb, c, r);

	ck_assert_double_eq_tol(shortf, f * (pb - 47.0) - c / r, 1e-12);
	ck_assert_double_eq_tol(full, f * (pb - 47.0) - c * (f + (1.0 - f) / r), 1e-12);
	ck_assert_double_eq_tol(full - shortf, c * f * (1.0 / r - 1.0), 1e-12);
	ck_assert(full > shortf);
	if (f == 1.0)
		ck_assert_double_eq_tol(full, pb - 47.0 - c, 1e-12);
}
END_TEST

START_TEST(test_alveolar_invalid)
{
	ck_assert(isnan(sx_alveolar_po2(1.2, 760.0, 40.0, 0.8)));
	ck_assert(isnan(sx_alveolar_po2(-0.1, 760.0, 40.0, 0.8)));
	ck_assert(isnan(sx_alveolar_po2(0.21, 760.0, 40.0, 0.0)));
	ck_assert(isnan(sx_alveolar_po2_full(0.21, 760.0, 40.0, -1.0)));
	ck_assert(isnan(sx_alveolar_po2_full(NAN, 760.0, 40.0, 0.8)));
	ck_assert(isnan(sx_alveolar_po2_full(0.21, 760.0, 40.0, INFINITY)));
}
END_TEST

/* ---- normal A-a gradient ---- */

static const struct {
	double age, gradient;
} aa_checks[] = {
        /* Normal A-a gradient roughly age/4 + 4 mmHg [R in calculators, origin M]
         * in MODEL-SOURCES */
        {0.0, 4.0}, {20.0, 9.0}, {40.0, 14.0}, {60.0, 19.0}, {80.0, 24.0},
};

START_TEST(test_aa_gradient_check_values)
{
	ck_assert_double_eq_tol(sx_aa_gradient_normal(aa_checks[_i].age), aa_checks[_i].gradient,
	                        1e-12);
}
END_TEST

START_TEST(test_aa_gradient_below_20)
{
	/* below 20 typically (clinical texts) [R] in MODEL-SOURCES: age/4 + 4
	 * stays under 20 up to age 63 */
	double age;

	for (age = 0.0; age < 64.0; age += 1.0)
		ck_assert(sx_aa_gradient_normal(age) < 20.0);
	ck_assert(isnan(sx_aa_gradient_normal(-1.0)));
	ck_assert(isnan(sx_aa_gradient_normal(NAN)));
}
END_TEST

/*
 * Cerveri et al., Am J Respir Crit Care Med 1995;152:934 [R] in
 * MODEL-SOURCES: PaO2 = 143.6 - 0.39 age - 0.56 BMI - 0.57 PaCO2, SEE 7.5
 * mmHg. Against it: sea-level alveolar pO2 (short form, FiO2 0.21, PaCO2 40)
 * minus the normal gradient age/4 + 4. Measured here: Cerveri is 11.1 mmHg
 * higher at age 20 and BMI 20, 2.9 lower at age 80 and BMI 30; so the check is
 * two SEE (15 mmHg) over ages 20-80 and BMI 20-30. Assumes Cerveri's subjects
 * breathed air near sea level.
 */
START_TEST(test_aa_gradient_vs_cerveri)
{
	double age, bmi;
	double pao2 = sx_alveolar_po2(0.21, 760.0, 40.0, SX_RESPIRATORY_QUOTIENT);

	for (age = 20.0; age <= 80.0; age += 5.0) {
		for (bmi = 20.0; bmi <= 30.0; bmi += 1.0) {
			double cerveri = 143.6 - 0.39 * age - 0.56 * bmi - 0.57 * 40.0;

			ck_assert_double_eq_tol(pao2 - sx_aa_gradient_normal(age), cerveri,
			                        2.0 * 7.5);
		}
	}
}
END_TEST

static Suite *atmosphere_suite(void)
{
	Suite *suite = suite_create("atmosphere");
	TCase *tc;

	tc = tcase_create("barometric");
	tcase_add_loop_test(tc, test_icao_check_values, 0, ARRAY_SIZE(icao_checks));
	tcase_add_test(tc, test_icao_constants);
	tcase_add_test(tc, test_icao_shape);
	suite_add_tcase(suite, tc);

	tc = tcase_create("water vapour");
	tcase_add_test(tc, test_antoine);
	tcase_add_test(tc, test_antoine_monotone);
	suite_add_tcase(suite, tc);

	tc = tcase_create("room air");
	tcase_add_loop_test(tc, test_room_air_check_values, 0, ARRAY_SIZE(room_air_checks));
	tcase_add_test(tc, test_room_air_formula);
	suite_add_tcase(suite, tc);

	tc = tcase_create("alveolar");
	tcase_add_test(tc, test_alveolar_worked_example);
	tcase_add_loop_test(tc, test_alveolar_forms, 0, ARRAY_SIZE(alveolar_cases));
	tcase_add_test(tc, test_alveolar_invalid);
	tcase_add_loop_test(tc, test_aa_gradient_check_values, 0, ARRAY_SIZE(aa_checks));
	tcase_add_test(tc, test_aa_gradient_below_20);
	tcase_add_test(tc, test_aa_gradient_vs_cerveri);
	suite_add_tcase(suite, tc);
	return suite;
}

int main(void)
{
	SRunner *runner = srunner_create(atmosphere_suite());
	int failed;

	srunner_run_all(runner, CK_NORMAL);
	failed = srunner_ntests_failed(runner);
	srunner_free(runner);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
