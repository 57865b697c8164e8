/* SPDX-License-Identifier: MIT */
/*
 * xmlfeed.h - the XML feed reader (docs/schema/feed.xsd), streaming.
 *
 * Root <specimens>, one <specimen> per specimen, children named exactly as the
 * data-dictionary fields, values as text, an optional unit attribute, agents
 * as <agent name="..." percent="..."/>. Read with libxml2's xmlTextReader,
 * so memory stays flat however large the file.
 *
 * Ownership: sx_xml_feed_close() frees the reader; the read callback's
 * context stays the caller's.
 */
#ifndef SX_XMLFEED_H
#define SX_XMLFEED_H

#include <stdbool.h>

#include "core/diag.h"
#include "core/record.h"
#include "feed/feed.h"

typedef struct sx_xml_feed sx_xml_feed;

/* read: like read(2) into buf, returns bytes (0 at end, -1 on error). */
typedef int (*sx_read_fn)(void *context, char *buf, int len);

sx_status sx_xml_feed_open(sx_read_fn read, void *context, const char *name,
			   int default_offset_min, sx_xml_feed **out);
sx_status sx_xml_feed_next(sx_xml_feed *f, sx_specimen *s, sx_feed_item *item, bool *got,
			   sx_diag_list *diags);
void sx_xml_feed_close(sx_xml_feed *f);

/* Validate a whole input against an XSD schema file with libxml2; every
 * schema error goes to diags with its line. SX_EINVALID when there was one. */
sx_status sx_xml_validate(sx_read_fn read, void *context, const char *name,
			  const char *schema_path, sx_diag_list *diags);

#endif
