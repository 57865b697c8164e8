/* SPDX-License-Identifier: MIT */
/*
 * verdict_row.h - one verdict as a flat row: what the decision log stores,
 * what `syrinx audit` reads and what its CSV and JSON exports write.
 *
 * A row is built from a specimen and its verdict (sx_verdict_row_build), or
 * read back from the decision log (decision_log.h); both give the same
 * values, so an audit of feed files and an audit of the log agree to the
 * last digit. Numbers are rounded as the reports write them (pO2 and bias to
 * 0.1 mmHg, delay to 0.1 min, leukocytes to 0.01 x 10^9/L).
 *
 * A row carries no patient identifier: the record's patient_id is never put
 * in a row, not even hashed (docs/decision-log.md says why).
 *
 * Ownership: a row only points at text; whoever filled it owns the text (the
 * builder, or the log's cursor until its next step).
 */
#ifndef SX_VERDICT_ROW_H
#define SX_VERDICT_ROW_H

#include <stdbool.h>
#include <stdint.h>

#include "core/record.h"
#include "core/sha256.h"
#include "core/strbuf.h"
#include "model/verdict.h"

/* A time that is not known. Times are UTC milliseconds since 1970. */
#define SX_ROW_NO_TIME INT64_MIN

typedef struct sx_verdict_row {
	int64_t id;                /* row id in the log; 0 when not from a log */
	const char *sender;        /* HL7 MSH-3^MSH-4; NULL for files */
	const char *control_id;    /* HL7 MSH-10; NULL for files */
	const char *source;        /* file:line for files; NULL or free text otherwise */
	const char *input_sha256;  /* 64 hex digits of the input's SHA-256 */
	int64_t input_received_ms; /* when syrinx received the input; NO_TIME for files */
	int64_t audit_ms;          /* the time the audit files the row under (below) */
	int64_t collected_ms, received_ms, analysed_ms;
	const char *specimen_id, *location, *collector; /* NULL when absent */
	const char *transport, *storage;                /* choice names, NULL when absent */
	double wbc;                                     /* 10^9/L; NaN when absent */
	double delay_min; /* analysed_at - collected_at; NaN when either is absent */
	double po2_mmhg;  /* the reading; NaN when absent */
	sx_disposition disposition;
	double bias_mmhg, bias_low_mmhg, bias_high_mmhg; /* NaN when nothing was estimated */
	const char *reason_codes;    /* the reasons' codes, one space between, "" for none */
	const char *reasons_json;    /* [{"code","severity","message","rule"}...] */
	const char *mechanisms_json; /* [{"name","bias_mmhg"}...] */
	const char *warnings_json;   /* ["...", ...] */
	const char *ruleset;         /* the policy in force (sx_screener_version) */
} sx_verdict_row;

/*
 * Where a verdict came from, for sx_verdict_row_build(). input/input_len are
 * the bytes to fingerprint (the HL7 message as received); with input NULL the
 * specimen's canonical text is fingerprinted instead (every field but
 * patient_id, in data-dictionary order), since a feed file keeps no bytes
 * per specimen.
 */
typedef struct sx_row_origin {
	const char *sender, *control_id, *source;
	const void *input;
	size_t input_len;
	int64_t input_received_ms; /* SX_ROW_NO_TIME when not received live */
	const char *ruleset;
} sx_row_origin;

/* Owns the text a built row points at; reused from row to row. */
typedef struct sx_row_builder {
	sx_verdict_row row;
	sx_strbuf codes, reasons, mechanisms, warnings, scratch;
	char sha256[SX_SHA256_HEX];
} sx_row_builder;

void sx_row_builder_init(sx_row_builder *b);
void sx_row_builder_free(sx_row_builder *b);

/*
 * Fill b->row from a screened specimen. The row points into s (text fields),
 * into origin (sender, control id, source, ruleset) and into b; all must
 * outlive the use of the row. Returns SX_OK or SX_ENOMEM / SX_ELIMIT.
 */
sx_status sx_verdict_row_build(sx_row_builder *b, const sx_specimen *s, const sx_verdict *v,
                               const sx_row_origin *origin);

/* The audit time of a row: collected_at, else analysed_at, else the
 * specimen's received_at, else when syrinx received the input. */
int64_t sx_verdict_row_audit_time(const sx_verdict_row *row);

/*
 * Which rows an audit or a query takes. Every criterion left at its
 * initial value takes every row.
 *   from_ms, to_ms  audit time in [from, to): from inclusive, to exclusive;
 *                   a row without an audit time passes only when neither is set
 *   location        the location itself or a unit above it: "ICU" takes
 *                   "ICU" and "ICU/BED03", not "ICU2"
 *   collector, transport, reason_code   equal (a reason code: any of the row's)
 *   disposition     -1 for any, else an sx_disposition
 */
typedef struct sx_row_filter {
	int64_t from_ms, to_ms; /* SX_ROW_NO_TIME when not set */
	const char *location, *collector, *transport, *reason_code;
	int disposition;
} sx_row_filter;

void sx_row_filter_init(sx_row_filter *f);
bool sx_row_filter_match(const sx_row_filter *f, const sx_verdict_row *row);

/* The unit of a location: the text before the first '/', written into buf
 * ("ICU/BED03" -> "ICU"); "(no location)" for NULL or empty. */
void sx_location_unit(const char *location, char *buf, size_t size);

/* Write t as fixed-width ISO 8601 UTC, 2026-03-14T07:02:00.000Z (24
 * characters and the NUL; size at least 25). Text of this form sorts as time
 * does, which the log's indexes rely on. */
void sx_row_time_text(int64_t utc_ms, char *buf, size_t size);

/* Whether the space-separated list codes holds code. */
bool sx_reason_codes_have(const char *codes, const char *code);

#endif
