/* SPDX-License-Identifier: MIT */
/*
 * status.h - the one status type of libsyrinx.
 *
 * Every library function that can fail returns an sx_status; 0 is success.
 * Results travel through out-parameters. sx_status_message() gives each code a
 * short human sentence; the command adds the where (file, line, field).
 */
#ifndef SX_STATUS_H
#define SX_STATUS_H

typedef enum sx_status {
	SX_OK = 0,
	SX_ENOMEM,     /* an allocation failed */
	SX_EIO,        /* a file could not be opened, read or written */
	SX_ESYNTAX,    /* the input is not well formed (XML, HL7, rules, a number) */
	SX_EUNIT,      /* a unit that is not known for this field */
	SX_ERANGE,     /* a value outside what is physically possible */
	SX_ETIME,      /* a date or time that is malformed or impossible */
	SX_ELIMIT,     /* a size limit of limits.h was exceeded */
	SX_EINVAL,     /* an argument or value that does not fit */
	SX_ENOTFOUND,  /* a name that is not known (field, specimen, file) */
	SX_EMODEL,     /* the model could not reach a solution */
	SX_EINVALID,   /* the input does not follow the schema */
	SX_STATUS_COUNT
} sx_status;

/* A constant sentence for the code; never NULL. */
const char *sx_status_message(sx_status status);

#endif
