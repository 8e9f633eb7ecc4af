"""The report as one self-contained HTML document (inline CSS and SVG, no script, nothing fetched).

Plain string building with :class:`string.Template` for the page frame. The same HTML is printed to
PDF, so the print rules (A4, page breaks, running footer) live in its CSS.
"""

from __future__ import annotations

import base64
import datetime as dt
import json
import math
import re
from collections.abc import Callable, Sequence
from html import escape
from string import Template
from typing import Any

import numpy as np
import plotly.graph_objects as go
from pydantic import BaseModel

import siteharvest
from siteharvest.assess import Assessment, CaseResult
from siteharvest.fields import bounds_of
from siteharvest.findings import (
    PICK_RULE,
    WHOLE_YEAR,
    WHOLE_YEAR_MEANING,
    case_findings,
    demand_summary,
    drawn_cell,
    interval_finding,
    interval_text,
    outage_text,
    place_text,
    risk_findings,
    size_text,
    sizing_finding,
    source_inputs,
    weather_warning,
)
from siteharvest.findings import (
    case_label as case_label_of,
)
from siteharvest.sizing import SizingMap
from siteharvest.store import backup_life_text, store_levels
from siteharvest.timegrid import REFERENCE_YEAR

from ..figures import (
    OKABE_ITO,
    case_calendar_figure,
    case_week_figure,
    case_year_figure,
    sources_figure,
)
from ..figures_sizing import SIZE_LABELS, risk_histogram, sizing_heatmap, unit_text
from .methods import (
    GENERAL_ASSUMPTIONS,
    KIND_METHODS,
    RISK_ASSUMPTIONS,
    SIZING_ASSUMPTIONS,
    collect_references,
    modules_for,
)
from .study import SpotStudy, case_label, portfolio_sha256, ranked

SvgMaker = Callable[[go.Figure, str], str]
MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
QUESTION = "Can a wireless sensor node mounted at {where} run all year on the energy it harvests there?"
PORTFOLIO_QUESTION = ("Can a wireless sensor node at each of these spots run all year on the energy it harvests "
                      "there, and which spots are the safest bets?")
# Bar patterns so that the monthly bars stay apart in a black-and-white print.
BAR_PATTERNS = ("", "/", ".", "x", "\\", "+", "-", "|")


# --------------------------------------------------------------------------------------------------
# number formats (the tests read the same numbers back from the PDF through these)


def fmt_sig(x: float, digits: int = 4) -> str:
    """``digits`` significant figures, never in exponent form: 34.26, 0.01234, 12350."""
    x = float(x)
    if not math.isfinite(x):
        return "-"
    if x == 0:
        return "0"
    return np.format_float_positional(x, precision=digits, unique=False, fractional=False, trim="-")


def fmt_energy_wh(x: float) -> str:
    """Energy into the store in Wh (per year or month), as printed in the report."""
    return fmt_sig(x, 4)


def fmt_hours(h: float) -> str:
    if not math.isfinite(h):
        return "never"
    return f"{h:,.0f}"


fmt_interval_s = interval_text  # a task period in plain units: 45 s, 12 min, 2.5 h, 1.2 days


def fmt_value(value: Any) -> str:
    """A site-file value as text."""
    if value is None:
        return "not set"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.6g}"
    if isinstance(value, list | tuple):
        return json.dumps(value, default=str).replace('"', "'") if value else "none"
    return str(value)


fmt_size = size_text  # a harvester or store size with its unit: 3 modules, 6.17 cm², 0.47 F


def e(x: Any) -> str:
    return escape(str(x), quote=True)


def table(head: Sequence[str], rows: Sequence[Sequence[str]], *, num: Sequence[int] = (), cls: str = "",
          raw: bool = False, caption: str = "") -> str:
    """An HTML table; cells are escaped unless ``raw``; columns in ``num`` are right-aligned."""
    def cell(tag: str, i: int, text: str) -> str:
        attr = ' class="num"' if i in num else ""
        return f"<{tag}{attr}>{text if raw else e(text)}</{tag}>"

    cap = f"<caption>{e(caption)}</caption>" if caption else ""
    thead = "<tr>" + "".join(cell("th", i, h) for i, h in enumerate(head)) + "</tr>"
    body = "".join("<tr>" + "".join(cell("td", i, c) for i, c in enumerate(r)) + "</tr>" for r in rows)
    return f'<table class="{cls}">{cap}<thead>{thead}</thead><tbody>{body}</tbody></table>'


def figure(svg: str, caption: str = "") -> str:
    cap = f"<figcaption>{e(caption)}</figcaption>" if caption else ""
    return f"<figure>{svg}{cap}</figure>"


# --------------------------------------------------------------------------------------------------
# print styling added to the dashboard's figures (patterns and marks that survive greyscale)


def print_ready_monthly(fig: go.Figure) -> go.Figure:
    """Give each source's bars its own fill pattern as well as its colour."""
    k = 0
    for trace in fig.data:
        if isinstance(trace, go.Bar):
            trace.marker.pattern = {"shape": BAR_PATTERNS[k % len(BAR_PATTERNS)], "fgcolor": "#000000",
                                    "size": 5, "solidity": 0.25}
            trace.marker.line = {"color": "#000000", "width": 0.6}
            k += 1
    return fig


def print_ready_calendar(fig: go.Figure, case: CaseResult) -> go.Figure:
    """Cross out each deficit day, so the calendar reads without its colours."""
    days = np.flatnonzero(case.deficit_days_mask)
    if days.size:
        dates = [dt.date(REFERENCE_YEAR, 1, 1) + dt.timedelta(days=int(d)) for d in days]
        fig.add_trace(go.Scatter(
            x=[d.day for d in dates], y=[MONTHS[d.month - 1] for d in dates], mode="markers",
            name="deficit day (crossed)", showlegend=False, hoverinfo="skip",
            marker={"symbol": "x-thin", "size": 9, "line": {"color": OKABE_ITO["black"], "width": 1.6}}))
    return fig


# --------------------------------------------------------------------------------------------------
# sections of one spot


def answer_sentence(study: SpotStudy) -> str:
    """The headline answer, its reason, the far-weather warning and the sources that need a survey."""
    a, top = study.assessment, study.headline
    assert a is not None and top is not None
    out = f"<strong>{e(top.answer)}</strong> {e(top.sentence)} {e(top.reason)}"
    far = weather_warning(a)
    if far is not None:
        out += f'</p><p class="warn"><strong>Weather year far from the spot.</strong> {e(far.sentence)}'
    surveys = [si.sentence for si in map(source_inputs, a.spec.source) if si.needs_survey]
    if surveys:
        out += '</p><p class="warn"><strong>Needs a survey.</strong> ' + " ".join(e(t) for t in surveys)
    return out


def decision_block(study: SpotStudy) -> str:
    """Page 1's decision: what to fit, what it takes, how sure, the cautions in short (the findings' words)."""
    a, top = study.assessment, study.headline
    assert a is not None and top is not None
    case_id = top.source.id if top.source is not None else top.case.id
    rows: list[tuple[str, str]] = []
    m = study.maps.get(case_id)
    fit = f"{case_label_of(case_id)} as drawn"
    if m is not None:
        f = sizing_finding(m, next((c for c in a.cases if c.id == case_id), None))
        if not f.meets_as_drawn:
            fit = (f"{case_label_of(case_id)}: {f.pick_text}" if f.pick is not None
                   else f"{case_label_of(case_id)}: nothing in the sizing map meets the target")
        rows.append(("What to fit", fit))
        rows.append(("What it takes", " ".join(x for x in (f.drawn_sentence, f.pick_sentence, f.edge_sentence) if x)))
    else:
        rows.append(("What to fit", fit))
        rows.append(("What it takes", "The sizing study was not run for this report."
                     if not study.sizing_error else f"The sizing study could not be run: {study.sizing_error}"))
    risks = risk_findings(study.risk) if study.risk is not None else {}
    if case_id in risks:
        r = risks[case_id]
        rows.append(("How sure", f"In nine weather years in ten (P90 over {r.years} resampled years) "
                     f"{case_label_of(case_id)} has at most {r.p90:.0f} deficit days a year "
                     f"(target: at most {study.target}); P50 {r.p50:.0f}, P99 {r.p99:.0f}."))
    else:
        rows.append(("How sure", "The weather-risk study was not run for this report."
                     if not study.risk_error else f"The weather-risk study could not be run: {study.risk_error}"))
    rows.append(("Safety", "; ".join(c.title for c in a.cautions) + " (see Safety)." if a.cautions
                 else "No particular caution applies; local codes and site rules come first."))
    body = "".join(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>" for k, v in rows)
    return f'<dl class="decision">{body}</dl>'


SIGN_OFF = ("Prepared by", "Checked by", "Date")


def sign_off_block() -> str:
    """Blank lines for the names and date of whoever prepared and checked the report."""
    cells = "".join(f'<div><span class="line"></span><span class="what">{e(w)}</span></div>' for w in SIGN_OFF)
    return f'<div class="signoff">{cells}</div>'


def results_section(study: SpotStudy) -> str:
    a = study.assessment
    assert a is not None
    found = case_findings(a)
    rows = []
    for c in a.cases:
        rows.append([case_label(c), c.kind if c.kind != "combined" else "-", c.verdict,
                     found[c.id].status, fmt_energy_wh(c.annual_energy_wh),
                     str(c.deficit_days), fmt_hours(c.first_wake_hours), outage_text(c),
                     backup_life_text(c.backup_life_years, a.backup.shelf_life_years)])
    demand_wh = demand_summary(a).annual_energy_wh
    backup = (f"{a.backup.cell} ({'assumed reference cell' if a.backup_is_assumed else 'as named in the site file'})")
    intro = (f"<p>The node draws {a.mean_power_uw:,.1f} µW on average, {fmt_energy_wh(demand_wh)} Wh a year. "
             f"The store holds {a.usable_energy_j:,.3g} J between full and cut-off, about "
             f"{fmt_sig(a.combined.autonomy_days, 3)} days of demand with no harvest. The backup cell, "
             f"{e(backup)}, would run the node alone for "
             f"{backup_life_text(a.backup_only_life_years, a.backup.shelf_life_years)} years; "
             f"the last column is its life alongside each source.</p>")
    head = ["Source", "Kind", "Verdict", "Target", "Into the store [Wh/yr]", "Deficit days [days/yr]",
            "First wake [h]", "Longest outage [h]", "Backup cell life [yr]"]
    return ("<h2>Results per source</h2>" + intro
            + table(head, rows, num=(4, 5, 6, 7, 8), cls="results")
            + '<p class="small">Target: at most ' + str(study.target) + " deficit days a year "
            "(<code>run.target_deficit_days</code>), with a first wake; <em>needs a survey</em>: it would meet "
            "the target, but an input that decides its yield is assumed (see <em>The spot and every input</em>). "
            "First wake: hours from installation with an empty store; longest outage: hours off in a row after "
            f"that ({e(WHOLE_YEAR_MEANING)}).</p>")


def monthly_section(study: SpotStudy, svg: SvgMaker) -> str:
    a = study.assessment
    assert a is not None
    demand = demand_summary(a).monthly_energy_wh
    rows = [[case_label(c)] + [fmt_sig(v, 3) for v in c.monthly_energy_wh] + [fmt_energy_wh(c.annual_energy_wh)]
            for c in a.cases]
    rows.append(["node demand"] + [fmt_sig(v, 3) for v in demand] + [fmt_energy_wh(float(demand.sum()))])
    fig = print_ready_monthly(sources_figure(a))
    return ('<div class="keep"><h2>Energy month by month</h2>'
            + figure(svg(fig, "Energy into the store each month against the node's demand"),
                     "Bars: energy into the store per month for each source (fill patterns tell them apart); "
                     "dashed line with diamonds: the node's demand. Log scale.") + "</div>"
            + table(["Energy [Wh]", *MONTHS, "Year"], rows, num=tuple(range(1, 14)), cls="monthly"))


def year_section(study: SpotStudy, svg: SvgMaker) -> str:
    a, best = study.assessment, study.best
    assert a is not None and best is not None
    case = best
    cal = print_ready_calendar(case_calendar_figure(case), case)
    week, _, caption = case_week_figure(a, case)
    # a little shorter than on screen, so that a page holds more (figures with no legend below the plot)
    cal.update_layout(height=390)
    outage = outage_text(case)
    outage = f"{outage} h" if outage != WHOLE_YEAR else WHOLE_YEAR_MEANING
    flat = flat_store_text(a, case)
    if flat:  # the store picture would be one colour: a sentence instead, and the figure never built
        year_part = f"<p>{e(flat)}</p>"
    else:
        year = case_year_figure(a, case)
        year.update_layout(height=370)
        year_part = figure(svg(year, f"Energy in the store across the year, {case.id}"),
                           "Stored energy by day (across) and hour (up); darkest is the node's cut-off.")
    return (f'<div class="keep"><h2>The year with {e(case.id)}</h2>'
            f"<p>The best single source, shown hour by hour. Deficit days: {case.deficit_days}; "
            f"longest outage after first wake: {e(outage)}.</p>"
            + figure(svg(cal, f"Deficit calendar, {case.id}"),
                     "Each square is a day; crossed squares are deficit days.") + "</div>"
            + figure(svg(week, f"Worst week, {case.id}"), f"The worst week: {caption}.")
            + year_part)


FLAT_SHARE = 0.05  # a stored-energy range under this share of cut-off..full draws as one colour


def flat_store_text(a: Assessment, case: CaseResult) -> str:
    """A sentence in place of the hour-by-hour store picture when it would be a single colour (the store
    never reaches the cut-off, or barely moves all year); empty when the picture says something."""
    levels = store_levels(a.spec.store)
    stored = np.asarray(case.stored_energy_j, dtype=float)
    lo, hi = float(stored.min()), float(stored.max())
    span = max(levels.max_j - levels.cutoff_j, 1e-12)
    where = (f"{fmt_sig(lo, 3)} to {fmt_sig(hi, 3)} J; cut-off {fmt_sig(levels.cutoff_j, 3)} J, "
             f"full {fmt_sig(levels.max_j, 3)} J")
    if hi <= levels.cutoff_j:
        return (f"The store stays below the node's cut-off all year ({where}), so the hour-by-hour picture of "
                "the store would be a single colour and is left out.")
    if hi - lo < FLAT_SHARE * span:
        return (f"The store barely moves all year ({where}), so the hour-by-hour picture of the store would be a "
                "single colour and is left out.")
    return ""


def _pick_text(m: SizingMap) -> str:
    f = sizing_finding(m)
    return f.pick_text + (" (edge of the map)" if f.pick_at_edge else "")


def _case_sentence(study: SpotStudy, case: CaseResult) -> str:
    """What would make this case pass (or how much smaller it could be): the findings' sentences."""
    m = study.maps.get(case.id)
    parts = []
    if m is not None:
        f = sizing_finding(m, case)
        parts = [f"<strong>{e(f.drawn_sentence)}</strong>", e(f.pick_sentence), e(f.edge_sentence),
                 e(f.bigger_store_sentence), "" if f.meets_as_drawn else e(f.frontier_sentence)]
    elif not study.passes(case):
        parts.append(f"<strong>{e(case_label(case))}</strong> misses the target as drawn "
                     f"({case.deficit_days} deficit days).")
    iv = study.intervals.get(case.id)
    if iv is not None:
        parts.append(e(interval_finding(iv).sentence))
    return " ".join(p for p in parts if p)


def sizing_section(study: SpotStudy, svg: SvgMaker) -> str:
    a = study.assessment
    assert a is not None
    out = ["<h2>What would make it pass</h2>"]
    if study.sizing_error:
        out.append(f"<p>The sizing study could not be run: {e(study.sizing_error)}</p>")
    if not study.maps and not study.intervals:
        out.append("<p>The sizing study was not run for this report.</p>")
        return "".join(out)
    rows = []
    for c in a.sources:
        m = study.maps.get(c.id)
        if m is None:
            continue
        i0, j0 = drawn_cell(m)
        rows.append([c.id, SIZE_LABELS.get(m.harvester_field, m.harvester_field),
                     f"{fmt_size(m.harvester_drawn, m.harvester_unit, m.harvester_field)} + "
                     f"{fmt_size(m.store_drawn, m.store_unit)}", str(int(m.deficit_days[i0, j0])), _pick_text(m),
                     "-" if m.pick is None else str(int(m.deficit_days[m.pick]))])
    if rows:
        out.append(table(["Source", "Harvester size", "As drawn (harvester + store)", "Deficit days",
                          "Least that passes", "Its deficit days"], rows, num=(3, 5), cls="sizing"))
    sentences = [s for s in (_case_sentence(study, c) for c in a.cases) if s]
    out.append("<ul class='plain'>" + "".join(f"<li>{s}</li>" for s in sentences) + "</ul>")
    failing = [c for c in a.sources if not study.passes(c) and c.id in study.maps]
    for c in failing:
        fig = sizing_heatmap(study.maps[c.id])
        fig.update_layout(height=440)
        out.append(figure(svg(fig, f"Sizing map, {c.id}"),
                          f"Deficit days by harvester and store size for {c.id}; lighter is better. Star: the "
                          "pick; round marks on a dotted line: the frontier; cross: as drawn."))
    if not failing:
        out.append("<p>Every source meets the target as drawn, so no sizing map is shown.</p>")
    return "".join(out)


def risk_section(study: SpotStudy, svg: SvgMaker) -> str:
    a, risk = study.assessment, study.risk
    assert a is not None
    out = ['<div class="keep"><h2>Weather risk</h2>']
    if study.risk_error:
        out.append(f"<p>The weather-risk study could not be run: {e(study.risk_error)}</p>")
    if risk is None:
        if not study.risk_error:
            out.append("<p>The weather-risk study was not run for this report.</p>")
        return "".join(out) + "</div>"
    out.append(f"<p>Deficit days over {risk.years} years made by resampling whole weeks of the spot's own year "
               f"(seed {risk.seed}). P50: half the years have at most this many; P90: nine years in ten; "
               "P99: ninety-nine in a hundred.</p>")
    rows = []
    for c in a.cases:
        if c.id not in risk.deficit_days:
            continue
        s = risk.summary(c.id)
        rows.append([case_label(c), f"{s['p50']:.0f}", f"{s['p90']:.0f}", f"{s['p99']:.0f}", f"{s['mean']:.1f}",
                     f"{s['chance_any']:.0%}"])
    out.append(table(["Source", "P50 [days/yr]", "P90 [days/yr]", "P99 [days/yr]", "Mean [days/yr]",
                      "Years with any deficit day"], rows, num=(1, 2, 3, 4, 5), cls="risk") + "</div>")
    best = study.best
    if best is not None and best.id in risk.deficit_days:
        out.append(figure(svg(risk_histogram(risk, best.id), f"Weather risk, {best.id}"),
                          f"How many resampled years had how many deficit days with {best.id}; "
                          "solid, dashed and dotted lines: P50, P90, P99."))
    return "".join(out)


def notes_section(a: Assessment) -> str:
    notes = list(a.prepared.weather_meta.notes)
    notes = [n for n in a.warnings if n not in notes] + notes
    meta = a.prepared.weather_meta
    items = [f"Weather year: {e(meta.source)}."] + [e(n) for n in notes]
    return "<h2>Notes from the models</h2><ul>" + "".join(f"<li>{n}</li>" for n in items) + "</ul>"


def cautions_section(a: Assessment) -> str:
    if not a.cautions:
        return ("<h2>Safety</h2><p>No particular caution applies to the sources, store and spot as described. "
                "Local codes, site rules and licensed practice still come first.</p>")
    body = "".join(f'<div class="caution"><h3>{e(c.title)}</h3><p>{e(c.text)}</p></div>' for c in a.cautions)
    return ("<h2>Safety</h2><p>General guidance for fitting at this spot; it does not replace local codes, site "
            "rules or licensed practice, which come first.</p>" + body)


def _strip_unit(doc: str) -> str:
    return re.sub(r"\s*\[[^\]]*\]$", "", doc or "")


def input_rows(model: BaseModel, prefix: str = "") -> list[list[str]]:
    """Every field of a site-file section (nested tables flattened), with its value, unit and meaning."""
    rows: list[list[str]] = []
    for name, info in type(model).model_fields.items():
        value = getattr(model, name)
        path = f"{prefix}{name}"
        if isinstance(value, BaseModel):
            rows.extend(input_rows(value, path + "."))
        elif isinstance(value, list | tuple) and value and all(isinstance(v, BaseModel) for v in value):
            for i, item in enumerate(value):
                rows.extend(input_rows(item, f"{path}[{i}]."))
        else:
            unit = bounds_of(type(model), name).unit  # the unit declared with the field's bounds
            rows.append([path, fmt_value(value), unit_text(unit) if unit else "", _strip_unit(info.description or "")])
    return rows


def inputs_section(study: SpotStudy) -> str:
    spec = study.spec
    assert spec is not None
    out = ["<h2>The spot and every input</h2>",
           "<p>Every value the results rest on, defaults included, as read from the site file. A unit of "
           "'-' means a plain number (a ratio or a count).</p>"]
    head = ["Field", "Value", "Unit", "Meaning"]
    sections: list[tuple[str, BaseModel]] = [("[spot]", spec.spot), ("[weather]", spec.weather),
                                             ("[node]", spec.node), ("[store]", spec.store)]
    sections += [(f"[[source]] {i}: {src.id} ({src.kind})", src) for i, src in enumerate(spec.source)]
    sections.append(("[run]", spec.run))
    rows = []
    for src in spec.source:
        si = source_inputs(src)
        rows.append([si.source_id, si.kind, ", ".join(si.given) or "-", ", ".join(si.assumed) or "-",
                     "needs a survey" if si.needs_survey else "-"])
    out.append("<h3>Deciding inputs: given or assumed</h3><p>The inputs that decide each source's yield at this "
               "spot. Assumed: left at its default (a default written out counts as assumed). A source whose "
               "survey input is assumed needs a survey before its result counts.</p>"
               + table(["Source", "Kind", "Given", "Assumed", "Survey"], rows, cls="inputs"))
    for title, model in sections:
        out.append(f"<h3>{e(title)}</h3>" + table(head, input_rows(model), cls="inputs"))
    return "".join(out)


def appendix_section(study: SpotStudy) -> str:
    text = study.site_text
    b64 = base64.b64encode(text.encode("utf-8")).decode("ascii")
    stem = re.sub(r"[^A-Za-z0-9._-]+", "-", (study.label or "site").rsplit(".", 1)[0]).strip("-") or "site"
    files = [[f.role, f.name, f.sha256 or "could not be read"] for f in study.input_files]
    file_table = table(["Input file", "Name", "SHA-256"], files, cls="hashes") if files else ""
    return ('<section class="appendix"><h2>Appendix: the site file</h2>'
            "<p>The site file as siteharvest read it, defaults written out (except those that depend on the "
            "spot's hemisphere, which are resolved again for its place): loading it again gives the same "
            "inputs. The inputs' SHA-256 covers this text and the bytes of every file it names.</p>"
            f'<p class="screen-only"><a download="{e(stem)}.toml" href="data:text/plain;charset=utf-8;base64,'
            f'{b64}">Download this site file</a></p>'
            + file_table + f'<pre class="site">{e(compact_toml(text))}</pre></section>')


def compact_toml(text: str) -> str:
    """TOML with each multi-line array folded onto one line (``[[1.0, 0.2], [10.0, 0.35]]``), so the
    appendix does not print one number per line; strings and comments are kept as written."""
    out: list[str] = []
    buf: list[str] = []
    depth = 0
    for line in text.splitlines():
        if depth == 0:
            depth = _bracket_depth(line)
            if depth > 0 and "=" in line:
                buf = [line.rstrip()]
                continue
            depth = 0
            out.append(line)
            continue
        buf.append(line.strip())
        depth += _bracket_depth(line)
        if depth <= 0:
            depth = 0
            joined = " ".join(buf)
            joined = re.sub(r"\[\s+", "[", joined)
            joined = re.sub(r",?\s*\]", "]", joined)
            out.append(joined)
            buf = []
    out.extend(buf)
    return "\n".join(out) + ("\n" if text.endswith("\n") else "")


def _bracket_depth(line: str) -> int:
    """Open brackets minus closed ones in a line, outside strings and comments."""
    depth, quote = 0, ""
    for ch in line:
        if quote:
            quote = "" if ch == quote else quote
        elif ch in "\"'":
            quote = ch
        elif ch == "#":
            break
        elif ch == "[":
            depth += 1
        elif ch == "]":
            depth -= 1
    return depth


def spot_header(study: SpotStudy, generated: str, level: str = "h1") -> str:
    spec = study.spec
    assert spec is not None
    spot = spec.spot
    where = spot.name
    place = (f"{place_text(spot.latitude_deg, spot.longitude_deg)}, {spot.altitude_m:g} m; "
             f"{'indoors' if spot.indoors else 'outdoors'}, mounted at {spot.mounting_height_m:g} m; "
             f"local standard time UTC{spot.utc_offset_h:+g} h")
    meta = [("Prepared", generated), ("siteharvest", siteharvest.__version__),
            ("Site file", study.label or "-"), ("Inputs SHA-256", study.input_sha256)]
    dl = "".join(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>" for k, v in meta)
    notes = f"<p><strong>Installer's notes:</strong> {e(spot.notes)}</p>" if spot.notes else ""
    return (f'<header class="spot-head"><p class="kicker">Harvesting feasibility report</p>'
            f"<{level}>{e(where)}</{level}>"
            f'<p class="question">{e(QUESTION.format(where=where))}</p>'
            f'<p class="place">{e(place)}</p>{notes}<dl class="meta">{dl}</dl></header>'
            f'<div class="answer"><p>{answer_sentence(study)}</p>{decision_block(study)}</div>'
            + sign_off_block())


def early_sections(study: SpotStudy, svg: SvgMaker) -> dict[str, str]:
    """The sections that need only the year's assessment, so their figures can render while the
    sizing and weather-risk studies run (``make_report`` adds ``"sizing"`` once that study is done)."""
    return {"monthly": monthly_section(study, svg), "year": year_section(study, svg)}


def spot_body(study: SpotStudy, svg: SvgMaker, generated: str, *, with_methods: bool) -> str:
    a = study.assessment
    assert a is not None
    early = study.early_parts or early_sections(study, svg)
    parts = [spot_header(study, generated), results_section(study), early["monthly"],
             early["year"], early["sizing"] if "sizing" in early else sizing_section(study, svg),
             risk_section(study, svg), notes_section(a),
             cautions_section(a), inputs_section(study)]
    if with_methods:
        parts.append(methods_section([study]))
    parts.append(appendix_section(study))
    return "".join(parts)


def methods_section(studies: Sequence[SpotStudy]) -> str:
    done = [s for s in studies if s.ok and s.spec is not None]
    kinds = list(dict.fromkeys(src.kind for s in done for src in s.spec.source))
    sizing = any(s.maps for s in done)
    risk = any(s.risk is not None for s in done)
    synthetic = any(s.spec.weather.source_kind == "synthetic" for s in done)
    items = list(GENERAL_ASSUMPTIONS) + [KIND_METHODS[k] for k in kinds if k in KIND_METHODS]
    if sizing:
        items += SIZING_ASSUMPTIONS
    if risk:
        items += RISK_ASSUMPTIONS
    refs = collect_references(modules_for(kinds, sizing=sizing or risk, synthetic_weather=synthetic))
    return ('<section class="methods"><h2>Assumptions and methods</h2><ul>'
            + "".join(f"<li>{e(i)}</li>" for i in items) + "</ul><h3>References</h3><ol class='refs'>"
            + "".join(f"<li>{e(r)}</li>" for r in refs) + "</ol></section>")


# --------------------------------------------------------------------------------------------------
# portfolio


def ranking_section(studies: Sequence[SpotStudy]) -> str:
    rows = []
    for n, s in enumerate(ranked(studies), 1):
        anchor = f"#spot-{studies.index(s) + 1}"
        if s.ok and s.best is not None and s.spec is not None:
            b = s.best
            rows.append([str(n), f'<a href="{anchor}">{e(s.spec.spot.name)}</a><br><span class="sub">{e(s.label)}'
                         "</span>", f'{e(b.id)}<br><span class="sub">{e(b.kind)}</span>', str(b.deficit_days),
                         e(b.verdict), e(s.headline.source.status), e(fmt_hours(b.first_wake_hours)),
                         _weather_flag(s)])
        else:
            rows.append(["-", f'<span class="error">could not be read</span><br><span class="sub">{e(s.label)}'
                         "</span>", "-", "-", "-", "-", "-", "-"])
    broken = [s for s in studies if not s.ok]
    errors = ""
    if broken:
        errors = ("<h3>Site files with errors</h3><p>These spots are left out of the report until their site file "
                  "is put right:</p><ul class='errors'>" + "".join(f"<li>{e(s.error)}</li>" for s in broken)
                  + "</ul>")
    return (table(["Rank", "Spot and site file", "Best source and kind", "Deficit days [days/yr]", "Verdict",
                   "Target", "First wake [h]", "Weather year"], rows, num=(0, 3, 6), cls="ranking", raw=True)
            + errors)


def _weather_flag(s: SpotStudy) -> str:
    far = weather_warning(s.assessment) if s.assessment is not None else None
    return "near" if far is None else f'<strong class="error">far: {far.distance_km:,.0f} km</strong>'


def portfolio_cover(studies: Sequence[SpotStudy], title: str, generated: str) -> str:
    meta = [("Prepared", generated), ("siteharvest", siteharvest.__version__),
            ("Spots", f"{len(studies)} ({sum(s.ok for s in studies)} studied, "
                      f"{sum(not s.ok for s in studies)} with errors)"),
            ("Portfolio SHA-256", portfolio_sha256(studies))]
    dl = "".join(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>" for k, v in meta)
    return ('<section class="cover"><header class="spot-head"><p class="kicker">Harvesting feasibility report: '
            f"portfolio</p><h1>{e(title or 'Portfolio of spots')}</h1>"
            f'<p class="question">{e(PORTFOLIO_QUESTION)}</p><dl class="meta">{dl}</dl></header>'
            "<h2>Spots ranked by their best source</h2>"
            f"<p>Best source: {e(PICK_RULE[len('The pick: '):])} Each spot's own section follows, in the order "
            "of the site files.</p>"
            + ranking_section(studies) + "</section>")


# --------------------------------------------------------------------------------------------------
# the page


CSS = Template("""
@page { size: A4; margin: 15mm 14mm 17mm 14mm;
  @bottom-left { content: "$footer"; font: 7.5pt $font; color: #444; }
  @bottom-right { content: "page " counter(page) " of " counter(pages); font: 7.5pt $font; color: #444; } }
html { font-family: $font; font-size: 9.5pt; line-height: 1.4; color: #111; background: #fff;
       font-variant-ligatures: none; font-kerning: normal; }
body { margin: 0 auto; max-width: 200mm; padding: 6mm 4mm; }
@media print { body { max-width: none; padding: 0; } .screen-only { display: none; } }
h1 { font-size: 17pt; margin: 0 0 3pt; line-height: 1.2; }
h2 { font-size: 12.5pt; margin: 14pt 0 5pt; padding-bottom: 2pt; border-bottom: 1.2pt solid #111;
     break-after: avoid; page-break-after: avoid; }
h3 { font-size: 10pt; margin: 9pt 0 3pt; break-after: avoid; page-break-after: avoid; }
p, li { orphans: 3; widows: 3; }
.kicker { text-transform: uppercase; letter-spacing: 0.08em; font-size: 8pt; color: #444; margin: 0; }
.question { font-size: 11pt; font-style: italic; margin: 2pt 0 4pt; }
.place { margin: 0 0 4pt; color: #333; }
dl.meta { display: grid; grid-template-columns: max-content 1fr; gap: 0 8pt; font-size: 8pt; margin: 4pt 0; }
dl.meta dt { font-weight: bold; } dl.meta dd { margin: 0; word-break: break-all; }
.answer { border: 1.5pt solid #111; padding: 5pt 8pt; margin: 8pt 0; break-inside: avoid; }
.answer p { margin: 0; font-size: 10.5pt; }
dl.decision { display: grid; grid-template-columns: max-content 1fr; gap: 2pt 8pt; margin: 5pt 0 0;
  padding-top: 4pt; border-top: 0.8pt solid #111; font-size: 9pt; }
dl.decision dt { font-weight: bold; } dl.decision dd { margin: 0; }
.signoff { display: flex; gap: 10mm; margin: 6pt 0 4pt; break-inside: avoid; }
.signoff div { flex: 1; } .signoff .line { display: block; border-bottom: 0.8pt solid #111; height: 14pt; }
.signoff .what { font-size: 8pt; color: #333; }
.answer p.warn { margin-top: 4pt; padding-top: 3pt; border-top: 0.8pt solid #111; font-size: 9.5pt; }
table { border-collapse: collapse; width: 100%; font-size: 8pt; margin: 4pt 0 6pt; }
th, td { border: 0.5pt solid #666; padding: 1.5pt 3.5pt; text-align: left; vertical-align: top; }
th { background: #e8e8e8; font-weight: bold; }
.num { text-align: right; font-variant-numeric: tabular-nums; } td.num { white-space: nowrap; }
thead { display: table-header-group; } tr { break-inside: avoid; page-break-inside: avoid; }
table.monthly, table.results, table.risk, table.sizing, table.hashes { break-inside: avoid; }
table.results td, table.sizing td:first-child, table.risk td:first-child, table.ranking td { white-space: nowrap; }
table.ranking td:nth-child(2) { white-space: normal; width: 48%; }
.sub { font-size: 7pt; color: #333; }
table.monthly { font-size: 6.6pt; } table.monthly td, table.monthly th { padding: 1pt 1.5pt; }
table.inputs { font-size: 7.2pt; } table.inputs td:first-child { font-family: $mono; white-space: nowrap; }
table.inputs td:nth-child(2) { word-break: break-word; max-width: 60mm; }
table.hashes td:last-child { font-family: $mono; font-size: 6.8pt; word-break: break-all; }
figure, .keep { margin: 6pt 0 8pt; break-inside: avoid; page-break-inside: avoid; }
figure svg { display: block; width: 100%; height: auto; }
figcaption { font-size: 8pt; color: #333; margin-top: 1pt; }
.small { font-size: 8pt; color: #333; }
ul.plain { padding-left: 12pt; } ul.plain li { margin-bottom: 3pt; }
.caution { border-left: 3pt solid #111; padding: 0 0 0 6pt; margin: 4pt 0 6pt; break-inside: avoid; }
.caution h3 { margin: 0 0 1pt; } .caution p { margin: 0; }
.error { font-weight: bold; text-decoration: underline; }
ul.errors li { margin-bottom: 3pt; }
ol.refs { font-size: 8pt; padding-left: 16pt; } ol.refs li { margin-bottom: 1.5pt; }
pre.site { font-family: $mono; font-size: 7pt; line-height: 1.3; white-space: pre-wrap; word-break: break-all;
           border: 0.5pt solid #666; padding: 4pt; margin: 4pt 0; column-count: 2; column-gap: 10pt;
           column-rule: 0.5pt solid #bbb; }
section.appendix, section.methods { break-before: page; page-break-before: always; }
section.spot + section.spot, section.cover + section.spot, section.spot + section.methods {
  break-before: page; page-break-before: always; }
a { color: inherit; }
code { font-family: $mono; font-size: 0.95em; }
""")

PAGE = Template("""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="siteharvest $version">
<title>$title</title>
<style>$css</style>
</head>
<body>
$body
</body>
</html>
""")

FONT = '"DejaVu Sans", "Liberation Sans", Arial, sans-serif'
MONO = '"DejaVu Sans Mono", "Liberation Mono", monospace'


def _css_string(text: str) -> str:
    return text.replace("\\", "\\\\").replace('"', '\\"').replace("\n", " ")


def page(title: str, body: str, footer: str) -> str:
    css = CSS.substitute(font=FONT, mono=MONO, footer=_css_string(footer))
    return PAGE.substitute(version=e(siteharvest.__version__), title=e(title), css=css, body=body)


def generated_text(generated: dt.datetime | None = None) -> str:
    return (generated or dt.datetime.now(dt.UTC)).astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M UTC")


def spot_section(study: SpotStudy, n: int, svg: SvgMaker, when: str, *, portfolio: bool) -> str:
    """One spot's section (figures through ``svg``); empty for a spot that could not be studied (a
    portfolio lists it with its error on the cover)."""
    if not study.ok:
        return ""
    return f'<section class="spot" id="spot-{n}">{spot_body(study, svg, when, with_methods=not portfolio)}</section>'


def assemble(studies: Sequence[SpotStudy], sections: Sequence[str], *, portfolio: bool, title: str,
             when: str) -> str:
    """The whole document from the spots' sections."""
    version = siteharvest.__version__
    if not portfolio:
        study = studies[0]
        assert study.spec is not None
        footer = f"siteharvest {version} · {study.spec.spot.name[:60]} · inputs {study.input_sha256[:16]}"
        return page(f"Feasibility report: {study.spec.spot.name}", "".join(sections), footer)
    parts = [portfolio_cover(studies, title, when), *sections, methods_section(studies)]
    footer = f"siteharvest {version} · portfolio {title[:50]} · inputs {portfolio_sha256(studies)[:16]}"
    return page(f"Feasibility report: {title or 'portfolio'}", "".join(parts), footer)


def build_html(studies: Sequence[SpotStudy], svg: SvgMaker, *, portfolio: bool, title: str = "",
               generated: dt.datetime | None = None) -> str:
    """The whole report as one HTML document."""
    when = generated_text(generated)
    sections = [spot_section(s, n, svg, when, portfolio=portfolio) for n, s in enumerate(studies, 1)]
    return assemble(studies, sections, portfolio=portfolio, title=title, when=when)
