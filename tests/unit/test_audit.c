/* SPDX-License-Identifier: MIT */
/*
 * test_audit.c - the audit: aggregate counts, bounded and order-independent
 * samples, weeks, CSV quoting, JSON, the HTML page (well formed, every chart
 * titled and labelled, nothing loaded from elsewhere), the colour scheme's
 * contrast, and failing allocations.
 */
#include <check.h>
#include <libxml/parser.h>
#include <libxml/xpath.h>
#include <libxml/xpathInternals.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/alloc.h"
#include "core/sxtime.h"
#include "report/audit.h"
#include "report/audit_page.h"
#include "report/report.h"

static int64_t at(int month, int day, int hour, int minute)
{
	return ((sx_days_from_civil(2026, (unsigned)month, (unsigned)day) * 24 + hour) * 60 +
	        minute) *
	       60000;
}

/* Row i of a made-up stream: varied and deterministic. */
static sx_verdict_row make_row(unsigned i, char *sha, char *id)
{
	static const char *const locations[] = {"ICU/BED01", "ED/MAJORS2", "WARD9-HAEM/BED03", "ED",
	                                        NULL};
	static const char *const transports[] = {"hand", "pneumatic-tube", "courier", NULL};
	static const char *const codes[] = {"", "delay-beyond-limit", "delay-too-long bias-reject",
	                                    "po2-above-alveolar"};
	static const char *const reasons[] = {
	        "[]",
	        "[{\"code\":\"delay-beyond-limit\",\"severity\":\"comment\",\"message\":\"m\","
	        "\"rule\":\"built-in\"}]",
	        "[{\"code\":\"delay-too-long\",\"severity\":\"reject\",\"message\":\"m\","
	        "\"rule\":\"built-in\"},{\"code\":\"bias-reject\",\"severity\":\"reject\","
	        "\"message\":\"m\",\"rule\":\"built-in\"}]",
	        "[{\"code\":\"po2-above-alveolar\",\"severity\":\"reject\",\"message\":\"m\","
	        "\"rule\":\"built-in\"}]",
	};
	sx_verdict_row r;
	unsigned k = i % 4;
	/* a fingerprint-like text from the index (any 64 hex digits do) */
	snprintf(sha, 65, "%016x%048x", i * 2654435761u, i);
	snprintf(id, 32, "S%05u", i);
	memset(&r, 0, sizeof r);
	r.input_sha256 = sha;
	r.specimen_id = id;
	r.location = locations[i % 5];
	r.collector = "RN-1";
	r.transport = transports[i % 4];
	r.input_received_ms = SX_ROW_NO_TIME;
	r.collected_ms = at(3, 2, 0, 0) + (int64_t)i * 3600000 / 4; /* every 15 min */
	r.received_ms = r.analysed_ms = SX_ROW_NO_TIME;
	r.audit_ms = r.collected_ms;
	r.delay_min = (double)(i % 90);
	r.wbc = i % 7 == 0 ? 150.0 : 8.0;
	r.po2_mmhg = 90;
	r.disposition = k == 0 ? SX_ACCEPT : k == 1 ? SX_COMMENT : SX_REJECT;
	r.bias_mmhg = -(double)(i % 40) / 2.0;
	r.bias_low_mmhg = r.bias_mmhg - 1;
	r.bias_high_mmhg = r.bias_mmhg + 1;
	r.reason_codes = codes[k];
	r.reasons_json = reasons[k];
	r.mechanisms_json = "[]";
	r.warnings_json = "[]";
	r.ruleset = "built-in 0.1";
	return r;
}

static sx_audit *audit_of(unsigned n, bool backwards)
{
	sx_audit *a;
	char sha[65], id[32];
	ck_assert_int_eq(sx_audit_new(0, &a), SX_OK);
	for (unsigned j = 0; j < n; j++) {
		unsigned i = backwards ? n - 1 - j : j;
		sx_verdict_row r = make_row(i, sha, id);
		ck_assert_int_eq(sx_audit_add(a, &r), SX_OK);
	}
	return a;
}

START_TEST(counts_add_up)
{
	sx_audit *a = audit_of(400, false);
	uint64_t units = 0, weeks = 0, rejected = 0;
	ck_assert_uint_eq(a->rows, 400);
	ck_assert_uint_eq(a->by_disposition[SX_ACCEPT], 100);
	ck_assert_uint_eq(a->by_disposition[SX_COMMENT], 100);
	ck_assert_uint_eq(a->by_disposition[SX_REJECT], 200);
	ck_assert_uint_eq(a->with_reasons, 300);
	ck_assert_uint_eq(a->reasons_total, 400);
	/* units: ICU, ED (ED/MAJORS2 and ED), WARD9-HAEM, no location */
	ck_assert_uint_eq(a->unit_count, 4);
	for (size_t u = 0; u < a->unit_count; u++) {
		units += a->units[u].by_disposition[0] + a->units[u].by_disposition[1] +
		         a->units[u].by_disposition[2];
		for (size_t w = 0; w < a->week_span; w++) {
			weeks += sx_audit_week_count(&a->units[u], w);
			rejected += sx_audit_week_rejected(&a->units[u], w);
		}
	}
	ck_assert_uint_eq(units, 400);
	ck_assert_uint_eq(weeks, 400);
	ck_assert_uint_eq(rejected, 200);
	/* 400 quarter-hours from Monday 2 March 00:00: 100 h, within one week */
	ck_assert_uint_eq(a->week_span, 1);
	ck_assert_int_eq(sx_audit_week_monday(a, 0), sx_days_from_civil(2026, 3, 2));
	sx_audit_free(a);
}
END_TEST

START_TEST(reason_codes_keep_their_severity)
{
	sx_audit *a = audit_of(40, false);
	const sx_audit_code *codes[8];
	size_t n = sx_audit_sorted_codes(a, codes, 8);
	ck_assert_uint_eq(n, 4);
	for (size_t i = 0; i < n; i++) {
		ck_assert_uint_eq(codes[i]->count, 10);
		if (strcmp(codes[i]->code, "delay-beyond-limit") == 0)
			ck_assert_int_eq(codes[i]->severity, SX_REASON_COMMENT);
		else
			ck_assert_int_eq(codes[i]->severity, SX_REASON_REJECT);
	}
	/* ties in name order */
	ck_assert_str_eq(codes[0]->code, "bias-reject");
	sx_audit_free(a);
}
END_TEST

/* A year of rows keeps the same bounded samples, and the same points whatever
 * the rows' order. */
START_TEST(samples_are_bounded_and_order_free)
{
	sx_audit *f = audit_of(35040, false), *b = audit_of(35040, true);
	ck_assert_uint_eq(f->rows, 35040);
	ck_assert_uint_le(f->wbc_sample.count, SX_AUDIT_SAMPLE);
	ck_assert_uint_eq(f->wbc_sample.seen, 35040);
	/* 35040 quarter-hours are 365 days from a Monday: weeks 0..52 */
	ck_assert_uint_eq(f->week_span, 53);
	for (int t = 0; t < SX_AUDIT_TRANSPORTS; t++) {
		const sx_audit_sample *x = &f->transports[t].sample, *y = &b->transports[t].sample;
		uint64_t kx = 0, ky = 0;
		ck_assert_uint_eq(x->count, y->count);
		ck_assert_uint_le(x->count, SX_AUDIT_SAMPLE);
		/* the same set: compare an order-free digest of the keys */
		for (size_t i = 0; i < x->count; i++) {
			kx += x->points[i].key * 3 + (uint64_t)(x->points[i].y * 10);
			ky += y->points[i].key * 3 + (uint64_t)(y->points[i].y * 10);
		}
		ck_assert(kx == ky);
	}
	for (size_t i = 0; i < SX_AUDIT_TOP; i++)
		ck_assert_double_eq_tol(f->top[i].bias, -19.5, 1e-9);
	sx_audit_free(f);
	sx_audit_free(b);
}
END_TEST

START_TEST(bias_bins_and_quantiles)
{
	sx_audit *a;
	sx_audit_bars bars;
	uint64_t sum = 0;
	char sha[65], id[32];
	ck_assert_int_eq(sx_audit_new(60, &a), SX_OK);
	for (unsigned i = 0; i < 100; i++) {
		sx_verdict_row r = make_row(i, sha, id);
		r.bias_mmhg = i == 0 ? -500.0 : i == 1 ? 300.0 : -(double)i / 10.0;
		r.delay_min = i < 50 ? 5.2 : 300;
		r.transport = "hand";
		ck_assert_int_eq(sx_audit_add(a, &r), SX_OK);
	}
	ck_assert_uint_eq(a->bias_below, 1);
	ck_assert_uint_eq(a->bias_above, 1);
	/* the 50th of the 100 values in order is -5.1 (-500 first, then -9.9,
	 * -9.8, ...); the finest bin holding it is -5.5..-5.0, its middle -5.25 */
	ck_assert_double_eq_tol(sx_audit_bias_median(a), -5.25, 1e-9);
	sx_audit_bias_bars(a, &bars);
	sum = bars.below + bars.above;
	for (size_t i = 0; i < bars.n; i++)
		sum += bars.counts[i];
	ck_assert_uint_eq(sum, 100);
	ck_assert_uint_le(bars.n, 60);
	/* delays: half at 5.2 min (bin 5..6), half at 240 or more */
	ck_assert_double_eq_tol(sx_audit_delay_quantile(&a->transports[0], 0.5), 5.5, 1e-9);
	ck_assert_double_eq_tol(sx_audit_delay_quantile(&a->transports[0], 0.9), 240, 1e-9);
	sx_audit_free(a);
}
END_TEST

/* Weeks begin on Monday 00:00 at the audit's offset: Sunday 23:30 UTC is
 * already Monday at +01:00. */
START_TEST(weeks_follow_the_offset)
{
	sx_audit *utc, *plus1;
	char sha[65], id[32];
	sx_verdict_row r = make_row(1, sha, id);
	r.audit_ms = at(3, 8, 23, 30); /* Sunday 8 March 2026 */
	ck_assert_int_eq(sx_audit_new(0, &utc), SX_OK);
	ck_assert_int_eq(sx_audit_new(60, &plus1), SX_OK);
	ck_assert_int_eq(sx_audit_add(utc, &r), SX_OK);
	ck_assert_int_eq(sx_audit_add(plus1, &r), SX_OK);
	ck_assert_int_eq(sx_audit_week_monday(utc, 0), sx_days_from_civil(2026, 3, 2));
	ck_assert_int_eq(sx_audit_week_monday(plus1, 0), sx_days_from_civil(2026, 3, 9));
	/* a row weeks earlier grows the span at the front */
	r.audit_ms = at(2, 16, 12, 0);
	ck_assert_int_eq(sx_audit_add(utc, &r), SX_OK);
	ck_assert_uint_eq(utc->week_span, 3);
	ck_assert_uint_eq(sx_audit_week_count(&utc->units[0], 0), 1);
	ck_assert_uint_eq(sx_audit_week_count(&utc->units[0], 1), 0);
	ck_assert_uint_eq(sx_audit_week_count(&utc->units[0], 2), 1);
	/* past the bound: counted, not in the weeks */
	r.audit_ms = at(3, 2, 0, 0) + (int64_t)SX_AUDIT_MAX_WEEKS * 7 * 86400000;
	ck_assert_int_eq(sx_audit_add(utc, &r), SX_ELIMIT);
	ck_assert_uint_eq(utc->rows, 3);
	sx_audit_free(utc);
	sx_audit_free(plus1);
}
END_TEST

START_TEST(csv_is_rfc4180)
{
	char sha[65], id[32];
	sx_verdict_row r = make_row(2, sha, id);
	sx_strbuf b;
	const char *line2;
	r.location = "ICU, \"north\"\r\nwing";
	r.collector = "=HYPERLINK(1)";
	r.id = 7;
	sx_strbuf_init(&b, 0);
	sx_audit_csv_header(&b);
	sx_audit_csv_row(&b, &r);
	ck_assert(strncmp(b.data, "id,audit_at,specimen_id,location,unit,collector,", 48) == 0);
	line2 = strstr(b.data, "\r\n") + 2;
	/* RFC 4180 section 2: fields with a comma, quote or line break are
	 * quoted, quotes inside doubled; lines end in CRLF */
	ck_assert_ptr_nonnull(strstr(line2, ",\"ICU, \"\"north\"\"\r\nwing\","));
	ck_assert_ptr_nonnull(strstr(line2, "7,2026-03-02T00:30:00.000Z,S00002,"));
	/* a formula is defused (common practice against formula injection) */
	ck_assert_ptr_nonnull(strstr(line2, ",'=HYPERLINK(1),"));
	/* numbers keep their sign, reasons their JSON with quotes doubled */
	ck_assert_ptr_nonnull(strstr(line2, ",reject,-1.0,-2.0,0.0,"));
	ck_assert_ptr_nonnull(strstr(line2, "\"[{\"\"code\"\":\"\"delay-too-long\"\""));
	ck_assert_str_eq(b.data + b.len - 2, "\r\n");
	sx_strbuf_free(&b);
}
END_TEST

START_TEST(json_rows_form_one_array)
{
	char sha[65], id[32];
	sx_verdict_row r = make_row(1, sha, id);
	sx_strbuf b;
	sx_strbuf_init(&b, 0);
	sx_audit_json_begin(&b);
	sx_audit_json_row(&b, &r, true);
	r.location = NULL;
	r.wbc = NAN;
	sx_audit_json_row(&b, &r, false);
	sx_audit_json_end(&b);
	ck_assert(b.data[0] == '[' && strcmp(b.data + b.len - 4, "}\n]\n") == 0);
	ck_assert_ptr_nonnull(
	        strstr(b.data, "{\"id\":null,\"audit_at\":\"2026-03-02T00:15:00.000Z\""));
	ck_assert_ptr_nonnull(strstr(b.data, "\"reasons\":[{\"code\":\"delay-beyond-limit\""));
	ck_assert_ptr_nonnull(strstr(b.data, "\"location\":null,\"unit\":\"(no location)\""));
	ck_assert_ptr_nonnull(strstr(b.data, "\"wbc\":null"));
	ck_assert_ptr_nonnull(strstr(b.data, "\"wbc\":8.00"));
	ck_assert_ptr_nonnull(strstr(b.data, "},\n{"));
	sx_strbuf_free(&b);
}
END_TEST

/* ---- the page ---------------------------------------------------------- */

static xmlDocPtr page_of(const sx_audit *a)
{
	sx_strbuf out;
	sx_row_filter f;
	sx_audit_meta meta = {NULL, "test rows", SX_ROW_NO_TIME, SX_ROW_NO_TIME, &f, "0.0"};
	xmlDocPtr doc;
	sx_row_filter_init(&f);
	f.location = "ED";
	sx_strbuf_init(&out, 0);
	ck_assert_int_eq(sx_audit_html(a, &meta, &out), SX_OK);
	ck_assert(strncmp(out.data, "<!DOCTYPE html>", 15) == 0);
	/* nothing from elsewhere: no scripts, no links out, no external fonts */
	ck_assert_ptr_null(strstr(out.data, "<script"));
	ck_assert_ptr_null(strstr(out.data, "src="));
	ck_assert_ptr_null(strstr(out.data, "href=\"http"));
	ck_assert_ptr_null(strstr(out.data, "@import"));
	ck_assert_ptr_null(strstr(out.data, "url(http"));
	ck_assert_ptr_nonnull(strstr(out.data, SX_CAUTION));
	doc = xmlReadMemory(out.data, (int)out.len, "audit.html", NULL, XML_PARSE_NONET);
	ck_assert_msg(doc != NULL, "the page is not well-formed XML");
	sx_strbuf_free(&out);
	return doc;
}

static int count(xmlXPathContextPtr ctx, const char *expr)
{
	xmlXPathObjectPtr o = xmlXPathEvalExpression(BAD_CAST expr, ctx);
	int n;
	ck_assert_ptr_nonnull(o);
	n = (int)xmlXPathCastToNumber(o);
	xmlXPathFreeObject(o);
	return n;
}

static void check_page(xmlDocPtr doc, int charts)
{
	xmlXPathContextPtr ctx = xmlXPathNewContext(doc);
	xmlXPathRegisterNs(ctx, BAD_CAST "h", BAD_CAST "http://www.w3.org/1999/xhtml");
	xmlXPathRegisterNs(ctx, BAD_CAST "s", BAD_CAST "http://www.w3.org/2000/svg");
	ck_assert_int_eq(count(ctx, "count(//s:svg)"), charts);
	/* each chart: role img, labelled by its own title and description,
	 * which come first */
	ck_assert_int_eq(count(ctx, "count(//s:svg[@role='img'])"), charts);
	ck_assert_int_eq(count(ctx, "count(//s:svg/*[1][self::s:title][normalize-space()])"),
	                 charts);
	ck_assert_int_eq(count(ctx, "count(//s:svg/*[2][self::s:desc][normalize-space()])"),
	                 charts);
	ck_assert_int_eq(count(ctx, "count(//s:svg[@aria-labelledby = "
	                            "concat(@id, '-title ', @id, '-desc')])"),
	                 charts);
	ck_assert_int_eq(count(ctx, "count(//s:svg/s:title[@id = concat(../@id, '-title')])"),
	                 charts);
	/* every chart is followed by a caption, and tables have captions */
	ck_assert_int_eq(count(ctx, "count(//h:figure[s:svg]/h:figcaption)"), charts);
	ck_assert_int_ge(count(ctx, "count(//h:table/h:caption)"), 6);
	ck_assert_int_eq(count(ctx, "count(//h:html[@lang='en']/h:head/h:title)"), 1);
	ck_assert_int_eq(count(ctx, "count(//h:div[@class='caution'])"), 2);
	ck_assert_int_eq(count(ctx, "count(//h:dd[contains(., 'location ED')])"), 1);
	/* no HTML element that may not close itself is written as <x/> (an HTML
	 * parser would leave it open): only void elements are empty */
	ck_assert_int_eq(count(ctx, "count(//h:*[not(node()) and not(self::h:meta or "
	                            "self::h:br) and not(ancestor::s:svg)])"),
	                 0);
	xmlXPathFreeContext(ctx);
}

START_TEST(page_is_well_formed_and_labelled)
{
	sx_audit *a = audit_of(2000, false);
	xmlDocPtr doc = page_of(a);
	check_page(doc, 5);
	xmlFreeDoc(doc);
	sx_audit_free(a);
}
END_TEST

START_TEST(empty_page_too)
{
	sx_audit *a;
	xmlDocPtr doc;
	ck_assert_int_eq(sx_audit_new(0, &a), SX_OK);
	doc = page_of(a);
	check_page(doc, 5);
	xmlFreeDoc(doc);
	sx_audit_free(a);
}
END_TEST

/* WCAG 2.1, "relative luminance" and "contrast ratio" definitions (W3C
 * Recommendation): sRGB channels linearised, L = 0.2126 R + 0.7152 G +
 * 0.0722 B, ratio (L1 + 0.05) / (L2 + 0.05). */
static double luminance(const char *hex)
{
	double c[3];
	unsigned v = (unsigned)strtoul(hex + 1, NULL, 16);
	for (int i = 0; i < 3; i++) {
		double s = (double)((v >> (16 - 8 * i)) & 255) / 255.0;
		c[i] = s <= 0.03928 ? s / 12.92 : pow((s + 0.055) / 1.055, 2.4);
	}
	return 0.2126 * c[0] + 0.7152 * c[1] + 0.0722 * c[2];
}

static double contrast(const char *a, const char *b)
{
	double la = luminance(a), lb = luminance(b);
	return (fmax(la, lb) + 0.05) / (fmin(la, lb) + 0.05);
}

START_TEST(colours_have_contrast)
{
	/* the formula itself: black on white is 21:1 (WCAG 2.1) */
	ck_assert_double_eq_tol(contrast("#000000", "#ffffff"), 21.0, 1e-9);
	for (size_t i = 0; i < sx_audit_palette_count; i++) {
		const sx_audit_colour *c = &sx_audit_palette[i];
		if (!c->meaning)
			continue;
		/* 4.5:1 (WCAG 2.1 SC 1.4.3, text) on the paper and on the panels,
		 * so a colour can also be a label */
		ck_assert_msg(contrast(c->hex, SX_PAPER) >= 4.5, "%s on paper: %.2f", c->name,
		              contrast(c->hex, SX_PAPER));
		ck_assert_msg(contrast(c->hex, SX_PANEL) >= 4.5, "%s on panel: %.2f", c->name,
		              contrast(c->hex, SX_PANEL));
	}
	/* the hatching in paper colour over rust stays visible: 3:1 (SC 1.4.11) */
	ck_assert_double_ge(contrast(SX_RUST, SX_PAPER), 3.0);
}
END_TEST

START_TEST(allocation_failures_are_clean)
{
	char sha[65], id[32];
	for (unsigned long n = 1;; n++) {
		sx_audit *a = NULL;
		sx_strbuf out;
		sx_audit_meta meta = {NULL, "x", SX_ROW_NO_TIME, SX_ROW_NO_TIME, NULL, "0"};
		sx_status st;
		unsigned long made;
		sx_strbuf_init(&out, 0);
		sx_alloc_fail_at(n);
		st = sx_audit_new(0, &a);
		for (unsigned i = 0; st == SX_OK && i < 3000; i += 500) {
			sx_verdict_row r = make_row(i, sha, id);
			st = sx_audit_add(a, &r);
		}
		if (st == SX_OK)
			st = sx_audit_html(a, &meta, &out);
		made = sx_alloc_fail_at(0);
		ck_assert(st == SX_OK || st == SX_ENOMEM);
		sx_strbuf_free(&out);
		sx_audit_free(a);
		if (n > made)
			break;
	}
}
END_TEST

int main(void)
{
	Suite *s = suite_create("audit");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;

	tcase_set_timeout(tc, 60);
	tcase_add_test(tc, counts_add_up);
	tcase_add_test(tc, reason_codes_keep_their_severity);
	tcase_add_test(tc, samples_are_bounded_and_order_free);
	tcase_add_test(tc, bias_bins_and_quantiles);
	tcase_add_test(tc, weeks_follow_the_offset);
	tcase_add_test(tc, csv_is_rfc4180);
	tcase_add_test(tc, json_rows_form_one_array);
	tcase_add_test(tc, page_is_well_formed_and_labelled);
	tcase_add_test(tc, empty_page_too);
	tcase_add_test(tc, colours_have_contrast);
	tcase_add_test(tc, allocation_failures_are_clean);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	xmlCleanupParser();
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
