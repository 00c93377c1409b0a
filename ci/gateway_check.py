"""Independent Modbus TCP client check of `polytrope-host gateway`.

An outside client (pymodbus, pinned in ci/checks.d/gateway.sh) reads the live
register image over 127.0.0.1, decodes it with nothing but the published map
(docs/register-map.csv) and checks every value and quality code against the
kernel's results for the same scan (`polytrope-host gateway --results K..K`,
printed straight from the result types, not from the image). Then: the
Modbus exception cases, the guarded command block, a stalled client, and
100 clients reading in a loop while the scan loop's period is measured.

Only loopback traffic; every loop is bounded in time. The demo data are an
invented scenario.

    python3 ci/gateway_check.py [--quick] path/to/polytrope-host [...]

The binary may be given as a command (`qemu-aarch64 path/to/polytrope-host`
runs the check against an emulated build). `--quick` skips the 100-client
load phase.
"""

import csv
import json
import math
import os
import socket
import struct
import subprocess
import sys
import threading
import time

from pymodbus.client import ModbusTcpClient

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
ARGS = sys.argv[1:]
QUICK = "--quick" in ARGS
BIN = [a for a in ARGS if a != "--quick"] or [os.path.join(ROOT, "target/release/polytrope-host")]
SCAN_MS = 20
LAYOUT_VERSION = 2  # src/registers/mod.rs (2: the loss-ledger blocks)
QUALITY = {"good": 0, "uncertain": 1, "bad": 2, "not-applicable": 3}
failures = []


def check(cond, what):
    if not cond:
        failures.append(what)
        print("FAIL:", what, flush=True)


def load_map():
    with open(os.path.join(ROOT, "docs/register-map.csv"), newline="") as f:
        return list(csv.DictReader(f))


MAP = load_map()
INPUT = [r for r in MAP if r["table"] == "input"]
IMAGE_LEN = max(int(r["address"]) + int(r["registers"]) for r in INPUT)
HEADER = {r["key"]: int(r["address"]) for r in INPUT if r["block"] == "header"}
TRAILER = [int(r["address"]) for r in INPUT if r["block"] == "trailer"][0]


def start(*extra):
    p = subprocess.Popen(
        [*BIN, "gateway", "--port", "0", "--scan-ms", str(SCAN_MS), *extra],
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    line = p.stderr.readline()
    port = int(line.split("127.0.0.1:")[1].split()[0])
    return p, port


def client(port):
    c = ModbusTcpClient("127.0.0.1", port=port, timeout=3)
    assert c.connect(), "cannot connect"
    return c


def u32(words, order):
    hi, lo = (words[0], words[1]) if order == 0 else (words[1], words[0])
    return (hi << 16) | lo


def f32(words, order):
    return struct.unpack(">f", struct.pack(">I", u32(words, order)))[0]


def as_f32(x):
    return struct.unpack(">f", struct.pack(">f", x))[0]


def read_image(c):
    """Reads the whole image in 125-register requests; retries until the
    header's and the trailer's scan counters agree (one scan's image)."""
    for _ in range(200):
        regs = []
        for a in range(0, IMAGE_LEN, 125):
            r = c.read_input_registers(a, count=min(125, IMAGE_LEN - a))
            assert not r.isError(), r
            regs += r.registers
        order = regs[HEADER["word_order"]]
        k = HEADER["scan_count"]
        if u32(regs[k:k + 2], order) == u32(regs[TRAILER:TRAILER + 2], order):
            return regs
    raise RuntimeError("no consistent image in 200 tries")


def expected(first, last=None):
    last = last or first
    out = subprocess.run([*BIN, "gateway", "--scan-ms", str(SCAN_MS), "--results", f"{first}..{last}"],
                         check=True, capture_output=True, text=True).stdout
    return {d["scan_count"]: d["fields"] for d in map(json.loads, out.splitlines())}


def compare_block_values(regs, exp, rows, order, label):
    """Checks every value row of `rows` against the kernel's results."""
    n = 0
    status = {}
    for r in rows:
        if r["type"] == "status":
            status[(r["block"], r["instance"])] = regs[int(r["address"])]
    for r in rows:
        if not r["quality_address"]:
            continue
        a, qa, qs = int(r["address"]), int(r["quality_address"]), int(r["quality_shift"])
        code = (regs[qa] >> qs) & 3
        st = status[(r["block"], r["instance"])]
        key = r["key"]
        if r["block"] == "stage" and st & (1 << 15) and r["pump_key"]:
            key = r["pump_key"]
        name = f'{r["block"]}.{r["instance"]}.{key}'
        if name not in exp:
            # Not in use: no cooler, no interstage pressure, a pump's spare slot.
            check(code == 3 and regs[a] == 0 and regs[a + 1] == 0, f"{label}: {name} should be n/a, code {code}")
            continue
        value, quality = exp[name]
        check(code == QUALITY[quality], f"{label}: {name} quality {code} != {quality}")
        if r["type"] == "uint32":
            got = u32(regs[a:a + 2], order)
            check(got == value, f"{label}: {name} {got} != {value}")
        else:
            got = f32(regs[a:a + 2], order)
            check(got == as_f32(value), f"{label}: {name} {got!r} != {value!r}")
        n += 1
    return n, status


def check_status_and_scaled(regs, exp, status, order):
    for i in range(1, 6):
        st = status[("stage", str(i))]
        pump = bool(st & (1 << 15))
        check(pump == (i == 5), f"stage {i} pump bit")
        check((st >> 4) & 0xF == exp[f"stage.{i}.condition_code"][0], f"stage {i} condition code")
        check(bool(st & (1 << 8)) == exp[f"stage.{i}.steady_state"], f"stage {i} steady bit")
        present = f"cooler.{i}.condition" in exp
        check(bool(status[("cooler", str(i))] & 4) == present, f"cooler {i} present bit")
        if present:
            check((status[("cooler", str(i))] >> 4) & 0xF == exp[f"cooler.{i}.condition_code"][0], f"cooler {i} condition code")
    s = status[("surge", "1")]
    check(bool(s & (1 << 9)) == exp["surge.1.trip_request"], "surge trip bit")
    check(bool(s & (1 << 10)) == exp["surge.1.detection_blind"], "surge blind bit")
    check(bool(s & (1 << 11)) == exp["surge.1.detection_armed"], "surge armed bit")
    check((s >> 4) & 0xF == exp["surge.1.condition_code"][0], "surge fault code")
    for i in (1, 2):
        check((status[("channel", str(i))] >> 4) & 0xF == exp[f"channel.{i}.condition_code"][0], f"channel {i} fault code")
    n = 0
    for r in INPUT:
        if r["block"] != "scaled" or r["type"] == "reserved":
            continue
        a, scale = int(r["address"]), float(r["scale"])
        inst = r["instance"]
        src = r["label"]
        key = r["key"]
        if src == "stage" and inst == "5" and r["pump_key"]:
            key = r["pump_key"]
        name = f"{src}.{inst}.{key}"
        wide = r["type"] == "int32"
        raw = u32(regs[a:a + 2], order) if wide else regs[a]
        bits = 32 if wide else 16
        raw = raw - (1 << bits) if raw >= 1 << (bits - 1) else raw
        sentinel = -(1 << (bits - 1))
        if name not in exp or exp[name][1] == "bad":
            check(raw == sentinel, f"scaled {name} should be the no-value mark, got {raw}")
        else:
            v = as_f32(exp[name][0]) * scale
            want = max(-(1 << (bits - 1)) + 1, min((1 << (bits - 1)) - 1, math.floor(abs(v) + 0.5) * (1 if v >= 0 else -1)))
            check(abs(raw - want) <= 1, f"scaled {name} {raw} != {want}")
        n += 1
    return n


def check_ledger(regs, status, order):
    """The loss-ledger blocks as a client reads them (consistency check of
    the image, not of the physics): in use for the train and each compressor
    stage, not in use for the pump's slot, and the lines read from the
    registers add up to the measured total they carry (f32 rounding)."""
    check(bool(status[("ledger", "0")] & 4), "ledger block in use")
    lines, total = 0.0, None
    for r in INPUT:
        if r["block"] not in ("ledger", "ledger_stage") or r["type"] != "float32":
            continue
        v = f32(regs[int(r["address"]):int(r["address"]) + 2], order)
        if r["key"] == "ledger_measured_total_W":
            total = v
        elif r["key"] != "ledger_forward_mass_flow_kg_per_s":
            lines += v
    for i in range(1, 6):
        check(bool(status[("ledger_stage", str(i))] & 4) == (i <= 4), f"ledger stage {i} present bit")
    check(total is not None and total > 1e6, f"ledger measured total {total}")
    check(total is not None and abs(lines - total) <= 1e-5 * total, f"ledger lines {lines} != total {total}")
    print(f"ledger: lines from the registers add up to {total:.0f} W (difference {lines - total:.1f} W)", flush=True)


def exception_code(r):
    return getattr(r, "exception_code", None) if r.isError() else None


def raw_request(port, pdu):
    s = socket.create_connection(("127.0.0.1", port), timeout=3)
    s.sendall(struct.pack(">HHHB", 7, 0, len(pdu) + 1, 1) + pdu)
    resp = s.recv(256)
    s.close()
    return resp[7:]


def main():
    print(f"gateway check: map of {IMAGE_LEN} input registers, {len(INPUT)} rows; binary {' '.join(BIN)}", flush=True)
    gw, port = start("--run-for-s", "60", "--idle-s", "2", "--max-rate", "5000", "--max-connections", "8")
    try:
        c = client(port)
        # 1. values and qualities of a live scan against the kernel's results.
        regs = read_image(c)
        order = regs[HEADER["word_order"]]
        k = u32(regs[HEADER["scan_count"]:HEADER["scan_count"] + 2], order)
        check(regs[HEADER["layout_version"]] == LAYOUT_VERSION and regs[HEADER["image_registers"]] == IMAGE_LEN, "header")
        exp = expected(k)[k]
        n, status = compare_block_values(regs, exp, INPUT, order, f"scan {k}")
        m = check_status_and_scaled(regs, exp, status, order)
        print(f"values: scan {k}: {n} values with quality and {m} scaled integers match the kernel's results", flush=True)
        check(n >= 150, f"only {n} values compared")
        check_ledger(regs, status, order)

        # 2. exceptions; the server keeps serving after each.
        cases = [
            ("read input registers past the end", c.read_input_registers(IMAGE_LEN - 1, count=2), 2),
            ("read input registers beyond the image", c.read_input_registers(IMAGE_LEN + 100, count=1), 2),
            ("read holding registers past the command block", c.read_holding_registers(2, count=3), 2),
            ("write registers outside the command block", c.write_registers(10, [1, 2]), 2),
            ("write one register outside the command block", c.write_register(20, 5), 2),
            ("write one register of the command block", c.write_register(0, 2), 3),
            ("command with a wrong guard", c.write_registers(0, [2, 0, 2, 1]), 3),
            ("unknown command", c.write_registers(0, [9, 0, 0xFFFF ^ 9, 1]), 3),
            ("command for a missing surge monitor", c.write_registers(0, [2, 7, 0xFFFF ^ 2, 1]), 3),
            ("partial command block", c.write_registers(1, [0, 0xFFFF ^ 2, 1]), 3),
            ("read coils (function 01)", c.read_coils(0, count=1), 1),
            ("read discrete inputs (function 02)", c.read_discrete_inputs(0, count=1), 1),
            ("write coil (function 05)", c.write_coil(0, True), 1),
        ]
        for what, r, want in cases:
            got = exception_code(r)
            check(got == want, f"exception for {what}: {got} != {want}")
        # Requests the client library will not build: raw frames.
        raw = [
            ("read 126 input registers (over the protocol's 125)", bytes([0x04, 0, 0, 0, 126]), bytes([0x84, 0x03])),
            ("function 0x41 (not served)", bytes([0x41, 0x00]), bytes([0xC1, 0x01])),
        ]
        for what, req, want in raw:
            pdu = raw_request(port, req)
            check(pdu == want, f"exception for {what}: {pdu!r} != {want!r}")
        check(not c.read_input_registers(0, count=18).isError(), "serving after the exceptions")
        print(f"exceptions: {len(cases) + len(raw)} cases answered with the expected code; still serving", flush=True)

        # 3. commands: reset the added margin, acknowledge surge events, reset the trip request.
        for code, seq in ((2, 4242), (1, 4243), (3, 4244)):
            r = c.write_registers(0, [code, 0, 0xFFFF ^ code, seq])
            check(not r.isError(), f"command {code} refused: {r}")
            for _ in range(100):
                h = c.read_input_registers(0, count=18).registers
                if h[HEADER["command_sequence"]] == seq:
                    break
                time.sleep(0.01)
            check(h[HEADER["command_sequence"]] == seq and h[HEADER["command_code"]] == code, f"command {code} not echoed")
        hr = c.read_holding_registers(0, count=4).registers
        check(hr == [3, 0, 0xFFFF ^ 3, 4244], f"command block read-back {hr}")
        print("commands: reset-added-margin, acknowledge-surge-events, reset-trip-request carried out and echoed", flush=True)

        # 4. a stalled client (half a request, then silence) blocks nobody and is closed when idle.
        stalled = socket.create_connection(("127.0.0.1", port), timeout=5)
        stalled.sendall(b"\x00\x01\x00")
        h0 = u32(c.read_input_registers(0, count=18).registers[12:14], order)
        t0 = time.monotonic()
        time.sleep(1.0)
        h1 = u32(c.read_input_registers(0, count=18).registers[12:14], order)
        scans = h1 - h0
        check(scans >= 0.5 * 1000 / SCAN_MS, f"scan loop slowed by a stalled client: {scans} scans in 1 s")
        closed = stalled.recv(16) == b""  # blocks until the server closes it (idle 2 s) or 5 s pass
        check(closed, "stalled connection not closed")
        print(f"stalled client: {scans} scans in 1 s while it stalled; closed after {time.monotonic() - t0:.1f} s idle", flush=True)

        # 5. bounded connections: with 8 open, a 9th is closed at once; the others keep working.
        extra = [socket.create_connection(("127.0.0.1", port), timeout=5) for _ in range(7)]
        time.sleep(0.2)
        ninth = socket.create_connection(("127.0.0.1", port), timeout=5)
        refused = ninth.recv(16) == b""
        check(refused, "a 9th connection was not refused")
        check(not c.read_input_registers(0, count=18).isError(), "serving while at the connection limit")
        for s in extra + [ninth]:
            s.close()
        time.sleep(0.2)
        again = client(port)
        check(not again.read_input_registers(0, count=18).isError(), "a new connection after others closed")
        again.close()
        print("connections: with 8 open a 9th is closed at once; the 8 keep working; a slot frees when one closes", flush=True)
        c.close()
    finally:
        gw.terminate()
        gw.wait(10)

    if QUICK:
        finish()
        return
    # 6. 100 clients reading in a loop; the scan loop's period measured by the gateway.
    duration = 4.0
    gw, port = start("--run-for-s", "8", "--max-connections", "150", "--max-rate", "200")
    first = client(port)
    k0 = u32(first.read_input_registers(0, count=18).registers[12:14], 0)
    # The per-connection rate bound: 100 requests at 200 per second take at least 0.5 s.
    t0 = time.monotonic()
    for _ in range(100):
        first.read_input_registers(0, count=2)
    took = time.monotonic() - t0
    check(took >= 0.45, f"rate bound: 100 requests in {took:.3f} s")
    print(f"rate bound: 100 requests on one connection at --max-rate 200 took {took:.2f} s", flush=True)
    first.close()
    table = expected(k0, k0 + int(12 * 1000 / SCAN_MS))
    stage1 = [r for r in INPUT if r["block"] == "stage" and r["instance"] == "1" and r["quality_address"]]
    counts = {"ok": 0, "wrong": 0, "errors": 0}
    lock = threading.Lock()

    def reader():
        try:
            c = client(port)
        except Exception:
            with lock:
                counts["errors"] += 1
            return
        ok = wrong = errors = 0
        last = 0
        end = time.monotonic() + duration
        while time.monotonic() < end:
            r = c.read_input_registers(0, count=64)
            if r.isError():
                errors += 1
                continue
            regs = r.registers
            k = u32(regs[12:14], 0)
            bad = regs[0] != LAYOUT_VERSION or regs[2] != IMAGE_LEN or k < last or k not in table
            if not bad:
                exp = table[k]
                for row in stage1:
                    a = int(row["address"])
                    if row["type"] == "float32" and f32(regs[a:a + 2], 0) != as_f32(exp[f'stage.1.{row["key"]}'][0]):
                        bad = True
            last = k
            if bad:
                wrong += 1
            else:
                ok += 1
        c.close()
        with lock:
            counts["ok"] += ok
            counts["wrong"] += wrong
            counts["errors"] += errors

    threads = [threading.Thread(target=reader) for _ in range(100)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    out, _ = gw.communicate(timeout=30)
    stats = json.loads(out.strip().splitlines()[-1])
    print(f"load: 100 clients for {duration:.0f} s: {counts['ok']} responses checked against the kernel's results, "
          f"{counts['wrong']} wrong, {counts['errors']} errors; scan loop ({SCAN_MS} ms): "
          f"mean {stats['period_mean_ms']} ms, p99 {stats['period_p99_ms']} ms, max {stats['period_max_ms']} ms, "
          f"late scans {stats['late_scans']}, work per scan p99 {stats['work_p99_ms']} ms, real-time priority {stats['realtime_priority']}, requests served {stats['requests']}", flush=True)
    check(counts["wrong"] == 0 and counts["errors"] == 0, f"load: {counts}")
    check(counts["ok"] > 1000, f"load: only {counts['ok']} responses")
    check(abs(stats["period_mean_ms"] - SCAN_MS) < 0.1 * SCAN_MS, f"scan period under load: {stats}")
    finish()


def finish():
    if failures:
        print(f"gateway check: {len(failures)} FAILED")
        sys.exit(1)
    print("gateway check: all passed")


if __name__ == "__main__":
    main()
