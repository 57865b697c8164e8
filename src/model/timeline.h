/* SPDX-License-Identifier: MIT */
/*
 * timeline.h - the specimen's life from collection to analysis, as phases.
 *
 * The record's times give the phases: transport (collection to receipt),
 * split into the ride itself and standing when it went by pneumatic tube,
 * and waiting (receipt to analysis). Each phase has the temperature the
 * specimen tends to (room, ice, warm) and how much it is shaken (agitation,
 * which sets how fast air and blood exchange). The blood starts at the
 * patient's temperature and approaches the phase's temperature exponentially.
 */
#ifndef SX_TIMELINE_H
#define SX_TIMELINE_H

#include <stdbool.h>
#include <stddef.h>

#include "core/record.h"
#include "model/air_exchange.h"
#include "model/settings.h"
#include "model/verdict.h"

#define SX_MAX_PHASES 4

/* How much a phase shakes the specimen: sx_agitation of model/air_exchange.h. */

typedef struct sx_phase_plan {
	char name[16];              /* "tube ride", "transport", "waiting" */
	double minutes;
	double temp_c;              /* the temperature the specimen tends to */
	bool iced;                  /* cooling in ice water (faster) */
	sx_agitation agitation;
} sx_phase_plan;

typedef struct sx_timeline {
	sx_phase_plan phases[SX_MAX_PHASES];
	size_t count;
	double total_min;           /* collection to analysis */
	double transport_min;       /* collection to receipt; < 0 when unknown */
	double start_temp_c;        /* the blood at collection: the patient's temperature */
	double time_halfwidth_min;  /* how far each time may be off (precision) */
	bool known;                 /* false: the times do not allow a timeline */
} sx_timeline;

/* Build the timeline; problems with the times become warnings in v. */
void sx_timeline_build(const sx_specimen *s, const sx_settings *st, sx_timeline *tl,
		       sx_verdict *v);

const char *sx_agitation_name(sx_agitation a);

#endif
