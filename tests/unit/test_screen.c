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
#include "rules/ruleset.h"

/* The shipped default ruleset: these tests screen as the product does. */
static const sx_ruleset *rules(void)
{
	static sx_ruleset *rs;
	if (!rs) {
		const char *src = getenv("SX_SRCDIR");
		char dir[4096];
		sx_diag_list d;
		sx_diag_list_init(&d);
		snprintf(dir, sizeof dir, "%s/rulesets/default", src ? src : ".");
		ck_assert_msg(sx_ruleset_load(dir, &rs, &d) == SX_OK, "cannot load %s", dir);
		sx_diag_list_clear(&d);
	}
	return rs;
}

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
	ck_assert_int_eq(sx_screen_specimen(&s, sx_ruleset_settings(rules()), rules(), &v), SX_OK);
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
	ck_assert_int_eq(sx_screen_specimen(&s, sx_ruleset_settings(rules()), rules(), &v), SX_OK);
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
	ck_assert_int_eq(sx_screen_specimen(&s, sx_ruleset_settings(rules()), rules(), &v), SX_OK);
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
	ck_assert_int_eq(sx_screen_specimen(&s, sx_ruleset_settings(rules()), rules(), &v), SX_OK);
	ck_assert_int_eq(v.disposition, SX_REJECT);
	ck_assert_str_eq(v.reasons[0].code, "po2-above-alveolar");
	sx_specimen_clear(&s);
	build(&s, ok_pairs);
	ck_assert_int_eq(sx_screen_specimen(&s, sx_ruleset_settings(rules()), rules(), &v), SX_OK);
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
	ck_assert_int_eq(sx_screen_specimen(&s, sx_ruleset_settings(rules()), rules(), &v), SX_OK);
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

/* A specimen from pairs plus the common ones: collected 08:00Z, analysed at `minutes`. */
static sx_verdict screen_with(double po2, int minutes, const char *const *extra)
{
	char p[32], a[48];
	const char *pairs[24] = {"specimen_id=M", "collected_at=2026-03-14T08:00:00Z", a, p,
				 "hb=14", "ph=7.40", "pco2=40", "fio2=1.0"};
	size_t n = 8;
	sx_specimen s;
	sx_settings set;
	sx_verdict v;
	snprintf(p, sizeof p, "po2=%g", po2);
	snprintf(a, sizeof a, "analysed_at=2026-03-14T%02d:%02d:00Z", 8 + minutes / 60,
		 minutes % 60);
	for (; *extra && n < 23; extra++)
		pairs[n++] = *extra;
	pairs[n] = NULL;
	build(&s, pairs);
	sx_settings_defaults(&set);
	ck_assert_int_eq(sx_screen_specimen(&s, sx_ruleset_settings(rules()), rules(), &v), SX_OK);
	sx_specimen_clear(&s);
	return v;
}

static double share_of(const sx_verdict *v, const char *name)
{
	for (size_t i = 0; i < v->mechanism_count; i++)
		if (strcmp(v->mechanisms[i].name, name) == 0)
			return v->mechanisms[i].bias_mmhg;
	return NAN;
}

START_TEST(a_bubble_pulls_toward_room_air_from_either_side)
{
	/* Air in the syringe equilibrates the sample toward room-air pO2 (about 150 mmHg):
	 * a hypoxaemic sample reads high, a hyperoxic one low (MODEL-SOURCES, air bubbles). */
	static const char *const bubble[] = {"bubbles=large", "transport=hand",
					     "container=glass-syringe", NULL};
	sx_verdict low = screen_with(50, 20, bubble);
	sx_verdict high = screen_with(400, 20, bubble);
	ck_assert(share_of(&low, "air-exchange") > 0);
	ck_assert(share_of(&high, "air-exchange") < 0);
}
END_TEST

START_TEST(more_bubble_larger_effect)
{
	static const char *const small[] = {"bubble_volume_ul=10", "container=glass-syringe", NULL};
	static const char *const medium[] = {"bubble_volume_ul=40", "container=glass-syringe", NULL};
	static const char *const large[] = {"bubble_volume_ul=150", "container=glass-syringe", NULL};
	double a = screen_with(55, 30, small).bias_mmhg.estimate;
	double b = screen_with(55, 30, medium).bias_mmhg.estimate;
	double c = screen_with(55, 30, large).bias_mmhg.estimate;
	ck_assert(a < b && b < c);
}
END_TEST

START_TEST(iced_plastic_raises_a_low_normal_sample)
{
	/* Cold plastic gives O2 up to a sample below room-air pO2 (Mahoney et al., Clin Chem
	 * 1991: iced plastic, blood at 10 % O2, +0.8 mmHg in 30 min; mechanism Schmidt &
	 * Muller-Plathe 1992). */
	static const char *const iced[] = {"storage=iced", "container=plastic-syringe", NULL};
	sx_verdict v = screen_with(70, 30, iced);
	ck_assert(share_of(&v, "syringe-wall") > 0);
}
END_TEST

START_TEST(halothane_reads_high)
{
	/* Halothane is reduced at the O2 cathode and reads as extra pO2 (McHugh et al.,
	 * Anesthesiology 1979). */
	static const char *const none[] = {"container=glass-syringe", NULL};
	sx_specimen s;
	sx_settings set;
	sx_verdict with, without;
	const char *pairs[] = {"specimen_id=H", "collected_at=2026-03-14T08:00:00Z",
			       "analysed_at=2026-03-14T08:05:00Z", "po2=200", "hb=14",
			       "container=glass-syringe", NULL};
	build(&s, pairs);
	ck_assert_int_eq(sx_specimen_add_agent(&s, "halothane", 9, 1.5), SX_OK);
	sx_settings_defaults(&set);
	ck_assert_int_eq(sx_screen_specimen(&s, sx_ruleset_settings(rules()), rules(), &with), SX_OK);
	sx_specimen_clear(&s);
	without = screen_with(200, 5, none);
	ck_assert(share_of(&with, "electrode-interference") > 0);
	ck_assert(with.bias_mmhg.estimate > without.bias_mmhg.estimate);
}
END_TEST

START_TEST(shares_add_up_to_the_estimate)
{
	static const char *const many[] = {"bubbles=small", "container=plastic-syringe",
					   "anticoagulant=liquid-heparin", "heparin_volume_ml=0.2",
					   "fill_volume_ml=1.5", "transport=pneumatic-tube", NULL};
	sx_verdict v = screen_with(120, 25, many);
	double sum = 0;
	for (size_t i = 0; i < v.mechanism_count; i++)
		sum += v.mechanisms[i].bias_mmhg;
	ck_assert_uint_ge(v.mechanism_count, 4);
	/* the draw nearest the median: within the spacing of neighbouring draws */
	ck_assert_double_eq_tol(sum, v.bias_mmhg.estimate,
				0.1 * (v.bias_mmhg.high - v.bias_mmhg.low) + 0.2);
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
	tcase_add_test(tc, a_bubble_pulls_toward_room_air_from_either_side);
	tcase_add_test(tc, more_bubble_larger_effect);
	tcase_add_test(tc, iced_plastic_raises_a_low_normal_sample);
	tcase_add_test(tc, halothane_reads_high);
	tcase_add_test(tc, shares_add_up_to_the_estimate);
	tcase_set_timeout(tc, 60);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
