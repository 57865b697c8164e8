# SPDX-License-Identifier: MIT
"""`syrinx serve` against MLLP senders that no one in this project wrote.

  peers.py node       node-hl7-client 3.x (npm registry), through tests/serve/node/send.js
  peers.py mllp_send  the `mllp_send` command of Debian's python3-hl7 package

Both are general-purpose HL7 tools, used here only as test peers. Each sends the
same messages taken from the fixtures (blood gases as ORU^R01, OUL^R22 v2.7 and
OML^O21, the NIST and "GHH LAB" public samples, part of the demo morning, and a
message with an unknown unit), and each must get one ACK per message, in order:
AA, or AE for the one with the bad unit, with MSA-2 = the MSH-10 it sent.
Then the decision log must hold each message once. The wrappers
(node-client.sh, mllp-send.sh) install the peer or skip.

Loopback only; each peer run is bounded by a timeout.
"""
import json
import os
import subprocess
import sys

import mllpkit as k

mode = sys.argv[1] if len(sys.argv) > 1 else ""
checks = k.Checks("peers-" + mode)
tmp = k.scratch_dir()


def messages():
    """(message, expected MSA-1) pairs with distinct control ids."""
    out = []
    for name in ("hl7/oru-r01-bloodgas.hl7", "hl7/ghh-lab-oru.hl7", "hl7/nist-elr-case1.hl7",
                 "hl7/oml-o21-order.hl7", "hl7/oul-r22-v27.hl7"):
        out.append((k.fixture(name)[0], ("AA",)))
    out.append((k.fixture("hl7/batch.hl7")[0], ("AA",)))  # the ORU^R01 of the batch
    out.append((k.with_id(k.fixture("hl7/bad-unit.hl7")[0], b"MSG00017-BADUNIT"), ("AE",)))
    for m in k.fixture("demo/morning.hl7")[:12]:
        out.append((m, ("AA", "AE")))  # the demo has specimens with problems on purpose
    ids = [k.msh_field(m, 10) for m, _ in out]
    assert len(set(ids)) == len(ids), "control ids must differ"
    return out


def via_node(port, msgs):
    nodedir = os.path.join(k.SRC, "tests", "serve", "node")
    path = os.path.join(tmp, "messages.json")
    with open(path, "w") as f:
        # 8859/1 bytes of the v2.7 sample travel as the same characters, in UTF-8
        json.dump([m.decode("utf-8", "replace") if _utf8(m) else m.decode("latin-1")
                   for m, _ in msgs], f)
    env = dict(os.environ, NODE_PATH=os.path.join(nodedir, "node_modules"))
    p = subprocess.run(["node", os.path.join(nodedir, "send.js"), k.HOST, str(port), path,
                        str(int(60000 * k.SLOW))],
                       capture_output=True, timeout=90 * k.SLOW, env=env)
    sys.stdout.write(p.stderr.decode("utf-8", "replace"))
    checks.equal(p.returncode, 0, "node-hl7-client ran to its end")
    acks = []
    for line in p.stdout.decode("utf-8", "replace").splitlines():
        a = json.loads(line)
        acks.append((a["msa1"], a["msa2"], a["raw"].encode("utf-8")))
    return acks


def _utf8(b):
    try:
        b.decode("utf-8")
        return True
    except UnicodeDecodeError:
        return False


def via_mllp_send(port, msgs):
    path = os.path.join(tmp, "messages.mllp")
    with open(path, "wb") as f:
        for m, _ in msgs:
            f.write(k.frame(m))
    p = subprocess.run(["mllp_send", "--port", str(port), "--file", path, k.HOST],
                       capture_output=True, timeout=90 * k.SLOW)
    sys.stdout.write(p.stderr.decode("utf-8", "replace"))
    checks.equal(p.returncode, 0, "mllp_send ran to its end")
    # mllp_send prints what each recv() brought, then a newline: one frame per message,
    # so each ACK must have come whole in one read for this to line up
    acks = []
    for chunk in p.stdout.split(k.EB + k.CR + b"\n"):
        if not chunk:
            continue
        if not chunk.startswith(k.SB):
            checks.check(False, "mllp_send printed a whole frame per message", repr(chunk[:60]))
            continue
        ack = chunk[1:]
        a = k.parse_ack(ack)
        acks.append((a["msa1"], a["msa2"], ack))
    return acks


def main():
    msgs = messages()
    server = k.Server(os.path.join(tmp, "log.sqlite")).start()
    if mode == "node":
        acks = via_node(server.port, msgs)
        who = "node-hl7-client"
    elif mode == "mllp_send":
        acks = via_mllp_send(server.port, msgs)
        who = "mllp_send"
    else:
        raise SystemExit("usage: peers.py node|mllp_send")
    checks.equal(len(acks), len(msgs), "%s got one ACK per message" % who)
    for (m, codes), (msa1, msa2, raw) in zip(msgs, acks):
        cid = k.msh_field(m, 10).decode()
        checks.check(msa1 in codes and msa2 == cid,
                     "%s: %s answered %s with MSA-2 = its MSH-10" % (who, cid, "/".join(codes)),
                     "got %s, MSA-2 %r" % (msa1, msa2))
    checks.equal(server.stop(), 0, "the server stops with status 0")
    acks_in_log, rows, _ = k.log_counts(server.db)
    ids = sorted(cid for (_, cid) in acks_in_log)
    checks.equal(ids, sorted(k.msh_field(m, 10).decode() for m, _ in msgs),
                 "the decision log holds each message once")


checks.run(main)
