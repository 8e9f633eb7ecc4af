"""One spot, one year, all its sources: the command line as the user runs it, and the assessment alone.

Whole process (target: median <= 2.5 s per spot): ``python -m siteharvest assess <spot>.toml --json``
spawned and timed by the wall clock from spawn to exit, for each sample spot, the rounds interleaved
across spots (one warm-up round first, shown apart: it loads the compiled kernel from numba's cache, or
compiles it when that cache is missing or stale). Also ``siteharvest --version`` the same way, and the
imports of one run from ``python -X importtime``.

In process (target: <= 150 ms each): ``assess(spec, context)`` after the weather is loaded and the
kernel is compiled, the median of 7.

    python benchmarks/bench_assess.py [--rounds 9] [--no-in-process]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import time
from collections.abc import Sequence
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_sites"


def process_seconds(cmd: Sequence[str], *, cwd: Path = ROOT) -> float:
    """Wall-clock seconds of one process, from spawn to exit (its output discarded; a failure raises)."""
    t0 = time.perf_counter()
    done = subprocess.run(list(cmd), cwd=cwd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    elapsed = time.perf_counter() - t0
    if done.returncode != 0:
        raise RuntimeError(f"{' '.join(cmd)} exited with {done.returncode}: {done.stderr.decode()[-500:]}")
    return elapsed


def time_processes(commands: dict[str, list[str]], rounds: int) -> tuple[dict[str, float], dict[str, list[float]]]:
    """One warm-up round, then ``rounds`` rounds of every command in turn: (warm-up s, timed s) by name."""
    first = {name: process_seconds(cmd) for name, cmd in commands.items()}
    times: dict[str, list[float]] = {name: [] for name in commands}
    for _ in range(rounds):
        for name, cmd in commands.items():
            times[name].append(process_seconds(cmd))
    return first, times


def summary(times: list[float]) -> str:
    return f"median {statistics.median(times):5.2f} s, max {max(times):5.2f} s ({len(times)} rounds)"


def bytecode_note() -> str:
    """Whether this environment lets Python keep compiled bytecode of the project's own modules."""
    if os.environ.get("PYTHONDONTWRITEBYTECODE"):
        return "PYTHONDONTWRITEBYTECODE is set: the project's own modules are compiled from source every run"
    return "bytecode caching on"


def import_seconds(cmd: Sequence[str]) -> tuple[float, list[tuple[float, str]]]:
    """Seconds spent importing in one run (``-X importtime``) and the five dearest top-level imports."""
    done = subprocess.run([cmd[0], "-X", "importtime", *cmd[1:]], cwd=ROOT, stdout=subprocess.DEVNULL,
                          stderr=subprocess.PIPE, text=True, check=True)
    top = []
    for line in done.stderr.splitlines():
        if not line.startswith("import time:") or "|" not in line:
            continue
        _, cumulative, name = line.split("|", 2)
        if cumulative.strip().isdigit() and not name.startswith("  "):  # top level: one space after the bar
            top.append((int(cumulative) / 1e6, name.strip()))
    return sum(t for t, _ in top), sorted(top, reverse=True)[:5]


def whole_process(rounds: int) -> None:
    spots = sorted(SAMPLES.glob("*.toml"))
    commands = {p.name: [sys.executable, "-m", "siteharvest", "assess", str(p.relative_to(ROOT)), "--json"]
                for p in spots}
    commands["--version"] = [sys.executable, "-m", "siteharvest", "--version"]
    print(f"whole process, wall clock from spawn to exit ({os.cpu_count()} cores; {bytecode_note()})")
    first, times = time_processes(commands, rounds)
    for name in commands:
        label = f"siteharvest {name}" if name.startswith("-") else f"assess {name}"
        target = "" if name.startswith("-") else " (target median <= 2.5 s)"
        print(f"  {label:34s} {summary(times[name])}; warm-up run {first[name]:.2f} s{target}")
    total, top = import_seconds(commands[spots[0].name])
    print(f"  imports of one run ({spots[0].name}, -X importtime): {total:.2f} s; dearest: "
          + ", ".join(f"{name} {t:.2f} s" for t, name in top))


def in_process() -> None:
    from siteharvest.assess import assess, build_context
    from siteharvest.site import load_site

    print("in process, after the weather is loaded and the kernel compiled (target <= 150 ms each)")
    for path in sorted(SAMPLES.glob("*.toml")):
        spec = load_site(path)
        t0 = time.perf_counter()
        context = build_context(spec)
        load_s = time.perf_counter() - t0
        assess(spec, context)  # first call: solar position cached on the context, kernel loaded
        times = []
        for _ in range(7):
            t0 = time.perf_counter()
            assess(spec, context)
            times.append(time.perf_counter() - t0)
        print(f"  {path.name:28s} {len(spec.source)} sources: {statistics.median(times) * 1e3:6.1f} ms "
              f"(weather load {load_s * 1e3:.0f} ms)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=9, help="timed rounds of each whole process (default 9)")
    parser.add_argument("--no-in-process", action="store_true", help="only the whole-process figures")
    args = parser.parse_args()
    whole_process(args.rounds)
    if not args.no_in_process:
        in_process()


if __name__ == "__main__":
    main()
