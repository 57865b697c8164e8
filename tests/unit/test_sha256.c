/* SPDX-License-Identifier: MIT */
/*
 * test_sha256.c - SHA-256 against the examples of the standard.
 *
 * Sources of the expected digests:
 *  - "abc" and the 448-bit message "abcdbcdecdefdefg...nopq": the SHA-256
 *    examples that NIST publishes with FIPS 180-4 (Secure Hash Standard,
 *    Computer Security Resource Center, "Examples with intermediate values",
 *    SHA256.pdf), also printed in FIPS 180-2, appendix B.1 and B.2;
 *  - one million repetitions of "a": FIPS 180-2 appendix B.3;
 *  - the empty message and the 896-bit message "abcdefghbcdefghi...nopqrstu":
 *    from memory of the widely reproduced SHA-256 test vectors (the 896-bit
 *    one is the SHA-512 example message of FIPS 180-2 appendix C), and both
 *    checked against Python's hashlib (general-purpose library) when written.
 */
#include <check.h>
#include <stdlib.h>
#include <string.h>

#include "core/sha256.h"

static const struct {
	const char *message;
	const char *digest;
} vectors[] = {
        {"abc", "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"},
        {"abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq",
         "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1"},
        {"", "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"},
        {"abcdefghbcdefghicdefghijdefghijkefghijklfghijklmghijklmnhijklmnoijklmnopjklmnopqklmnopqr"
         "lmnopqrsmnopqrstnopqrstu",
         "cf5b16a778af8380036ce59e7b0492370b249b11e8f07a51afac45037afee9d1"},
};

static void hex_of(const void *data, size_t len, char hex[SX_SHA256_HEX])
{
	unsigned char d[SX_SHA256_BYTES];
	sx_sha256_digest(data, len, d);
	sx_sha256_hex(d, hex);
}

START_TEST(standard_examples)
{
	char hex[SX_SHA256_HEX];
	hex_of(vectors[_i].message, strlen(vectors[_i].message), hex);
	ck_assert_str_eq(hex, vectors[_i].digest);
}
END_TEST

/* Fed in pieces of every size from 1 to 130 bytes, the digest is the same:
 * block boundaries and the padding branch (56..63 bytes left) are crossed. */
START_TEST(pieces_give_the_same_digest)
{
	const char *m = vectors[3].message;
	size_t len = strlen(m);
	for (size_t piece = 1; piece <= 130; piece++) {
		sx_sha256 ctx;
		unsigned char d[SX_SHA256_BYTES];
		char hex[SX_SHA256_HEX];
		sx_sha256_init(&ctx);
		for (size_t at = 0; at < len; at += piece)
			sx_sha256_update(&ctx, m + at, len - at < piece ? len - at : piece);
		sx_sha256_update(&ctx, NULL, 0);
		sx_sha256_final(&ctx, d);
		sx_sha256_hex(d, hex);
		ck_assert_str_eq(hex, vectors[3].digest);
	}
}
END_TEST

START_TEST(million_a)
{
	/* FIPS 180-2 appendix B.3: one million repetitions of "a" */
	static char block[1000];
	sx_sha256 ctx;
	unsigned char d[SX_SHA256_BYTES];
	char hex[SX_SHA256_HEX];
	memset(block, 'a', sizeof block);
	sx_sha256_init(&ctx);
	for (int i = 0; i < 1000; i++)
		sx_sha256_update(&ctx, block, sizeof block);
	sx_sha256_final(&ctx, d);
	sx_sha256_hex(d, hex);
	ck_assert_str_eq(hex, "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}
END_TEST

/* Messages of 55, 56, 63 and 64 bytes sit at the padding's edges: each must
 * differ from its neighbours (a padding bug tends to collide them). */
START_TEST(padding_edges_differ)
{
	char m[130], prev[SX_SHA256_HEX] = "", hex[SX_SHA256_HEX];
	memset(m, 'x', sizeof m);
	for (size_t len = 50; len <= 130; len++) {
		hex_of(m, len, hex);
		ck_assert_str_ne(hex, prev);
		memcpy(prev, hex, sizeof hex);
	}
}
END_TEST

int main(void)
{
	Suite *s = suite_create("sha256");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;

	tcase_add_loop_test(tc, standard_examples, 0, sizeof vectors / sizeof vectors[0]);
	tcase_add_test(tc, pieces_give_the_same_digest);
	tcase_add_test(tc, million_a);
	tcase_add_test(tc, padding_edges_differ);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
