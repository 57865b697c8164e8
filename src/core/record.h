/* SPDX-License-Identifier: MIT */
/*
 * record.h - the canonical specimen record (the data dictionary).
 *
 * Every feed maps its input onto this record; the ruleset, the model and the
 * reporters read only this. Fields are addressed by sx_field and described by
 * one table (sx_field_info): name, kind, quantity (for units) and the range of
 * physically possible values. Every field may be absent; absent is not zero:
 * test sx_specimen_has() before reading a value.
 *
 * To add a field: add its enumerator below (before SX_FIELD_COUNT) and its row
 * in the table of record.c; the XML reader, the JSON writer and the rules pick
 * it up from the table.
 *
 * Ownership: a specimen owns its text values; sx_specimen_clear() frees them.
 */
#ifndef SX_RECORD_H
#define SX_RECORD_H

#include <stdbool.h>
#include <stddef.h>

#include "core/diag.h"
#include "core/limits.h"
#include "core/status.h"
#include "core/sxtime.h"
#include "core/units.h"

typedef enum sx_field {
	SX_F_SPECIMEN_ID = 0,
	SX_F_PATIENT_ID,
	SX_F_LOCATION,
	SX_F_COLLECTOR,
	SX_F_SPECIMEN_TYPE,
	SX_F_COLLECTED_AT,
	SX_F_RECEIVED_AT,
	SX_F_ANALYSED_AT,
	SX_F_CONTAINER,
	SX_F_ANTICOAGULANT,
	SX_F_FILL_VOLUME_ML,
	SX_F_NOMINAL_VOLUME_ML,
	SX_F_HEPARIN_VOLUME_ML,
	SX_F_TRANSPORT,
	SX_F_TRANSPORT_NOTE,
	SX_F_SEALED_CARRIER,
	SX_F_STORAGE,
	SX_F_STORAGE_TEMP_C,
	SX_F_ROOM_TEMP_C,
	SX_F_BUBBLES,
	SX_F_BUBBLE_VOLUME_UL,
	SX_F_AGENTS,
	SX_F_WBC,
	SX_F_PLATELETS,
	SX_F_HB,
	SX_F_FIO2,
	SX_F_SPO2,
	SX_F_PATIENT_TEMP_C,
	SX_F_PATIENT_AGE_YEARS,
	SX_F_SITE_ALTITUDE_M,
	SX_F_BAROMETRIC_MMHG,
	SX_F_PO2,
	SX_F_PCO2,
	SX_F_PH,
	SX_F_SO2,
	SX_F_COMMENTS,
	SX_FIELD_COUNT
} sx_field;

typedef enum sx_field_kind {
	SX_KIND_TEXT,
	SX_KIND_NUMBER,
	SX_KIND_TIME,
	SX_KIND_CHOICE,  /* one of the field's choices */
	SX_KIND_AGENTS,  /* list of {name, percent} */
} sx_field_kind;

/* Values of the choice fields. 0 is never a valid stored value. */
enum { SX_TYPE_ARTERIAL = 1, SX_TYPE_VENOUS, SX_TYPE_CAPILLARY, SX_TYPE_MIXED_VENOUS,
       SX_TYPE_CORD, SX_TYPE_UNKNOWN };
enum { SX_CONTAINER_PLASTIC = 1, SX_CONTAINER_GLASS, SX_CONTAINER_CAPILLARY,
       SX_CONTAINER_OTHER };
enum { SX_ANTICOAG_DRY_HEPARIN = 1, SX_ANTICOAG_LIQUID_HEPARIN, SX_ANTICOAG_NONE,
       SX_ANTICOAG_OTHER };
enum { SX_TRANSPORT_HAND = 1, SX_TRANSPORT_PNEUMATIC_TUBE, SX_TRANSPORT_COURIER,
       SX_TRANSPORT_OTHER };
enum { SX_YES = 1, SX_NO };
enum { SX_STORAGE_ROOM = 1, SX_STORAGE_ICED, SX_STORAGE_WARM, SX_STORAGE_UNKNOWN };
enum { SX_BUBBLES_NONE = 1, SX_BUBBLES_SMALL, SX_BUBBLES_LARGE, SX_BUBBLES_FROTH,
       SX_BUBBLES_EXPELLED };

typedef struct sx_field_info {
	const char *name;             /* data-dictionary name, snake_case */
	sx_field_kind kind;
	sx_quantity quantity;         /* numbers: which unit family */
	double min, max;              /* numbers: physically possible range */
	const char *const *choices;   /* choice fields: NULL-terminated, index+1 stored */
	const char *meaning;          /* one line for docs and --help */
} sx_field_info;

typedef struct sx_agent {
	char name[SX_MAX_AGENT_NAME]; /* lower case as given; the rules classify it */
	double percent;               /* volume % in the breathing gas; <0 = not given */
} sx_agent;

typedef struct sx_specimen {
	bool present[SX_FIELD_COUNT];
	double number[SX_FIELD_COUNT];   /* SX_KIND_NUMBER, internal units */
	int choice[SX_FIELD_COUNT];      /* SX_KIND_CHOICE */
	char *text[SX_FIELD_COUNT];      /* SX_KIND_TEXT, owned */
	sx_time time[SX_FIELD_COUNT];    /* SX_KIND_TIME, UTC */
	sx_agent agents[SX_MAX_AGENTS];
	size_t agent_count;
	/* where the specimen came from, for diagnostics */
	const char *source;              /* file name, not owned; "-" for stdin */
	unsigned source_line;
	bool unreadable;                 /* an error made a field unusable */
} sx_specimen;

const sx_field_info *sx_field_get(sx_field field);
/* The field with that data-dictionary name, or -1. */
int sx_field_lookup(const char *name, size_t len);
/* The index+1 of choice text within a choice field, or 0. */
int sx_field_choice_lookup(sx_field field, const char *text, size_t len);
const char *sx_field_choice_name(sx_field field, int choice);

void sx_specimen_init(sx_specimen *s);
void sx_specimen_clear(sx_specimen *s);
static inline bool sx_specimen_has(const sx_specimen *s, sx_field f)
{
	return s->present[f];
}

/*
 * Set a field from text as a feed delivers it: value text, optional unit text.
 * Parses by the field's kind, converts the unit, checks the range; on a
 * problem it adds an error diagnostic at where (with the field's name and the
 * offending value) and leaves the field absent. default_offset_min is the
 * offset assumed for a time without one; the assumption is added as a
 * warning.
 * Returns SX_OK or the status of the problem (SX_ENOMEM only for memory).
 */
sx_status sx_specimen_set(sx_specimen *s, sx_field field, const char *value, size_t len,
			  const char *unit, int default_offset_min, const sx_where *where,
			  sx_diag_list *diags);

/* Set a number already in internal units (checks the range). */
sx_status sx_specimen_set_number(sx_specimen *s, sx_field field, double value);

/* Add an agent; percent < 0 means not given. SX_ELIMIT past SX_MAX_AGENTS. */
sx_status sx_specimen_add_agent(sx_specimen *s, const char *name, size_t len, double percent);

#endif
