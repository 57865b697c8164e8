# SPDX-License-Identifier: MIT
"""Signals (syrinx serve --help, docs/serve.md):

- SIGTERM while messages are in flight on 4 connections: the server stops
  accepting, answers what it has received, and exits 0; every message that was
  ACKed is in the decision log exactly once, and nothing is in it twice;
- SIGINT: the same clean exit, 0;
- SIGHUP: the server keeps running, says so in its log, and goes on answering;
  with --ruleset, a ruleset broken in the meantime is refused on SIGHUP (the one
  in use is kept: its version line stays in the verdict rows), and a good one is
  used from the next message on.

Loopback only; bounded in count and time.
"""
import os
import signal
import socket
import threading
import time

import mllpkit as k

checks = k.Checks("signals")
tmp = k.scratch_dir()
template = k.fixture("hl7/oru-r01-bloodgas.hl7")[0]
CONNS, PER_CONN, WINDOW = 4, 600, 8


class Sender(threading.Thread):
    """Pipelines its messages (WINDOW in flight) until done, closed, or the deadline."""

    def __init__(self, port, n, deadline):
        super().__init__(daemon=True)
        self.items = [k.with_id(template, ("T%d-%04d" % (n, i)).encode())
                      for i in range(PER_CONN)]
        self.port, self.deadline = port, deadline
        self.acked = []
        self.sent = 0

    def run(self):
        c = k.Conn(self.port, timeout=30)
        try:
            while len(self.acked) < len(self.items) and time.monotonic() < self.deadline:
                while self.sent < len(self.items) and self.sent - len(self.acked) < WINDOW:
                    c.send_message(self.items[self.sent])
                    self.sent += 1
                a = k.parse_ack(c.read_frame(max(1.0, self.deadline - time.monotonic())))
                if a["msa1"] == "AA":
                    self.acked.append(a["msa2"])
        except (k.FrameError, socket.timeout, OSError):
            pass  # the server closed the connection as it stopped
        finally:
            c.close()


def main():
    # ---- SIGTERM mid-burst -------------------------------------------------------------
    db = os.path.join(tmp, "term.sqlite")
    server = k.Server(db).start()
    deadline = time.monotonic() + 120 * k.SLOW
    senders = [Sender(server.port, n, deadline) for n in range(CONNS)]
    for s in senders:
        s.start()
    while time.monotonic() < deadline and sum(len(s.acked) for s in senders) < 200:
        time.sleep(0.002)
    at_signal = sum(len(s.acked) for s in senders)
    t0 = time.monotonic()
    status = server.stop(signal.SIGTERM, timeout=30)
    took = time.monotonic() - t0
    for s in senders:
        s.join(30 * k.SLOW)
    acked = [cid for s in senders for cid in s.acked]
    sent = sum(s.sent for s in senders)
    print("SIGTERM after %d ACKs; %d sent, %d ACKed in all; exit after %.2f s"
          % (at_signal, sent, len(acked), took))
    checks.equal(status, 0, "SIGTERM with messages in flight: exit status 0")
    checks.check(len(acked) < CONNS * PER_CONN, "the signal came while messages were in flight")
    acks, rows, _ = k.log_counts(db)
    ids = {}
    for (_, cid), n in acks.items():
        ids[cid] = ids.get(cid, 0) + n
    missing = [cid for cid in acked if ids.get(cid) != 1]
    checks.check(not missing, "every one of the %d ACKed messages is in the log exactly once"
                 % len(acked), "not so for %s" % missing[:5])
    checks.check(all(n == 1 for n in ids.values()) and all(n == 1 for n in rows.values()),
                 "nothing is in the log twice")
    log = server.log_text()
    checks.check("stopping" in log and "stopped:" in log,
                 "the log says it is stopping and what it did")

    # ---- SIGINT ------------------------------------------------------------------------
    server = k.Server(os.path.join(tmp, "int.sqlite")).start()
    c = k.Conn(server.port)
    c.send_message(k.with_id(template, b"INT-1"))
    checks.equal(k.parse_ack(c.read_frame())["msa1"], "AA", "a message before SIGINT: AA")
    checks.equal(server.stop(signal.SIGINT, timeout=30), 0, "SIGINT: exit status 0")
    c.close()

    # ---- SIGHUP ------------------------------------------------------------------------
    server = k.Server(os.path.join(tmp, "hup.sqlite")).start()
    c = k.Conn(server.port)
    c.send_message(k.with_id(template, b"HUP-1"))
    c.read_frame()
    before = len(server.log_text())
    server.send_signal(signal.SIGHUP)
    said = ""
    until = time.monotonic() + 10 * k.SLOW
    while time.monotonic() < until:
        said = server.log_text(before)
        if "SIGHUP" in said or "reload" in said:
            break
        time.sleep(0.05)
    checks.check("SIGHUP" in said or "reload" in said, "SIGHUP: the log says it was heard",
                 repr(said))
    checks.check(server.alive(), "SIGHUP: the server keeps running")
    c.send_message(k.with_id(template, b"HUP-2"))
    checks.equal(k.parse_ack(c.read_frame())["msa1"], "AA",
                 "after SIGHUP the same connection is still answered")
    c2 = k.Conn(server.port)
    c2.send_message(k.with_id(template, b"HUP-3"))
    checks.equal(k.parse_ack(c2.read_frame())["msa1"], "AA", "and new connections too")
    c.close()
    c2.close()
    checks.equal(server.stop(), 0, "then SIGTERM: exit status 0")

    # ---- SIGHUP with a ruleset that changes --------------------------------------------
    rsdir = os.path.join(tmp, "rules")
    os.mkdir(rsdir)
    base = os.path.join(k.SRC, "rulesets", "default")

    def write_rules(text):
        with open(os.path.join(rsdir, "site.rules"), "w") as f:
            f.write(text)

    write_rules('version "signals-test 1"\nbase "%s"\n' % base)
    db = os.path.join(tmp, "reload.sqlite")
    server = k.Server(db, "--ruleset", rsdir).start()
    c = k.Conn(server.port)

    def send(cid):
        c.send_message(k.with_id(template, cid.encode()))
        return k.parse_ack(c.read_frame())["msa1"]

    def reload_and_wait(word):
        at = len(server.log_text())
        server.send_signal(signal.SIGHUP)
        until = time.monotonic() + 15 * k.SLOW
        while time.monotonic() < until:
            text = server.log_text(at)
            if word in text:
                return text
            time.sleep(0.05)
        return server.log_text(at)

    checks.equal(send("RS-1"), "AA", "a message under ruleset version 1")
    write_rules('version "signals-test 2"\nbase "%s"\nset no.such.setting = 3\n' % base)
    said = reload_and_wait("refused")
    checks.check("refused" in said, "SIGHUP with a broken ruleset: the log says it was refused",
                 repr(said[-300:]))
    checks.check(server.alive(), "and the server keeps running")
    checks.equal(send("RS-2"), "AA", "the next message is answered")
    write_rules('version "signals-test 3"\nbase "%s"\n' % base)
    said = reload_and_wait("reloaded")
    checks.check("signals-test 3" in said, "SIGHUP with a good ruleset: the log names it",
                 repr(said[-300:]))
    checks.equal(send("RS-3"), "AA", "a message under the new ruleset")
    c.close()
    checks.equal(server.stop(), 0, "SIGTERM: exit status 0")
    import sqlite3
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True)
    used = dict(con.execute("SELECT control_id, ruleset FROM verdict"))
    con.close()
    checks.check("signals-test 1" in used.get("RS-1", "") and
                 "signals-test 1" in used.get("RS-2", "") and
                 "signals-test 3" in used.get("RS-3", ""),
                 "the verdict rows carry the ruleset in use: 1, still 1 after the refused "
                 "reload, then 3", repr(used))


checks.run(main)
