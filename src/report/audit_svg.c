/* SPDX-License-Identifier: MIT */
/*
 * audit_svg.c - the audit page's charts as inline SVG, written through
 * libxml2's text writer: reasons by count (bars and their cumulative share),
 * the distribution of bias estimates, delay against bias by transport,
 * rejection rates per week by unit (small multiples), and leukocyte count
 * against bias.
 *
 * Each chart is one <svg role="img"> whose <title> and <desc> say what it
 * shows and its main finding; the tables under it (audit_html.c) hold every
 * number. Colour is never the only cue: series differ by marker shape or
 * fill pattern too, and every legend entry is written out.
 */
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/sxtime.h"
#include "report/audit_page.h"

const sx_audit_colour sx_audit_palette[] = {
        {"paper", SX_PAPER, "page background", false},
        {"ink", SX_INK, "text, axes, cumulative line", true},
        {"soft ink", SX_INK_SOFT, "secondary text, tick labels", true},
        {"grid", SX_GRID, "grid lines (decoration)", false},
        {"panel", SX_PANEL, "panels, table heads", false},
        {"slate", SX_SLATE, "main series; pneumatic tube", true},
        {"rust", SX_RUST, "reject; rejection rates", true},
        {"ochre", SX_OCHRE, "comment", true},
        {"pine", SX_PINE, "accept; hand", true},
        {"plum", SX_PLUM, "courier; median marker", true},
        {"stone", SX_STONE, "other, not given", true},
};
const size_t sx_audit_palette_count = sizeof sx_audit_palette / sizeof sx_audit_palette[0];

#define FONT  "system-ui, 'DejaVu Sans', 'Liberation Sans', Arial, sans-serif"
#define MINUS "\xe2\x88\x92" /* U+2212 MINUS SIGN */

/* ---- the writer wrapper ------------------------------------------------ */

void sx_page_open(sx_page *p, const char *name)
{
	if (!p->failed && xmlTextWriterStartElement(p->w, BAD_CAST name) < 0)
		p->failed = true;
}

void sx_page_attr(sx_page *p, const char *name, const char *value)
{
	if (!p->failed && xmlTextWriterWriteAttribute(p->w, BAD_CAST name, BAD_CAST value) < 0)
		p->failed = true;
}

void sx_page_attrf(sx_page *p, const char *name, const char *fmt, ...)
{
	char buf[1024];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(buf, sizeof buf, fmt, ap);
	va_end(ap);
	sx_page_attr(p, name, buf);
}

void sx_page_text(sx_page *p, const char *text)
{
	if (!p->failed && xmlTextWriterWriteString(p->w, BAD_CAST text) < 0)
		p->failed = true;
}

void sx_page_textf(sx_page *p, const char *fmt, ...)
{
	char buf[1024];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(buf, sizeof buf, fmt, ap);
	va_end(ap);
	sx_page_text(p, buf);
}

void sx_page_close(sx_page *p)
{
	if (!p->failed && xmlTextWriterFullEndElement(p->w) < 0)
		p->failed = true;
}

void sx_page_close_empty(sx_page *p)
{
	if (!p->failed && xmlTextWriterEndElement(p->w) < 0)
		p->failed = true;
}

void sx_page_element(sx_page *p, const char *name, const char *text)
{
	sx_page_open(p, name);
	sx_page_text(p, text);
	sx_page_close(p);
}

/* ---- shared numbers ---------------------------------------------------- */

static int cmp_codes(const void *x, const void *y)
{
	const sx_audit_code *a = *(const sx_audit_code *const *)x;
	const sx_audit_code *b = *(const sx_audit_code *const *)y;
	if (a->count != b->count)
		return a->count > b->count ? -1 : 1;
	return strcmp(a->code, b->code);
}

size_t sx_audit_sorted_codes(const sx_audit *a, const sx_audit_code **out, size_t max)
{
	size_t n = 0;
	for (size_t i = 0; i < a->code_count && n < max; i++)
		out[n++] = &a->codes[i];
	if (a->codes[SX_AUDIT_MAX_CODES].count && n < max)
		out[n++] = &a->codes[SX_AUDIT_MAX_CODES];
	qsort(out, n, sizeof *out, cmp_codes);
	return n;
}

static uint64_t unit_total(const sx_audit_unit *u)
{
	return u->by_disposition[0] + u->by_disposition[1] + u->by_disposition[2];
}

static int cmp_units(const void *x, const void *y)
{
	const sx_audit_unit *a = *(const sx_audit_unit *const *)x;
	const sx_audit_unit *b = *(const sx_audit_unit *const *)y;
	if (unit_total(a) != unit_total(b))
		return unit_total(a) > unit_total(b) ? -1 : 1;
	return strcmp(a->name, b->name);
}

size_t sx_audit_sorted_units(const sx_audit *a, const sx_audit_unit **out, size_t max)
{
	size_t n = 0;
	for (size_t i = 0; i < a->unit_count && n < max; i++)
		out[n++] = &a->units[i];
	if (unit_total(&a->units[SX_AUDIT_MAX_UNITS]) && n < max)
		out[n++] = &a->units[SX_AUDIT_MAX_UNITS];
	qsort(out, n, sizeof *out, cmp_units);
	return n;
}

void sx_audit_week_total(const sx_audit *a, size_t i, uint64_t *count, uint64_t *rejected)
{
	*count = *rejected = 0;
	for (size_t u = 0; u <= SX_AUDIT_MAX_UNITS; u++) {
		*count += sx_audit_week_count(&a->units[u], i);
		*rejected += sx_audit_week_rejected(&a->units[u], i);
	}
}

void sx_audit_day_text(int64_t days, char *buf, size_t size)
{
	static const char *const months[] = {"Jan", "Feb", "Mar", "Apr", "May", "Jun",
	                                     "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};
	int64_t y;
	unsigned m, d;
	sx_civil_from_days(days, &y, &m, &d);
	snprintf(buf, size, "%u %s %lld", d, months[(m - 1) % 12], (long long)y);
}

static double bin_low(int i)
{
	return -SX_AUDIT_BIAS_LIMIT + i * SX_AUDIT_BIAS_STEP;
}

double sx_audit_bias_median(const sx_audit *a)
{
	uint64_t in = a->bias_count, want, seen = a->bias_below;
	if (in == 0)
		return NAN;
	want = (in + 1) / 2;
	if (seen >= want)
		return -SX_AUDIT_BIAS_LIMIT;
	for (int i = 0; i < SX_AUDIT_BIAS_BINS; i++) {
		seen += a->bias_bins[i];
		if (seen >= want)
			return bin_low(i) + SX_AUDIT_BIAS_STEP / 2;
	}
	return SX_AUDIT_BIAS_LIMIT;
}

/* The bias at quantile q, to the finest bin; the ends of the bins outside. */
double sx_audit_bias_quantile(const sx_audit *a, double q)
{
	uint64_t want = (uint64_t)ceil(q * (double)a->bias_count), seen = a->bias_below;
	if (want < 1)
		want = 1;
	if (seen >= want)
		return -SX_AUDIT_BIAS_LIMIT;
	for (int i = 0; i < SX_AUDIT_BIAS_BINS; i++) {
		seen += a->bias_bins[i];
		if (seen >= want)
			return bin_low(i);
	}
	return SX_AUDIT_BIAS_LIMIT;
}

void sx_audit_bias_bars(const sx_audit *a, sx_audit_bars *b)
{
	static const double steps[] = {0.5, 1, 2, 5, 10, 20, 50, 100};
	double lo, hi;
	memset(b, 0, sizeof *b);
	b->step = 1;
	if (a->bias_count == 0)
		return;
	/* show the middle 96 % and zero; the rest is counted at the sides (the
	 * tails of a bias distribution are long: a few very high leukocyte counts
	 * would otherwise squeeze every other bar into one) */
	lo = fmin(sx_audit_bias_quantile(a, 0.02), 0.0);
	hi = fmax(sx_audit_bias_quantile(a, 0.98) + SX_AUDIT_BIAS_STEP, 0.0);
	for (size_t s = 0; s < sizeof steps / sizeof steps[0]; s++) {
		b->step = steps[s];
		b->lo = floor(lo / b->step) * b->step;
		b->n = (size_t)ceil((hi - b->lo) / b->step - 1e-9);
		if (hi - (b->lo + b->step * (double)b->n) > -1e-9)
			b->n++; /* room right of zero, so that "no bias" shows */
		if (b->n <= 40)
			break;
	}
	if (b->n < 1)
		b->n = 1;
	if (b->n > 60)
		b->n = 60;
	b->below = a->bias_below;
	b->above = a->bias_above;
	for (int i = 0; i < SX_AUDIT_BIAS_BINS; i++) {
		double x = bin_low(i);
		long k;
		if (!a->bias_bins[i])
			continue;
		k = (long)floor((x - b->lo) / b->step + 1e-9);
		if (k < 0)
			b->below += a->bias_bins[i];
		else if ((size_t)k >= b->n)
			b->above += a->bias_bins[i];
		else
			b->counts[k] += a->bias_bins[i];
	}
}

/* ---- drawing helpers --------------------------------------------------- */

/* A step of 1, 2 or 5 times a power of ten giving about `target` ticks. */
static double nice_step(double range, int target)
{
	double raw = range / target, mag, f;
	if (!(raw > 0))
		return 1;
	mag = pow(10, floor(log10(raw)));
	f = raw / mag;
	return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * mag;
}

/* A number for a label, with a real minus sign. */
static void num(char *buf, size_t size, double v, int decimals)
{
	char tmp[48];
	if (fabs(v) < 0.5 * pow(10, -decimals))
		v = 0;
	snprintf(tmp, sizeof tmp, "%.*f", decimals, fabs(v));
	snprintf(buf, size, "%s%.30s", v < 0 ? MINUS : "", tmp);
}

static int decimals_for(double step)
{
	return step >= 1 ? 0 : step >= 0.1 ? 1 : 2;
}

static void svg_begin(sx_page *p, const char *id, int width, int height, const char *title,
                      const char *desc)
{
	sx_page_open(p, "svg");
	sx_page_attr(p, "xmlns", "http://www.w3.org/2000/svg");
	sx_page_attr(p, "id", id);
	sx_page_attrf(p, "viewBox", "0 0 %d %d", width, height);
	sx_page_attrf(p, "width", "%d", width);
	sx_page_attrf(p, "height", "%d", height);
	sx_page_attr(p, "role", "img");
	sx_page_attrf(p, "aria-labelledby", "%s-title %s-desc", id, id);
	sx_page_attr(p, "font-family", FONT);
	sx_page_attr(p, "font-size", "12");
	sx_page_attr(p, "fill", SX_INK);
	sx_page_open(p, "title");
	sx_page_attrf(p, "id", "%s-title", id);
	sx_page_text(p, title);
	sx_page_close(p);
	sx_page_open(p, "desc");
	sx_page_attrf(p, "id", "%s-desc", id);
	sx_page_text(p, desc);
	sx_page_close(p);
}

static void line(sx_page *p, double x1, double y1, double x2, double y2, const char *colour,
                 double width, const char *dash)
{
	sx_page_open(p, "line");
	sx_page_attrf(p, "x1", "%.1f", x1);
	sx_page_attrf(p, "y1", "%.1f", y1);
	sx_page_attrf(p, "x2", "%.1f", x2);
	sx_page_attrf(p, "y2", "%.1f", y2);
	sx_page_attr(p, "stroke", colour);
	sx_page_attrf(p, "stroke-width", "%.1f", width);
	if (dash)
		sx_page_attr(p, "stroke-dasharray", dash);
	sx_page_close_empty(p);
}

static void rect(sx_page *p, double x, double y, double w, double h, const char *fill,
                 const char *stroke)
{
	sx_page_open(p, "rect");
	sx_page_attrf(p, "x", "%.1f", x);
	sx_page_attrf(p, "y", "%.1f", y);
	sx_page_attrf(p, "width", "%.1f", w);
	sx_page_attrf(p, "height", "%.1f", h);
	sx_page_attr(p, "fill", fill);
	if (stroke) {
		sx_page_attr(p, "stroke", stroke);
		sx_page_attr(p, "stroke-width", "1");
	}
	sx_page_close_empty(p);
}

/* anchor: "start", "middle" or "end"; rotate: degrees about the point */
static void text_at(sx_page *p, double x, double y, const char *anchor, const char *colour,
                    int size, double rotate, const char *text)
{
	sx_page_open(p, "text");
	sx_page_attrf(p, "x", "%.1f", x);
	sx_page_attrf(p, "y", "%.1f", y);
	if (strcmp(anchor, "start") != 0)
		sx_page_attr(p, "text-anchor", anchor);
	if (colour)
		sx_page_attr(p, "fill", colour);
	if (size)
		sx_page_attrf(p, "font-size", "%d", size);
	if (rotate != 0)
		sx_page_attrf(p, "transform", "rotate(%.0f %.1f %.1f)", rotate, x, y);
	sx_page_text(p, text);
	sx_page_close(p);
}

enum shape { CIRCLE, TRIANGLE, SQUARE, DIAMOND, CROSS };

/* A marker of radius r: filled shapes half transparent so piles show. */
static void marker(sx_page *p, enum shape s, double x, double y, double r, const char *colour)
{
	switch (s) {
	case CIRCLE:
		sx_page_open(p, "circle");
		sx_page_attrf(p, "cx", "%.1f", x);
		sx_page_attrf(p, "cy", "%.1f", y);
		sx_page_attrf(p, "r", "%.1f", r);
		break;
	case SQUARE:
		sx_page_open(p, "rect");
		sx_page_attrf(p, "x", "%.1f", x - r * 0.85);
		sx_page_attrf(p, "y", "%.1f", y - r * 0.85);
		sx_page_attrf(p, "width", "%.1f", r * 1.7);
		sx_page_attrf(p, "height", "%.1f", r * 1.7);
		break;
	case TRIANGLE:
		sx_page_open(p, "path");
		sx_page_attrf(p, "d", "M%.1f %.1fL%.1f %.1fL%.1f %.1fZ", x, y - r * 1.15,
		              x + r * 1.05, y + r * 0.75, x - r * 1.05, y + r * 0.75);
		break;
	case DIAMOND:
		sx_page_open(p, "path");
		sx_page_attrf(p, "d", "M%.1f %.1fL%.1f %.1fL%.1f %.1fL%.1f %.1fZ", x, y - r * 1.2,
		              x + r * 1.2, y, x, y + r * 1.2, x - r * 1.2, y);
		break;
	case CROSS:
		sx_page_open(p, "path");
		sx_page_attrf(p, "d", "M%.1f %.1fL%.1f %.1fM%.1f %.1fL%.1f %.1f", x - r, y - r,
		              x + r, y + r, x - r, y + r, x + r, y - r);
		sx_page_attr(p, "fill", "none");
		sx_page_attr(p, "stroke", colour);
		sx_page_attr(p, "stroke-width", "1.6");
		sx_page_close_empty(p);
		return;
	}
	sx_page_attr(p, "fill", colour);
	sx_page_attr(p, "fill-opacity", "0.45");
	sx_page_attr(p, "stroke", colour);
	sx_page_attr(p, "stroke-width", "1.2");
	sx_page_close_empty(p);
}

/* Horizontal grid lines and labels of a value axis on the left (or right). */
static void y_axis(sx_page *p, double x0, double x1, double top, double bottom, double lo,
                   double hi, double step, bool right, const char *suffix)
{
	char label[48], full[64];
	int dec = decimals_for(step);
	for (double v = ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-6; v += step) {
		double y = bottom - (v - lo) / (hi - lo) * (bottom - top);
		if (!right)
			line(p, x0, y, x1, y, fabs(v) < step * 1e-6 ? SX_INK_SOFT : SX_GRID, 1,
			     NULL);
		num(label, sizeof label, v, dec);
		snprintf(full, sizeof full, "%s%s", label, suffix ? suffix : "");
		text_at(p, right ? x1 + 6 : x0 - 6, y + 4, right ? "start" : "end", SX_INK_SOFT, 11,
		        0, full);
	}
}

static void x_ticks(sx_page *p, double x0, double x1, double bottom, double lo, double hi,
                    double step)
{
	char label[48];
	int dec = decimals_for(step);
	for (double v = ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-6; v += step) {
		double x = x0 + (v - lo) / (hi - lo) * (x1 - x0);
		line(p, x, bottom, x, bottom + 4, SX_INK, 1, NULL);
		num(label, sizeof label, v, dec);
		text_at(p, x, bottom + 17, "middle", SX_INK_SOFT, 11, 0, label);
	}
}

static void axis_title(sx_page *p, double x, double y, double rotate, const char *text)
{
	text_at(p, x, y, "middle", SX_INK, 12, rotate, text);
}

static void empty_note(sx_page *p, int width, int height, const char *text)
{
	text_at(p, width / 2.0, height / 2.0, "middle", SX_INK_SOFT, 14, 0, text);
}

/* Fill patterns so that severity shows without colour. */
static void patterns(sx_page *p, const char *id)
{
	sx_page_open(p, "defs");
	sx_page_open(p, "pattern");
	sx_page_attrf(p, "id", "%s-hatch", id);
	sx_page_attr(p, "width", "6");
	sx_page_attr(p, "height", "6");
	sx_page_attr(p, "patternUnits", "userSpaceOnUse");
	sx_page_attr(p, "patternTransform", "rotate(45)");
	rect(p, 0, 0, 6, 6, SX_RUST, NULL);
	line(p, 0, 0, 0, 6, SX_PAPER, 2.2, NULL);
	sx_page_close(p);
	sx_page_open(p, "pattern");
	sx_page_attrf(p, "id", "%s-dots", id);
	sx_page_attr(p, "width", "5");
	sx_page_attr(p, "height", "5");
	sx_page_attr(p, "patternUnits", "userSpaceOnUse");
	rect(p, 0, 0, 5, 5, SX_OCHRE, NULL);
	sx_page_open(p, "circle");
	sx_page_attr(p, "cx", "2.5");
	sx_page_attr(p, "cy", "2.5");
	sx_page_attr(p, "r", "1");
	sx_page_attr(p, "fill", SX_PAPER);
	sx_page_close_empty(p);
	sx_page_close(p);
	sx_page_close(p);
}

/* ---- reasons by count -------------------------------------------------- */

#define PARETO_BARS 12

void sx_audit_svg_reasons(sx_page *p, const sx_audit *a, const char *id)
{
	const sx_audit_code *codes[SX_AUDIT_MAX_CODES + 1];
	size_t n = sx_audit_sorted_codes(a, codes, SX_AUDIT_MAX_CODES + 1), bars;
	const int W = 720, H = 370, L = 60, R = 56, T = 48, B = 120;
	double pw = W - L - R, ph = H - T - B, ymax, step, band, cum = 0;
	uint64_t rest = 0, counts[PARETO_BARS];
	char desc[512], label[64], fill[64], points[PARETO_BARS * 24] = "";
	size_t plen = 0;

	if (n && a->reasons_total)
		snprintf(desc, sizeof desc,
		         "Bars: how often each reason was given, the most frequent first; line: "
		         "their cumulative share of all %llu reasons, on the right axis. The most "
		         "frequent is %s, %llu times (%.0f %%). The table below gives every value.",
		         (unsigned long long)a->reasons_total, codes[0]->code,
		         (unsigned long long)codes[0]->count,
		         100.0 * (double)codes[0]->count / (double)a->reasons_total);
	else
		snprintf(desc, sizeof desc, "No reasons were given in this period.");
	svg_begin(p, id, W, H, "Reasons by count, with their cumulative share", desc);
	if (!n) {
		empty_note(p, W, H, "No reasons in this period");
		sx_page_close(p);
		return;
	}
	patterns(p, id);
	bars = n > PARETO_BARS ? PARETO_BARS : n;
	for (size_t i = 0; i < bars; i++)
		counts[i] = codes[i]->count;
	if (n > PARETO_BARS) {
		for (size_t i = PARETO_BARS - 1; i < n; i++)
			rest += codes[i]->count;
		counts[PARETO_BARS - 1] = rest;
	}
	ymax = 0;
	for (size_t i = 0; i < bars; i++)
		ymax = fmax(ymax, (double)counts[i]);
	step = nice_step(ymax, 5);
	if (step < 1)
		step = 1;
	ymax = ceil(ymax * 1.08 / step) * step;
	y_axis(p, L, L + pw, T, T + ph, 0, ymax, step, false, NULL);
	for (int k = 0; k <= 5; k++) {
		double y = T + ph - k * ph / 5;
		snprintf(label, sizeof label, "%d %%", k * 20);
		text_at(p, L + pw + 6, y + 4, "start", SX_INK_SOFT, 11, 0, label);
	}
	band = pw / (double)bars;
	for (size_t i = 0; i < bars; i++) {
		const sx_audit_code *c = codes[i];
		bool merged = n > PARETO_BARS && i == PARETO_BARS - 1;
		double h = (double)counts[i] / ymax * ph, x = L + band * (double)i + band * 0.19;
		double cx = L + band * ((double)i + 0.5), cy;
		int sev = merged ? -1 : c->severity;
		if (sev == SX_REASON_REJECT)
			snprintf(fill, sizeof fill, "url(#%s-hatch)", id);
		else if (sev == SX_REASON_COMMENT)
			snprintf(fill, sizeof fill, "url(#%s-dots)", id);
		else
			snprintf(fill, sizeof fill, "%s",
			         sev == SX_REASON_INFO ? SX_SLATE : SX_STONE);
		rect(p, x, T + ph - h, band * 0.62, h, fill,
		     sev == SX_REASON_REJECT    ? SX_RUST
		     : sev == SX_REASON_COMMENT ? SX_OCHRE
		     : sev == SX_REASON_INFO    ? SX_SLATE
		                                : SX_STONE);
		snprintf(label, sizeof label, "%llu", (unsigned long long)counts[i]);
		text_at(p, cx, T + ph - h - 5, "middle", SX_INK, 11, 0, label);
		text_at(p, cx + 4, T + ph + 14, "end", SX_INK, 11, -35,
		        merged ? "(all others)" : c->code);
		cum += (double)counts[i];
		cy = T + ph - cum / (double)a->reasons_total * ph;
		plen += (size_t)snprintf(points + plen, sizeof points - plen, "%s%.1f,%.1f",
		                         i ? " " : "", cx, cy);
	}
	line(p, L, T + ph, L + pw, T + ph, SX_INK, 1, NULL);
	sx_page_open(p, "polyline");
	sx_page_attr(p, "points", points);
	sx_page_attr(p, "fill", "none");
	sx_page_attr(p, "stroke", SX_INK);
	sx_page_attr(p, "stroke-width", "1.8");
	sx_page_close_empty(p);
	cum = 0;
	for (size_t i = 0; i < bars; i++) {
		cum += (double)counts[i];
		sx_page_open(p, "circle");
		sx_page_attrf(p, "cx", "%.1f", L + band * ((double)i + 0.5));
		sx_page_attrf(p, "cy", "%.1f", T + ph - cum / (double)a->reasons_total * ph);
		sx_page_attr(p, "r", "3.2");
		sx_page_attr(p, "fill", SX_PAPER);
		sx_page_attr(p, "stroke", SX_INK);
		sx_page_attr(p, "stroke-width", "1.5");
		sx_page_close_empty(p);
	}
	axis_title(p, 16, T + ph / 2, -90, "reasons given");
	axis_title(p, W - 8, T + ph / 2, 90, "cumulative share");
	/* legend */
	{
		static const char *const names[] = {"reject reason", "comment reason",
		                                    "information", "cumulative share"};
		double x = L;
		for (int k = 0; k < 4; k++) {
			if (k == 0)
				snprintf(fill, sizeof fill, "url(#%s-hatch)", id);
			else if (k == 1)
				snprintf(fill, sizeof fill, "url(#%s-dots)", id);
			if (k < 3) {
				rect(p, x, 14, 14, 14, k == 2 ? SX_SLATE : fill,
				     k == 0   ? SX_RUST
				     : k == 1 ? SX_OCHRE
				              : SX_SLATE);
			} else {
				line(p, x, 21, x + 16, 21, SX_INK, 1.8, NULL);
				sx_page_open(p, "circle");
				sx_page_attrf(p, "cx", "%.1f", x + 8);
				sx_page_attr(p, "cy", "21");
				sx_page_attr(p, "r", "3.2");
				sx_page_attr(p, "fill", SX_PAPER);
				sx_page_attr(p, "stroke", SX_INK);
				sx_page_attr(p, "stroke-width", "1.5");
				sx_page_close_empty(p);
			}
			text_at(p, x + 20, 26, "start", SX_INK, 12, 0, names[k]);
			x += 20 + 8.0 * (double)strlen(names[k]) + 18;
		}
	}
	sx_page_close(p);
}

/* ---- the distribution of bias estimates -------------------------------- */

/* A bar for the estimates beyond the shown range, set apart at one side. */
static void outlier_bar(sx_page *p, double x, double w, double base, double ph, double ymax,
                        uint64_t count, double edge, bool left)
{
	char label[64], value[32];
	double h = fmin((double)count, ymax) / ymax * ph;
	if (h < 2)
		h = 2;
	rect(p, x, base - h, w, h, SX_STONE, NULL);
	snprintf(label, sizeof label, "%llu", (unsigned long long)count);
	text_at(p, x + w / 2, base - h - 5, "middle", SX_INK, 11, 0, label);
	num(value, sizeof value, edge, 0);
	snprintf(label, sizeof label, "%s %s", left ? "below" : "above", value);
	text_at(p, x + w / 2, base + 30, "middle", SX_INK_SOFT, 10, 0, label);
}

void sx_audit_svg_bias(sx_page *p, const sx_audit *a, const char *id)
{
	const int W = 720, H = 330, T = 30, B = 66;
	int L = 60, R = 24;
	double pw, ph = H - T - B, ymax = 0, step, xs, hi, med;
	sx_audit_bars bars;
	char desc[600], label[64], value[32];

	sx_audit_bias_bars(a, &bars);
	med = sx_audit_bias_median(a);
	if (a->bias_count) {
		num(value, sizeof value, med, 1);
		snprintf(
		        desc, sizeof desc,
		        "Histogram of the estimated pO2 bias of %llu verdicts, in bars %.1f mmHg "
		        "wide from %.1f mmHg; the median is %s mmHg. Negative bias: the reading is "
		        "lower than the pO2 at collection. %llu estimates lie further left and "
		        "%llu "
		        "further right; grey bars at the sides count them. The tables below give "
		        "the percentiles and the counts in wider groups.",
		        (unsigned long long)a->bias_count, bars.step, bars.lo, value,
		        (unsigned long long)bars.below, (unsigned long long)bars.above);
	} else {
		snprintf(desc, sizeof desc, "No bias was estimated in this period.");
	}
	svg_begin(p, id, W, H, "Distribution of the estimated pO2 bias", desc);
	if (!a->bias_count) {
		empty_note(p, W, H, "No bias estimates in this period");
		sx_page_close(p);
		return;
	}
	if (bars.below)
		L += 56;
	if (bars.above)
		R += 56;
	pw = W - L - R;
	for (size_t i = 0; i < bars.n; i++)
		ymax = fmax(ymax, (double)bars.counts[i]);
	step = nice_step(ymax, 5);
	if (step < 1)
		step = 1;
	ymax = ceil(ymax * 1.05 / step) * step;
	if (ymax <= 0)
		ymax = 1;
	hi = bars.lo + bars.step * (double)bars.n;
	y_axis(p, L, L + pw, T, T + ph, 0, ymax, step, false, NULL);
	xs = pw / (hi - bars.lo);
	for (size_t i = 0; i < bars.n; i++) {
		double h = (double)bars.counts[i] / ymax * ph;
		if (bars.counts[i])
			rect(p, L + (double)i * bars.step * xs + 0.5, T + ph - h,
			     bars.step * xs - 1, h, SX_SLATE, NULL);
	}
	if (bars.below)
		outlier_bar(p, L - 48, 26, T + ph, ph, ymax, bars.below, bars.lo, true);
	if (bars.above)
		outlier_bar(p, L + pw + 22, 26, T + ph, ph, ymax, bars.above, hi, false);
	line(p, L, T + ph, L + pw, T + ph, SX_INK, 1, NULL);
	x_ticks(p, L, L + pw, T + ph, bars.lo, hi, nice_step(hi - bars.lo, 8));
	/* zero and the median, each with words */
	line(p, L + (0 - bars.lo) * xs, T - 4, L + (0 - bars.lo) * xs, T + ph, SX_INK, 1.2, "5 3");
	text_at(p, L + (0 - bars.lo) * xs + (hi > 0.15 * (hi - bars.lo) ? 4 : -4), T + 6,
	        hi > 0.15 * (hi - bars.lo) ? "start" : "end", SX_INK, 11, 0, "no bias");
	if (!isnan(med) && med >= bars.lo && med <= hi) {
		double mx = L + (med - bars.lo) * xs;
		num(value, sizeof value, med, 1);
		snprintf(label, sizeof label, "median %s", value);
		line(p, mx, T + 10, mx, T + ph, SX_PLUM, 2, NULL);
		text_at(p, mx - 4, T + 22, "end", SX_PLUM, 11, 0, label);
	}
	axis_title(p, L + pw / 2, H - 12, 0,
	           "estimated pO2 bias (mmHg): reading minus pO2 at collection");
	axis_title(p, 16, T + ph / 2, -90, "verdicts");
	sx_page_close(p);
}

/* ---- scatter charts ---------------------------------------------------- */

static int cmp_points(const void *x, const void *y)
{
	const sx_audit_point *a = x, *b = y;
	return a->key < b->key ? -1 : a->key > b->key ? 1 : 0;
}

/* The sample's points in key order (heap order depends on the rows' order). */
static size_t sorted_points(const sx_audit_sample *s, sx_audit_point *out)
{
	memcpy(out, s->points, s->count * sizeof *out);
	qsort(out, s->count, sizeof *out, cmp_points);
	return s->count;
}

/* The bias scale of the scatter charts: the histogram's range (the middle
 * 96 % and zero), narrowed to the points drawn. Marks beyond it are drawn on
 * its edge and counted in a note. */
static void bias_scale(const sx_audit *a, const sx_audit_sample *const *samples, size_t n,
                       double *lo, double *hi, double *step)
{
	sx_audit_bars bars;
	double ymin = 0, ymax = 0, blo, bhi;
	sx_audit_bias_bars(a, &bars);
	blo = bars.lo;
	bhi = bars.lo + bars.step * (double)bars.n;
	for (size_t k = 0; k < n; k++)
		for (size_t i = 0; i < samples[k]->count; i++) {
			ymin = fmin(ymin, fmax(samples[k]->points[i].y, blo));
			ymax = fmax(ymax, fmin(samples[k]->points[i].y, bhi));
		}
	*step = nice_step(fmax(ymax - ymin, 1), 6);
	*lo = floor(ymin / *step - 1e-9) * *step;
	*hi = ceil(ymax / *step + 1e-9) * *step;
	if (*hi - *lo < *step)
		*hi = *lo + *step;
}

static double clamp(double v, double lo, double hi, uint64_t *beyond)
{
	if (v < lo || v > hi) {
		(*beyond)++;
		return v < lo ? lo : hi;
	}
	return v;
}

static void beyond_note(sx_page *p, double x, double y, uint64_t beyond)
{
	char text[160];
	if (!beyond)
		return;
	snprintf(text, sizeof text,
	         "%llu mark%s beyond the bias scale %s drawn on its edge (see the table)",
	         (unsigned long long)beyond, beyond == 1 ? "" : "s", beyond == 1 ? "is" : "are");
	text_at(p, x, y, "start", SX_INK_SOFT, 11, 0, text);
}

static const struct {
	enum shape shape;
	const char *colour;
} transport_style[SX_AUDIT_TRANSPORTS] = {
        {CIRCLE, SX_PINE},   {TRIANGLE, SX_SLATE}, {SQUARE, SX_PLUM},
        {DIAMOND, SX_OCHRE}, {CROSS, SX_STONE},
};

static const struct {
	enum shape shape;
	const char *colour;
	const char *name;
} disposition_style[3] = {
        {CIRCLE, SX_PINE, "accept"},
        {SQUARE, SX_OCHRE, "comment"},
        {TRIANGLE, SX_RUST, "reject"},
};

static void legend_entry(sx_page *p, double *x, double y, enum shape s, const char *colour,
                         const char *text)
{
	marker(p, s, *x + 6, y - 4, 5, colour);
	text_at(p, *x + 16, y, "start", SX_INK, 12, 0, text);
	*x += 16 + 6.9 * (double)strlen(text) + 22;
}

void sx_audit_svg_delay(sx_page *p, const sx_audit *a, const char *id)
{
	const int W = 720, H = 410, L = 60, R = 24, T = 74, B = 52;
	double pw = W - L - R, ph = H - T - B, xmax = 30, ymin, ymax, xstep, ystep;
	static sx_audit_point pts[SX_AUDIT_SAMPLE];
	const sx_audit_sample *samples[SX_AUDIT_TRANSPORTS];
	uint64_t shown = 0, with = 0, beyond = 0;
	char desc[600], label[96];
	double lx = L;

	for (int t = 0; t < SX_AUDIT_TRANSPORTS; t++) {
		const sx_audit_sample *s = &a->transports[t].sample;
		samples[t] = s;
		shown += s->count;
		with += s->seen;
		for (size_t i = 0; i < s->count; i++)
			xmax = fmax(xmax, fmin(s->points[i].x, 240));
	}
	snprintf(desc, sizeof desc,
	         "Each mark is one verdict: minutes from collection to analysis across, "
	         "estimated pO2 bias down the side, marked by how the specimen travelled "
	         "(circle hand, triangle pneumatic tube, square courier, diamond other, cross "
	         "not given). %llu of %llu verdicts with both values are drawn, chosen by their "
	         "fingerprints so the same rows always give the same marks. The table below "
	         "summarises each transport.",
	         (unsigned long long)shown, (unsigned long long)with);
	svg_begin(p, id, W, H, "Delay to analysis against estimated bias, by transport", desc);
	if (!shown) {
		empty_note(p, W, H, "No verdicts with both a delay and a bias estimate");
		sx_page_close(p);
		return;
	}
	xstep = nice_step(xmax, 8);
	xmax = ceil(xmax / xstep) * xstep;
	bias_scale(a, samples, SX_AUDIT_TRANSPORTS, &ymin, &ymax, &ystep);
	y_axis(p, L, L + pw, T, T + ph, ymin, ymax, ystep, false, NULL);
	line(p, L, T + ph, L + pw, T + ph, SX_INK, 1, NULL);
	x_ticks(p, L, L + pw, T + ph, 0, xmax, xstep);
	for (int t = 0; t < SX_AUDIT_TRANSPORTS; t++) {
		size_t n = sorted_points(&a->transports[t].sample, pts);
		sx_page_open(p, "g");
		sx_page_attrf(p, "aria-label", "%s", sx_audit_transport_name(t));
		for (size_t i = 0; i < n; i++) {
			double x = L + fmin(pts[i].x, xmax) / xmax * pw;
			double y =
			        T + ph -
			        (clamp(pts[i].y, ymin, ymax, &beyond) - ymin) / (ymax - ymin) * ph;
			marker(p, transport_style[t].shape, x, y, 3.6, transport_style[t].colour);
		}
		sx_page_close(p);
		if (a->transports[t].count) {
			snprintf(label, sizeof label, "%s (%zu)", sx_audit_transport_name(t), n);
			legend_entry(p, &lx, 26, transport_style[t].shape,
			             transport_style[t].colour, label);
		}
	}
	text_at(p, L, 48, "start", SX_INK_SOFT, 11, 0,
	        "in brackets: marks drawn; delays past the right edge are drawn at it");
	beyond_note(p, L, 62, beyond);
	axis_title(p, L + pw / 2, H - 12, 0, "minutes from collection to analysis");
	axis_title(p, 16, T + ph / 2, -90, "estimated pO2 bias (mmHg)");
	sx_page_close(p);
}

void sx_audit_svg_wbc(sx_page *p, const sx_audit *a, const char *id)
{
	const int W = 720, H = 380, L = 60, R = 24, T = 60, B = 52;
	static const double ticks[] = {0.3, 1, 3, 10, 30, 100, 300, 1000};
	double pw = W - L - R, ph = H - T - B, ymin, ymax, ystep, lo = 1, hi = 100;
	static sx_audit_point pts[SX_AUDIT_SAMPLE];
	const sx_audit_sample *s = &a->wbc_sample;
	uint64_t beyond = 0;
	size_t n;
	char desc[600], label[32];
	double lx = L;

	for (size_t i = 0; i < s->count; i++) {
		lo = fmin(lo, s->points[i].x);
		hi = fmax(hi, s->points[i].x);
	}
	snprintf(desc, sizeof desc,
	         "Each mark is one verdict: leukocyte count across (a logarithmic scale), "
	         "estimated pO2 bias down the side, marked by disposition (circle accept, square "
	         "comment, triangle reject). %zu of %llu verdicts with both values are drawn, "
	         "chosen by their fingerprints. Cells use oxygen while the specimen waits, so "
	         "very high counts tend to pull the reading down. The table below gives each "
	         "band of counts.",
	         s->count, (unsigned long long)s->seen);
	svg_begin(p, id, W, H, "Leukocyte count against estimated bias", desc);
	if (!s->count) {
		empty_note(p, W, H, "No verdicts with both a leukocyte count and a bias estimate");
		sx_page_close(p);
		return;
	}
	lo = pow(10, floor(log10(fmax(lo, 0.1)) * 2) / 2);
	hi = pow(10, ceil(log10(hi) * 2) / 2);
	bias_scale(a, &s, 1, &ymin, &ymax, &ystep);
	y_axis(p, L, L + pw, T, T + ph, ymin, ymax, ystep, false, NULL);
	line(p, L, T + ph, L + pw, T + ph, SX_INK, 1, NULL);
	for (size_t k = 0; k < sizeof ticks / sizeof ticks[0]; k++) {
		double x;
		if (ticks[k] < lo * 0.999 || ticks[k] > hi * 1.001)
			continue;
		x = L + (log10(ticks[k]) - log10(lo)) / (log10(hi) - log10(lo)) * pw;
		line(p, x, T + ph, x, T + ph + 4, SX_INK, 1, NULL);
		snprintf(label, sizeof label, ticks[k] < 1 ? "%.1f" : "%.0f", ticks[k]);
		text_at(p, x, T + ph + 17, "middle", SX_INK_SOFT, 11, 0, label);
	}
	n = sorted_points(s, pts);
	for (int d = 0; d < 3; d++) {
		size_t drawn = 0;
		sx_page_open(p, "g");
		sx_page_attr(p, "aria-label", disposition_style[d].name);
		for (size_t i = 0; i < n; i++) {
			double x, y;
			if (pts[i].tag != d)
				continue;
			x = L + (log10(pts[i].x) - log10(lo)) / (log10(hi) - log10(lo)) * pw;
			y = T + ph -
			    (clamp(pts[i].y, ymin, ymax, &beyond) - ymin) / (ymax - ymin) * ph;
			marker(p, disposition_style[d].shape, x, y, 3.6,
			       disposition_style[d].colour);
			drawn++;
		}
		sx_page_close(p);
		snprintf(label, sizeof label, "%s (%zu)", disposition_style[d].name, drawn);
		legend_entry(p, &lx, 26, disposition_style[d].shape, disposition_style[d].colour,
		             label);
	}
	beyond_note(p, L, 44, beyond);
	axis_title(p, L + pw / 2, H - 12, 0, "leukocytes (10^9/L, logarithmic scale)");
	axis_title(p, 16, T + ph / 2, -90, "estimated pO2 bias (mmHg)");
	sx_page_close(p);
}

/* ---- rejections per week, one small chart per unit --------------------- */

#define PANELS 12

static void week_counts(const sx_audit *a, const sx_audit_unit *u, size_t i, uint64_t *c,
                        uint64_t *r)
{
	if (u) {
		*c = sx_audit_week_count(u, i);
		*r = sx_audit_week_rejected(u, i);
	} else {
		sx_audit_week_total(a, i, c, r);
	}
}

static void week_panel(sx_page *p, const sx_audit *a, const sx_audit_unit *u, double x0, double y0,
                       double w, double h, double rmax, const char *name)
{
	const double L = 40, R = 10, T = 44, B = 22;
	double pw = w - L - R, ph = h - T - B;
	uint64_t total = 0, rejected = 0, c, r;
	char label[128], day[32], run[16384];
	size_t len = 0;

	for (size_t i = 0; i < a->week_span; i++) {
		week_counts(a, u, i, &c, &r);
		total += c;
		rejected += r;
	}
	sx_page_open(p, "g");
	sx_page_attrf(p, "transform", "translate(%.1f %.1f)", x0, y0);
	rect(p, 0, 0, w - 6, h - 6, SX_PANEL, NULL);
	text_at(p, 8, 16, "start", SX_INK, 12, 0, name);
	snprintf(label, sizeof label, "%.1f %% of %llu rejected",
	         total ? 100.0 * (double)rejected / (double)total : 0.0, (unsigned long long)total);
	text_at(p, 8, 29, "start", SX_INK_SOFT, 10, 0, label);
	for (int k = 0; k <= 2; k++) {
		double v = rmax * k / 2, y = T + ph - v / rmax * ph;
		line(p, L, y, L + pw, y, k ? SX_GRID : SX_INK_SOFT, 1, NULL);
		snprintf(label, sizeof label, "%.0f %%", v);
		text_at(p, L - 4, y + 3, "end", SX_INK_SOFT, 9, 0, label);
	}
	/* the rate line, one polyline per run of weeks with verdicts */
	for (size_t i = 0; i <= a->week_span; i++) {
		c = r = 0;
		if (i < a->week_span)
			week_counts(a, u, i, &c, &r);
		if (c && len + 32 < sizeof run) {
			double x =
			        L + (a->week_span > 1 ? (double)i / (double)(a->week_span - 1) * pw
			                              : pw / 2);
			double y = T + ph - fmin(100.0 * (double)r / (double)c, rmax) / rmax * ph;
			len += (size_t)snprintf(run + len, sizeof run - len, "%s%.1f,%.1f",
			                        len ? " " : "", x, y);
			continue;
		}
		if (len) {
			sx_page_open(p, "polyline");
			sx_page_attr(p, "points", run);
			sx_page_attr(p, "fill", "none");
			sx_page_attr(p, "stroke", SX_RUST);
			sx_page_attr(p, "stroke-width", "1.8");
			sx_page_close_empty(p);
			len = 0;
		}
	}
	/* a mark per week while the weeks are few enough to tell apart */
	for (size_t i = 0; a->week_span <= 26 && i < a->week_span; i++) {
		double x, y;
		week_counts(a, u, i, &c, &r);
		if (!c)
			continue;
		x = L + (a->week_span > 1 ? (double)i / (double)(a->week_span - 1) * pw : pw / 2);
		y = T + ph - fmin(100.0 * (double)r / (double)c, rmax) / rmax * ph;
		marker(p, CIRCLE, x, y, 2.6, SX_RUST);
	}
	sx_audit_day_text(sx_audit_week_monday(a, 0), day, sizeof day);
	day[strlen(day) - 5] = '\0'; /* drop the year */
	text_at(p, L, h - 10, "start", SX_INK_SOFT, 9, 0, day);
	if (a->week_span > 1) {
		sx_audit_day_text(sx_audit_week_monday(a, a->week_span - 1), day, sizeof day);
		day[strlen(day) - 5] = '\0';
		text_at(p, L + pw, h - 10, "end", SX_INK_SOFT, 9, 0, day);
	}
	sx_page_close(p);
}

void sx_audit_svg_weeks(sx_page *p, const sx_audit *a, const char *id)
{
	const sx_audit_unit *units[SX_AUDIT_MAX_UNITS + 1];
	size_t n = sx_audit_sorted_units(a, units, PANELS - 1), panels, rows;
	const int W = 720, cols = 3, ph = 142, top = 8;
	double pw = W / (double)cols, rmax = 0;
	char desc[700], day[32], name[96];
	int H;

	for (size_t i = 0; i < a->week_span; i++) {
		uint64_t c, r;
		sx_audit_week_total(a, i, &c, &r);
		if (c)
			rmax = fmax(rmax, 100.0 * (double)r / (double)c);
		for (size_t k = 0; k < n; k++) {
			c = sx_audit_week_count(units[k], i);
			r = sx_audit_week_rejected(units[k], i);
			if (c)
				rmax = fmax(rmax, 100.0 * (double)r / (double)c);
		}
	}
	rmax = fmax(10, ceil(rmax / 10) * 10);
	panels = a->week_span ? n + 1 : 0;
	rows = (panels + cols - 1) / cols;
	H = top + (int)rows * ph + 4;
	if (H < 120)
		H = 120;
	if (a->week_span) {
		sx_audit_day_text(sx_audit_week_monday(a, 0), day, sizeof day);
		snprintf(desc, sizeof desc,
		         "Small charts, one per unit and one for all units together, with the same "
		         "scale: the share of verdicts that were reject, week by week, for %zu "
		         "weeks from Monday %s (weeks begin on Monday). A gap is a week without "
		         "verdicts. The table below gives every week.",
		         a->week_span, day);
	} else {
		snprintf(desc, sizeof desc,
		         "No verdict had a time, so there are no weeks to show.");
	}
	svg_begin(p, id, W, H, "Rejections per week, by unit", desc);
	if (!panels) {
		empty_note(p, W, H, "No dated verdicts in this period");
		sx_page_close(p);
		return;
	}
	for (size_t k = 0; k < panels; k++) {
		double x = (double)(k % cols) * pw, y = top + (double)(k / cols) * ph;
		if (k == 0) {
			week_panel(p, a, NULL, x, y, pw, ph, rmax, "All units");
		} else {
			snprintf(name, sizeof name, "%s", units[k - 1]->name);
			week_panel(p, a, units[k - 1], x, y, pw, ph, rmax, name);
		}
	}
	sx_page_close(p);
}
