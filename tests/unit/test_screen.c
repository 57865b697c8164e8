/* SPDX-License-Identifier: MIT */
/*
 * test_screen.c - screening one specimen: direction, monotonicity, the interval,
 * the consistency check, time problems, reproducibility.
 */
#include <check.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "model/screen.h"

/* A specimen built from "field=value" pairs; times at +00:00. */
static void build(sx_specimen *s, const char *const *pairs)
{
	sx_diag_list d;
	sx_diag_list_init(&d);
	sx_specimen_init(s);
	for (; *pairs; pairs++) {
		const char *eq = strchr(*pairs, '=');
		int f = sx_field_lookup(*pairs, (size_t)(eq - *pairs));
		ck_assert_int_ge(f, 0);
		ck_assert_int_eq(sx_specimen_set(s, (sx_field)f, eq + 1, strlen(eq + 1), NULL, 0,
						 NULL, &d),
				 SX_OK);
	}
	sx_diag_list_clear(&d);
}

/* Arterial, well oxygenated, waiting `minutes` at room temperature. */
static sx_verdict screen_delay(double po2, int minutes, double wbc, const char *storage)
{
	char p[32], a[48], w[32], st[32];
	const char *pairs[] = {"specimen_id=T", "collected_at=2026-03-14T08:00:00Z", a, p, w,
			       st, "hb=14", "ph=7.40", "pco2=40", NULL};
	sx_specimen s;
	sx_settings set;
	sx_verdict v;
	snprintf(p, sizeof p, "po2=%g", po2);
	snprintf(a, sizeof a, "analysed_at=2026-03-14T%02d:%02d:00Z", 8 + minutes / 60,
		 minutes % 60);
	snprintf(w, sizeof w, "wbc=%g", wbc);
	snprintf(st, sizeof st, "storage=%s", storage);
	build(&s, pairs);
	sx_settings_defaults(&set);
	ck_assert_int_eq(sx_screen_specimen(&s, &set, &v), SX_OK);
	sx_specimen_clear(&s);
	return v;
}

START_TEST(a_delay_lowers_a_well_oxygenated_sample)
{
	sx_verdict v = screen_delay(95, 30, 7, "room");
	ck_assert(v.has_bias);
	ck_assert(v.bias_mmhg.estimate < 0);
	ck_assert(v.has_before);
	ck_assert(v.po2_before_mmhg.estimate > 95);
	ck_assert_uint_eq(v.mechanism_count, 1);
	ck_assert_str_eq(v.mechanisms[0].name, "metabolism");
}
END_TEST

START_TEST(more_time_more_leukocytes_larger_effect)
{
	double last = 0.0;
	static const int minutes[] = {5, 15, 30, 45, 59};
	static const double wbc[] = {7, 20, 50, 100, 250, 400};
	for (size_t i = 0; i < sizeof minutes / sizeof minutes[0]; i++) {
		sx_verdict v = screen_delay(95, minutes[i], 7, "room");
		ck_assert(v.bias_mmhg.estimate < last);
		last = v.bias_mmhg.estimate;
	}
	last = 0.0;
	for (size_t i = 0; i < sizeof wbc / sizeof wbc[0]; i++) {
		sx_verdict v = screen_delay(95, 20, wbc[i], "room");
		ck_assert(v.bias_mmhg.estimate < last);
		last = v.bias_mmhg.estimate;
	}
}
END_TEST

START_TEST(ice_slows_the_loss)
{
	sx_verdict room = screen_delay(95, 40, 7, "room");
	sx_verdict iced = screen_delay(95, 40, 7, "iced");
	ck_assert(iced.bias_mmhg.estimate < 0);
	ck_assert(iced.bias_mmhg.estimate > room.bias_mmhg.estimate);
}
END_TEST

START_TEST(high_po2_moves_more_than_low_po2)
{
	/* The same O2 loss moves pO2 far more on the flat part of the curve (MODEL-SOURCES
	 * [D]: dP = dC / (alpha + k Hb dS/dP)). */
	sx_verdict high = screen_delay(400, 20, 7, "room");
	sx_verdict low = screen_delay(45, 20, 7, "room");
	ck_assert(fabs(high.bias_mmhg.estimate) > 5 * fabs(low.bias_mmhg.estimate));
}
END_TEST

START_TEST(the_interval_contains_the_estimate)
{
	static const int minutes[] = {0, 3, 30, 90};
	static const double po2[] = {40, 95, 300};
	for (size_t i = 0; i < 4; i++)
		for (size_t j = 0; j < 3; j++) {
			sx_verdict v = screen_delay(po2[j], minutes[i], 100, "room");
			ck_assert(v.bias_mmhg.low <= v.bias_mmhg.estimate);
			ck_assert(v.bias_mmhg.estimate <= v.bias_mmhg.high);
			ck_assert(v.po2_before_mmhg.low <= v.po2_before_mmhg.estimate);
			ck_assert(v.po2_before_mmhg.estimate <= v.po2_before_mmhg.high);
		}
}
END_TEST

START_TEST(a_leukaemic_sample_is_not_accepted)
{
	/* Spurious hypoxaemia with very high leukocyte counts (Hess et al., NEJM 1979). */
	sx_verdict v = screen_delay(70, 25, 400, "room");
	ck_assert(v.bias_mmhg.estimate < -4.5);
	ck_assert_int_ne(v.disposition, SX_ACCEPT);
}
END_TEST

START_TEST(a_30_hour_delay_is_flagged_not_modelled)
{
	const char *pairs[] = {"specimen_id=L", "collected_at=2026-03-14T08:00Z",
			       "analysed_at=2026-03-15T14:00Z", "po2=80", NULL};
	sx_specimen s;
	sx_settings set;
	sx_verdict v;
	build(&s, pairs);
	sx_settings_defaults(&set);
	ck_assert_int_eq(sx_screen_specimen(&s, &set, &v), SX_OK);
	ck_assert(!v.has_bias);
	ck_assert_int_eq(v.disposition, SX_REJECT);
	ck_assert_uint_ge(v.warning_count, 1);
	ck_assert_ptr_nonnull(strstr(v.warnings[v.warning_count - 1], "analysed_at: 30.0 h"));
	sx_specimen_clear(&s);
}
END_TEST

START_TEST(times_in_the_wrong_order_are_a_warning)
{
	const char *pairs[] = {"specimen_id=W", "collected_at=2026-03-14T09:00Z",
			       "analysed_at=2026-03-14T08:00Z", "po2=80", NULL};
	sx_specimen s;
	sx_settings set;
	sx_verdict v;
	build(&s, pairs);
	sx_settings_defaults(&set);
	ck_assert_int_eq(sx_screen_specimen(&s, &set, &v), SX_OK);
	ck_assert(!v.has_bias);
	ck_assert_ptr_nonnull(strstr(v.warnings[v.warning_count - 1], "before collected_at"));
	sx_specimen_clear(&s);
}
END_TEST

START_TEST(po2_above_the_alveolar_gas_equation_is_rejected)
{
	/* Sea level, FiO2 0.21, PaCO2 40: PAO2 about 100 mmHg (alveolar gas equation, clinical
	 * references); 140 mmHg cannot be arterial blood's. */
	const char *pairs[] = {"specimen_id=A", "collected_at=2026-03-14T08:00Z",
			       "analysed_at=2026-03-14T08:05Z", "po2=140", "pco2=40",
			       "fio2=0.21", "specimen_type=arterial", NULL};
	const char *ok_pairs[] = {"specimen_id=B", "collected_at=2026-03-14T08:00Z",
				  "analysed_at=2026-03-14T08:05Z", "po2=95", "pco2=40",
				  "fio2=0.21", "specimen_type=arterial", NULL};
	sx_specimen s;
	sx_settings set;
	sx_verdict v;
	sx_settings_defaults(&set);
	build(&s, pairs);
	ck_assert_int_eq(sx_screen_specimen(&s, &set, &v), SX_OK);
	ck_assert_int_eq(v.disposition, SX_REJECT);
	ck_assert_str_eq(v.reasons[0].code, "po2-above-alveolar");
	sx_specimen_clear(&s);
	build(&s, ok_pairs);
	ck_assert_int_eq(sx_screen_specimen(&s, &set, &v), SX_OK);
	ck_assert_int_eq(v.disposition, SX_ACCEPT);
	sx_specimen_clear(&s);
}
END_TEST

START_TEST(without_a_reading_the_prior_is_used)
{
	const char *pairs[] = {"specimen_id=P", "collected_at=2026-03-14T08:00Z",
			       "analysed_at=2026-03-14T08:40Z", "fio2=0.5", NULL};
	sx_specimen s;
	sx_settings set;
	sx_verdict v;
	build(&s, pairs);
	sx_settings_defaults(&set);
	ck_assert_int_eq(sx_screen_specimen(&s, &set, &v), SX_OK);
	ck_assert(v.has_bias);
	ck_assert(!v.has_before);
	ck_assert(v.bias_mmhg.estimate < 0);
	sx_specimen_clear(&s);
}
END_TEST

START_TEST(same_input_same_verdict)
{
	sx_verdict a = screen_delay(95, 33, 120, "room");
	sx_verdict b = screen_delay(95, 33, 120, "room");
	ck_assert_int_eq(memcmp(&a, &b, sizeof a), 0);
}
END_TEST

int main(void)
{
	Suite *s = suite_create("screen");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;
	tcase_add_test(tc, a_delay_lowers_a_well_oxygenated_sample);
	tcase_add_test(tc, more_time_more_leukocytes_larger_effect);
	tcase_add_test(tc, ice_slows_the_loss);
	tcase_add_test(tc, high_po2_moves_more_than_low_po2);
	tcase_add_test(tc, the_interval_contains_the_estimate);
	tcase_add_test(tc, a_leukaemic_sample_is_not_accepted);
	tcase_add_test(tc, a_30_hour_delay_is_flagged_not_modelled);
	tcase_add_test(tc, times_in_the_wrong_order_are_a_warning);
	tcase_add_test(tc, po2_above_the_alveolar_gas_equation_is_rejected);
	tcase_add_test(tc, without_a_reading_the_prior_is_used);
	tcase_add_test(tc, same_input_same_verdict);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
