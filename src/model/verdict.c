/* SPDX-License-Identifier: MIT */
/*
 * verdict.c - building a verdict.
 */
#include "model/verdict.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

void sx_verdict_init(sx_verdict *v)
{
	memset(v, 0, sizeof *v);
}

static void copy(char *dst, size_t size, const char *src)
{
	snprintf(dst, size, "%s", src ? src : "");
}

void sx_verdict_add_reason(sx_verdict *v, const char *code, sx_reason_severity severity,
			   const char *rule, const char *fmt, ...)
{
	sx_reason *r;
	va_list ap;
	if (v->reason_count >= SX_MAX_REASONS) {
		v->reasons_dropped++;
		return;
	}
	r = &v->reasons[v->reason_count++];
	copy(r->code, sizeof r->code, code);
	copy(r->rule, sizeof r->rule, rule);
	r->severity = severity;
	va_start(ap, fmt);
	vsnprintf(r->message, sizeof r->message, fmt, ap);
	va_end(ap);
	if (severity == SX_REASON_COMMENT)
		sx_verdict_raise(v, SX_COMMENT);
	else if (severity == SX_REASON_REJECT)
		sx_verdict_raise(v, SX_REJECT);
}

void sx_verdict_add_warning(sx_verdict *v, const char *fmt, ...)
{
	va_list ap;
	if (v->warning_count >= SX_MAX_WARNINGS) {
		v->warnings_dropped++;
		return;
	}
	va_start(ap, fmt);
	vsnprintf(v->warnings[v->warning_count++], sizeof v->warnings[0], fmt, ap);
	va_end(ap);
}

void sx_verdict_add_mechanism(sx_verdict *v, const char *name, double bias_mmhg)
{
	sx_mechanism_share *m;
	if (v->mechanism_count >= SX_MAX_MECHANISMS)
		return;
	m = &v->mechanisms[v->mechanism_count++];
	copy(m->name, sizeof m->name, name);
	m->bias_mmhg = bias_mmhg;
}

void sx_verdict_raise(sx_verdict *v, sx_disposition d)
{
	if (d > v->disposition)
		v->disposition = d;
}

const char *sx_disposition_name(sx_disposition d)
{
	switch (d) {
	case SX_ACCEPT:
		return "accept";
	case SX_COMMENT:
		return "comment";
	case SX_REJECT:
		return "reject";
	}
	return "reject";
}

const char *sx_reason_severity_name(sx_reason_severity s)
{
	switch (s) {
	case SX_REASON_INFO:
		return "info";
	case SX_REASON_COMMENT:
		return "comment";
	case SX_REASON_REJECT:
		return "reject";
	}
	return "reject";
}
