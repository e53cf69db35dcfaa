#!/usr/bin/env python3
"""Whole-process benchmarks of `kickback check` on generated boards.

Builds the release binary and the board generator, writes the boards into a scratch folder,
runs each command several times and prints a Markdown table of median wall time, peak memory
(the largest resident set of any run) and the ratios the performance targets are stated in.

    python3 benches/process.py            # every case
    python3 benches/process.py --quick    # small and medium boards only
    python3 benches/process.py --runs 7 --keep /tmp/boards

Only the standard library and cargo are used. Timings are wall-clock medians; peak memory comes
from the kernel's accounting of each child (`wait4`), the same figure `/usr/bin/time -v` prints
as "Maximum resident set size".
"""

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
ELEMENTS_PER_CHANNEL = 10
BRIDGE_ELEMENTS_PER_CHANNEL = 21


def build():
    subprocess.run(
        ["cargo", "build", "--release", "--quiet", "--bin", "kickback", "--example", "gen_board"],
        cwd=ROOT,
        check=True,
    )
    target = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target")) / "release"
    return target / "kickback", target / "examples" / "gen_board"


def generate(gen, folder, *args):
    folder.mkdir(parents=True, exist_ok=True)
    subprocess.run([str(gen), *args, "--out", str(folder)], check=True)
    return folder / "board0000.cir"


def run_once(argv, env):
    """Wall seconds, peak RSS in MiB and exit status of one run, output discarded."""
    start = time.perf_counter()
    with open(os.devnull, "wb") as null:
        proc = subprocess.Popen(argv, stdout=null, stderr=null, env=env)
        _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - start
    return wall, usage.ru_maxrss / 1024.0, os.waitstatus_to_exitcode(status)


def measure(argv, runs, env=None, expect=(0, 1), warm=True):
    env = dict(os.environ, **(env or {}))
    if warm:
        run_once(argv, env)  # warm the page cache and the binary
    samples = [run_once(argv, env) for _ in range(runs)]
    codes = {code for _, _, code in samples}
    if not codes <= set(expect):
        sys.exit(f"{' '.join(map(str, argv))} exited with {sorted(codes)}")
    return statistics.median(s[0] for s in samples), max(s[1] for s in samples)


def row(name, elements, wall, rss, note=""):
    size = f"{elements:,}" if elements else ""
    memory = f"{rss:,.0f} MiB" if rss else ""
    return f"| {name} | {size} | {wall * 1000:,.1f} ms | {memory} | {note} |"


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5, help="timed runs per case (median shown)")
    parser.add_argument("--quick", action="store_true", help="skip the million-element boards")
    parser.add_argument("--keep", type=Path, help="write the boards here and keep them")
    parser.add_argument("--sizes", help="flat board sizes in channels, comma-separated")
    args = parser.parse_args()

    kickback, gen = build()
    scratch = args.keep or Path(tempfile.mkdtemp(prefix="kickback-bench-"))
    # The million-element boards sit at the default element limit (1,000,000) and a few
    # supply lines above it: the limit is raised for them.
    check = [str(kickback), "check", "--format", "lines", "--max-elements", "2000000"]
    rows, targets = [], []

    version, _ = measure([str(kickback), "--version"], args.runs * 4, expect=(0,))
    demo, demo_rss = measure(check + [str(ROOT / "testdata/demo/doser.cir")], args.runs * 4)
    rows.append(row("`--version`", 0, version, 0))
    rows.append(row("demo board", 0, demo, demo_rss))
    targets.append(("demo within 3 × `--version`", f"{demo / version:.1f} ×", demo <= 3 * version))

    sizes = [100, 10_000] if args.quick else [100, 10_000, 100_000]
    if args.sizes:
        sizes = [int(s) for s in args.sizes.split(",")]
    times = {}
    for channels in sizes:
        board = generate(gen, scratch / f"flat{channels}", "--channels", str(channels))
        big = channels >= 100_000
        runs = max(1, args.runs // 3) if big else args.runs
        wall, rss = measure(check + [str(board)], runs, warm=not big)
        times[channels] = wall
        rows.append(row(f"flat, {channels:,} channels", channels * ELEMENTS_PER_CHANNEL, wall, rss))
        if channels == 100_000:
            targets.append(("1M flat within 1 s", f"{wall:.2f} s", wall <= 1.0))
            targets.append(("1M flat within 600 MB", f"{rss:,.0f} MiB", rss * 1.048576 <= 600))
    # The second channel shape (an H-bridge with a 555 per leg and a relay, 21 elements a
    # channel), so that a speed-up is not tuned to one channel.
    bridge_times = {}
    bridge_sizes = [50, 5_000] if args.quick else [50, 5_000, 50_000]
    for channels in bridge_sizes:
        board = generate(
            gen, scratch / f"bridge{channels}", "--channels", str(channels), "--shape", "bridge"
        )
        big = channels >= 50_000
        runs = max(1, args.runs // 3) if big else args.runs
        wall, rss = measure(check + [str(board)], runs, warm=not big)
        elements = channels * BRIDGE_ELEMENTS_PER_CHANNEL
        rows.append(row(f"bridge, {channels:,} channels", elements, wall, rss))
        bridge_times[channels] = wall
    for small, large in zip(bridge_sizes, bridge_sizes[1:]):
        growth = (bridge_times[large] / bridge_times[small]) / (large / small)
        name = (
            f"time per element, bridge, {small * BRIDGE_ELEMENTS_PER_CHANNEL:,} → "
            f"{large * BRIDGE_ELEMENTS_PER_CHANNEL:,} elements"
        )
        targets.append((name, f"{growth:.2f} ×", growth <= 1.1))
    for small, large in zip(sizes, sizes[1:]):
        growth = (times[large] / times[small]) / (large / small)
        name = f"time per element, {small * 10:,} → {large * 10:,} elements"
        targets.append((name, f"{growth:.2f} ×", growth <= 1.1))

    if not args.quick:
        nested = generate(gen, scratch / "nested", "--channels", "100000", "--nested", "10")
        channels = int(nested.read_text().splitlines()[0].split()[4])
        twin = generate(gen, scratch / "twin", "--channels", str(channels))
        runs = max(1, args.runs // 3)
        deep, deep_rss = measure(check + [str(nested)], runs, warm=False)
        flat, _ = measure(check + [str(twin)], runs, warm=False)
        rows.append(row("10-level hierarchy", channels * ELEMENTS_PER_CHANNEL, deep, deep_rss))
        rows.append(row("same, flat", channels * ELEMENTS_PER_CHANNEL, flat, 0))
        targets.append(("hierarchy within 1.5 × flat", f"{deep / flat:.2f} ×", deep <= 1.5 * flat))

    many = scratch / "many"
    generate(gen, many, "--channels", "5", "--files", "200")
    files = sorted(str(p) for p in many.glob("*.cir"))
    two, many_rss = measure(check + files, args.runs)
    one, _ = measure(check + files, args.runs, env={"RAYON_NUM_THREADS": "1"})
    rows.append(row("200 files, all cores", 200 * 5 * ELEMENTS_PER_CHANNEL, two, many_rss))
    rows.append(row("200 files, one core", 200 * 5 * ELEMENTS_PER_CHANNEL, one, 0))
    targets.append(("200 files: all cores ≥ 1.7 × one", f"{one / two:.2f} ×", one >= 1.7 * two))

    bomb = scratch / "bomb.cir"
    lines = ["Expansion past the element limit", ".subckt L0 a b", "R1 a b 1k", ".ends"]
    for level in range(1, 11):
        lines += [f".subckt L{level} a b"] + [f"X{k} a b L{level - 1}" for k in range(10)]
        lines += [".ends"]
    bomb.write_text("\n".join(lines + ["XTOP 1 0 L10", ".end", ""]))
    refuse, refuse_rss = measure(check + [str(bomb)], args.runs, expect=(2,))
    rows.append(row("10^10-element expansion, refused", 0, refuse, refuse_rss))
    targets.append(("refusal within 100 ms", f"{refuse * 1000:.1f} ms", refuse <= 0.1))

    cores = os.cpu_count()
    print(f"\n{cores} cores; median of {args.runs} runs, four times as many for `--version` and")
    print(f"the demo, {max(1, args.runs // 3)} for the boards of 100,000 channels or more\n")
    print("| case | elements | wall | peak memory | |\n|---|---:|---:|---:|---|")
    print("\n".join(rows))
    print("\n| target | measured | met |\n|---|---:|---|")
    for name, value, met in targets:
        print(f"| {name} | {value} | {'yes' if met else 'no'} |")
    if not args.keep:
        subprocess.run(["rm", "-rf", str(scratch)], check=False)


if __name__ == "__main__":
    main()
