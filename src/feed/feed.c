/* SPDX-License-Identifier: MIT */
/*
 * feed.c - one interface over the feed formats, and format detection.
 *
 * The first bytes of the input are read once, to tell the format, and then
 * given back to the format's reader before the rest of the stream, so
 * standard input works as well as a file.
 */
#include "feed/feed.h"

#include <string.h>

#include "core/alloc.h"
#include "feed/hl7.h"
#include "feed/xmlfeed.h"

#define PEEK_SIZE 512

struct sx_feed {
	FILE *fp;
	const char *name;
	sx_feed_format format;
	unsigned char peek[PEEK_SIZE];
	size_t peek_len, peek_pos;
	bool read_error;
	sx_xml_feed *xml;
	sx_hl7_feed *hl7;
};

static int feed_read(void *context, char *buf, int len)
{
	sx_feed *f = context;
	size_t n;
	if (len <= 0)
		return 0;
	if (f->peek_pos < f->peek_len) {
		n = f->peek_len - f->peek_pos;
		if (n > (size_t)len)
			n = (size_t)len;
		memcpy(buf, f->peek + f->peek_pos, n);
		f->peek_pos += n;
		return (int)n;
	}
	n = fread(buf, 1, (size_t)len, f->fp);
	if (n == 0 && ferror(f->fp)) {
		f->read_error = true;
		return -1;
	}
	return (int)n;
}

sx_feed_format sx_feed_detect(const unsigned char *b, size_t len)
{
	size_t i = 0;
	if (len >= 3 && b[0] == 0xEF && b[1] == 0xBB && b[2] == 0xBF)
		i = 3;
	if (i < len && b[i] == 0x0B)
		return SX_FEED_HL7;
	while (i < len && (b[i] == ' ' || b[i] == '\t' || b[i] == '\r' || b[i] == '\n'))
		i++;
	if (i < len && b[i] == '<')
		return SX_FEED_XML;
	if (len - i >= 3 && (memcmp(b + i, "MSH", 3) == 0 || memcmp(b + i, "FHS", 3) == 0 ||
			     memcmp(b + i, "BHS", 3) == 0))
		return SX_FEED_HL7;
	return SX_FEED_AUTO;
}

sx_status sx_feed_open(FILE *fp, const char *name, const sx_feed_options *options,
		       sx_feed **out, sx_diag_list *diags)
{
	sx_feed *f = sx_calloc(1, sizeof *f);
	sx_where where = {name, 1, 1, NULL, NULL};
	sx_status st;

	*out = NULL;
	if (!f)
		return SX_ENOMEM;
	f->fp = fp;
	f->name = name;
	f->peek_len = fread(f->peek, 1, sizeof f->peek, fp);
	if (f->peek_len == 0 && ferror(fp)) {
		sx_diag_add(diags, SX_ERROR, SX_EIO, &where, "cannot read the input");
		sx_free(f);
		return SX_EIO;
	}
	f->format = options->format;
	if (f->format == SX_FEED_AUTO) {
		f->format = sx_feed_detect(f->peek, f->peek_len);
		if (f->format == SX_FEED_AUTO) {
			sx_diag_add(diags, SX_ERROR, SX_ESYNTAX, &where,
				    f->peek_len ? "neither XML nor HL7: the input should start with "
						  "'<' (XML) or 'MSH' (HL7); say --input to choose"
						: "the input is empty");
			sx_free(f);
			return SX_ESYNTAX;
		}
	}
	switch (f->format) {
	case SX_FEED_XML:
		st = sx_xml_feed_open(feed_read, f, name, options->default_offset_min, &f->xml);
		break;
	case SX_FEED_HL7: {
		sx_hl7_options ho = {options->default_offset_min, name, options->map_code,
				     options->map_context};
		st = sx_hl7_feed_open(feed_read, f, &ho, &f->hl7);
		break;
	}
	default:
		st = SX_EINVAL;
		break;
	}
	if (st != SX_OK) {
		sx_free(f);
		return st;
	}
	*out = f;
	return SX_OK;
}

sx_status sx_feed_next(sx_feed *f, sx_specimen *s, sx_feed_item *item, bool *got,
		       sx_diag_list *diags)
{
	sx_status st = f->format == SX_FEED_HL7 ? sx_hl7_feed_next(f->hl7, s, item, got, diags)
						: sx_xml_feed_next(f->xml, s, item, got, diags);
	if (f->read_error) {
		sx_where where = {f->name, 0, 0, NULL, NULL};
		sx_diag_add(diags, SX_ERROR, SX_EIO, &where, "read error; the input stops here");
		f->read_error = false;
		*got = false;
		return SX_EIO;
	}
	return st;
}

void sx_feed_close(sx_feed *f)
{
	if (!f)
		return;
	sx_xml_feed_close(f->xml);
	sx_hl7_feed_close(f->hl7);
	sx_free(f);
}
