/* SPDX-License-Identifier: MIT */
/*
 * report.h - writing verdicts for people (text) and programs (JSON Lines).
 *
 * Each writer renders one specimen into an sx_strbuf. A specimen whose input
 * had errors is reported as not screened, with its errors, never dropped.
 * The cautions (SX_CAUTION) travel with every human-readable report.
 */
#ifndef SX_REPORT_H
#define SX_REPORT_H

#include <math.h>
#include <stddef.h>

#include "core/diag.h"
#include "core/record.h"
#include "core/strbuf.h"
#include "model/screen.h"
#include "model/verdict.h"

#define SX_CAUTION                                                                          \
	"Decision support for the laboratory's own acceptance procedure. The estimates are " \
	"not corrected results and are not for clinical use; local policy and the "          \
	"laboratory director decide."

/* x rounded to a multiple of step (0.1 mmHg, 0.01 kPa), and never "-0.0": what every
 * reporter prints, so that the same verdict reads the same everywhere. */
static inline double sx_report_round(double x, double step)
{
	double r = round(x / step) * step;
	return r == 0.0 ? 0.0 : r;
}

/* One specimen as the reporters see it. verdict is NULL when not screened;
 * errors points at the input errors of this specimen (may be 0 of them). */
typedef struct sx_report_item {
	const sx_specimen *specimen;
	const sx_verdict *verdict;
	const sx_diag *const *errors;
	size_t error_count;
} sx_report_item;

/* Counts for the closing summary. */
typedef struct sx_tally {
	size_t accept, comment, reject, not_screened;
} sx_tally;

void sx_tally_add(sx_tally *t, const sx_report_item *item);

/* One JSON object and a newline. */
void sx_report_json(sx_strbuf *out, const sx_report_item *item);

/* Text for people: a header with the cautions, a block per specimen, a summary. */
void sx_report_text_header(sx_strbuf *out);
void sx_report_text(sx_strbuf *out, const sx_report_item *item);
void sx_report_text_summary(sx_strbuf *out, const sx_tally *tally);

/* `syrinx explain`: one specimen's timeline and what each mechanism did. */
void sx_report_explain_text(sx_strbuf *out, const sx_specimen *specimen,
			    const sx_explanation *explanation);

#endif
