/* SPDX-License-Identifier: MIT */
/*
 * status.c - messages for sx_status codes, one table.
 */
#include "core/status.h"

static const char *const messages[SX_STATUS_COUNT] = {
	[SX_OK] = "success",
	[SX_ENOMEM] = "out of memory",
	[SX_EIO] = "input/output error",
	[SX_ESYNTAX] = "malformed input",
	[SX_EUNIT] = "unknown unit",
	[SX_ERANGE] = "value outside the possible range",
	[SX_ETIME] = "malformed or impossible date/time",
	[SX_ELIMIT] = "size limit exceeded",
	[SX_EINVAL] = "invalid value",
	[SX_ENOTFOUND] = "not found",
	[SX_EMODEL] = "the model found no solution",
	[SX_EINVALID] = "does not follow the schema",
};

const char *sx_status_message(sx_status status)
{
	if ((unsigned)status >= SX_STATUS_COUNT || !messages[status])
		return "unknown status";
	return messages[status];
}
