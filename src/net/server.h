/* SPDX-License-Identifier: MIT */
/*
 * server.h - the MLLP service: HL7 v2 in, verdicts into the decision log,
 * an acknowledgement out only after the verdict is committed.
 *
 * One process, one poll() loop over the listening socket and every
 * connection. Each turn of the loop reads what has arrived, takes every whole
 * frame in order, screens its specimens and adds them to one batch of the
 * decision log; when the turn's frames are done the batch is committed once
 * (grouped commits keep throughput high under load) and only then are the
 * turn's ACKs written, each frame with one send, in the order the messages
 * came on each connection. A resend of a (sender, MSH-10) already in the log
 * is answered with the ACK stored for it and logged nothing. A commit that
 * fails answers every message of the batch AR: none of them is in the log
 * and the sender should send again.
 *
 * The library never prints: everything worth telling goes to the log
 * callback, one line at a time with a level.
 *
 * Ownership: sx_server_free() closes every socket. The screener and the
 * decision log are the caller's and must outlive the server.
 */
#ifndef SX_SERVER_H
#define SX_SERVER_H

#include <signal.h>
#include <stddef.h>

#include "core/diag.h"
#include "model/screen.h"
#include "store/decision_log.h"

typedef void (*sx_server_log_fn)(void *context, sx_severity level, const char *line);
/* Called when *reload_flag was set: returns a new screener (the server uses it
 * from the next message on) or NULL to keep the current one. */
typedef const sx_screener *(*sx_server_reload_fn)(void *context);

typedef struct sx_server_config {
	const char *host;             /* "127.0.0.1" by default */
	int port;                     /* 2575 by default; 0 picks a free port */
	size_t max_frame;             /* bytes of one message; SX_MLLP_DEFAULT_MAX_FRAME */
	int idle_timeout_s;           /* close a connection silent this long (300) */
	int frame_timeout_s;          /* close a connection stuck inside a frame (30) */
	size_t max_connections;       /* 256 */
	size_t max_batch;             /* messages per commit at most (256) */
	int default_offset_min;       /* for times without offset and no MSH-7 offset */
	sx_server_log_fn log;
	void *log_context;
	volatile sig_atomic_t *stop_flag;   /* set by SIGTERM/SIGINT: finish and return */
	volatile sig_atomic_t *reload_flag; /* set by SIGHUP */
	sx_server_reload_fn reload;
	void *reload_context;
	/* optional: forward a result message per screened specimen to a peer */
	const char *forward_host;
	int forward_port;             /* 0: no forwarding */
} sx_server_config;

typedef struct sx_server sx_server;

void sx_server_config_defaults(sx_server_config *c);

/* Bind and listen. Errors (address in use, bad host) go to diags. */
sx_status sx_server_new(const sx_server_config *config, const sx_screener *screener,
			sx_dlog *log, sx_server **out, sx_diag_list *diags);
/* Serve until *stop_flag is set; then stop accepting, finish the messages
 * already received (screen, commit, ACK), flush, and return SX_OK. */
sx_status sx_server_run(sx_server *server);
/* The port actually bound (useful with port 0). */
int sx_server_port(const sx_server *server);
void sx_server_free(sx_server *server);

/* Counters, for the log line at exit and for tests. */
typedef struct sx_server_counts {
	unsigned long messages, specimens, resends, errors, rejected, commits, oversize,
		connections, forwarded;
} sx_server_counts;
sx_server_counts sx_server_counts_get(const sx_server *server);

#endif
