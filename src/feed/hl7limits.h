/* SPDX-License-Identifier: MIT */
/*
 * hl7limits.h - every bound of the HL7 v2 reader and writers.
 *
 * The HL7 reader takes bytes from outside (files, an MLLP socket), so every
 * size it keeps is bounded here. Past a bound the reader says so with an error
 * that names the bound and the message; it never grows without limit and never
 * cuts a value silently. The general bounds of libsyrinx are in core/limits.h.
 */
#ifndef SX_HL7LIMITS_H
#define SX_HL7LIMITS_H

/* Bytes in one message (MSH to the next MSH, or one MLLP frame). Blood-gas
 * results are a few kilobytes; a megabyte leaves room for long notes. */
#define SX_HL7_MAX_MESSAGE_BYTES (1u << 20)

/* Segments in one message. */
#define SX_HL7_MAX_SEGMENTS 5000

/* Fields in one segment (the segment id counts as field 0). The widest
 * segment of v2.8 (PID, OBR) has fewer than 60. */
#define SX_HL7_MAX_SEGMENT_FIELDS 512

/* Fields in one message, all segments together. */
#define SX_HL7_MAX_MESSAGE_FIELDS 100000

/* Bytes of one decoded value that the mapping reads (a field, component or
 * subcomponent, after escapes and character set). Text fields of the record
 * are bounded again by SX_MAX_TEXT. */
#define SX_HL7_MAX_VALUE 8192

/* Specimen records made from one message (one per SPM, or per OBR). */
#define SX_HL7_MAX_SPECIMENS 500

/* Problems kept per message for the acknowledgement's ERR segments; more are
 * counted and the ACK says how many were left out. */
#define SX_HL7_MAX_ISSUES 64

/* Bytes of a message control id (MSH-10) kept for diagnostics; v2.7 allows
 * 199. A longer id is an error. */
#define SX_HL7_MAX_CONTROL_ID 199

/* Bytes of the user message (ERR-8) of one ERR segment. */
#define SX_HL7_MAX_ISSUE_TEXT 240

/* Agents (SX-AGENTS) and agent percentages (SX-AGENT-PERCENT) collected in
 * one record before they are paired by OBX-4 sub-id. */
#define SX_HL7_MAX_AGENT_OBX 16

#endif
