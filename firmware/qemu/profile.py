#!/usr/bin/env python3
"""Instructions per source line and per function of the guidance cycle.

Builds `src/bin/profile.rs` for a target and case, runs it under QEMU with
one instruction per translation block (`-singlestep -d exec,nochain`),
keeps the instructions executed between `profile_begin` and `profile_end`
(64 `Guidance::step` calls) and maps each address through `addr2line -f -i`
(with the inlining chain). Prints per-cycle instruction counts: by
innermost function (self), by function anywhere in the inlining chain
(inclusive), and the hottest source lines.

    python3 firmware/qemu/profile.py [--target thumbv6m-none-eabi] [--case arc]
"""

import argparse
import bisect
import collections
import os
import pathlib
import re
import subprocess
import sys

HERE = pathlib.Path(__file__).resolve().parent
MACHINE = {
    "thumbv7em-none-eabihf": "mps2-an386",
    "thumbv7m-none-eabi": "mps2-an385",
    "thumbv6m-none-eabi": "microbit",
}
CYCLES = 64
STEP = "guide::guidance::Guidance::step"


def llvm_nm():
    tools = subprocess.run(["rustc", "--print", "sysroot"], capture_output=True,
                           text=True).stdout.strip()
    return str(next(pathlib.Path(tools, "lib/rustlib").glob("*/bin/llvm-nm")))


def nm(elf):
    out = subprocess.run([llvm_nm(), str(elf)], capture_output=True, text=True).stdout
    syms = {}
    for line in out.splitlines():
        parts = line.split()
        if len(parts) == 3:
            syms[parts[2]] = int(parts[0], 16)
    return syms


def ranges(elf):
    """Sorted (start, end, name) of the functions in the ELF."""
    out = subprocess.run([llvm_nm(), "-S", "-C", str(elf)], capture_output=True,
                         text=True).stdout
    rs = []
    for line in out.splitlines():
        parts = line.split(maxsplit=3)
        if len(parts) == 4 and parts[2] in "tTW":
            start = int(parts[0], 16) & ~1
            rs.append((start, start + int(parts[1], 16), short(parts[3])))
    rs.sort()
    return rs


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--target", default="thumbv7em-none-eabihf")
    ap.add_argument("--case", default="arc", choices=["line", "arc", "clothoid"])
    ap.add_argument("--lines", type=int, default=40)
    a = ap.parse_args()
    env = dict(os.environ, KAPPALINE_PROFILE_CASE=a.case)
    subprocess.run(["cargo", "build", "--release", "--bin", "profile", "--target", a.target],
                   cwd=HERE, env=env, check=True)
    elf = HERE / "target" / a.target / "release" / "profile"
    log = pathlib.Path("/tmp") / f"kappaline-profile-{os.getpid()}.log"
    subprocess.run(["timeout", "300", "qemu-system-arm", "-machine", MACHINE[a.target],
                    "-nographic", "-monitor", "none",
                    "-semihosting-config", "enable=on,target=native",
                    "-singlestep", "-d", "exec,nochain", "-D", str(log),
                    "-kernel", str(elf)], check=True)
    syms = nm(elf)
    begin, end = syms["profile_begin"], syms["profile_end"]
    counts = collections.Counter()
    trace = []
    inside = False
    pat = re.compile(r"\[[0-9a-f]+/([0-9a-f]+)/")
    with open(log) as f:
        for line in f:
            m = pat.search(line)
            if not m:
                continue
            pc = int(m.group(1), 16)
            if pc == begin:
                inside = True
                continue
            if pc == end:
                break
            if inside:
                counts[pc] += 1
                trace.append(pc)
    log.unlink()
    pcs = sorted(counts)
    out = subprocess.run(["addr2line", "-f", "-i", "-C", "-a", "-e", str(elf)]
                         + [hex(p) for p in pcs], capture_output=True, text=True).stdout
    chains = {}
    cur = None
    lines = out.splitlines()
    i = 0
    while i < len(lines):
        if lines[i].startswith("0x"):
            cur = int(lines[i], 16)
            chains[cur] = []
            i += 1
            continue
        fn, loc = lines[i], lines[i + 1] if i + 1 < len(lines) else "?"
        chains[cur].append((short(fn), loc.split(" ")[0].replace(str(HERE.parent.parent) + "/", "")))
        i += 2
    # A call stack of out-of-line functions from the address ranges; an
    # instruction counts if it is inlined from `Guidance::step` or runs in a
    # function called from there.
    rs = ranges(elf)
    starts = [r[0] for r in rs]

    def fn_of(pc):
        k = bisect.bisect_right(starts, pc) - 1
        if k >= 0 and rs[k][0] <= pc < rs[k][1]:
            return rs[k]
        return (pc, pc + 1, "?")

    def in_step(pc):
        return any(f == STEP for f, _ in chains.get(pc) or [])

    stack = []  # (function, call site key, called from within step)
    kept = collections.Counter()
    calls_n, calls_i, fincl = collections.Counter(), collections.Counter(), collections.Counter()
    prev = None
    for pc in trace:
        f = fn_of(pc)
        if not stack:
            stack.append((f[2], None, False))
        elif stack[-1][0] != f[2]:
            if pc == f[0]:
                site = chains.get(prev) or [("?", "?")]
                key = f"{f[2]}  <-  {site[-1][0]} > {site[0][0]} {site[0][1]}"
                inside = stack[-1][2] or (len(stack) == 1 and in_step(prev))
                stack.append((f[2], key, inside))
                if inside:
                    calls_n[key] += 1
            else:
                names = [x[0] for x in stack]
                if f[2] in names:
                    while stack[-1][0] != f[2]:
                        stack.pop()
                else:
                    stack[-1] = (f[2],) + stack[-1][1:]
        counted = stack[-1][2] or (len(stack) == 1 and in_step(pc))
        prev = pc
        if not counted:
            continue
        kept[pc] += 1
        for fn in set(x[0] for x in stack[1:]):
            fincl[fn] += 1
        for key in set(x[1] for x in stack if x[1]):
            calls_i[key] += 1
    counts = kept
    total = sum(counts.values())
    per = lambda n: n / CYCLES
    selff, incl, byline = collections.Counter(), collections.Counter(), collections.Counter()
    for pc, n in counts.items():
        ch = chains.get(pc) or [("?", "?")]
        selff[ch[0][0]] += n
        byline[ch[0][1] + " " + ch[0][0]] += n
        for fn in set(f for f, _ in ch):
            incl[fn] += n
    print(f"{a.target} {a.case}: {total / CYCLES:.0f} instructions per Guidance::step")
    print("\n-- out-of-line functions, inclusive --")
    for fn, n in fincl.most_common(30):
        print(f"{per(n):8.0f}  {fn}")
    print("\n-- out-of-line calls by call site: instructions, calls per cycle --")
    for key, n in calls_i.most_common(30):
        print(f"{per(n):8.0f} {per(calls_n[key]):5.2f}  {key}")
    print("\n-- inclusive (in the inlining chain) --")
    for fn, n in incl.most_common(45):
        print(f"{per(n):8.0f}  {fn}")
    print("\n-- self (innermost function) --")
    for fn, n in selff.most_common(30):
        print(f"{per(n):8.0f}  {fn}")
    print("\n-- lines --")
    for ln, n in byline.most_common(a.lines):
        print(f"{per(n):8.1f}  {ln}")
    # Library code (core, compiler_builtins) by the first project frame
    # above it in the inlining chain.
    lib = collections.Counter()
    for pc, n in counts.items():
        ch = chains.get(pc) or []
        if ch and ch[0][1].startswith("/rustc"):
            up = next((f"{f} {l}" for f, l in ch if not l.startswith("/rustc")), "?")
            lib[f"{ch[0][0]}  in  {up}"] += n
    print("\n-- library code by project caller --")
    for k, n in lib.most_common(a.lines):
        print(f"{per(n):8.1f}  {k}")


def short(fn):
    fn = re.sub(r"<[^<>]*>", "", fn)
    fn = re.sub(r"<[^<>]*>", "", fn)
    fn = re.sub(r"<[^<>]*>", "", fn)
    return fn.replace("kappaline::", "")


if __name__ == "__main__":
    sys.exit(main())
