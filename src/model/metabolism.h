/* SPDX-License-Identifier: MIT */
/*
 * metabolism.h - O2 consumed by the cells of the specimen while it waits.
 *
 * Rate at 37 C: normal blood plus leukocytes and platelets above the counts
 * that normal blood already holds; scaled to the phase's temperature by a
 * Q10 law. The model works on O2 content (mL O2/dL); the pO2 change follows
 * through the dissociation curve (oxygen.h), so the same loss moves a
 * well-oxygenated sample far more than a hypoxaemic one.
 * Sources: docs/model.md, section Metabolism.
 */
#ifndef SX_METABOLISM_H
#define SX_METABOLISM_H

#include <stddef.h>

typedef struct sx_metabolism_params {
	double blood_vo2_37;      /* mL O2/dL/min, normal blood at 37 C */
	double wbc_vo2_37;        /* mL O2/dL/min per 10^9/L at 37 C */
	double wbc_reference;     /* 10^9/L included in blood_vo2_37 */
	double platelet_vo2_37;   /* mL O2/dL/min per 10^9/L at 37 C */
	double platelet_reference;
	double q10;
} sx_metabolism_params;

/* A stretch of time at one temperature. */
typedef struct sx_phase {
	double minutes;
	double temp_c;
} sx_phase;

/* Consumption rate, mL O2/dL/min, at temp_c. wbc/platelets < 0 mean unknown
 * (the reference count is assumed). */
double sx_metabolism_rate(const sx_metabolism_params *p, double wbc, double platelets,
			  double temp_c);

/* The rate at 37 C, mL O2/dL/min (the part that does not depend on temperature). */
double sx_metabolism_rate_37(const sx_metabolism_params *p, double wbc, double platelets);

/* O2 consumed over the phases, mL O2/dL. */
double sx_metabolism_consumed(const sx_metabolism_params *p, double wbc, double platelets,
			      const sx_phase *phases, size_t count);

#endif
