/* SPDX-License-Identifier: MIT */
/*
 * xmlfeed.c - streaming reader of the XML feed.
 *
 * A small state machine over xmlTextReader: <specimens> at depth 0, each
 * <specimen> at depth 1, fields at depth 2. Field problems are collected per
 * specimen and get the specimen's id once it is known (the id may come last,
 * since fields are in any order). A file that stops being well formed ends the
 * feed with an error naming the line; the specimens before it were yielded.
 * External entities and network access are off (XML_PARSE_NONET, no NOENT).
 */
#include "feed/xmlfeed.h"

#include <libxml/xmlreader.h>
#include <libxml/xmlschemas.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"
#include "core/limits.h"

struct sx_xml_feed {
	xmlTextReaderPtr reader;
	const char *name;
	int default_offset_min;
	bool started;      /* root seen */
	bool finished;
	char fatal[SX_MAX_DIAG_MESSAGE]; /* last libxml2 error text */
	unsigned fatal_line;
};

/* libxml2's messages may span lines: one diagnostic is one line. */
static void one_line(char *text)
{
	size_t n = strlen(text);
	while (n && (text[n - 1] == '\n' || text[n - 1] == ' '))
		text[--n] = '\0';
	for (char *p = text; *p; p++)
		if (*p == '\n')
			*p = ' ';
}

static void on_error(void *arg, xmlErrorPtr error)
{
	sx_xml_feed *f = arg;
	size_t n;
	if (!error || error->level < XML_ERR_ERROR)
		return;
	if (f->fatal[0])
		return; /* keep the first error: later ones follow from it */
	n = strlen(error->message ? error->message : "");
	snprintf(f->fatal, sizeof f->fatal, "%.*s", (int)(n && error->message[n - 1] == '\n' ? n - 1 : n),
		 error->message ? error->message : "unknown XML error");
	one_line(f->fatal);
	f->fatal_line = (unsigned)error->line;
}

/* libxml2 reports some problems (encoding, I/O) through its generic handler, which
 * prints to stderr by default: keep the first one as the feed's error instead. */
static void on_generic_error(void *arg, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void on_generic_error(void *arg, const char *fmt, ...)
{
	sx_xml_feed *f = arg;
	va_list ap;
	if (!f || f->fatal[0])
		return;
	va_start(ap, fmt);
	vsnprintf(f->fatal, sizeof f->fatal, fmt, ap);
	va_end(ap);
	one_line(f->fatal);
}

static void silent(void *arg, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void silent(void *arg, const char *fmt, ...)
{
	(void)arg;
	(void)fmt;
}

sx_status sx_xml_feed_open(sx_read_fn read, void *context, const char *name,
			   int default_offset_min, sx_xml_feed **out)
{
	sx_xml_feed *f = sx_calloc(1, sizeof *f);
	if (!f)
		return SX_ENOMEM;
	f->name = name;
	f->default_offset_min = default_offset_min;
	f->reader = xmlReaderForIO((xmlInputReadCallback)read, NULL, context, name, NULL,
				   XML_PARSE_NONET | XML_PARSE_NOCDATA | XML_PARSE_COMPACT);
	if (!f->reader) {
		sx_free(f);
		return SX_ENOMEM;
	}
	xmlTextReaderSetStructuredErrorHandler(f->reader, on_error, f);
	xmlSetGenericErrorFunc(f, on_generic_error); /* per thread in libxml2 */
	*out = f;
	return SX_OK;
}

void sx_xml_feed_close(sx_xml_feed *f)
{
	if (!f)
		return;
	xmlFreeTextReader(f->reader);
	xmlSetGenericErrorFunc(NULL, silent);
	sx_free(f);
}

/* The line of the node the reader stands on (the parser itself may be ahead). */
static unsigned line_of(sx_xml_feed *f)
{
	xmlNodePtr node = xmlTextReaderCurrentNode(f->reader);
	long line = node ? xmlGetLineNo(node) : -1;
	if (line <= 0)
		line = xmlTextReaderGetParserLineNumber(f->reader);
	return line > 0 ? (unsigned)line : 0;
}

static const char *local_name(sx_xml_feed *f)
{
	const xmlChar *n = xmlTextReaderConstLocalName(f->reader);
	return n ? (const char *)n : "";
}

/* Read one node; -1 error (recorded), 0 end, 1 ok. */
static int step(sx_xml_feed *f)
{
	int r = xmlTextReaderRead(f->reader);
	if (r < 0 && !f->fatal[0]) {
		snprintf(f->fatal, sizeof f->fatal, "the XML is not well formed");
		f->fatal_line = line_of(f);
	}
	return r;
}

typedef struct text_buf {
	char data[SX_MAX_TEXT + 1];
	size_t len;
	bool too_long;
} text_buf;

static void text_add(text_buf *t, const char *s)
{
	size_t n = strlen(s);
	if (t->len + n > SX_MAX_TEXT) {
		t->too_long = true;
		n = SX_MAX_TEXT - t->len;
	}
	memcpy(t->data + t->len, s, n);
	t->len += n;
	t->data[t->len] = '\0';
}

/* Collect the text of the current (non-empty) field element up to its end tag.
 * Returns 1 ok, 0 or -1 when the input ended or broke. *nested is set when a child element
 * was found (its text is skipped). */
static int field_text(sx_xml_feed *f, text_buf *t, bool *nested)
{
	int r;
	t->len = 0;
	t->data[0] = '\0';
	t->too_long = false;
	*nested = false;
	while ((r = step(f)) == 1) {
		int type = xmlTextReaderNodeType(f->reader);
		int depth = xmlTextReaderDepth(f->reader);
		if (type == XML_READER_TYPE_END_ELEMENT && depth == 2)
			return 1;
		if (type == XML_READER_TYPE_ELEMENT) {
			*nested = true;
			continue;
		}
		if (depth == 3 && (type == XML_READER_TYPE_TEXT || type == XML_READER_TYPE_CDATA ||
				   type == XML_READER_TYPE_SIGNIFICANT_WHITESPACE)) {
			const xmlChar *v = xmlTextReaderConstValue(f->reader);
			if (v)
				text_add(t, (const char *)v);
		}
	}
	return r;
}

static void trim(const char **s, size_t *len)
{
	while (*len && (**s == ' ' || **s == '\t' || **s == '\n' || **s == '\r')) {
		(*s)++;
		(*len)--;
	}
	while (*len && ((*s)[*len - 1] == ' ' || (*s)[*len - 1] == '\t' ||
			(*s)[*len - 1] == '\n' || (*s)[*len - 1] == '\r'))
		(*len)--;
}

static void read_agent(sx_xml_feed *f, sx_specimen *s, const sx_where *where,
		       sx_diag_list *d)
{
	xmlChar *name = xmlTextReaderGetAttribute(f->reader, BAD_CAST "name");
	xmlChar *pct = xmlTextReaderGetAttribute(f->reader, BAD_CAST "percent");
	double percent = -1.0;
	sx_status st;
	sx_where w = *where;
	w.field = "agents";

	if (!name || !*name) {
		sx_diag_add(d, SX_ERROR, SX_EINVAL, &w, "agents: <agent> without a name attribute");
		goto out;
	}
	if (pct) {
		st = sx_parse_number((const char *)pct, strlen((const char *)pct), &percent);
		if (st != SX_OK || percent < 0 || percent > 100) {
			sx_diag_add(d, SX_ERROR, st ? st : SX_ERANGE, &w,
				    "agents: percent '%.40s' of agent '%.40s' is not a number "
				    "from 0 to 100",
				    (const char *)pct, (const char *)name);
			goto out;
		}
	}
	st = sx_specimen_add_agent(s, (const char *)name, strlen((const char *)name), percent);
	if (st == SX_ELIMIT)
		sx_diag_add(d, SX_ERROR, st, &w, "agents: more than %d agents", SX_MAX_AGENTS);
	else if (st != SX_OK)
		sx_diag_add(d, SX_ERROR, st, &w, "agents: agent name '%.40s' is not usable",
			    (const char *)name);
out:
	xmlFree(name);
	xmlFree(pct);
}

/* Give every diagnostic of one specimen its id, then hand them over. */
static void hand_over(sx_diag_list *spec, const char *id, sx_diag_list *diags)
{
	for (size_t i = 0; i < spec->count; i++)
		if (!spec->items[i].specimen_id && id)
			spec->items[i].specimen_id = sx_strdup(id);
	sx_diag_list_move(diags, spec);
}

/* Read the fields of one <specimen> (the reader stands on its start tag). */
static int read_specimen(sx_xml_feed *f, sx_specimen *s, sx_feed_item *item, sx_diag_list *d)
{
	unsigned first_line[SX_FIELD_COUNT] = {0};
	text_buf *t = sx_malloc(sizeof *t);
	int r = 1;

	if (!t)
		return -1;
	while ((r = step(f)) == 1) {
		int type = xmlTextReaderNodeType(f->reader);
		int depth = xmlTextReaderDepth(f->reader);
		const char *name;
		sx_where where = {f->name, line_of(f), 0, NULL, NULL};
		int field;
		bool nested;

		if (type == XML_READER_TYPE_END_ELEMENT && depth == 1)
			break;
		if (type != XML_READER_TYPE_ELEMENT || depth != 2)
			continue;
		name = local_name(f);
		where.field = name;
		if (strcmp(name, "agent") == 0) {
			read_agent(f, s, &where, d);
			if (!xmlTextReaderIsEmptyElement(f->reader))
				xmlTextReaderNext(f->reader);
			continue;
		}
		field = sx_field_lookup(name, strlen(name));
		if (field < 0 || field == SX_F_AGENTS) {
			sx_diag_add(d, SX_ERROR, SX_ENOTFOUND, &where,
				    "<%.60s> is not a field of the data dictionary", name);
			if (!xmlTextReaderIsEmptyElement(f->reader))
				xmlTextReaderNext(f->reader);
			continue;
		}
		where.field = sx_field_get(field)->name;
		if (first_line[field]) {
			sx_diag_add(d, SX_ERROR, SX_EINVAL, &where,
				    "%s: given twice (first at line %u); neither value is used",
				    where.field, first_line[field]);
			s->present[field] = false;
			if (!xmlTextReaderIsEmptyElement(f->reader))
				xmlTextReaderNext(f->reader);
			continue;
		}
		first_line[field] = where.line;
		{
			xmlChar *unit = xmlTextReaderGetAttribute(f->reader, BAD_CAST "unit");
			const char *value;
			size_t len;
			if (xmlTextReaderIsEmptyElement(f->reader)) {
				t->len = 0;
				t->data[0] = '\0';
				nested = false;
			} else if ((r = field_text(f, t, &nested)) != 1) {
				xmlFree(unit);
				break;
			}
			value = t->data;
			len = t->len;
			if (sx_field_get(field)->kind != SX_KIND_TEXT)
				trim(&value, &len);
			if (nested)
				sx_diag_add(d, SX_ERROR, SX_ESYNTAX, &where,
					    "%s: holds an element; a field holds text only",
					    where.field);
			else if (t->too_long)
				sx_diag_add(d, SX_ERROR, SX_ELIMIT, &where,
					    "%s: longer than %d bytes", where.field, SX_MAX_TEXT);
			else if (len == 0 && sx_field_get(field)->kind != SX_KIND_TEXT)
				sx_diag_add(d, SX_ERROR, SX_EINVAL, &where, "%s: empty",
					    where.field);
			else
				sx_specimen_set(s, (sx_field)field, value, len,
						(const char *)unit, f->default_offset_min, &where,
						d);
			xmlFree(unit);
		}
	}
	sx_free(t);
	(void)item;
	return r;
}

sx_status sx_xml_feed_next(sx_xml_feed *f, sx_specimen *s, sx_feed_item *item, bool *got,
			   sx_diag_list *diags)
{
	int r;
	*got = false;
	sx_specimen_clear(s);
	s->source = f->name;
	memset(item, 0, sizeof *item);
	if (f->finished)
		return SX_OK;
	while ((r = step(f)) == 1) {
		int type = xmlTextReaderNodeType(f->reader);
		int depth = xmlTextReaderDepth(f->reader);
		sx_where where = {f->name, line_of(f), 0, NULL, NULL};
		const char *name;
		if (type != XML_READER_TYPE_ELEMENT)
			continue;
		name = local_name(f);
		if (depth == 0) {
			if (strcmp(name, "specimens") != 0) {
				sx_diag_add(diags, SX_ERROR, SX_EINVALID, &where,
					    "the root element is <%.60s>; a feed's root is "
					    "<specimens>",
					    name);
				f->finished = true;
				return SX_EINVALID;
			}
			f->started = true;
			continue;
		}
		if (depth != 1)
			continue;
		if (strcmp(name, "specimen") != 0) {
			sx_diag_add(diags, SX_ERROR, SX_EINVALID, &where,
				    "<%.60s> under <specimens>; only <specimen> is allowed; skipped",
				    name);
			xmlTextReaderNext(f->reader);
			continue;
		}
		{
			sx_diag_list spec;
			size_t errors_before;
			const char *id;
			sx_diag_list_init(&spec);
			s->source_line = where.line;
			item->line = where.line;
			if (xmlTextReaderIsEmptyElement(f->reader))
				r = 1;
			else
				r = read_specimen(f, s, item, &spec);
			id = s->present[SX_F_SPECIMEN_ID] ? s->text[SX_F_SPECIMEN_ID] : NULL;
			if (r != 1) {
				sx_where w = {f->name, f->fatal_line ? f->fatal_line : line_of(f),
					      0, id, NULL};
				sx_diag_add(&spec, SX_ERROR, SX_ESYNTAX, &w,
					    "the XML ends or stops being well formed inside the "
					    "specimen that starts at line %u (libxml2: %s); that "
					    "specimen and anything after it were not screened",
					    item->line, f->fatal[0] ? f->fatal : "end of input");
				hand_over(&spec, id, diags);
				f->finished = true;
				sx_specimen_clear(s);
				return SX_ESYNTAX;
			}
			errors_before = spec.errors;
			if (!id) {
				sx_diag_add(&spec, SX_ERROR, SX_EINVAL, &where,
					    "specimen_id: missing; the specimen at line %u cannot "
					    "be identified",
					    item->line);
			}
			item->input_errors = spec.errors;
			(void)errors_before;
			hand_over(&spec, id, diags);
			*got = true;
			return SX_OK;
		}
	}
	f->finished = true;
	if (r < 0) {
		sx_where w = {f->name, f->fatal_line, 0, NULL, NULL};
		sx_diag_add(diags, SX_ERROR, SX_ESYNTAX, &w,
			    "%s; the rest of the input was not read: every specimen not reported "
			    "before this error was not screened",
			    f->fatal[0] ? f->fatal : "the XML is not well formed");
		return SX_ESYNTAX;
	}
	if (!f->started) {
		sx_where w = {f->name, 0, 0, NULL, NULL};
		sx_diag_add(diags, SX_ERROR, SX_EINVALID, &w, "no <specimens> element in the input");
		return SX_EINVALID;
	}
	return SX_OK;
}

typedef struct schema_errors {
	sx_diag_list *diags;
	const char *name;
} schema_errors;

static void on_schema_error(void *arg, xmlErrorPtr error)
{
	schema_errors *e = arg;
	sx_where w;
	size_t n;
	if (!error)
		return;
	/* libxml2 2.9 follows a facet error with this internal remark; it adds nothing. */
	if (error->message && strstr(error->message, "No precomputed value available"))
		return;
	n = strlen(error->message ? error->message : "");
	w = (sx_where){e->name, (unsigned)(error->line > 0 ? error->line : 0), 0, NULL, NULL};
	sx_diag_add(e->diags, error->level >= XML_ERR_ERROR ? SX_ERROR : SX_WARNING, SX_EINVALID,
		    &w, "%.*s", (int)(n && error->message[n - 1] == '\n' ? n - 1 : n),
		    error->message ? error->message : "schema error");
}

sx_status sx_xml_validate(sx_read_fn read, void *context, const char *name,
			  const char *schema_path, sx_diag_list *diags)
{
	xmlSchemaParserCtxtPtr pctx = NULL;
	xmlSchemaPtr schema = NULL;
	xmlSchemaValidCtxtPtr vctx = NULL;
	xmlTextReaderPtr reader = NULL;
	schema_errors e = {diags, name};
	schema_errors se = {diags, schema_path};
	size_t errors_before = diags->errors;
	sx_status st = SX_OK;
	int r;

	pctx = xmlSchemaNewParserCtxt(schema_path);
	if (!pctx) {
		st = SX_ENOMEM;
		goto out;
	}
	xmlSchemaSetParserStructuredErrors(pctx, on_schema_error, &se);
	schema = xmlSchemaParse(pctx);
	if (!schema) {
		sx_where w = {schema_path, 0, 0, NULL, NULL};
		sx_diag_add(diags, SX_ERROR, SX_EIO, &w, "the schema could not be read");
		st = SX_EIO;
		goto out;
	}
	vctx = xmlSchemaNewValidCtxt(schema);
	reader = xmlReaderForIO((xmlInputReadCallback)read, NULL, context, name, NULL,
				XML_PARSE_NONET);
	if (!vctx || !reader) {
		st = SX_ENOMEM;
		goto out;
	}
	xmlTextReaderSetStructuredErrorHandler(reader, on_schema_error, &e);
	xmlSetGenericErrorFunc(NULL, silent);
	xmlSchemaSetValidStructuredErrors(vctx, on_schema_error, &e);
	if (xmlTextReaderSchemaValidateCtxt(reader, vctx, 0) != 0) {
		st = SX_EINVALID;
		goto out;
	}
	while ((r = xmlTextReaderRead(reader)) == 1)
		;
	if (r < 0 || diags->errors > errors_before || xmlTextReaderIsValid(reader) != 1)
		st = SX_EINVALID;
out:
	xmlFreeTextReader(reader);
	xmlSchemaFreeValidCtxt(vctx);
	xmlSchemaFree(schema);
	xmlSchemaFreeParserCtxt(pctx);
	return st;
}
