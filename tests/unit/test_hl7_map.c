/* SPDX-License-Identifier: MIT */
/*
 * test_hl7_map.c - HL7 v2 messages to specimen records: the message
 * structures (ORU^R01, OUL^R22, OML^O21, OML^O33), where each field is read
 * from, observation codes, units, value types, times and offsets, errors that
 * name message, segment and field, and the HL7 feed.
 *
 * Sources beside the checks: HL7 v2.5.1 chapters 2 (MSH, table 0357), 4
 * (OML), 7 (ORU, OUL, OBX, SPM; tables 0085, 0487, 0490, 0493) as summarised
 * in the project's HL7-NOTES.md; LOINC codes as listed there; public sample
 * messages as named in fixtures/hl7/README.md. Unit conversion is the
 * record's (1 kPa = 7.50062 mmHg, units.h).
 */
#include <check.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "core/alloc.h"
#include "core/units.h"
#include "feed/feed.h"
#include "feed/hl7.h"
#include "test_hl7_util.h"

static const sx_hl7_options site = {60, "mem.hl7", NULL, NULL};

static void read_text(const char *text, const sx_hl7_options *opt, sx_hl7_result *res)
{
	sx_hl7_result_init(res);
	ck_assert_int_eq(sx_hl7_read_message(text, strlen(text), 1, opt ? opt : &site, res), SX_OK);
}

static void read_fixture(const char *rel, sx_hl7_result *res)
{
	size_t len;
	char *data = fixture(rel, &len);
	sx_hl7_result_init(res);
	ck_assert_int_eq(sx_hl7_read_message(data, len, 1, &site, res), SX_OK);
	free(data);
}

static int64_t iso(const char *text)
{
	sx_time t;
	ck_assert_int_eq(sx_time_parse_iso8601(text, strlen(text), 0, &t, NULL), SX_OK);
	return t.utc_ms;
}

static const sx_specimen *spec(const sx_hl7_result *res, size_t i)
{
	ck_assert_uint_gt(res->record_count, i);
	return &res->records[i].specimen;
}

static const char *text_of(const sx_specimen *s, sx_field f)
{
	return s->present[f] ? s->text[f] : "(absent)";
}

static const sx_hl7_issue *find_issue(const sx_hl7_result *res, const char *seg, unsigned seq,
                                      unsigned field, int code)
{
	for (size_t i = 0; i < res->issue_count; i++) {
		const sx_hl7_issue *is = &res->issues[i];
		if (strcmp(is->segment, seg) == 0 && is->seq == seq && is->field == field &&
		    is->code == code)
			return is;
	}
	return NULL;
}

#define MSH251 "MSH|^~\\&|A|B|SYRINX|LAB|202603140707+0100||%s|C1|P|2.5.1\r"
#define ORU    "MSH|^~\\&|A|B|SYRINX|LAB|202603140707+0100||ORU^R01|C1|P|2.5.1\r"

/* ---- the message structures ------------------------------------------------ */

START_TEST(oru_r01_blood_gas)
{
	/* an ORU^R01 v2.5.1 of one blood gas: order first, SPM after the OBX
	 * (v2.5.1 ch. 7 ORU_R01 structure, HL7-NOTES.md) */
	sx_hl7_result res;
	const sx_specimen *s;
	read_fixture("hl7/oru-r01-bloodgas.hl7", &res);
	ck_assert_uint_eq(res.record_count, 1);
	ck_assert_int_eq(res.ack_code, SX_HL7_AA);
	ck_assert_str_eq(res.control_id, "MSG00017");
	ck_assert_str_eq(res.type, "ORU^R01");
	s = spec(&res, 0);
	ck_assert_uint_eq(res.records[0].input_errors, 0);
	ck_assert_uint_eq(res.records[0].diags.count, 0);
	ck_assert_uint_eq(res.records[0].line, 13);
	ck_assert_str_eq(text_of(s, SX_F_SPECIMEN_ID), "BG-900001");       /* SPM-2.2.1 */
	ck_assert_str_eq(text_of(s, SX_F_PATIENT_ID), "SBR-900001");       /* PID-3.1 */
	ck_assert_str_eq(text_of(s, SX_F_LOCATION), "ICU/BED03");          /* PV1-3 */
	ck_assert_str_eq(text_of(s, SX_F_COLLECTOR), "RN-114");            /* OBR-10.1 */
	ck_assert_int_eq(s->choice[SX_F_SPECIMEN_TYPE], SX_TYPE_ARTERIAL); /* SPM-4 BLDA */
	/* SPM-17 is a range: its start (SPM-17.1.1) is the collection time */
	ck_assert_int_eq(s->time[SX_F_COLLECTED_AT].utc_ms, iso("2026-03-14T07:02+01:00"));
	ck_assert_int_eq(s->time[SX_F_RECEIVED_AT].utc_ms, iso("2026-03-14T07:04+01:00"));
	/* OBX-19 of the pO2 observation before its OBX-14 */
	ck_assert_int_eq(s->time[SX_F_ANALYSED_AT].utc_ms, iso("2026-03-14T07:05+01:00"));
	ck_assert_double_eq_tol(s->number[SX_F_PO2], 9.6 * SX_MMHG_PER_KPA, 1e-9);
	ck_assert_double_eq_tol(s->number[SX_F_PCO2], 41, 1e-9);
	ck_assert_double_eq_tol(s->number[SX_F_PH], 7.41, 1e-9);
	ck_assert_double_eq_tol(s->number[SX_F_FIO2], 0.40, 1e-9);
	ck_assert_double_eq_tol(s->number[SX_F_FILL_VOLUME_ML], 1.5, 1e-9); /* SPM-12 */
	ck_assert_int_eq(s->choice[SX_F_TRANSPORT], SX_TRANSPORT_PNEUMATIC_TUBE);
	ck_assert_int_eq(s->choice[SX_F_BUBBLES], SX_BUBBLES_SMALL);
	ck_assert_str_eq(text_of(s, SX_F_COMMENTS), "drawn from the arterial line & flushed");
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(oul_r22_specimen_first)
{
	/* OUL^R22 v2.7: SPM first, its own OBX, then OBR with the results; MSH-2
	 * with the truncation character; 8859/1 text converted to UTF-8 */
	sx_hl7_result res;
	const sx_specimen *a, *b;
	read_fixture("hl7/oul-r22-v27.hl7", &res);
	ck_assert_uint_eq(res.record_count, 2);
	ck_assert_int_eq(res.ack_code, SX_HL7_AA);
	a = spec(&res, 0);
	b = spec(&res, 1);
	ck_assert_str_eq(text_of(a, SX_F_SPECIMEN_ID), "BG-900002");
	ck_assert_str_eq(text_of(b, SX_F_SPECIMEN_ID), "BG-900003");
	ck_assert_str_eq(text_of(a, SX_F_PATIENT_ID), "SBR-900002");
	ck_assert_str_eq(text_of(b, SX_F_PATIENT_ID), "SBR-900002");
	ck_assert_str_eq(text_of(b, SX_F_LOCATION), "WARD7-RESP/BED12");
	ck_assert_int_eq(a->choice[SX_F_TRANSPORT], SX_TRANSPORT_HAND);
	ck_assert(!b->present[SX_F_TRANSPORT]); /* the first SPM's OBX are its own */
	ck_assert_double_eq_tol(a->number[SX_F_PO2], 8.1 * SX_MMHG_PER_KPA, 1e-9);
	ck_assert_int_eq(b->choice[SX_F_SPECIMEN_TYPE], SX_TYPE_VENOUS);
	ck_assert_double_eq_tol(b->number[SX_F_PO2], 5.2 * SX_MMHG_PER_KPA, 1e-9); /* 2705-2 */
	ck_assert_int_eq(a->time[SX_F_ANALYSED_AT].utc_ms, iso("2026-03-14T07:30+01:00"));
	ck_assert_str_eq(text_of(a, SX_F_COMMENTS), "Venturi mask #28, temp 37.2 \xc2\xb0"
	                                            "C");
	ck_assert_uint_eq(res.records[0].input_errors + res.records[1].input_errors, 0);
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(oml_o21_order)
{
	/* OML^O21: an order before analysis (v2.5.1 ch. 4); agents paired by
	 * OBX-4 sub-id; no pO2, so no analysis time */
	sx_hl7_result res;
	const sx_specimen *s;
	read_fixture("hl7/oml-o21-order.hl7", &res);
	ck_assert_uint_eq(res.record_count, 1);
	s = spec(&res, 0);
	ck_assert_uint_eq(res.records[0].input_errors, 0);
	ck_assert_str_eq(text_of(s, SX_F_SPECIMEN_ID), "P900004");         /* SPM-2.1.1, placer */
	ck_assert_int_eq(s->choice[SX_F_SPECIMEN_TYPE], SX_TYPE_ARTERIAL); /* SNOMED CT */
	ck_assert_str_eq(text_of(s, SX_F_LOCATION), "THEATRE-2");
	ck_assert_str_eq(text_of(s, SX_F_COLLECTOR), "ANA-019");
	ck_assert(!s->present[SX_F_ANALYSED_AT]);
	ck_assert_uint_eq(s->agent_count, 2);
	ck_assert_str_eq(s->agents[0].name, "halothane");
	ck_assert_double_eq_tol(s->agents[0].percent, 1.0, 1e-9);
	ck_assert_str_eq(s->agents[1].name, "nitrous-oxide");
	ck_assert_double_eq_tol(s->agents[1].percent, 66, 1e-9);
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(oml_o33_specimen_first)
{
	/* OML^O33: SPECIMEN { SPM [OBX] ORDER { ORC OBR } } (v2.5.1 ch. 4) */
	sx_hl7_result res;
	char text[1024];
	snprintf(text, sizeof text,
	         MSH251 "PID|1||P1^^^H^MR\r"
	                "SPM|1|^S1||BLDC^Blood capillary^HL70487|||||||||||||202603140700+0100\r"
	                "OBX|1|CWE|SX-BUBBLES^b^99SYX||none||||||F\r"
	                "ORC|NW|O1\rOBR|1|O1||BG\rORC|NW|O2\rOBR|2|O2||LACT\r"
	                "SPM|2|^S2||BLDV|||||||||||||202603140701+0100\rORC|NW|O3\rOBR|1|O3||BG\r",
	         "OML^O33^OML_O33");
	read_text(text, NULL, &res);
	ck_assert_uint_eq(res.record_count, 2);
	ck_assert_str_eq(text_of(spec(&res, 0), SX_F_SPECIMEN_ID), "S1");
	ck_assert_int_eq(spec(&res, 0)->choice[SX_F_SPECIMEN_TYPE], SX_TYPE_CAPILLARY);
	ck_assert_int_eq(spec(&res, 0)->choice[SX_F_BUBBLES], SX_BUBBLES_NONE);
	ck_assert_str_eq(text_of(spec(&res, 1), SX_F_SPECIMEN_ID), "S2");
	ck_assert(!spec(&res, 1)->present[SX_F_BUBBLES]);
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(one_record_per_obr_without_spm)
{
	/* before v2.5 there is no SPM: one specimen per OBR, id from OBR-3 (else
	 * OBR-2), times from OBR-7 and OBR-14, type from OBR-15 (SPS) */
	sx_hl7_result res;
	char text[1024];
	snprintf(text, sizeof text,
	         MSH251 "PID|1||P1\r"
	                "OBR|1|PL1|F1|BG|||202603140700+0100|||||||202603140705+0100|BLDA&Blood "
	                "arterial&HL70070\r"
	                "OBX|1|NM|2703-7^pO2^LN||80|mm[Hg]|||||F|||202603140710+0100\r"
	                "OBR|2|PL2||BG|||202603140701+0100\rOBX|1|NM|2703-7^pO2^LN||81|mmHg\r",
	         "ORU^R01");
	read_text(text, NULL, &res);
	ck_assert_uint_eq(res.record_count, 2);
	ck_assert_str_eq(text_of(spec(&res, 0), SX_F_SPECIMEN_ID), "F1");
	ck_assert_str_eq(text_of(spec(&res, 1), SX_F_SPECIMEN_ID), "PL2");
	ck_assert_int_eq(spec(&res, 0)->choice[SX_F_SPECIMEN_TYPE], SX_TYPE_ARTERIAL);
	ck_assert_int_eq(spec(&res, 0)->time[SX_F_RECEIVED_AT].utc_ms,
	                 iso("2026-03-14T07:05+01:00"));
	/* OBX-14 when there is no OBX-19 */
	ck_assert_int_eq(spec(&res, 0)->time[SX_F_ANALYSED_AT].utc_ms,
	                 iso("2026-03-14T07:10+01:00"));
	/* neither: MSH-7, with a warning */
	ck_assert_int_eq(spec(&res, 1)->time[SX_F_ANALYSED_AT].utc_ms,
	                 iso("2026-03-14T07:07+01:00"));
	ck_assert_ptr_nonnull(find_diag(&res.records[1].diags, "the message time MSH-7 was taken"));
	ck_assert_double_eq_tol(spec(&res, 1)->number[SX_F_PO2], 81, 1e-9);
	sx_hl7_result_clear(&res);
}
END_TEST

/* ---- public samples ---------------------------------------------------------------- */

START_TEST(nist_elr_sample)
{
	/* NIST v2.5.1 ELR sample 1: a capillary lead test. Nothing of it is a
	 * blood-gas observation, but the specimen is read: SPM-4 capillary
	 * (SNOMED CT 122554006), the id from OBR-3 (SPM-2 is empty), the patient
	 * from PID-3 of type MR; PID-5 (the name) is never read */
	sx_hl7_result res;
	const sx_specimen *s;
	read_fixture("hl7/nist-elr-case1.hl7", &res);
	ck_assert_uint_eq(res.record_count, 1);
	s = spec(&res, 0);
	ck_assert_str_eq(text_of(s, SX_F_SPECIMEN_ID), "9700123");
	ck_assert_str_eq(text_of(s, SX_F_PATIENT_ID), "9817566735");
	ck_assert_int_eq(s->choice[SX_F_SPECIMEN_TYPE], SX_TYPE_CAPILLARY);
	ck_assert_int_eq(s->time[SX_F_COLLECTED_AT].utc_ms, iso("2008-08-15T10:30-07:00"));
	ck_assert(!s->present[SX_F_PO2]);
	for (int f = 0; f < SX_FIELD_COUNT; f++)
		if (s->present[f] && s->text[f])
			ck_assert_ptr_null(strstr(s->text[f], "Johnson"));
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(ghh_lab_sample)
{
	/* the GHH LAB v2.4 example: OBR-3.1 as the id, PID-3 without a type,
	 * OBR-7 without an offset: MSH-7 has none either, so the site's offset */
	sx_hl7_result res;
	const sx_specimen *s;
	read_fixture("hl7/ghh-lab-oru.hl7", &res);
	ck_assert_uint_eq(res.record_count, 1);
	s = spec(&res, 0);
	ck_assert_str_eq(text_of(s, SX_F_SPECIMEN_ID), "1045813");
	ck_assert_str_eq(text_of(s, SX_F_PATIENT_ID), "555-44-4444");
	ck_assert_int_eq(s->time[SX_F_COLLECTED_AT].utc_ms, iso("2002-02-15T07:30+01:00"));
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags,
	                                "has no UTC offset; the site's offset +01:00 was assumed"));
	sx_hl7_result_clear(&res);
}
END_TEST

/* ---- values --------------------------------------------------------------------------- */

static const struct {
	const char *obx5;
	double po2;       /* < 0: no value */
	const char *diag; /* a diagnostic that must be there, or NULL for none */
	sx_severity severity;
} sn_values[] = {
        {">^700", 700, "'>700' is a limit, not a measured value; 700 was used", SX_WARNING},
        {"<^5", 5, "is a limit", SX_WARNING},
        {"^182", 182, NULL, SX_NOTE},
        {"=^90", 90, NULL, SX_NOTE},
        {"^1^-^5", -1, "is a range or ratio, not one value", SX_ERROR},
        {"^1^:^2", -1, "is a range or ratio", SX_ERROR},
        {"\\R\\^5", -1, "is not a comparator", SX_ERROR}, /* "~" (escaped) */
        {">", -1, "has no number", SX_ERROR},
};

START_TEST(structured_numeric)
{
	/* SN: comparator ^ num1 ^ separator/suffix ^ num2 (v2.5.1 ch. 2 data
	 * types, HL7-NOTES.md "SN such as >^700") */
	sx_hl7_result res;
	char text[512];
	snprintf(text, sizeof text,
	         MSH251 "OBR|1||F1\rOBX|1|SN|2703-7^pO2^LN||%s|mm[Hg]|||||F|||202603140706+0100\r",
	         "ORU^R01", sn_values[_i].obx5);
	read_text(text, NULL, &res);
	if (sn_values[_i].po2 >= 0)
		ck_assert_double_eq_tol(spec(&res, 0)->number[SX_F_PO2], sn_values[_i].po2, 1e-9);
	else
		ck_assert(!spec(&res, 0)->present[SX_F_PO2]);
	if (sn_values[_i].diag) {
		const sx_diag *d = find_diag(&res.records[0].diags, sn_values[_i].diag);
		ck_assert_msg(d != NULL, "%s: no '%s'", sn_values[_i].obx5, sn_values[_i].diag);
		ck_assert_int_eq(d->severity, sn_values[_i].severity);
		ck_assert_int_eq(strncmp(d->field, "OBX[1]-5", 8), 0);
	} else {
		ck_assert_uint_eq(res.records[0].diags.count, 0);
	}
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(unknown_unit_names_everything)
{
	/* the error names message (MSH-10), segment with its sequence, field,
	 * and what was wrong; its line is the segment's */
	sx_hl7_result res;
	const sx_diag *d;
	read_fixture("hl7/bad-unit.hl7", &res);
	ck_assert_uint_eq(res.record_count, 1);
	ck_assert_uint_eq(res.records[0].input_errors, 1);
	d = find_diag(&res.records[0].diags, "furlongs");
	ck_assert_ptr_nonnull(d);
	ck_assert_int_eq(d->severity, SX_ERROR);
	ck_assert_int_eq(d->code, SX_EUNIT);
	ck_assert_ptr_nonnull(strstr(d->message, "message MSG00017, OBX[3]-6.1: po2: unknown unit "
	                                         "'furlongs'"));
	ck_assert_uint_eq(d->line, 9);
	ck_assert_str_eq(d->file, "mem.hl7");
	ck_assert_str_eq(d->specimen_id, "BG-900001");
	ck_assert_int_eq(res.ack_code, SX_HL7_AE);
	ck_assert_ptr_nonnull(find_issue(&res, "OBX", 3, 6, 103));
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(missing_control_id)
{
	/* MSH-10 missing: the message is named by its line; the specimens are
	 * still read, one bad one does not stop the other */
	sx_hl7_result res;
	const sx_diag *d;
	read_fixture("hl7/missing-control-id.hl7", &res);
	ck_assert_int_eq(res.status, SX_EINVAL);
	ck_assert(!res.has_control_id);
	d = find_diag(&res.diags, "message at line 1 (no MSH-10), MSH[1]-10: the message control "
	                          "id is missing");
	ck_assert_ptr_nonnull(d);
	ck_assert_uint_eq(res.record_count, 2);
	ck_assert_uint_eq(res.records[0].input_errors, 0);
	ck_assert_double_eq_tol(spec(&res, 0)->number[SX_F_PO2], 88, 1e-9);
	ck_assert_uint_eq(res.records[1].input_errors, 1);
	ck_assert_ptr_nonnull(find_diag(&res.records[1].diags, "OBX[2]-5: po2: 'eighty' is not a "
	                                                       "number"));
	/* OBR-7 without an offset takes MSH-7's */
	ck_assert_ptr_nonnull(
	        find_diag(&res.records[1].diags, "MSH-7's offset +01:00 was assumed"));
	ck_assert_int_eq(res.ack_code, SX_HL7_AE);
	ck_assert_ptr_nonnull(find_issue(&res, "MSH", 1, 10, 101));
	ck_assert_ptr_nonnull(find_issue(&res, "OBX", 2, 5, 102));
	sx_hl7_result_clear(&res);
}
END_TEST

static const struct {
	const char *type;
	const char *version;
	int code; /* table 0357 */
	sx_hl7_ack_code ack;
	const char *diag;
} headers[] = {
        {"ADT^A01^ADT_A01", "2.5.1", 200, SX_HL7_AR, "message type ADT^A01 is not read"},
        {"ORU^R02", "2.5.1", 201, SX_HL7_AR, "message type ORU^R02 is not read"},
        {"", "2.5.1", 101, SX_HL7_AR, "the message type is missing"},
        {"ORU^R01", "2.2", 203, SX_HL7_AR, "version '2.2' is not read"},
        {"ORU^R01", "3.0", 203, SX_HL7_AR, "version '3.0' is not read"},
        {"ORU^R01", "2.9", 203, SX_HL7_AA, "later than v2.8"},
        {"ORU^R01", "", 101, SX_HL7_AA, "the version id is missing"},
        {"ORU^R01", "2.3", 0, SX_HL7_AA, NULL},
        {"ORU^R01", "2.8.2", 0, SX_HL7_AA, NULL},
        {"ORU^R30", "2.5.1", 0, SX_HL7_AA, NULL},
};

START_TEST(message_header)
{
	/* message type (MSH-9) and version (MSH-12): table 0357 codes 200, 201,
	 * 203 reject the message (AR); v2.3 to v2.8 are read */
	sx_hl7_result res;
	char text[512];
	snprintf(text, sizeof text,
	         "MSH|^~\\&|A|B|C|D|202603140707+0100||%s|C9|P|%s\rPID|1||P\r"
	         "OBR|1||F1||||202603140700+0100\r",
	         headers[_i].type, headers[_i].version);
	read_text(text, NULL, &res);
	ck_assert_int_eq(res.ack_code, headers[_i].ack);
	if (headers[_i].diag) {
		ck_assert_msg(find_diag(&res.diags, headers[_i].diag) != NULL, "%s %s",
		              headers[_i].type, headers[_i].version);
		ck_assert_int_eq(res.issues[0].code, headers[_i].code);
	} else {
		ck_assert_uint_eq(res.diags.count, 0);
	}
	ck_assert_uint_eq(res.record_count, headers[_i].ack == SX_HL7_AR ? 0 : 1);
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(not_a_message)
{
	sx_hl7_result res;
	read_text("this is not HL7", NULL, &res);
	ck_assert_int_eq(res.ack_code, SX_HL7_AR);
	ck_assert_int_eq(res.status, SX_ESYNTAX);
	ck_assert_uint_eq(res.record_count, 0);
	ck_assert_ptr_nonnull(find_diag(&res.diags, "starts with an MSH segment"));
	sx_hl7_result_clear(&res);
	read_text(ORU "PID|1||X\r", NULL, &res);
	ck_assert_ptr_nonnull(find_diag(&res.diags, "no SPM or OBR segment"));
	ck_assert_int_eq(res.ack_code, SX_HL7_AE);
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(time_offsets)
{
	/* a time without an offset takes MSH-7's offset, then the site's, and
	 * says so (HL7-NOTES.md, Date and time) */
	sx_hl7_result res;
	char text[512];
	snprintf(text, sizeof text,
	         "MSH|^~\\&|A|B|C|D|202603140707-0500||ORU^R01|C1|P|2.5.1\r"
	         "OBR|1||F1||||202603140700|||||||202603140702+0000\r");
	read_text(text, NULL, &res);
	ck_assert_int_eq(spec(&res, 0)->time[SX_F_COLLECTED_AT].utc_ms,
	                 iso("2026-03-14T07:00-05:00"));
	ck_assert_int_eq(spec(&res, 0)->time[SX_F_RECEIVED_AT].utc_ms, iso("2026-03-14T07:02Z"));
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags,
	                                "OBR[1]-7.1: collected_at: "
	                                "'202603140700' has no UTC offset; "
	                                "MSH-7's offset -05:00 was assumed"));
	sx_hl7_result_clear(&res);
	/* an impossible date is an error naming the field */
	read_text(ORU "OBR|1||F1||||20260230070000+0100\r", NULL, &res);
	ck_assert_uint_eq(res.records[0].input_errors, 1);
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags,
	                                "OBR[1]-7.1: collected_at: "
	                                "'20260230070000+0100' is not an HL7 "
	                                "date/time"));
	sx_hl7_result_clear(&res);
}
END_TEST

/* ---- observation codes ------------------------------------------------------------------- */

static int site_codes(void *context, const char *system, const char *code)
{
	int *calls = context;
	(*calls)++;
	if (strcmp(system, "L") != 0)
		return -1;
	if (strcmp(code, "PO2A") == 0)
		return SX_F_PO2;
	if (strcmp(code, "BUBB") == 0)
		return SX_F_BUBBLES;
	if (strcmp(code, "ANAES") == 0)
		return SX_F_AGENTS;
	if (strcmp(code, "ANAES%") == 0)
		return SX_HL7_AGENT_PERCENT;
	if (strcmp(code, "NONSENSE") == 0)
		return 4711; /* not a field: ignored */
	return -1;
}

START_TEST(site_code_mapping)
{
	/* a site's own codes through the callback, before the built-in table */
	sx_hl7_result res;
	int calls = 0;
	sx_hl7_options opt = {60, "site.hl7", site_codes, &calls};
	const sx_specimen *s;
	read_text(ORU "OBR|1||F1\r"
	              "OBX|1|NM|PO2A^pO2 art^L||77|mm[Hg]|||||F|||202603140706+0100\r"
	              "OBX|2|ST|BUBB^bubbles^L||Large||||||F\r"
	              "OBX|3|ST|ANAES^agent^L|a|sevoflurane||||||F\r"
	              "OBX|4|NM|ANAES%^agent %^L|a|2.1|%|||||F\r"
	              "OBX|5|NM|NONSENSE^x^L||1|||||F\r"
	              "OBX|6|NM|LOCAL^x^L^2019-8^pCO2^LN||40|mm[Hg]|||||F\r"
	              "OBX|7|NM|LOCAL^x^L^SX-STORAGE-TEMP-C^st^99SYX||4|Cel|||||F\r",
	          &opt, &res);
	s = spec(&res, 0);
	ck_assert_uint_eq(res.records[0].input_errors, 0);
	ck_assert_double_eq_tol(s->number[SX_F_PO2], 77, 1e-9);
	ck_assert_int_eq(s->choice[SX_F_BUBBLES], SX_BUBBLES_LARGE); /* "Large" read as large */
	ck_assert_uint_eq(s->agent_count, 1);
	ck_assert_str_eq(s->agents[0].name, "sevoflurane");
	ck_assert_double_eq_tol(s->agents[0].percent, 2.1, 1e-9);
	/* the alternate code (OBX-3.4 to .6) when the first is not known */
	ck_assert_double_eq_tol(s->number[SX_F_PCO2], 40, 1e-9);
	ck_assert_double_eq_tol(s->number[SX_F_STORAGE_TEMP_C], 4, 1e-9);
	ck_assert_int_gt(calls, 7);
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(default_local_codes)
{
	/* every data-dictionary field has a local code SX-<NAME> (docs/hl7.md) */
	sx_hl7_result res;
	const sx_specimen *s;
	read_text(ORU "OBR|1||F1\r"
	              "OBX|1|CWE|SX-CONTAINER^c^99SYX||glass-syringe^Glass syringe^99SYX||||||F\r"
	              "OBX|2|CWE|SX-ANTICOAGULANT^a^L||^Liquid heparin||||||F\r"
	              "OBX|3|CWE|SX-SEALED-CARRIER^s^99SYX||N^No^HL70136||||||F\r"
	              "OBX|4|ST|SX-TRANSPORT-NOTE^t^99SYX||via the tube\\T\\porter||||||F\r"
	              "OBX|5|NM|SX-HEPARIN-VOLUME-ML^h^99SYX||200|uL|||||F\r"
	              "OBX|6|NM|SX-BUBBLE-VOLUME-UL^b^99SYX||0.01|mL|||||F\r"
	              "OBX|7|NM|SX-SITE-ALTITUDE-M^alt^99SYX||1000|[ft_i]|||||F\r"
	              "OBX|8|ST|SX-COMMENTS^c^99SYX||first~second||||||F\r"
	              "OBX|9|NM|SX-PATIENT-AGE-YEARS^age^99SYX||18|mo|||||F\r"
	              "NTE|1|L|a note\r",
	          NULL, &res);
	s = spec(&res, 0);
	ck_assert_uint_eq(res.records[0].input_errors, 0);
	ck_assert_int_eq(s->choice[SX_F_CONTAINER], SX_CONTAINER_GLASS);
	ck_assert_int_eq(s->choice[SX_F_ANTICOAGULANT], SX_ANTICOAG_LIQUID_HEPARIN);
	ck_assert_int_eq(s->choice[SX_F_SEALED_CARRIER], SX_NO);
	ck_assert_str_eq(text_of(s, SX_F_TRANSPORT_NOTE), "via the tube&porter");
	ck_assert_double_eq_tol(s->number[SX_F_HEPARIN_VOLUME_ML], 0.2, 1e-9);
	ck_assert_double_eq_tol(s->number[SX_F_BUBBLE_VOLUME_UL], 10, 1e-9);
	ck_assert_double_eq_tol(s->number[SX_F_SITE_ALTITUDE_M], 304.8, 1e-6);
	ck_assert_double_eq_tol(s->number[SX_F_PATIENT_AGE_YEARS], 1.5, 1e-9);
	ck_assert_str_eq(text_of(s, SX_F_COMMENTS), "first; second; a note");
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(observation_problems)
{
	/* twice the same observation, a status that is not a result, a value type
	 * that cannot carry the field, an unknown choice, agents unpaired */
	sx_hl7_result res;
	const sx_specimen *s;
	read_text(ORU "OBR|1||F1\r"
	              "OBX|1|NM|2703-7^pO2^LN||80|mm[Hg]|||||F\r"
	              "OBX|2|NM|2703-7^pO2^LN||81|mm[Hg]|||||F\r"
	              "OBX|3|NM|2019-8^pCO2^LN||40|mm[Hg]|||||X\r"
	              "OBX|4|NM|2744-1^pH^LN||7.4||||||C\r"
	              "OBX|5|CWE|2708-6^SaO2^LN||98^x^L||||||F\r"
	              "OBX|6|CWE|SX-STORAGE^s^99SYX||fridge^In the fridge^L||||||F\r"
	              "OBX|7|NM|SX-AGENT-PERCENT^p^99SYX|9|1.5|%|||||F\r"
	              "OBX|8|NM|718-7^Hb^LN||||||||F\r",
	          NULL, &res);
	s = spec(&res, 0);
	ck_assert(!s->present[SX_F_PO2]);
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags,
	                                "OBX[2]-3: po2: given twice (first "
	                                "in OBX[1]); neither value is used"));
	ck_assert(!s->present[SX_F_PCO2]);
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "result status 'X'"));
	ck_assert_double_eq_tol(s->number[SX_F_PH], 7.4, 1e-9); /* C: corrected, a result */
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "OBX[5]-2: so2: value type 'CWE' "
	                                                       "cannot carry a number"));
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "storage: 'fridge' is not one of"));
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "sub-id '9'"));
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "hb: the observation has no value"));
	ck_assert_uint_eq(res.records[0].input_errors, 4);
	sx_hl7_result_clear(&res);
}
END_TEST

/* ---- segments ------------------------------------------------------------------------------ */

START_TEST(spm_details)
{
	/* SPM-21 reject reason and SPM-24 condition go to comments and warnings
	 * (the data dictionary has no field for them); SPM-4 BLD says neither
	 * arterial nor venous; PID-7 gives the age at collection */
	sx_hl7_result res;
	const sx_specimen *s;
	read_text(ORU "PID|1||P1^^^H^PI~P2^^^H^MR||NOTREAD^NEVER||19680314\r"
	              "OBR|1||F1\r"
	              "SPM|1|^S1||BLD^Whole blood^HL70487|||||||||||||20260314070000+0100||||"
	              "RB^Broken container^HL70490|||CLOT^Clotted^HL70493~COOL^Cool^HL70493\r",
	          NULL, &res);
	s = spec(&res, 0);
	ck_assert_str_eq(text_of(s, SX_F_PATIENT_ID), "P2"); /* the MR identifier */
	ck_assert_int_eq(s->choice[SX_F_SPECIMEN_TYPE], SX_TYPE_UNKNOWN);
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "BLD (whole blood)"));
	ck_assert_str_eq(text_of(s, SX_F_COMMENTS),
	                 "specimen reject reason: Broken container (RB); specimen condition: "
	                 "Clotted (CLOT); specimen condition: Cool (COOL)");
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "SPM[1]-24: specimen condition: "
	                                                       "Clotted (CLOT) (HL7 table 0493)"));
	ck_assert_double_eq_tol(s->number[SX_F_PATIENT_AGE_YEARS], 58.0, 0.01);
	for (int f = 0; f < SX_FIELD_COUNT; f++)
		if (s->present[f] && s->text[f])
			ck_assert_ptr_null(strstr(s->text[f], "NOTREAD"));
	ck_assert_uint_eq(res.records[0].input_errors, 0);
	sx_hl7_result_clear(&res);

	read_text(ORU "OBR|1||F1\rSPM|1|^S1||SER^Serum^HL70487\r", NULL, &res);
	ck_assert(!spec(&res, 0)->present[SX_F_SPECIMEN_TYPE]);
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "specimen type 'SER' (HL70487) is "
	                                                       "not a blood-gas specimen type"));
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(specimen_without_id)
{
	sx_hl7_result res;
	read_text(ORU "OBR|1\rOBX|1|NM|2703-7^pO2^LN||80|mm[Hg]\rSPM|1|||BLDA\r", NULL, &res);
	ck_assert_uint_eq(res.records[0].input_errors, 1);
	ck_assert_ptr_nonnull(find_diag(&res.records[0].diags, "SPM[1]-2: no specimen id"));
	sx_hl7_result_clear(&res);
}
END_TEST

START_TEST(allocation_failures)
{
	/* reading a message may fail at any allocation: SX_ENOMEM or a result
	 * that says what was lost, never a crash or a leak */
	size_t len;
	char *data = fixture("hl7/oul-r22-v27.hl7", &len);
	sx_hl7_result res;
	unsigned long total;
	sx_hl7_result_init(&res);
	sx_alloc_fail_at(0);
	ck_assert_int_eq(sx_hl7_read_message(data, len, 1, &site, &res), SX_OK);
	total = sx_alloc_fail_at(0);
	sx_hl7_result_clear(&res);
	for (unsigned long k = 1; k <= total; k++) {
		sx_alloc_fail_at(k);
		sx_hl7_read_message(data, len, 1, &site, &res);
		sx_alloc_fail_at(0);
		sx_hl7_result_clear(&res);
	}
	free(data);
}
END_TEST

/* ---- the feed ------------------------------------------------------------------------------ */

typedef struct fed {
	sx_specimen s[64];
	size_t errors[64];
	size_t n;
	sx_diag_list diags;
	sx_status worst;
	size_t messages;
} fed;

static void feed_file(const char *rel, sx_feed_format format, fed *out)
{
	char path[1024];
	FILE *fp;
	sx_feed_options fo = {format, 60, NULL, NULL};
	sx_feed *f;
	bool got = true;
	memset(out, 0, sizeof *out);
	sx_diag_list_init(&out->diags);
	snprintf(path, sizeof path, "%s/%s", SX_TEST_FIXTURES, rel);
	fp = fopen(path, "rb");
	ck_assert_ptr_nonnull(fp);
	ck_assert_int_eq(sx_feed_open(fp, rel, &fo, &f, &out->diags), SX_OK);
	while (got) {
		sx_feed_item item;
		sx_specimen s;
		sx_status st;
		sx_specimen_init(&s);
		st = sx_feed_next(f, &s, &item, &got, &out->diags);
		if (st != SX_OK && out->worst == SX_OK)
			out->worst = st;
		if (got) {
			ck_assert_uint_lt(out->n, 64);
			out->errors[out->n] = item.input_errors;
			out->s[out->n++] = s;
		} else {
			sx_specimen_clear(&s);
		}
	}
	sx_feed_close(f);
	fclose(fp);
}

static void fed_clear(fed *f)
{
	for (size_t i = 0; i < f->n; i++)
		sx_specimen_clear(&f->s[i]);
	sx_diag_list_clear(&f->diags);
}

START_TEST(demo_feed_equals_xml)
{
	/* fixtures/demo/morning.hl7 (tests/hl7/xml2hl7.py) holds the same
	 * specimens as morning.xml: every field of every record is the same */
	fed x, h;
	feed_file("demo/morning.xml", SX_FEED_AUTO, &x);
	feed_file("demo/morning.hl7", SX_FEED_AUTO, &h);
	ck_assert_uint_eq(x.n, 45);
	ck_assert_uint_eq(h.n, x.n);
	ck_assert_int_eq(h.worst, SX_OK);
	ck_assert_uint_eq(h.diags.errors, 0);
	for (size_t i = 0; i < x.n; i++) {
		const sx_specimen *a = &x.s[i], *b = &h.s[i];
		ck_assert_uint_eq(h.errors[i], 0);
		for (int f = 0; f < SX_FIELD_COUNT; f++) {
			const sx_field_info *info = sx_field_get((sx_field)f);
			ck_assert_msg(a->present[f] == b->present[f], "%s: %s present %d vs %d",
			              text_of(a, SX_F_SPECIMEN_ID), info->name, a->present[f],
			              b->present[f]);
			if (!a->present[f])
				continue;
			switch (info->kind) {
			case SX_KIND_NUMBER:
				ck_assert_double_eq_tol(a->number[f], b->number[f], 1e-9);
				break;
			case SX_KIND_CHOICE:
				ck_assert_int_eq(a->choice[f], b->choice[f]);
				break;
			case SX_KIND_TEXT:
				ck_assert_str_eq(a->text[f], b->text[f]);
				break;
			case SX_KIND_TIME:
				ck_assert_int_eq(a->time[f].utc_ms, b->time[f].utc_ms);
				ck_assert_int_eq(a->time[f].precision, b->time[f].precision);
				break;
			case SX_KIND_AGENTS:
				ck_assert_uint_eq(a->agent_count, b->agent_count);
				for (size_t k = 0; k < a->agent_count; k++) {
					ck_assert_str_eq(a->agents[k].name, b->agents[k].name);
					ck_assert_double_eq_tol(a->agents[k].percent,
					                        b->agents[k].percent, 1e-9);
				}
				break;
			}
		}
	}
	fed_clear(&x);
	fed_clear(&h);
}
END_TEST

START_TEST(feed_batch)
{
	/* a batch with an unsupported message: its error comes with the status,
	 * the other message's specimen is read; BTS-1 matches */
	fed h;
	feed_file("hl7/batch.hl7", SX_FEED_AUTO, &h);
	ck_assert_uint_eq(h.n, 1);
	ck_assert_str_eq(h.s[0].text[SX_F_SPECIMEN_ID], "BG-900005");
	ck_assert_double_eq_tol(h.s[0].number[SX_F_PO2], 700, 1e-9);
	ck_assert_int_eq(h.s[0].time[SX_F_RECEIVED_AT].utc_ms, iso("2026-03-14T07:52+01:00"));
	ck_assert_ptr_nonnull(find_diag(&h.diags, "message B0002, MSH[1]-9.1: message type "
	                                          "ADT^A01 is not read"));
	ck_assert_int_eq(h.worst, SX_EINVAL);
	ck_assert_ptr_null(find_diag(&h.diags, "BTS-1"));
	fed_clear(&h);
}
END_TEST

static void feed_memory(const char *text, fed *out)
{
	mem_input in = {text, strlen(text), 0, 7};
	sx_hl7_options opt = {0, "mem.hl7", NULL, NULL};
	sx_hl7_feed *f;
	bool got = true;
	memset(out, 0, sizeof *out);
	sx_diag_list_init(&out->diags);
	ck_assert_int_eq(sx_hl7_feed_open(mem_read, &in, &opt, &f), SX_OK);
	while (got) {
		sx_feed_item item;
		sx_specimen s;
		sx_status st;
		sx_specimen_init(&s);
		st = sx_hl7_feed_next(f, &s, &item, &got, &out->diags);
		if (st != SX_OK && out->worst == SX_OK)
			out->worst = st;
		if (got)
			out->s[out->n++] = s;
		else
			sx_specimen_clear(&s);
	}
	out->messages = sx_hl7_feed_messages(f);
	sx_hl7_feed_close(f);
}

START_TEST(feed_problems)
{
	fed h;
	/* junk before the first message, a BTS count that does not match, a
	 * message whose MSH-2 is unusable between two good ones */
	feed_memory("junk\rBHS|^~\\&\r"
	            "MSH|^~\\&|A|B|C|D|202603140707+0100||ORU^R01|M1|P|2.5.1\rOBR|1||F1\r"
	            "MSH|^~\\a|A\rOBR|1||F2\r"
	            "MSH|^~\\&|A|B|C|D|202603140707+0100||ORU^R01|M3|P|2.5.1\rOBR|1||F3\r"
	            "BTS|5\r",
	            &h);
	ck_assert_uint_eq(h.n, 2);
	ck_assert_uint_eq(h.messages, 3);
	ck_assert_str_eq(h.s[0].text[SX_F_SPECIMEN_ID], "F1");
	ck_assert_str_eq(h.s[1].text[SX_F_SPECIMEN_ID], "F3");
	ck_assert_ptr_nonnull(find_diag(&h.diags, "5 bytes that are not an HL7 message"));
	ck_assert_ptr_nonnull(find_diag(&h.diags, "message at line 5: MSH-2"));
	ck_assert_ptr_nonnull(find_diag(&h.diags, "BTS-1 counts 5 messages, but the batch that "
	                                          "starts at line 2 held 3"));
	ck_assert_int_eq(h.worst, SX_ESYNTAX);
	fed_clear(&h);
	feed_memory("", &h);
	ck_assert_uint_eq(h.n, 0);
	ck_assert_ptr_nonnull(find_diag(&h.diags, "no HL7 message"));
	fed_clear(&h);
}
END_TEST

static Suite *suite(void)
{
	Suite *s = suite_create("hl7_map");
	TCase *t = tcase_create("structures");
	tcase_add_test(t, oru_r01_blood_gas);
	tcase_add_test(t, oul_r22_specimen_first);
	tcase_add_test(t, oml_o21_order);
	tcase_add_test(t, oml_o33_specimen_first);
	tcase_add_test(t, one_record_per_obr_without_spm);
	tcase_add_test(t, nist_elr_sample);
	tcase_add_test(t, ghh_lab_sample);
	suite_add_tcase(s, t);
	t = tcase_create("values");
	tcase_add_loop_test(t, structured_numeric, 0, sizeof sn_values / sizeof sn_values[0]);
	tcase_add_test(t, unknown_unit_names_everything);
	tcase_add_test(t, missing_control_id);
	tcase_add_loop_test(t, message_header, 0, sizeof headers / sizeof headers[0]);
	tcase_add_test(t, not_a_message);
	tcase_add_test(t, time_offsets);
	tcase_add_test(t, site_code_mapping);
	tcase_add_test(t, default_local_codes);
	tcase_add_test(t, observation_problems);
	tcase_add_test(t, spm_details);
	tcase_add_test(t, specimen_without_id);
	tcase_add_test(t, allocation_failures);
	suite_add_tcase(s, t);
	t = tcase_create("feed");
	tcase_add_test(t, demo_feed_equals_xml);
	tcase_add_test(t, feed_batch);
	tcase_add_test(t, feed_problems);
	tcase_set_timeout(t, 60);
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
