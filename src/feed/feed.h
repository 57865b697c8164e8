/* SPDX-License-Identifier: MIT */
/*
 * feed.h - reading specimens from an input, whatever its format.
 *
 * A feed is opened on a file (or standard input) and yields one specimen
 * record at a time; nothing downstream knows which format it came in.
 * Problems with one specimen go to the diagnostics list and the feed goes on
 * with the next; a specimen whose input had an error is still yielded, with
 * `input_errors` set, so that it is reported as not screened rather than lost.
 *
 * Ownership: sx_feed_close() frees the feed; the specimen passed to
 * sx_feed_next() is cleared and refilled by each call (the caller owns it and
 * clears it at the end with sx_specimen_clear()).
 */
#ifndef SX_FEED_H
#define SX_FEED_H

#include <stdbool.h>
#include <stdio.h>

#include "core/diag.h"
#include "core/record.h"

typedef enum sx_feed_format {
	SX_FEED_AUTO = 0,
	SX_FEED_XML,
	SX_FEED_HL7,
} sx_feed_format;

typedef struct sx_feed_options {
	sx_feed_format format;
	int default_offset_min;     /* for times without an offset */
	/* HL7 only: a site's local observation codes -> data-dictionary field (or -1);
	 * may be NULL (sx_screener_map_code with the screener as context fits) */
	int (*map_code)(void *context, const char *system, const char *code);
	void *map_context;
} sx_feed_options;

typedef struct sx_feed sx_feed;

/* What one call of sx_feed_next() gives beside the record. */
typedef struct sx_feed_item {
	size_t input_errors;        /* errors found in this specimen's input */
	unsigned line;              /* where the specimen starts */
} sx_feed_item;

/*
 * Open name for reading; fp is the open stream (the caller keeps ownership
 * and closes it after sx_feed_close). name is used in diagnostics ("-" for
 * standard input). With SX_FEED_AUTO the first bytes decide: '<' (after a
 * BOM and white space) is XML, "MSH", "FHS", "BHS" or the MLLP start byte is
 * HL7.
 */
sx_status sx_feed_open(FILE *fp, const char *name, const sx_feed_options *options,
		       sx_feed **feed, sx_diag_list *diags);

/*
 * The next specimen. *got is false at the end of the input (or after an error
 * that ends it, such as XML that is not well formed: that error is in diags).
 * A problem of an HL7 message as a whole (MSH-7, MSH-10, a message skipped)
 * comes with the next specimen: the status is then not SX_OK while *got is
 * still true.
 */
sx_status sx_feed_next(sx_feed *feed, sx_specimen *specimen, sx_feed_item *item, bool *got,
		       sx_diag_list *diags);

void sx_feed_close(sx_feed *feed);

/* Format from the first bytes of an input (exposed for tests). */
sx_feed_format sx_feed_detect(const unsigned char *bytes, size_t len);

#endif
