"""`isohypse serve` against hostile and clumsy clients (issue 15), with real
sockets on a real server (the small demo world, service_data.py):

- a 200 MB chunked POST without a token: answered 413 after the first 64 KiB,
  and the server's resident memory (VmRSS, /proc/PID/status) grows by less
  than 16 MB; a declared Content-Length of 200 MB: 413 before any body;
- a head of megabytes (one endless header line, then a long request line):
  431 and 414 after a few KiB; 150 small headers: 431, 90: served;
- Content-Length -5, 1e3 or two different values: 400 at once (the old
  server waited for its timeout); Transfer-Encoding gzip: 501;
- a small chunked body and two requests on one kept-alive connection still
  reach the handlers whole;
- twenty slow clients sending one header line every 4 s: /health answers
  within 2 s throughout, and each slow client gets 408 at the whole-request
  deadline (10 s), although no single read waited more than 4 s;
- a forecast written into the inbox in two parts with a 3.5 s pause (seven
  polls of 0.5 s) is classified, not quarantined;
- a symbolic link in the inbox to a forecast outside it is quarantined (the
  link, not its target, which keeps its bytes) and nothing is issued from it;
  a link to a file inside the inbox is classified;
- --listen 0.0.0.0 warns that the service answers the network and belongs
  behind a TLS proxy; 127.0.0.1 does not."""
import hashlib
import http.client
import json
import os
import re
import select
import shutil
import signal
import socket
import subprocess
import threading
import time

from common import BIN, check, finish, scratch
from service_data import TOKEN, Server, world_and_model

tmp = scratch()
world, model_path = world_and_model(tmp)
server = Server(tmp, world, model_path)
host, port = server.base.split("//")[1].split(":")
port = int(port)


def vm_rss_kib():
    with open(f"/proc/{server.proc.pid}/status") as f:
        return int(re.search(r"VmRSS:\s+(\d+) kB", f.read()).group(1))


def connect(timeout=10):
    s = socket.create_connection((host, port), timeout=timeout)
    s.setsockopt(socket.IPPROTO_TCP, socket.TCP_NODELAY, 1)
    return s


def read_answer(s, seconds=10):
    """The status and body of one answer on socket s (None when the server closed without one)."""
    s.settimeout(seconds)
    data = b""
    try:
        while b"\r\n\r\n" not in data or len(data) < data.index(b"\r\n\r\n") + 4 + content_length(data):
            part = s.recv(65536)
            if not part:
                break
            data += part
    except (socket.timeout, ConnectionResetError):
        pass
    m = re.match(rb"HTTP/1\.1 (\d{3})", data)
    if not m:
        return None, data[:200]
    return int(m.group(1)), data[data.find(b"\r\n\r\n") + 4:]


def content_length(data):
    m = re.search(rb"Content-Length: (\d+)", data[: data.index(b"\r\n\r\n")])
    return int(m.group(1)) if m else 0


def stream(s, head, pieces, total):
    """Sends head, then pieces() until `total` bytes or an answer arrives; (bytes sent, seconds, status, body)."""
    t0, sent = time.time(), 0
    s.sendall(head)
    try:
        while sent < total:
            if select.select([s], [], [], 0)[0]:
                break  # the server answered: stop sending
            piece = pieces()
            s.sendall(piece)
            sent += len(piece)
    except (BrokenPipeError, ConnectionResetError):
        pass
    status, body = read_answer(s)
    return sent, time.time() - t0, status, body


def exchange(raw, seconds=10):
    """Sends raw bytes as they are, returns (status, body, seconds to the answer)."""
    s = connect()
    t0 = time.time()
    s.sendall(raw)
    status, body = read_answer(s, seconds)
    s.close()
    return status, body, time.time() - t0


def health_ok():
    status, _, _ = server.get("/health")
    return status == 200


try:
    # --- a 200 MB chunked body without a token
    rss0 = vm_rss_kib()
    chunk = b"x" * 65536
    piece = b"10000\r\n" + chunk + b"\r\n"
    s = connect()
    sent, seconds, status, body = stream(
        s, b"POST /api/v1/runs HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\n"
           b"Transfer-Encoding: chunked\r\n\r\n", lambda: piece, 200 * 1024 * 1024)
    s.close()
    rss1 = vm_rss_kib()
    check(status == 413 and b"65536" in body, f"200 MB chunked POST: {status} after {sent / 1e6:.1f} MB sent "
          f"in {seconds:.2f} s ({body[:120]!r})")
    check(seconds < 10 and sent < 50 * 1024 * 1024, f"answered quickly ({seconds:.2f} s, {sent / 1e6:.1f} MB sent)")
    check(rss1 - rss0 < 16 * 1024, f"VmRSS grew {(rss1 - rss0) / 1024:.1f} MB (< 16 MB): {rss0} -> {rss1} KiB")
    status, body, seconds = exchange(b"POST /api/v1/runs HTTP/1.1\r\nHost: x\r\nContent-Length: 209715200\r\n\r\n")
    check(status == 413 and seconds < 2, f"Content-Length 200 MB: {status} before any body in {seconds:.2f} s")

    # --- heads too large, too many headers
    s = connect()
    sent, seconds, status, body = stream(s, b"GET /health HTTP/1.1\r\nX-Big: ", lambda: b"a" * 65536, 192 * 1024 * 1024)
    s.close()
    # What the client could send before it saw the answer is mostly the loopback's socket buffers (a few MB).
    check(status == 431 and sent < 16 * 1024 * 1024, f"an endless header line: {status} after {sent / 1e6:.1f} MB "
          f"sent ({body[:100]!r})")
    status, body, _ = exchange(b"GET /health?" + b"a" * 20000 + b" HTTP/1.1\r\nHost: x\r\n\r\n")
    check(status == 414, f"a 20 kB request line: {status} ({body[:100]!r})")
    many = b"".join(b"X-H%d: v\r\n" % i for i in range(150))
    status, body, _ = exchange(b"GET /health HTTP/1.1\r\nHost: x\r\n" + many + b"\r\n")
    check(status == 431 and b"100 header lines" in body, f"150 headers: {status} ({body[:100]!r})")
    some = b"".join(b"X-H%d: v\r\n" % i for i in range(90))
    status, body, _ = exchange(b"GET /health HTTP/1.1\r\nHost: x\r\nConnection: close\r\n" + some + b"\r\n")
    check(status == 200 and b'"status":"ok"' in body, f"90 headers: {status}")

    # --- lengths refused at once (the timeout is 10 s)
    for length in (b"-5", b"1e3", b"10, 20"):
        status, body, seconds = exchange(b"POST /api/v1/runs HTTP/1.1\r\nHost: x\r\nContent-Length: " + length +
                                         b"\r\n\r\n")
        check(status == 400 and seconds < 2 and b"Content-Length" in body,
              f"Content-Length {length.decode()}: {status} in {seconds:.2f} s ({body[:90]!r})")
    status, body, seconds = exchange(b"POST /api/v1/runs HTTP/1.1\r\nHost: x\r\nContent-Length: 4\r\n"
                                     b"Content-Length: 5\r\n\r\nabcd")
    check(status == 400 and seconds < 2, f"two different Content-Length headers: {status}")
    status, body, _ = exchange(b"POST /api/v1/runs HTTP/1.1\r\nHost: x\r\nTransfer-Encoding: gzip\r\n\r\n")
    check(status == 501, f"Transfer-Encoding gzip: {status} ({body[:90]!r})")

    # --- what keeps the limits still reaches the handlers
    doc = b'{"files": ["nothing_here.nc"]}'
    status, body, _ = exchange(b"POST /api/v1/runs HTTP/1.1\r\nHost: x\r\nAuthorization: Bearer " + TOKEN.encode() +
                               b"\r\nTransfer-Encoding: chunked\r\nConnection: close\r\n\r\n" +
                               b"%x\r\n%s\r\n%x\r\n%s\r\n0\r\n\r\n" % (10, doc[:10], len(doc) - 10, doc[10:]))
    check(status == 404 and b"nothing_here.nc" in body, f"a small chunked body reaches the handler whole: {status} "
          f"({body[:90]!r})")
    conn = http.client.HTTPConnection(host, port, timeout=10)
    answers = []
    for path in ("/health", "/api/v1/model"):
        conn.request("GET", path)
        r = conn.getresponse()
        answers.append((r.status, len(r.read())))
    conn.close()
    check([a[0] for a in answers] == [200, 200], f"two requests on one kept-alive connection: {answers}")

    # --- twenty slow clients, one header line every 4 s
    slow_status = [None] * 20
    slow_seconds = [None] * 20

    def slow_client(i):
        s = connect(timeout=30)
        t0 = time.time()
        try:
            s.sendall(b"GET /health HTTP/1.1\r\n")
            for n in range(8):
                if select.select([s], [], [], 4)[0]:
                    break  # answered
                s.sendall(b"X-Slow-%d: still typing\r\n" % n)
        except (BrokenPipeError, ConnectionResetError):
            pass
        slow_status[i], _ = read_answer(s, 5)
        slow_seconds[i] = time.time() - t0
        s.close()

    slow = [threading.Thread(target=slow_client, args=(i,)) for i in range(20)]
    for t in slow:
        t.start()
    time.sleep(0.5)
    waits, end = [], time.time() + 9
    while time.time() < end:
        t0 = time.time()
        ok = health_ok()
        waits.append(time.time() - t0 if ok else 99)
        time.sleep(0.2)
    for t in slow:
        t.join()
    check(max(waits) < 2, f"/health during 20 slow clients: {len(waits)} probes, slowest {max(waits):.3f} s")
    check(all(s == 408 for s in slow_status) and max(slow_seconds) < 14,
          f"each slow client is answered 408 at the whole-request deadline: {set(slow_status)}, "
          f"{min(slow_seconds):.1f}-{max(slow_seconds):.1f} s")

    # --- a forecast written in two parts with a pause of seven polls
    with open(os.path.join(world, "forecasts", "fc_20251201.nc"), "rb") as f:
        data = f.read()
    target = os.path.join(server.inbox, "fc_20251201.nc")
    with open(target, "wb") as f:
        f.write(data[: len(data) // 2])
    time.sleep(3.5)
    with open(target, "ab") as f:
        f.write(data[len(data) // 2:])
    issued = os.path.join(server.archive, "guidance", "2025-12-01.json")
    ok = server.wait_for(lambda: os.path.exists(issued), 60, "2025-12-01 issued")
    quarantine = os.path.join(server.inbox, "quarantine")
    check(ok and not os.path.exists(os.path.join(quarantine, "fc_20251201.nc")),
          "a forecast written with a 3.5 s pause is classified, not quarantined")
    check("cannot be read yet" in open(server.log_path).read(), "the log says the half-written file is tried again")

    # --- symbolic links
    outside = os.path.join(tmp, "elsewhere")
    os.makedirs(outside)
    secret = os.path.join(outside, "fc_20251202.nc")
    shutil.copyfile(os.path.join(world, "forecasts", "fc_20251202.nc"), secret)
    digest = hashlib.sha256(open(secret, "rb").read()).hexdigest()
    os.symlink(secret, os.path.join(server.inbox, "fc_20251202.nc"))
    reason_path = os.path.join(quarantine, "fc_20251202.nc.reason.txt")
    ok = server.wait_for(lambda: os.path.exists(reason_path), 30, "the link quarantined")
    reason = open(reason_path).read() if ok else ""
    check(ok and os.path.islink(os.path.join(quarantine, "fc_20251202.nc")) and "outside the inbox" in reason,
          f"a link out of the inbox is quarantined as a link: {reason.strip()[-150:]!r}")
    check(os.path.isfile(secret) and hashlib.sha256(open(secret, "rb").read()).hexdigest() == digest and
          not os.path.exists(os.path.join(server.archive, "guidance", "2025-12-02.json")),
          "its target keeps its place and bytes, and nothing is issued from it")
    store = os.path.join(server.inbox, "store")
    os.makedirs(store)
    shutil.copyfile(os.path.join(world, "forecasts", "fc_20251202.nc"), os.path.join(store, "fc_20251202.nc"))
    os.symlink(os.path.join(store, "fc_20251202.nc"), os.path.join(server.inbox, "fc_20251202.nc"))
    ok = server.wait_for(lambda: os.path.exists(os.path.join(server.archive, "guidance", "2025-12-02.json")), 60,
                         "2025-12-02 issued")
    check(ok, "a link to a file inside the inbox is classified")
    check(health_ok(), "the service still answers after all of it")

    # --- verification runs one at a time: five different ranges asked for at once
    queries = ["issued_to=2025-12-02", "issued_to=2025-12-02&all_months=true", "from=2025-12-01", "from=2025-12-02",
               "to=2025-12-31"]
    answers = [None] * len(queries)
    start = threading.Barrier(len(queries))

    def verify(i):
        start.wait()
        status, _, body = server.get("/api/v1/verification?" + queries[i])
        answers[i] = (status, json.loads(body))

    asked = [threading.Thread(target=verify, args=(i,)) for i in range(len(queries))]
    for t in asked:
        t.start()
    for t in asked:
        t.join()
    busy = [a for a in answers if a[0] == 503]
    check(all(a[0] in (200, 400, 503) for a in answers) and any(a[0] == 200 for a in answers) and
          all("retry" in a[1]["error"] for a in busy),
          f"five verifications at once: statuses {[a[0] for a in answers]}")
    runs = []
    for m in re.finditer(r"(\d\d):(\d\d):(\d\d\.\d{3}) info verification of .*? in (\d+) ms",
                         open(server.log_path).read()):
        end = int(m.group(1)) * 3600 + int(m.group(2)) * 60 + float(m.group(3))
        runs.append((end - int(m.group(4)) / 1000, end))
    runs = sorted(runs)[-(len(queries) - len(busy)):]
    overlap = max((a[1] - b[0] for a, b in zip(runs, runs[1:])), default=0)
    check(len(runs) >= 2 and overlap < 0.003,
          f"their runs in the log do not overlap: {len(runs)} runs, "
          f"{', '.join(f'{e - s_:.3f} s' for s_, e in runs)}, largest overlap {overlap * 1000:.1f} ms")

    # --- --listen on every interface warns; loopback does not
    log = open(server.log_path).read()
    check("TLS" not in log, "listening on 127.0.0.1: no network warning")
    wide = subprocess.Popen([BIN, "serve", "--model", model_path, "--inbox", os.path.join(tmp, "inbox2"),
                             "--archive", os.path.join(tmp, "archive2"), "--listen", "0.0.0.0:0"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            env=dict(os.environ, ISOHYPSE_TOKEN=TOKEN))
    while "listening on" not in wide.stdout.readline():  # then its signals are taken
        pass
    wide.send_signal(signal.SIGTERM)
    err = wide.communicate(timeout=20)[1]
    check("--listen 0.0.0.0:0" in err and "TLS reverse proxy" in err and "network" in err,
          f"--listen 0.0.0.0 warns: {err[err.find('--listen'):][:160]!r}")
finally:
    server.stop()
    shutil.rmtree(tmp, ignore_errors=True)
finish()
