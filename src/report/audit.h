/* SPDX-License-Identifier: MIT */
/*
 * audit.h - `syrinx audit`: what a quality officer sees of many verdicts.
 *
 * The aggregate (sx_audit) takes verdict rows one at a time, from the
 * decision log or from screening feed files, and keeps only counts,
 * histograms and bounded samples: its memory does not grow with the rows
 * (a year or ten give the same size, past the first weeks). The writers turn
 * it into one self-contained HTML page with SVG charts (audit_html.c), and
 * the rows themselves, as they pass, into CSV or JSON (audit_export.c).
 * docs/audit.md describes each chart, table and column.
 *
 * Ownership: sx_audit_free() frees an aggregate (NULL is fine).
 */
#ifndef SX_AUDIT_H
#define SX_AUDIT_H

#include <stdbool.h>
#include <stdint.h>

#include "core/strbuf.h"
#include "store/verdict_row.h"

/* Bounds of the aggregate (everything past them is counted, not kept). */
#define SX_AUDIT_MAX_UNITS    24    /* units kept apart; more are "(other units)" */
#define SX_AUDIT_MAX_CODES    64    /* reason codes kept apart; more are "(other reasons)" */
#define SX_AUDIT_MAX_RULESETS 8     /* ruleset versions named; more are counted */
#define SX_AUDIT_MAX_WEEKS    1044  /* about 20 years of weeks */
#define SX_AUDIT_SAMPLE       300   /* points kept per scatter series */
#define SX_AUDIT_TOP          10    /* largest biases listed */
#define SX_AUDIT_BIAS_STEP    0.5   /* mmHg: the bias histogram's finest bin */
#define SX_AUDIT_BIAS_LIMIT   200.0 /* mmHg: bins cover -limit..+limit; beyond is counted */
#define SX_AUDIT_BIAS_BINS    800
#define SX_AUDIT_DELAY_BINS   241 /* 1-minute bins 0..239 and one for 240 min or more */

/* Transports as the charts keep them apart; the last is "not given". */
enum { SX_AUDIT_TRANSPORTS = 5 };
/* Leukocyte bands of the leukocyte table, 10^9/L. */
enum { SX_AUDIT_WBC_BANDS = 6 };

typedef struct sx_audit_point {
	double x, y;
	uint64_t key; /* sampling key: the smallest keys are kept */
	int tag;      /* the point's disposition */
} sx_audit_point;

/* A deterministic bounded sample: the SX_AUDIT_SAMPLE points of smallest key
 * (a bottom-k sample). With keys from the inputs' fingerprints, the sample
 * depends on the rows only, not on their order. */
typedef struct sx_audit_sample {
	sx_audit_point points[SX_AUDIT_SAMPLE]; /* a max-heap on key while filling */
	size_t count;
	uint64_t seen;
} sx_audit_sample;

typedef struct sx_audit_unit {
	char name[64];
	uint64_t by_disposition[3];
	uint32_t *weeks; /* [2 * week]: verdicts, rejections; span of the aggregate */
} sx_audit_unit;

typedef struct sx_audit_code {
	char code[48];
	int severity; /* highest sx_reason_severity seen, -1 unknown */
	uint64_t count;
} sx_audit_code;

typedef struct sx_audit_transport {
	uint64_t count, rejected, with_delay, with_bias;
	double bias_sum;
	uint32_t delay_bins[SX_AUDIT_DELAY_BINS];
	sx_audit_sample sample; /* x delay (min), y bias (mmHg) */
} sx_audit_transport;

typedef struct sx_audit_band {
	uint64_t count, rejected, with_bias;
	double bias_sum;
} sx_audit_band;

/* One of the largest biases, for the list of specimens to look at. */
typedef struct sx_audit_top {
	char specimen_id[64], location[64], reasons[160];
	int64_t audit_ms;
	double bias, delay_min;
	sx_disposition disposition;
} sx_audit_top;

typedef struct sx_audit {
	uint64_t rows, not_screened, by_disposition[3], without_time, with_reasons;
	int64_t first_ms, last_ms; /* audit times seen; NO_TIME when none */
	int utc_offset_min;        /* weeks begin on Monday 00:00 at this offset */

	sx_audit_unit units[SX_AUDIT_MAX_UNITS + 1]; /* the last: "(other units)" */
	size_t unit_count;
	int64_t week_first; /* week number (Monday days / 7) of weeks[0] */
	size_t week_span;   /* weeks held in every unit's array */

	sx_audit_code codes[SX_AUDIT_MAX_CODES + 1];
	size_t code_count;
	uint64_t reasons_total;

	char rulesets[SX_AUDIT_MAX_RULESETS][96];
	uint64_t ruleset_rows[SX_AUDIT_MAX_RULESETS];
	size_t ruleset_count;
	uint64_t ruleset_other_rows;

	uint64_t bias_bins[SX_AUDIT_BIAS_BINS];
	uint64_t bias_below, bias_above, bias_count, bias_missing;
	double bias_sum;

	sx_audit_transport transports[SX_AUDIT_TRANSPORTS];
	sx_audit_band wbc_bands[SX_AUDIT_WBC_BANDS];
	sx_audit_sample wbc_sample; /* x leukocytes (10^9/L), y bias (mmHg) */

	sx_audit_top top[SX_AUDIT_TOP]; /* sorted by |bias|, largest first */
	size_t top_count;
} sx_audit;

sx_status sx_audit_new(int utc_offset_min, sx_audit **out);
void sx_audit_free(sx_audit *a);
/* Count one row. SX_ENOMEM, or SX_ELIMIT when the rows span more weeks than
 * SX_AUDIT_MAX_WEEKS (the row is then counted everywhere but in the weeks). */
sx_status sx_audit_add(sx_audit *a, const sx_verdict_row *row);
/* Count a specimen whose input could not be read (file audits). */
void sx_audit_add_unscreened(sx_audit *a);

/* Names and helpers the writers share. */
const char *sx_audit_transport_name(int transport); /* "hand" ... "(not given)" */
const char *sx_audit_wbc_band_name(int band);       /* "below 4" ... */
/* The value at quantile q (0..1) of the delay bins of a transport, in
 * minutes (the bin's middle); NaN when empty. */
double sx_audit_delay_quantile(const sx_audit_transport *t, double q);
/* Weeks of a unit, verdicts and rejections, for week index i < week_span. */
uint32_t sx_audit_week_count(const sx_audit_unit *u, size_t i);
uint32_t sx_audit_week_rejected(const sx_audit_unit *u, size_t i);
/* Days since 1970-01-01 of the Monday that begins week index i. */
int64_t sx_audit_week_monday(const sx_audit *a, size_t i);

/* What the page says about the run besides the numbers. */
typedef struct sx_audit_meta {
	const char *title;      /* the page's heading; NULL: "pO2 screening audit" */
	const char *source;     /* "decision log FILE" or "N feed files" */
	int64_t from_ms, to_ms; /* the period asked for; NO_TIME when open */
	const sx_row_filter *filter;
	const char *version; /* syrinx's version */
} sx_audit_meta;

/* The HTML page: one self-contained file (no scripts, fonts or links out),
 * written with libxml2's text writer. SX_ENOMEM or SX_EIO (the writer
 * failed); out may then hold part of the page. */
sx_status sx_audit_html(const sx_audit *a, const sx_audit_meta *meta, sx_strbuf *out);

/* The exports, one row at a time (RFC 4180 CSV; JSON: one array). */
void sx_audit_csv_header(sx_strbuf *out);
void sx_audit_csv_row(sx_strbuf *out, const sx_verdict_row *row);
void sx_audit_json_begin(sx_strbuf *out);
/* first: whether this is the first row of the array */
void sx_audit_json_row(sx_strbuf *out, const sx_verdict_row *row, bool first);
void sx_audit_json_end(sx_strbuf *out);

#endif
