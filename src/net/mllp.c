/* SPDX-License-Identifier: MIT */
/*
 * mllp.c - MLLP frame decoder and encoder.
 *
 * The decoder keeps received bytes in one buffer and scans them with a small
 * state machine; the scan position survives between pushes, so each byte is
 * looked at once. Complete frames are handed out as views into the buffer;
 * what came before the current frame is dropped lazily, at the next push.
 */
#include "net/mllp.h"

#include <string.h>

#include "core/alloc.h"

typedef enum scan_state {
	IDLE,      /* outside a frame: discard up to a start byte */
	IN_FRAME,  /* inside: collect up to 0x1C */
	AFTER_END, /* saw 0x1C: expect 0x0D */
	SKIPPING,  /* an oversize frame: discard up to its end */
	SKIP_END,  /* oversize, saw 0x1C */
} scan_state;

struct sx_mllp_decoder {
	uint8_t *buf;
	size_t len, cap;
	size_t pos;          /* next byte to scan */
	size_t frame_start;  /* first message byte of the current frame */
	size_t skipped;      /* bytes of the oversize frame being skipped */
	size_t max_frame;
	scan_state state;
	sx_mllp_counts counts;
};

sx_status sx_mllp_decoder_new(size_t max_frame, sx_mllp_decoder **out)
{
	sx_mllp_decoder *d = sx_calloc(1, sizeof *d);
	*out = NULL;
	if (!d)
		return SX_ENOMEM;
	d->max_frame = max_frame ? max_frame : SX_MLLP_DEFAULT_MAX_FRAME;
	*out = d;
	return SX_OK;
}

void sx_mllp_decoder_free(sx_mllp_decoder *d)
{
	if (!d)
		return;
	sx_free(d->buf);
	sx_free(d);
}

/* At a push the last frame handed out is no longer in use: keep only the current frame
 * (from its first byte) or, outside a frame, nothing before the scan position. */
static void compact(sx_mllp_decoder *d)
{
	size_t keep = d->state == IN_FRAME || d->state == AFTER_END ? d->frame_start : d->pos;
	if (keep == 0)
		return;
	memmove(d->buf, d->buf + keep, d->len - keep);
	d->len -= keep;
	d->pos -= keep;
	d->frame_start = d->frame_start >= keep ? d->frame_start - keep : 0;
}

sx_status sx_mllp_push(sx_mllp_decoder *d, const uint8_t *data, size_t len)
{
	compact(d);
	if (d->len + len > d->cap) {
		size_t cap = d->cap ? d->cap : 4096;
		uint8_t *buf;
		while (cap < d->len + len)
			cap *= 2;
		buf = sx_realloc(d->buf, cap);
		if (!buf)
			return SX_ENOMEM;
		d->buf = buf;
		d->cap = cap;
	}
	memcpy(d->buf + d->len, data, len);
	d->len += len;
	return SX_OK;
}

sx_mllp_event sx_mllp_next(sx_mllp_decoder *d, const uint8_t **msg, size_t *len)
{
	*msg = NULL;
	*len = 0;
	while (d->pos < d->len) {
		uint8_t c = d->buf[d->pos++];
		switch (d->state) {
		case IDLE:
			if (c == SX_MLLP_START) {
				d->state = IN_FRAME;
				d->frame_start = d->pos;
			} else {
				d->counts.discarded_bytes++;
			}
			break;
		case IN_FRAME:
			if (c == SX_MLLP_END) {
				d->state = AFTER_END;
			} else if (c == SX_MLLP_START) {
				d->counts.restarted++; /* a new frame before this one ended */
				d->frame_start = d->pos;
			} else if (d->pos - d->frame_start > d->max_frame) {
				d->state = SKIPPING;
				d->skipped = d->pos - d->frame_start;
				}
			break;
		case AFTER_END:
			if (c == SX_MLLP_CR || c == SX_MLLP_START) {
				/* a frame: the message runs from frame_start to the 0x1C */
				size_t end = d->pos - 2;
				*msg = d->buf + d->frame_start;
				*len = end - d->frame_start;
				d->counts.frames++;
				if (c == SX_MLLP_START) {
					/* the final CR was missing and a new frame starts here */
					d->counts.missing_cr++;
					d->state = IN_FRAME;
					d->frame_start = d->pos;
				} else {
					d->state = IDLE;
						}
				return SX_MLLP_FRAME;
			}
			/* 0x1C followed by something else: it was message data after all */
			d->state = c == SX_MLLP_END ? AFTER_END : IN_FRAME;
			break;
		case SKIPPING:
			d->skipped++;
			if (c == SX_MLLP_END)
				d->state = SKIP_END;
			break;
		case SKIP_END:
			if (c == SX_MLLP_CR || c == SX_MLLP_START) {
				*len = d->skipped - 1; /* without the 0x1C */
				d->counts.oversize++;
				d->state = c == SX_MLLP_START ? IN_FRAME : IDLE;
				d->frame_start = d->pos;
				return SX_MLLP_OVERSIZE;
			}
			d->skipped++;
			d->state = c == SX_MLLP_END ? SKIP_END : SKIPPING;
			break;
		}
	}
	return SX_MLLP_NONE;
}

int sx_mllp_in_frame(const sx_mllp_decoder *d)
{
	return d->state != IDLE;
}

sx_mllp_counts sx_mllp_decoder_counts(const sx_mllp_decoder *d)
{
	return d->counts;
}

void sx_mllp_wrap(sx_strbuf *out, const uint8_t *msg, size_t len)
{
	sx_strbuf_putc(out, SX_MLLP_START);
	sx_strbuf_append(out, (const char *)msg, len);
	sx_strbuf_putc(out, SX_MLLP_END);
	sx_strbuf_putc(out, SX_MLLP_CR);
}
