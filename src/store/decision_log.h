/* SPDX-License-Identifier: MIT */
/*
 * decision_log.h - the decision log: every verdict of the daemon, and the
 * ACK sent for each HL7 message, in one SQLite file (docs/decision-log.md
 * has the schema and the reasons for it). "dlog" is short for decision log.
 *
 * Durability: the file is in WAL mode with synchronous=FULL, so a commit
 * that returned SX_OK survives a crash or a power cut; the daemon sends an
 * ACK only after sx_dlog_commit() of the batch that holds it returned SX_OK.
 *
 * Writing is grouped: sx_dlog_begin(), any number of sx_dlog_add() and
 * sx_dlog_add_message(), then sx_dlog_commit() (or sx_dlog_rollback()). One
 * commit costs one sync of the disk, however many rows it holds.
 *
 * Reading streams: sx_dlog_query() gives a cursor over the rows a filter
 * takes, in audit-time order; memory does not grow with the rows.
 *
 * Errors: every function returns an sx_status; sx_dlog_error() gives the
 * sentence that explains the last failure on a log (SQLite's own message
 * included). sx_dlog_open() puts its explanation in diags.
 *
 * Threads: a log handle is used by one thread at a time. Several processes
 * may open the same file (one writer at a time; readers do not block it).
 *
 * Ownership: sx_dlog_close() frees the log (NULL is fine) and must come after
 * every cursor of it is closed; sx_dlog_cursor_close() frees a cursor.
 */
#ifndef SX_DECISION_LOG_H
#define SX_DECISION_LOG_H

#include <stdbool.h>
#include <stdint.h>

#include "core/diag.h"
#include "core/strbuf.h"
#include "store/verdict_row.h"

/* The schema this code reads and writes, kept in PRAGMA user_version. */
#define SX_DLOG_SCHEMA_VERSION 1
/* PRAGMA application_id of a decision log: "SyRx" in ASCII. */
#define SX_DLOG_APPLICATION_ID 0x53795278

typedef struct sx_dlog sx_dlog;
typedef struct sx_dlog_cursor sx_dlog_cursor;

enum {
	SX_DLOG_READ = 0,   /* read only: audits and look-ups */
	SX_DLOG_WRITE = 1,  /* read and write an existing log */
	SX_DLOG_CREATE = 2, /* with WRITE: make the file and its schema if missing */
};

/*
 * Open the log at path. A file that is not SQLite, an SQLite file of another
 * program, an empty file opened without SX_DLOG_CREATE, or a log of another
 * schema version is refused with SX_EINVALID and a diagnostic that says which;
 * a missing file without SX_DLOG_CREATE is SX_ENOTFOUND; other SQLite
 * failures are SX_EIO.
 */
sx_status sx_dlog_open(const char *path, unsigned flags, sx_dlog **out, sx_diag_list *diags);
void sx_dlog_close(sx_dlog *log);
/* The last failure's explanation; "" when none. Never NULL. */
const char *sx_dlog_error(const sx_dlog *log);

/* ---- writing ----------------------------------------------------------- */

/* Start a batch (BEGIN IMMEDIATE: waits up to the busy timeout for another
 * writer). SX_EINVAL when a batch is already open. */
sx_status sx_dlog_begin(sx_dlog *log);
/* One verdict row, for an input that is not an HL7 message (a file). The
 * row's id is ignored. Needs an open batch. */
sx_status sx_dlog_add(sx_dlog *log, const sx_verdict_row *row);

/* The ACK sent for one HL7 message. */
typedef struct sx_dlog_ack {
	const char *sender;         /* MSH-3^MSH-4 as the daemon writes it; not NULL */
	const char *control_id;     /* MSH-10; not NULL */
	const char *message_sha256; /* 64 hex digits of the message bytes */
	const void *bytes;          /* the ACK as sent (MLLP framing excluded) */
	size_t len;
	int64_t sent_ms; /* when it was stored, UTC ms */
} sx_dlog_ack;

/*
 * One HL7 message: its ACK and the verdict rows of its specimens (count may
 * be 0, for a message answered with an error ACK). When the log already
 * holds an ACK for (sender, control_id), nothing is added and *duplicate is
 * true: the caller sends the stored ACK (sx_dlog_find_ack) instead. A failure
 * part-way leaves none of the message in the batch. Needs an open batch.
 */
sx_status sx_dlog_add_message(sx_dlog *log, const sx_dlog_ack *ack, const sx_verdict_row *rows,
                              size_t count, bool *duplicate);

/* Make the batch durable. On failure the batch is rolled back: nothing of it
 * is in the log and none of its ACKs may be sent. */
sx_status sx_dlog_commit(sx_dlog *log);
/* Drop the batch (fine when none is open). */
sx_status sx_dlog_rollback(sx_dlog *log);

/*
 * The stored ACK for (sender, control_id): its bytes are appended to ack
 * (binary safe; may hold NUL) and, if message_sha256 is not NULL, the stored
 * message fingerprint is copied there (65 bytes), so that the caller can
 * tell a true resend from a sender reusing a control id. *found is false
 * when there is none.
 */
sx_status sx_dlog_find_ack(sx_dlog *log, const char *sender, const char *control_id, sx_strbuf *ack,
                           char *message_sha256, bool *found);

/* ---- reading ----------------------------------------------------------- */

/* How many rows the filter takes (for a progress bar). */
sx_status sx_dlog_count(sx_dlog *log, const sx_row_filter *filter, uint64_t *count);

/* A cursor over the rows the filter takes, ordered by audit time, then id
 * (rows without an audit time first). The filter's texts are copied. */
sx_status sx_dlog_query(sx_dlog *log, const sx_row_filter *filter, sx_dlog_cursor **out);
/* The next row; its texts stay valid until the next call or the close.
 * *got is false at the end. */
sx_status sx_dlog_next(sx_dlog_cursor *cursor, sx_verdict_row *row, bool *got);
void sx_dlog_cursor_close(sx_dlog_cursor *cursor);

#endif
