/* SPDX-License-Identifier: MIT */
/*
 * decision_log.c - the decision log in SQLite: schema, checks on open,
 * grouped writes, the ACK table for resends, and streaming queries.
 *
 * Every value reaches SQLite through a bound parameter of a prepared
 * statement; the SQL texts below are constants. Times are stored as
 * fixed-width ISO 8601 UTC text (2026-03-14T07:02:00.000Z), which reads well
 * in the sqlite3 shell and sorts as time does, so the index on audit_at
 * serves ranges. docs/decision-log.md describes every column.
 */
#include "store/decision_log.h"

#include <errno.h>
#include <stdarg.h>
#include <math.h>
#include <sqlite3.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>

#include "core/alloc.h"
#include "core/sxtime.h"

#define BUSY_TIMEOUT_MS 5000

struct sx_dlog {
	sqlite3 *db;
	char *path;
	bool writable;
	bool in_batch;
	sqlite3_stmt *insert_verdict;
	sqlite3_stmt *insert_ack;
	sqlite3_stmt *find_ack;
	char error[512];
};

struct sx_dlog_cursor {
	sx_dlog *log;
	sqlite3_stmt *stmt;
	char *texts[5]; /* copies of the filter's texts, bound to stmt */
};

static const char schema_sql[] =
        "CREATE TABLE verdict (\n"
        "  id INTEGER PRIMARY KEY,\n"
        "  audit_at TEXT,\n"
        "  input_received_at TEXT,\n"
        "  sender TEXT,\n"
        "  control_id TEXT,\n"
        "  source TEXT,\n"
        "  input_sha256 TEXT NOT NULL CHECK (length(input_sha256) = 64),\n"
        "  specimen_id TEXT,\n"
        "  location TEXT,\n"
        "  collector TEXT,\n"
        "  transport TEXT,\n"
        "  storage TEXT,\n"
        "  collected_at TEXT,\n"
        "  received_at TEXT,\n"
        "  analysed_at TEXT,\n"
        "  delay_min REAL,\n"
        "  wbc REAL,\n"
        "  po2_mmhg REAL,\n"
        "  disposition TEXT NOT NULL CHECK (disposition IN ('accept', 'comment', 'reject')),\n"
        "  bias_mmhg REAL,\n"
        "  bias_low_mmhg REAL,\n"
        "  bias_high_mmhg REAL,\n"
        "  reason_codes TEXT NOT NULL,\n"
        "  reasons_json TEXT NOT NULL,\n"
        "  mechanisms_json TEXT NOT NULL,\n"
        "  warnings_json TEXT NOT NULL,\n"
        "  ruleset TEXT NOT NULL\n"
        ");\n"
        "CREATE INDEX verdict_by_audit_at ON verdict (audit_at);\n"
        "CREATE INDEX verdict_by_message ON verdict (sender, control_id)\n"
        "  WHERE control_id IS NOT NULL;\n"
        "CREATE TABLE ack (\n"
        "  sender TEXT NOT NULL,\n"
        "  control_id TEXT NOT NULL,\n"
        "  message_sha256 TEXT NOT NULL CHECK (length(message_sha256) = 64),\n"
        "  ack BLOB NOT NULL,\n"
        "  sent_at TEXT NOT NULL,\n"
        "  PRIMARY KEY (sender, control_id)\n"
        ") WITHOUT ROWID;\n";

#define ROW_COLUMNS                                                                                \
	"id, audit_at, input_received_at, sender, control_id, source, input_sha256, "              \
	"specimen_id, location, collector, transport, storage, collected_at, received_at, "        \
	"analysed_at, delay_min, wbc, po2_mmhg, disposition, bias_mmhg, bias_low_mmhg, "           \
	"bias_high_mmhg, reason_codes, reasons_json, mechanisms_json, warnings_json, ruleset"

enum {
	C_ID,
	C_AUDIT_AT,
	C_INPUT_RECEIVED_AT,
	C_SENDER,
	C_CONTROL_ID,
	C_SOURCE,
	C_SHA256,
	C_SPECIMEN_ID,
	C_LOCATION,
	C_COLLECTOR,
	C_TRANSPORT,
	C_STORAGE,
	C_COLLECTED_AT,
	C_RECEIVED_AT,
	C_ANALYSED_AT,
	C_DELAY_MIN,
	C_WBC,
	C_PO2,
	C_DISPOSITION,
	C_BIAS,
	C_BIAS_LOW,
	C_BIAS_HIGH,
	C_REASON_CODES,
	C_REASONS_JSON,
	C_MECHANISMS_JSON,
	C_WARNINGS_JSON,
	C_RULESET,
	C_COUNT
};

static const char insert_verdict_sql[] =
        "INSERT INTO verdict (" ROW_COLUMNS ") VALUES (NULL, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, "
        "?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18, ?19, ?20, ?21, ?22, ?23, ?24, ?25, ?26, "
        "?27)";
static const char insert_ack_sql[] =
        "INSERT INTO ack (sender, control_id, message_sha256, ack, sent_at) "
        "VALUES (?1, ?2, ?3, ?4, ?5)";
static const char find_ack_sql[] =
        "SELECT message_sha256, ack FROM ack WHERE sender = ?1 AND control_id = ?2";

/* The filter, parameters ?1..?7: from, to, location, collector, transport,
 * disposition, reason code. It must take what sx_row_filter_match() takes. */
#define FILTER_REST                                                                                \
	" (?3 IS NULL OR location = ?3 OR substr(location, 1, length(?3) + 1) = ?3 || '/')"        \
	" AND (?4 IS NULL OR collector = ?4)"                                                      \
	" AND (?5 IS NULL OR transport = ?5)"                                                      \
	" AND (?6 IS NULL OR disposition = ?6)"                                                    \
	" AND (?7 IS NULL OR instr(' ' || reason_codes || ' ', ' ' || ?7 || ' ') > 0)"
/* With a period the range goes first, so the index on audit_at serves it;
 * unset ends are bound as texts below and above every time. */
#define FILTER_TIMED " audit_at >= ?1 AND audit_at < ?2 AND" FILTER_REST
#define FILTER_ALL   " ?1 IS NULL AND ?2 IS NULL AND" FILTER_REST

static const char *const query_sql[2] = {
        "SELECT " ROW_COLUMNS " FROM verdict WHERE" FILTER_ALL " ORDER BY audit_at, id",
        "SELECT " ROW_COLUMNS " FROM verdict WHERE" FILTER_TIMED " ORDER BY audit_at, id",
};
static const char *const count_sql[2] = {
        "SELECT count(*) FROM verdict WHERE" FILTER_ALL,
        "SELECT count(*) FROM verdict WHERE" FILTER_TIMED,
};

static void set_error(sx_dlog *log, const char *what)
{
	snprintf(log->error, sizeof log->error, "%s: %s", what,
	         log->db ? sqlite3_errmsg(log->db) : "no database");
}

static sx_status status_of(int rc)
{
	switch (rc & 0xff) {
	case SQLITE_OK:
	case SQLITE_DONE:
	case SQLITE_ROW:
		return SX_OK;
	case SQLITE_NOMEM:
		return SX_ENOMEM;
	case SQLITE_NOTADB:
	case SQLITE_CORRUPT:
		return SX_EINVALID;
	case SQLITE_CONSTRAINT:
	case SQLITE_MISMATCH:
	case SQLITE_TOOBIG:
		return SX_EINVAL;
	default:
		return SX_EIO;
	}
}

/* Run SQL without results; on failure note it and return its status. */
static sx_status exec(sx_dlog *log, const char *sql, const char *what)
{
	int rc = sqlite3_exec(log->db, sql, NULL, NULL, NULL);
	if (rc != SQLITE_OK) {
		set_error(log, what);
		return status_of(rc);
	}
	return SX_OK;
}

/* One integer from a statement without parameters. */
static int query_int(sqlite3 *db, const char *sql, int64_t *value)
{
	sqlite3_stmt *st = NULL;
	int rc = sqlite3_prepare_v2(db, sql, -1, &st, NULL);
	if (rc == SQLITE_OK) {
		rc = sqlite3_step(st);
		if (rc == SQLITE_ROW) {
			*value = sqlite3_column_int64(st, 0);
			rc = SQLITE_OK;
		}
	}
	sqlite3_finalize(st);
	return rc;
}

static void add_diag(sx_diag_list *diags, const char *path, sx_status code, const char *fmt, ...)
        __attribute__((format(printf, 4, 5)));

static void add_diag(sx_diag_list *diags, const char *path, sx_status code, const char *fmt, ...)
{
	sx_where where = {path, 0, 0, NULL, NULL};
	va_list ap;
	if (!diags)
		return;
	va_start(ap, fmt);
	sx_diag_addv(diags, SX_ERROR, code, &where, fmt, ap);
	va_end(ap);
}

/*
 * What is in the file: a decision log of our schema (0), an empty database
 * (1), or something refused (an sx_status with a diagnostic).
 */
static sx_status inspect(sx_dlog *log, sx_diag_list *diags, bool *empty)
{
	int64_t app = 0, version = 0, objects = 0;
	int rc = query_int(log->db, "PRAGMA application_id", &app);
	char detail[160];

	if (rc == SQLITE_OK)
		rc = query_int(log->db, "PRAGMA user_version", &version);
	if (rc == SQLITE_OK)
		rc = query_int(log->db, "SELECT count(*) FROM sqlite_master", &objects);
	if ((rc & 0xff) == SQLITE_NOTADB) {
		add_diag(diags, log->path, SX_EINVALID,
		         "not an SQLite database, so not a decision log (a decision log is the "
		         "SQLite file that syrinx serve writes)");
		return SX_EINVALID;
	}
	if ((rc & 0xff) == SQLITE_CORRUPT) {
		add_diag(diags, log->path, SX_EINVALID,
		         "the decision log is damaged (SQLite: %s); restore it from a backup",
		         sqlite3_errmsg(log->db));
		return SX_EINVALID;
	}
	if (rc != SQLITE_OK) {
		add_diag(diags, log->path, status_of(rc), "cannot read the database: %s",
		         sqlite3_errmsg(log->db));
		return status_of(rc) == SX_OK ? SX_EIO : status_of(rc);
	}
	*empty = objects == 0 && app == 0 && version == 0;
	if (*empty)
		return SX_OK;
	if (app != SX_DLOG_APPLICATION_ID) {
		snprintf(detail, sizeof detail, "application_id %lld, expected %d", (long long)app,
		         SX_DLOG_APPLICATION_ID);
		add_diag(diags, log->path, SX_EINVALID,
		         "an SQLite database of another program, not a syrinx decision log (%s)",
		         detail);
		return SX_EINVALID;
	}
	if (version != SX_DLOG_SCHEMA_VERSION) {
		snprintf(detail, sizeof detail, "schema version %lld; this syrinx reads version %d",
		         (long long)version, SX_DLOG_SCHEMA_VERSION);
		if (version > SX_DLOG_SCHEMA_VERSION)
			add_diag(diags, log->path, SX_EINVALID,
			         "a decision log of a newer syrinx (%s): use that version", detail);
		else
			add_diag(diags, log->path, SX_EINVALID,
			         "a decision log of an unknown schema (%s)", detail);
		return SX_EINVALID;
	}
	return SX_OK;
}

static sx_status create_schema(sx_dlog *log)
{
	char sql[160];
	int64_t objects = 0;
	sx_status st;

	if ((st = exec(log, "BEGIN IMMEDIATE", "cannot start writing the schema")) != SX_OK)
		return st;
	/* another process may have made it meanwhile */
	if (query_int(log->db, "SELECT count(*) FROM sqlite_master", &objects) != SQLITE_OK) {
		set_error(log, "cannot read the database");
		exec(log, "ROLLBACK", "rollback");
		return SX_EIO;
	}
	if (objects > 0)
		return exec(log, "COMMIT", "commit");
	snprintf(sql, sizeof sql, "PRAGMA application_id = %d; PRAGMA user_version = %d;",
	         SX_DLOG_APPLICATION_ID, SX_DLOG_SCHEMA_VERSION);
	if ((st = exec(log, schema_sql, "cannot create the schema")) != SX_OK ||
	    (st = exec(log, sql, "cannot set the schema version")) != SX_OK) {
		sqlite3_exec(log->db, "ROLLBACK", NULL, NULL, NULL);
		return st;
	}
	return exec(log, "COMMIT", "cannot commit the schema");
}

static sx_status prepare(sx_dlog *log, const char *sql, sqlite3_stmt **st)
{
	int rc = sqlite3_prepare_v3(log->db, sql, -1, SQLITE_PREPARE_PERSISTENT, st, NULL);
	if (rc != SQLITE_OK) {
		set_error(log, "cannot prepare a statement");
		return status_of(rc);
	}
	return SX_OK;
}

static sx_status setup_writing(sx_dlog *log)
{
	sqlite3_stmt *st = NULL;
	sx_status status = SX_OK;
	int rc;

	/* journal_mode answers with the mode in force: it must be wal */
	rc = sqlite3_prepare_v2(log->db, "PRAGMA journal_mode = WAL", -1, &st, NULL);
	if (rc == SQLITE_OK && (rc = sqlite3_step(st)) == SQLITE_ROW) {
		const unsigned char *mode = sqlite3_column_text(st, 0);
		if (!mode || strcmp((const char *)mode, "wal") != 0) {
			snprintf(log->error, sizeof log->error,
			         "cannot switch to write-ahead logging (journal mode %s)",
			         mode ? (const char *)mode : "unknown");
			status = SX_EIO;
		}
	} else {
		set_error(log, "cannot switch to write-ahead logging");
		status = status_of(rc) == SX_OK ? SX_EIO : status_of(rc);
	}
	sqlite3_finalize(st);
	if (status != SX_OK)
		return status;
	if ((status = exec(log, "PRAGMA synchronous = FULL", "cannot set synchronous")) != SX_OK)
		return status;
	if ((status = prepare(log, insert_verdict_sql, &log->insert_verdict)) != SX_OK ||
	    (status = prepare(log, insert_ack_sql, &log->insert_ack)) != SX_OK)
		return status;
	return SX_OK;
}

sx_status sx_dlog_open(const char *path, unsigned flags, sx_dlog **out, sx_diag_list *diags)
{
	bool write = flags & SX_DLOG_WRITE, create = write && (flags & SX_DLOG_CREATE);
	int oflags = write ? SQLITE_OPEN_READWRITE : SQLITE_OPEN_READONLY;
	sx_dlog *log;
	struct stat sb;
	bool empty = false;
	sx_status st;
	int rc;

	*out = NULL;
	if (stat(path, &sb) != 0) {
		if (errno == ENOENT && create) {
			oflags |= SQLITE_OPEN_CREATE;
		} else {
			add_diag(diags, path, errno == ENOENT ? SX_ENOTFOUND : SX_EIO,
			         "cannot open the decision log: %s", strerror(errno));
			return errno == ENOENT ? SX_ENOTFOUND : SX_EIO;
		}
	} else if (!S_ISREG(sb.st_mode)) {
		add_diag(diags, path, SX_EINVALID, "not a decision log: not a regular file");
		return SX_EINVALID;
	}
	log = sx_calloc(1, sizeof *log);
	if (!log || !(log->path = sx_strdup(path))) {
		sx_free(log);
		add_diag(diags, path, SX_ENOMEM, "cannot open the decision log: %s",
		         "out of memory");
		return SX_ENOMEM;
	}
	log->writable = write;
	rc = sqlite3_open_v2(path, &log->db, oflags, NULL);
	if (rc != SQLITE_OK) {
		add_diag(diags, path, status_of(rc), "cannot open the decision log: %s",
		         log->db ? sqlite3_errmsg(log->db) : "out of memory");
		st = status_of(rc);
		goto fail;
	}
	sqlite3_extended_result_codes(log->db, 1);
	sqlite3_busy_timeout(log->db, BUSY_TIMEOUT_MS);
	if ((st = inspect(log, diags, &empty)) != SX_OK)
		goto fail;
	if (empty && !create) {
		add_diag(diags, path, SX_EINVALID,
		         "an empty database, not a decision log (syrinx serve makes one)");
		st = SX_EINVALID;
		goto fail;
	}
	if (write) {
		if ((empty && (st = create_schema(log)) != SX_OK) ||
		    (st = setup_writing(log)) != SX_OK) {
			add_diag(diags, path, st, "%s", log->error);
			goto fail;
		}
	}
	if ((st = prepare(log, find_ack_sql, &log->find_ack)) != SX_OK) {
		add_diag(diags, path, st, "%s", log->error);
		goto fail;
	}
	*out = log;
	return SX_OK;
fail:
	sx_dlog_close(log);
	return st;
}

void sx_dlog_close(sx_dlog *log)
{
	if (!log)
		return;
	if (log->in_batch)
		sqlite3_exec(log->db, "ROLLBACK", NULL, NULL, NULL);
	sqlite3_finalize(log->insert_verdict);
	sqlite3_finalize(log->insert_ack);
	sqlite3_finalize(log->find_ack);
	sqlite3_close(log->db);
	sx_free(log->path);
	sx_free(log);
}

const char *sx_dlog_error(const sx_dlog *log)
{
	return log ? log->error : "";
}

/* ---- writing ----------------------------------------------------------- */

sx_status sx_dlog_begin(sx_dlog *log)
{
	sx_status st;
	if (!log->writable) {
		snprintf(log->error, sizeof log->error, "opened for reading only");
		return SX_EINVAL;
	}
	if (log->in_batch) {
		snprintf(log->error, sizeof log->error, "a batch is already open");
		return SX_EINVAL;
	}
	if ((st = exec(log, "BEGIN IMMEDIATE", "cannot start a batch")) != SX_OK)
		return st;
	log->in_batch = true;
	return SX_OK;
}

sx_status sx_dlog_commit(sx_dlog *log)
{
	sx_status st;
	if (!log->in_batch) {
		snprintf(log->error, sizeof log->error, "no batch is open");
		return SX_EINVAL;
	}
	st = exec(log, "COMMIT", "cannot commit the batch");
	if (st != SX_OK)
		sqlite3_exec(log->db, "ROLLBACK", NULL, NULL, NULL);
	log->in_batch = false;
	return st;
}

sx_status sx_dlog_rollback(sx_dlog *log)
{
	sx_status st;
	if (!log->in_batch)
		return SX_OK;
	st = exec(log, "ROLLBACK", "cannot roll back the batch");
	log->in_batch = false;
	return st;
}

static int bind_text(sqlite3_stmt *st, int i, const char *s)
{
	return s ? sqlite3_bind_text(st, i, s, -1, SQLITE_TRANSIENT) : sqlite3_bind_null(st, i);
}

static int bind_time(sqlite3_stmt *st, int i, int64_t ms)
{
	char text[32];
	if (ms == SX_ROW_NO_TIME)
		return sqlite3_bind_null(st, i);
	sx_row_time_text(ms, text, sizeof text);
	return sqlite3_bind_text(st, i, text, -1, SQLITE_TRANSIENT);
}

static int bind_number(sqlite3_stmt *st, int i, double x)
{
	return isnan(x) ? sqlite3_bind_null(st, i) : sqlite3_bind_double(st, i, x);
}

static sx_status insert_row(sx_dlog *log, const sx_verdict_row *r, const char *sender,
                            const char *control_id)
{
	sqlite3_stmt *st = log->insert_verdict;
	int rc = SQLITE_OK;

	if (!r->input_sha256 || strlen(r->input_sha256) != 64 || !r->reason_codes ||
	    !r->reasons_json || !r->mechanisms_json || !r->warnings_json || !r->ruleset ||
	    (unsigned)r->disposition > SX_REJECT) {
		snprintf(log->error, sizeof log->error,
		         "a verdict row without its fingerprint, reasons, disposition or "
		         "ruleset");
		return SX_EINVAL;
	}
	/* parameter numbers are the column positions + 1 */
#define B(expr) (rc == SQLITE_OK ? (rc = (expr)) : rc)
	B(bind_time(st, C_AUDIT_AT + 1, sx_verdict_row_audit_time(r)));
	B(bind_time(st, C_INPUT_RECEIVED_AT + 1, r->input_received_ms));
	B(bind_text(st, C_SENDER + 1, sender));
	B(bind_text(st, C_CONTROL_ID + 1, control_id));
	B(bind_text(st, C_SOURCE + 1, r->source));
	B(bind_text(st, C_SHA256 + 1, r->input_sha256));
	B(bind_text(st, C_SPECIMEN_ID + 1, r->specimen_id));
	B(bind_text(st, C_LOCATION + 1, r->location));
	B(bind_text(st, C_COLLECTOR + 1, r->collector));
	B(bind_text(st, C_TRANSPORT + 1, r->transport));
	B(bind_text(st, C_STORAGE + 1, r->storage));
	B(bind_time(st, C_COLLECTED_AT + 1, r->collected_ms));
	B(bind_time(st, C_RECEIVED_AT + 1, r->received_ms));
	B(bind_time(st, C_ANALYSED_AT + 1, r->analysed_ms));
	B(bind_number(st, C_DELAY_MIN + 1, r->delay_min));
	B(bind_number(st, C_WBC + 1, r->wbc));
	B(bind_number(st, C_PO2 + 1, r->po2_mmhg));
	B(bind_text(st, C_DISPOSITION + 1, sx_disposition_name(r->disposition)));
	B(bind_number(st, C_BIAS + 1, r->bias_mmhg));
	B(bind_number(st, C_BIAS_LOW + 1, r->bias_low_mmhg));
	B(bind_number(st, C_BIAS_HIGH + 1, r->bias_high_mmhg));
	B(bind_text(st, C_REASON_CODES + 1, r->reason_codes));
	B(bind_text(st, C_REASONS_JSON + 1, r->reasons_json));
	B(bind_text(st, C_MECHANISMS_JSON + 1, r->mechanisms_json));
	B(bind_text(st, C_WARNINGS_JSON + 1, r->warnings_json));
	B(bind_text(st, C_RULESET + 1, r->ruleset));
#undef B
	if (rc == SQLITE_OK) {
		rc = sqlite3_step(st);
		if (rc == SQLITE_DONE)
			rc = SQLITE_OK;
	}
	if (rc != SQLITE_OK)
		set_error(log, "cannot add a verdict");
	sqlite3_reset(st);
	sqlite3_clear_bindings(st);
	return status_of(rc);
}

static sx_status need_batch(sx_dlog *log)
{
	if (log->in_batch)
		return SX_OK;
	snprintf(log->error, sizeof log->error, "no batch is open (sx_dlog_begin)");
	return SX_EINVAL;
}

sx_status sx_dlog_add(sx_dlog *log, const sx_verdict_row *row)
{
	sx_status st = need_batch(log);
	return st != SX_OK ? st : insert_row(log, row, row->sender, row->control_id);
}

sx_status sx_dlog_add_message(sx_dlog *log, const sx_dlog_ack *ack, const sx_verdict_row *rows,
                              size_t count, bool *duplicate)
{
	sqlite3_stmt *st = log->insert_ack;
	sx_status status = need_batch(log);
	char sent[32];
	int rc;

	*duplicate = false;
	if (status != SX_OK)
		return status;
	if (!ack->sender || !ack->control_id || !ack->message_sha256 || (!ack->bytes && ack->len)) {
		snprintf(log->error, sizeof log->error,
		         "an ACK without sender, control id or fingerprint");
		return SX_EINVAL;
	}
	if ((status = exec(log, "SAVEPOINT message", "cannot start a message")) != SX_OK)
		return status;
	sx_row_time_text(ack->sent_ms, sent, sizeof sent);
	rc = sqlite3_bind_text(st, 1, ack->sender, -1, SQLITE_STATIC);
	if (rc == SQLITE_OK)
		rc = sqlite3_bind_text(st, 2, ack->control_id, -1, SQLITE_STATIC);
	if (rc == SQLITE_OK)
		rc = sqlite3_bind_text(st, 3, ack->message_sha256, -1, SQLITE_STATIC);
	if (rc == SQLITE_OK)
		rc = sqlite3_bind_blob64(st, 4, ack->len ? ack->bytes : "", ack->len,
		                         SQLITE_STATIC);
	if (rc == SQLITE_OK)
		rc = sqlite3_bind_text(st, 5, sent, -1, SQLITE_STATIC);
	if (rc == SQLITE_OK)
		rc = sqlite3_step(st);
	if (rc == SQLITE_CONSTRAINT_PRIMARYKEY) {
		*duplicate = true;
		rc = SQLITE_DONE;
	} else if (rc != SQLITE_DONE) {
		set_error(log, "cannot add the ACK");
	}
	sqlite3_reset(st);
	sqlite3_clear_bindings(st);
	status = rc == SQLITE_DONE ? SX_OK : status_of(rc) == SX_OK ? SX_EIO : status_of(rc);
	for (size_t i = 0; status == SX_OK && !*duplicate && i < count; i++)
		status = insert_row(log, &rows[i], ack->sender, ack->control_id);
	if (status != SX_OK || *duplicate)
		sqlite3_exec(log->db, "ROLLBACK TO message", NULL, NULL, NULL);
	if (sqlite3_exec(log->db, "RELEASE message", NULL, NULL, NULL) != SQLITE_OK &&
	    status == SX_OK) {
		set_error(log, "cannot finish a message");
		status = SX_EIO;
	}
	return status;
}

sx_status sx_dlog_find_ack(sx_dlog *log, const char *sender, const char *control_id, sx_strbuf *ack,
                           char *message_sha256, bool *found)
{
	sqlite3_stmt *st = log->find_ack;
	sx_status status = SX_OK;
	int rc;

	*found = false;
	rc = sqlite3_bind_text(st, 1, sender, -1, SQLITE_STATIC);
	if (rc == SQLITE_OK)
		rc = sqlite3_bind_text(st, 2, control_id, -1, SQLITE_STATIC);
	if (rc == SQLITE_OK)
		rc = sqlite3_step(st);
	if (rc == SQLITE_ROW) {
		const void *bytes = sqlite3_column_blob(st, 1);
		int len = sqlite3_column_bytes(st, 1);
		const unsigned char *sha = sqlite3_column_text(st, 0);
		if (len > 0)
			sx_strbuf_append(ack, bytes, (size_t)len);
		if (message_sha256)
			snprintf(message_sha256, SX_SHA256_HEX, "%s", sha ? (const char *)sha : "");
		status = sx_strbuf_status(ack);
		*found = status == SX_OK;
	} else if (rc != SQLITE_DONE) {
		set_error(log, "cannot look up the ACK");
		status = status_of(rc) == SX_OK ? SX_EIO : status_of(rc);
	}
	sqlite3_reset(st);
	sqlite3_clear_bindings(st);
	return status;
}

/* ---- reading ----------------------------------------------------------- */

static bool timed(const sx_row_filter *f)
{
	return f->from_ms != SX_ROW_NO_TIME || f->to_ms != SX_ROW_NO_TIME;
}

static sx_status check_filter(sx_dlog *log, const sx_row_filter *f)
{
	const char *texts[4] = {f->location, f->collector, f->transport, f->reason_code};
	for (int i = 0; i < 4; i++)
		if (texts[i] && !texts[i][0]) {
			snprintf(log->error, sizeof log->error, "an empty filter value");
			return SX_EINVAL;
		}
	if (f->disposition > SX_REJECT) {
		snprintf(log->error, sizeof log->error, "no such disposition");
		return SX_EINVAL;
	}
	return SX_OK;
}

/* Bind the filter to parameters ?1..?7 of st; texts must outlive the use. */
static int bind_filter(sqlite3_stmt *st, const sx_row_filter *f, const char *const texts[4])
{
	char from[32] = "", to[32] = "~";
	int rc;
	if (timed(f)) {
		if (f->from_ms != SX_ROW_NO_TIME)
			sx_row_time_text(f->from_ms, from, sizeof from);
		if (f->to_ms != SX_ROW_NO_TIME)
			sx_row_time_text(f->to_ms, to, sizeof to);
		rc = sqlite3_bind_text(st, 1, from, -1, SQLITE_TRANSIENT);
		if (rc == SQLITE_OK)
			rc = sqlite3_bind_text(st, 2, to, -1, SQLITE_TRANSIENT);
	} else {
		rc = sqlite3_bind_null(st, 1);
		if (rc == SQLITE_OK)
			rc = sqlite3_bind_null(st, 2);
	}
	for (int i = 0; i < 3 && rc == SQLITE_OK; i++)
		rc = bind_text(st, 3 + i, texts[i]);
	if (rc == SQLITE_OK)
		rc = bind_text(st, 6,
		               f->disposition >= 0
		                       ? sx_disposition_name((sx_disposition)f->disposition)
		                       : NULL);
	if (rc == SQLITE_OK)
		rc = bind_text(st, 7, texts[3]);
	return rc;
}

sx_status sx_dlog_count(sx_dlog *log, const sx_row_filter *f, uint64_t *count)
{
	const char *texts[4] = {f->location, f->collector, f->transport, f->reason_code};
	sqlite3_stmt *st = NULL;
	sx_status status;
	int rc;

	*count = 0;
	if ((status = check_filter(log, f)) != SX_OK)
		return status;
	rc = sqlite3_prepare_v2(log->db, count_sql[timed(f)], -1, &st, NULL);
	if (rc == SQLITE_OK)
		rc = bind_filter(st, f, texts);
	if (rc == SQLITE_OK && (rc = sqlite3_step(st)) == SQLITE_ROW) {
		*count = (uint64_t)sqlite3_column_int64(st, 0);
		rc = SQLITE_OK;
	}
	if (rc != SQLITE_OK)
		set_error(log, "cannot count the verdicts");
	sqlite3_finalize(st);
	return rc == SQLITE_OK ? SX_OK : status_of(rc) == SX_OK ? SX_EIO : status_of(rc);
}

sx_status sx_dlog_query(sx_dlog *log, const sx_row_filter *f, sx_dlog_cursor **out)
{
	const char *given[4] = {f->location, f->collector, f->transport, f->reason_code};
	sx_dlog_cursor *c;
	sx_status status;
	int rc;

	*out = NULL;
	if ((status = check_filter(log, f)) != SX_OK)
		return status;
	c = sx_calloc(1, sizeof *c);
	if (!c)
		goto nomem;
	c->log = log;
	for (int i = 0; i < 4; i++)
		if (given[i] && !(c->texts[i] = sx_strdup(given[i])))
			goto nomem;
	rc = sqlite3_prepare_v2(log->db, query_sql[timed(f)], -1, &c->stmt, NULL);
	if (rc == SQLITE_OK)
		rc = bind_filter(c->stmt, f, (const char *const *)c->texts);
	if (rc != SQLITE_OK) {
		set_error(log, "cannot query the verdicts");
		sx_dlog_cursor_close(c);
		return status_of(rc) == SX_OK ? SX_EIO : status_of(rc);
	}
	*out = c;
	return SX_OK;
nomem:
	sx_dlog_cursor_close(c);
	snprintf(log->error, sizeof log->error, "out of memory");
	return SX_ENOMEM;
}

static const char *column_text(sqlite3_stmt *st, int i)
{
	return (const char *)sqlite3_column_text(st, i);
}

static double column_number(sqlite3_stmt *st, int i)
{
	return sqlite3_column_type(st, i) == SQLITE_NULL ? NAN : sqlite3_column_double(st, i);
}

/* Read a stored time; the fixed form is read directly, others through the
 * ISO 8601 parser (a hand-edited row). */
static bool column_time(sqlite3_stmt *st, int i, int64_t *ms)
{
	const char *t = column_text(st, i);
	unsigned y, mo, d, h, mi, s, f;
	sx_time parsed;
	*ms = SX_ROW_NO_TIME;
	if (!t)
		return true;
	if (strlen(t) == 24 &&
	    sscanf(t, "%4u-%2u-%2uT%2u:%2u:%2u.%3uZ", &y, &mo, &d, &h, &mi, &s, &f) == 7 &&
	    mo >= 1 && mo <= 12 && d >= 1 && d <= 31 && h < 24 && mi < 60 && s < 60) {
		*ms = ((sx_days_from_civil(y, mo, d) * 24 + h) * 60 + mi) * 60000 + s * 1000 + f;
		return true;
	}
	if (sx_time_parse_iso8601(t, strlen(t), 0, &parsed, NULL) == SX_OK) {
		*ms = parsed.utc_ms;
		return true;
	}
	return false;
}

static bool column_disposition(sqlite3_stmt *st, int i, sx_disposition *d)
{
	const char *t = column_text(st, i);
	for (int k = SX_ACCEPT; t && k <= SX_REJECT; k++)
		if (strcmp(t, sx_disposition_name((sx_disposition)k)) == 0) {
			*d = (sx_disposition)k;
			return true;
		}
	return false;
}

sx_status sx_dlog_next(sx_dlog_cursor *c, sx_verdict_row *r, bool *got)
{
	sqlite3_stmt *st = c->stmt;
	int rc = sqlite3_step(st);
	bool ok;

	*got = false;
	if (rc == SQLITE_DONE)
		return SX_OK;
	if (rc != SQLITE_ROW) {
		set_error(c->log, "cannot read the verdicts");
		return status_of(rc) == SX_OK ? SX_EIO : status_of(rc);
	}
	memset(r, 0, sizeof *r);
	r->id = sqlite3_column_int64(st, C_ID);
	ok = column_time(st, C_AUDIT_AT, &r->audit_ms) &&
	     column_time(st, C_INPUT_RECEIVED_AT, &r->input_received_ms) &&
	     column_time(st, C_COLLECTED_AT, &r->collected_ms) &&
	     column_time(st, C_RECEIVED_AT, &r->received_ms) &&
	     column_time(st, C_ANALYSED_AT, &r->analysed_ms) &&
	     column_disposition(st, C_DISPOSITION, &r->disposition);
	r->sender = column_text(st, C_SENDER);
	r->control_id = column_text(st, C_CONTROL_ID);
	r->source = column_text(st, C_SOURCE);
	r->input_sha256 = column_text(st, C_SHA256);
	r->specimen_id = column_text(st, C_SPECIMEN_ID);
	r->location = column_text(st, C_LOCATION);
	r->collector = column_text(st, C_COLLECTOR);
	r->transport = column_text(st, C_TRANSPORT);
	r->storage = column_text(st, C_STORAGE);
	r->delay_min = column_number(st, C_DELAY_MIN);
	r->wbc = column_number(st, C_WBC);
	r->po2_mmhg = column_number(st, C_PO2);
	r->bias_mmhg = column_number(st, C_BIAS);
	r->bias_low_mmhg = column_number(st, C_BIAS_LOW);
	r->bias_high_mmhg = column_number(st, C_BIAS_HIGH);
	r->reason_codes = column_text(st, C_REASON_CODES);
	r->reasons_json = column_text(st, C_REASONS_JSON);
	r->mechanisms_json = column_text(st, C_MECHANISMS_JSON);
	r->warnings_json = column_text(st, C_WARNINGS_JSON);
	r->ruleset = column_text(st, C_RULESET);
	if (!ok || !r->input_sha256 || !r->reason_codes || !r->reasons_json ||
	    !r->mechanisms_json || !r->warnings_json || !r->ruleset) {
		snprintf(c->log->error, sizeof c->log->error,
		         "verdict row %lld has a malformed time, disposition or a missing "
		         "column",
		         (long long)r->id);
		return SX_EINVALID;
	}
	*got = true;
	return SX_OK;
}

void sx_dlog_cursor_close(sx_dlog_cursor *c)
{
	if (!c)
		return;
	sqlite3_finalize(c->stmt);
	for (int i = 0; i < 5; i++)
		sx_free(c->texts[i]);
	sx_free(c);
}
