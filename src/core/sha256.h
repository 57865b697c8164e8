/* SPDX-License-Identifier: MIT */
/*
 * sha256.h - SHA-256 (FIPS 180-4, section 6.2) of our own, so that the
 * decision log can fingerprint each input without a crypto library.
 *
 * Streaming use: sx_sha256_init(), any number of sx_sha256_update(), then
 * sx_sha256_final(). The context needs no freeing. Not constant-time: it is
 * for fingerprints of inputs, not for secrets.
 */
#ifndef SX_SHA256_H
#define SX_SHA256_H

#include <stddef.h>
#include <stdint.h>

#define SX_SHA256_BYTES 32
#define SX_SHA256_HEX   65 /* 64 hex digits and the NUL */

typedef struct sx_sha256 {
	uint32_t h[8];
	uint64_t length; /* bytes hashed so far */
	unsigned char block[64];
	size_t used; /* bytes waiting in block */
} sx_sha256;

void sx_sha256_init(sx_sha256 *ctx);
void sx_sha256_update(sx_sha256 *ctx, const void *data, size_t len);
void sx_sha256_final(sx_sha256 *ctx, unsigned char digest[SX_SHA256_BYTES]);

/* The digest of one buffer, in one call. */
void sx_sha256_digest(const void *data, size_t len, unsigned char digest[SX_SHA256_BYTES]);
/* Lower-case hex of a digest, NUL-terminated. */
void sx_sha256_hex(const unsigned char digest[SX_SHA256_BYTES], char hex[SX_SHA256_HEX]);

#endif
