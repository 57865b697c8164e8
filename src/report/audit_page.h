/* SPDX-License-Identifier: MIT */
/*
 * audit_page.h - what the audit page's writers share: a thin wrapper around
 * libxml2's xmlTextWriter that remembers the first failure, the page's
 * colour scheme, and the chart functions (audit_svg.c) that audit_html.c
 * calls. Internal to src/report.
 *
 * Every element and attribute goes through the writer, which escapes text
 * and attribute values; no markup is ever pasted together as a string.
 */
#ifndef SX_AUDIT_PAGE_H
#define SX_AUDIT_PAGE_H

#include <libxml/xmlwriter.h>
#include <stdbool.h>

#include "report/audit.h"

/*
 * The colour scheme, "Estuary": dark inks on a warm paper, one hue per
 * meaning. Every colour that carries meaning has a contrast of at least
 * 4.5:1 on the paper (WCAG 2.1 success criteria 1.4.3 and 1.4.11 ask 4.5:1
 * for text and 3:1 for graphics); tests/unit/test_audit.c checks it.
 * docs/audit.md shows the table.
 */
#define SX_PAPER    "#fbfaf6" /* page background */
#define SX_INK      "#1c2430" /* text, axes */
#define SX_INK_SOFT "#4a5260" /* secondary text, tick labels */
#define SX_GRID     "#e2ded3" /* grid lines (decoration only) */
#define SX_PANEL    "#f1eee6" /* panel and table-head background */
#define SX_SLATE    "#2c5a86" /* main series; pneumatic tube */
#define SX_RUST     "#a33b20" /* reject; rejection rates */
#define SX_OCHRE    "#855600" /* comment */
#define SX_PINE     "#276447" /* accept; hand */
#define SX_PLUM     "#68478f" /* courier */
#define SX_STONE    "#5f636b" /* other / not given */

typedef struct sx_audit_colour {
	const char *name, *hex, *use;
	bool meaning; /* carries meaning: must reach 4.5:1 on the paper */
} sx_audit_colour;

extern const sx_audit_colour sx_audit_palette[];
extern const size_t sx_audit_palette_count;

typedef struct sx_page {
	xmlTextWriterPtr w;
	bool failed;
} sx_page;

void sx_page_open(sx_page *p, const char *name);
void sx_page_attr(sx_page *p, const char *name, const char *value);
void sx_page_attrf(sx_page *p, const char *name, const char *fmt, ...)
        __attribute__((format(printf, 3, 4)));
void sx_page_text(sx_page *p, const char *text);
void sx_page_textf(sx_page *p, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* Close with an end tag (every HTML element that is not void). */
void sx_page_close(sx_page *p);
/* Close as <x/> when empty (SVG shapes, void HTML elements such as meta). */
void sx_page_close_empty(sx_page *p);
/* <name>text</name> */
void sx_page_element(sx_page *p, const char *name, const char *text);

/* The charts: each writes one <svg role="img"> with its <title> and <desc>
 * (ids from the prefix). */
void sx_audit_svg_reasons(sx_page *p, const sx_audit *a, const char *id);
void sx_audit_svg_bias(sx_page *p, const sx_audit *a, const char *id);
void sx_audit_svg_delay(sx_page *p, const sx_audit *a, const char *id);
void sx_audit_svg_weeks(sx_page *p, const sx_audit *a, const char *id);
void sx_audit_svg_wbc(sx_page *p, const sx_audit *a, const char *id);

/* Shared by the charts and the tables. */
/* The reason codes in chart order (count, largest first; ties by name). */
size_t sx_audit_sorted_codes(const sx_audit *a, const sx_audit_code **out, size_t max);
/* The units in chart order (verdicts, most first; ties by name). */
size_t sx_audit_sorted_units(const sx_audit *a, const sx_audit_unit **out, size_t max);
/* The bias histogram as shown: bars of a step from lo, count n (<= 60). */
typedef struct sx_audit_bars {
	double lo, step;
	size_t n;
	uint64_t counts[64];
	uint64_t below, above; /* outside the bars (also beyond the bins) */
} sx_audit_bars;
void sx_audit_bias_bars(const sx_audit *a, sx_audit_bars *bars);
/* The bias at quantile q (0..1): the lower edge of the finest bin that holds
 * it (the limits for estimates beyond the bins). Needs bias_count > 0. */
double sx_audit_bias_quantile(const sx_audit *a, double q);
/* The median bias from the finest bins; NaN when none. */
double sx_audit_bias_median(const sx_audit *a);
/* Overall rejections and verdicts of week i over all units. */
void sx_audit_week_total(const sx_audit *a, size_t i, uint64_t *count, uint64_t *rejected);
/* "Mon 2 Mar 2026" for a day number. */
void sx_audit_day_text(int64_t days, char *buf, size_t size);

#endif
