/* SPDX-License-Identifier: MIT */
/*
 * server.c - the MLLP service loop.
 *
 * A turn: poll; accept; read every readable connection and take its whole
 * frames (at most max_batch messages a turn, the rest stays buffered for the
 * next); for each message screen its specimens and add them, with the ACK
 * that will be sent, to the open batch of the decision log; commit the batch
 * once; queue the ACKs (or, if the commit failed, their AR variants) on their
 * connections in arrival order; write. Connections that are silent too long,
 * or stuck inside a frame, are closed. A stop request closes the listener,
 * finishes what has been received, and returns.
 */
#include "net/server.h"

#include <arpa/inet.h>
#include <errno.h>
#include <fcntl.h>
#include <netdb.h>
#include <netinet/in.h>
#include <netinet/tcp.h>
#include <poll.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>
#include <sys/socket.h>
#include <time.h>
#include <unistd.h>

#include "core/alloc.h"
#include "core/sha256.h"
#include "feed/hl7.h"
#include "net/mllp.h"
#include "report/hl7out.h"
#include "store/verdict_row.h"

#define READ_CHUNK 65536
#define MAX_READS_PER_TURN 16
/* Back-pressure: a connection is not read while whole frames of it wait in its decoder,
 * or while more than this of its ACKs wait to be written (a sender that sends and does
 * not read). Its data then waits in the kernel and TCP slows the sender down, so the
 * memory a connection holds stays bounded (about a turn's reads, a frame, and this). */
#define MAX_PENDING_OUT (1u << 20)
#define MAX_SENDER 256

typedef struct conn {
	int fd;
	unsigned long serial;     /* tells a reused slot from the connection a reply was for */
	char peer[64];
	sx_mllp_decoder *decoder;
	sx_strbuf out;            /* framed ACKs waiting to be written */
	size_t out_pos;
	double last_activity;
	double frame_since;       /* when the current frame began; 0 when none */
	int buffered;             /* whole frames may be waiting in the decoder */
	int peer_closed;
} conn;

typedef struct pending {
	size_t slot;
	unsigned long serial;
	sx_strbuf ack;            /* the ACK to send after a good commit */
	sx_strbuf ack_failed;     /* ... and after a failed one (AR, 207) */
	int logged;               /* in the batch: its fate follows the commit */
	char sender[MAX_SENDER];
	char control_id[SX_HL7_MAX_CONTROL_ID + 1];
	sx_strbuf forward;        /* result messages for the downstream peer */
} pending;

struct sx_server {
	sx_server_config cfg;
	const sx_screener *screener;
	sx_dlog *log;
	int listen_fd;
	int port;
	conn *conns;              /* max_connections slots; fd < 0 when free */
	unsigned long next_serial;
	pending *batch;
	size_t batch_count;
	int batch_open;
	sx_server_counts counts;
	/* forwarding */
	int fwd_fd;
	int fwd_connecting;       /* a non-blocking connect() is under way */
	double fwd_connect_until;
	sx_strbuf fwd_out;
	size_t fwd_pos;
	double fwd_retry_at;
	sx_mllp_decoder *fwd_decoder;
};

static double now_s(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + (double)ts.tv_nsec / 1e9;
}

static int64_t wall_ms(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_REALTIME, &ts);
	return (int64_t)ts.tv_sec * 1000 + ts.tv_nsec / 1000000;
}

__attribute__((format(printf, 3, 4))) static void say(sx_server *s, sx_severity level,
						       const char *fmt, ...)
{
	char line[1024];
	va_list ap;
	if (!s->cfg.log)
		return;
	va_start(ap, fmt);
	vsnprintf(line, sizeof line, fmt, ap);
	va_end(ap);
	s->cfg.log(s->cfg.log_context, level, line);
}

void sx_server_config_defaults(sx_server_config *c)
{
	memset(c, 0, sizeof *c);
	c->host = "127.0.0.1";
	c->port = 2575;
	c->max_frame = SX_MLLP_DEFAULT_MAX_FRAME;
	c->idle_timeout_s = 300;
	c->frame_timeout_s = 30;
	c->max_connections = 256;
	c->max_batch = 256;
}

static int set_nonblocking(int fd)
{
	int flags = fcntl(fd, F_GETFL, 0);
	return flags < 0 ? -1 : fcntl(fd, F_SETFL, flags | O_NONBLOCK);
}

static sx_status listen_on(sx_server *s, sx_diag_list *diags)
{
	struct addrinfo hints, *res = NULL, *ai;
	char port[16];
	int err, one = 1;
	sx_where w = {"serve", 0, 0, NULL, NULL};

	memset(&hints, 0, sizeof hints);
	hints.ai_family = AF_UNSPEC;
	hints.ai_socktype = SOCK_STREAM;
	hints.ai_flags = AI_PASSIVE | AI_NUMERICSERV;
	snprintf(port, sizeof port, "%d", s->cfg.port);
	err = getaddrinfo(s->cfg.host, port, &hints, &res);
	if (err) {
		sx_diag_add(diags, SX_ERROR, SX_EINVAL, &w, "cannot use the address %s:%d: %s",
			    s->cfg.host, s->cfg.port, gai_strerror(err));
		return SX_EINVAL;
	}
	for (ai = res; ai; ai = ai->ai_next) {
		int fd = socket(ai->ai_family, ai->ai_socktype | SOCK_CLOEXEC, ai->ai_protocol);
		if (fd < 0)
			continue;
		setsockopt(fd, SOL_SOCKET, SO_REUSEADDR, &one, sizeof one);
		if (bind(fd, ai->ai_addr, ai->ai_addrlen) == 0 && listen(fd, 128) == 0 &&
		    set_nonblocking(fd) == 0) {
			struct sockaddr_storage ss;
			socklen_t len = sizeof ss;
			s->listen_fd = fd;
			if (getsockname(fd, (struct sockaddr *)&ss, &len) == 0)
				s->port = ntohs(ss.ss_family == AF_INET6
							? ((struct sockaddr_in6 *)&ss)->sin6_port
							: ((struct sockaddr_in *)&ss)->sin_port);
			freeaddrinfo(res);
			return SX_OK;
		}
		err = errno;
		close(fd);
	}
	freeaddrinfo(res);
	sx_diag_add(diags, SX_ERROR, SX_EIO, &w, "cannot listen on %s:%d: %s", s->cfg.host,
		    s->cfg.port, strerror(err ? err : EADDRNOTAVAIL));
	return SX_EIO;
}

sx_status sx_server_new(const sx_server_config *config, const sx_screener *screener,
			sx_dlog *log, sx_server **out, sx_diag_list *diags)
{
	sx_server *s = sx_calloc(1, sizeof *s);
	sx_status st;
	*out = NULL;
	if (!s)
		return SX_ENOMEM;
	s->cfg = *config;
	if (!s->cfg.max_connections)
		s->cfg.max_connections = 256;
	if (!s->cfg.max_batch)
		s->cfg.max_batch = 256;
	if (!s->cfg.max_frame)
		s->cfg.max_frame = SX_MLLP_DEFAULT_MAX_FRAME;
	s->screener = screener;
	s->log = log;
	s->listen_fd = -1;
	s->fwd_fd = -1;
	s->conns = sx_calloc(s->cfg.max_connections, sizeof *s->conns);
	s->batch = sx_calloc(s->cfg.max_batch, sizeof *s->batch);
	if (!s->conns || !s->batch) {
		sx_server_free(s);
		return SX_ENOMEM;
	}
	for (size_t i = 0; i < s->cfg.max_connections; i++)
		s->conns[i].fd = -1;
	for (size_t i = 0; i < s->cfg.max_batch; i++) {
		sx_strbuf_init(&s->batch[i].ack, 0);
		sx_strbuf_init(&s->batch[i].ack_failed, 0);
		sx_strbuf_init(&s->batch[i].forward, 0);
	}
	sx_strbuf_init(&s->fwd_out, 0);
	st = listen_on(s, diags);
	if (st != SX_OK) {
		sx_server_free(s);
		return st;
	}
	*out = s;
	return SX_OK;
}

int sx_server_port(const sx_server *s)
{
	return s->port;
}

sx_server_counts sx_server_counts_get(const sx_server *s)
{
	return s->counts;
}

static void conn_close(sx_server *s, conn *c, const char *why)
{
	if (c->fd < 0)
		return;
	if (why)
		say(s, SX_NOTE, "connection %s closed: %s", c->peer, why);
	close(c->fd);
	c->fd = -1;
	sx_mllp_decoder_free(c->decoder);
	c->decoder = NULL;
	sx_strbuf_free(&c->out);
}

void sx_server_free(sx_server *s)
{
	if (!s)
		return;
	if (s->conns)
		for (size_t i = 0; i < s->cfg.max_connections; i++)
			conn_close(s, &s->conns[i], NULL);
	if (s->batch)
		for (size_t i = 0; i < s->cfg.max_batch; i++) {
			sx_strbuf_free(&s->batch[i].ack);
			sx_strbuf_free(&s->batch[i].ack_failed);
			sx_strbuf_free(&s->batch[i].forward);
		}
	if (s->listen_fd >= 0)
		close(s->listen_fd);
	if (s->fwd_fd >= 0)
		close(s->fwd_fd);
	sx_mllp_decoder_free(s->fwd_decoder);
	sx_strbuf_free(&s->fwd_out);
	sx_free(s->conns);
	sx_free(s->batch);
	sx_free(s);
}

static void accept_all(sx_server *s, double now)
{
	for (;;) {
		struct sockaddr_storage ss;
		socklen_t len = sizeof ss;
		int fd = accept4(s->listen_fd, (struct sockaddr *)&ss, &len,
				 SOCK_NONBLOCK | SOCK_CLOEXEC);
		size_t slot;
		int one = 1;
		conn *c;
		char host[INET6_ADDRSTRLEN] = "?";
		if (fd < 0) {
			if (errno != EAGAIN && errno != EWOULDBLOCK && errno != EINTR)
				say(s, SX_WARNING, "accept failed: %s", strerror(errno));
			return;
		}
		for (slot = 0; slot < s->cfg.max_connections; slot++)
			if (s->conns[slot].fd < 0)
				break;
		if (slot == s->cfg.max_connections) {
			say(s, SX_WARNING, "refused a connection: all %zu connection slots in use",
			    s->cfg.max_connections);
			close(fd);
			continue;
		}
		c = &s->conns[slot];
		memset(c, 0, sizeof *c);
		if (sx_mllp_decoder_new(s->cfg.max_frame, &c->decoder) != SX_OK) {
			say(s, SX_ERROR, "out of memory for a new connection");
			close(fd);
			c->fd = -1;
			continue;
		}
		setsockopt(fd, IPPROTO_TCP, TCP_NODELAY, &one, sizeof one);
		if (ss.ss_family == AF_INET)
			inet_ntop(AF_INET, &((struct sockaddr_in *)&ss)->sin_addr, host, sizeof host);
		else if (ss.ss_family == AF_INET6)
			inet_ntop(AF_INET6, &((struct sockaddr_in6 *)&ss)->sin6_addr, host,
				  sizeof host);
		snprintf(c->peer, sizeof c->peer, "%s:%u", host,
			 ss.ss_family == AF_INET6 ? ntohs(((struct sockaddr_in6 *)&ss)->sin6_port)
						  : ntohs(((struct sockaddr_in *)&ss)->sin_port));
		c->fd = fd;
		c->serial = ++s->next_serial;
		c->last_activity = now;
		sx_strbuf_init(&c->out, 0);
		s->counts.connections++;
		say(s, SX_NOTE, "connection %s opened", c->peer);
	}
}

/* MSH-3^MSH-4 of the received MSH segment, as sent (escapes kept: it is a key). */
static void sender_of(const sx_hl7_result *res, char *out, size_t size)
{
	const char *m = res->msh;
	size_t n = res->msh_len, field = 2, start = 0;
	char sep, comp;
	out[0] = '\0';
	if (!m || n < 5)
		return;
	sep = m[3];
	comp = m[4]; /* MSH-2's first character: the component separator */
	/* MSH-1 is the separator itself: the text after "MSH|" is MSH-2 (field 2 from
	 * byte 4 on), then MSH-3, ... Counting from 1 here would take MSH-4^MSH-5. */
	for (size_t i = 4; i <= n; i++) {
		if (i < n && m[i] != sep)
			continue;
		field++;
		if (field == 3) {
			start = i + 1;
		} else if (field > 3 && (field == 5 || i == n)) {
			/* MSH-3 and MSH-4 (or MSH-3 alone when the segment ends there) */
			size_t len = i - start;
			if (len >= size)
				len = size - 1;
			memcpy(out, m + start, len);
			out[len] = '\0';
			for (size_t k = 0; k < len; k++)
				if (out[k] == sep)
					out[k] = comp; /* MSH-3 and MSH-4 joined by ^ */
			return;
		}
	}
}

static void fingerprint(const void *data, size_t len, char hex[SX_SHA256_HEX])
{
	unsigned char digest[SX_SHA256_BYTES];
	sx_sha256_digest(data, len, digest);
	sx_sha256_hex(digest, hex);
}

/* The AR variant of a received message's ACK: the decision log could not be written. */
static void failed_ack(sx_hl7_result *res, const sx_hl7_ack_options *ao, sx_strbuf *out)
{
	res->ack_code = SX_HL7_AR;
	if (res->issue_count < SX_HL7_MAX_ISSUES) {
		sx_hl7_issue *is = &res->issues[res->issue_count++];
		memset(is, 0, sizeof *is);
		is->code = 207;
		is->severity = 'E';
		snprintf(is->text, sizeof is->text,
			 "the verdict could not be stored in the decision log; send the message "
			 "again");
	}
	sx_hl7_write_ack(out, res, ao);
}

static int open_batch(sx_server *s)
{
	if (s->batch_open)
		return 1;
	if (sx_dlog_begin(s->log) != SX_OK) {
		say(s, SX_ERROR, "decision log: cannot start a batch: %s", sx_dlog_error(s->log));
		return 0;
	}
	s->batch_open = 1;
	return 1;
}

/* Screen the records of a message and add them with its ACK to the batch. */
static sx_status log_message(sx_server *s, sx_hl7_result *res, const char *data, size_t len,
			     pending *p, int64_t received_ms)
{
	sx_row_builder *builders = NULL;
	sx_verdict_row *rows = NULL;
	sx_verdict *verdicts = NULL;
	size_t n = 0;
	bool duplicate = false;
	char hex[SX_SHA256_HEX];
	sx_dlog_ack ack;
	sx_row_origin origin;
	sx_status st = SX_OK;

	if (res->record_count) {
		builders = sx_calloc(res->record_count, sizeof *builders);
		rows = sx_calloc(res->record_count, sizeof *rows);
		verdicts = sx_calloc(res->record_count, sizeof *verdicts);
		if (!builders || !rows || !verdicts) {
			st = SX_ENOMEM;
			goto out;
		}
	}
	memset(&origin, 0, sizeof origin);
	origin.sender = p->sender;
	origin.control_id = p->control_id;
	origin.input = data;
	origin.input_len = len;
	origin.input_received_ms = received_ms;
	origin.ruleset = sx_screener_version(s->screener);
	for (size_t i = 0; i < res->record_count; i++) {
		sx_hl7_record *r = &res->records[i];
		sx_verdict *v = &verdicts[n];
		if (r->input_errors)
			continue;
		if (sx_screener_run(s->screener, &r->specimen, v) != SX_OK) {
			say(s, SX_ERROR, "message %s: a specimen could not be screened",
			    p->control_id);
			continue;
		}
		for (size_t k = 0; k < r->diags.count; k++)
			if (r->diags.items[k].severity == SX_WARNING)
				sx_verdict_add_warning(v, "%s", r->diags.items[k].message);
		sx_row_builder_init(&builders[n]);
		st = sx_verdict_row_build(&builders[n], &r->specimen, v, &origin);
		if (st != SX_OK) {
			sx_row_builder_free(&builders[n]);
			goto out;
		}
		rows[n] = builders[n].row;
		if (s->cfg.forward_port > 0) {
			sx_report_item item = {&r->specimen, v, NULL, 0};
			sx_hl7_result_options ho = {0};
			sx_strbuf msg;
			sx_strbuf_init(&msg, 0);
			sx_report_hl7(&msg, &item, &ho);
			sx_mllp_wrap(&p->forward, (const uint8_t *)msg.data, msg.len);
			sx_strbuf_free(&msg);
		}
		n++;
	}
	fingerprint(data, len, hex);
	ack.sender = p->sender;
	ack.control_id = p->control_id;
	ack.message_sha256 = hex;
	ack.bytes = p->ack.data;
	ack.len = p->ack.len;
	ack.sent_ms = wall_ms();
	st = sx_dlog_add_message(s->log, &ack, rows, n, &duplicate);
	if (st == SX_OK && !duplicate) {
		p->logged = 1;
		s->counts.specimens += n;
	}
out:
	for (size_t i = 0; i < n; i++)
		sx_row_builder_free(&builders[i]);
	sx_free(builders);
	sx_free(rows);
	sx_free(verdicts);
	return st;
}

static pending *next_pending(sx_server *s, size_t slot)
{
	pending *p = &s->batch[s->batch_count++];
	p->slot = slot;
	p->serial = s->conns[slot].serial;
	p->logged = 0;
	p->sender[0] = p->control_id[0] = '\0';
	sx_strbuf_reset(&p->ack);
	sx_strbuf_reset(&p->ack_failed);
	sx_strbuf_reset(&p->forward);
	return p;
}

static void take_message(sx_server *s, size_t slot, const uint8_t *data, size_t len)
{
	pending *p = next_pending(s, slot);
	sx_hl7_options ho = {s->cfg.default_offset_min, s->conns[slot].peer, sx_screener_map_code,
			     (void *)s->screener};
	sx_hl7_ack_options ao = {0};
	sx_hl7_result res;
	int64_t received = wall_ms();
	sx_time now = {received, 0, SX_PREC_SECOND, true};
	bool found = false;

	ao.now = &now;
	s->counts.messages++;
	sx_hl7_result_init(&res);
	if (sx_hl7_receive((const char *)data, len, &ho, &ao, &res, &p->ack) != SX_OK) {
		say(s, SX_ERROR, "out of memory reading a message from %s", s->conns[slot].peer);
		sx_hl7_result_clear(&res);
		sx_strbuf_reset(&p->ack);
		res.ack_code = SX_HL7_AR;
		failed_ack(&res, &ao, &p->ack);
		return;
	}
	if (res.ack_code != SX_HL7_AA)
		s->counts.errors++;
	for (size_t i = 0; i < res.diags.count; i++)
		say(s, res.diags.items[i].severity, "%s: %s", s->conns[slot].peer,
		    res.diags.items[i].message);
	sender_of(&res, p->sender, sizeof p->sender);
	if (!res.has_control_id) {
		/* nothing to key it by: answered, not logged */
		sx_hl7_result_clear(&res);
		return;
	}
	snprintf(p->control_id, sizeof p->control_id, "%s", res.control_id);
	/* a resend: within this batch, or already in the log */
	for (size_t i = 0; i + 1 < s->batch_count; i++) {
		pending *q = &s->batch[i];
		if (q->control_id[0] && strcmp(q->control_id, p->control_id) == 0 &&
		    strcmp(q->sender, p->sender) == 0) {
			sx_strbuf_reset(&p->ack);
			sx_strbuf_append(&p->ack, q->ack.data, q->ack.len);
			sx_strbuf_append(&p->ack_failed, q->ack_failed.data, q->ack_failed.len);
			p->logged = q->logged;
			s->counts.resends++;
			sx_hl7_result_clear(&res);
			return;
		}
	}
	{
		sx_strbuf stored;
		char stored_sha[SX_SHA256_HEX], sha[SX_SHA256_HEX];
		sx_strbuf_init(&stored, 0);
		stored_sha[0] = '\0';
		if (sx_dlog_find_ack(s->log, p->sender, p->control_id, &stored, stored_sha,
		                     &found) == SX_OK &&
		    found) {
			sx_strbuf_reset(&p->ack);
			sx_strbuf_append(&p->ack, stored.data, stored.len);
			s->counts.resends++;
			fingerprint(data, len, sha);
			if (strcmp(sha, stored_sha) == 0)
				say(s, SX_NOTE,
				    "message %s from %s was sent before: answered with "
				    "the ACK it had, not logged again",
				    p->control_id, p->sender);
			else
				say(s, SX_WARNING,
				    "message %s from %s reuses the control id of a "
				    "different message already logged: answered with "
				    "that message's ACK, not screened or logged; the "
				    "sender should use a new MSH-10",
				    p->control_id, p->sender);
		}
		sx_strbuf_free(&stored);
	}
	if (!found) {
		failed_ack(&res, &ao, &p->ack_failed);
		if (open_batch(s)) {
			sx_status st = log_message(s, &res, (const char *)data, len, p, received);
			if (st != SX_OK) {
				say(s, SX_ERROR, "message %s: cannot add to the decision log: %s",
				    p->control_id, sx_dlog_error(s->log));
				sx_strbuf_reset(&p->ack);
				sx_strbuf_append(&p->ack, p->ack_failed.data, p->ack_failed.len);
			}
		} else {
			sx_strbuf_reset(&p->ack);
			sx_strbuf_append(&p->ack, p->ack_failed.data, p->ack_failed.len);
		}
	}
	sx_hl7_result_clear(&res);
}

static void take_oversize(sx_server *s, size_t slot, size_t len)
{
	pending *p = next_pending(s, slot);
	sx_hl7_ack_options ao = {0};
	sx_hl7_result res;
	sx_time now = {wall_ms(), 0, SX_PREC_SECOND, true};
	ao.now = &now;
	s->counts.oversize++;
	s->counts.rejected++;
	say(s, SX_WARNING, "%s: a frame of %zu bytes exceeds the limit of %zu; answered AR",
	    s->conns[slot].peer, len, s->cfg.max_frame);
	sx_hl7_result_init(&res);
	res.ack_code = SX_HL7_AR;
	res.issue_count = 1;
	memset(&res.issues[0], 0, sizeof res.issues[0]);
	res.issues[0].code = 207;
	res.issues[0].severity = 'E';
	snprintf(res.issues[0].text, sizeof res.issues[0].text,
		 "the message of %zu bytes exceeds the limit of %zu bytes and was not read", len,
		 s->cfg.max_frame);
	sx_hl7_write_ack(&p->ack, &res, &ao);
	sx_hl7_result_clear(&res);
}

/* Take the whole frames waiting on a connection, up to the batch's room. */
static void take_frames(sx_server *s, size_t slot, double now)
{
	conn *c = &s->conns[slot];
	const uint8_t *msg;
	size_t len;
	sx_mllp_event e;
	int ended = 0;
	c->buffered = 0;
	while (s->batch_count < s->cfg.max_batch) {
		e = sx_mllp_next(c->decoder, &msg, &len);
		if (e == SX_MLLP_NONE)
			break;
		ended = 1;
		if (e == SX_MLLP_FRAME)
			take_message(s, slot, msg, len);
		else
			take_oversize(s, slot, len);
	}
	if (s->batch_count >= s->cfg.max_batch)
		c->buffered = 1; /* more may be waiting: next turn */
	/* The stalled-frame clock runs from the start of the frame now open. When a frame
	 * ended in these bytes, the open one (if any) began in them too: start again, or a
	 * sender whose frames keep straddling reads would be cut off as stalled. */
	if (!sx_mllp_in_frame(c->decoder))
		c->frame_since = 0;
	else if (ended || !c->frame_since)
		c->frame_since = now;
}

static void read_conn(sx_server *s, size_t slot, double now)
{
	conn *c = &s->conns[slot];
	uint8_t buf[READ_CHUNK];
	for (int k = 0; k < MAX_READS_PER_TURN; k++) {
		ssize_t n = recv(c->fd, buf, sizeof buf, 0);
		if (n > 0) {
			c->last_activity = now;
			if (sx_mllp_push(c->decoder, buf, (size_t)n) != SX_OK) {
				conn_close(s, c, "out of memory");
				return;
			}
			if ((size_t)n < sizeof buf)
				break;
			continue;
		}
		if (n == 0) {
			c->peer_closed = 1;
			break;
		}
		if (errno == EINTR)
			continue;
		if (errno != EAGAIN && errno != EWOULDBLOCK) {
			conn_close(s, c, strerror(errno));
			return;
		}
		break;
	}
	take_frames(s, slot, now);
}

static void flush_conn(sx_server *s, conn *c)
{
	while (c->fd >= 0 && c->out_pos < c->out.len) {
		ssize_t n = send(c->fd, c->out.data + c->out_pos, c->out.len - c->out_pos,
				 MSG_NOSIGNAL);
		if (n > 0) {
			c->out_pos += (size_t)n;
			continue;
		}
		if (n < 0 && errno == EINTR)
			continue;
		if (n < 0 && (errno == EAGAIN || errno == EWOULDBLOCK))
			return;
		conn_close(s, c, n < 0 ? strerror(errno) : "send failed");
		return;
	}
	if (c->fd >= 0 && c->out_pos == c->out.len) {
		sx_strbuf_reset(&c->out);
		c->out_pos = 0;
	}
}

/* Queue one ACK frame on its connection and try to write it at once: one send per frame
 * when the socket has room. */
static void queue_ack(sx_server *s, const pending *p, const sx_strbuf *ack)
{
	conn *c = &s->conns[p->slot];
	if (c->fd < 0 || c->serial != p->serial)
		return; /* the connection is gone: the sender will resend, and get this ACK */
	if (c->out_pos == c->out.len) {
		sx_strbuf_reset(&c->out);
		c->out_pos = 0;
	}
	sx_mllp_wrap(&c->out, (const uint8_t *)ack->data, ack->len);
	flush_conn(s, c);
}

static void forward(sx_server *s, const pending *p);

/* Commit the turn's batch, then answer its messages. */
static void finish_batch(sx_server *s)
{
	int committed = 1;
	if (s->batch_open) {
		if (sx_dlog_commit(s->log) != SX_OK) {
			committed = 0;
			say(s, SX_ERROR, "decision log: the commit failed (%s); %zu messages are "
					 "answered AR and must be sent again",
			    sx_dlog_error(s->log), s->batch_count);
		} else {
			s->counts.commits++;
		}
		s->batch_open = 0;
	}
	for (size_t i = 0; i < s->batch_count; i++) {
		const pending *p = &s->batch[i];
		if (p->logged && !committed) {
			s->counts.rejected++;
			queue_ack(s, p, &p->ack_failed);
		} else {
			queue_ack(s, p, &p->ack);
			if (p->logged && p->forward.len)
				forward(s, p);
		}
	}
	s->batch_count = 0;
}

/* ---- forwarding result messages to a downstream peer ------------------------- */

static void forward_failed(sx_server *s, double now, const char *why)
{
	if (s->fwd_fd >= 0)
		close(s->fwd_fd);
	s->fwd_fd = -1;
	s->fwd_connecting = 0;
	s->fwd_retry_at = now + 5;
	say(s, SX_WARNING, "cannot connect to the forwarding peer %s:%d (%s); retrying in 5 s",
	    s->cfg.forward_host, s->cfg.forward_port, why);
}

static void forward_connected(sx_server *s)
{
	s->fwd_connecting = 0;
	if (!s->fwd_decoder)
		sx_mllp_decoder_new(0, &s->fwd_decoder);
	say(s, SX_NOTE, "forwarding to %s:%d", s->cfg.forward_host, s->cfg.forward_port);
}

/*
 * Connect to the forwarding peer without ever blocking the loop: a peer that does not
 * answer (a firewall that drops, a full accept queue) would otherwise hold every MLLP
 * connection still for the kernel's connect timeout, minutes. The connect runs in the
 * background; each turn looks whether it is done, and gives up after 10 s.
 */
static void forward_connect(sx_server *s, double now)
{
	struct addrinfo hints, *res = NULL;
	char port[16];
	int fd;
	if (s->fwd_connecting) {
		struct pollfd pfd = {s->fwd_fd, POLLOUT, 0};
		int err = 0;
		socklen_t len = sizeof err;
		if (poll(&pfd, 1, 0) > 0) {
			if (getsockopt(s->fwd_fd, SOL_SOCKET, SO_ERROR, &err, &len) != 0)
				err = errno;
			if (err)
				forward_failed(s, now, strerror(err));
			else
				forward_connected(s);
		} else if (now > s->fwd_connect_until) {
			forward_failed(s, now, "no answer in 10 s");
		}
		return;
	}
	if (s->fwd_fd >= 0 || s->cfg.forward_port <= 0 || now < s->fwd_retry_at)
		return;
	memset(&hints, 0, sizeof hints);
	hints.ai_socktype = SOCK_STREAM;
	snprintf(port, sizeof port, "%d", s->cfg.forward_port);
	if (getaddrinfo(s->cfg.forward_host ? s->cfg.forward_host : "127.0.0.1", port, &hints,
			&res) != 0 ||
	    !res) {
		s->fwd_retry_at = now + 5;
		return;
	}
	fd = socket(res->ai_family, SOCK_STREAM | SOCK_CLOEXEC | SOCK_NONBLOCK, 0);
	if (fd < 0) {
		forward_failed(s, now, strerror(errno));
	} else if (connect(fd, res->ai_addr, res->ai_addrlen) == 0) {
		s->fwd_fd = fd;
		forward_connected(s);
	} else if (errno == EINPROGRESS) {
		s->fwd_fd = fd;
		s->fwd_connecting = 1;
		s->fwd_connect_until = now + 10;
	} else {
		s->fwd_fd = fd;
		forward_failed(s, now, strerror(errno));
	}
	freeaddrinfo(res);
}

static void forward(sx_server *s, const pending *p)
{
	/* bounded: results are in the decision log whatever happens to the copy sent on */
	if (s->fwd_out.len - s->fwd_pos + p->forward.len > (64u << 20)) {
		say(s, SX_WARNING, "forwarding queue full: results of message %s not forwarded "
				   "(they are in the decision log)",
		    p->control_id);
		return;
	}
	sx_strbuf_append(&s->fwd_out, p->forward.data, p->forward.len);
	s->counts.forwarded++;
}

static void forward_flush(sx_server *s)
{
	uint8_t buf[4096];
	const uint8_t *msg;
	size_t len;
	if (s->fwd_connecting)
		return;
	while (s->fwd_fd >= 0 && s->fwd_pos < s->fwd_out.len) {
		ssize_t n = send(s->fwd_fd, s->fwd_out.data + s->fwd_pos,
				 s->fwd_out.len - s->fwd_pos, MSG_NOSIGNAL);
		if (n > 0) {
			s->fwd_pos += (size_t)n;
			continue;
		}
		if (n < 0 && (errno == EAGAIN || errno == EINTR))
			break;
		say(s, SX_WARNING, "forwarding peer lost; reconnecting");
		close(s->fwd_fd);
		s->fwd_fd = -1;
		break;
	}
	if (s->fwd_pos == s->fwd_out.len) {
		sx_strbuf_reset(&s->fwd_out);
		s->fwd_pos = 0;
	}
	/* read and discard the peer's ACKs, saying so when one is not AA */
	while (s->fwd_fd >= 0) {
		ssize_t n = recv(s->fwd_fd, buf, sizeof buf, 0);
		if (n <= 0) {
			if (n == 0) {
				close(s->fwd_fd);
				s->fwd_fd = -1;
			}
			break;
		}
		if (s->fwd_decoder && sx_mllp_push(s->fwd_decoder, buf, (size_t)n) == SX_OK)
			while (sx_mllp_next(s->fwd_decoder, &msg, &len) == SX_MLLP_FRAME)
				if (len && !memmem(msg, len, "MSA|AA", 6) &&
				    !memmem(msg, len, "MSA|CA", 6))
					say(s, SX_WARNING, "the forwarding peer did not accept a "
							   "result message");
	}
}

/* ---- the loop -------------------------------------------------------------------- */

static void check_timeouts(sx_server *s, double now)
{
	for (size_t i = 0; i < s->cfg.max_connections; i++) {
		conn *c = &s->conns[i];
		if (c->fd < 0)
			continue;
		if (c->frame_since && s->cfg.frame_timeout_s > 0 &&
		    now - c->frame_since > s->cfg.frame_timeout_s)
			conn_close(s, c, "a frame started and did not end in time");
		else if (s->cfg.idle_timeout_s > 0 && now - c->last_activity > s->cfg.idle_timeout_s)
			conn_close(s, c, "idle");
		else if (c->peer_closed && c->out_pos == c->out.len && !c->buffered)
			conn_close(s, c, "closed by the peer");
	}
}

static void maybe_reload(sx_server *s)
{
	const sx_screener *fresh;
	if (!s->cfg.reload_flag || !*s->cfg.reload_flag)
		return;
	*s->cfg.reload_flag = 0;
	if (!s->cfg.reload)
		return;
	fresh = s->cfg.reload(s->cfg.reload_context);
	if (fresh) {
		s->screener = fresh;
		say(s, SX_NOTE, "ruleset reloaded: %s", sx_screener_version(fresh));
	}
}

static int one_turn(sx_server *s, int accepting, int timeout_ms)
{
	struct pollfd *fds;
	size_t *slots, n = 0, cap = s->cfg.max_connections + 2;
	int any_buffered = 0, r;
	double now;

	fds = sx_calloc(cap, sizeof *fds);
	slots = sx_calloc(cap, sizeof *slots);
	if (!fds || !slots) {
		sx_free(fds);
		sx_free(slots);
		return -1;
	}
	if (accepting && s->listen_fd >= 0) {
		fds[n].fd = s->listen_fd;
		fds[n].events = POLLIN;
		slots[n++] = (size_t)-1;
	}
	if (s->fwd_fd >= 0) {
		fds[n].fd = s->fwd_fd;
		fds[n].events = s->fwd_connecting ? POLLOUT
						  : POLLIN | (s->fwd_pos < s->fwd_out.len ? POLLOUT : 0);
		slots[n++] = (size_t)-2;
	}
	for (size_t i = 0; i < s->cfg.max_connections; i++) {
		conn *c = &s->conns[i];
		int reading;
		if (c->fd < 0)
			continue;
		reading = !c->peer_closed && !c->buffered &&
			  c->out.len - c->out_pos <= MAX_PENDING_OUT;
		any_buffered |= c->buffered;
		fds[n].fd = c->fd;
		fds[n].events = (reading ? POLLIN : 0) | (c->out_pos < c->out.len ? POLLOUT : 0);
		slots[n++] = i;
	}
	r = poll(fds, n, any_buffered ? 0 : timeout_ms);
	now = now_s();
	if (r < 0 && errno != EINTR)
		say(s, SX_ERROR, "poll failed: %s", strerror(errno));
	for (size_t k = 0; r > 0 && k < n; k++) {
		if (!fds[k].revents)
			continue;
		if (slots[k] == (size_t)-1)
			accept_all(s, now);
		else if (slots[k] != (size_t)-2 && (fds[k].revents & (POLLIN | POLLHUP | POLLERR)))
			read_conn(s, slots[k], now);
		else if (slots[k] != (size_t)-2 && (fds[k].revents & POLLOUT))
			flush_conn(s, &s->conns[slots[k]]);
	}
	for (size_t i = 0; i < s->cfg.max_connections; i++)
		if (s->conns[i].fd >= 0 && s->conns[i].buffered && s->batch_count < s->cfg.max_batch)
			take_frames(s, i, now);
	finish_batch(s);
	forward_connect(s, now);
	forward_flush(s);
	check_timeouts(s, now);
	sx_free(fds);
	sx_free(slots);
	return r;
}

sx_status sx_server_run(sx_server *s)
{
	say(s, SX_NOTE, "listening on %s:%d (decision log open; ruleset %s)", s->cfg.host,
	    s->port, sx_screener_version(s->screener));
	while (!(s->cfg.stop_flag && *s->cfg.stop_flag)) {
		maybe_reload(s);
		if (one_turn(s, 1, 1000) < 0 && errno == ENOMEM)
			return SX_ENOMEM;
	}
	/* Stop: no new connections; answer what has arrived; flush for a few seconds. */
	if (s->listen_fd >= 0) {
		close(s->listen_fd);
		s->listen_fd = -1;
	}
	say(s, SX_NOTE, "stopping: finishing the messages already received");
	{
		double until = now_s() + 5;
		for (;;) {
			int waiting = 0;
			one_turn(s, 0, 100);
			for (size_t i = 0; i < s->cfg.max_connections; i++)
				if (s->conns[i].fd >= 0 &&
				    (s->conns[i].buffered || s->conns[i].out_pos < s->conns[i].out.len))
					waiting = 1;
			if (!waiting || now_s() > until)
				break;
		}
	}
	say(s, SX_NOTE,
	    "stopped: %lu messages (%lu specimens logged, %lu resends, %lu with errors, %lu "
	    "rejected), %lu commits, %lu connections",
	    s->counts.messages, s->counts.specimens, s->counts.resends, s->counts.errors,
	    s->counts.rejected, s->counts.commits, s->counts.connections);
	return SX_OK;
}
