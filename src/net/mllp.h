/* SPDX-License-Identifier: MIT */
/*
 * mllp.h - Minimal Lower Layer Protocol framing (HL7 v2 over TCP).
 *
 * A frame is 0x0B, the message, 0x1C 0x0D. The decoder takes bytes as they
 * arrive, split anywhere (also between 0x1C and 0x0D), and yields whole
 * messages in order. It is forgiving where receivers must be: bytes before a
 * start byte are discarded and counted; a second start byte inside a frame
 * restarts it (the partial frame is counted as abandoned); a missing final 0x0D
 * is tolerated when the next start byte follows. A frame longer than the
 * maximum is not kept: its bytes are discarded up to its end, and it is
 * reported as oversize so the caller can answer it (AR) instead of dropping it.
 *
 * Ownership: the decoder owns its buffer; sx_mllp_decoder_free() releases it.
 * A frame yielded by sx_mllp_next() points into that buffer and stays valid
 * until the next call to sx_mllp_push() or sx_mllp_next().
 */
#ifndef SX_MLLP_H
#define SX_MLLP_H

#include <stddef.h>
#include <stdint.h>

#include "core/status.h"
#include "core/strbuf.h"

#define SX_MLLP_START 0x0B
#define SX_MLLP_END 0x1C
#define SX_MLLP_CR 0x0D
#define SX_MLLP_DEFAULT_MAX_FRAME (1u << 20) /* 1 MiB of message */

typedef enum sx_mllp_event {
	SX_MLLP_NONE = 0,     /* nothing complete yet: push more bytes */
	SX_MLLP_FRAME,        /* a whole message */
	SX_MLLP_OVERSIZE,     /* a frame longer than the maximum ended; its bytes are gone */
} sx_mllp_event;

typedef struct sx_mllp_decoder sx_mllp_decoder;

sx_status sx_mllp_decoder_new(size_t max_frame, sx_mllp_decoder **out);
void sx_mllp_decoder_free(sx_mllp_decoder *d);

/* Append received bytes. SX_ENOMEM only when memory runs out. */
sx_status sx_mllp_push(sx_mllp_decoder *d, const uint8_t *data, size_t len);

/* The next complete event: a frame (*msg, *len) or an oversize frame (*len = its size).
 * Call until it gives SX_MLLP_NONE. */
sx_mllp_event sx_mllp_next(sx_mllp_decoder *d, const uint8_t **msg, size_t *len);

/* True while a frame has started and not ended (for the stalled-frame timeout). */
int sx_mllp_in_frame(const sx_mllp_decoder *d);

/* Counters for the log. */
typedef struct sx_mllp_counts {
	uint64_t frames, oversize, discarded_bytes, restarted, missing_cr;
} sx_mllp_counts;
sx_mllp_counts sx_mllp_decoder_counts(const sx_mllp_decoder *d);

/* Write msg as one frame into out. */
void sx_mllp_wrap(sx_strbuf *out, const uint8_t *msg, size_t len);

#endif
