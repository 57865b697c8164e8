/* SPDX-License-Identifier: MIT */
/*
 * hl7internal.h - what hl7map.c (messages, segments, records) and hl7obx.c
 * (observations) share. Not for use outside src/feed: the public interface
 * is feed/hl7.h.
 *
 * Every helper reports through sx_hl7_report(), which names the message, the
 * segment with its sequence number, the field and component; values are
 * decoded late, into the context's ring of buffers, by sx_hl7_value().
 */
#ifndef SX_HL7INTERNAL_H
#define SX_HL7INTERNAL_H

#include <stdbool.h>
#include <stddef.h>

#include "feed/hl7.h"

/* Decoded values are kept in a small ring of buffers, so that a few may be
 * held at once (a value and its unit). */
#define SX_HL7_RING        4
#define SX_HL7_DECODE_SIZE (3 * SX_HL7_MAX_VALUE + 1)

/* The message being read. */
typedef struct sx_hl7_ctx {
	const sx_hl7_message *m;
	const sx_hl7_options *opt;
	sx_hl7_result *res;
	char name[SX_HL7_MAX_CONTROL_ID + 48]; /* "message MSG00017" */
	int offset_min;
	bool offset_from_msh;
	bool has_msh7;
	sx_time msh7;
	size_t message_end; /* message-level range [1, message_end) */
	char *ring[SX_HL7_RING];
	unsigned ring_next;
} sx_hl7_ctx;

/* An agent (SX-AGENTS) or its percentage (SX-AGENT-PERCENT), paired later
 * by OBX-4 sub-id. */
typedef struct sx_hl7_agent_obx {
	char name[SX_MAX_AGENT_NAME];
	char subid[32];
	double percent;
	const sx_hl7_segment *seg;
	bool used;
} sx_hl7_agent_obx;

/* One record being filled. */
typedef struct sx_hl7_rec {
	sx_hl7_record *rec;
	sx_specimen *s;
	const sx_hl7_segment *first_obx[SX_FIELD_COUNT];
	bool twice[SX_FIELD_COUNT];
	const sx_hl7_segment *po2_obx;
	char comments[SX_MAX_TEXT + 1];
	size_t comments_len;
	bool comments_cut;
	sx_hl7_agent_obx agents[SX_HL7_MAX_AGENT_OBX];
	size_t agent_count;
	sx_hl7_agent_obx percents[SX_HL7_MAX_AGENT_OBX];
	size_t percent_count;
} sx_hl7_rec;

/* A code and what it means (a field, or a choice). */
typedef struct sx_hl7_code_row {
	const char *code;
	int field;
} sx_hl7_code_row;

/* Report one problem: into the record's diagnostics (the message's when rec
 * is NULL) with the message's name and the location before the text, and
 * into the ACK's issues when ack is true (errors always go there). */
void sx_hl7_report(sx_hl7_ctx *c, sx_hl7_record *rec, sx_severity sev, sx_status st, int code,
                   bool ack, const sx_hl7_segment *s, unsigned field, unsigned comp, unsigned sub,
                   const char *fmt, ...) __attribute__((format(printf, 11, 12)));

/* The decoded value at SEG-field.rep.comp.sub (comp/sub 0: the whole), in a
 * ring buffer; "" when absent, the null "" or on a problem (reported). */
const char *sx_hl7_value(sx_hl7_ctx *c, sx_hl7_record *rec, const sx_hl7_segment *s, unsigned field,
                         unsigned rep, unsigned comp, unsigned sub, bool trim, size_t *len);

/* A value for quoting in a message: printable, cut at 60 bytes. */
const char *sx_hl7_quoted(const char *v, char *buf, size_t size);
void sx_hl7_copy_text(char *dst, size_t size, const char *src);
bool sx_hl7_eq_nocase(const char *a, const char *b);

/* Set a field through the record's parser (sx_specimen_set), its
 * diagnostics re-told at the HL7 location (a unit problem at unit_field). */
void sx_hl7_set_value(sx_hl7_ctx *c, sx_hl7_rec *r, sx_field f, const char *v, size_t len,
                      const char *unit, const sx_hl7_segment *s, unsigned field, unsigned comp,
                      unsigned unit_field);
/* Set a time field from HL7 DTM; the offset assumed is said in a warning. */
void sx_hl7_set_time(sx_hl7_ctx *c, sx_hl7_rec *r, sx_field f, const char *v, size_t len,
                     const sx_hl7_segment *s, unsigned field, unsigned comp, unsigned sub);
/* Add a note to the record's comments ("; " between notes). */
void sx_hl7_append_comment(sx_hl7_ctx *c, sx_hl7_rec *r, const char *text, size_t len,
                           const sx_hl7_segment *s, unsigned field);

/* Coding systems of syrinx's local codes: "", "L", "99SYX". */
bool sx_hl7_local_system(const char *system);
/* One OBX: its code, status, value type, value and unit into the record. */
void sx_hl7_map_obx(sx_hl7_ctx *c, sx_hl7_rec *r, const sx_hl7_segment *s);
/* Pair the agents with their percentages (OBX-4 sub-id) and add them. */
void sx_hl7_finish_agents(sx_hl7_ctx *c, sx_hl7_rec *r);

#endif
