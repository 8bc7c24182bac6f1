#!/usr/bin/env python3
"""Where the minimal firmware's flash goes, by crate, module and function.

Builds `bin/minimal` with the `minimal` profile and debug information (in
its own target directory: debug information changes the ELF's other
sections, not `.text`), disassembles `.text` and attributes each
instruction's bytes (literal pools included) to the code it came from,
following the inline stack from the innermost frame outwards past `core`'s
small generic helpers (operators, comparisons, `Option`, slices ...) to the
first frame in a crate or module of its own (`core::fmt` and
`core::panicking` count as their own). LTO inlines most of the program into
`main`, so symbol sizes alone (`llvm-nm --size-sort -S`) say little.

    python3 firmware/qemu/flash_breakdown.py [--target thumbv6m-none-eabi] [--functions 25]

Needs `llvm-objdump` from rustup's llvm-tools and an `llvm-symbolizer`
(the system's, version 14 or later, reads the DWARF).
"""

import argparse
import collections
import os
import pathlib
import re
import shutil
import subprocess
import sys

HERE = pathlib.Path(__file__).resolve().parent
# Frames in these parts of `core` are small generic helpers: their bytes
# belong to the caller that used them.
CORE_HELPERS = re.compile(
    r"library/core/src/(ops|cmp|num|option|result|iter|slice|ptr|mem|array|"
    r"convert|intrinsics|clone|default|hint|ub_checks|bool|char|cell|marker|f32|f64|"
    r"internal_macros|macros|tuple|range)(/|\.rs)"
)
INSN = re.compile(r"^\s*([0-9a-f]+):\s")


def tool(name):
    sysroot = subprocess.run(
        ["rustc", "--print", "sysroot"], capture_output=True, text=True, check=True
    ).stdout.strip()
    for d in pathlib.Path(sysroot, "lib", "rustlib").glob("*/bin"):
        if (d / name).exists():
            return str(d / name)
    found = shutil.which(name)
    if not found:
        sys.exit(f"{name} not found (rustup component add llvm-tools)")
    return found


def build(target):
    target_dir = HERE / "target" / "flash-debug"
    env = dict(os.environ, CARGO_PROFILE_MINIMAL_DEBUG="true", CARGO_TARGET_DIR=str(target_dir))
    subprocess.run(
        ["cargo", "build", "--profile", "minimal", "--bin", "minimal", "--target", target],
        cwd=HERE, env=env, check=True,
    )
    return target_dir / target / "minimal" / "minimal"


def instructions(elf):
    """(address, size) of every instruction and data word in `.text`."""
    out = subprocess.run(
        [tool("llvm-objdump"), "-d", "--no-show-raw-insn", "--section=.text", str(elf)],
        capture_output=True, text=True, check=True,
    ).stdout
    addrs = [int(m.group(1), 16) for m in map(INSN.match, out.splitlines()) if m]
    addrs.sort()
    size = text_size(elf)
    end = text_start(elf) + size
    return [(a, (addrs[i + 1] if i + 1 < len(addrs) else end) - a) for i, a in enumerate(addrs)]


def sections(elf):
    out = subprocess.run(
        [tool("llvm-size"), "-A", str(elf)], capture_output=True, text=True, check=True
    ).stdout
    rows = {}
    for line in out.splitlines():
        parts = line.split()
        if len(parts) == 3 and parts[1].isdigit():
            rows[parts[0]] = (int(parts[1]), int(parts[2]))
    return rows


def text_size(elf):
    return sections(elf)[".text"][0]


def text_start(elf):
    return sections(elf)[".text"][1]


def demangle(name):
    name = re.sub(r"::h[0-9a-f]{16}$", "", name)
    for a, b in [("$LT$", "<"), ("$GT$", ">"), ("$C$", ","), ("$u20$", " "), ("$u7b$", "{"),
                 ("$u7d$", "}"), ("$RF$", "&"), ("$BP$", "*"), ("..", "::"), ("_<", "<")]:
        name = name.replace(a, b)
    return name


def stacks(elf, addrs):
    """The inline stack (innermost first) of each address: [(function, file)]."""
    query = "".join(f"0x{a:x}\n" for a in addrs)
    out = subprocess.run(
        ["llvm-symbolizer", "--inlining", f"--obj={elf}"],
        input=query, capture_output=True, text=True, check=True,
    ).stdout
    result = []
    for block in out.strip("\n").split("\n\n"):
        lines = block.splitlines()
        result.append([(demangle(lines[i]), lines[i + 1].rsplit(":", 2)[0])
                       for i in range(0, len(lines) - 1, 2)])
    return result


def owner(stack):
    """(component, function) that a frame stack's bytes belong to."""
    frame = next((f for f in stack if not CORE_HELPERS.search(f[1])), stack[0] if stack else None)
    if frame is None or frame[1] in ("??", ""):
        return ("(no line information)", "?")
    function, file = frame
    if "/firmware/qemu/src/" in file:
        return ("firmware " + file.split("/firmware/qemu/src/")[1], function)
    m = re.search(r"/src/((?:[a-z_]+/)*[a-z_]+)\.rs$", file)
    if "/registry/src/" in file:
        crate = file.split("/registry/src/")[1].split("/")[1]
        return (re.sub(r"-[0-9][0-9.]*$", "", crate), function)
    if "compiler-builtins" in file or "compiler_builtins" in function:
        return ("compiler_builtins " + file.split("/src/", 1)[-1], function)
    if "/library/core/src/" in file:
        return ("core::" + file.split("/library/core/src/")[1].split("/")[0].removesuffix(".rs"),
                function)
    if m:
        return ("kappaline " + m.group(1) + ".rs", function)
    return (file, function)


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--target", default="thumbv7em-none-eabihf")
    ap.add_argument("--elf", help="an ELF built with debug information (skips the build)")
    ap.add_argument("--functions", type=int, default=25, help="largest functions to list")
    args = ap.parse_args()
    elf = pathlib.Path(args.elf) if args.elf else build(args.target)
    rows = instructions(elf)
    owners = [owner(s) for s in stacks(elf, [a for a, _ in rows])]
    by_component = collections.Counter()
    by_crate = collections.Counter()
    by_function = collections.Counter()
    for (_, size), (component, function) in zip(rows, owners):
        by_component[component] += size
        by_crate[component.split(" ")[0]] += size
        by_function[(component, function)] += size
    total = sum(s for _, s in rows)
    print(f"{elf}: .text {total} bytes ({total / 1024:.1f} KiB)")
    print("\n| crate | bytes |\n|---|---|")
    for name, size in by_crate.most_common():
        print(f"| {name} | {size} |")
    print("\n| module | bytes |\n|---|---|")
    for name, size in by_component.most_common():
        print(f"| {name} | {size} |")
    print(f"\n| largest functions (after inlining) | bytes |\n|---|---|")
    for (component, function), size in by_function.most_common(args.functions):
        print(f"| `{function}` ({component}) | {size} |")


if __name__ == "__main__":
    main()
