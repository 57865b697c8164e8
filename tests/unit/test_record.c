/* SPDX-License-Identifier: MIT */
/*
 * test_record.c - the data dictionary and setting fields from feed text.
 */
#include <check.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "core/record.h"

START_TEST(every_field_has_a_name_and_is_found_by_it)
{
	for (int f = 0; f < SX_FIELD_COUNT; f++) {
		const sx_field_info *info = sx_field_get((sx_field)f);
		ck_assert_ptr_nonnull(info);
		ck_assert_ptr_nonnull(info->name);
		ck_assert_int_eq(sx_field_lookup(info->name, strlen(info->name)), f);
		if (info->kind == SX_KIND_NUMBER)
			ck_assert(info->min < info->max);
		if (info->kind == SX_KIND_CHOICE)
			ck_assert_ptr_nonnull(info->choices);
	}
	ck_assert_int_eq(sx_field_lookup("po2x", 4), -1);
	ck_assert_ptr_null(sx_field_get(SX_FIELD_COUNT));
}
END_TEST

/* Values with units as feeds send them; 1 kPa = 7.50062 mmHg (the figure). */
static const struct {
	const char *field, *value, *unit;
	double expect, tol;
} conversions[] = {
	{"po2", "8.2", "kPa", 8.2 * 7.50062, 1e-9},
	{"po2", "61.5", "mm[Hg]", 61.5, 1e-12},
	{"po2", "61.5", NULL, 61.5, 1e-12},
	{"pco2", "5.3", "kPa", 5.3 * 7.50062, 1e-9},
	{"hb", "142", "g/L", 14.2, 1e-12},
	{"wbc", "250", "10*9/L", 250, 1e-12},
	{"patient_temp_c", "98.6", "[degF]", 37.0, 1e-9},
	{"fio2", "40", "%", 0.40, 1e-12},
	{"fio2", "0.4", NULL, 0.40, 1e-12},
	{"ph", " 7.38 ", NULL, 7.38, 1e-12},
	{"fill_volume_ml", "1.5", "mL", 1.5, 1e-12},
};

START_TEST(numbers_are_converted_on_reading)
{
	sx_specimen s;
	sx_diag_list d;
	int f = sx_field_lookup(conversions[_i].field, strlen(conversions[_i].field));
	sx_specimen_init(&s);
	sx_diag_list_init(&d);
	ck_assert_int_ge(f, 0);
	ck_assert_int_eq(sx_specimen_set(&s, (sx_field)f, conversions[_i].value,
					 strlen(conversions[_i].value), conversions[_i].unit, 0,
					 NULL, &d),
			 SX_OK);
	ck_assert(sx_specimen_has(&s, (sx_field)f));
	ck_assert_double_eq_tol(s.number[f], conversions[_i].expect, conversions[_i].tol);
	ck_assert_uint_eq(d.count, 0);
	sx_specimen_clear(&s);
	sx_diag_list_clear(&d);
}
END_TEST

/* Each bad value is an error naming the field and the value; the field stays absent. */
static const struct {
	const char *field, *value, *unit;
	sx_status status;
	const char *must_say;
} refusals[] = {
	{"po2", "8.2", "furlongs", SX_EUNIT, "furlongs"},
	{"wbc", "-5", NULL, SX_ERANGE, "-5"},
	{"po2", "8,2", NULL, SX_ESYNTAX, "8,2"},
	{"collected_at", "2026-02-30T08:00+01:00", NULL, SX_ETIME, "2026-02-30"},
	{"transport", "drone", NULL, SX_EINVAL, "drone"},
	{"fio2", "40", NULL, SX_ERANGE, "40"},
	{"ph", "9.9", NULL, SX_ERANGE, "9.9"},
	{"hb", "14", "mmol/mol", SX_EUNIT, "mmol/mol"},
};

START_TEST(bad_values_are_refused_with_field_and_value)
{
	sx_specimen s;
	sx_diag_list d;
	int f = sx_field_lookup(refusals[_i].field, strlen(refusals[_i].field));
	sx_status st;
	sx_specimen_init(&s);
	sx_diag_list_init(&d);
	st = sx_specimen_set(&s, (sx_field)f, refusals[_i].value, strlen(refusals[_i].value),
			     refusals[_i].unit, 0, NULL, &d);
	ck_assert_int_ne(st, SX_OK);
	if (refusals[_i].status != SX_ESYNTAX)
		ck_assert_int_eq(st, refusals[_i].status);
	ck_assert(!sx_specimen_has(&s, (sx_field)f));
	ck_assert_uint_eq(d.count, 1);
	ck_assert_int_eq(d.items[0].severity, SX_ERROR);
	ck_assert_ptr_nonnull(strstr(d.items[0].message, refusals[_i].field));
	ck_assert_ptr_nonnull(strstr(d.items[0].message, refusals[_i].must_say));
	sx_specimen_clear(&s);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(time_without_offset_takes_the_site_offset_and_says_so)
{
	sx_specimen s;
	sx_diag_list d;
	const char *t = "2026-03-14T08:05";
	sx_specimen_init(&s);
	sx_diag_list_init(&d);
	ck_assert_int_eq(sx_specimen_set(&s, SX_F_COLLECTED_AT, t, strlen(t), NULL, 60, NULL, &d),
			 SX_OK);
	ck_assert(!s.time[SX_F_COLLECTED_AT].has_offset);
	ck_assert_uint_eq(d.count, 1);
	ck_assert_int_eq(d.items[0].severity, SX_WARNING);
	ck_assert_ptr_nonnull(strstr(d.items[0].message, "+01:00"));
	/* 08:05 at +01:00 is 07:05 UTC: 2026-03-14T07:05Z = 1773471900 s (GNU date 9.1) */
	ck_assert(s.time[SX_F_COLLECTED_AT].utc_ms == 1773471900000LL);
	sx_specimen_clear(&s);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(agents_are_bounded_and_lower_cased)
{
	sx_specimen s;
	sx_specimen_init(&s);
	ck_assert_int_eq(sx_specimen_add_agent(&s, "Halothane", 9, 1.0), SX_OK);
	ck_assert_str_eq(s.agents[0].name, "halothane");
	for (int i = 1; i < SX_MAX_AGENTS; i++)
		ck_assert_int_eq(sx_specimen_add_agent(&s, "n2o", 3, 50), SX_OK);
	ck_assert_int_eq(sx_specimen_add_agent(&s, "n2o", 3, 50), SX_ELIMIT);
	ck_assert_int_eq(sx_specimen_add_agent(&s, "x", 1, 101), SX_ELIMIT);
	sx_specimen_clear(&s);
	sx_specimen_init(&s);
	ck_assert_int_eq(sx_specimen_add_agent(&s, "x", 1, 101), SX_ERANGE);
	ck_assert_int_eq(sx_specimen_add_agent(&s, "", 0, 1), SX_EINVAL);
}
END_TEST

START_TEST(text_past_the_limit_is_refused)
{
	sx_specimen s;
	sx_diag_list d;
	char *big = malloc(SX_MAX_TEXT + 2);
	memset(big, 'a', SX_MAX_TEXT + 1);
	big[SX_MAX_TEXT + 1] = '\0';
	sx_specimen_init(&s);
	sx_diag_list_init(&d);
	ck_assert_int_eq(sx_specimen_set(&s, SX_F_COMMENTS, big, SX_MAX_TEXT + 1, NULL, 0, NULL,
					 &d),
			 SX_ELIMIT);
	ck_assert(!sx_specimen_has(&s, SX_F_COMMENTS));
	ck_assert_int_eq(sx_specimen_set(&s, SX_F_COMMENTS, big, SX_MAX_TEXT, NULL, 0, NULL, &d),
			 SX_OK);
	free(big);
	sx_specimen_clear(&s);
	sx_diag_list_clear(&d);
}
END_TEST

int main(void)
{
	Suite *s = suite_create("record");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;
	tcase_add_test(tc, every_field_has_a_name_and_is_found_by_it);
	tcase_add_loop_test(tc, numbers_are_converted_on_reading, 0,
			    sizeof conversions / sizeof conversions[0]);
	tcase_add_loop_test(tc, bad_values_are_refused_with_field_and_value, 0,
			    sizeof refusals / sizeof refusals[0]);
	tcase_add_test(tc, time_without_offset_takes_the_site_offset_and_says_so);
	tcase_add_test(tc, agents_are_bounded_and_lower_cased);
	tcase_add_test(tc, text_past_the_limit_is_refused);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
