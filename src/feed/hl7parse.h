/* SPDX-License-Identifier: MIT */
/*
 * hl7parse.h - HL7 v2 encoding rules: delimiters, segments, fields, escapes.
 *
 * A message is parsed into an index of views over its own bytes: a segment
 * table and a field table. Nothing is copied and nothing is decoded until a
 * caller reads a value: repetitions, components and subcomponents are found
 * by scanning one field when asked (sx_hl7_get), and escape sequences and the
 * character set are decoded only for the values read (sx_hl7_decode). This
 * follows HL7 v2.5.1 chapter 2, section 2.5 (message construction rules) and
 * 2.7 (escape sequences); docs/hl7.md has the details and the tolerances.
 *
 * The reader (sx_hl7_reader) cuts a stream into messages: a message starts at
 * a segment "MSH" and ends before the next MSH, FHS, BHS, BTS or FTS (batch
 * files), so files of many messages, batch files and MLLP-framed dumps read
 * the same way. Memory stays bounded by one message.
 *
 * Ownership: an sx_hl7_message only points into the caller's bytes, which must
 * outlive it; sx_hl7_message_free() frees its tables (the struct may live on
 * the stack). The reader owns its buffer; a chunk's bytes are valid until the
 * next call of sx_hl7_reader_next(). sx_hl7_reader_close(NULL) is fine.
 */
#ifndef SX_HL7PARSE_H
#define SX_HL7PARSE_H

#include <stdbool.h>
#include <stddef.h>

#include "core/status.h"
#include "feed/hl7limits.h"

/* Bytes, not NUL-terminated. An absent value is {p, 0} (p may be NULL). */
typedef struct sx_hl7_view {
	const char *p;
	size_t len;
} sx_hl7_view;

/* MSH-1 and MSH-2. A character that MSH-2 does not define is 0. */
typedef struct sx_hl7_delims {
	char field;
	char component;
	char repetition;
	char escape;
	char subcomponent;
	char truncation; /* v2.7 and later: the fifth character of MSH-2 */
} sx_hl7_delims;

/* MSH-18, as far as the reader understands it. */
typedef enum sx_hl7_charset {
	SX_HL7_ASCII = 0, /* MSH-18 empty or "ASCII" */
	SX_HL7_UTF8,      /* "UNICODE UTF-8" */
	SX_HL7_LATIN1,    /* "8859/1": converted to UTF-8 when decoded */
	SX_HL7_OTHER,     /* anything else: read as UTF-8, with a warning */
} sx_hl7_charset;

typedef struct sx_hl7_segment {
	char id[4];     /* "OBX"; "" when the segment does not start with an id */
	unsigned line;  /* 1-based line (segment number) in the input */
	unsigned seq;   /* 1-based occurrence of this id within the message */
	size_t first;   /* index of field 0 (the id) in the message's field table */
	unsigned count; /* fields present, field 0 included */
} sx_hl7_segment;

typedef struct sx_hl7_message {
	const char *data; /* the message's bytes (not owned) */
	size_t len;
	sx_hl7_delims delims;
	sx_hl7_charset charset;
	bool lf_only; /* segments end with LF (the message holds no CR) */
	unsigned first_line;
	unsigned lines; /* segment terminators in the message */
	sx_hl7_segment *segments;
	size_t segment_count;
	sx_hl7_view *fields;
	size_t field_count;
	size_t segment_cap, field_cap;
} sx_hl7_message;

/*
 * Parse one message of len bytes (a UTF-8 byte order mark, an MLLP start byte
 * and trailing terminators or an MLLP end byte are skipped). first_line is
 * the line of its first byte in the input, for diagnostics.
 *
 * Returns SX_OK; SX_ESYNTAX when it is not a message (no MSH segment first,
 * MSH-1 or MSH-2 unusable); SX_ELIMIT past a bound of hl7limits.h; SX_ENOMEM.
 * On an error, why (if not NULL, size why_size) holds a sentence saying what
 * was wrong and *m is left empty (free it anyway).
 */
sx_status sx_hl7_parse(const char *data, size_t len, unsigned first_line, sx_hl7_message *m,
                       char *why, size_t why_size);
void sx_hl7_message_free(sx_hl7_message *m);

/* The first segment with that id at or after index *from (0 to start), or
 * NULL; *from is moved past it. */
const sx_hl7_segment *sx_hl7_find(const sx_hl7_message *m, const char *id, size_t *from);

/*
 * The raw (still escaped) bytes at SEG-field.rep.comp.sub. field counts from
 * 1 (MSH-1 is the field separator, MSH-2 the encoding characters: both are
 * returned whole, never split). rep counts from 1; comp and sub count from 1,
 * and 0 means "the whole" (sx_hl7_get(m, s, 3, 1, 0, 0) is the first
 * repetition of field 3). Anything absent gives an empty view.
 */
sx_hl7_view sx_hl7_get(const sx_hl7_message *m, const sx_hl7_segment *s, unsigned field,
                       unsigned rep, unsigned comp, unsigned sub);
/* The whole field, all repetitions. */
sx_hl7_view sx_hl7_field(const sx_hl7_message *m, const sx_hl7_segment *s, unsigned field);

/* The n-th (from 1) piece of v cut at sep, and the number of pieces (0 for
 * an empty view). sep 0 means "not defined": v is one piece. */
sx_hl7_view sx_hl7_piece(sx_hl7_view v, char sep, unsigned n);
unsigned sx_hl7_pieces(sx_hl7_view v, char sep);

/* True for the explicit null `""` (HL7 v2.5.1 section 2.5.3). */
bool sx_hl7_is_null(sx_hl7_view v);

/*
 * Decode escape sequences and the character set of raw into out (UTF-8,
 * NUL-terminated, *out_len bytes without the NUL). \F\ \S\ \T\ \R\ \E\ give
 * the delimiters, \P\ the truncation character (when MSH-2 defines one),
 * \Xhh..\ one byte per hex pair, \H\ and \N\ (highlighting) nothing, \.br\,
 * \.sp\ and \.ce\ a line feed, \.sk\ a space, the other formatting commands
 * nothing; an unknown or unterminated sequence is kept as it is, and so are
 * \Cxxyy\, \Mxxyyzz\ and \Z..\ (character-set switching and local escapes
 * are not interpreted). 8859/1 bytes become UTF-8; bytes that are not UTF-8
 * in a UTF-8 or ASCII message become U+FFFD.
 * Returns SX_OK, or SX_ELIMIT when out (size bytes) is too small: 3 * raw.len
 * + 1 always suffices.
 */
sx_status sx_hl7_decode(const sx_hl7_delims *d, sx_hl7_charset cs, sx_hl7_view raw, char *out,
                        size_t size, size_t *out_len);

/* The location text of a segment's field for diagnostics: "OBX[3]-6",
 * "SPM[1]-17.1.1" (comp/sub 0 are left out). Returns out. */
char *sx_hl7_location(char *out, size_t size, const sx_hl7_segment *s, unsigned field,
                      unsigned comp, unsigned sub);

/* ---- cutting a stream into messages ----------------------------------- */

typedef int (*sx_hl7_read_fn)(void *context, char *buf, int len);

typedef enum sx_hl7_chunk_kind {
	SX_HL7_CHUNK_END = 0,  /* no more input */
	SX_HL7_CHUNK_MESSAGE,  /* an MSH segment and the segments up to the next one */
	SX_HL7_CHUNK_BATCH,    /* one FHS, BHS, BTS or FTS segment */
	SX_HL7_CHUNK_JUNK,     /* bytes that are not part of a message (skipped) */
	SX_HL7_CHUNK_OVERSIZE, /* a message longer than SX_HL7_MAX_MESSAGE_BYTES
	                        * (skipped; data holds its first bytes) */
} sx_hl7_chunk_kind;

typedef struct sx_hl7_chunk {
	sx_hl7_chunk_kind kind;
	const char *data; /* valid until the next call */
	size_t len;       /* bytes in data */
	size_t total;     /* bytes the chunk covered in the input */
	unsigned line;    /* line of its first byte */
} sx_hl7_chunk;

typedef struct sx_hl7_reader sx_hl7_reader;

/* read: like read(2), returns bytes (0 at the end, -1 on an error). */
sx_status sx_hl7_reader_open(sx_hl7_read_fn read, void *context, sx_hl7_reader **out);
/* The next chunk. Returns SX_OK (chunk->kind END at the end), SX_EIO when
 * read failed, SX_ENOMEM. */
sx_status sx_hl7_reader_next(sx_hl7_reader *r, sx_hl7_chunk *chunk);
void sx_hl7_reader_close(sx_hl7_reader *r);

/* Segment terminators in [p, p+len) as the parser counts them: CR (a CRLF
 * counts once) when there is a CR, else LF. */
unsigned sx_hl7_count_lines(const char *p, size_t len);

#endif
