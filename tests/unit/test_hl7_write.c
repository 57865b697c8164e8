/* SPDX-License-Identifier: MIT */
/*
 * test_hl7_write.c - writing HL7 v2: escaping, the original-mode ACK, a
 * round trip (parse, write, parse gives the same values), and the ORU^R01
 * result message of a verdict.
 *
 * Sources beside the checks: HL7 v2.5.1 chapter 2 section 2.7 (escapes:
 * "escape the escape character first", HL7-NOTES.md), section 2.9 and the
 * MSA/ERR segments (original acknowledgement: AA/AE/AR, MSA-2 = the received
 * MSH-10, the sender's delimiters, ERR-2 location, ERR-3 table 0357, ERR-4
 * severity; ERR-1 before v2.5), as summarised in HL7-NOTES.md [V].
 */
#include <check.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "core/units.h"
#include "feed/hl7.h"
#include "report/hl7out.h"
#include "test_hl7_util.h"

static const sx_hl7_options site = {60, "mem.hl7", NULL, NULL};

/* ---- escaping ---------------------------------------------------------------- */

static const struct {
	const char *text;
	bool formatted;
	const char *escaped;
} escapes[] = {
        {"a|b^c&d~e\\f", false, "a\\F\\b\\S\\c\\T\\d\\R\\e\\E\\f"},
        {"\\S\\", false, "\\E\\S\\E\\"}, /* the escape character first */
        {"two\nlines\r\nthree", true, "two\\.br\\lines\\.br\\three"}, /* FT, TX */
        {"two\nlines", false, "two\\X0A\\lines"},                     /* ST: no formatting */
        {"bell\a", false, "bell\\X07\\"},
        {"plain text 37 \xc2\xb0"
         "C",
         false,
         "plain text 37 \xc2\xb0"
         "C"},
        {"", false, ""},
};

START_TEST(escaping)
{
	sx_strbuf b;
	sx_strbuf_init(&b, 0);
	sx_hl7_put_escaped(&b, &sx_hl7_default_delims, escapes[_i].text, strlen(escapes[_i].text),
	                   escapes[_i].formatted);
	ck_assert_str_eq(b.data ? b.data : "", escapes[_i].escaped);
	sx_strbuf_free(&b);
}
END_TEST

START_TEST(escaping_own_delimiters)
{
	/* the message's delimiters, and \P\ for the v2.7 truncation character */
	const sx_hl7_delims d = {'#', '$', '*', '!', '@', '%'};
	sx_strbuf b;
	sx_strbuf_init(&b, 0);
	sx_hl7_put_escaped(&b, &d, "a#b$c*d!e@f%g|^~\\&", 18, false);
	ck_assert_str_eq(b.data, "a!F!b!S!c!R!d!E!e!T!f!P!g|^~\\&");
	sx_strbuf_reset(&b);
	sx_hl7_put_encoding(&b, &d);
	ck_assert_str_eq(b.data, "$*!@%");
	sx_strbuf_free(&b);
}
END_TEST

/* ---- the acknowledgement ------------------------------------------------------ */

static char *ack_of(const char *data, size_t len, const char *control_id)
{
	static char out[4096];
	sx_hl7_result res;
	sx_strbuf ack;
	sx_time now;
	sx_hl7_ack_options ao = {control_id, &now, NULL, NULL};
	ck_assert_int_eq(sx_time_parse_iso8601("2026-03-14T07:08+01:00", 22, 0, &now, NULL), SX_OK);
	sx_hl7_result_init(&res);
	sx_strbuf_init(&ack, 0);
	ck_assert_int_eq(sx_hl7_receive(data, len, &site, &ao, &res, &ack), SX_OK);
	ck_assert_int_eq(sx_strbuf_status(&ack), SX_OK);
	snprintf(out, sizeof out, "%s", ack.data);
	sx_strbuf_free(&ack);
	sx_hl7_result_clear(&res);
	return out;
}

static char *ack_of_fixture(const char *rel, const char *control_id)
{
	size_t len;
	char *data = fixture(rel, &len);
	char *a = ack_of(data, len, control_id);
	free(data);
	return a;
}

START_TEST(ack_accepted)
{
	/* AA: sender and receiver swapped, a new MSH-10, MSA-2 = the received
	 * MSH-10, MSH-9 ACK^<trigger>^ACK */
	ck_assert_str_eq(ack_of_fixture("hl7/oru-r01-bloodgas.hl7", "ACK0001"),
	                 "MSH|^~\\&|SYRINX|SBRLAB|BG-ANALYSER|SBR|202603140708+0100||ACK^R01^ACK|"
	                 "ACK0001|P|2.5.1\r"
	                 "MSA|AA|MSG00017\r");
	/* without a control id of its own: ACK and the received one */
	ck_assert_ptr_nonnull(
	        strstr(ack_of_fixture("hl7/oru-r01-bloodgas.hl7", NULL), "|ACKMSG00017|"));
}
END_TEST

START_TEST(ack_content_error)
{
	/* AE with one ERR: location SEG^seq^field^rep^comp, table 0357 code,
	 * severity, the text in ERR-8 */
	ck_assert_str_eq(
	        ack_of_fixture("hl7/bad-unit.hl7", "ACK0002"),
	        "MSH|^~\\&|SYRINX|SBRLAB|BG-ANALYSER|SBR|202603140708+0100||ACK^R01^ACK|"
	        "ACK0002|P|2.5.1\r"
	        "MSA|AE|MSG00017\r"
	        "ERR||OBX^3^6^1^1|103^Table value not found^HL70357|E||||po2: unknown unit "
	        "'furlongs' for value 71 (expected a unit convertible to mmHg)\r");
}
END_TEST

START_TEST(ack_missing_control_id)
{
	const char *a = ack_of_fixture("hl7/missing-control-id.hl7", "ACK0003");
	ck_assert_ptr_nonnull(strstr(a, "\rMSA|AE|\r"));
	ck_assert_ptr_nonnull(strstr(a, "\rERR||MSH^1^10^1|101^Required field missing^HL70357|E||||"
	                                "the message control id is missing\r"));
	ck_assert_ptr_nonnull(strstr(a, "\rERR||OBX^2^5^1|102^Data type error^HL70357|E||||po2: "
	                                "'eighty' is not a number\r"));
}
END_TEST

START_TEST(ack_rejected)
{
	/* AR for a message type that is not read (table 0357 code 200) */
	const char adt[] = "MSH|^~\\&|ADT|H|SYRINX|LAB|202603140707+0100||ADT^A01^ADT_A01|A77|P|"
	                   "2.5.1\rEVN|A01\rPID|1||X\r";
	const char *a = ack_of(adt, sizeof adt - 1, "ACK0004");
	ck_assert_str_eq(a,
	                 "MSH|^~\\&|SYRINX|LAB|ADT|H|202603140708+0100||ACK^A01^ACK|ACK0004|P|"
	                 "2.5.1\r"
	                 "MSA|AR|A77\r"
	                 "ERR||MSH^1^9^1^1|200^Unsupported message type^HL70357|E||||message type "
	                 "ADT\\S\\A01 is not read by syrinx (it reads ORU\\S\\R01, OUL\\S\\R22, "
	                 "OML\\S\\O21, OML\\S\\O33 and ORU\\S\\R30 to R32); the message was "
	                 "skipped\r");
	/* not a message at all: the default delimiters, no MSA-2 */
	a = ack_of("hello", 5, "ACK0005");
	ck_assert_str_eq(a, "MSH|^~\\&|SYRINX||||202603140708+0100||ACK^^ACK|ACK0005|P|2.5.1\r"
	                    "MSA|AR|\r"
	                    "ERR|||102^Data type error^HL70357|E||||a message starts with an MSH "
	                    "segment, not 'hello'\r");
}
END_TEST

START_TEST(ack_sender_delimiters)
{
	/* the ACK is written with the sender's delimiters, five of them in v2.7 */
	const char own[] = "MSH#$*!@#A$B#C#D#E#202603140707+0100##ORU$R01#C3#P#2.5.1\r"
	                   "OBR#1##F1####202603140700+0100\r";
	const char v27[] = "MSH|^~\\&#|A|B|C|D|202603140707+0100||ORU^R01^ORU_R01|C4|P|2.7\r"
	                   "OBR|1||F1||||202603140700+0100\r";
	ck_assert_str_eq(ack_of(own, sizeof own - 1, "K1"),
	                 "MSH#$*!@#D#E#A$B#C#202603140708+0100##ACK$R01$ACK#K1#P#2.5.1\r"
	                 "MSA#AA#C3\r");
	ck_assert_str_eq(ack_of(v27, sizeof v27 - 1, "K2"),
	                 "MSH|^~\\&#|C|D|A|B|202603140708+0100||ACK^R01^ACK|K2|P|2.7\r"
	                 "MSA|AA|C4\r");
}
END_TEST

START_TEST(ack_before_v25)
{
	/* v2.4 has no ERR-2..ERR-8: ERR-1 (ELD) and MSA-3 instead */
	const char v24[] = "MSH|^~\\&|A|B|C|D|202603140707+0100||ORU^R01|C5|P|2.4\r"
	                   "OBR|1||F1\rOBX|1|NM|2703-7^pO2^LN||high|mm[Hg]\r";
	const char v23[] = "MSH|^~\\&|A|B|C|D|202603140707+0100||ORU^R01|C6|P|2.3\r"
	                   "OBR|1||F1||||202603140700+0100\r";
	ck_assert_str_eq(ack_of(v24, sizeof v24 - 1, "K3"),
	                 "MSH|^~\\&|C|D|A|B|202603140708+0100||ACK^R01^ACK|K3|P|2.4\r"
	                 "MSA|AE|C5|po2: 'high' is not a number\r"
	                 "ERR|OBX^1^5^102&Data type error&HL70357\r");
	/* v2.3: MSH-9 has no message structure yet */
	ck_assert_ptr_nonnull(strstr(ack_of(v23, sizeof v23 - 1, "K4"), "||ACK^R01|K4|P|2.3\r"));
}
END_TEST

/* ---- round trip ---------------------------------------------------------------- */

/* Write m again from its decoded values, escaping each subcomponent. */
static void rewrite(const sx_hl7_message *m, sx_strbuf *out)
{
	static char v[3 * SX_HL7_MAX_VALUE + 1];
	const sx_hl7_delims *d = &m->delims;
	for (size_t i = 0; i < m->segment_count; i++) {
		const sx_hl7_segment *s = &m->segments[i];
		bool msh = i == 0;
		sx_hl7_view id = sx_hl7_field(m, s, 0);
		sx_strbuf_append(out, id.p, id.len);
		for (unsigned f = 1; f < s->count; f++) {
			sx_hl7_view fv = sx_hl7_field(m, s, f);
			if (msh && f == 1)
				continue;
			sx_strbuf_putc(out, d->field);
			if (msh && f == 2) {
				sx_strbuf_append(out, fv.p, fv.len);
				continue;
			}
			for (unsigned r = 1; r <= sx_hl7_pieces(fv, d->repetition); r++) {
				sx_hl7_view rv = sx_hl7_piece(fv, d->repetition, r);
				if (r > 1)
					sx_strbuf_putc(out, d->repetition);
				for (unsigned c = 1; c <= sx_hl7_pieces(rv, d->component); c++) {
					sx_hl7_view cv = sx_hl7_piece(rv, d->component, c);
					if (c > 1)
						sx_strbuf_putc(out, d->component);
					for (unsigned k = 1;
					     k <= sx_hl7_pieces(cv, d->subcomponent); k++) {
						size_t n;
						if (k > 1)
							sx_strbuf_putc(out, d->subcomponent);
						ck_assert_int_eq(
						        sx_hl7_decode(d, m->charset,
						                      sx_hl7_piece(cv,
						                                   d->subcomponent,
						                                   k),
						                      v, sizeof v, &n),
						        SX_OK);
						sx_hl7_put_escaped(out, d, v, n, false);
					}
				}
			}
		}
		sx_strbuf_putc(out, '\r');
	}
}

static void same_values(const sx_hl7_message *a, const sx_hl7_message *b)
{
	static char va[3 * SX_HL7_MAX_VALUE + 1], vb[3 * SX_HL7_MAX_VALUE + 1];
	ck_assert_uint_eq(a->segment_count, b->segment_count);
	for (size_t i = 0; i < a->segment_count; i++) {
		const sx_hl7_segment *sa = &a->segments[i], *sb = &b->segments[i];
		ck_assert_str_eq(sa->id, sb->id);
		ck_assert_uint_eq(sa->count, sb->count);
		for (unsigned f = 1; f < sa->count; f++)
			for (unsigned r = 1; r <= 3; r++)
				for (unsigned c = 1; c <= 12; c++)
					for (unsigned k = 1; k <= 4; k++) {
						size_t na, nb;
						sx_hl7_decode(&a->delims, a->charset,
						              sx_hl7_get(a, sa, f, r, c, k), va,
						              sizeof va, &na);
						sx_hl7_decode(&b->delims, b->charset,
						              sx_hl7_get(b, sb, f, r, c, k), vb,
						              sizeof vb, &nb);
						ck_assert_msg(na == nb && memcmp(va, vb, na) == 0,
						              "%s-%u.%u.%u.%u: '%s' vs '%s'",
						              sa->id, f, r, c, k, va, vb);
					}
	}
}

static const char *const round_trip_inputs[] = {
        "hl7/nist-elr-case1.hl7",
        "hl7/ghh-lab-oru.hl7",
        "hl7/oru-r01-bloodgas.hl7",
        "hl7/oml-o21-order.hl7",
        "MSH#$*!@%#A$B#C#D#E#20260314##ORU$R01#C3#P#2.7\r"
        "NTE#1##a!F!b!S!c!R!d!E!e!T!f!P!g|^~\\&!H!h!N!!.br!i!X41!#x$y@z*w\r",
        "MSH|^~\\&|A|B|C|D|20260314||ORU^R01|C|P|2.5.1\r"
        "OBX|1|ST|X^Y^L||\\E\\S\\E\\ \\X48454C4C4F\\ \\Q\\ \\Zab\\ \\.sp\\ end \\F|||||F\r",
};

START_TEST(round_trip)
{
	/* parse, write from the decoded values, parse: the same values */
	sx_hl7_message a, b;
	sx_strbuf out;
	const char *in = round_trip_inputs[_i];
	char *file = NULL;
	size_t len = strlen(in);
	if (strncmp(in, "hl7/", 4) == 0)
		in = file = fixture(in, &len);
	ck_assert_int_eq(sx_hl7_parse(in, len, 1, &a, NULL, 0), SX_OK);
	sx_strbuf_init(&out, 0);
	rewrite(&a, &out);
	ck_assert_int_eq(sx_hl7_parse(out.data, out.len, 1, &b, NULL, 0), SX_OK);
	same_values(&a, &b);
	sx_hl7_message_free(&a);
	sx_hl7_message_free(&b);
	sx_strbuf_free(&out);
	free(file);
}
END_TEST

/* ---- the result message ---------------------------------------------------------- */

static const char *value_at(const sx_hl7_message *m, const char *id, unsigned nth, unsigned f,
                            unsigned r, unsigned c)
{
	static char out[4096];
	size_t from = 0, n;
	const sx_hl7_segment *s = NULL;
	for (unsigned i = 0; i < nth; i++)
		s = sx_hl7_find(m, id, &from);
	ck_assert_msg(s != NULL, "no %s #%u", id, nth);
	ck_assert_int_eq(sx_hl7_decode(&m->delims, m->charset, sx_hl7_get(m, s, f, r, c, 0), out,
	                               sizeof out, &n),
	                 SX_OK);
	return out;
}

static unsigned count_segments(const sx_hl7_message *m, const char *id)
{
	unsigned n = 0;
	for (size_t i = 0; i < m->segment_count; i++)
		if (strcmp(m->segments[i].id, id) == 0)
			n++;
	return n;
}

START_TEST(result_message)
{
	/* a verdict as ORU^R01 (our own design, docs/hl7.md): the bias and its
	 * interval in mm[Hg] and kPa, the disposition, the reasons and the
	 * caution as notes, every text escaped; our own reader reads it back */
	sx_specimen s;
	sx_verdict v;
	sx_report_item item = {&s, &v, NULL, 0};
	sx_hl7_result_options opt = {"R1", NULL, NULL, "SBRLAB", "LIS", NULL, NULL};
	sx_diag_list d;
	sx_where w = {NULL, 0, 0, NULL, NULL};
	sx_strbuf out;
	sx_hl7_message m;
	sx_hl7_result back;
	sx_time now;

	ck_assert_int_eq(sx_time_parse_iso8601("2026-03-14T08:00+01:00", 22, 0, &now, NULL), SX_OK);
	opt.now = &now;
	sx_diag_list_init(&d);
	sx_specimen_init(&s);
	sx_specimen_set(&s, SX_F_SPECIMEN_ID, "BG-1|x", 6, NULL, 0, &w, &d);
	sx_specimen_set(&s, SX_F_PATIENT_ID, "P^1", 3, NULL, 0, &w, &d);
	sx_specimen_set(&s, SX_F_SPECIMEN_TYPE, "arterial", 8, NULL, 0, &w, &d);
	sx_specimen_set(&s, SX_F_COLLECTED_AT, "202603140702+0100", 17, NULL, 0, &w, &d);
	ck_assert_uint_eq(d.count, 0);
	sx_verdict_init(&v);
	v.has_bias = true;
	v.bias_mmhg = (sx_estimate){12.34, 8.04, 20.06};
	v.has_before = true;
	v.po2_before_mmhg = (sx_estimate){80, 75, 85};
	sx_verdict_add_mechanism(&v, "air-exchange", 11.04);
	sx_verdict_add_reason(&v, "air-in-sample", SX_REASON_REJECT, "air.rules:12",
	                      "large bubble & froth ~ seen | by reception \\ staff");
	sx_verdict_add_warning(&v, "storage: not given; room temperature assumed");
	sx_verdict_raise(&v, SX_REJECT);

	sx_strbuf_init(&out, 0);
	sx_report_hl7(&out, &item, &opt);
	ck_assert_int_eq(sx_hl7_parse(out.data, out.len, 1, &m, NULL, 0), SX_OK);
	ck_assert_str_eq(value_at(&m, "MSH", 1, 9, 1, 0), "ORU^R01^ORU_R01");
	ck_assert_str_eq(value_at(&m, "MSH", 1, 10, 1, 0), "R1");
	ck_assert_str_eq(value_at(&m, "MSH", 1, 7, 1, 0), "202603140800+0100");
	ck_assert_str_eq(value_at(&m, "MSH", 1, 18, 1, 0), "UNICODE UTF-8");
	ck_assert_str_eq(value_at(&m, "PID", 1, 3, 1, 1), "P^1");
	ck_assert_str_eq(value_at(&m, "PID", 1, 5, 1, 0), ""); /* no names */
	ck_assert_str_eq(value_at(&m, "OBR", 1, 3, 1, 1), "BG-1|x");
	ck_assert_str_eq(value_at(&m, "OBR", 1, 4, 1, 1), "SX-SCREEN");
	ck_assert_str_eq(value_at(&m, "OBR", 1, 7, 1, 1), "202603140702+0100");
	ck_assert_str_eq(value_at(&m, "OBR", 1, 25, 1, 0), "F");
	ck_assert_str_eq(value_at(&m, "NTE", 1, 3, 1, 0), SX_CAUTION);
	/* 1 mmHg = 1/7.50062 kPa (units.h) */
	ck_assert_uint_eq(count_segments(&m, "OBX"), 14);
	ck_assert_str_eq(value_at(&m, "OBX", 1, 3, 1, 1), "SX-PO2-BIAS");
	ck_assert_str_eq(value_at(&m, "OBX", 1, 4, 1, 0), "1");
	ck_assert_str_eq(value_at(&m, "OBX", 1, 5, 1, 0), "12.3");
	ck_assert_str_eq(value_at(&m, "OBX", 1, 6, 1, 1), "mm[Hg]");
	ck_assert_str_eq(value_at(&m, "OBX", 2, 3, 1, 1), "SX-PO2-BIAS-LOW");
	ck_assert_str_eq(value_at(&m, "OBX", 2, 5, 1, 0), "8.0");
	ck_assert_str_eq(value_at(&m, "OBX", 3, 5, 1, 0), "20.1");
	ck_assert_str_eq(value_at(&m, "OBX", 4, 5, 1, 0), "1.65");
	ck_assert_str_eq(value_at(&m, "OBX", 4, 6, 1, 1), "kPa");
	ck_assert_str_eq(value_at(&m, "OBX", 4, 4, 1, 0), "2");
	ck_assert_str_eq(value_at(&m, "OBX", 5, 5, 1, 0), "1.07");
	ck_assert_str_eq(value_at(&m, "OBX", 6, 5, 1, 0), "2.67");
	ck_assert_str_eq(value_at(&m, "OBX", 7, 3, 1, 1), "SX-PO2-BEFORE-ERROR");
	ck_assert_str_eq(value_at(&m, "OBX", 7, 5, 1, 0), "80.0");
	ck_assert_str_eq(value_at(&m, "OBX", 13, 3, 1, 1), "SX-MECHANISM-BIAS");
	ck_assert_str_eq(value_at(&m, "OBX", 13, 4, 1, 0), "air-exchange");
	ck_assert_str_eq(value_at(&m, "OBX", 13, 5, 1, 0), "11.0");
	ck_assert_str_eq(value_at(&m, "OBX", 14, 3, 1, 1), "SX-DISPOSITION");
	ck_assert_str_eq(value_at(&m, "OBX", 14, 5, 1, 1), "reject");
	ck_assert_str_eq(value_at(&m, "OBX", 14, 11, 1, 0), "F");
	ck_assert_str_eq(value_at(&m, "NTE", 2, 3, 1, 0),
	                 "air-in-sample (reject): large bubble & froth ~ seen | by reception \\ "
	                 "staff [rule air.rules:12]");
	ck_assert_str_eq(value_at(&m, "NTE", 3, 3, 1, 0),
	                 "warning: storage: not given; room temperature assumed");
	ck_assert_str_eq(value_at(&m, "SPM", 1, 2, 1, 2), "BG-1|x");
	ck_assert_str_eq(value_at(&m, "SPM", 1, 4, 1, 1), "BLDA");
	sx_hl7_message_free(&m);

	/* syrinx reads its own result message back as the same specimen */
	sx_hl7_result_init(&back);
	ck_assert_int_eq(sx_hl7_read_message(out.data, out.len, 1, &site, &back), SX_OK);
	ck_assert_uint_eq(back.record_count, 1);
	ck_assert_uint_eq(back.records[0].input_errors, 0);
	ck_assert_str_eq(back.records[0].specimen.text[SX_F_SPECIMEN_ID], "BG-1|x");
	ck_assert_str_eq(back.records[0].specimen.text[SX_F_PATIENT_ID], "P^1");
	ck_assert_int_eq(back.records[0].specimen.choice[SX_F_SPECIMEN_TYPE], SX_TYPE_ARTERIAL);
	ck_assert_int_eq(back.records[0].specimen.time[SX_F_COLLECTED_AT].utc_ms,
	                 s.time[SX_F_COLLECTED_AT].utc_ms);
	sx_hl7_result_clear(&back);
	sx_strbuf_free(&out);
	sx_specimen_clear(&s);
	sx_diag_list_clear(&d);
}
END_TEST

START_TEST(result_message_not_screened)
{
	/* a specimen whose input had errors: OBR-25 X, OBX-11 X, the errors as
	 * notes */
	sx_specimen s;
	sx_diag_list d;
	sx_where w = {"f.hl7", 3, 0, NULL, "OBX[1]-6"};
	sx_strbuf out;
	sx_hl7_message m;
	const sx_diag *errs[1];
	sx_report_item item = {&s, NULL, errs, 1};

	sx_diag_list_init(&d);
	sx_specimen_init(&s);
	sx_diag_add(&d, SX_ERROR, SX_EUNIT, &w, "message M1, OBX[1]-6: po2: unknown unit 'x|y'");
	errs[0] = &d.items[0];
	sx_strbuf_init(&out, 0);
	sx_report_hl7(&out, &item, NULL);
	ck_assert_int_eq(sx_hl7_parse(out.data, out.len, 1, &m, NULL, 0), SX_OK);
	ck_assert_str_eq(value_at(&m, "MSH", 1, 3, 1, 0), "SYRINX");
	ck_assert_str_eq(value_at(&m, "MSH", 1, 10, 1, 0), "SX-unidentified");
	ck_assert_str_eq(value_at(&m, "OBR", 1, 25, 1, 0), "X");
	ck_assert_str_eq(value_at(&m, "OBX", 1, 11, 1, 0), "X");
	ck_assert_str_eq(value_at(&m, "OBX", 1, 5, 1, 0), "");
	ck_assert_str_eq(value_at(&m, "NTE", 3, 3, 1, 0),
	                 "error: message M1, OBX[1]-6: po2: unknown unit 'x|y'");
	sx_hl7_message_free(&m);
	sx_strbuf_free(&out);
	sx_diag_list_clear(&d);
}
END_TEST

static Suite *suite(void)
{
	Suite *s = suite_create("hl7_write");
	TCase *t = tcase_create("write");
	tcase_add_loop_test(t, escaping, 0, sizeof escapes / sizeof escapes[0]);
	tcase_add_test(t, escaping_own_delimiters);
	tcase_add_test(t, ack_accepted);
	tcase_add_test(t, ack_content_error);
	tcase_add_test(t, ack_missing_control_id);
	tcase_add_test(t, ack_rejected);
	tcase_add_test(t, ack_sender_delimiters);
	tcase_add_test(t, ack_before_v25);
	tcase_add_loop_test(t, round_trip, 0,
	                    sizeof round_trip_inputs / sizeof round_trip_inputs[0]);
	tcase_add_test(t, result_message);
	tcase_add_test(t, result_message_not_screened);
	suite_add_tcase(s, t);
	return s;
}

int main(void)
{
	SRunner *r = srunner_create(suite());
	int failed;
	srunner_run_all(r, CK_NORMAL);
	failed = srunner_ntests_failed(r);
	srunner_free(r);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
