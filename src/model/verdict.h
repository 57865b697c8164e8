/* SPDX-License-Identifier: MIT */
/*
 * verdict.h - what syrinx says about one specimen.
 *
 * A verdict holds the bias estimate with its interval, each mechanism's
 * share, the reasons (each naming the rule that gave it), the warnings about
 * the input, and the disposition. Everything is fixed-size (limits.h), so a
 * verdict needs no freeing and can be reused from specimen to specimen.
 */
#ifndef SX_VERDICT_H
#define SX_VERDICT_H

#include <stdbool.h>
#include <stddef.h>

#include "core/limits.h"

typedef enum sx_disposition {
	SX_ACCEPT = 0,
	SX_COMMENT,
	SX_REJECT,
} sx_disposition;

typedef enum sx_reason_severity {
	SX_REASON_INFO = 0,    /* worth knowing; does not change the disposition */
	SX_REASON_COMMENT,     /* the report should carry a comment */
	SX_REASON_REJECT,      /* ask for a new specimen */
} sx_reason_severity;

typedef struct sx_estimate {
	double estimate, low, high;    /* median (or nominal) and 5th-95th percentile */
} sx_estimate;

typedef struct sx_mechanism_share {
	char name[32];                 /* "metabolism", "air-exchange", ... */
	double bias_mmhg;              /* its part of the bias at the estimate */
} sx_mechanism_share;

typedef struct sx_reason {
	char code[48];                 /* our own reason codes, kebab-case */
	sx_reason_severity severity;
	char message[256];
	char rule[128];                /* file:line of the rule that gave it */
} sx_reason;

typedef struct sx_verdict {
	sx_disposition disposition;
	bool has_bias;                 /* false when nothing could be estimated */
	sx_estimate bias_mmhg;         /* reading minus pO2 at collection */
	bool has_before;
	sx_estimate po2_before_mmhg;   /* pO2 at collection, when a reading is known */
	sx_mechanism_share mechanisms[SX_MAX_MECHANISMS];
	size_t mechanism_count;
	sx_reason reasons[SX_MAX_REASONS];
	size_t reason_count;
	size_t reasons_dropped;
	char warnings[SX_MAX_WARNINGS][256];
	size_t warning_count;
	size_t warnings_dropped;
} sx_verdict;

void sx_verdict_init(sx_verdict *v);
/* Add a reason; past SX_MAX_REASONS it is counted in reasons_dropped. */
void sx_verdict_add_reason(sx_verdict *v, const char *code, sx_reason_severity severity,
			   const char *rule, const char *fmt, ...)
	__attribute__((format(printf, 5, 6)));
void sx_verdict_add_warning(sx_verdict *v, const char *fmt, ...)
	__attribute__((format(printf, 2, 3)));
void sx_verdict_add_mechanism(sx_verdict *v, const char *name, double bias_mmhg);
/* Raise the disposition to at least d. */
void sx_verdict_raise(sx_verdict *v, sx_disposition d);

const char *sx_disposition_name(sx_disposition d);
const char *sx_reason_severity_name(sx_reason_severity s);

#endif
