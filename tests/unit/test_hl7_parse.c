/* SPDX-License-Identifier: MIT */
/*
 * test_hl7_parse.c - the HL7 v2 encoding rules: delimiters from MSH-1 and
 * MSH-2, field numbering, repetitions, components, subcomponents, escape
 * sequences, character sets, segment terminators, limits, and the reader
 * that cuts a stream into messages.
 *
 * Sources beside each check: HL7 v2.5.1 chapter 2 (control), sections 2.5
 * (message construction) and 2.7 (escape sequences; the subsection numbers
 * 2.7.3 to 2.7.6 below are from memory), as quoted in the project's
 * HL7-NOTES.md [V] and in the HL7 v2.3.1 excerpt reproduced by several
 * vendors' manuals (e.g. iNTERFACEWARE's "Delimiter Escape Sequences");
 * public sample messages as named at each (fixtures/hl7/README.md).
 */
#include <check.h>
#include <stdlib.h>
#include <string.h>

#include "core/alloc.h"
#include "feed/hl7.h"
#include "feed/hl7parse.h"
#include "test_hl7_util.h"

static sx_hl7_message parse_ok(const char *text)
{
	sx_hl7_message m;
	char why[256];
	sx_status st = sx_hl7_parse(text, strlen(text), 1, &m, why, sizeof why);
	ck_assert_msg(st == SX_OK, "parse failed: %s", why);
	return m;
}

/* Decoded text at SEG(n-th of that id)-f.r.c.s */
static const char *text_at(const sx_hl7_message *m, const char *id, unsigned nth, unsigned f,
                           unsigned r, unsigned c, unsigned s)
{
	static char out[4096];
	size_t from = 0, n;
	const sx_hl7_segment *seg = NULL;
	for (unsigned i = 0; i < nth; i++)
		seg = sx_hl7_find(m, id, &from);
	ck_assert_msg(seg != NULL, "no %s #%u", id, nth);
	ck_assert_int_eq(sx_hl7_decode(&m->delims, m->charset, sx_hl7_get(m, seg, f, r, c, s), out,
	                               sizeof out, &n),
	                 SX_OK);
	return out;
}

/* ---- delimiters and MSH numbering --------------------------------------- */

START_TEST(msh_numbering)
{
	/* MSH-1 is the field separator, MSH-2 the encoding characters, and the
	 * first token after them is MSH-3 (HL7 v2.5.1 ch. 2, MSH segment;
	 * HL7-NOTES.md: "the MSH off-by-one") */
	sx_hl7_message m = parse_ok("MSH|^~\\&|APP^X|FAC|RAPP|RFAC|20260314||ORU^R01^ORU_R01|C1|P|"
	                            "2.5.1\rPID|1||X");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 1, 0, 0, 0), "|");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 2, 0, 0, 0), "^~\\&");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 3, 1, 1, 0), "APP");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 3, 1, 2, 0), "X");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 9, 1, 2, 0), "R01");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 10, 1, 0, 0), "C1");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 12, 1, 0, 0), "2.5.1");
	ck_assert_int_eq(m.delims.field, '|');
	ck_assert_int_eq(m.delims.component, '^');
	ck_assert_int_eq(m.delims.repetition, '~');
	ck_assert_int_eq(m.delims.escape, '\\');
	ck_assert_int_eq(m.delims.subcomponent, '&');
	ck_assert_int_eq(m.delims.truncation, 0);
	ck_assert_uint_eq(m.segment_count, 2);
	sx_hl7_message_free(&m);
}
END_TEST

START_TEST(msh2_five_characters)
{
	/* v2.7 adds the truncation character as the fifth of MSH-2 (HL7-NOTES.md);
	 * \P\ stands for it */
	sx_hl7_message m = parse_ok("MSH|^~\\&#|A|B|C|D|20260314||ORU^R01|C2|P|2.7\r"
	                            "NTE|1||mask \\P\\28 # kept");
	ck_assert_int_eq(m.delims.truncation, '#');
	ck_assert_str_eq(text_at(&m, "MSH", 1, 2, 0, 0, 0), "^~\\&#");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 3, 1, 0, 0), "A");
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 1, 0, 0), "mask #28 # kept");
	sx_hl7_message_free(&m);
}
END_TEST

START_TEST(other_delimiters)
{
	/* any delimiters the sender chooses (common practice: | ^ ~ \ & are only
	 * the recommended ones) */
	sx_hl7_message m = parse_ok("MSH#$*!@#A$B#C#D#E#20260314##ORU$R01#C3#P#2.5.1\r"
	                            "OBX#1#NM#2703-7$pO2$LN##9!S!6@x*7#kPa");
	ck_assert_int_eq(m.delims.field, '#');
	ck_assert_str_eq(text_at(&m, "MSH", 1, 3, 1, 2, 0), "B");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 3, 1, 1, 0), "2703-7");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 5, 1, 1, 1), "9$6");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 5, 1, 1, 2), "x");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 5, 2, 0, 0), "7");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 6, 1, 1, 0), "kPa");
	sx_hl7_message_free(&m);
}
END_TEST

static const struct {
	const char *text;
	const char *why;
} bad_headers[] = {
        {"PID|1", "starts with an MSH"},
        {"MSH", "field separator"},
        {"MSHA^~\\&|", "field separator"},
        {"MSH||A|B", "MSH-2 (the encoding characters) is empty"},
        {"MSH|^~\\&#!|A", "has 6 characters"},
        {"MSH|^^\\&|A", "repeats another delimiter"},
        {"MSH|^~\\a|A", "letter, digit"},
        {"MSH|^~ &|A", "letter, digit, space"},
};

START_TEST(bad_header)
{
	sx_hl7_message m;
	char why[256];
	const char *t = bad_headers[_i].text;
	ck_assert_int_eq(sx_hl7_parse(t, strlen(t), 1, &m, why, sizeof why), SX_ESYNTAX);
	ck_assert_msg(strstr(why, bad_headers[_i].why) != NULL, "'%s': %s", t, why);
	ck_assert_uint_eq(m.segment_count, 0);
	sx_hl7_message_free(&m);
}
END_TEST

/* ---- access -------------------------------------------------------------- */

START_TEST(repetitions_components_subcomponents)
{
	sx_hl7_message m = parse_ok("MSH|^~\\&|||||||ORU^R01|C|P|2.5.1\r"
	                            "PID|1||A1^^^H&1.2&ISO^MR~B2^^^X^PI||\"\"|");
	const sx_hl7_segment *pid = &m.segments[1];
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 1, 1, 0), "A1");
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 1, 4, 2), "1.2");
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 1, 4, 3), "ISO");
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 1, 5, 0), "MR");
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 2, 1, 0), "B2");
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 2, 5, 0), "PI");
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 3, 1, 0), "");  /* no third repetition */
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 1, 9, 0), "");  /* no ninth component */
	ck_assert_str_eq(text_at(&m, "PID", 1, 40, 1, 1, 0), ""); /* beyond the segment */
	ck_assert_uint_eq(sx_hl7_pieces(sx_hl7_field(&m, pid, 3), '~'), 2);
	/* `""` is the explicit null, `||` not present (HL7-NOTES.md) */
	ck_assert(sx_hl7_is_null(sx_hl7_get(&m, pid, 5, 1, 0, 0)));
	ck_assert(!sx_hl7_is_null(sx_hl7_get(&m, pid, 4, 1, 0, 0)));
	ck_assert_uint_eq(sx_hl7_get(&m, pid, 4, 1, 0, 0).len, 0);
	ck_assert_uint_eq(pid->count, 7); /* the id, PID-1..PID-6 (PID-6 empty, trailing) */
	ck_assert_uint_eq(pid->seq, 1);
	sx_hl7_message_free(&m);
}
END_TEST

START_TEST(segment_sequence_and_location)
{
	char loc[48];
	sx_hl7_message m = parse_ok("MSH|^~\\&|||||||ORU^R01|C|P|2.5.1\rOBR|1\rOBX|1\rOBX|2\r"
	                            "NTE|1\rOBX|3\rZBG|x\rPV1");
	size_t from = 0;
	const sx_hl7_segment *s = NULL;
	for (int i = 0; i < 3; i++)
		s = sx_hl7_find(&m, "OBX", &from);
	ck_assert_uint_eq(s->seq, 3);
	ck_assert_uint_eq(s->line, 6);
	ck_assert_str_eq(sx_hl7_location(loc, sizeof loc, s, 6, 0, 0), "OBX[3]-6");
	ck_assert_str_eq(sx_hl7_location(loc, sizeof loc, s, 17, 1, 1), "OBX[3]-17.1.1");
	/* a Z-segment is a segment like any other; a segment may be its id alone */
	ck_assert_str_eq(m.segments[6].id, "ZBG");
	ck_assert_str_eq(m.segments[7].id, "PV1");
	ck_assert_uint_eq(m.segments[7].count, 1);
	sx_hl7_message_free(&m);
}
END_TEST

/* ---- escapes --------------------------------------------------------------- */

static const struct {
	const char *raw;
	const char *text;
	const char *source;
} escapes[] = {
        {"\\X48454C4C4F\\", "HELLO", "HL7-NOTES.md check [V]"},
        {"\\E\\S\\E\\", "\\S\\", "HL7-NOTES.md check [V]: no nesting"},
        {"a\\F\\b", "a|b", "v2.5.1 2.7.4"},
        {"a\\S\\b", "a^b", "v2.5.1 2.7.4"},
        {"a\\T\\b", "a&b", "v2.5.1 2.7.4"},
        {"a\\R\\b", "a~b", "v2.5.1 2.7.4"},
        {"a\\E\\b", "a\\b", "v2.5.1 2.7.4"},
        {"\\H\\bold\\N\\ normal", "bold normal", "v2.5.1 2.7.3: highlighting has no text"},
        {"line 1\\.br\\line 2", "line 1\nline 2", "v2.5.1 2.7.6 formatted text"},
        {"a\\.sp\\b\\.sp2\\c", "a\nb\nc", "v2.5.1 2.7.6"},
        {"\\.in+4\\x\\.ti-2\\y\\.fi\\\\.nf\\", "xy", "v2.5.1 2.7.6: layout only"},
        {"a\\.sk3\\b", "a b", "v2.5.1 2.7.6: skip"},
        {"a\\Q\\b", "a\\Q\\b", "unknown: passed through (HL7-NOTES.md)"},
        {"a\\f\\b", "a\\f\\b", "case-sensitive (HL7-NOTES.md)"},
        {"ab\\F", "ab\\F", "unterminated: passed through (HL7-NOTES.md)"},
        {"\\Zlocal\\", "\\Zlocal\\", "local escapes are kept"},
        {"\\C2842\\x\\C2D41\\", "\\C2842\\x\\C2D41\\", "character-set switching is kept"},
        {"\\X\\", "", "no hex pairs: nothing"},
        {"\\X414\\", "\\X414\\", "odd hex digits: kept"},
        {"\\XZZ\\", "\\XZZ\\", "not hex: kept"},
        {"\\\\", "\\\\", "empty sequence: kept"},
        {"\\P\\", "\\P\\", "\\P\\ without a truncation character: kept"},
        {"\\X0D0A\\", "\r\n", "hex bytes may be control characters"},
        {"\xc3\xa9t\xc3\xa9", "\xc3\xa9t\xc3\xa9", "UTF-8 passes through"},
        {"bad \xe9 byte", "bad \xef\xbf\xbd byte", "not UTF-8 in an ASCII message: U+FFFD"},
};

START_TEST(escape_sequences)
{
	char out[256];
	size_t n;
	sx_hl7_view v = {escapes[_i].raw, strlen(escapes[_i].raw)};
	const sx_hl7_delims d = {'|', '^', '~', '\\', '&', 0};
	ck_assert_int_eq(sx_hl7_decode(&d, SX_HL7_ASCII, v, out, sizeof out, &n), SX_OK);
	ck_assert_msg(n == strlen(escapes[_i].text) && memcmp(out, escapes[_i].text, n) == 0,
	              "%s (%s): got '%s'", escapes[_i].raw, escapes[_i].source, out);
}
END_TEST

START_TEST(escapes_after_splitting)
{
	/* an escaped delimiter never splits (v2.5.1 2.7: decode after splitting) */
	sx_hl7_message m = parse_ok("MSH|^~\\&|||||||ORU^R01|C|P|2.5.1\r"
	                            "NTE|1||a\\S\\b^c\\T\\d\\F\\e&f\\R\\g~h");
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 1, 1, 1), "a^b");
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 1, 2, 1), "c&d|e");
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 1, 2, 2), "f~g");
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 2, 0, 0), "h");
	sx_hl7_message_free(&m);
}
END_TEST

START_TEST(latin1_and_utf8)
{
	/* MSH-18 8859/1: bytes are converted to UTF-8, \Xhh\ too; UNICODE UTF-8
	 * passes through (HL7-NOTES.md: "decode text late") */
	sx_hl7_message m = parse_ok("MSH|^~\\&|||||||ORU^R01|C|P|2.5.1||||||8859/1\r"
	                            "NTE|1||37.2 \xb0"
	                            "C \\XE9\\t\xe9");
	ck_assert_int_eq(m.charset, SX_HL7_LATIN1);
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 1, 0, 0), "37.2 \xc2\xb0"
	                                                    "C \xc3\xa9t\xc3\xa9");
	sx_hl7_message_free(&m);
	m = parse_ok("MSH|^~\\&|||||||ORU^R01|C|P|2.5.1||||||UNICODE UTF-8\r"
	             "NTE|1||\xc2\xb5L \\XC2B5\\L");
	ck_assert_int_eq(m.charset, SX_HL7_UTF8);
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 1, 0, 0), "\xc2\xb5L \xc2\xb5L");
	sx_hl7_message_free(&m);
	m = parse_ok("MSH|^~\\&|||||||ORU^R01|C|P|2.5.1||||||ISO IR87\rNTE|1||x");
	ck_assert_int_eq(m.charset, SX_HL7_OTHER);
	sx_hl7_message_free(&m);
	m = parse_ok("MSH|^~\\&|||||||ORU^R01|C|P|2.5.1\rNTE|1||x");
	ck_assert_int_eq(m.charset, SX_HL7_ASCII);
	sx_hl7_message_free(&m);
}
END_TEST

START_TEST(decode_limit)
{
	char out[8];
	size_t n;
	sx_hl7_view v = {"0123456789", 10};
	ck_assert_int_eq(
	        sx_hl7_decode(&sx_hl7_default_delims, SX_HL7_ASCII, v, out, sizeof out, &n),
	        SX_ELIMIT);
}
END_TEST

/* ---- terminators, BOM, frame bytes --------------------------------------------- */

static const char *const terminator_files[] = {
        "hl7/oru-r01-bloodgas.hl7", "hl7/oru-r01-crlf.hl7", "hl7/oru-r01-lf.hl7",
        "hl7/oru-r01-bom.hl7",      "hl7/oru-r01-mllp.hl7",
};

START_TEST(terminators)
{
	/* CR, CRLF, LF (only when there is no CR), a byte order mark, MLLP frame
	 * bytes: the same 13 segments, the same values (HL7-NOTES.md) */
	size_t len;
	char *data = fixture(terminator_files[_i], &len);
	sx_hl7_message m;
	char why[256];
	ck_assert_int_eq(sx_hl7_parse(data, len, 1, &m, why, sizeof why), SX_OK);
	ck_assert_uint_eq(m.segment_count, 13);
	ck_assert_str_eq(m.segments[12].id, "SPM");
	ck_assert_uint_eq(m.segments[12].line, 13);
	ck_assert_str_eq(text_at(&m, "MSH", 1, 10, 1, 0, 0), "MSG00017");
	ck_assert_str_eq(text_at(&m, "SPM", 1, 2, 1, 2, 1), "BG-900001");
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 1, 0, 0),
	                 "drawn from the arterial line & flushed");
	ck_assert(m.lf_only == (strstr(terminator_files[_i], "-lf") != NULL));
	sx_hl7_message_free(&m);
	free(data);
}
END_TEST

START_TEST(literal_lf_and_empty_segments)
{
	/* with CR terminators a bare LF is text; empty segments are dropped
	 * (HL7-NOTES.md) */
	sx_hl7_message m = parse_ok("MSH|^~\\&|||||||ORU^R01|C|P|2.5.1\r\rNTE|1||two\nlines\r"
	                            "\r  \rPV1\r\r");
	ck_assert_uint_eq(m.segment_count, 3);
	ck_assert_str_eq(text_at(&m, "NTE", 1, 3, 1, 0, 0), "two\nlines");
	ck_assert_uint_eq(m.segments[1].line, 3);
	ck_assert_uint_eq(m.segments[2].line, 6);
	sx_hl7_message_free(&m);
}
END_TEST

/* ---- limits ---------------------------------------------------------------------- */

START_TEST(limits)
{
	sx_hl7_message m;
	char why[256];
	size_t big = SX_HL7_MAX_MESSAGE_BYTES + 10, n;
	char *buf = malloc(big + 1);
	const char head[] = "MSH|^~\\&|||||||ORU^R01|C|P|2.5.1\rNTE|1||";

	/* message size */
	memcpy(buf, head, sizeof head - 1);
	memset(buf + sizeof head - 1, 'x', big - (sizeof head - 1));
	ck_assert_int_eq(sx_hl7_parse(buf, big, 1, &m, why, sizeof why), SX_ELIMIT);
	ck_assert_ptr_nonnull(strstr(why, "limit"));
	sx_hl7_message_free(&m);

	/* segments */
	n = 0;
	memcpy(buf, head, 33);
	n = 33;
	for (int i = 0; i <= SX_HL7_MAX_SEGMENTS; i++) {
		memcpy(buf + n, "\rZZ1", 4);
		n += 4;
	}
	ck_assert_int_eq(sx_hl7_parse(buf, n, 1, &m, why, sizeof why), SX_ELIMIT);
	ck_assert_ptr_nonnull(strstr(why, "segments"));
	sx_hl7_message_free(&m);

	/* fields of one segment */
	memcpy(buf, head, sizeof head - 1);
	n = sizeof head - 1;
	for (int i = 0; i < SX_HL7_MAX_SEGMENT_FIELDS; i++)
		buf[n++] = '|';
	ck_assert_int_eq(sx_hl7_parse(buf, n, 1, &m, why, sizeof why), SX_ELIMIT);
	ck_assert_ptr_nonnull(strstr(why, "fields"));
	sx_hl7_message_free(&m);
	free(buf);
}
END_TEST

START_TEST(allocation_failures)
{
	/* every allocation of the parser may fail: a clean SX_ENOMEM, no leak */
	const char *t = "MSH|^~\\&|||||||ORU^R01|C|P|2.5.1\rPID|1|2|3|4|5|6|7|8|9\r"
	                "OBX|1|2|3|4|5|6|7|8|9|10|11|12|13|14|15|16|17|18|19|20|21|22|23|24|25|"
	                "26|27|28|29|30|31|32|33|34|35|36|37|38|39|40|41|42|43|44|45|46|47|48|"
	                "49|50|51|52|53|54|55|56|57|58|59|60|61|62|63|64|65|66";
	sx_hl7_message m;
	unsigned long total;
	sx_alloc_fail_at(0);
	ck_assert_int_eq(sx_hl7_parse(t, strlen(t), 1, &m, NULL, 0), SX_OK);
	sx_hl7_message_free(&m);
	total = sx_alloc_fail_at(0);
	ck_assert_uint_gt(total, 0);
	for (unsigned long k = 1; k <= total; k++) {
		sx_alloc_fail_at(k);
		ck_assert_int_eq(sx_hl7_parse(t, strlen(t), 1, &m, NULL, 0), SX_ENOMEM);
		sx_hl7_message_free(&m);
	}
	sx_alloc_fail_at(0);
}
END_TEST

/* ---- public sample messages ---------------------------------------------------------- */

START_TEST(nist_elr_sample)
{
	/* NIST HL7 v2.5.1 ELR sample test case 1 (fixtures/hl7/README.md) */
	size_t len;
	char *data = fixture("hl7/nist-elr-case1.hl7", &len);
	sx_hl7_message m;
	ck_assert_int_eq(sx_hl7_parse(data, len, 1, &m, NULL, 0), SX_OK);
	ck_assert_uint_eq(m.segment_count, 7);
	ck_assert_str_eq(text_at(&m, "MSH", 1, 10, 1, 0, 0), "NIST-100929110701660");
	ck_assert_str_eq(text_at(&m, "MSH", 1, 21, 1, 1, 0), "PHLabReport-NoAck");
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 1, 1, 0), "9817566735");
	ck_assert_str_eq(text_at(&m, "PID", 1, 3, 1, 4, 2), "2.16.840.1.113883.19.3.2.1");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 5, 1, 0, 0), "50");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 6, 1, 3, 0), "UCUM");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 19, 1, 0, 0), "200808181800-0700");
	ck_assert_str_eq(text_at(&m, "SPM", 1, 4, 1, 1, 0), "122554006");
	ck_assert_str_eq(text_at(&m, "SPM", 1, 4, 1, 4, 0), "BLDC");
	sx_hl7_message_free(&m);
	free(data);
}
END_TEST

START_TEST(ghh_lab_sample)
{
	/* the GHH LAB ORU^R01 v2.4 example (fixtures/hl7/README.md) */
	size_t len;
	char *data = fixture("hl7/ghh-lab-oru.hl7", &len);
	sx_hl7_message m;
	ck_assert_int_eq(sx_hl7_parse(data, len, 1, &m, NULL, 0), SX_OK);
	ck_assert_uint_eq(m.segment_count, 4);
	ck_assert_str_eq(text_at(&m, "MSH", 1, 3, 1, 0, 0), "GHH LAB");
	ck_assert_str_eq(text_at(&m, "OBR", 1, 15, 1, 1, 0), "555-55-5555");
	ck_assert_str_eq(text_at(&m, "OBR", 1, 15, 1, 9, 0), "LEVEL SEVEN HEALTHCARE, INC.");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 2, 1, 0, 0), "SN");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 5, 1, 1, 0), "");
	ck_assert_str_eq(text_at(&m, "OBX", 1, 5, 1, 2, 0), "182");
	sx_hl7_message_free(&m);
	free(data);
}
END_TEST

/* ---- the reader ------------------------------------------------------------------------ */

typedef struct chunks {
	int kinds[16];
	unsigned lines[16];
	size_t lens[16];
	char first[16][12];
	int n;
} chunks;

static void read_chunks(const char *data, size_t len, size_t step, chunks *c)
{
	mem_input in = {data, len, 0, step};
	sx_hl7_reader *r;
	memset(c, 0, sizeof *c);
	ck_assert_int_eq(sx_hl7_reader_open(mem_read, &in, &r), SX_OK);
	for (;;) {
		sx_hl7_chunk k;
		ck_assert_int_eq(sx_hl7_reader_next(r, &k), SX_OK);
		if (k.kind == SX_HL7_CHUNK_END)
			break;
		ck_assert_int_lt(c->n, 16);
		c->kinds[c->n] = k.kind;
		c->lines[c->n] = k.line;
		c->lens[c->n] = k.kind == SX_HL7_CHUNK_MESSAGE ? k.len : k.total;
		memcpy(c->first[c->n], k.data, k.len < 11 ? k.len : 11);
		c->n++;
	}
	sx_hl7_reader_close(r);
}

START_TEST(reader_batch)
{
	/* FHS/BHS ... BTS/FTS and messages separated by the next MSH; the same
	 * whatever the read sizes (1 byte at a time included) */
	static const size_t steps[] = {0, 1, 3, 64};
	size_t len;
	char *data = fixture("hl7/batch.hl7", &len);
	for (size_t s = 0; s < sizeof steps / sizeof steps[0]; s++) {
		chunks c;
		read_chunks(data, len, steps[s], &c);
		ck_assert_int_eq(c.n, 6);
		ck_assert_int_eq(c.kinds[0], SX_HL7_CHUNK_BATCH);
		ck_assert_str_eq(c.first[0], "FHS|^~\\&|SB");
		ck_assert_int_eq(c.kinds[1], SX_HL7_CHUNK_BATCH);
		ck_assert_int_eq(c.kinds[2], SX_HL7_CHUNK_MESSAGE);
		ck_assert_uint_eq(c.lines[2], 3);
		ck_assert_int_eq(c.kinds[3], SX_HL7_CHUNK_MESSAGE);
		ck_assert_uint_eq(c.lines[3], 7);
		ck_assert_str_eq(c.first[4], "BTS|2");
		ck_assert_uint_eq(c.lines[4], 10);
		ck_assert_uint_eq(c.lines[5], 11);
	}
	free(data);
}
END_TEST

START_TEST(reader_junk_and_frames)
{
	/* bytes before the first MSH are skipped and reported; MLLP frame bytes
	 * and a BOM between messages are separators; line numbers count
	 * segments */
	const char in[] = "garbage line\nmore\r\x0b\xef\xbb\xbfMSH|^~\\&|A\rPID|1\r\x1c\r"
	                  "\x0bMSH|^~\\&|B\rOBX|1\x1c\r";
	chunks c;
	read_chunks(in, sizeof in - 1, 0, &c);
	ck_assert_int_eq(c.n, 3);
	ck_assert_int_eq(c.kinds[0], SX_HL7_CHUNK_JUNK);
	ck_assert_uint_eq(c.lines[0], 1);
	ck_assert_uint_eq(c.lens[0], 19); /* up to the byte order mark */
	ck_assert_int_eq(c.kinds[1], SX_HL7_CHUNK_MESSAGE);
	ck_assert_uint_eq(c.lines[1], 3);
	ck_assert_uint_eq(c.lens[1], 16);
	ck_assert_int_eq(c.kinds[2], SX_HL7_CHUNK_MESSAGE);
	ck_assert_uint_eq(c.lines[2], 5);
	ck_assert_str_eq(c.first[2], "MSH|^~\\&|B\r");
}
END_TEST

START_TEST(reader_literal_lf)
{
	/* in a message whose segments end with CR, "\nMSH" inside a note is
	 * text, not the next message; after CRLF it is the next message */
	const char in[] = "MSH|^~\\&|A\rNTE|1||first line\nMSH is in the text\rPID|1\r\n"
			  "MSH|^~\\&|B\r\nPID|2\r\n";
	chunks c;
	read_chunks(in, sizeof in - 1, 5, &c);
	ck_assert_int_eq(c.n, 2);
	ck_assert_int_eq(c.kinds[0], SX_HL7_CHUNK_MESSAGE);
	ck_assert_uint_eq(c.lens[0], 53);
	ck_assert_str_eq(c.first[1], "MSH|^~\\&|B\r");
	ck_assert_uint_eq(c.lines[1], 4);
}
END_TEST

START_TEST(reader_oversize)
{
	/* a message past the limit is skipped as a whole; the next one is read */
	size_t big = SX_HL7_MAX_MESSAGE_BYTES + 5000;
	const char next[] = "\rMSH|^~\\&|NEXT\rPID|1\r";
	char *buf = malloc(big + sizeof next);
	chunks c;
	memcpy(buf, "MSH|^~\\&|BIG\rNTE|1||", 20);
	memset(buf + 20, 'x', big - 20);
	for (size_t i = 20; i < big; i += 1000)
		buf[i] = '\r'; /* many segments, each too small to matter */
	memcpy(buf + big, next, sizeof next - 1);
	read_chunks(buf, big + sizeof next - 1, 4096, &c);
	ck_assert_int_eq(c.n, 2);
	ck_assert_int_eq(c.kinds[0], SX_HL7_CHUNK_OVERSIZE);
	ck_assert_uint_ge(c.lens[0], SX_HL7_MAX_MESSAGE_BYTES);
	ck_assert_int_eq(c.kinds[1], SX_HL7_CHUNK_MESSAGE);
	ck_assert_str_eq(c.first[1], "MSH|^~\\&|NE");
	ck_assert_uint_eq(c.lines[1], 3 + (unsigned)((big - 20 + 999) / 1000));
	free(buf);
}
END_TEST

static int failing_read(void *context, char *buf, int len)
{
	(void)context;
	(void)buf;
	(void)len;
	return -1;
}

START_TEST(reader_read_error)
{
	sx_hl7_reader *r;
	sx_hl7_chunk k;
	ck_assert_int_eq(sx_hl7_reader_open(failing_read, NULL, &r), SX_OK);
	ck_assert_int_eq(sx_hl7_reader_next(r, &k), SX_EIO);
	sx_hl7_reader_close(r);
	sx_hl7_reader_close(NULL);
}
END_TEST

static Suite *suite(void)
{
	Suite *s = suite_create("hl7_parse");
	TCase *t = tcase_create("encoding");
	tcase_add_test(t, msh_numbering);
	tcase_add_test(t, msh2_five_characters);
	tcase_add_test(t, other_delimiters);
	tcase_add_loop_test(t, bad_header, 0, sizeof bad_headers / sizeof bad_headers[0]);
	tcase_add_test(t, repetitions_components_subcomponents);
	tcase_add_test(t, segment_sequence_and_location);
	tcase_add_loop_test(t, escape_sequences, 0, sizeof escapes / sizeof escapes[0]);
	tcase_add_test(t, escapes_after_splitting);
	tcase_add_test(t, latin1_and_utf8);
	tcase_add_test(t, decode_limit);
	tcase_add_loop_test(t, terminators, 0,
	                    sizeof terminator_files / sizeof terminator_files[0]);
	tcase_add_test(t, literal_lf_and_empty_segments);
	tcase_add_test(t, limits);
	tcase_add_test(t, allocation_failures);
	tcase_add_test(t, nist_elr_sample);
	tcase_add_test(t, ghh_lab_sample);
	suite_add_tcase(s, t);
	t = tcase_create("reader");
	tcase_add_test(t, reader_batch);
	tcase_add_test(t, reader_junk_and_frames);
	tcase_add_test(t, reader_literal_lf);
	tcase_add_test(t, reader_oversize);
	tcase_add_test(t, reader_read_error);
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
