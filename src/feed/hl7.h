/* SPDX-License-Identifier: MIT */
/*
 * hl7.h - HL7 v2 messages in and out: specimen records from ORU^R01,
 * OUL^R22, OML^O21 and OML^O33, acknowledgements, and the HL7 feed.
 *
 * Reading one message (the MLLP server's way in):
 *
 *	sx_hl7_result res;
 *	sx_hl7_receive(bytes, len, &options, &ack_options, &res, &ack);
 *	for (size_t i = 0; i < res.record_count; i++)
 *		... res.records[i].specimen, .input_errors, .diags ...
 *	... send ack.data ...
 *	sx_hl7_result_clear(&res);
 *
 * Reading a file is the generic feed's business (feed/feed.h), which uses
 * sx_hl7_feed_* below. docs/hl7.md says what is read from which segment,
 * field and component, and which local observation codes are understood.
 *
 * Every problem names the message (MSH-10), the segment with its sequence
 * number within the message (OBX[3] is the third OBX), the field and the
 * component, e.g. "message MSG00017, OBX[3]-6: ...". Diagnostics of one
 * specimen are kept with its record; those of the whole message (MSH, an
 * unsupported message type) with the result. One bad message or specimen
 * never stops the others.
 *
 * Ownership: a result owns its records, their specimens and diagnostics;
 * sx_hl7_result_clear() frees them (the struct may live anywhere and is
 * reusable). sx_hl7_feed_close(NULL) is fine.
 */
#ifndef SX_HL7_H
#define SX_HL7_H

#include <stdbool.h>
#include <stddef.h>

#include "core/diag.h"
#include "core/record.h"
#include "core/strbuf.h"
#include "core/sxtime.h"
#include "feed/hl7limits.h"
#include "feed/hl7parse.h"

/*
 * A site's own observation codes: given OBX-3's coding system and code (both
 * decoded, NUL-terminated; the system may be ""), return the data-dictionary
 * field (sx_field) the value belongs to, SX_HL7_AGENT_PERCENT for an
 * anaesthetic agent's volume percent, or -1 to fall back on the built-in
 * table (LOINC and the SX- local codes, docs/hl7.md). The ruleset's
 * sx_ruleset_map_code() fits this through a two-line wrapper.
 */
typedef int (*sx_hl7_map_fn)(void *context, const char *system, const char *code);
#define SX_HL7_AGENT_PERCENT 1000

typedef struct sx_hl7_options {
	int default_offset_min; /* the site's offset, when MSH-7 has none either */
	const char *source;     /* name for diagnostics (file name, peer); not owned */
	sx_hl7_map_fn map_code; /* may be NULL */
	void *map_context;
} sx_hl7_options;

/* A problem as the acknowledgement reports it (an ERR segment). */
typedef struct sx_hl7_issue {
	char segment[4];                     /* "" when the message had no usable MSH */
	unsigned seq, field, rep, comp, sub; /* 0 = not given */
	int code;                            /* HL7 table 0357 */
	char severity;                       /* 'E' error, 'W' warning, 'I' information (ERR-4) */
	char text[SX_HL7_MAX_ISSUE_TEXT];
} sx_hl7_issue;

/* One specimen read from a message. */
typedef struct sx_hl7_record {
	sx_specimen specimen;
	sx_diag_list diags;  /* this specimen's errors and warnings */
	size_t input_errors; /* errors among them: not screened when > 0 */
	unsigned line;       /* line of its SPM (or OBR) */
} sx_hl7_record;

typedef enum sx_hl7_ack_code {
	SX_HL7_AA = 0, /* accepted */
	SX_HL7_AE,     /* accepted, with errors in content */
	SX_HL7_AR,     /* rejected: not a message, or a type, event or
	                * version this reader does not take */
} sx_hl7_ack_code;

typedef struct sx_hl7_result {
	sx_hl7_ack_code ack_code;
	sx_status status; /* the first message-level error, SX_OK if none */
	bool has_control_id;
	char control_id[SX_HL7_MAX_CONTROL_ID + 1]; /* MSH-10, decoded */
	char type[24];                              /* "ORU^R01", as read */
	unsigned line;                              /* line of the MSH segment */
	sx_hl7_record *records;
	size_t record_count;
	sx_diag_list diags;                     /* message-level diagnostics */
	sx_hl7_issue issues[SX_HL7_MAX_ISSUES]; /* for the ACK, in order */
	size_t issue_count;
	size_t issues_dropped;
	char *msh; /* a copy of the received MSH segment (for the ACK) */
	size_t msh_len;
} sx_hl7_result;

void sx_hl7_result_init(sx_hl7_result *res);
void sx_hl7_result_clear(sx_hl7_result *res);

/*
 * Read the specimens of one parsed message into res (which is cleared first).
 * Returns SX_OK, or SX_ENOMEM; every problem of the input is in res (and the
 * status of the first message-level one in res->status).
 */
sx_status sx_hl7_map(const sx_hl7_message *m, const sx_hl7_options *options, sx_hl7_result *res);

/*
 * Parse and read one message from a buffer (an MLLP frame's content, or a
 * file of one message); line is the line of its first byte (1 if unknown).
 * A buffer that is not an HL7 message gives a result with no records, an
 * error and ack_code SX_HL7_AR. Returns SX_OK or SX_ENOMEM.
 */
sx_status sx_hl7_read_message(const char *data, size_t len, unsigned line,
                              const sx_hl7_options *options, sx_hl7_result *res);

/* ---- writing ---------------------------------------------------------------- */

/* The default delimiters of HL7 v2: | ^ ~ \ & (no truncation character). */
extern const sx_hl7_delims sx_hl7_default_delims;

/*
 * Append text escaped for a field under the delimiters d (HL7 v2.5.1 section
 * 2.7): the escape character first becomes \E\, then | ^ & ~ become \F\ \S\
 * \T\ \R\ and the truncation character \P\. Line breaks become \.br\ when
 * formatted (FT and TX fields such as NTE-3), \X0D\ / \X0A\ otherwise; other
 * control bytes \Xhh\.
 */
void sx_hl7_put_escaped(sx_strbuf *out, const sx_hl7_delims *d, const char *text, size_t len,
                        bool formatted);

/* The MSH-2 text of d ("^~\&", or five characters with a truncation one). */
void sx_hl7_put_encoding(sx_strbuf *out, const sx_hl7_delims *d);

typedef struct sx_hl7_ack_options {
	const char *control_id;  /* MSH-10 of the ACK; NULL: "ACK" + the received MSH-10 */
	const sx_time *now;      /* MSH-7 of the ACK; NULL: left empty */
	const char *application; /* MSH-3 when the received MSH-5 is empty ("SYRINX") */
	const char *facility;    /* MSH-4 when the received MSH-6 is empty */
} sx_hl7_ack_options;

/*
 * Write the original-mode acknowledgement of a received message (HL7 v2.5.1
 * chapter 2, sections 2.9 and 2.14 to 2.15): MSH with the sender's
 * delimiters, sender and receiver swapped and MSH-9 ACK^<trigger>^ACK; MSA
 * with the code (AA, AE, AR) and the received MSH-10; one ERR per issue
 * (ERR-2 location SEG^seq^field^rep^comp^sub, ERR-3 table 0357 code, ERR-4
 * severity, ERR-8 the text; ERR-1 instead before v2.5). Segments end with CR.
 */
void sx_hl7_write_ack(sx_strbuf *out, const sx_hl7_result *res, const sx_hl7_ack_options *options);

/* Read one message and write its acknowledgement: sx_hl7_read_message()
 * then sx_hl7_write_ack() (ack may be NULL). Returns SX_OK or SX_ENOMEM. */
sx_status sx_hl7_receive(const char *data, size_t len, const sx_hl7_options *options,
                         const sx_hl7_ack_options *ack_options, sx_hl7_result *res, sx_strbuf *ack);

/* ---- the HL7 feed (files and streams of many messages) --------------------- */

typedef struct sx_hl7_feed sx_hl7_feed;
struct sx_feed_item;

/* options is copied (its source and map_context must outlive the feed). */
sx_status sx_hl7_feed_open(sx_hl7_read_fn read, void *context, const sx_hl7_options *options,
                           sx_hl7_feed **out);

/*
 * The next specimen of the feed, as sx_feed_next() gives it: *got is false at
 * the end. Diagnostics of its message (MSH problems, a message that was
 * skipped) come with the first specimen after them, or at the end; the status
 * is then that problem's (the specimen is good all the same: *got says so).
 */
sx_status sx_hl7_feed_next(sx_hl7_feed *f, sx_specimen *s, struct sx_feed_item *item, bool *got,
                           sx_diag_list *diags);

/* Messages read so far (for the command's summary and tests). */
size_t sx_hl7_feed_messages(const sx_hl7_feed *f);
void sx_hl7_feed_close(sx_hl7_feed *f);

#endif
