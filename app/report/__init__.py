"""The feasibility report: one spot or a portfolio of spots, as self-contained HTML or as PDF.

``build_report(paths_or_specs, fmt="pdf")`` returns the document's bytes; ``write_report`` writes it with
the hourly series of each spot beside it. HTML and PDF share one layout: the PDF is the HTML printed by
headless Chromium, with the figures as static SVG rendered by plotly.js in that same browser.
"""

from __future__ import annotations

import datetime as dt
import re
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Literal

from siteharvest.errors import SiteInputError
from siteharvest.site import SiteSpec, load_site

from .html import (
    assemble,
    build_html,
    early_sections,
    fmt_energy_wh,
    fmt_sig,
    generated_text,
    sizing_section,
    spot_section,
)
from .render import ReportBrowser, ReportError, chromium_path
from .study import SiteInput, SpotStudy, complete_study, expand_inputs, study_spot_or_error

Format = Literal["pdf", "html"]
Progress = Callable[[str], None]
WhilePrinting = Callable[[list[SpotStudy], bool], None]  # (studies, portfolio)

__all__ = ["Report", "ReportError", "SpotStudy", "build_html", "build_report", "chromium_path", "fmt_energy_wh",
           "fmt_sig", "make_report", "write_report"]


@dataclass
class Report:
    """A rendered report and the studies behind it."""

    content: bytes
    fmt: Format
    studies: list[SpotStudy]
    portfolio: bool
    timings_s: dict[str, float] = field(default_factory=dict)


def make_report(paths_or_specs: SiteInput | Sequence[SiteInput], *, fmt: Format = "pdf", sizing: bool = True,
                risk_years: int = 200, sizing_steps: int = 24, seed: int = 1,
                generated: dt.datetime | None = None, progress: Progress | None = None,
                while_printing: WhilePrinting | None = None) -> Report:
    """Study the spots and render the report, keeping the studies (for the hourly CSVs).

    ``progress``, if given, is called with a short line after each spot and before the printing.
    ``while_printing``, if given, is called with the studies and whether they make a portfolio once the
    document is finished, while the browser prints it (before the function returns).

    Bad input raises :class:`~siteharvest.errors.SiteInputError` for a single spot (and for a portfolio
    whose every site file is bad); otherwise in a portfolio the spot is listed with its error. Rendering
    trouble (no Chromium) raises :class:`ReportError`.
    """
    if fmt not in ("pdf", "html"):
        raise ValueError(f"fmt must be 'pdf' or 'html', got {fmt!r}")
    items, portfolio, title = expand_inputs(paths_or_specs)
    if not portfolio and not isinstance(items[0], SiteSpec):
        items = [load_site(items[0])]  # bad input stops a one-spot report before any browser starts
    chromium_path()  # fail early, before the computing, when the browser is missing
    when = generated_text(generated)
    clock = time.perf_counter()
    timings = {"study": 0.0}
    studies: list[SpotStudy] = []
    sections: list[str] = []
    # The browser starts while the first spot is computed; a portfolio renders over two tabs.
    with ReportBrowser(tabs=2 if portfolio else 1) as renderer:
        for n, item in enumerate(items, 1):
            t = time.perf_counter()
            study = study_spot_or_error(item, portfolio=portfolio, sizing=False, risk_years=0)
            if study.ok:   # the year's figures render while the sizing study runs, its maps while the risk study runs
                study.early_parts = early_sections(study, renderer.defer)
                renderer.flush()
                complete_study(study, sizing=sizing, risk_years=0, sizing_steps=sizing_steps)
                study.early_parts["sizing"] = sizing_section(study, renderer.defer)
                renderer.flush()
                complete_study(study, sizing=False, risk_years=risk_years, seed=seed)
            timings["study"] += time.perf_counter() - t
            studies.append(study)
            sections.append(spot_section(study, n, renderer.defer, when, portfolio=portfolio))
            renderer.flush()  # this spot's figures render while the next spot is computed
            if progress is not None:
                progress(f"{n}/{len(items)} {study.label}: " + ("studied" if study.ok else "could not be read"))
        if not any(s.ok for s in studies):  # every site file is bad: that is bad input, not a report
            first = studies[0].error or ""
            raise SiteInputError(f"at least one readable site file; all {len(studies)} have errors, the first: {first}",
                                 file=title or None)
        t = time.perf_counter()
        html = renderer.resolve(assemble(studies, sections, portfolio=portfolio, title=title or "portfolio",
                                         when=when))
        timings["figures_wait"] = time.perf_counter() - t
        t = time.perf_counter()
        if progress is not None and fmt == "pdf":
            progress("printing the PDF")
        printed = renderer.start_pdf(html) if fmt == "pdf" else None
        if while_printing is not None:
            while_printing(studies, portfolio)
        content = printed() if printed is not None else html.encode("utf-8")
        timings["print"] = time.perf_counter() - t
    timings["total"] = time.perf_counter() - clock
    return Report(content, fmt, studies, portfolio, timings)


def build_report(paths_or_specs: SiteInput | Sequence[SiteInput], *, fmt: Format = "pdf", sizing: bool = True,
                 risk_years: int = 200, sizing_steps: int = 24, seed: int = 1,
                 generated: dt.datetime | None = None) -> bytes:
    """The report for one spot (a site file or a SiteSpec) or a portfolio (a folder, or several), as bytes."""
    return make_report(paths_or_specs, fmt=fmt, sizing=sizing, risk_years=risk_years, sizing_steps=sizing_steps,
                       seed=seed, generated=generated).content


def _slug(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9_-]+", "-", text).strip("-") or "spot"


def hourly_csv_paths(out: Path, studies: Sequence[SpotStudy], portfolio: bool) -> list[tuple[SpotStudy, Path]]:
    """Where each spot's hourly CSV goes: ``OUT.hourly.csv``, or ``OUT.<site file>.hourly.csv`` per spot."""
    done = [s for s in studies if s.ok]
    if not portfolio:
        return [(s, out.with_name(f"{out.stem}.hourly.csv")) for s in done[:1]]
    used: set[str] = set()
    paths = []
    for s in done:
        slug = _slug(Path(s.label).stem)
        while slug in used:
            slug += "-"
        used.add(slug)
        paths.append((s, out.with_name(f"{out.stem}.{slug}.hourly.csv")))
    return paths


def write_report(paths_or_specs: SiteInput | Sequence[SiteInput], out: str | Path, *, fmt: Format | None = None,
                 sizing: bool = True, risk_years: int = 200, sizing_steps: int = 24, seed: int = 1,
                 hourly: bool = True, generated: dt.datetime | None = None,
                 progress: Progress | None = None) -> list[Path]:
    """Write the report to ``out`` (format from its suffix unless given) and, with ``hourly``, each spot's
    hourly series as CSV beside it. Returns the paths written, the report first."""
    out = Path(out)
    fmt = fmt or ("html" if out.suffix.lower() in (".html", ".htm") else "pdf")
    csv_texts: list[tuple[Path, str]] = []

    def hourly_texts(studies: list[SpotStudy], portfolio: bool) -> None:
        # formatted while the browser prints; written only once the report is there
        for study, path in hourly_csv_paths(out, studies, portfolio):
            assert study.assessment is not None
            csv_texts.append((path, study.assessment.hourly_frame().to_csv(float_format="%.6g")))

    report = make_report(paths_or_specs, fmt=fmt, sizing=sizing, risk_years=risk_years,
                         sizing_steps=sizing_steps, seed=seed, generated=generated, progress=progress,
                         while_printing=hourly_texts if hourly else None)
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_bytes(report.content)
    written = [out]
    for path, text in csv_texts:
        with path.open("w", encoding="utf-8", newline="") as f:  # the line ends to_csv chose, as they are
            f.write(text)
        written.append(path)
    return written
