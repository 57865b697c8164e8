# SPDX-License-Identifier: MIT
"""Shared pieces of the tests of `syrinx serve` (tests/serve/*.py).

Python standard library only. Everything here talks to loopback (127.0.0.1)
and nothing else; every wait has a bound, and every server a test starts is
killed when the test ends, however it ends.

- Checks: counts checks and prints the closing line `N passed, N failed`.
- Server: starts `syrinx serve` on a free port of 127.0.0.1 with a decision
  log, waits until it listens, stops it with a signal or SIGKILL.
- Conn: a raw MLLP client on a socket: sends bytes as they are, reads frames
  strictly (any byte outside a frame is an error).
- Messages: reads the fixtures (CR, CRLF or LF; batches split on MSH), sets
  MSH fields, parses ACKs (MSA, ERR in the v2.5 form and the older ERR-1 form).

MLLP framing (0x0B message 0x1C 0x0D) and the ACK layout are those of HL7 v2.5.1,
chapter 2 and its appendix on the lower layer protocols, as summarised in the
project's HL7 notes.
"""
import atexit
import os
import signal
import socket
import subprocess
import sys
import tempfile
import time

SB, EB, CR = b"\x0b", b"\x1c", b"\r"
HOST = "127.0.0.1"  # loopback only: the tests never send anywhere else

SRC = os.environ.get("SX_SRCDIR") or \
    os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
BUILD = os.environ.get("SX_BUILDDIR") or SRC
FIXTURES = os.environ.get("SX_FIXTURES") or os.path.join(SRC, "fixtures")
SYRINX = os.path.join(BUILD, "syrinx")

# Under AddressSanitizer everything is several times slower: waits scale with this.
SLOW = float(os.environ.get("SX_SERVE_SLOW", "1"))


def skip(why):
    """Exit 77 (automake's 'skipped') with a clear reason."""
    print("SKIP: " + why)
    print("0 passed, 0 failed")
    sys.exit(77)


# ---- counting checks -----------------------------------------------------------------


class Checks:
    def __init__(self, name):
        self.name = name
        self.passed = 0
        self.failed = 0

    def check(self, cond, what, detail=""):
        if cond:
            self.passed += 1
            print("ok: " + what)
        else:
            self.failed += 1
            print("FAIL: " + what + (": " + detail if detail else ""))
        sys.stdout.flush()
        return bool(cond)

    def equal(self, got, want, what):
        return self.check(got == want, what, "got %r, expected %r" % (got, want))

    def run(self, main):
        """Run main(); an exception is one failed check (with its traceback), not a crash
        without a closing line. Then finish."""
        try:
            main()
        except Exception:  # noqa: BLE001 - any failure of the test body is a failure
            import traceback
            traceback.print_exc(file=sys.stdout)
            self.check(False, "the test ran to its end", "an exception stopped it")
        self.finish()

    def finish(self):
        print("%d passed, %d failed" % (self.passed, self.failed))
        sys.stdout.flush()
        stop_all_servers()
        sys.exit(1 if self.failed or not self.passed else 0)


# ---- the server ----------------------------------------------------------------------

_servers = []


def stop_all_servers():
    for s in list(_servers):
        s.kill()


def _on_signal(signum, frame):
    stop_all_servers()
    sys.exit(128 + signum)


atexit.register(stop_all_servers)
for _sig in (signal.SIGTERM, signal.SIGINT, signal.SIGHUP):
    signal.signal(_sig, _on_signal)


def free_port(host=HOST):
    """A port of host (127.0.0.1 or ::1) that was free a moment ago (bind port 0, ask,
    close)."""
    s = socket.socket(socket.AF_INET6 if ":" in host else socket.AF_INET, socket.SOCK_STREAM)
    try:
        s.bind((host, 0))
        return s.getsockname()[1]
    finally:
        s.close()


def scratch_dir():
    """A temporary folder removed at exit."""
    d = tempfile.mkdtemp(prefix="sx-serve-")

    def clean():
        for root, dirs, files in os.walk(d, topdown=False):
            for f in files:
                os.unlink(os.path.join(root, f))
            for x in dirs:
                os.rmdir(os.path.join(root, x))
        os.rmdir(d)

    atexit.register(clean)
    return d


class Server:
    """One `syrinx serve` process on 127.0.0.1 and a free port."""

    def __init__(self, db, *args, port=None, host=HOST):
        self.db = db
        self.host = host  # 127.0.0.1 or ::1: loopback only
        self.args = list(args)
        self.port = port
        self.proc = None
        self.logpath = db + ".serve.log"
        self.returncode = None

    def start(self, timeout=20.0):
        """Start and wait until it listens. A port taken in between is retried (bounded)."""
        timeout *= SLOW
        for attempt in range(5):
            port = self.port if self.port else free_port(self.host)
            listen = "[%s]:%d" % (self.host, port) if ":" in self.host else \
                "%s:%d" % (self.host, port)
            log = open(self.logpath, "ab")
            start_at = log.tell()
            self.proc = subprocess.Popen(
                [SYRINX, "serve", "--db", self.db, "--listen", listen] + self.args,
                stdin=subprocess.DEVNULL, stdout=log, stderr=log)
            log.close()
            _servers.append(self)
            until = time.monotonic() + timeout
            while time.monotonic() < until:
                text = self.log_text(start_at)
                if "listening on" in text:
                    self.port = port
                    self.returncode = None
                    return self
                if self.proc.poll() is not None:
                    break
                time.sleep(0.02)
            self.kill()
            text = self.log_text(start_at)
            if "in use" in text and not self.port:
                continue  # someone took the port between our look and the bind
            raise RuntimeError("syrinx serve did not start: " + text[-2000:])
        raise RuntimeError("syrinx serve: no free port after 5 attempts")

    def log_text(self, offset=0):
        try:
            with open(self.logpath, "rb") as f:
                f.seek(offset)
                return f.read().decode("utf-8", "replace")
        except OSError:
            return ""

    def alive(self):
        return self.proc is not None and self.proc.poll() is None

    def send_signal(self, sig):
        if self.alive():
            self.proc.send_signal(sig)

    def stop(self, sig=signal.SIGTERM, timeout=30.0):
        """Send sig and wait for the exit (bounded; SIGKILL after). Returns the status."""
        if self.proc is None:
            return None
        self.send_signal(sig)
        try:
            self.returncode = self.proc.wait(timeout * SLOW)
        except subprocess.TimeoutExpired:
            self.kill()
            self.returncode = "did not stop within %.0f s" % (timeout * SLOW)
        if self in _servers:
            _servers.remove(self)
        return self.returncode

    def kill(self):
        """SIGKILL (this process only, by its id) and reap."""
        if self.proc is not None and self.proc.poll() is None:
            self.proc.kill()
            try:
                self.proc.wait(10)
            except subprocess.TimeoutExpired:
                pass
        if self.proc is not None:
            self.returncode = self.proc.returncode
        if self in _servers:
            _servers.remove(self)


# ---- a raw MLLP client -----------------------------------------------------------------


class FrameError(Exception):
    pass


def frame(msg):
    return SB + msg + EB + CR


class Conn:
    """A client socket to the server; reads frames strictly."""

    def __init__(self, port, timeout=10.0, host=HOST):
        self.timeout = timeout * SLOW
        self.sock = socket.create_connection((host, port), timeout=self.timeout)
        self.sock.setsockopt(socket.IPPROTO_TCP, socket.TCP_NODELAY, 1)
        self.buf = b""
        self.reads = []  # the size of each recv() that brought frame bytes

    def send(self, data):
        self.sock.sendall(data)

    def send_message(self, msg):
        self.sock.sendall(frame(msg))

    def _recv(self, until):
        left = until - time.monotonic()
        if left <= 0:
            raise socket.timeout("no whole frame in time")
        self.sock.settimeout(left)
        data = self.sock.recv(65536)
        if not data:
            raise FrameError("the server closed the connection")
        self.reads.append(len(data))
        self.buf += data

    def read_frame(self, timeout=None):
        """The next frame's message (without 0x0B, 0x1C 0x0D). Strict: the stream must
        hold nothing but whole frames."""
        until = time.monotonic() + (timeout * SLOW if timeout else self.timeout)
        while True:
            if self.buf:
                if self.buf[:1] != SB:
                    raise FrameError("bytes outside a frame: %r" % self.buf[:40])
                end = self.buf.find(EB + CR)
                if end >= 0:
                    msg = self.buf[1:end]
                    self.buf = self.buf[end + 2:]
                    if SB in msg or EB in msg:
                        raise FrameError("a frame byte inside an ACK: %r" % msg[:80])
                    return msg
            self._recv(until)

    def read_frames(self, n, timeout=None):
        return [self.read_frame(timeout) for _ in range(n)]

    def first_read(self, timeout=None):
        """The bytes of exactly one recv() (to see whether an ACK came whole)."""
        until = time.monotonic() + (timeout * SLOW if timeout else self.timeout)
        self._recv(until)
        data, self.buf = self.buf, b""
        return data

    def closed_by_peer(self, timeout):
        """True when the server closes this connection within timeout seconds."""
        until = time.monotonic() + timeout * SLOW
        while time.monotonic() < until:
            self.sock.settimeout(max(0.01, until - time.monotonic()))
            try:
                data = self.sock.recv(65536)
            except socket.timeout:
                return False
            except (ConnectionResetError, BrokenPipeError):
                return True
            if not data:
                return True
            self.buf += data
        return False

    def close(self):
        try:
            self.sock.close()
        except OSError:
            pass


# ---- messages ------------------------------------------------------------------------


def read_messages(path):
    """The messages of a fixture file: terminators made CR, a byte order mark and MLLP
    frame bytes dropped, batch segments (FHS, BHS, BTS, FTS) dropped, split before each
    MSH. Each message is bytes with CR between segments and no final CR."""
    with open(path, "rb") as f:
        data = f.read()
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    data = data.replace(SB, b"").replace(EB, b"")
    if b"\r" in data:
        data = data.replace(b"\r\n", b"\r")
    else:
        data = data.replace(b"\n", b"\r")
    messages, cur = [], []
    for seg in data.split(b"\r"):
        if not seg.strip():
            continue
        if seg[:3] in (b"FHS", b"BHS", b"BTS", b"FTS"):
            continue
        if seg.startswith(b"MSH") and cur:
            messages.append(b"\r".join(cur))
            cur = []
        cur.append(seg)
    if cur:
        messages.append(b"\r".join(cur))
    return messages


def fixture(name):
    return read_messages(os.path.join(FIXTURES, name))


def msh_field(msg, n):
    """MSH-n as sent (MSH-1 is the separator itself, MSH-2 the encoding characters)."""
    seg = msg.split(b"\r", 1)[0]
    sep = seg[3:4]
    if n == 1:
        return sep
    parts = seg.split(sep)
    return parts[n - 1] if len(parts) >= n else b""


def set_msh(msg, n, value):
    """The message with MSH-n replaced (n >= 3)."""
    segs = msg.split(b"\r")
    sep = segs[0][3:4]
    parts = segs[0].split(sep)
    while len(parts) < n:
        parts.append(b"")
    parts[n - 1] = value
    segs[0] = sep.join(parts)
    return b"\r".join(segs)


def with_id(msg, control_id, sender=None):
    """The message with MSH-10 = control_id and, if given, MSH-3 = sender."""
    msg = set_msh(msg, 10, control_id)
    if sender is not None:
        msg = set_msh(msg, 3, sender)
    return msg


def parse_ack(msg):
    """An ACK as a dict: msh (list of fields, index = field number), msa1, msa2, errs
    [(location, code, severity)], segments (ids). ERR in the v2.5 form (ERR-2 location,
    ERR-3 code, ERR-4 severity) or, before v2.5, ERR-1 `SEG^seq^field^code&text&table`."""
    text = msg.decode("utf-8", "replace")
    segs = [s for s in text.split("\r") if s]
    out = {"msh": [], "msa1": None, "msa2": None, "msa3": None, "errs": [], "segments": []}
    if not segs or not segs[0].startswith("MSH"):
        return out
    sep = segs[0][3]
    comp = segs[0][4] if len(segs[0]) > 4 else "^"
    sub = segs[0][7] if len(segs[0]) > 7 else "&"
    for s in segs:
        f = s.split(sep)
        out["segments"].append(f[0])
        if f[0] == "MSH":
            out["msh"] = ["MSH", sep] + f[1:]
        elif f[0] == "MSA":
            out["msa1"] = f[1] if len(f) > 1 else ""
            out["msa2"] = f[2] if len(f) > 2 else ""
            out["msa3"] = f[3] if len(f) > 3 else ""
        elif f[0] == "ERR":
            if len(f) > 3 and f[3]:
                out["errs"].append((f[2], f[3].split(comp)[0], f[4] if len(f) > 4 else ""))
            elif len(f) > 1 and f[1]:
                c = f[1].split(comp)
                loc = comp.join(c[:3])
                code = c[3].split(sub)[0] if len(c) > 3 else ""
                out["errs"].append((loc, code, "E"))
    return out


def ack_problems(msg, control_id=None):
    """What is wrong with an ACK's form ('' when nothing): starts with MSH, ends every
    segment with CR, MSH-9 an ACK, one MSA with a known code, MSA-2 the control id."""
    if not msg.startswith(b"MSH"):
        return "does not start with MSH"
    if not msg.endswith(b"\r"):
        return "the last segment does not end with CR"
    if b"\n" in msg:
        return "LF inside"
    a = parse_ack(msg)
    if len(a["msh"]) < 10 or not a["msh"][9].startswith("ACK"):
        return "MSH-9 is not ACK"
    if a["segments"].count("MSA") != 1 or a["segments"][1] != "MSA":
        return "MSA is not the one segment after MSH"
    if a["msa1"] not in ("AA", "AE", "AR"):
        return "MSA-1 %r" % a["msa1"]
    if control_id is not None and a["msa2"] != control_id:
        return "MSA-2 %r, expected %r" % (a["msa2"], control_id)
    return ""


# ---- the decision log, read with Python's sqlite3 module --------------------------


def log_counts(db):
    """{(sender, control_id): count} of the ACK table and of verdict rows, read-only."""
    import sqlite3
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=10)
    try:
        acks = {}
        for sender, cid in con.execute("SELECT sender, control_id FROM ack"):
            acks[(sender, cid)] = acks.get((sender, cid), 0) + 1
        rows = {}
        for sender, cid, n in con.execute(
                "SELECT sender, control_id, count(*) FROM verdict GROUP BY sender, control_id"):
            rows[(sender, cid)] = n
        stored = {}
        for sender, cid, ack in con.execute("SELECT sender, control_id, ack FROM ack"):
            stored[(sender, cid)] = bytes(ack)
        return acks, rows, stored
    finally:
        con.close()
