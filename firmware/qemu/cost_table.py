#!/usr/bin/env python3
"""The README's cost table, from what the firmware prints.

Runs the firmware under QEMU for the three boards, both binaries (the f32
one and the Q32.32 fixed-point one), or reads saved output with
--from M4F.txt M3.txt M0.txt (each file may hold both binaries' output
concatenated), collects its `@cost call;case;min;median;max`
lines and prints a Markdown table: one row per call and case, one column per
core, each cell `median (min-max)` in retired instructions. With --readme
FILE the table replaces what stands between the markers
`<!-- cost-table:begin -->` and `<!-- cost-table:end -->` in FILE.

    python3 firmware/qemu/cost_table.py --readme README.md
"""

import argparse
import pathlib
import subprocess
import sys

HERE = pathlib.Path(__file__).resolve().parent
BOARDS = [
    ("Cortex-M4F", "thumbv7em-none-eabihf"),
    ("Cortex-M3", "thumbv7m-none-eabi"),
    ("Cortex-M0", "thumbv6m-none-eabi"),
]
BEGIN, END = "<!-- cost-table:begin -->", "<!-- cost-table:end -->"


# The binaries whose figures make the table: the f32 one and the Q32.32
# fixed-point one (src/bin/fixed-point.rs; its calls end in ", Q32.32").
BINS = ["kappaline-qemu", "fixed-point"]


def run(target, binary="kappaline-qemu"):
    out = subprocess.run(
        ["cargo", "run", "--release", "--target", target, "--bin", binary],
        cwd=HERE, capture_output=True, text=True, timeout=900,
    )
    if out.returncode != 0 or "all checks passed" not in out.stdout:
        sys.exit(f"firmware failed on {target}:\n{out.stdout}\n{out.stderr}")
    return out.stdout


def parse(text):
    rows = {}
    for line in text.splitlines():
        if line.startswith("@cost "):
            call, case, lo, med, hi = line[len("@cost "):].split(";")
            rows[(call, case)] = (int(lo), int(med), int(hi))
    return rows


def cell(v):
    if v is None:
        return "n/a"
    lo, med, hi = v
    if lo == med == hi:
        return f"{med:,}"
    return f"{med:,} ({lo:,}-{hi:,})"


def table(per_board):
    keys = []
    for rows in per_board:
        for k in rows:
            if k not in keys:
                keys.append(k)
    head = "| call | case | " + " | ".join(b for b, _ in BOARDS) + " |"
    lines = [head, "|---|---|" + "---|" * len(BOARDS)]
    for call, case in keys:
        cells = [cell(rows.get((call, case))) for rows in per_board]
        lines.append(f"| {call} | {case} | " + " | ".join(cells) + " |")
    return "\n".join(lines)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--from", dest="files", nargs=3, metavar="OUT",
                    help="saved firmware output for M4F, M3 and M0")
    ap.add_argument("--readme", help="file whose marked table to replace")
    a = ap.parse_args()
    if a.files:
        texts = [pathlib.Path(f).read_text() for f in a.files]
    else:
        texts = ["\n".join(run(t, b) for b in BINS) for _, t in BOARDS]
    t = table([parse(x) for x in texts])
    if not a.readme:
        print(t)
        return
    p = pathlib.Path(a.readme)
    s = p.read_text()
    if BEGIN not in s or END not in s:
        sys.exit(f"{a.readme}: markers {BEGIN} / {END} not found")
    head, rest = s.split(BEGIN, 1)
    _, tail = rest.split(END, 1)
    p.write_text(head + BEGIN + "\n" + t + "\n" + END + tail)
    print(f"{a.readme}: cost table updated ({len(t.splitlines()) - 2} rows)")


if __name__ == "__main__":
    main()
