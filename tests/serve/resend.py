# SPDX-License-Identifier: MIT
"""Resends: a sender that did not get its ACK sends the message again.

A message is known by its sender (MSH-3 sending application ^ MSH-4 sending
facility) and its control id (MSH-10); HL7 v2.5.1 chapter 2 makes MSH-10
unique per sender, so the pair is the key (docs/decision-log.md, the ACK table).

- the same message again, on another connection and in a later second: the very
  same ACK bytes (MSH-7 and all), and one entry in the log;
- twice in one send (one batch): both answered alike, logged once;
- the same MSH-10 from another sending application, or another facility: a new
  message, logged as such; the log's sender column is MSH-3^MSH-4 exactly;
- the same sender and MSH-10 on a different message: the first's ACK, nothing
  logged, and a warning in the server's log;
- an AE message sent again: the same AE; a message without MSH-10 (no key):
  answered each time, never logged.
Loopback only; bounded waits.
"""
import time

import mllpkit as k

checks = k.Checks("resend")
tmp = k.scratch_dir()
template = k.fixture("hl7/oru-r01-bloodgas.hl7")[0]
bad_unit = k.fixture("hl7/bad-unit.hl7")[0]


def main():
    server = k.Server(tmp + "/log.sqlite").start()
    port = server.port
    first = k.with_id(template, b"R-1")

    c1 = k.Conn(port)
    c1.send_message(first)
    ack1 = c1.read_frame()
    checks.equal(k.parse_ack(ack1)["msa1"], "AA", "the first sending is AA")
    time.sleep(1.1)  # a new second: a rebuilt ACK would carry another MSH-7
    c2 = k.Conn(port)
    c2.send_message(first)
    ack2 = c2.read_frame()
    checks.equal(ack2, ack1, "the resend on another connection gets the same ACK, byte for byte")
    c1.send_message(first)
    checks.equal(c1.read_frame(), ack1, "and again on the first connection")

    # twice in one send: one batch
    twin = k.with_id(template, b"R-TWIN")
    c1.send(k.frame(twin) + k.frame(twin))
    a, b = c1.read_frames(2)
    checks.check(a == b and k.parse_ack(a)["msa1"] == "AA",
                 "the same message twice in one send: two equal AA")

    # the same MSH-10 from other senders
    other_app = k.set_msh(first, 3, b"BG-ANALYSER-2")
    other_fac = k.set_msh(first, 4, b"SBR-EAST")
    other_recv = k.set_msh(first, 5, b"SOMEONE-ELSE")  # MSH-5 is not part of the sender
    for m, what in ((other_app, "another sending application (MSH-3)"),
                    (other_fac, "another sending facility (MSH-4)")):
        c2.send_message(m)
        ack = c2.read_frame()
        checks.check(k.parse_ack(ack)["msa1"] == "AA" and ack != ack1,
                     "the same MSH-10 from %s: its own AA" % what)
    c2.send_message(other_recv)
    checks.equal(c2.read_frame(), ack1, "another receiving application (MSH-5), same sender: "
                 "a resend")

    # same key, different content
    reused = first.replace(b"|9.6|kPa", b"|12.1|kPa")
    c2.send_message(reused)
    checks.equal(c2.read_frame(), ack1, "a different message under a used key: the first's ACK")

    # errors resent
    bad = k.with_id(bad_unit, b"R-BAD")
    c1.send_message(bad)
    bad1 = c1.read_frame()
    c2.send_message(bad)
    checks.check(k.parse_ack(bad1)["msa1"] == "AE" and c2.read_frame() == bad1,
                 "an AE message sent again gets the same AE")
    nokey = k.set_msh(template, 10, b"")
    c1.send_message(nokey)
    c2.send_message(nokey)
    n1, n2 = k.parse_ack(c1.read_frame()), k.parse_ack(c2.read_frame())
    checks.check(n1["msa1"] == "AE" and n2["msa1"] == "AE",
                 "a message without MSH-10 is answered AE each time")
    c1.close()
    c2.close()
    checks.equal(server.stop(), 0, "the server stops with status 0")

    acks, rows, stored = k.log_counts(server.db)
    checks.equal(sorted(acks), sorted([
        ("BG-ANALYSER^SBR", "R-1"), ("BG-ANALYSER^SBR", "R-TWIN"),
        ("BG-ANALYSER-2^SBR", "R-1"), ("BG-ANALYSER^SBR-EAST", "R-1"),
        ("BG-ANALYSER^SBR", "R-BAD")]),
        "the log's ACK table: one entry per (MSH-3^MSH-4, MSH-10), nothing twice")
    checks.equal(rows, {("BG-ANALYSER^SBR", "R-1"): 1, ("BG-ANALYSER^SBR", "R-TWIN"): 1,
                        ("BG-ANALYSER-2^SBR", "R-1"): 1, ("BG-ANALYSER^SBR-EAST", "R-1"): 1},
                 "one verdict row for each message screened (the AE one has none)")
    checks.equal(stored[("BG-ANALYSER^SBR", "R-1")], ack1, "the stored ACK is the one sent")
    log = server.log_text()
    checks.check("sent before" in log, "the server's log notes the resends")
    checks.check("reuses the control id" in log,
                 "the server's log warns of a control id reused for another message")


checks.run(main)
