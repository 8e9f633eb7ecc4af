"""Report speed: one spot to PDF, and a portfolio of 20 spots to PDF.

Targets (README): one spot, PDF, default studies (24 x 24 sizing maps, 200 weather years) <= 5 s;
a portfolio of 20 spots <= 60 s. The portfolio is made of copies of the sample spots with changed names
in a temporary folder. Each run starts its own browser (which renders the figures and prints), as the
command line does; Python's imports are not counted.

    python benchmarks/bench_report.py [--spots 20] [--risk-years 200]
"""

from __future__ import annotations

import argparse
import re
import shutil
import tempfile
import time
from pathlib import Path

from siteharvest_app.report import make_report

SAMPLES = Path(__file__).resolve().parents[1] / "sample_sites"


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


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--spots", type=int, default=20)
    parser.add_argument("--risk-years", type=int, default=200)
    args = parser.parse_args()
    for name in ("plant-room", "roof-parapet"):
        t0 = time.perf_counter()
        report = make_report(SAMPLES / f"{name}.toml", fmt="pdf", risk_years=args.risk_years)
        assert abs(time.perf_counter() - t0 - report.timings_s["total"]) < 1.0
        show(f"one spot ({name}), PDF", report, 5.0)
    with tempfile.TemporaryDirectory(prefix="siteharvest-bench-") as tmp:
        folder = portfolio_folder(Path(tmp), args.spots)
        report = make_report(folder, fmt="pdf", risk_years=args.risk_years)
        assert sum(s.ok for s in report.studies) == args.spots
        show(f"portfolio of {args.spots} spots, PDF", report, 60.0)


if __name__ == "__main__":
    main()
