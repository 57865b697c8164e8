# SPDX-License-Identifier: MIT
"""--forward HOST:PORT: one result message (ORU^R01) per screened specimen goes to
a downstream MLLP peer, after the commit (docs/serve.md, "Forwarding results").

The peer here is a small MLLP listener of this test on 127.0.0.1 that answers
each frame with an AA (or, when told, an AE). Checks: each screened specimen
arrives as an ORU^R01 whose OBR-3 / SPM-2 name the specimen; a message whose
specimen could not be read forwards nothing; the peer started late is
reconnected to and gets what was queued; a peer's AE is logged as a warning; a
peer that does not answer the connection at all (its accept queue is full, so
the kernel drops the connection request, as a firewall that drops would) does
not hold up the MLLP service: messages are still answered at once.
Loopback only; bounded waits.
"""
import socket
import threading
import time

import mllpkit as k

checks = k.Checks("forward")
tmp = k.scratch_dir()
template = k.fixture("hl7/oru-r01-bloodgas.hl7")[0]
bad_unit = k.fixture("hl7/bad-unit.hl7")[0]


class Peer(threading.Thread):
    """A downstream MLLP peer: collects frames, answers each (bounded by a deadline)."""

    def __init__(self, port=0, answer=b"AA", seconds=60):
        super().__init__(daemon=True)
        self.sock = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
        self.sock.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
        self.sock.bind((k.HOST, port))
        self.sock.listen(4)
        self.sock.settimeout(0.2)
        self.port = self.sock.getsockname()[1]
        self.answer = answer
        self.frames = []
        self.deadline = time.monotonic() + seconds * k.SLOW
        self.stopping = False

    def run(self):
        conns = []
        while not self.stopping and time.monotonic() < self.deadline:
            try:
                c, _ = self.sock.accept()
                c.settimeout(0.05)
                conns.append([c, b""])
            except socket.timeout:
                pass
            for pair in conns:
                try:
                    data = pair[0].recv(65536)
                except socket.timeout:
                    continue
                except OSError:
                    data = b""
                if not data:
                    continue
                pair[1] += data
                while k.EB + k.CR in pair[1]:
                    end = pair[1].index(k.EB + k.CR)
                    msg = pair[1][pair[1].index(k.SB) + 1:end]
                    pair[1] = pair[1][end + 2:]
                    self.frames.append(msg)
                    cid = k.msh_field(msg, 10)
                    ack = b"MSH|^~\\&|LIS|SBR|SYRINX|SBRLAB|20260314||ACK|A" + cid + \
                        b"|P|2.5.1\rMSA|" + self.answer + b"|" + cid + b"\r"
                    pair[0].sendall(k.frame(ack))
        for pair in conns:
            pair[0].close()
        self.sock.close()

    def wait_for(self, n, seconds=20):
        until = time.monotonic() + seconds * k.SLOW
        while len(self.frames) < n and time.monotonic() < until:
            time.sleep(0.02)
        return len(self.frames) >= n

    def stop(self):
        self.stopping = True
        self.join(5)


def field(msg, seg, n):
    for s in msg.split(b"\r"):
        if s.startswith(seg + b"|"):
            f = s.split(b"|")
            return f[n] if len(f) > n else b""
    return b""


def main():
    peer = Peer()
    peer.start()
    server = k.Server(tmp + "/log.sqlite", "--forward", "%s:%d" % (k.HOST, peer.port)).start()
    c = k.Conn(server.port)
    for i in range(3):
        c.send_message(k.with_id(template, b"F-%d" % i).replace(b"BG-900001", b"BG-F%d" % i))
        checks.equal(k.parse_ack(c.read_frame())["msa1"], "AA", "message F-%d: AA" % i)
    c.send_message(k.with_id(bad_unit, b"F-BAD"))
    checks.equal(k.parse_ack(c.read_frame())["msa1"], "AE", "the message with a bad unit: AE")
    checks.check(peer.wait_for(3), "the peer got 3 result messages", "%d" % len(peer.frames))
    time.sleep(0.5)
    checks.equal(len(peer.frames), 3, "and nothing for the specimen that could not be read")
    for i, m in enumerate(peer.frames[:3]):
        checks.check(k.msh_field(m, 9).startswith(b"ORU^R01"), "result %d is an ORU^R01" % i)
        checks.equal(field(m, b"OBR", 3), b"BG-F%d" % i, "result %d: OBR-3 the specimen id" % i)
        checks.check(b"SX-DISPOSITION" in m, "result %d carries the disposition" % i)
    server.stop()
    peer.stop()
    log = server.log_text()
    checks.check("forwarding to" in log, "the log says where it forwards")

    # a peer that is not there yet, then comes; and one that answers AE
    port = k.free_port()
    server = k.Server(tmp + "/late.sqlite", "--forward", "%s:%d" % (k.HOST, port)).start()
    c = k.Conn(server.port)
    c.send_message(k.with_id(template, b"F-LATE"))
    checks.equal(k.parse_ack(c.read_frame())["msa1"], "AA",
                 "with the peer away, messages are still answered AA")
    time.sleep(0.5)
    peer = Peer(port=port, answer=b"AE")
    peer.start()
    c.send_message(k.with_id(template, b"F-LATE-2"))
    c.read_frame()
    checks.check(peer.wait_for(2, seconds=20), "the peer that came late got both results "
                 "(reconnected within its retry time)", "%d" % len(peer.frames))
    until = time.monotonic() + 10 * k.SLOW
    while "did not accept" not in server.log_text() and time.monotonic() < until:
        time.sleep(0.05)
    checks.check("did not accept" in server.log_text(), "a peer's AE is logged as a warning")
    c.close()
    checks.equal(server.stop(), 0, "the server stops with status 0")
    peer.stop()

    # a peer that never completes the connection
    mute = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
    mute.bind((k.HOST, 0))
    mute.listen(0)
    fill = []
    for _ in range(3):  # fill its accept queue; it never accepts
        f = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
        f.setblocking(False)
        try:
            f.connect((k.HOST, mute.getsockname()[1]))
        except BlockingIOError:
            pass
        fill.append(f)
    time.sleep(0.2)
    server = k.Server(tmp + "/mute.sqlite", "--forward",
                      "%s:%d" % (k.HOST, mute.getsockname()[1])).start()
    c = k.Conn(server.port)
    slowest = 0.0
    for i in range(5):
        t0 = time.monotonic()
        c.send_message(k.with_id(template, b"F-MUTE-%d" % i))
        try:
            ok = k.parse_ack(c.read_frame(15))["msa1"] == "AA"
        except (k.FrameError, socket.timeout, OSError):
            ok = False
        slowest = max(slowest, time.monotonic() - t0)
        if not ok:
            break
        time.sleep(0.3)
    checks.check(ok and slowest < 2 * k.SLOW, "a forwarding peer that never answers the "
                 "connection does not hold up the service (slowest ACK %.2f s)" % slowest)
    c.close()
    checks.equal(server.stop(), 0, "the server stops with status 0")
    for f in fill:
        f.close()
    mute.close()


checks.run(main)
