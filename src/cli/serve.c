/* SPDX-License-Identifier: MIT */
/*
 * serve.c - `syrinx serve`: the MLLP service on a live HL7 feed.
 *
 * Options, the decision log, signals and log lines; the loop itself is the
 * library's (net/server.c). Log lines go to standard error with a level; under
 * systemd (JOURNAL_STREAM set) they carry the <N> priority prefix journald
 * reads.
 */
#include <errno.h>
#include <getopt.h>
#include <limits.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli/cli.h"
#include "core/sxtime.h"
#include "model/screen.h"
#include "net/server.h"
#include "store/decision_log.h"

static const char serve_usage[] =
	"usage: syrinx serve --db FILE [options]\n"
	"\n"
	"Listens for HL7 v2 messages over MLLP, screens every specimen, writes each\n"
	"verdict to the decision log (SQLite) and answers each message with an ACK\n"
	"only after its verdicts are committed. A resend of a message (the same\n"
	"MSH-10 from the same sender) gets the original ACK and is not logged twice.\n"
	"\n"
	"options:\n"
	"  --db FILE              the decision log; created when missing (required)\n"
	"  --ruleset DIR          the ruleset (default: the shipped rulesets/default);\n"
	"                         SIGHUP reads it again\n"
	"  --listen HOST:PORT     where to listen (default 127.0.0.1:2575; a wider\n"
	"                         address such as 0.0.0.0:2575 only when you say so)\n"
	"  --forward HOST:PORT    also send one result message (ORU^R01) per screened\n"
	"                         specimen to this MLLP peer\n"
	"  --utc-offset OFFSET    offset for times with none, when MSH-7 has none\n"
	"                         (default: the ruleset's site.utc_offset)\n"
	"  --max-frame BYTES      largest message accepted (default 1048576); a larger\n"
	"                         one is answered AR\n"
	"  --idle-timeout SEC     close a silent connection after this (default 300)\n"
	"  --frame-timeout SEC    close a connection stuck inside a frame (default 30)\n"
	"  --batch N              messages per commit at most (default 256)\n"
	"  -h, --help             this text\n"
	"\n"
	"signals: SIGTERM or SIGINT stops accepting, finishes the messages already\n"
	"received and exits 0; SIGHUP reloads the policy (a bad one is refused and\n"
	"the old one kept).\n"
	"\n"
	"exit status: 0 stopped cleanly; 1 the log or the address could not be used;\n"
	"2 wrong command line; 4 internal error.\n"
	"\n"
	"example:\n"
	"  syrinx serve --db /var/lib/syrinx/decisions.sqlite --listen 127.0.0.1:2575\n";

static volatile sig_atomic_t stop_requested;
static volatile sig_atomic_t reload_requested;

static void on_stop(int sig)
{
	(void)sig;
	stop_requested = 1;
}

static void on_reload(int sig)
{
	(void)sig;
	reload_requested = 1;
}

static void log_line(void *context, sx_severity level, const char *line)
{
	int journal = context != NULL;
	if (journal)
		fprintf(stderr, "<%d>%s\n", level == SX_ERROR ? 3 : level == SX_WARNING ? 4 : 6,
			line);
	else
		fprintf(stderr, "%s: %s\n", level == SX_NOTE ? "info" : sx_severity_name(level),
			line);
	fflush(stderr);
}

static int parse_host_port(const char *text, char *host, size_t size, int *port)
{
	const char *colon = strrchr(text, ':');
	char *end;
	long p;
	size_t n;
	if (!colon || colon == text)
		return -1;
	n = (size_t)(colon - text);
	if (text[0] == '[' && colon[-1] == ']') { /* [::1]:2575 */
		text++;
		n -= 2;
	}
	if (n >= size)
		return -1;
	memcpy(host, text, n);
	host[n] = '\0';
	p = strtol(colon + 1, &end, 10);
	if (*end || p < 0 || p > 65535)
		return -1;
	*port = (int)p;
	return 0;
}

static int positive(const char *text, long max, long *out)
{
	char *end;
	long v = strtol(text, &end, 10);
	if (*end || v <= 0 || v > max)
		return -1;
	*out = v;
	return 0;
}

typedef struct reload_state {
	const char *ruleset;       /* NULL: the shipped default */
	void *journal;
	sx_screener *current;      /* owned */
	sx_screener *retired[8];   /* kept until exit: a turn may still be using one */
	size_t retired_count;
} reload_state;

/* SIGHUP: read the ruleset again; a ruleset with errors is refused (its errors are
 * logged) and the one in use is kept. */
static const sx_screener *reload_policy(void *context)
{
	reload_state *r = context;
	sx_screener *fresh = NULL;
	log_line(r->journal, SX_NOTE, "SIGHUP: reading the ruleset again");
	if (sx_cli_load_screener("serve", r->ruleset, &fresh) != SX_EXIT_OK) {
		log_line(r->journal, SX_ERROR,
			 "the new ruleset was refused (errors above); the one in use is kept");
		return NULL;
	}
	if (r->retired_count == sizeof r->retired / sizeof r->retired[0]) {
		sx_screener_free(r->retired[0]);
		memmove(r->retired, r->retired + 1, sizeof r->retired - sizeof r->retired[0]);
		r->retired_count--;
	}
	r->retired[r->retired_count++] = r->current;
	r->current = fresh;
	return fresh;
}

int sx_cmd_serve(int argc, char **argv)
{
	static const struct option longopts[] = {
		{"db", required_argument, NULL, 'd'},
		{"ruleset", required_argument, NULL, 'r'},
		{"listen", required_argument, NULL, 'l'},
		{"forward", required_argument, NULL, 'f'},
		{"utc-offset", required_argument, NULL, 'z'},
		{"max-frame", required_argument, NULL, 'm'},
		{"idle-timeout", required_argument, NULL, 'i'},
		{"frame-timeout", required_argument, NULL, 't'},
		{"batch", required_argument, NULL, 'b'},
		{"help", no_argument, NULL, 'h'},
		{NULL, 0, NULL, 0},
	};
	static char host[256] = "127.0.0.1", fwd_host[256];
	const char *db = NULL;
	sx_server_config cfg;
	sx_diag_list diags;
	sx_dlog *log = NULL;
	sx_server *server = NULL;
	reload_state rl;
	int offset_given = 0;
	struct sigaction sa;
	int c, status = SX_EXIT_OK, port = 2575;
	long v;
	void *journal = getenv("JOURNAL_STREAM") ? (void *)1 : NULL;

	sx_server_config_defaults(&cfg);
	memset(&rl, 0, sizeof rl);
	optind = 1;
	while ((c = getopt_long(argc, argv, "h", longopts, NULL)) != -1) {
		switch (c) {
		case 'd':
			db = optarg;
			break;
		case 'r':
			rl.ruleset = optarg;
			break;
		case 'l':
			if (parse_host_port(optarg, host, sizeof host, &port) != 0) {
				fprintf(stderr, "syrinx serve: --listen takes HOST:PORT such as "
						"127.0.0.1:2575, not '%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			break;
		case 'f':
			if (parse_host_port(optarg, fwd_host, sizeof fwd_host, &cfg.forward_port) !=
				    0 ||
			    cfg.forward_port == 0) {
				fprintf(stderr, "syrinx serve: --forward takes HOST:PORT, not '%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			cfg.forward_host = fwd_host;
			break;
		case 'z':
			offset_given = 1;
			if (sx_parse_offset(optarg, &cfg.default_offset_min) != SX_OK) {
				fprintf(stderr, "syrinx serve: --utc-offset takes an offset such as "
						"+01:00, not '%s'\n",
					optarg);
				return SX_EXIT_USAGE;
			}
			break;
		case 'm':
		case 'i':
		case 't':
		case 'b':
			if (positive(optarg, c == 'm' ? (1L << 30) : 1000000, &v) != 0) {
				fprintf(stderr, "syrinx serve: --%s takes a positive whole number, not "
						"'%s'\n",
					c == 'm' ? "max-frame" : c == 'i' ? "idle-timeout"
							  : c == 't' ? "frame-timeout" : "batch",
					optarg);
				return SX_EXIT_USAGE;
			}
			if (c == 'm')
				cfg.max_frame = (size_t)v;
			else if (c == 'i')
				cfg.idle_timeout_s = (int)v;
			else if (c == 't')
				cfg.frame_timeout_s = (int)v;
			else
				cfg.max_batch = (size_t)v;
			break;
		case 'h':
			fputs(serve_usage, stdout);
			return SX_EXIT_OK;
		default:
			fputs("syrinx serve: see 'syrinx serve --help'\n", stderr);
			return SX_EXIT_USAGE;
		}
	}
	if (!db) {
		fputs("syrinx serve: say where the decision log is with --db FILE\n", stderr);
		return SX_EXIT_USAGE;
	}
	if (optind < argc) {
		fprintf(stderr, "syrinx serve: unexpected argument '%s'\n", argv[optind]);
		return SX_EXIT_USAGE;
	}
	cfg.host = host;
	cfg.port = port;
	cfg.log = log_line;
	cfg.log_context = journal;
	cfg.stop_flag = &stop_requested;
	cfg.reload_flag = &reload_requested;
	cfg.reload = reload_policy;
	cfg.reload_context = &rl;
	rl.journal = journal;

	memset(&sa, 0, sizeof sa);
	sa.sa_handler = SIG_IGN;
	sigaction(SIGPIPE, &sa, NULL);
	sa.sa_handler = on_stop;
	sigaction(SIGTERM, &sa, NULL);
	sigaction(SIGINT, &sa, NULL);
	sa.sa_handler = on_reload;
	sigaction(SIGHUP, &sa, NULL);

	sx_diag_list_init(&diags);
	if (sx_dlog_open(db, SX_DLOG_WRITE | SX_DLOG_CREATE, &log, &diags) != SX_OK) {
		sx_cli_print_diags(stderr, &diags);
		status = SX_EXIT_INPUT;
		goto out;
	}
	status = sx_cli_load_screener("serve", rl.ruleset, &rl.current);
	if (status != SX_EXIT_OK)
		goto out;
	if (!offset_given)
		cfg.default_offset_min = sx_screener_settings(rl.current)->utc_offset_min;
	if (sx_server_new(&cfg, rl.current, log, &server, &diags) != SX_OK) {
		sx_cli_print_diags(stderr, &diags);
		status = SX_EXIT_INPUT;
		goto out;
	}
	if (sx_server_run(server) != SX_OK)
		status = SX_EXIT_SOFTWARE;
out:
	sx_server_free(server);
	sx_screener_free(rl.current);
	for (size_t i = 0; i < rl.retired_count; i++)
		sx_screener_free(rl.retired[i]);
	sx_dlog_close(log);
	sx_diag_list_clear(&diags);
	return status;
}
