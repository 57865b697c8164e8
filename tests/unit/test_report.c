/* SPDX-License-Identifier: MIT */
/*
 * test_report.c - JSON Lines and text reports.
 */
#include <check.h>
#include <stdlib.h>
#include <string.h>

#include "report/report.h"

static void specimen(sx_specimen *s, const char *id)
{
	sx_specimen_init(s);
	s->text[SX_F_SPECIMEN_ID] = strdup(id);
	s->present[SX_F_SPECIMEN_ID] = true;
	s->source = "feed.xml";
	s->source_line = 12;
}

static sx_verdict verdict(void)
{
	sx_verdict v;
	sx_verdict_init(&v);
	v.has_bias = true;
	v.bias_mmhg = (sx_estimate){-7.50062, -10.0, -5.0};
	v.has_before = true;
	v.po2_before_mmhg = (sx_estimate){97.5, 95.0, 100.0};
	sx_verdict_add_mechanism(&v, "metabolism", -7.50062);
	sx_verdict_add_reason(&v, "bias-beyond-allowable", SX_REASON_COMMENT, "default/x.rules:3",
			      "a \"quoted\" word and a \\ and a tab\t");
	sx_verdict_add_warning(&v, "hb: not given");
	return v;
}

START_TEST(json_has_the_design_keys)
{
	static const char *const keys[] = {
		"\"specimen_id\":\"S1\"", "\"disposition\":\"comment\"",
		"\"po2_bias_mmhg\":{\"estimate\":-7.5,\"low\":-10.0,\"high\":-5.0}",
		/* 7.50062 mmHg is 1.00 kPa (1 kPa = 7.50062 mmHg) */
		"\"po2_bias_kpa\":{\"estimate\":-1.00,\"low\":-1.33,\"high\":-0.67}",
		"\"mechanisms\":[{\"name\":\"metabolism\",\"bias_mmhg\":-7.5}]",
		"\"reasons\":[{\"code\":\"bias-beyond-allowable\",\"severity\":\"comment\"",
		"\"rule\":\"default/x.rules:3\"", "\"warnings\":[\"hb: not given\"]",
		"\"po2_before_error_mmhg\":{\"estimate\":97.5,\"low\":95.0,\"high\":100.0}",
		"a \\\"quoted\\\" word and a \\\\ and a tab\\t", "\"source\":\"feed.xml:12\"",
	};
	sx_specimen s;
	sx_verdict v = verdict();
	sx_report_item item = {&s, &v, NULL, 0};
	sx_strbuf b;
	specimen(&s, "S1");
	sx_strbuf_init(&b, 0);
	sx_report_json(&b, &item);
	for (size_t i = 0; i < sizeof keys / sizeof keys[0]; i++)
		ck_assert_msg(strstr(b.data, keys[i]), "missing %s in %s", keys[i], b.data);
	ck_assert_int_eq(b.data[b.len - 1], '\n');
	ck_assert_ptr_null(strchr(b.data, '\t'));
	ck_assert_ptr_eq(strchr(b.data, '\n'), b.data + b.len - 1);
	sx_strbuf_free(&b);
	sx_specimen_clear(&s);
}
END_TEST

START_TEST(not_screened_carries_its_errors)
{
	sx_specimen s;
	sx_diag d = {SX_ERROR, SX_EUNIT, "feed.xml", 14, 0, "S2", "po2", "po2: unknown unit 'x'"};
	const sx_diag *errs[] = {&d};
	sx_report_item item = {&s, NULL, errs, 1};
	sx_strbuf b;
	sx_tally t = {0};
	specimen(&s, "S2");
	sx_strbuf_init(&b, 0);
	sx_report_json(&b, &item);
	ck_assert_ptr_nonnull(strstr(b.data, "\"screened\":false,\"disposition\":null"));
	ck_assert_ptr_nonnull(strstr(b.data, "\"field\":\"po2\",\"line\":14"));
	sx_strbuf_reset(&b);
	sx_report_text(&b, &item);
	ck_assert_ptr_nonnull(strstr(b.data, "S2  NOT SCREENED"));
	ck_assert_ptr_nonnull(strstr(b.data, "line 14: po2: unknown unit 'x'"));
	sx_tally_add(&t, &item);
	ck_assert_uint_eq(t.not_screened, 1);
	sx_strbuf_free(&b);
	sx_specimen_clear(&s);
}
END_TEST

START_TEST(text_carries_the_caution)
{
	sx_strbuf b;
	sx_tally t = {3, 1, 1, 0};
	sx_strbuf_init(&b, 0);
	sx_report_text_header(&b);
	ck_assert_ptr_nonnull(strstr(b.data, "not for clinical use"));
	sx_strbuf_reset(&b);
	sx_report_text_summary(&b, &t);
	ck_assert_ptr_nonnull(strstr(b.data, "5 specimens: 3 accept, 1 accept with comment, 1 "
					     "reject"));
	ck_assert_ptr_nonnull(strstr(b.data, "laboratory director decide"));
	sx_strbuf_free(&b);
}
END_TEST

START_TEST(strbuf_stops_at_its_maximum)
{
	sx_strbuf b;
	sx_strbuf_init(&b, 16);
	sx_strbuf_puts(&b, "0123456789");
	ck_assert_int_eq(sx_strbuf_status(&b), SX_OK);
	sx_strbuf_puts(&b, "0123456789");
	ck_assert_int_eq(sx_strbuf_status(&b), SX_ELIMIT);
	ck_assert_str_eq(b.data, "0123456789");
	sx_strbuf_free(&b);
}
END_TEST

int main(void)
{
	Suite *s = suite_create("report");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;
	tcase_add_test(tc, json_has_the_design_keys);
	tcase_add_test(tc, not_screened_carries_its_errors);
	tcase_add_test(tc, text_carries_the_caution);
	tcase_add_test(tc, strbuf_stops_at_its_maximum);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
