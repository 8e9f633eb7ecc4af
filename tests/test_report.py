"""The feasibility report: its numbers are assess's numbers, its HTML stays offline, its pages render,
and a portfolio survives a broken site file.

The reference values here are the project's own: each number in the PDF is checked against the value the
stable ``assess --json`` document (or the sizing / weather-risk functions) gives for the same spot.
Rendered pages are written to test-artifacts/report/ for a person to look at.
"""

from __future__ import annotations

import base64
import io
import json
import re
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import pytest
from pypdf import PdfReader
from siteharvest_app.report import build_report, make_report, render, write_report
from siteharvest_app.report.html import fmt_energy_wh, fmt_sig, fmt_size, print_ready_monthly
from siteharvest_app.report.methods import collect_references, modules_for, reference_entries
from siteharvest_app.report.render import ReportBrowser, ReportError, _unique_ids, html_to_pdf, inline_svg
from siteharvest_app.report.study import expand_inputs, fingerprint, input_files, study_spot

from siteharvest import __version__
from siteharvest.assess import assess, prepare
from siteharvest.cli import main
from siteharvest.errors import SiteInputError
from siteharvest.findings import headline
from siteharvest.site import dump_site, load_site, parse_site_text
from siteharvest.sizing import sizing_map, weather_risk

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_sites"
ARTIFACTS = ROOT / "test-artifacts" / "report"
CHROMIUM = Path("/usr/bin/chromium")
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-background-networking",
         "--disable-component-update", "--disable-sync", "--disable-dev-shm-usage", "--disable-quic"]
needs_chromium = pytest.mark.skipif(not CHROMIUM.exists(), reason="Debian's chromium is not at /usr/bin/chromium")
# Small studies keep the file quick: few sizes along each axis, few resampled years.
FAST = {"risk_years": 12, "sizing_steps": 6}
FAST_ARGS = ["--risk-years", "12", "--sizing-steps", "6"]
BROKEN = SAMPLES.joinpath("north-wall.toml").read_text(encoding="utf-8").replace(
    "capacitance_f = 1.5", "capacitance_f = -1.5")


def pdf_text(path: Path) -> str:
    """All the PDF's text, whitespace runs made single spaces."""
    return re.sub(r"\s+", " ", " ".join(p.extract_text() or "" for p in PdfReader(path).pages))


def render_pages(pdf: Path, stem: str, dpi: int = 60) -> list[Path]:
    """The PDF's pages as PNG files in test-artifacts/report/ (for a person to look at)."""
    ARTIFACTS.mkdir(parents=True, exist_ok=True)
    for old in ARTIFACTS.glob(f"{stem}-*.png"):
        old.unlink()
    subprocess.run(["pdftoppm", "-r", str(dpi), "-png", str(pdf), str(ARTIFACTS / stem)], check=True, timeout=120)
    return sorted(ARTIFACTS.glob(f"{stem}-*.png"))


# --------------------------------------------------------------------------------------------------
# one spot, PDF


@pytest.fixture(scope="module")
def plant_report(tmp_path_factory) -> tuple[Path, Path]:
    """The plant room's report as HTML, and that HTML printed to PDF (one study for both)."""
    if not CHROMIUM.exists():
        pytest.skip("Debian's chromium is not at /usr/bin/chromium")
    folder = tmp_path_factory.mktemp("report")
    report = make_report(SAMPLES / "plant-room.toml", fmt="html", **FAST)
    html, pdf = folder / "plant-room.html", folder / "plant-room.pdf"
    html.write_bytes(report.content)
    pdf.write_bytes(html_to_pdf(report.content.decode("utf-8")))
    return html, pdf


@pytest.fixture(scope="module")
def plant_pdf(plant_report) -> Path:
    return plant_report[1]


@pytest.fixture(scope="module")
def plant_text(plant_pdf) -> str:
    return pdf_text(plant_pdf)


@needs_chromium
def test_pdf_carries_the_numbers_of_assess_json(plant_text, capsys):
    assert main(["assess", str(SAMPLES / "plant-room.toml"), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    for src in doc["sources"]:
        row = (rf"{re.escape(src['id'])} {src['kind']} {src['verdict']} (meets|misses) "
               rf"{re.escape(fmt_energy_wh(src['annual_energy_wh']))} {src['deficit_days']} ")
        assert re.search(row, plant_text), row
    comb = doc["combined"]
    energy = re.escape(fmt_energy_wh(comb["annual_energy_wh"]))
    row = rf"all sources together - {comb['verdict']} (meets|misses) {energy} {comb['deficit_days']} "
    assert re.search(row, plant_text), row
    assert f"{fmt_energy_wh(doc['demand']['annual_energy_wh'])} Wh a year" in plant_text
    # the answer names the best source with its deficit days
    best = min(doc["sources"], key=lambda s: s["deficit_days"])
    assert f"{best['id']} ({best['kind']}), leaves {best['deficit_days']} deficit days" in plant_text


@needs_chromium
def test_pdf_has_every_part_of_the_report(plant_text):
    spec = load_site(SAMPLES / "plant-room.toml")
    assert "Can a wireless sensor node mounted at Plant room B" in plant_text          # the question
    assert f"siteharvest {__version__}" in plant_text
    assert re.search(r"Prepared \d{4}-\d\d-\d\d \d\d:\d\d UTC", plant_text)
    digest, _ = fingerprint(dump_site(spec), input_files(spec))
    assert f"Inputs SHA-256 {digest}" in plant_text
    for part in ("Results per source", "Energy month by month", "The year with motor-casing",
                 "Calendar: 114 deficit days", "The worst week", "The year at a glance",
                 "What would make it pass", "Weather risk", "Notes from the models", "Safety",
                 "The spot and every input", "Assumptions and methods", "References", "Appendix: the site file"):
        assert part in plant_text, part
    # every input, with its unit: a few from each table
    for row in ("latitude_deg 36.1 deg", "capacitance_f 2 F", "task[0].duration_ms 800 ms", "proof_mass_g 8 g",
                "resonant_frequency_hz 50 Hz", "target_deficit_days 0 days/yr"):
        assert row in plant_text, row
    # cautions of the sources used, deferring to local practice
    for title in ("Hot surfaces", "Rotating machinery", "Electrical enclosures and wiring"):
        assert title in plant_text
    assert "local codes, site rules or licensed practice" in plant_text
    # references of the models used (vibration: Williams & Yates 1996), none of the unused RF model
    assert "Williams, C.B. and Yates, R.B. (1996)" in plant_text
    assert "Friis" not in plant_text
    # the site file as an appendix
    assert "[[source]]" in plant_text and 'id = "bearing-shaker"' in plant_text


@needs_chromium
def test_pdf_sizing_and_risk_numbers_are_those_of_the_studies(plant_text):
    prep = prepare(load_site(SAMPLES / "plant-room.toml"))
    m = sizing_map(prep, "motor-casing", n_harvester=FAST["sizing_steps"], n_store=FAST["sizing_steps"])
    assert m.pick is not None
    i, j = m.pick
    pick = f"{fmt_size(m.harvester_sizes[i], m.harvester_unit, m.harvester_field)} + " \
           f"{fmt_size(m.store_sizes[j], m.store_unit)}"
    assert pick in plant_text
    room = sizing_map(prep, "room-light", n_harvester=FAST["sizing_steps"], n_store=FAST["sizing_steps"])
    assert "room-light has 365 deficit days a year: it misses the target" in plant_text  # as drawn
    if room.pick is None:
        assert "Nothing in this map meets the target" in plant_text      # said plainly when nothing passes
    else:  # the cell cold-starts while lit: a much larger one passes, and the report names it
        i, j = room.pick
        assert (f"{fmt_size(room.harvester_sizes[i], room.harvester_unit, room.harvester_field)} + "
                f"{fmt_size(room.store_sizes[j], room.store_unit)}") in plant_text
    risk = weather_risk(prep, years=FAST["risk_years"], seed=1)
    r = risk.summary("bearing-shaker")
    row = (f"bearing-shaker {r['p50']:.0f} {r['p90']:.0f} {r['p99']:.0f} {r['mean']:.1f} "
           f"{r['chance_any']:.0%}")
    assert row in plant_text
    assert f"Deficit days over {FAST['risk_years']} years" in plant_text


@needs_chromium
def test_pdf_pages_render_and_stay_few(plant_pdf):
    from PIL import Image

    pages = render_pages(plant_pdf, "plant-room")
    assert len(pages) == len(PdfReader(plant_pdf).pages)
    assert 6 <= len(pages) <= 20
    for png in pages:
        grey = np.asarray(Image.open(png).convert("L"))
        assert (grey < 128).mean() > 0.002, f"{png.name} looks blank"
        # nothing printed into the right margin (14 mm of 210 mm)
        margin = grey[:, int(grey.shape[1] * (1 - 12 / 210)):]
        assert (margin < 200).mean() < 0.001, f"{png.name} spills into the right margin"


@needs_chromium
def test_hourly_csv_is_written_beside_the_report(corridor_html):
    csv = corridor_html.with_name("corridor.hourly.csv")
    frame = pd.read_csv(csv, index_col=0)
    assert len(frame) == 8760 and frame.index.name == "time_local_standard"
    a_json = study_spot(SAMPLES / "corridor-window.toml", sizing=False, risk_years=0).assessment.to_json()
    beam = next(s for s in a_json["sources"] if s["id"] == "corridor-beam")
    # W summed over hours is Wh; the CSV keeps 6 significant figures
    assert frame["corridor-beam.into_store_w"].sum() == pytest.approx(beam["annual_energy_wh"], rel=1e-4)


# --------------------------------------------------------------------------------------------------
# one spot, HTML, opened offline in Chromium


@pytest.fixture(scope="module")
def corridor_html(tmp_path_factory) -> Path:
    if not CHROMIUM.exists():
        pytest.skip("Debian's chromium is not at /usr/bin/chromium")
    out = tmp_path_factory.mktemp("report") / "corridor.html"
    written = write_report(SAMPLES / "corridor-window.toml", out, **FAST)
    assert written == [out, out.with_name("corridor.hourly.csv")]
    return out


@pytest.fixture(scope="module")
def offline_browser(playwright):
    """Debian's Chromium through pytest-playwright's driver (no browser download)."""
    if not CHROMIUM.exists():
        pytest.skip("Debian's chromium is not at /usr/bin/chromium")
    browser = playwright.chromium.launch(executable_path=str(CHROMIUM), args=FLAGS)
    yield browser
    browser.close()


@needs_chromium
def test_a_figure_plotly_cannot_draw_is_one_clear_line():
    # plotly.js cannot draw a heatmap on a category axis that a bar trace sets up (it throws in the page)
    bad = go.Figure([go.Heatmap(z=[[0, 1], [2, 3]]), go.Bar(x=["a", "b"], y=[1, 2])])
    with ReportBrowser() as browser:
        token = browser.defer(bad, "a figure that cannot be drawn")
        with pytest.raises(ReportError) as err:
            browser.resolve(token)
    text = str(err.value)
    assert text.startswith("a figure could not be drawn") and "\n" not in text
    assert text.endswith("(figure: a figure that cannot be drawn)")


def offline_page(browser, problems: list[str]):
    """A new page whose console errors and warnings, script errors and requests off this machine are
    written to ``problems`` (such requests are refused)."""
    page = browser.new_page()
    page.on("console", lambda m: problems.append(f"console {m.type}: {m.text}") if m.type in ("error", "warning")
            else None)
    page.on("pageerror", lambda exc: problems.append(f"page error: {exc}"))

    def gate(route):
        url = route.request.url
        if url.startswith(("file:", "data:")):
            route.continue_()
        else:
            problems.append(f"request off this machine: {url}")
            route.abort()

    page.route("**/*", gate)
    return page


@needs_chromium
def test_figure_page_draws_offline_without_errors_or_requests(tmp_path, offline_browser):
    # the page the report's browser draws figures in: plotly.js from the installed package, nothing else
    html = tmp_path / "figures.html"
    html.write_text(render.RENDER_PAGE.format(plotly=render.plotly_js_path().as_uri()), encoding="utf-8")
    problems: list[str] = []
    page = offline_page(offline_browser, problems)
    page.goto(html.as_uri())
    fig = go.Figure([go.Heatmap(z=[[0, 1], [2, 3]]), go.Bar(x=[0, 1], y=[1, 2], opacity=0.5),
                     go.Scatter(x=[0, 1], y=[1, 0], line={"dash": "dash"})])
    svg = page.evaluate("(f) => renderFigure(f, 500, 300)", json.loads(fig.to_json()))
    page.close()
    assert svg.startswith("<svg") and 'width="500"' in svg and 'height="300"' in svg
    assert problems == []


@needs_chromium
def test_html_opens_offline_without_errors_or_requests(corridor_html, offline_browser):
    problems: list[str] = []
    page = offline_page(offline_browser, problems)
    page.goto(corridor_html.as_uri())
    page.wait_for_load_state("load")
    # monthly, calendar, worst week, weather risk (both sources pass: no sizing map); the store across the
    # year is a sentence, as the beam keeps it full all year (one solid colour as a picture)
    assert page.locator("figure svg").count() == 4
    assert page.get_by_text("The store barely moves all year").is_visible()
    assert page.locator("table.results tbody tr").count() == 3
    assert page.locator("script").count() == 0
    assert page.get_by_text("Download this site file").is_visible()
    page.close()
    assert problems == []


# A4 less the report's 14 mm side margins, in CSS pixels (96 per inch): wider content would make Chromium
# shrink every page to fit.
PRINT_WIDTH_PX = round((210 - 2 * 14) / 25.4 * 96)


@needs_chromium
def test_nothing_is_wider_than_the_printed_page(plant_report, corridor_html, offline_browser):
    page = offline_browser.new_page(viewport={"width": PRINT_WIDTH_PX, "height": 1000})
    page.emulate_media(media="print")
    for html in (plant_report[0], corridor_html):
        page.goto(html.as_uri())
        wide = page.evaluate("""() => [...document.querySelectorAll('table, pre, figure, dl, p, h1, h2')]
            .filter(el => el.scrollWidth > el.parentElement.clientWidth + 1)
            .map(el => el.tagName + ' ' + el.className + ' ' + el.scrollWidth)""")
        assert wide == [], html.name
        assert page.evaluate("() => document.documentElement.scrollWidth") <= PRINT_WIDTH_PX
    page.close()


@needs_chromium
def test_html_embeds_the_site_file_that_loads_back_to_the_same_spot(corridor_html):
    html = corridor_html.read_text(encoding="utf-8")
    link = re.search(r'href="data:text/plain;charset=utf-8;base64,([A-Za-z0-9+/=]+)"', html)
    assert link
    text = base64.b64decode(link.group(1)).decode("utf-8")
    original = load_site(SAMPLES / "corridor-window.toml")
    assert parse_site_text(text, base_dir=SAMPLES).model_dump() == original.model_dump()
    assert "<pre class=\"site\">" in html and "corridor-beam" in html
    assert "https://" not in html.replace("http://www.w3.org", "")  # nothing fetched or linked off the machine
    assert "@page" in html and "break-inside: avoid" in html


# --------------------------------------------------------------------------------------------------
# portfolio from the command line, with a broken spot


@needs_chromium
def test_portfolio_ranks_spots_and_lists_a_broken_one(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)  # as at a terminal: progress lines on stderr
    folder = tmp_path / "plant"
    shutil.copytree(SAMPLES, folder)
    (folder / "broken.toml").write_text(BROKEN, encoding="utf-8")
    with pytest.raises(SiteInputError) as caught:
        load_site(folder / "broken.toml")
    out = tmp_path / "portfolio.pdf"
    code = main(["report", str(folder), "-o", str(out), "--risk-years", "6", "--sizing-steps", "5"])
    captured = capsys.readouterr()
    written = captured.out.split()
    assert code == 0 and written[0] == str(out)
    progress = captured.err.splitlines()
    assert len(progress) == 6 and progress[0].startswith("siteharvest: 1/5 ") and progress[-1].endswith("PDF")
    assert "siteharvest: 1/5 broken.toml: could not be read" in progress  # sorted by name: broken.toml first
    samples = sorted(p.stem for p in SAMPLES.glob("*.toml"))
    assert sorted(Path(p).name for p in written[1:]) == [f"portfolio.{s}.hourly.csv" for s in samples]
    text = pdf_text(out)
    cover = re.sub(r"\s+", " ", PdfReader(out).pages[0].extract_text())
    assert "Spots ranked by their best source" in cover and "5 (4 studied, 1 with errors)" in cover
    assert "broken.toml" in cover and str(caught.value) in cover         # its one-line error, in full
    # the ranking: spots best first by the library's own ordering of their headlines, the plant room
    # (114 deficit days at best) last of those studied
    order = sorted(SAMPLES.glob("*.toml"), key=lambda p: headline(assess(load_site(p))).rank)
    names = [load_site(p).spot.name.split(",")[0] for p in order]
    assert names[-1] == "Plant room B"
    for n, name in enumerate(names, 1):
        assert re.search(rf"\b{n} {name}", cover), name
    plant = assess(load_site(SAMPLES / "plant-room.toml")).sources[1]  # the motor casing, its best source
    assert re.search(r"4 Plant room B, pump skid P-3, motor drive end plant-room\.toml motor-casing thermoelectric "
                     rf"{plant.deficit_days} insufficient misses {plant.first_wake_hours:.0f}", cover)
    assert "- could not be read broken.toml" in cover
    for spot in ("Filter hall roof, south parapet", "Admin block, first-floor corridor by the east window"):
        assert f"Can a wireless sensor node mounted at {spot}" in text
    pages = render_pages(out, "portfolio", dpi=45)
    assert len(pages) == len(PdfReader(out).pages)


def test_one_bad_site_file_is_one_line_and_exit_2(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(BROKEN, encoding="utf-8")
    out = tmp_path / "bad.pdf"
    assert main(["report", str(bad), "-o", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "capacitance_f" in err and "bad.toml" in err
    assert not out.exists()


@needs_chromium
def test_a_folder_of_only_broken_site_files_is_bad_input(tmp_path, capsys):
    folder = tmp_path / "spots"
    folder.mkdir()
    (folder / "broken.toml").write_text(BROKEN, encoding="utf-8")
    assert main(["report", str(folder), "-o", str(tmp_path / "p.pdf")]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "at least one readable site file" in err and "capacitance_f" in err
    assert not (tmp_path / "p.pdf").exists()


def test_cli_refuses_an_unknown_output_kind_and_bad_options(tmp_path, capsys):
    site = str(SAMPLES / "roof-parapet.toml")
    assert main(["report", site, "-o", str(tmp_path / "x.docx")]) == 2
    assert main(["report", site, "-o", str(tmp_path / "x.pdf"), "--risk-years", "-3"]) == 2
    errs = capsys.readouterr().err.strip().splitlines()
    assert len(errs) == 2 and "-o/--output" in errs[0] and "--risk-years" in errs[1]


def test_missing_chromium_is_one_clear_line(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("SITEHARVEST_CHROMIUM", str(tmp_path / "no-such-chromium"))
    assert main(["report", str(SAMPLES / "roof-parapet.toml"), "-o", str(tmp_path / "r.pdf")]) == 1
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "Chromium is needed" in err and "SITEHARVEST_CHROMIUM" in err


def test_a_program_that_is_no_browser_is_one_clear_line(tmp_path, capsys, monkeypatch):
    fake = tmp_path / "not-a-browser"
    fake.write_text("#!/bin/sh\nexit 0\n")
    fake.chmod(0o755)
    monkeypatch.setenv("SITEHARVEST_CHROMIUM", str(fake))
    assert main(["report", str(SAMPLES / "roof-parapet.toml"), "-o", str(tmp_path / "r.pdf"), *FAST_ARGS]) == 1
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "could not start Chromium" in err and str(fake) in err
    assert "('" not in err  # the first sentence, not a tuple of them
    assert not (tmp_path / "r.pdf").exists()


@needs_chromium
def test_one_browser_renders_the_figures_and_prints_a4(monkeypatch):
    # ISO 216: A4 is 210 mm x 297 mm, i.e. 595.28 pt x 841.89 pt (1 pt = 1/72 in).
    monkeypatch.setattr(render, "STREAM_PIECE_BYTES", 1024)  # the PDF arrives in several pieces
    fig = go.Figure(go.Scatter(x=[0, 1, 2], y=[1, 3, 2], name="probe"), layout={"title": {"text": "probe"}})
    with ReportBrowser() as browser:
        token = browser.defer(fig, "probe figure", height_px=300)
        body = browser.resolve(f"<!doctype html><html><body>{token}</body></html>")
        pdf = browser.pdf(body)
    assert token not in body and body.count("<svg") >= 1 and 'aria-label="probe figure"' in body
    assert len(pdf) > 3 * 1024 and pdf.rstrip().endswith(b"%%EOF")
    page = PdfReader(io.BytesIO(pdf)).pages
    assert len(page) == 1
    box = page[0].mediabox
    assert float(box.width) == pytest.approx(595.28, abs=1.0) and float(box.height) == pytest.approx(841.89, abs=1.0)


# --------------------------------------------------------------------------------------------------
# pieces


def test_inputs_hash_covers_the_site_text_and_every_file_it_names(tmp_path):
    spec = load_site(SAMPLES / "plant-room.toml")
    files = input_files(spec)
    assert [(role, name) for role, name, _ in files] == [("weather.bundled", "723170TYA.CSV"),
                                                         ("source[2].spectrum_file", "surveys/pump-skid-p3.csv")]
    digest, listed = fingerprint(dump_site(spec), files)
    assert all(f.sha256 and len(f.sha256) == 64 for f in listed)
    survey = tmp_path / "survey.csv"
    survey.write_bytes(files[1][2].read_bytes() + b"\n")
    changed = [files[0], (files[1][0], files[1][1], survey)]
    assert fingerprint(dump_site(spec), changed)[0] != digest            # one byte more in a named file
    assert fingerprint(dump_site(spec) + " ", files)[0] != digest        # a change in the site text
    assert fingerprint(dump_site(spec), files)[0] == digest              # and nothing else moves it


def test_a_site_spec_can_be_studied_directly(site_file):
    spec = load_site(site_file())
    study = study_spot(spec, sizing=False, risk_years=0)
    assert study.ok and study.best is not None and study.best.id == "panel"
    assert study.label == "spot.toml" and study.input_files == []       # a synthetic year names no file


def test_a_folder_is_a_portfolio_and_one_file_is_not(tmp_path):
    items, portfolio, title = expand_inputs(SAMPLES)
    assert portfolio and title == "sample_sites" and [p.name for p in items] == sorted(p.name for p in items)
    assert expand_inputs(SAMPLES / "north-wall.toml")[1] is False
    (tmp_path / "empty").mkdir()
    with pytest.raises(SiteInputError, match="a folder holding site files"):
        expand_inputs(tmp_path / "empty")


def test_fmt_sig_keeps_significant_figures_without_exponents():
    assert fmt_sig(34.2614) == "34.26"
    assert fmt_sig(0.0063054) == "0.006305"
    assert fmt_sig(12345.6) == "12350"
    assert fmt_sig(0.0) == "0" and fmt_sig(float("nan")) == "-"
    assert fmt_size(3.0, "-", "modules") == "3 modules" and fmt_size(1.0, "-", "modules") == "1 module"
    assert fmt_size(6.17, "cm2") == "6.17 cm²"


def test_references_come_from_the_models_used_once_each_and_in_full():
    solar = collect_references(modules_for(["solar"], sizing=False, synthetic_weather=False))
    assert any(r.startswith("Perez, R., Ineichen, P., Seals, R., Michalsky, J. and Stewart, R. (1990)") for r in solar)
    assert not any("Williams, C.B." in r for r in solar)
    rf = collect_references(modules_for(["rf"], sizing=True, synthetic_weather=False))
    friis = [r for r in rf if r.startswith("Friis")]
    assert friis == ["Friis, H.T. (1946). A note on a simple transmission formula. Proc. IRE 34(5), 254-256."]
    assert any(r.startswith("IEEE 1562-2021") for r in rf)                # the sizing study's own
    doc = ("Summary.\n\nReferences\n----------\nSmith, A. (2001). One title. J. Things 1, 2-3. Jones, B. and Roe, C. "
           "(2002). Two\ntitle. J. Stuff 4, 5.\nIEC 60000-1 (2010). A standard.\n")
    assert reference_entries(doc) == ["Smith, A. (2001). One title. J. Things 1, 2-3.",
                                      "Jones, B. and Roe, C. (2002). Two title. J. Stuff 4, 5.",
                                      "IEC 60000-1 (2010). A standard."]


def test_inline_svgs_get_their_own_ids():
    svg = ('<svg class="main-svg" width="700" height="400" viewBox="0 0 700 400"><defs><clipPath id="clip1">'
           '<rect/></clipPath><linearGradient id="g1"/></defs><g clip-path="url(#clip1)" '
           "style=\"fill: url('#g1')\"><use href=\"#clip1\"/></g><rect fill=\"#ffffff\"/></svg>")
    out = inline_svg(svg, "f7-", "A figure")
    assert 'id="f7-clip1"' in out and "url(#f7-clip1)" in out and "url('#f7-g1')" in out
    assert 'href="#f7-clip1"' in out and 'fill="#ffffff"' in out       # colours are not ids
    assert 'width="700"' not in out and 'viewBox="0 0 700 400"' in out and 'aria-label="A figure"' in out
    assert _unique_ids("<svg/>", "x") == "<svg/>"


def test_monthly_bars_get_a_pattern_each():
    from plotly import graph_objects as go

    fig = go.Figure([go.Bar(x=[1], y=[1], name=str(k)) for k in range(3)])
    shapes = [t.marker.pattern.shape for t in print_ready_monthly(fig).data]
    assert len(set(shapes)) == 3


@needs_chromium
def test_build_report_returns_html_bytes_for_a_spec(site_file):
    spec = load_site(site_file())
    html = build_report(spec, fmt="html", sizing=False, risk_years=0).decode("utf-8")
    assert html.startswith("<!DOCTYPE html>") and "test spot" in html
    assert "The sizing study was not run" in html and "The weather-risk study was not run" in html


def test_page_one_carries_the_decision_and_a_sign_off(plant_pdf):
    """Answer, what to fit, what it takes, how sure, the cautions and the sign-off lines on page 1."""
    first = PdfReader(str(plant_pdf)).pages[0].extract_text()
    for words in ("Not as drawn", "What to fit", "What it takes", "How sure", "P90", "Safety", "Prepared by",
                  "Checked by", "Date"):
        assert words in first, words
    assert "79.950° W" in first and "° E" not in first  # the sample's longitude is negative: west


def test_appendix_prints_arrays_on_one_line(plant_text):
    """The site file's curves read as one line each, not one number per line."""
    from siteharvest_app.report.html import compact_toml

    text = ('a = [\n    [\n        1.0,\n        0.2,\n    ],\n    [\n        10.0,\n        0.35,\n    ],\n]\n'
            'b = "x [y"\n')
    assert compact_toml(text) == 'a = [[1.0, 0.2], [10.0, 0.35]]\nb = "x [y"\n'
    assert "efficiency_curve = [[" in plant_text
