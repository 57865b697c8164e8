/* SPDX-License-Identifier: MIT */
/*
 * audit_html.c - the audit page: one self-contained HTML file (no scripts,
 * no fonts or style sheets from elsewhere, no links out) that reads well on
 * screen and on paper, written with libxml2's xmlTextWriter so that every
 * text is escaped by the writer.
 *
 * The page is also well-formed XML (XHTML syntax of HTML), so xmllint can
 * check it; elements that HTML does not let close themselves are always
 * written with an end tag. The style sheet avoids the characters < > and &,
 * which the writer would escape inside <style>.
 *
 * Order: what was audited (period, source, filters, rulesets), the cautions,
 * the totals, then each chart with the table that holds its numbers, the
 * units' dispositions, the largest biases, and how to read the page.
 */
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "report/audit_page.h"
#include "report/report.h"

static const char style[] =
        ":root{color-scheme:light}"
        "body{margin:0;background:" SX_PAPER ";color:" SX_INK ";"
        "font:15px/1.5 system-ui,'DejaVu Sans','Liberation Sans',Arial,sans-serif}"
        "main{max-width:62rem;margin:0 auto;padding:1.5rem 1.5rem 3rem}"
        ".masthead{border-bottom:4px solid " SX_SLATE ";padding-bottom:.8rem;margin-bottom:1rem}"
        ".kicker{color:" SX_SLATE ";font-weight:700;letter-spacing:.08em;text-transform:uppercase;"
        "font-size:.78rem;margin:0}"
        "h1{font-size:1.75rem;line-height:1.2;margin:.2rem 0 .3rem}"
        ".lede{margin:0;color:" SX_INK_SOFT "}"
        "h2{font-size:1.3rem;margin:2.2rem 0 .4rem;padding-top:1rem;border-top:1px solid " SX_GRID
        "}"
        "h3{font-size:1rem;margin:1.2rem 0 .3rem}"
        "dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:.15rem "
        "1.2rem;margin:.8rem 0}"
        "dl.facts dt{font-weight:600}dl.facts dd{margin:0}"
        ".caution{border-left:6px solid " SX_OCHRE ";background:" SX_PANEL ";padding:.7rem 1rem;"
        "margin:1rem 0}"
        ".caution strong{color:" SX_OCHRE "}"
        ".tiles{display:grid;grid-template-columns:repeat(auto-fit,minmax(9.5rem,1fr));gap:.7rem;"
        "margin:1rem 0;padding:0;list-style:none}"
        ".tile{background:" SX_PANEL ";padding:.55rem .8rem;border-top:5px solid " SX_STONE "}"
        ".tile .n{display:block;font-size:1.65rem;font-weight:700;line-height:1.15}"
        ".tile .w{display:block;font-size:.85rem;color:" SX_INK_SOFT "}"
        ".tile.accept{border-top-color:" SX_PINE "}.tile.comment{border-top-color:" SX_OCHRE "}"
        ".tile.reject{border-top-color:" SX_RUST "}.tile.all{border-top-color:" SX_SLATE "}"
        "nav ol{columns:2;margin:.3rem 0;padding-left:1.3rem}"
        "a{color:" SX_SLATE "}"
        "figure{margin:1rem 0;break-inside:avoid}"
        "figure svg{width:100%;height:auto;max-width:720px;display:block;background:" SX_PAPER "}"
        "figcaption{color:" SX_INK_SOFT ";font-size:.9rem;max-width:46rem}"
        ".table-wrap{overflow-x:auto}"
        "table{border-collapse:collapse;font-size:.86rem;margin:.6rem 0 1rem}"
        "caption{text-align:left;font-weight:600;padding-bottom:.3rem}"
        "th,td{padding:.22rem .6rem;border-bottom:1px solid " SX_GRID ";text-align:left;"
        "vertical-align:top}"
        "thead th{background:" SX_PANEL ";border-bottom:2px solid " SX_INK_SOFT "}"
        ".num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}"
        ".nowrap{white-space:nowrap}"
        "td small{color:" SX_INK_SOFT "}"
        ".is-reject{color:" SX_RUST ";font-weight:600}.is-comment{color:" SX_OCHRE "}"
        "code{font-size:.92em;white-space:nowrap}"
        "footer{margin-top:2.5rem;border-top:4px solid " SX_SLATE ";padding-top:.6rem;"
        "color:" SX_INK_SOFT ";font-size:.85rem}"
        "@media print{"
        "body{background:#ffffff;font-size:10pt}"
        "main{max-width:none;padding:0}"
        "nav{display:none}"
        "h2{break-after:avoid;page-break-after:avoid}"
        "figure,table,.caution,.tiles{break-inside:avoid;page-break-inside:avoid}"
        "figure svg{max-width:17cm}"
        ".table-wrap{overflow:visible}"
        "a{color:inherit;text-decoration:none}"
        "}"
        "@page{size:A4;margin:14mm 12mm}";

/* ---- small pieces ------------------------------------------------------ */

static double share(uint64_t part, uint64_t whole)
{
	return whole ? 100.0 * (double)part / (double)whole : 0.0;
}

/* A local time as 2026-03-02 07:02 at the audit's offset. */
static void local_time(const sx_audit *a, int64_t utc_ms, char *buf, size_t size)
{
	int64_t ms = utc_ms + (int64_t)a->utc_offset_min * 60000, days = ms / 86400000, y;
	int64_t in_day = ms % 86400000;
	unsigned m, d;
	if (in_day < 0) {
		in_day += 86400000;
		days--;
	}
	sx_civil_from_days(days, &y, &m, &d);
	snprintf(buf, size, "%04lld-%02u-%02u %02d:%02d", (long long)y, m, d,
	         (int)(in_day / 3600000), (int)(in_day / 60000 % 60));
}

static void offset_text(int minutes, char *buf, size_t size)
{
	int a = minutes < 0 ? -minutes : minutes;
	snprintf(buf, size, "UTC%c%02d:%02d", minutes < 0 ? '-' : '+', a / 60, a % 60);
}

static void mmhg(char *buf, size_t size, double v)
{
	if (isnan(v))
		snprintf(buf, size, "n/a");
	else
		snprintf(buf, size, "%s%.1f", v < 0 ? "\xe2\x88\x92" : "",
		         fabs(v) < 0.05 ? 0 : fabs(v));
}

static void th(sx_page *p, const char *text, bool numeric)
{
	sx_page_open(p, "th");
	sx_page_attr(p, "scope", "col");
	if (numeric)
		sx_page_attr(p, "class", "num");
	sx_page_text(p, text);
	sx_page_close(p);
}

static void td(sx_page *p, const char *text, const char *cls)
{
	sx_page_open(p, "td");
	if (cls)
		sx_page_attr(p, "class", cls);
	sx_page_text(p, text);
	sx_page_close(p);
}

static void tdf(sx_page *p, const char *cls, const char *fmt, ...)
        __attribute__((format(printf, 3, 4)));
static void tdf(sx_page *p, const char *cls, const char *fmt, ...)
{
	char buf[512];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(buf, sizeof buf, fmt, ap);
	va_end(ap);
	td(p, buf, cls);
}

/* <div class="table-wrap"><table><caption>..</caption><thead><tr> */
static void table_begin(sx_page *p, const char *caption, const char *const *heads,
                        const bool *numeric, size_t n)
{
	sx_page_open(p, "div");
	sx_page_attr(p, "class", "table-wrap");
	sx_page_open(p, "table");
	sx_page_element(p, "caption", caption);
	sx_page_open(p, "thead");
	sx_page_open(p, "tr");
	for (size_t i = 0; i < n; i++)
		th(p, heads[i], numeric[i]);
	sx_page_close(p);
	sx_page_close(p);
	sx_page_open(p, "tbody");
}

static void table_end(sx_page *p)
{
	sx_page_close(p); /* tbody */
	sx_page_close(p); /* table */
	sx_page_close(p); /* div */
}

static void empty_row(sx_page *p, size_t columns, const char *text)
{
	sx_page_open(p, "tr");
	sx_page_open(p, "td");
	sx_page_attrf(p, "colspan", "%zu", columns);
	sx_page_text(p, text);
	sx_page_close(p);
	sx_page_close(p);
}

static void section(sx_page *p, const char *id, const char *heading)
{
	sx_page_open(p, "section");
	sx_page_attr(p, "id", id);
	sx_page_attrf(p, "aria-labelledby", "%s-h", id);
	sx_page_open(p, "h2");
	sx_page_attrf(p, "id", "%s-h", id);
	sx_page_text(p, heading);
	sx_page_close(p);
}

static void paragraph(sx_page *p, const char *text)
{
	sx_page_element(p, "p", text);
}

static void figure_begin(sx_page *p)
{
	sx_page_open(p, "figure");
}

static void figure_end(sx_page *p, const char *caption)
{
	sx_page_element(p, "figcaption", caption);
	sx_page_close(p);
}

/* ---- the head of the page ---------------------------------------------- */

static void filters_text(const sx_row_filter *f, char *buf, size_t size)
{
	size_t len = 0;
	buf[0] = '\0';
#define ADD(label, value)                                                                          \
	if ((value) && len < size)                                                                 \
		len += (size_t)snprintf(buf + len, size - len, "%s%s %s", len ? "; " : "", label,  \
		                        (value));
	if (f) {
		ADD("location", f->location);
		ADD("collector", f->collector);
		ADD("transport", f->transport);
		ADD("disposition", f->disposition >= 0
		                           ? sx_disposition_name((sx_disposition)f->disposition)
		                           : NULL);
		ADD("reason", f->reason_code);
	}
#undef ADD
	if (!buf[0])
		snprintf(buf, size, "none: every verdict of the period");
}

static void fact(sx_page *p, const char *term, const char *value)
{
	sx_page_element(p, "dt", term);
	sx_page_element(p, "dd", value);
}

static void masthead(sx_page *p, const sx_audit *a, const sx_audit_meta *m)
{
	char buf[1024], t1[40], t2[40], off[16];
	size_t len;

	sx_page_open(p, "header");
	sx_page_attr(p, "class", "masthead");
	sx_page_open(p, "p");
	sx_page_attr(p, "class", "kicker");
	sx_page_text(p, "syrinx audit report");
	sx_page_close(p);
	sx_page_open(p, "h1");
	sx_page_text(p, m->title ? m->title : "pO2 screening audit");
	sx_page_close(p);
	sx_page_open(p, "p");
	sx_page_attr(p, "class", "lede");
	sx_page_text(p, "What the preanalytical pO2 screen accepted, commented on and rejected, "
	                "and why: for the laboratory's quality review.");
	sx_page_close(p);
	sx_page_close(p);

	offset_text(a->utc_offset_min, off, sizeof off);
	sx_page_open(p, "dl");
	sx_page_attr(p, "class", "facts");
	if (m->from_ms != SX_ROW_NO_TIME || m->to_ms != SX_ROW_NO_TIME) {
		len = 0;
		if (m->from_ms != SX_ROW_NO_TIME) {
			local_time(a, m->from_ms, t1, sizeof t1);
			len += (size_t)snprintf(buf + len, sizeof buf - len, "from %s (included)",
			                        t1);
		}
		if (m->to_ms != SX_ROW_NO_TIME) {
			local_time(a, m->to_ms, t2, sizeof t2);
			snprintf(buf + len, sizeof buf - len, "%sto %s (not included)",
			         len ? " " : "", t2);
		}
	} else {
		snprintf(buf, sizeof buf, "every verdict, whatever its time");
	}
	fact(p, "Period asked for", buf);
	if (a->first_ms != SX_ROW_NO_TIME) {
		local_time(a, a->first_ms, t1, sizeof t1);
		local_time(a, a->last_ms, t2, sizeof t2);
		snprintf(buf, sizeof buf, "%s to %s (times at %s, by collection time)", t1, t2,
		         off);
	} else {
		snprintf(buf, sizeof buf, "no verdict with a time");
	}
	fact(p, "Verdicts found", buf);
	fact(p, "Read from", m->source ? m->source : "?");
	filters_text(m->filter, buf, sizeof buf);
	fact(p, "Filters", buf);
	len = 0;
	buf[0] = '\0';
	for (size_t i = 0; i < a->ruleset_count; i++)
		len += (size_t)snprintf(buf + len, sizeof buf - len, "%s%s (%llu verdicts)",
		                        i ? "; " : "", a->rulesets[i],
		                        (unsigned long long)a->ruleset_rows[i]);
	if (a->ruleset_other_rows)
		snprintf(buf + len, sizeof buf - len, "; others (%llu verdicts)",
		         (unsigned long long)a->ruleset_other_rows);
	fact(p, a->ruleset_count > 1 ? "Rulesets" : "Ruleset", buf[0] ? buf : "none");
	snprintf(buf, sizeof buf, "Monday 00:00 at %s", off);
	fact(p, "Weeks begin", buf);
	sx_page_close(p);

	sx_page_open(p, "div");
	sx_page_attr(p, "class", "caution");
	sx_page_attr(p, "role", "note");
	sx_page_open(p, "p");
	sx_page_element(p, "strong", "Caution. ");
	sx_page_text(p, SX_CAUTION);
	sx_page_close(p);
	sx_page_close(p);
}

static void tile(sx_page *p, const char *cls, const char *number, const char *words)
{
	sx_page_open(p, "li");
	sx_page_attrf(p, "class", "tile %s", cls);
	sx_page_open(p, "span");
	sx_page_attr(p, "class", "n");
	sx_page_text(p, number);
	sx_page_close(p);
	sx_page_open(p, "span");
	sx_page_attr(p, "class", "w");
	sx_page_text(p, words);
	sx_page_close(p);
	sx_page_close(p);
}

static void totals(sx_page *p, const sx_audit *a)
{
	static const char *const cls[3] = {"accept", "comment", "reject"};
	static const char *const words[3] = {"accepted", "accepted with a comment",
	                                     "rejected: new specimen asked for"};
	char n[32], w[96];

	sx_page_open(p, "ul");
	sx_page_attr(p, "class", "tiles");
	sx_page_attr(p, "aria-label", "totals");
	snprintf(n, sizeof n, "%llu", (unsigned long long)a->rows);
	tile(p, "all", n, "verdicts audited");
	for (int d = 0; d < 3; d++) {
		snprintf(n, sizeof n, "%llu", (unsigned long long)a->by_disposition[d]);
		snprintf(w, sizeof w, "%s (%.1f %%)", words[d],
		         share(a->by_disposition[d], a->rows));
		tile(p, cls[d], n, w);
	}
	mmhg(n, sizeof n, sx_audit_bias_median(a));
	tile(p, "all", n, "median estimated bias, mmHg");
	if (a->not_screened) {
		snprintf(n, sizeof n, "%llu", (unsigned long long)a->not_screened);
		tile(p, "other", n, "specimens not screened: their input had errors");
	}
	sx_page_close(p);
}

static void contents(sx_page *p)
{
	static const char *const items[][2] = {
	        {"reasons", "Why specimens were flagged"},
	        {"bias", "How large the estimated errors were"},
	        {"transport", "Delay and transport"},
	        {"weeks", "Rejections week by week"},
	        {"leukocytes", "Leukocyte counts"},
	        {"units", "Dispositions by unit"},
	        {"largest", "The largest estimated biases"},
	        {"reading", "How to read this report"},
	};
	sx_page_open(p, "nav");
	sx_page_attr(p, "aria-label", "contents");
	sx_page_element(p, "h3", "Contents");
	sx_page_open(p, "ol");
	for (size_t i = 0; i < sizeof items / sizeof items[0]; i++) {
		sx_page_open(p, "li");
		sx_page_open(p, "a");
		sx_page_attrf(p, "href", "#%s", items[i][0]);
		sx_page_text(p, items[i][1]);
		sx_page_close(p);
		sx_page_close(p);
	}
	sx_page_close(p);
	sx_page_close(p);
}

/* ---- the sections ------------------------------------------------------ */

static void reasons_section(sx_page *p, const sx_audit *a)
{
	static const char *const heads[] = {"reason code",      "kind",
	                                    "times given",      "share of reasons",
	                                    "cumulative share", "share of verdicts"};
	static const bool numeric[] = {false, false, true, true, true, true};
	const sx_audit_code *codes[SX_AUDIT_MAX_CODES + 1];
	size_t n = sx_audit_sorted_codes(a, codes, SX_AUDIT_MAX_CODES + 1);
	uint64_t cum = 0;
	char text[256];

	section(p, "reasons", "Why specimens were flagged");
	snprintf(text, sizeof text,
	         "%llu of %llu verdicts (%.1f %%) carried at least one reason, %llu reasons in "
	         "all. A verdict can carry several reasons, so the bars add up to more than the "
	         "flagged verdicts.",
	         (unsigned long long)a->with_reasons, (unsigned long long)a->rows,
	         share(a->with_reasons, a->rows), (unsigned long long)a->reasons_total);
	paragraph(p, text);
	figure_begin(p);
	sx_audit_svg_reasons(p, a, "chart-reasons");
	figure_end(p, "Reasons by count, most frequent first, and their cumulative share "
	              "(a Pareto chart). Hatched bars are reasons to reject, dotted bars reasons "
	              "for a comment, plain bars information. Past twelve bars the rest share "
	              "one bar.");
	table_begin(p, "Reasons given", heads, numeric, 6);
	for (size_t i = 0; i < n; i++) {
		const char *kind =
		        codes[i]->severity < 0
		                ? "?"
		                : sx_reason_severity_name((sx_reason_severity)codes[i]->severity);
		cum += codes[i]->count;
		sx_page_open(p, "tr");
		sx_page_open(p, "td");
		sx_page_element(p, "code", codes[i]->code);
		sx_page_close(p);
		td(p, kind,
		   codes[i]->severity == SX_REASON_REJECT    ? "is-reject"
		   : codes[i]->severity == SX_REASON_COMMENT ? "is-comment"
		                                             : NULL);
		tdf(p, "num", "%llu", (unsigned long long)codes[i]->count);
		tdf(p, "num", "%.1f %%", share(codes[i]->count, a->reasons_total));
		tdf(p, "num", "%.1f %%", share(cum, a->reasons_total));
		tdf(p, "num", "%.1f %%", share(codes[i]->count, a->rows));
		sx_page_close(p);
	}
	if (!n)
		empty_row(p, 6, "No reasons in this period.");
	table_end(p);
	sx_page_close(p);
}

static void bias_row(sx_page *p, const char *from, const char *to, uint64_t n, uint64_t all)
{
	sx_page_open(p, "tr");
	td(p, from, "num");
	td(p, to, "num");
	tdf(p, "num", "%llu", (unsigned long long)n);
	tdf(p, "num", "%.1f %%", share(n, all));
	sx_page_close(p);
}

static void bias_section(sx_page *p, const sx_audit *a)
{
	static const char *const heads[] = {"from (mmHg)", "to (mmHg)", "verdicts", "share"};
	static const bool numeric[] = {true, true, true, true};
	static const char *const pheads[] = {"5th", "25th", "50th (median)", "75th", "95th"};
	static const bool pnumeric[] = {true, true, true, true, true};
	static const double qs[] = {0.05, 0.25, 0.5, 0.75, 0.95};
	sx_audit_bars bars;
	char lo[32], hi[32], text[400], caption[160];
	size_t group;

	sx_audit_bias_bars(a, &bars);
	section(p, "bias", "How large the estimated errors were");
	snprintf(text, sizeof text,
	         "The bias is the pO2 the analyser reads minus the pO2 at collection, as the "
	         "model estimates it: negative when the specimen lost oxygen, positive when it "
	         "gained. %llu verdicts had an estimate; %llu had none (times or values missing).",
	         (unsigned long long)a->bias_count, (unsigned long long)a->bias_missing);
	paragraph(p, text);
	figure_begin(p);
	sx_audit_svg_bias(p, a, "chart-bias");
	figure_end(p, "Distribution of the estimated bias. The dashed line marks no bias, the "
	              "solid line the median. The middle 96 % of the estimates is drawn in bars; "
	              "grey bars at the sides count the rest.");
	table_begin(p, "Percentiles of the estimated bias (mmHg, to the 0.5 mmHg bin)", pheads,
	            pnumeric, 5);
	sx_page_open(p, "tr");
	for (size_t i = 0; i < 5; i++) {
		if (a->bias_count)
			mmhg(lo, sizeof lo, sx_audit_bias_quantile(a, qs[i]));
		else
			snprintf(lo, sizeof lo, "n/a");
		td(p, lo, "num");
	}
	sx_page_close(p);
	table_end(p);

	/* the bars in groups, so that the table stays short */
	group = (bars.n + 11) / 12;
	if (group < 1)
		group = 1;
	mmhg(lo, sizeof lo, bars.step * (double)group);
	snprintf(caption, sizeof caption, "Estimated bias in groups of %s mmHg", lo);
	table_begin(p, caption, heads, numeric, 4);
	if (bars.below) {
		mmhg(hi, sizeof hi, bars.lo);
		bias_row(p, "below", hi, bars.below, a->bias_count);
	}
	for (size_t i = 0; i < bars.n; i += group) {
		uint64_t n = 0;
		size_t end = i + group < bars.n ? i + group : bars.n;
		for (size_t k = i; k < end; k++)
			n += bars.counts[k];
		if (!n)
			continue;
		mmhg(lo, sizeof lo, bars.lo + bars.step * (double)i);
		mmhg(hi, sizeof hi, bars.lo + bars.step * (double)end);
		bias_row(p, lo, hi, n, a->bias_count);
	}
	if (bars.above) {
		mmhg(lo, sizeof lo, bars.lo + bars.step * (double)bars.n);
		bias_row(p, lo, "above", bars.above, a->bias_count);
	}
	if (!a->bias_count)
		empty_row(p, 4, "No bias estimates in this period.");
	table_end(p);
	sx_page_close(p);
}

static void transport_section(sx_page *p, const sx_audit *a)
{
	static const char *const heads[] = {"transport",
	                                    "verdicts",
	                                    "rejected",
	                                    "delay, median (min)",
	                                    "delay, 90th percentile (min)",
	                                    "mean bias (mmHg)",
	                                    "marks drawn"};
	static const bool numeric[] = {false, true, true, true, true, true, true};
	char b[32];
	bool any = false;

	section(p, "transport", "Delay and transport");
	paragraph(p, "The longer a specimen waits before analysis, the more oxygen its cells "
	             "use; air in a pneumatic tube carrier can push the reading towards the room "
	             "air value. Each mark is one verdict.");
	figure_begin(p);
	sx_audit_svg_delay(p, a, "chart-delay");
	figure_end(p, "Delay from collection to analysis against the estimated bias, marked by "
	              "transport. For a large audit a fixed sample is drawn (at most 300 marks "
	              "per transport, chosen by each input's fingerprint); the table uses every "
	              "verdict.");
	table_begin(p, "Delay and bias by transport (delays from one-minute bins)", heads, numeric,
	            7);
	for (int t = 0; t < SX_AUDIT_TRANSPORTS; t++) {
		const sx_audit_transport *tr = &a->transports[t];
		double med = sx_audit_delay_quantile(tr, 0.5),
		       p90 = sx_audit_delay_quantile(tr, 0.9);
		if (!tr->count)
			continue;
		any = true;
		sx_page_open(p, "tr");
		td(p, sx_audit_transport_name(t), "nowrap");
		tdf(p, "num", "%llu", (unsigned long long)tr->count);
		tdf(p, "num", "%llu (%.1f %%)", (unsigned long long)tr->rejected,
		    share(tr->rejected, tr->count));
		if (isnan(med))
			td(p, "n/a", "num");
		else
			tdf(p, "num", med >= SX_AUDIT_DELAY_BINS - 1 ? "%.0f or more" : "%.1f",
			    med);
		if (isnan(p90))
			td(p, "n/a", "num");
		else
			tdf(p, "num", p90 >= SX_AUDIT_DELAY_BINS - 1 ? "%.0f or more" : "%.1f",
			    p90);
		mmhg(b, sizeof b, tr->with_bias ? tr->bias_sum / (double)tr->with_bias : NAN);
		td(p, b, "num");
		tdf(p, "num", "%zu", tr->sample.count);
		sx_page_close(p);
	}
	if (!any)
		empty_row(p, 7, "No verdicts in this period.");
	table_end(p);
	sx_page_close(p);
}

static void weeks_section(sx_page *p, const sx_audit *a)
{
	const sx_audit_unit *units[SX_AUDIT_MAX_UNITS + 1];
	size_t n = sx_audit_sorted_units(a, units, 11);
	const char *heads[13];
	bool numeric[13];
	char day[32];

	section(p, "weeks", "Rejections week by week");
	paragraph(p, "The share of verdicts that were reject, per week, for all units and for "
	             "the units with the most verdicts (a unit is the part of the location before "
	             "the first '/': ICU/BED03 counts for ICU). All charts share one scale.");
	figure_begin(p);
	sx_audit_svg_weeks(p, a, "chart-weeks");
	figure_end(p, "Rejection rate per week, one small chart per unit. Weeks begin on "
	              "Monday; the first and last weeks may be partial.");
	heads[0] = "week beginning";
	numeric[0] = false;
	heads[1] = "all units";
	numeric[1] = true;
	for (size_t k = 0; k < n; k++) {
		heads[k + 2] = units[k]->name;
		numeric[k + 2] = true;
	}
	table_begin(p, "Rejected of verdicts, per week and unit", heads, numeric, n + 2);
	for (size_t i = 0; i < a->week_span; i++) {
		uint64_t c, r;
		sx_page_open(p, "tr");
		sx_audit_day_text(sx_audit_week_monday(a, i), day, sizeof day);
		sx_page_open(p, "th");
		sx_page_attr(p, "scope", "row");
		sx_page_text(p, day);
		sx_page_close(p);
		for (size_t k = 0; k <= n; k++) {
			if (k == 0) {
				sx_audit_week_total(a, i, &c, &r);
			} else {
				c = sx_audit_week_count(units[k - 1], i);
				r = sx_audit_week_rejected(units[k - 1], i);
			}
			sx_page_open(p, "td");
			sx_page_attr(p, "class", "num");
			if (c) {
				sx_page_textf(p, "%.0f %%", share(r, c));
				sx_page_open(p, "br");
				sx_page_close_empty(p);
				sx_page_open(p, "small");
				sx_page_textf(p, "%llu/%llu", (unsigned long long)r,
				              (unsigned long long)c);
				sx_page_close(p);
			} else {
				sx_page_text(p, "\xe2\x80\x94"); /* em dash: no verdicts */
			}
			sx_page_close(p);
		}
		sx_page_close(p);
	}
	if (!a->week_span)
		empty_row(p, n + 2, "No dated verdicts in this period.");
	table_end(p);
	sx_page_close(p);
}

static void wbc_section(sx_page *p, const sx_audit *a)
{
	static const char *const heads[] = {"leukocytes (10^9/L)", "verdicts", "rejected",
	                                    "mean bias (mmHg)"};
	static const bool numeric[] = {false, true, true, true};
	char b[32];
	bool any = false;

	section(p, "leukocytes", "Leukocyte counts");
	paragraph(p, "Leukocytes (and platelets) keep using oxygen in the syringe. With very high "
	             "counts even a short wait lowers the pO2, and cooling slows it less than "
	             "usual.");
	figure_begin(p);
	sx_audit_svg_wbc(p, a, "chart-wbc");
	figure_end(p, "Leukocyte count (logarithmic scale) against the estimated bias, marked "
	              "by disposition. At most 300 marks are drawn, chosen by fingerprint.");
	table_begin(p, "Bias and rejections by leukocyte count", heads, numeric, 4);
	for (int k = 0; k < SX_AUDIT_WBC_BANDS; k++) {
		const sx_audit_band *band = &a->wbc_bands[k];
		if (!band->count)
			continue;
		any = true;
		sx_page_open(p, "tr");
		td(p, sx_audit_wbc_band_name(k), NULL);
		tdf(p, "num", "%llu", (unsigned long long)band->count);
		tdf(p, "num", "%llu (%.1f %%)", (unsigned long long)band->rejected,
		    share(band->rejected, band->count));
		mmhg(b, sizeof b, band->with_bias ? band->bias_sum / (double)band->with_bias : NAN);
		td(p, b, "num");
		sx_page_close(p);
	}
	if (!any)
		empty_row(p, 4, "No leukocyte counts in this period.");
	table_end(p);
	sx_page_close(p);
}

static void units_section(sx_page *p, const sx_audit *a)
{
	static const char *const heads[] = {"unit",    "verdicts", "accept",
	                                    "comment", "reject",   "rejected share"};
	static const bool numeric[] = {false, true, true, true, true, true};
	const sx_audit_unit *units[SX_AUDIT_MAX_UNITS + 1];
	size_t n = sx_audit_sorted_units(a, units, SX_AUDIT_MAX_UNITS + 1);

	section(p, "units", "Dispositions by unit");
	table_begin(p, "Verdicts by unit and disposition", heads, numeric, 6);
	for (size_t k = 0; k < n; k++) {
		const sx_audit_unit *u = units[k];
		uint64_t total = u->by_disposition[0] + u->by_disposition[1] + u->by_disposition[2];
		sx_page_open(p, "tr");
		sx_page_open(p, "th");
		sx_page_attr(p, "scope", "row");
		sx_page_text(p, u->name);
		sx_page_close(p);
		tdf(p, "num", "%llu", (unsigned long long)total);
		for (int d = 0; d < 3; d++)
			tdf(p, "num", "%llu", (unsigned long long)u->by_disposition[d]);
		tdf(p, "num", "%.1f %%", share(u->by_disposition[SX_REJECT], total));
		sx_page_close(p);
	}
	if (!n)
		empty_row(p, 6, "No verdicts in this period.");
	table_end(p);
	sx_page_close(p);
}

static void largest_section(sx_page *p, const sx_audit *a)
{
	static const char *const heads[] = {"specimen",    "location",    "collected",
	                                    "delay (min)", "bias (mmHg)", "disposition",
	                                    "reasons"};
	static const bool numeric[] = {false, false, false, true, true, false, false};
	char when[40], b[32];

	section(p, "largest", "The largest estimated biases");
	paragraph(p, "The specimens whose estimated bias was largest in size: a place to start "
	             "when looking for a pattern behind them.");
	table_begin(p, "Largest estimated biases", heads, numeric, 7);
	for (size_t i = 0; i < a->top_count; i++) {
		const sx_audit_top *t = &a->top[i];
		sx_page_open(p, "tr");
		td(p, t->specimen_id[0] ? t->specimen_id : "?", "nowrap");
		td(p, t->location[0] ? t->location : "?", "nowrap");
		if (t->audit_ms != SX_ROW_NO_TIME)
			local_time(a, t->audit_ms, when, sizeof when);
		else
			snprintf(when, sizeof when, "?");
		td(p, when, "nowrap");
		mmhg(b, sizeof b, t->delay_min);
		td(p, b, "num");
		mmhg(b, sizeof b, t->bias);
		td(p, b, "num");
		td(p, sx_disposition_name(t->disposition),
		   t->disposition == SX_REJECT    ? "is-reject"
		   : t->disposition == SX_COMMENT ? "is-comment"
		                                  : NULL);
		sx_page_open(p, "td");
		if (!t->reasons[0])
			sx_page_text(p, "none");
		for (const char *r = t->reasons; *r;) {
			char code[64];
			size_t len = strcspn(r, " ");
			snprintf(code, sizeof code, "%.*s", (int)len, r);
			if (r != t->reasons)
				sx_page_text(p, ", ");
			sx_page_element(p, "code", code);
			r += len;
			while (*r == ' ')
				r++;
		}
		sx_page_close(p);
		sx_page_close(p);
	}
	if (!a->top_count)
		empty_row(p, 7, "No bias estimates in this period.");
	table_end(p);
	sx_page_close(p);
}

static void reading_section(sx_page *p, const sx_audit_meta *m)
{
	section(p, "reading", "How to read this report");
	paragraph(p,
	          "Each verdict is syrinx's screen of one specimen: an estimate of how far the "
	          "pO2 reading is likely off (the bias, with a 5th to 95th percentile interval), "
	          "the reasons behind it, and a disposition: accept, accept with a comment on "
	          "the report, or reject and ask for a new specimen.");
	paragraph(p, "Verdicts are filed under their collection time (the analysis time, then "
	             "the reception time when it is missing). The period includes its start and "
	             "excludes its end. Percentages are of the verdicts in the period after the "
	             "filters.");
	paragraph(p, "The charts draw their marks from bounded samples so that a year of "
	             "verdicts gives a page of the same size; every count and percentage in the "
	             "tables uses all verdicts. The CSV and JSON exports of the same run "
	             "(syrinx audit --csv, --json) hold one row per verdict.");
	sx_page_open(p, "div");
	sx_page_attr(p, "class", "caution");
	sx_page_attr(p, "role", "note");
	sx_page_open(p, "p");
	sx_page_element(p, "strong", "Caution. ");
	sx_page_text(p, SX_CAUTION);
	sx_page_close(p);
	sx_page_close(p);
	sx_page_close(p);
	sx_page_open(p, "footer");
	sx_page_open(p, "p");
	sx_page_textf(p,
	              "Made by syrinx %s, syrinx audit. No patient identifiers are read or "
	              "shown.",
	              m->version ? m->version : "");
	sx_page_close(p);
	sx_page_close(p);
}

sx_status sx_audit_html(const sx_audit *a, const sx_audit_meta *m, sx_strbuf *out)
{
	xmlBufferPtr buf = xmlBufferCreate();
	sx_page page = {NULL, false};
	sx_page *p = &page;
	sx_status status = SX_OK;

	if (!buf)
		return SX_ENOMEM;
	page.w = xmlNewTextWriterMemory(buf, 0);
	if (!page.w) {
		xmlBufferFree(buf);
		return SX_ENOMEM;
	}
	if (xmlTextWriterWriteDTD(p->w, BAD_CAST "html", NULL, NULL, NULL) < 0)
		p->failed = true;
	sx_page_open(p, "html");
	sx_page_attr(p, "xmlns", "http://www.w3.org/1999/xhtml");
	sx_page_attr(p, "lang", "en");
	sx_page_open(p, "head");
	sx_page_open(p, "meta");
	sx_page_attr(p, "charset", "utf-8");
	sx_page_close_empty(p);
	sx_page_open(p, "meta");
	sx_page_attr(p, "name", "viewport");
	sx_page_attr(p, "content", "width=device-width, initial-scale=1");
	sx_page_close_empty(p);
	sx_page_open(p, "meta");
	sx_page_attr(p, "name", "generator");
	sx_page_attrf(p, "content", "syrinx %s", m->version ? m->version : "");
	sx_page_close_empty(p);
	sx_page_element(p, "title", m->title ? m->title : "pO2 screening audit");
	sx_page_element(p, "style", style);
	sx_page_close(p); /* head */
	sx_page_open(p, "body");
	sx_page_open(p, "main");
	masthead(p, a, m);
	totals(p, a);
	contents(p);
	reasons_section(p, a);
	bias_section(p, a);
	transport_section(p, a);
	weeks_section(p, a);
	wbc_section(p, a);
	units_section(p, a);
	largest_section(p, a);
	reading_section(p, m);
	sx_page_close(p); /* main */
	sx_page_close(p); /* body */
	sx_page_close(p); /* html */
	if (!p->failed && xmlTextWriterEndDocument(p->w) < 0)
		p->failed = true;
	xmlFreeTextWriter(p->w); /* flushes into buf */
	if (p->failed) {
		status = SX_EIO;
	} else {
		sx_strbuf_append(out, (const char *)xmlBufferContent(buf),
		                 (size_t)xmlBufferLength(buf));
		sx_strbuf_putc(out, '\n');
		status = sx_strbuf_status(out);
	}
	xmlBufferFree(buf);
	return status;
}
