# SPDX-License-Identifier: MIT
"""kill -9 in the middle of a burst: no ACK is ever sent ahead of its commit.

2,000 distinct blood-gas messages (the fixture's ORU^R01 with MSH-10 and the
specimen id made distinct) go to `syrinx serve` over 8 connections, each
keeping up to 8 messages in flight. While they flow the server is killed with
SIGKILL. It is started again on the same decision log, and then:

1. every control id that was ACKed before the kill is in the log exactly once
   (ACK table) with its one verdict row, read with Python's sqlite3 module and
   with the sqlite3 command-line tool (Debian package sqlite3; installed by the
   wrapper when root); the log passes PRAGMA integrity_check;
2. everything is sent again (ACKed or not): every message is answered AA; the
   ones ACKed before get the very bytes of their first ACK; afterwards every
   message is in the log exactly once, with one verdict row each.

The log is SQLite in WAL mode with synchronous=FULL (docs/decision-log.md):
SQLite's documentation of PRAGMA synchronous says a commit is then durable,
which is what makes (1) hold. Loopback only; bounded in count and time.
"""
import os
import shutil
import signal
import socket
import subprocess
import threading
import time

import mllpkit as k

TOTAL, CONNS, WINDOW = 2000, 8, 8
checks = k.Checks("crash")
tmp = k.scratch_dir()
template = k.fixture("hl7/oru-r01-bloodgas.hl7")[0]


def message(i):
    cid = "K%05d" % i
    m = k.with_id(template, cid.encode()).replace(b"BG-900001", ("BG-K%05d" % i).encode())
    return cid, m


class Sender(threading.Thread):
    """Sends its share with up to WINDOW in flight; records each ACK by control id.
    Stops by itself at the end, on a closed connection, or at the deadline."""

    def __init__(self, port, items, deadline):
        super().__init__(daemon=True)
        self.port, self.items, self.deadline = port, items, deadline
        self.acks = {}   # control id -> ACK bytes (no framing)
        self.codes = {}  # control id -> MSA-1
        self.error = None

    def run(self):
        try:
            c = k.Conn(self.port, timeout=30)
        except OSError as e:
            self.error = str(e)
            return
        sent = 0
        try:
            while len(self.acks) < len(self.items) and time.monotonic() < self.deadline:
                while sent < len(self.items) and sent - len(self.acks) < WINDOW:
                    c.send_message(self.items[sent][1])
                    sent += 1
                ack = c.read_frame(max(1.0, self.deadline - time.monotonic()))
                a = k.parse_ack(ack)
                self.acks[a["msa2"]] = ack
                self.codes[a["msa2"]] = a["msa1"]
        except (k.FrameError, socket.timeout, OSError) as e:
            self.error = str(e)
        finally:
            c.close()


def burst(port, items, deadline, stop_after=None, server=None):
    """Send items over CONNS connections. With stop_after, SIGKILL the server once that
    many ACKs have arrived. Returns (acks, codes) merged."""
    shares = [items[i::CONNS] for i in range(CONNS)]
    senders = [Sender(port, s, deadline) for s in shares]
    for s in senders:
        s.start()
    killed_at = None
    if stop_after is not None:
        while time.monotonic() < deadline:
            if sum(len(s.acks) for s in senders) >= stop_after:
                break
            if not any(s.is_alive() for s in senders):
                break
            time.sleep(0.002)
        killed_at = sum(len(s.acks) for s in senders)
        server.kill()  # SIGKILL, this server process only
    for s in senders:
        s.join(max(1.0, deadline - time.monotonic()) + 5)
    acks, codes = {}, {}
    for s in senders:
        acks.update(s.acks)
        codes.update(s.codes)
    return acks, codes, killed_at, [s.error for s in senders if s.error]


def cli_counts(db):
    """{control_id: count} of the ACK table through the sqlite3 shell, or None."""
    tool = shutil.which("sqlite3")
    if not tool:
        return None
    p = subprocess.run([tool, "-readonly", "-batch", "-noheader", "-separator", "|", db,
                        "SELECT control_id, count(*) FROM ack GROUP BY sender, control_id;"],
                       capture_output=True, timeout=60)
    if p.returncode != 0:
        raise RuntimeError("sqlite3: " + p.stderr.decode("utf-8", "replace"))
    out = {}
    for line in p.stdout.decode().splitlines():
        cid, n = line.rsplit("|", 1)
        out[cid] = out.get(cid, 0) + int(n)
    return out


def integrity(db):
    import sqlite3
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=10)
    try:
        return con.execute("PRAGMA integrity_check").fetchone()[0]
    finally:
        con.close()


def main():
    items = [message(i) for i in range(TOTAL)]
    db = os.path.join(tmp, "crash.sqlite")
    server = k.Server(db).start()
    deadline = time.monotonic() + 120 * k.SLOW
    acked, codes, killed_at, errors = burst(server.port, items, deadline,
                                            stop_after=TOTAL // 4, server=server)
    print("killed with SIGKILL after %d ACKs (%d recorded); senders stopped: %s"
          % (killed_at, len(acked), errors[:1]))
    checks.check(0 < len(acked) < TOTAL, "the kill came in the middle of the burst",
                 "%d of %d ACKed" % (len(acked), TOTAL))
    checks.equal(server.returncode, -signal.SIGKILL, "the server died of SIGKILL")
    checks.check(all(c == "AA" for c in codes.values()), "every ACK before the kill was AA")

    server = k.Server(db).start()  # the same log: SQLite recovers the WAL
    acks_in_log, rows, stored = k.log_counts(db)
    by_id = {}
    for (sender, cid), n in acks_in_log.items():
        by_id[cid] = by_id.get(cid, 0) + n
    rows_by_id = {cid: n for (_, cid), n in rows.items()}
    missing = [cid for cid in acked if by_id.get(cid, 0) != 1]
    checks.check(not missing, "sqlite3 module: each of the %d ACKed messages is in the log "
                 "exactly once" % len(acked), "not so for %s" % missing[:5])
    norow = [cid for cid in acked if rows_by_id.get(cid, 0) != 1]
    checks.check(not norow, "  ... each with exactly one verdict row", "not so for %s" % norow[:5])
    checks.check(all(n == 1 for n in by_id.values()) and
                 all(n == 1 for n in rows_by_id.values()),
                 "nothing is in the log twice (%d messages logged; %d more than ACKed: "
                 "committed, their ACK not yet sent)" % (len(by_id), len(by_id) - len(acked)))
    stored_by_id = {cid: ack for (_, cid), ack in stored.items()}
    differ = [cid for cid in acked if stored_by_id.get(cid) != acked[cid]]
    checks.check(not differ, "the stored ACK of each is the ACK that was sent",
                 "differs for %s" % differ[:5])
    checks.equal(integrity(db), "ok", "PRAGMA integrity_check after the crash")
    cli = cli_counts(db)
    if cli is None:
        print("note: the sqlite3 shell is not installed; its check is left out")
    else:
        bad = [cid for cid in acked if cli.get(cid) != 1]
        checks.check(not bad, "sqlite3 shell: each ACKed message is in the log exactly once",
                     "not so for %s" % bad[:5])
        checks.equal(cli, by_id, "sqlite3 shell and module agree on the ACK table")

    # ---- send everything again -----------------------------------------------------
    deadline = time.monotonic() + 180 * k.SLOW
    again, codes2, _, errors = burst(server.port, items, deadline)
    checks.check(not errors, "the resend burst ran without a connection error", str(errors[:1]))
    checks.equal(len(again), TOTAL, "every message answered after the restart")
    checks.check(all(c == "AA" for c in codes2.values()), "all AA")
    differ = [cid for cid in acked if again.get(cid) != acked[cid]]
    checks.check(not differ, "each resend of an ACKed message got its original ACK, "
                 "byte for byte (%d)" % len(acked), "differs for %s" % differ[:5])
    checks.equal(server.stop(), 0, "the server stops with status 0")
    acks_in_log, rows, _ = k.log_counts(db)
    ids = sorted(cid for (_, cid) in acks_in_log)
    checks.equal(ids, sorted(cid for cid, _ in items),
                 "every one of the %d messages is in the log exactly once" % TOTAL)
    checks.check(sorted(cid for (_, cid) in rows) == ids and all(n == 1 for n in rows.values()),
                 "with exactly one verdict row each")
    cli = cli_counts(db)
    if cli is not None:
        checks.check(len(cli) == TOTAL and all(n == 1 for n in cli.values()),
                     "sqlite3 shell: %d messages, each once" % TOTAL)
    log = server.log_text()
    checks.check("sent before" in log, "the server's log tells of the resends")


checks.run(main)
