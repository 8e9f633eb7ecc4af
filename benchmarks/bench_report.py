"""Report speed: one spot to PDF as the user runs it, and in process; a portfolio of 20 spots to PDF.

Whole process (target: median <= 5 s): ``python -m siteharvest report <spot>.toml -o <tmp>/x.pdf`` with the
default studies (24 x 24 sizing maps, 200 weather years), timed by the wall clock from spawn to exit, for a
one-source spot (roof-parapet) and a three-source spot (plant-room), the rounds interleaved (one warm-up
round first, shown apart).

In process (Python's imports not counted; each run starts its own browser, as the command line does): the
same two spots with the report's own split of the time, and a portfolio of 20 spots (target <= 60 s) made
of copies of the sample spots with changed names in a temporary folder.

    python benchmarks/bench_report.py [--rounds 7] [--spots 20] [--risk-years 200] [--no-in-process]
"""

from __future__ import annotations

import argparse
import os
import re
import shutil
import sys
import tempfile
import time
from pathlib import Path

from bench_assess import ROOT, bytecode_note, import_seconds, summary, time_processes

SAMPLES = ROOT / "sample_sites"
WHOLE_PROCESS_SPOTS = ("roof-parapet", "plant-room")  # one source, three sources


def portfolio_folder(folder: Path, spots: int) -> Path:
    """``spots`` copies of the sample spots, each with its own name, plus the files they read."""
    samples = sorted(SAMPLES.glob("*.toml"))
    for sub in (p for p in SAMPLES.iterdir() if p.is_dir()):
        shutil.copytree(sub, folder / sub.name)
    for k in range(spots):
        src = samples[k % len(samples)]
        text = src.read_text(encoding="utf-8")
        text = re.sub(r'^name = "(.*)"$', lambda m, k=k: f'name = "{m.group(1)}, copy {k + 1}"', text, count=1,
                      flags=re.M)
        (folder / f"{k + 1:02d}-{src.stem}.toml").write_text(text, encoding="utf-8")
    return folder


def show(label: str, report, target_s: float) -> None:
    t = report.timings_s
    pages = report.content.count(b"/Type /Page") - report.content.count(b"/Type /Pages")
    print(f"{label}: {t['total']:.1f} s (target <= {target_s:.0f} s): studies {t['study']:.1f} s, "
          f"waiting for figures {t['figures_wait']:.1f} s, printing {t['print']:.1f} s; "
          f"{len(report.content) / 1e6:.1f} MB, about {pages} pages")


def whole_process(rounds: int, risk_years: int) -> None:
    print(f"whole process, wall clock from spawn to exit ({os.cpu_count()} cores; {bytecode_note()})")
    with tempfile.TemporaryDirectory(prefix="siteharvest-bench-") as tmp:
        commands = {name: [sys.executable, "-m", "siteharvest", "report", f"sample_sites/{name}.toml",
                           "-o", str(Path(tmp) / f"{name}.pdf"), "--risk-years", str(risk_years)]
                    for name in WHOLE_PROCESS_SPOTS}
        first, times = time_processes(commands, rounds)
        for name in commands:
            sources = (SAMPLES / f"{name}.toml").read_text(encoding="utf-8").count("[[source]]")
            print(f"  report {name} ({sources} source{'s' * (sources > 1)}), PDF: {summary(times[name])}; "
                  f"warm-up run {first[name]:.2f} s (target median <= 5 s)")
        total, top = import_seconds(commands[WHOLE_PROCESS_SPOTS[-1]])
        print(f"  imports of one run ({WHOLE_PROCESS_SPOTS[-1]}, -X importtime): {total:.2f} s; dearest: "
              + ", ".join(f"{name} {t:.2f} s" for t, name in top))


def in_process(spots: int, risk_years: int) -> None:
    from siteharvest_app.report import make_report

    print("in process (imports not counted)")
    for name in WHOLE_PROCESS_SPOTS:
        t0 = time.perf_counter()
        report = make_report(SAMPLES / f"{name}.toml", fmt="pdf", risk_years=risk_years)
        assert abs(time.perf_counter() - t0 - report.timings_s["total"]) < 1.0
        show(f"  one spot ({name}), PDF", report, 5.0)
    if spots > 0:
        with tempfile.TemporaryDirectory(prefix="siteharvest-bench-") as tmp:
            folder = portfolio_folder(Path(tmp), spots)
            report = make_report(folder, fmt="pdf", risk_years=risk_years)
            assert sum(s.ok for s in report.studies) == spots
            show(f"  portfolio of {spots} spots, PDF", report, 60.0)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=7, help="timed rounds of each whole process (default 7)")
    parser.add_argument("--spots", type=int, default=20, help="spots in the portfolio (0 to skip it)")
    parser.add_argument("--risk-years", type=int, default=200)
    parser.add_argument("--no-in-process", action="store_true", help="only the whole-process figures")
    args = parser.parse_args()
    whole_process(args.rounds, args.risk_years)
    if not args.no_in_process:
        in_process(args.spots, args.risk_years)


if __name__ == "__main__":
    main()
