/* SPDX-License-Identifier: MIT */
/*
 * test_mllp.c - MLLP framing: every case a robust receiver must handle
 * (HL7 v2 MLLP framing, 0x0B message 0x1C 0x0D; the receiver's duties as listed in
 * the project's HL7 notes).
 */
#include <check.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "net/mllp.h"

typedef struct got {
	int frames, oversize;
	char text[8][64];
	size_t sizes[8];
} got;

static void drain(sx_mllp_decoder *d, got *g)
{
	const uint8_t *msg;
	size_t len;
	sx_mllp_event e;
	while ((e = sx_mllp_next(d, &msg, &len)) != SX_MLLP_NONE) {
		if (e == SX_MLLP_FRAME) {
			if (g->frames < 8) {
				snprintf(g->text[g->frames], sizeof g->text[0], "%.*s", (int)len,
					 (const char *)msg);
				g->sizes[g->frames] = len;
			}
			g->frames++;
		} else {
			g->oversize++;
		}
	}
}

/* Push bytes in pieces of `chunk` (0: all at once). */
static void run(const char *bytes, size_t n, size_t chunk, size_t max, got *g)
{
	sx_mllp_decoder *d;
	memset(g, 0, sizeof *g);
	ck_assert_int_eq(sx_mllp_decoder_new(max, &d), SX_OK);
	if (!chunk)
		chunk = n;
	for (size_t i = 0; i < n; i += chunk) {
		size_t k = n - i < chunk ? n - i : chunk;
		ck_assert_int_eq(sx_mllp_push(d, (const uint8_t *)bytes + i, k), SX_OK);
		drain(d, g);
	}
	sx_mllp_decoder_free(d);
}

#define S(lit) lit, sizeof lit - 1

START_TEST(one_frame_split_at_every_byte)
{
	static const char f[] = "\x0bMSH|^~\\&|A\rPID|1\r\x1c\x0d";
	/* every split point: two pushes */
	for (size_t cut = 1; cut < sizeof f - 1; cut++) {
		sx_mllp_decoder *d;
		got g = {0};
		ck_assert_int_eq(sx_mllp_decoder_new(0, &d), SX_OK);
		sx_mllp_push(d, (const uint8_t *)f, cut);
		drain(d, &g);
		sx_mllp_push(d, (const uint8_t *)f + cut, sizeof f - 1 - cut);
		drain(d, &g);
		ck_assert_int_eq(g.frames, 1);
		ck_assert_str_eq(g.text[0], "MSH|^~\\&|A\rPID|1\r");
		sx_mllp_decoder_free(d);
	}
}
END_TEST

START_TEST(byte_by_byte)
{
	got g;
	run(S("\x0b" "A\x1c\x0d\x0b" "B\x1c\x0d"), 1, 0, &g);
	ck_assert_int_eq(g.frames, 2);
	ck_assert_str_eq(g.text[0], "A");
	ck_assert_str_eq(g.text[1], "B");
}
END_TEST

START_TEST(several_frames_in_one_read_in_order)
{
	got g;
	run(S("\x0b" "one\x1c\x0d\x0b" "two\x1c\x0d\x0b" "three\x1c\x0d"), 0, 0, &g);
	ck_assert_int_eq(g.frames, 3);
	ck_assert_str_eq(g.text[0], "one");
	ck_assert_str_eq(g.text[1], "two");
	ck_assert_str_eq(g.text[2], "three");
}
END_TEST

START_TEST(bytes_before_the_start_are_discarded)
{
	got g;
	run(S("noise\r\n\x0bMSH|x\x1c\x0d"), 0, 0, &g);
	ck_assert_int_eq(g.frames, 1);
	ck_assert_str_eq(g.text[0], "MSH|x");
}
END_TEST

START_TEST(a_second_start_restarts_the_frame)
{
	got g;
	run(S("\x0bhalf a mess\x0bMSH|whole\x1c\x0d"), 0, 0, &g);
	ck_assert_int_eq(g.frames, 1);
	ck_assert_str_eq(g.text[0], "MSH|whole");
}
END_TEST

START_TEST(a_missing_final_cr_is_tolerated)
{
	got g;
	run(S("\x0bMSH|a\x1c\x0bMSH|b\x1c\x0d"), 2, 0, &g);
	ck_assert_int_eq(g.frames, 2);
	ck_assert_str_eq(g.text[0], "MSH|a");
	ck_assert_str_eq(g.text[1], "MSH|b");
}
END_TEST

START_TEST(a_split_between_end_and_cr)
{
	static const char f[] = "\x0bMSH|a\x1c\x0d";
	sx_mllp_decoder *d;
	got g = {0};
	ck_assert_int_eq(sx_mllp_decoder_new(0, &d), SX_OK);
	sx_mllp_push(d, (const uint8_t *)f, sizeof f - 2); /* up to and with 0x1C */
	drain(d, &g);
	ck_assert_int_eq(g.frames, 0);
	ck_assert(sx_mllp_in_frame(d));
	sx_mllp_push(d, (const uint8_t *)f + sizeof f - 2, 1);
	drain(d, &g);
	ck_assert_int_eq(g.frames, 1);
	ck_assert(!sx_mllp_in_frame(d));
	sx_mllp_decoder_free(d);
}
END_TEST

START_TEST(an_oversize_frame_is_reported_and_the_next_one_read)
{
	char big[300];
	size_t n = 0;
	got g;
	big[n++] = 0x0b;
	for (int i = 0; i < 200; i++)
		big[n++] = 'x';
	big[n++] = 0x1c;
	big[n++] = 0x0d;
	memcpy(big + n, "\x0bMSH|ok\x1c\x0d", 10);
	n += 10;
	for (size_t chunk = 0; chunk < 8; chunk++) {
		run(big, n, chunk, 100, &g);
		ck_assert_int_eq(g.oversize, 1);
		ck_assert_int_eq(g.frames, 1);
		ck_assert_str_eq(g.text[0], "MSH|ok");
	}
}
END_TEST

START_TEST(memory_stays_bounded_while_skipping)
{
	/* a peer that never ends its frame: the decoder keeps at most the maximum */
	sx_mllp_decoder *d;
	uint8_t junk[1000];
	got g = {0};
	memset(junk, 'y', sizeof junk);
	ck_assert_int_eq(sx_mllp_decoder_new(64, &d), SX_OK);
	sx_mllp_push(d, (const uint8_t *)"\x0b", 1);
	for (int i = 0; i < 1000; i++) {
		ck_assert_int_eq(sx_mllp_push(d, junk, sizeof junk), SX_OK);
		drain(d, &g);
	}
	ck_assert(sx_mllp_in_frame(d));
	ck_assert_int_eq(g.frames, 0);
	sx_mllp_decoder_free(d);
}
END_TEST

START_TEST(wrap_and_read_back)
{
	sx_strbuf b;
	got g;
	sx_strbuf_init(&b, 0);
	sx_mllp_wrap(&b, (const uint8_t *)"MSH|^~\\&|X\r", 11);
	ck_assert_uint_eq(b.len, 14);
	ck_assert_int_eq(b.data[0], 0x0b);
	ck_assert_int_eq(b.data[12], 0x1c);
	ck_assert_int_eq(b.data[13], 0x0d);
	run(b.data, b.len, 3, 0, &g);
	ck_assert_str_eq(g.text[0], "MSH|^~\\&|X\r");
	sx_strbuf_free(&b);
}
END_TEST

int main(void)
{
	Suite *s = suite_create("mllp");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;
	tcase_add_test(tc, one_frame_split_at_every_byte);
	tcase_add_test(tc, byte_by_byte);
	tcase_add_test(tc, several_frames_in_one_read_in_order);
	tcase_add_test(tc, bytes_before_the_start_are_discarded);
	tcase_add_test(tc, a_second_start_restarts_the_frame);
	tcase_add_test(tc, a_missing_final_cr_is_tolerated);
	tcase_add_test(tc, a_split_between_end_and_cr);
	tcase_add_test(tc, an_oversize_frame_is_reported_and_the_next_one_read);
	tcase_add_test(tc, memory_stays_bounded_while_skipping);
	tcase_add_test(tc, wrap_and_read_back);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
