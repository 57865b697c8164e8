/* SPDX-License-Identifier: MIT */
/*
 * test_xmlfeed.c - the streaming XML feed reader: good feeds, bad specimens
 * among good ones, broken files, and the schema check.
 */
#include <check.h>
#include <stdlib.h>
#include <string.h>

#include "feed/feed.h"
#include "feed/xmlfeed.h"

typedef struct memory {
	const char *data;
	size_t len, pos, chunk;
} memory;

/* Hands the input out in small chunks, so element boundaries fall anywhere. */
static int memory_read(void *context, char *buf, int len)
{
	memory *m = context;
	size_t n = m->len - m->pos;
	if (n > (size_t)len)
		n = (size_t)len;
	if (m->chunk && n > m->chunk)
		n = m->chunk;
	memcpy(buf, m->data + m->pos, n);
	m->pos += n;
	return (int)n;
}

typedef struct result {
	int specimens;
	int with_errors;
	sx_status last;
	sx_diag_list diags;
	char ids[8][32];
	double po2[8];
} result;

static void read_all(const char *xml, size_t chunk, result *r)
{
	memory m = {xml, strlen(xml), 0, chunk};
	sx_xml_feed *f;
	sx_specimen s;
	sx_feed_item item;
	bool got = true;
	memset(r, 0, sizeof *r);
	sx_diag_list_init(&r->diags);
	sx_specimen_init(&s);
	ck_assert_int_eq(sx_xml_feed_open(memory_read, &m, "mem.xml", 60, &f), SX_OK);
	while (got) {
		r->last = sx_xml_feed_next(f, &s, &item, &got, &r->diags);
		if (!got)
			break;
		if (r->specimens < 8) {
			snprintf(r->ids[r->specimens], sizeof r->ids[0], "%s",
				 s.present[SX_F_SPECIMEN_ID] ? s.text[SX_F_SPECIMEN_ID] : "");
			r->po2[r->specimens] = s.present[SX_F_PO2] ? s.number[SX_F_PO2] : -1;
		}
		r->specimens++;
		if (item.input_errors)
			r->with_errors++;
	}
	sx_specimen_clear(&s);
	sx_xml_feed_close(f);
}

static const char *find_diag(const sx_diag_list *d, const char *text)
{
	for (size_t i = 0; i < d->count; i++)
		if (strstr(d->items[i].message, text))
			return d->items[i].message;
	return NULL;
}

static const char good[] =
	"<?xml version=\"1.0\"?>\n"
	"<specimens source=\"test\">\n"
	"  <specimen>\n"
	"    <po2 unit=\"kPa\">10.0</po2>\n"
	"    <specimen_id>A1</specimen_id>\n"
	"    <agent name=\"Halothane\" percent=\"1.0\"/>\n"
	"    <collected_at>2026-03-14T08:00+01:00</collected_at>\n"
	"    <comments><![CDATA[a < b & c]]></comments>\n"
	"  </specimen>\n"
	"  <specimen><specimen_id>A2</specimen_id><po2>90</po2></specimen>\n"
	"</specimens>\n";

START_TEST(a_good_feed_in_any_chunking)
{
	static const size_t chunks[] = {0, 1, 2, 7, 64};
	result r;
	read_all(good, chunks[_i], &r);
	ck_assert_int_eq(r.specimens, 2);
	ck_assert_int_eq(r.with_errors, 0);
	ck_assert_str_eq(r.ids[0], "A1");
	ck_assert_str_eq(r.ids[1], "A2");
	ck_assert_double_eq_tol(r.po2[0], 75.0062, 1e-9); /* 1 kPa = 7.50062 mmHg */
	ck_assert_double_eq_tol(r.po2[1], 90.0, 1e-12);
	ck_assert_int_eq(r.last, SX_OK);
	ck_assert_uint_eq(r.diags.errors, 0);
	sx_diag_list_clear(&r.diags);
}
END_TEST

/* One bad specimen among good ones: error with line, field and id; the rest read. */
static const struct {
	const char *bad_field_xml;
	const char *says;
} bad_specimens[] = {
	{"<po2 unit=\"furlongs\">8</po2>", "unknown unit 'furlongs'"},
	{"<collected_at>2026-02-30T08:00+01:00</collected_at>", "not a valid date"},
	{"<wbc>-5</wbc>", "outside the possible range"},
	{"<po2>8,2</po2>", "not a number"},
	{"<transport>drone</transport>", "not one of"},
	{"<po2x>8</po2x>", "not a field of the data dictionary"},
	{"<po2>80</po2><po2>81</po2>", "given twice"},
	{"<po2></po2>", "empty"},
	{"<po2><b>8</b></po2>", "holds an element"},
	{"<agent percent=\"1\"/>", "without a name"},
	{"<agent name=\"halothane\" percent=\"x\"/>", "not a number"},
};

START_TEST(a_bad_specimen_does_not_stop_the_others)
{
	char xml[1024];
	result r;
	const sx_diag *d = NULL;
	snprintf(xml, sizeof xml,
		 "<specimens>\n<specimen><specimen_id>G1</specimen_id></specimen>\n"
		 "<specimen><specimen_id>B2</specimen_id>\n%s\n</specimen>\n"
		 "<specimen><specimen_id>G3</specimen_id></specimen>\n</specimens>\n",
		 bad_specimens[_i].bad_field_xml);
	read_all(xml, 3, &r);
	ck_assert_int_eq(r.specimens, 3);
	ck_assert_int_eq(r.with_errors, 1);
	ck_assert_str_eq(r.ids[2], "G3");
	ck_assert_ptr_nonnull(find_diag(&r.diags, bad_specimens[_i].says));
	for (size_t i = 0; i < r.diags.count; i++)
		if (r.diags.items[i].severity == SX_ERROR)
			d = &r.diags.items[i];
	ck_assert_ptr_nonnull(d);
	ck_assert_str_eq(d->specimen_id, "B2");
	ck_assert_uint_eq(d->line, 4);
	ck_assert_str_eq(d->file, "mem.xml");
	sx_diag_list_clear(&r.diags);
}
END_TEST

START_TEST(a_truncated_file_keeps_what_came_before)
{
	static const char xml[] = "<specimens>\n<specimen><specimen_id>G1</specimen_id>"
				  "</specimen>\n<specimen><specimen_id>G2</specimen_id></specimen>\n"
				  "<specimen><specimen_id>T3</specimen_id>\n<po2>8";
	result r;
	read_all(xml, 0, &r);
	ck_assert_int_eq(r.specimens, 2);
	ck_assert_int_eq(r.last, SX_ESYNTAX);
	ck_assert_ptr_nonnull(find_diag(&r.diags, "inside the specimen that starts at line 4"));
	ck_assert_uint_ge(r.diags.errors, 1);
	sx_diag_list_clear(&r.diags);
}
END_TEST

START_TEST(a_missing_id_is_an_error_with_the_line)
{
	result r;
	read_all("<specimens>\n<specimen><po2>80</po2></specimen>\n</specimens>", 0, &r);
	ck_assert_int_eq(r.specimens, 1);
	ck_assert_int_eq(r.with_errors, 1);
	ck_assert_ptr_nonnull(find_diag(&r.diags, "specimen_id: missing"));
	sx_diag_list_clear(&r.diags);
}
END_TEST

START_TEST(a_wrong_root_is_refused)
{
	result r;
	read_all("<patients><specimen/></patients>", 0, &r);
	ck_assert_int_eq(r.specimens, 0);
	ck_assert_int_eq(r.last, SX_EINVALID);
	ck_assert_ptr_nonnull(find_diag(&r.diags, "<specimens>"));
	sx_diag_list_clear(&r.diags);
}
END_TEST

START_TEST(external_entities_are_not_loaded)
{
	result r;
	read_all("<!DOCTYPE s [<!ENTITY x SYSTEM \"file:///etc/passwd\">]>\n"
		 "<specimens><specimen><specimen_id>&x;</specimen_id></specimen></specimens>",
		 0, &r);
	/* Either refused or the entity left unexpanded: never the file's content. */
	if (r.specimens > 0)
		ck_assert_ptr_null(strstr(r.ids[0], "root:"));
	sx_diag_list_clear(&r.diags);
}
END_TEST

START_TEST(detects_formats_by_first_bytes)
{
	ck_assert_int_eq(sx_feed_detect((const unsigned char *)"  \n<specimens>", 14), SX_FEED_XML);
	ck_assert_int_eq(sx_feed_detect((const unsigned char *)"\xEF\xBB\xBF<x", 5), SX_FEED_XML);
	ck_assert_int_eq(sx_feed_detect((const unsigned char *)"MSH|^~\\&|", 9), SX_FEED_HL7);
	ck_assert_int_eq(sx_feed_detect((const unsigned char *)"\x0bMSH|", 5), SX_FEED_HL7);
	ck_assert_int_eq(sx_feed_detect((const unsigned char *)"FHS|^~\\&", 8), SX_FEED_HL7);
	ck_assert_int_eq(sx_feed_detect((const unsigned char *)"hello", 5), SX_FEED_AUTO);
	ck_assert_int_eq(sx_feed_detect((const unsigned char *)"", 0), SX_FEED_AUTO);
}
END_TEST

START_TEST(schema_validation_reports_lines)
{
	const char *src = getenv("SX_SRCDIR");
	char schema[4096];
	static const char xml[] = "<specimens>\n<specimen>\n<specimen_id>A</specimen_id>\n"
				  "<transport>drone</transport>\n</specimen>\n</specimens>\n";
	memory m = {xml, sizeof xml - 1, 0, 0};
	sx_diag_list d;
	snprintf(schema, sizeof schema, "%s/docs/schema/feed.xsd", src ? src : ".");
	sx_diag_list_init(&d);
	ck_assert_int_eq(sx_xml_validate(memory_read, &m, "mem.xml", schema, &d), SX_EINVALID);
	ck_assert_uint_ge(d.errors, 1);
	ck_assert_uint_eq(d.items[0].line, 4);
	sx_diag_list_clear(&d);
}
END_TEST

int main(void)
{
	Suite *s = suite_create("xmlfeed");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;
	tcase_add_loop_test(tc, a_good_feed_in_any_chunking, 0, 5);
	tcase_add_loop_test(tc, a_bad_specimen_does_not_stop_the_others, 0,
			    sizeof bad_specimens / sizeof bad_specimens[0]);
	tcase_add_test(tc, a_truncated_file_keeps_what_came_before);
	tcase_add_test(tc, a_missing_id_is_an_error_with_the_line);
	tcase_add_test(tc, a_wrong_root_is_refused);
	tcase_add_test(tc, external_entities_are_not_loaded);
	tcase_add_test(tc, detects_formats_by_first_bytes);
	tcase_add_test(tc, schema_validation_reports_lines);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
