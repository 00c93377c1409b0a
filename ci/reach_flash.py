#!/usr/bin/env python3
"""Flash bytes reachable from one function of an ARM (Thumb) ELF.

    ci/reach_flash.py ELF ROOT [--list] [--min-coverage=F]

ROOT is a substring of a demangled function name (the shortest match is
taken). The closure follows, from the root: direct branches and calls
(`b`, `bl`, conditional branches, `cbz`/`cbnz`) to another symbol; the
addresses a function forms (a `movw`/`movt` pair, or a `movw` no `movt`
completes, for data only; and the literal-pool words of its code) that fall
in `.rodata`, or exactly on a function's entry (Thumb bit set: an address
taken for an indirect call); and the addresses held in each reached
`.rodata` object. A reached address in `.rodata` that no symbol covers
counts every byte from it to the next symbol (an over-count where unnamed
objects share the stretch; every byte is counted once). Prints the bytes
reached (code, read-only data) and the `.text` bytes no symbol covers, and
with `--list` each symbol and the function that reached it.

Limits: code is followed only as far as its symbol's size (a hand-written
routine's literal pool beyond it is not read; the start-up code's are the
only ones, the uncovered bytes printed), and an address the root's code
reaches only through memory written elsewhere (a function pointer stored at
construction) is not followed; the kernel has no such pointers.
`--min-coverage=F` fails unless the bytes reached are at least the share F
of `.text` + `.rodata`: run from the reset handler, it catches a misread
disassembly (branch or address forms not understood), not an edge missed
from one root that start-up code also reaches.

What it measures is the code a call of ROOT can execute and the constant
data it can read: the "flash a scan links" of `ci/measure.sh`, as opposed
to the whole firmware image (which adds start-up and construction code).
A developer and CI tool; it needs the Rust toolchain's LLVM tools
(`rustup component add llvm-tools`: llvm-objdump, llvm-nm, llvm-size).
"""

import bisect
import glob
import re
import shutil
import subprocess
import sys


def run(*cmd):
    return subprocess.run(cmd, check=True, capture_output=True, text=True).stdout


def tool(name):
    """An LLVM tool: the Rust toolchain's own (`rustup component add
    llvm-tools`, the LLVM that built the firmware), else one on PATH."""
    try:
        sysroot = run("rustc", "--print", "sysroot").strip()
        for path in glob.glob(f"{sysroot}/lib/rustlib/*/bin/{name}"):
            return path
    except (OSError, subprocess.CalledProcessError):
        pass
    if shutil.which(name):
        return name
    sys.exit(f"{name} not found: rustup component add llvm-tools")


def sections(elf):
    out = {}
    for line in run(tool("llvm-size"), "-A", elf).splitlines():
        f = line.split()
        if len(f) == 3 and f[0].startswith("."):
            out[f[0]] = (int(f[2]), int(f[1]))
    return out


def symbols(elf):
    """(start, size, kind, name) of every sized symbol in .text/.rodata."""
    syms = []
    for line in run(tool("llvm-nm"), "-S", "-C", "--defined-only", elf).splitlines():
        f = line.split(None, 3)
        if len(f) < 4:
            continue
        addr, size, kind, name = int(f[0], 16), int(f[1], 16), f[2], f[3]
        if size == 0 or kind.lower() not in "tr":
            continue
        if kind.lower() == "t":
            addr &= ~1
        syms.append((addr, size, kind.lower(), name))
    syms.sort()
    return syms


def rodata_words(elf, lo, hi):
    """Every aligned 32-bit little-endian word of .rodata, by address."""
    words = {}
    data = bytearray()
    base = None
    for line in run(tool("llvm-objdump"), "-s", "-j", ".rodata", elf).splitlines():
        m = re.match(r"^\s*([0-9a-f]+)\s((?:[0-9a-f]{2,8}\s?){1,4})", line)
        if not m:
            continue
        a = int(m.group(1), 16)
        if base is None:
            base = a
        hexes = "".join(m.group(2).split())
        data[a - base:a - base + len(hexes) // 2] = bytes.fromhex(hexes)
    if base is None:
        return words
    for off in range(0, len(data) - 3):
        a = base + off
        if a % 4 == 0:
            words[a] = int.from_bytes(data[off:off + 4], "little")
    return words


def main():
    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    listing = "--list" in sys.argv
    elf, root = args[0], args[1]
    secs = sections(elf)
    text_lo, text_size = secs[".text"]
    ro_lo, ro_size = secs.get(".rodata", (0, 0))
    syms = symbols(elf)
    starts = [s[0] for s in syms]

    def containing(addr):
        i = bisect.bisect_right(starts, addr) - 1
        if i >= 0 and syms[i][0] <= addr < syms[i][0] + syms[i][1]:
            return syms[i]
        return None

    # `.rodata` that no symbol covers (merged strings, a library's
    # constants): a reference into it counts every byte from the address
    # referenced up to the next symbol (or the end of `.rodata`), an
    # over-count where several unnamed objects share the stretch (the
    # bytes are counted once: the totals are the union of the reached
    # ranges). The kernel's own tables are statics, so they are named.
    def unnamed(addr):
        gap = rodata_gap(addr)
        hi = gap[0] + gap[1]
        return (addr, hi - addr, "r", f"<unnamed .rodata at {addr:#x}>")

    def rodata_gap(addr):
        """The uncovered stretch of .rodata around `addr`."""
        i = bisect.bisect_right(starts, addr) - 1
        lo = ro_lo
        for s in syms[: i + 1]:
            if s[0] + s[1] <= addr and s[0] + s[1] > lo and s[0] < ro_lo + ro_size:
                lo = max(lo, s[0] + s[1])
        j = bisect.bisect_right(starts, addr)
        hi = ro_lo + ro_size
        while j < len(syms) and syms[j][0] < hi:
            if syms[j][0] > addr:
                hi = syms[j][0]
                break
            j += 1
        return (lo, hi - lo, "r", f"<unnamed .rodata at {lo:#x}>")

    def referenced(value):
        """The symbol an address-like `value` refers to, if any."""
        if ro_lo <= value < ro_lo + ro_size:
            return containing(value) or unnamed(value)
        if text_lo <= value < text_lo + text_size and value & 1:
            s = containing(value & ~1)
            if s and s[2] == "t" and s[0] == value & ~1:
                return s
        return None

    # Each function's outgoing references, from one disassembly.
    edges = {}
    vals = {}
    current = None
    movw = {}

    def lone_movw():
        """A `movw` no `movt` completed: the address it forms (below 64
        KiB), taken for data only (a small integer equal to a function's
        address is too likely)."""
        for v in movw.values():
            vals.setdefault(current, set()).add((v, True))
        movw.clear()

    for line in run(tool("llvm-objdump"), "-d", "--no-show-raw-insn", elf).splitlines():
        m = re.match(r"^([0-9a-f]+) <(.*)>:$", line)
        if m:
            if current is not None:
                lone_movw()
            current = containing(int(m.group(1), 16))
            continue
        if current is None:
            continue
        out = edges.setdefault(current, set())
        m = re.match(r"^\s*([0-9a-f]+):\s+(?:[0-9a-f]{2}\s)*\s*(\S+)\s*(.*)$", line)
        if not m:
            continue
        op, rest = m.group(2), m.group(3)
        at = int(m.group(1), 16)
        if not current[0] <= at < current[0] + current[1]:
            # Padding after the function's last byte (decoded as
            # instructions by the disassembler): not code of it.
            continue
        if op == ".word":
            v = int(rest.split()[0], 16)
            vals.setdefault(current, set()).add((v, False))
            continue
        if op.startswith(("b", "cb")):
            # Every branch form (`b`, `bl`, `blx`, conditional ones, `blne`
            # in an IT block, `cbz`/`cbnz`): those with a target address.
            t = re.match(r"^(?:r\d+,\s*)?0x([0-9a-f]+) <", rest)
            if t:
                s = containing(int(t.group(1), 16))
                if s and s != current:
                    out.add(s)
            continue
        # (Immediates in decimal or, newer disassemblers, hexadecimal.)
        mm = re.match(r"^(r\d+|sb|sl|fp|ip|lr),\s*#(0x[0-9a-f]+|\d+)\b", rest)
        if op.startswith("movw") and mm:
            # The low half of an address or constant; a `movt` to the same
            # register completes it (a float constant, or an address above
            # 64 KiB), another `movw` to it first leaves it lone.
            reg = mm.group(1)
            if reg in movw:
                vals.setdefault(current, set()).add((movw.pop(reg), True))
            movw[reg] = int(mm.group(2), 0)
            continue
        if op.startswith("movt") and mm and mm.group(1) in movw:
            v = (int(mm.group(2), 0) << 16) | movw.pop(mm.group(1))
            vals.setdefault(current, set()).add((v, False))
    if current is not None:
        lone_movw()
    ro_words = rodata_words(elf, ro_lo, ro_lo + ro_size)
    for f, vs in vals.items():
        for v, data_only in vs:
            r = referenced(v)
            if r and (r[2] == "r" or not data_only):
                edges.setdefault(f, set()).add(r)

    roots = [s for s in syms if s[2] == "t" and root in s[3]]
    if not roots:
        sys.exit(f"no function matching {root!r}")
    start = min(roots, key=lambda s: len(s[3]))
    seen = {start}
    parent = {start: None}
    todo = [start]
    while todo:
        s = todo.pop()
        if s[2] == "t":
            nxt = edges.get(s, set())
        else:
            nxt = set()
            for a in range(s[0] - s[0] % 4, s[0] + s[1], 4):
                r = referenced(ro_words.get(a, -1))
                if r:
                    nxt.add(r)
        for n in nxt:
            if n not in seen:
                seen.add(n)
                parent[n] = s
                todo.append(n)
    def union(kind):
        """Bytes covered by the reached ranges of one kind, each once."""
        total, end = 0, -1
        for lo, size, _, _ in sorted(x for x in seen if x[2] == kind):
            hi = lo + size
            if hi > end:
                total += hi - max(lo, end)
                end = hi
        return total

    code = union("t")
    data = union("r")
    uncovered_text = text_size - sum(
        min(x[0] + x[1], text_lo + text_size) - max(x[0], text_lo)
        for x in syms if x[2] == "t" and x[0] < text_lo + text_size and x[0] + x[1] > text_lo)
    print(f"root {start[3]}")
    print(f"reached {code + data} bytes: code {code}, read-only data {data} ({len(seen)} symbols)")
    print(f".text not covered by any symbol (start-up literals, padding): {uncovered_text} bytes")
    # Self-check: from the reset handler the closure must cover (almost)
    # the whole image, or the disassembly was misread (a missed edge would
    # under-count every root's figure).
    floor = [float(a.split("=", 1)[1]) for a in sys.argv if a.startswith("--min-coverage=")]
    if floor:
        share = (code + data) / (text_size + ro_size)
        print(f"coverage {share:.4f} of .text + .rodata ({text_size + ro_size} bytes)")
        if share < floor[0]:
            sys.exit(f"reach_flash: only {share:.4f} of the image reached from {start[3]}")
    if listing:
        for s in sorted(seen, key=lambda s: -s[1]):
            via = parent[s][3] if parent[s] else "-"
            print(f"{s[1]:7d} {s[2]} {s[3]}  (from {via})")


if __name__ == "__main__":
    main()
