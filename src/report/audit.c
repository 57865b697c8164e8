/* SPDX-License-Identifier: MIT */
/*
 * audit.c - the audit's aggregate: counts, histograms and bounded samples
 * over verdict rows, so that memory stays flat however many rows pass.
 *
 * Units are locations cut at the first '/' (ICU/BED03 counts for ICU), as
 * sx_row_filter's location filter understands them. Weeks begin on Monday at
 * 00:00 at the audit's UTC offset. The scatter charts draw bottom-k samples
 * keyed on each input's SHA-256, so the points drawn do not depend on the
 * order of the rows.
 */
#include "report/audit.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "core/sxtime.h"

static const char *const transport_names[SX_AUDIT_TRANSPORTS] = {
        "hand", "pneumatic-tube", "courier", "other", "(not given)",
};

/* Lower edges of the leukocyte bands, 10^9/L: below 4, 4-11 (a usual
 * reference interval, common practice), 11-30, 30-100, 100-300, 300 and more. */
static const double wbc_edges[SX_AUDIT_WBC_BANDS] = {0, 4, 11, 30, 100, 300};
static const char *const wbc_names[SX_AUDIT_WBC_BANDS] = {
        "below 4", "4 to 11", "11 to 30", "30 to 100", "100 to 300", "300 or more",
};

const char *sx_audit_transport_name(int t)
{
	return t >= 0 && t < SX_AUDIT_TRANSPORTS ? transport_names[t] : "?";
}

const char *sx_audit_wbc_band_name(int band)
{
	return band >= 0 && band < SX_AUDIT_WBC_BANDS ? wbc_names[band] : "?";
}

sx_status sx_audit_new(int utc_offset_min, sx_audit **out)
{
	sx_audit *a = sx_calloc(1, sizeof *a);
	*out = NULL;
	if (!a)
		return SX_ENOMEM;
	a->first_ms = a->last_ms = SX_ROW_NO_TIME;
	a->utc_offset_min = utc_offset_min;
	*out = a;
	return SX_OK;
}

void sx_audit_free(sx_audit *a)
{
	if (!a)
		return;
	for (size_t i = 0; i <= SX_AUDIT_MAX_UNITS; i++)
		sx_free(a->units[i].weeks);
	sx_free(a);
}

void sx_audit_add_unscreened(sx_audit *a)
{
	a->not_screened++;
}

/* ---- bottom-k sample: a max-heap on key of the smallest keys ------------ */

static void sift_down(sx_audit_point *h, size_t n, size_t i)
{
	for (;;) {
		size_t l = 2 * i + 1, r = l + 1, big = i;
		sx_audit_point t;
		if (l < n && h[l].key > h[big].key)
			big = l;
		if (r < n && h[r].key > h[big].key)
			big = r;
		if (big == i)
			return;
		t = h[i];
		h[i] = h[big];
		h[big] = t;
		i = big;
	}
}

static void sample_add(sx_audit_sample *s, double x, double y, uint64_t key, int tag)
{
	s->seen++;
	if (s->count < SX_AUDIT_SAMPLE) {
		size_t i = s->count++;
		s->points[i] = (sx_audit_point){x, y, key, tag};
		while (i > 0 && s->points[(i - 1) / 2].key < s->points[i].key) {
			sx_audit_point t = s->points[i];
			s->points[i] = s->points[(i - 1) / 2];
			s->points[(i - 1) / 2] = t;
			i = (i - 1) / 2;
		}
		return;
	}
	if (key >= s->points[0].key)
		return;
	s->points[0] = (sx_audit_point){x, y, key, tag};
	sift_down(s->points, s->count, 0);
}

/* The sampling key: the fingerprint's first 16 hex digits, mixed with a
 * salt so that the two scatter charts draw independent samples. */
static uint64_t row_key(const sx_verdict_row *r, uint64_t salt)
{
	uint64_t k = 0;
	const char *h = r->input_sha256 ? r->input_sha256 : "";
	for (int i = 0; i < 16 && h[i]; i++) {
		char c = h[i];
		int v = c >= '0' && c <= '9' ? c - '0' : c >= 'a' && c <= 'f' ? c - 'a' + 10 : 0;
		k = k << 4 | (uint64_t)v;
	}
	k ^= salt;
	/* a final mix (splitmix64's, common practice) so the salt spreads */
	k = (k ^ (k >> 30)) * 0xBF58476D1CE4E5B9ULL;
	k = (k ^ (k >> 27)) * 0x94D049BB133111EBULL;
	return k ^ (k >> 31);
}

/* ---- units and weeks --------------------------------------------------- */

static sx_audit_unit *unit_of(sx_audit *a, const char *location)
{
	char name[64];
	sx_location_unit(location, name, sizeof name);
	for (size_t i = 0; i < a->unit_count; i++)
		if (strcmp(a->units[i].name, name) == 0)
			return &a->units[i];
	if (a->unit_count < SX_AUDIT_MAX_UNITS) {
		sx_audit_unit *u = &a->units[a->unit_count++];
		snprintf(u->name, sizeof u->name, "%s", name);
		return u;
	}
	snprintf(a->units[SX_AUDIT_MAX_UNITS].name, sizeof a->units[0].name, "(other units)");
	return &a->units[SX_AUDIT_MAX_UNITS];
}

static int64_t floor_div(int64_t a, int64_t b)
{
	int64_t q = a / b;
	return (a % b != 0 && (a < 0) != (b < 0)) ? q - 1 : q;
}

/* Week number of a time: Mondays counted from 1969-12-29 (a Monday). */
static int64_t week_of(const sx_audit *a, int64_t utc_ms)
{
	int64_t local_days = floor_div(utc_ms + (int64_t)a->utc_offset_min * 60000, 86400000);
	return floor_div(local_days + 3, 7);
}

int64_t sx_audit_week_monday(const sx_audit *a, size_t i)
{
	return (a->week_first + (int64_t)i) * 7 - 3;
}

uint32_t sx_audit_week_count(const sx_audit_unit *u, size_t i)
{
	return u->weeks ? u->weeks[2 * i] : 0;
}

uint32_t sx_audit_week_rejected(const sx_audit_unit *u, size_t i)
{
	return u->weeks ? u->weeks[2 * i + 1] : 0;
}

/* Make week w part of every unit's array; false when out of memory or past
 * the bound (*status says which). */
static bool cover_week(sx_audit *a, int64_t w, sx_status *status)
{
	int64_t lo, hi;
	size_t span, shift;
	if (a->week_span && w >= a->week_first && w < a->week_first + (int64_t)a->week_span)
		return true;
	lo = a->week_span ? (w < a->week_first ? w : a->week_first) : w;
	hi = a->week_span ? (w >= a->week_first + (int64_t)a->week_span
	                             ? w + 1
	                             : a->week_first + (int64_t)a->week_span)
	                  : w + 1;
	if (hi - lo > SX_AUDIT_MAX_WEEKS) {
		*status = SX_ELIMIT;
		return false;
	}
	span = (size_t)(hi - lo);
	shift = a->week_span ? (size_t)(a->week_first - lo) : 0;
	for (size_t i = 0; i <= SX_AUDIT_MAX_UNITS; i++) {
		sx_audit_unit *u = &a->units[i];
		uint32_t *grown = sx_calloc(2 * span, sizeof *grown);
		if (!grown) {
			*status = SX_ENOMEM;
			return false;
		}
		if (u->weeks)
			memcpy(grown + 2 * shift, u->weeks, 2 * a->week_span * sizeof *grown);
		sx_free(u->weeks);
		u->weeks = grown;
	}
	a->week_first = lo;
	a->week_span = span;
	return true;
}

/* ---- reason codes ------------------------------------------------------ */

static sx_audit_code *code_of(sx_audit *a, const char *code, size_t len)
{
	for (size_t i = 0; i < a->code_count; i++)
		if (strlen(a->codes[i].code) == len && memcmp(a->codes[i].code, code, len) == 0)
			return &a->codes[i];
	if (a->code_count < SX_AUDIT_MAX_CODES && len < sizeof a->codes[0].code) {
		sx_audit_code *c = &a->codes[a->code_count++];
		snprintf(c->code, sizeof c->code, "%.*s", (int)len, code);
		c->severity = -1;
		return c;
	}
	snprintf(a->codes[SX_AUDIT_MAX_CODES].code, sizeof a->codes[0].code, "(other reasons)");
	a->codes[SX_AUDIT_MAX_CODES].severity = -1;
	return &a->codes[SX_AUDIT_MAX_CODES];
}

/* The severity of a code in the reasons' JSON, as our own writer puts it:
 * {"code":"X","severity":"Y",...}. -1 when not found. */
static int severity_in(const char *json, const char *code, size_t len)
{
	const char *p = json;
	while (p && (p = strstr(p, "{\"code\":\"")) != NULL) {
		p += 9;
		if (strncmp(p, code, len) == 0 && strncmp(p + len, "\",\"severity\":\"", 14) == 0) {
			const char *s = p + len + 14;
			if (strncmp(s, "reject\"", 7) == 0)
				return SX_REASON_REJECT;
			if (strncmp(s, "comment\"", 8) == 0)
				return SX_REASON_COMMENT;
			if (strncmp(s, "info\"", 5) == 0)
				return SX_REASON_INFO;
			return -1;
		}
	}
	return -1;
}

static void count_codes(sx_audit *a, const sx_verdict_row *r)
{
	const char *p = r->reason_codes ? r->reason_codes : "";
	bool any = false;
	while (*p) {
		size_t len = strcspn(p, " ");
		if (len) {
			sx_audit_code *c = code_of(a, p, len);
			int sev = severity_in(r->reasons_json, p, len);
			c->count++;
			if (sev > c->severity)
				c->severity = sev;
			a->reasons_total++;
			any = true;
		}
		p += len;
		while (*p == ' ')
			p++;
	}
	if (any)
		a->with_reasons++;
}

static void count_ruleset(sx_audit *a, const char *ruleset)
{
	const char *name = ruleset ? ruleset : "(none)";
	for (size_t i = 0; i < a->ruleset_count; i++)
		if (strcmp(a->rulesets[i], name) == 0) {
			a->ruleset_rows[i]++;
			return;
		}
	if (a->ruleset_count < SX_AUDIT_MAX_RULESETS) {
		snprintf(a->rulesets[a->ruleset_count], sizeof a->rulesets[0], "%s", name);
		a->ruleset_rows[a->ruleset_count++] = 1;
		return;
	}
	a->ruleset_other_rows++;
}

/* ---- the largest biases ------------------------------------------------ */

static void consider_top(sx_audit *a, const sx_verdict_row *r)
{
	double mag = fabs(r->bias_mmhg);
	size_t at = a->top_count;
	sx_audit_top t;
	if (isnan(r->bias_mmhg))
		return;
	if (a->top_count == SX_AUDIT_TOP && mag <= fabs(a->top[SX_AUDIT_TOP - 1].bias))
		return;
	memset(&t, 0, sizeof t);
	snprintf(t.specimen_id, sizeof t.specimen_id, "%s", r->specimen_id ? r->specimen_id : "");
	snprintf(t.location, sizeof t.location, "%s", r->location ? r->location : "");
	snprintf(t.reasons, sizeof t.reasons, "%s", r->reason_codes ? r->reason_codes : "");
	t.audit_ms = r->audit_ms;
	t.bias = r->bias_mmhg;
	t.delay_min = r->delay_min;
	t.disposition = r->disposition;
	if (a->top_count < SX_AUDIT_TOP)
		a->top_count++;
	else
		at = SX_AUDIT_TOP - 1;
	/* insert keeping the order; ties keep the earlier row first */
	while (at > 0 && fabs(a->top[at - 1].bias) < mag) {
		a->top[at] = a->top[at - 1];
		at--;
	}
	a->top[at] = t;
}

/* ---- one row ----------------------------------------------------------- */

static int transport_index(const char *t)
{
	if (!t)
		return SX_AUDIT_TRANSPORTS - 1;
	for (int i = 0; i < SX_AUDIT_TRANSPORTS - 1; i++)
		if (strcmp(t, transport_names[i]) == 0)
			return i;
	return 3; /* other */
}

static int wbc_band(double wbc)
{
	int b = 0;
	for (int i = 1; i < SX_AUDIT_WBC_BANDS; i++)
		if (wbc >= wbc_edges[i])
			b = i;
	return b;
}

sx_status sx_audit_add(sx_audit *a, const sx_verdict_row *r)
{
	sx_audit_unit *u = unit_of(a, r->location);
	int d = (int)r->disposition, reject = r->disposition == SX_REJECT;
	sx_audit_transport *t = &a->transports[transport_index(r->transport)];
	bool has_bias = !isnan(r->bias_mmhg);
	sx_status status = SX_OK;

	if (d < 0 || d > SX_REJECT)
		return SX_EINVAL;
	a->rows++;
	a->by_disposition[d]++;
	u->by_disposition[d]++;
	count_codes(a, r);
	count_ruleset(a, r->ruleset);

	if (r->audit_ms == SX_ROW_NO_TIME) {
		a->without_time++;
	} else {
		int64_t w = week_of(a, r->audit_ms);
		if (a->first_ms == SX_ROW_NO_TIME || r->audit_ms < a->first_ms)
			a->first_ms = r->audit_ms;
		if (a->last_ms == SX_ROW_NO_TIME || r->audit_ms > a->last_ms)
			a->last_ms = r->audit_ms;
		if (cover_week(a, w, &status)) {
			size_t i = (size_t)(w - a->week_first);
			u->weeks[2 * i]++;
			u->weeks[2 * i + 1] += (uint32_t)reject;
		}
	}

	if (has_bias) {
		double x = r->bias_mmhg;
		a->bias_count++;
		a->bias_sum += x;
		if (x < -SX_AUDIT_BIAS_LIMIT)
			a->bias_below++;
		else if (x >= SX_AUDIT_BIAS_LIMIT)
			a->bias_above++;
		else {
			int bin = (int)floor((x + SX_AUDIT_BIAS_LIMIT) / SX_AUDIT_BIAS_STEP + 1e-9);
			if (bin >= SX_AUDIT_BIAS_BINS)
				bin = SX_AUDIT_BIAS_BINS - 1;
			a->bias_bins[bin]++;
		}
	} else {
		a->bias_missing++;
	}

	t->count++;
	t->rejected += (uint64_t)reject;
	if (has_bias) {
		t->with_bias++;
		t->bias_sum += r->bias_mmhg;
	}
	if (!isnan(r->delay_min) && r->delay_min >= 0) {
		int bin = r->delay_min >= SX_AUDIT_DELAY_BINS - 1 ? SX_AUDIT_DELAY_BINS - 1
		                                                  : (int)r->delay_min;
		t->delay_bins[bin]++;
		t->with_delay++;
		if (has_bias)
			sample_add(&t->sample, r->delay_min, r->bias_mmhg, row_key(r, 0x5d), d);
	}

	if (!isnan(r->wbc) && r->wbc >= 0) {
		sx_audit_band *b = &a->wbc_bands[wbc_band(r->wbc)];
		b->count++;
		b->rejected += (uint64_t)reject;
		if (has_bias) {
			b->with_bias++;
			b->bias_sum += r->bias_mmhg;
			if (r->wbc > 0)
				sample_add(&a->wbc_sample, r->wbc, r->bias_mmhg, row_key(r, 0xb1),
				           d);
		}
	}
	consider_top(a, r);
	return status;
}

double sx_audit_delay_quantile(const sx_audit_transport *t, double q)
{
	uint64_t want, seen = 0;
	if (t->with_delay == 0)
		return NAN;
	want = (uint64_t)ceil(q * (double)t->with_delay);
	if (want < 1)
		want = 1;
	for (int i = 0; i < SX_AUDIT_DELAY_BINS; i++) {
		seen += t->delay_bins[i];
		if (seen >= want)
			return i == SX_AUDIT_DELAY_BINS - 1 ? (double)i : i + 0.5;
	}
	return (double)(SX_AUDIT_DELAY_BINS - 1);
}
