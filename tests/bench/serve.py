# SPDX-License-Identifier: MIT
"""make bench-serve: throughput and latency of `syrinx serve` with ACK after commit.

For each scenario (connections x messages in flight per connection) a fresh
decision log is made, a server started on a free port of 127.0.0.1, and one
client process drives every connection from a single event loop (selectors):
each connection sends its next message when an ACK leaves room in its window
(window 1: send, wait for the ACK, send the next; window 8: pipelined). Every
message is distinct (its MSH-10 is new); the contents cycle through a template
set: `morning` (the 45 invented messages of fixtures/demo/morning.hl7, a mix of
ORU^R01 and OUL^R22) or `bloodgas` (the one ORU^R01 of
fixtures/hl7/oru-r01-bloodgas.hl7), or `unscreened` (the ADT^A01 of
fixtures/hl7/batch.hl7: answered AR and its ACK logged, nothing screened: the
cost of the service without the model).

Reported per scenario: messages ACKed, seconds, messages/s, the latency from a
message's send to its ACK (p50, p90, p99, max; nearest-rank percentiles), the
commits the server made (from its closing log line) and so the messages per
commit, and the CPU seconds of the server and of this client.

The log lives in --dir (default: the build folder), which should be the disk
the service would use: a log on tmpfs would make every sync free.

Loopback only (127.0.0.1); each scenario is bounded by --seconds or --messages,
and the server is stopped (SIGTERM, then SIGKILL) at the end of each.

With --samples N the server runs a ruleset made for the run: the shipped
default as its base, and `set estimate.samples = N` (the Latin hypercube draws of
the interval; 64 by default), to see what the model's cost does to the rate.

usage: serve.py [--seconds 20] [--messages N] [--conns 1,16] [--window 1,8]
                [--template morning|bloodgas|unscreened] [--samples N] [--dir DIR]
                [--json FILE] [-- extra syrinx serve options]
"""
import argparse
import json
import os
import re
import resource
import selectors
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time

SB, EB, CR = b"\x0b", b"\x1c", b"\r"
HOST = "127.0.0.1"
SRC = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
BUILD = os.environ.get("SX_BUILDDIR") or SRC
FIXTURES = os.path.join(SRC, "fixtures")


def read_messages(path):
    """Messages of a fixture: CR terminators, batch envelope dropped, split on MSH."""
    with open(path, "rb") as f:
        data = f.read().replace(SB, b"").replace(EB, b"")
    data = data.replace(b"\r\n", b"\r") if b"\r" in data else data.replace(b"\n", b"\r")
    out, cur = [], []
    for seg in data.split(b"\r"):
        if not seg.strip() or seg[:3] in (b"FHS", b"BHS", b"BTS", b"FTS"):
            continue
        if seg.startswith(b"MSH") and cur:
            out.append(b"\r".join(cur))
            cur = []
        cur.append(seg)
    if cur:
        out.append(b"\r".join(cur))
    return out


def split_on_msh10(msg):
    """(before MSH-10, after MSH-10): a new message is before + id + after."""
    first, rest = (msg.split(b"\r", 1) + [b""])[:2]
    sep = first[3:4]
    parts = first.split(sep)
    while len(parts) < 10:
        parts.append(b"")
    before = sep.join(parts[:9]) + sep
    after = sep + sep.join(parts[10:]) if len(parts) > 10 else b""
    if rest:
        after += b"\r" + rest
    return before, after


def templates(name):
    if name == "bloodgas":
        msgs = read_messages(os.path.join(FIXTURES, "hl7", "oru-r01-bloodgas.hl7"))
    elif name == "unscreened":
        msgs = [m for m in read_messages(os.path.join(FIXTURES, "hl7", "batch.hl7"))
                if b"|ADT^A01" in m]
    else:
        msgs = read_messages(os.path.join(FIXTURES, "demo", "morning.hl7"))
    return [split_on_msh10(m) for m in msgs]


def free_port():
    s = socket.socket()
    try:
        s.bind((HOST, 0))
        return s.getsockname()[1]
    finally:
        s.close()


def proc_cpu(pid):
    """CPU seconds (user + system) of a process, from /proc."""
    try:
        with open("/proc/%d/stat" % pid) as f:
            fields = f.read().rsplit(")", 1)[1].split()
        return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")
    except (OSError, IndexError, ValueError):
        return float("nan")


class Conn:
    def __init__(self, n, window):
        self.sock = socket.create_connection((HOST, PORT[0]), timeout=10)
        self.sock.setsockopt(socket.IPPROTO_TCP, socket.TCP_NODELAY, 1)
        self.sock.setblocking(False)
        self.n = n
        self.window = window
        self.inflight = []  # send times, in order (ACKs come back in order)
        self.rbuf = b""
        self.wbuf = b""


PORT = [0]


def run_scenario(args, conns, window, tmpl, extra):
    """One scenario on a fresh log; the server and the log's folder go away at the end,
    whatever happens."""
    workdir = tempfile.mkdtemp(prefix="sx-bench-serve-", dir=args.dir)
    try:
        return serve_and_drive(args, conns, window, tmpl, extra, workdir)
    finally:
        if not args.keep:
            shutil.rmtree(workdir, ignore_errors=True)


def serve_and_drive(args, conns, window, tmpl, extra, workdir):
    db = os.path.join(workdir, "bench.sqlite")
    log_path = os.path.join(workdir, "serve.log")
    port = free_port()
    PORT[0] = port
    log = open(log_path, "wb")
    server = subprocess.Popen([os.path.join(BUILD, "syrinx"), "serve", "--db", db, "--listen",
                               "%s:%d" % (HOST, port)] + extra,
                              stdin=subprocess.DEVNULL, stdout=log, stderr=log)
    try:
        until = time.monotonic() + 20
        while time.monotonic() < until:
            with open(log_path, "rb") as f:
                if b"listening on" in f.read():
                    break
            if server.poll() is not None:
                raise RuntimeError("syrinx serve did not start")
            time.sleep(0.02)
        cpu0_server = proc_cpu(server.pid)
        cpu0_client = resource.getrusage(resource.RUSAGE_SELF)
        result = drive(args, conns, window, tmpl)
        cpu_server = proc_cpu(server.pid) - cpu0_server
        ru = resource.getrusage(resource.RUSAGE_SELF)
        cpu_client = (ru.ru_utime - cpu0_client.ru_utime) + (ru.ru_stime - cpu0_client.ru_stime)
        server.send_signal(signal.SIGTERM)
        try:
            server.wait(60)
        except subprocess.TimeoutExpired:
            server.kill()
            server.wait(10)
    finally:
        if server.poll() is None:
            server.kill()  # this server only, by its process id
            server.wait(10)
        log.close()
    with open(log_path, "rb") as f:
        text = f.read().decode("utf-8", "replace")
    m = re.search(r"stopped: (\d+) messages.*?(\d+) commits", text)
    commits = int(m.group(2)) if m else 0
    result.update(conns=conns, window=window, commits=commits,
                  per_commit=result["messages"] / commits if commits else float("nan"),
                  server_cpu_s=cpu_server, client_cpu_s=cpu_client,
                  log_bytes=os.path.getsize(db) if os.path.exists(db) else 0)
    return result


def drive(args, conns, window, tmpl):
    """Send for args.seconds (or until args.messages are ACKed); return figures."""
    sel = selectors.DefaultSelector()
    cs = [Conn(i, window) for i in range(conns)]
    for c in cs:
        sel.register(c.sock, selectors.EVENT_READ, c)
    seq = [0]
    latencies = []
    acked = [0]
    errors = [0]
    limit = args.messages
    run_id = "%x" % (int(time.time() * 1000) & 0xFFFFFFF)
    unscreened = args.template == "unscreened"

    def next_frame():
        i = seq[0]
        seq[0] += 1
        before, after = tmpl[i % len(tmpl)]
        return SB + before + ("B%s-%07d" % (run_id, i)).encode() + after + EB + CR

    def fill(c, now):
        while len(c.inflight) < c.window and (not limit or seq[0] < limit):
            c.wbuf += next_frame()
            c.inflight.append(now)
        flush(c)

    def flush(c):
        while c.wbuf:
            try:
                n = c.sock.send(c.wbuf)
            except BlockingIOError:
                break
            c.wbuf = c.wbuf[n:]
        sel.modify(c.sock, selectors.EVENT_READ | (selectors.EVENT_WRITE if c.wbuf else 0), c)

    t0 = time.monotonic()
    end = t0 + args.seconds
    for c in cs:
        fill(c, t0)
    sending = True
    while True:
        now = time.monotonic()
        if sending and (now >= end or (limit and seq[0] >= limit)):
            sending = False  # stop sending; collect what is in flight (bounded below)
        if not sending and all(not c.inflight for c in cs):
            break
        if now > end + 60:
            print("bench: ACKs missing 60 s after the end; giving up", file=sys.stderr)
            break
        for key, ev in sel.select(timeout=1.0):
            c = key.data
            if ev & selectors.EVENT_WRITE:
                flush(c)
            if not ev & selectors.EVENT_READ:
                continue
            try:
                data = c.sock.recv(262144)
            except BlockingIOError:
                continue
            if not data:
                raise RuntimeError("the server closed connection %d" % c.n)
            c.rbuf += data
            t = time.monotonic()
            while True:
                e = c.rbuf.find(EB + CR)
                if e < 0:
                    break
                ack = c.rbuf[1:e]
                c.rbuf = c.rbuf[e + 2:]
                sent = c.inflight.pop(0)
                latencies.append(t - sent)
                acked[0] += 1
                if b"MSA|AA|" not in ack and b"MSA|AE|" not in ack and not unscreened:
                    errors[0] += 1
            if sending:
                fill(c, t)
    elapsed = time.monotonic() - t0
    for c in cs:
        sel.unregister(c.sock)
        c.sock.close()
    latencies.sort()

    def pct(p):
        if not latencies:
            return float("nan")
        return latencies[min(len(latencies) - 1, max(0, int(-(-p * len(latencies) // 100)) - 1))]

    return {"messages": acked[0], "seconds": elapsed, "rate": acked[0] / elapsed,
            "p50_ms": pct(50) * 1e3, "p90_ms": pct(90) * 1e3, "p99_ms": pct(99) * 1e3,
            "max_ms": (latencies[-1] * 1e3) if latencies else float("nan"),
            "not_accepted": errors[0]}


def main():
    argv = sys.argv[1:]
    extra = []
    if "--" in argv:
        i = argv.index("--")
        argv, extra = argv[:i], argv[i + 1:]
    ap = argparse.ArgumentParser(description="throughput and latency of syrinx serve")
    ap.add_argument("--seconds", type=float, default=20.0)
    ap.add_argument("--messages", type=int, default=0, help="stop after N messages instead")
    ap.add_argument("--conns", default="1,16")
    ap.add_argument("--window", default="1,8")
    ap.add_argument("--template", choices=("morning", "bloodgas", "unscreened"), default="morning")
    ap.add_argument("--samples", type=int, default=0,
                    help="run a ruleset on the default with estimate.samples = N")
    ap.add_argument("--dir", default=BUILD, help="folder of the fresh logs (a real disk)")
    ap.add_argument("--keep", action="store_true", help="keep the logs")
    ap.add_argument("--json", help="also write the results as JSON to this file")
    args = ap.parse_args(argv)
    if args.messages:
        args.seconds = 3600.0
    tmpl = templates(args.template)
    rsdir = None
    if args.samples:
        rsdir = tempfile.mkdtemp(prefix="sx-bench-rules-", dir=args.dir)
        with open(os.path.join(rsdir, "bench.rules"), "w") as f:
            f.write('version "bench, %d draws"\nbase "%s"\nset estimate.samples = %d\n'
                    % (args.samples, os.path.join(SRC, "rulesets", "default"), args.samples))
        extra = ["--ruleset", rsdir] + extra
    print("syrinx serve, ACK after commit; template %s (%d messages cycled); %s; log in %s"
          % (args.template, len(tmpl), "%d draws" % args.samples if args.samples
             else "the default ruleset", args.dir))
    print("%5s %6s %8s %8s %9s %8s %8s %8s %8s %8s %8s %8s"
          % ("conns", "window", "messages", "seconds", "msg/s", "p50_ms", "p90_ms", "p99_ms",
             "max_ms", "msg/commit", "srv_cpu", "cli_cpu"))
    results = []
    for conns in [int(x) for x in args.conns.split(",")]:
        for window in [int(x) for x in args.window.split(",")]:
            r = run_scenario(args, conns, window, tmpl, extra)
            results.append(r)
            print("%5d %6d %8d %8.2f %9.0f %8.2f %8.2f %8.2f %8.2f %8.1f %8.2f %8.2f"
                  % (conns, window, r["messages"], r["seconds"], r["rate"], r["p50_ms"],
                     r["p90_ms"], r["p99_ms"], r["max_ms"], r["per_commit"],
                     r["server_cpu_s"], r["client_cpu_s"]))
            if r["not_accepted"]:
                print("      (%d ACKs were neither AA nor AE)" % r["not_accepted"])
            sys.stdout.flush()
    if rsdir:
        shutil.rmtree(rsdir, ignore_errors=True)
    if args.json:
        with open(args.json, "w") as f:
            json.dump({"template": args.template, "samples": args.samples or 64,
                       "extra": extra, "results": results}, f, indent=1)


if __name__ == "__main__":
    main()
