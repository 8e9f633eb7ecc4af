"""Table contents: pure functions from assessments to rows (no Dash), shared with the report."""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

import numpy as np

from siteharvest.assess import Assessment, CaseResult
from siteharvest.findings import (
    NEEDS_SURVEY,
    case_findings,
    case_label,
    headline,
    outage_text,
    sig_text,
    weather_warning,
)
from siteharvest.metrics import INSUFFICIENT, NEVER_STARTS, VERDICTS
from siteharvest.store import backup_life_text

VERDICT_ORDER = [words for _, words in VERDICTS] + [INSUFFICIENT, NEVER_STARTS]
VERDICT_CLASS = {words: f"sh-verdict-{i}" for i, words in enumerate(VERDICT_ORDER)}
ASSUMED_CLASS = "sh-verdict-assumed"  # a verdict resting on assumed deciding inputs: neutral, dashed
VERDICT_MEANING = {
    VERDICTS[0][1]: "0 deficit days",
    VERDICTS[1][1]: f"1–{VERDICTS[1][0]}",
    VERDICTS[2][1]: f"{VERDICTS[1][0] + 1}–{VERDICTS[2][0]}",
    INSUFFICIENT: f"> {VERDICTS[2][0]}",
    NEVER_STARTS: "no wake from empty",
}

SUMMARY_COLUMNS = [
    ("source", "Source", ""),
    ("verdict", "Verdict", ""),
    ("status", "Target", ""),
    ("annual_energy", "Into the store", "per year"),
    ("deficit_days", "Deficit days", "d/yr"),
    ("first_wake", "First wake", "h"),
    ("longest_outage", "Longest outage", "h"),
    ("lowest_soc", "Lowest charge", "%"),
    ("backup_life", "Backup cell life", "yr"),
]


def fmt(x: float | None, digits: int = 3) -> str:
    """``digits`` significant figures, never in exponent form (100, not 1e+02); ``—`` if not a number."""
    if x is None or not np.isfinite(x):
        return "—"
    if abs(x) >= 10 ** digits:
        return f"{x:,.0f}"
    return sig_text(x, digits)


def first_wake_text(hours: float) -> str:
    if not np.isfinite(hours):
        return "never"
    if hours >= 48:
        return f"{hours:.0f} ({hours / 24:.1f} d)"
    return f"{hours:.0f}"


def case_name(c: CaseResult) -> str:
    return case_label(c.id)


def energy_unit(values_wh: Iterable[float]) -> tuple[float, str]:
    """One energy unit for a whole column: Wh, unless even the largest value is under 1 Wh (then mWh).

    Every row of a table shares it; values print with :func:`fmt` (three significant figures, grouped
    thousands), so a large yield reads 12,300 Wh rather than switching to kWh."""
    largest = max((abs(v) for v in values_wh if np.isfinite(v)), default=0.0)
    return (1.0, "Wh") if largest >= 1.0 or largest == 0 else (1e-3, "mWh")


def summary_rows(a: Assessment) -> tuple[list[dict[str, Any]], str]:
    """One row per source and one for all together; and the unit of the energy column."""
    cases = a.cases
    shelf_life_years = a.backup.shelf_life_years
    factor, unit = energy_unit(c.annual_energy_wh for c in cases)
    found = case_findings(a)
    rows = []
    for c in cases:
        rows.append({
            "id": c.id,
            "combined": c.kind == "combined",
            "source": case_name(c),
            "what": c.label if c.kind != "combined" else "every source charging the one store",
            "kind": c.kind,
            "annual_energy": fmt(c.annual_energy_wh / factor),
            "deficit_days": str(int(c.deficit_days)),
            "first_wake": first_wake_text(c.first_wake_hours),
            "longest_outage": outage_text(c),
            "lowest_soc": fmt(c.lowest_soc_pct, 2),
            "backup_life": backup_life_text(c.backup_life_years, shelf_life_years, short=True),
            # a pass that rests on assumed inputs is not shown as a pass
            "verdict": c.verdict + (" (assumed inputs)" if found[c.id].status == NEEDS_SURVEY else ""),
            "verdict_class": (ASSUMED_CLASS if found[c.id].status == NEEDS_SURVEY
                              else VERDICT_CLASS.get(c.verdict, "")),
            "status": found[c.id].status,
            "finding": found[c.id].sentence,
        })
    return rows, f"{unit}/yr"


def best_source(a: Assessment) -> CaseResult:
    """The headline pick's source (see :func:`siteharvest.findings.headline`)."""
    pick = headline(a).source
    return next((c for c in a.sources if pick is not None and c.id == pick.id), a.combined)


NOT_ASSESSED = "could not assess"  # how a portfolio row whose spot cannot be simulated begins its verdict
# Verdicts best first: the portfolio sorts its verdict columns by this rank, not alphabetically.
VERDICT_ORDER = [*(words for _, words in VERDICTS), INSUFFICIENT, NEVER_STARTS]
RANKED = ("verdict", "together")  # portfolio columns shown as words and sorted by "<column>_rank"


def verdict_rank(verdict: str) -> int:
    """A verdict's place in VERDICT_ORDER; anything else (a spot not assessed) after them all."""
    return VERDICT_ORDER.index(verdict) if verdict in VERDICT_ORDER else len(VERDICT_ORDER)

PORTFOLIO_COLUMNS = [
    {"id": "spot", "name": "Spot and site file", "type": "text"},
    {"id": "best", "name": "Best source", "type": "text"},
    {"id": "verdict", "name": "Its verdict", "type": "text"},
    {"id": "status", "name": "Target", "type": "text"},
    {"id": "deficit_days", "name": "Deficit days [d/yr]", "type": "numeric"},
    {"id": "first_wake_h", "name": "First wake [h]", "type": "numeric"},
    {"id": "energy_wh", "name": "Its energy [Wh/yr]", "type": "numeric"},
    {"id": "demand_uw", "name": "Node demand [µW]", "type": "numeric"},
    {"id": "together", "name": "All together", "type": "text"},
    {"id": "weather", "name": "Weather year", "type": "text"},
]


def portfolio_row(key: str, file: str, a: Assessment | None, error: str = "", name: str = "") -> dict[str, Any]:
    """One row of the portfolio table (numbers kept as numbers so the table sorts them)."""
    if a is None:
        row = {"key": key, "spot": name or key, "best": "—", "verdict": f"{NOT_ASSESSED}: {error}",
               "deficit_days": None, "first_wake_h": None, "energy_wh": None, "demand_uw": None,
               "together": "—", "status": "—", "weather": "—", "sources": None, "file": file}
        return row | {f"{c}_rank": verdict_rank(row[c]) for c in RANKED}
    top = headline(a)
    best = best_source(a)
    far = weather_warning(a)
    fw = best.first_wake_hours
    row = {
        "key": key,
        "spot": a.spec.spot.name,
        "best": best.id,
        "verdict": best.verdict,
        "deficit_days": int(best.deficit_days),
        "first_wake_h": round(float(fw), 1) if np.isfinite(fw) else None,
        "energy_wh": float(f"{best.annual_energy_wh:.4g}"),
        "demand_uw": float(f"{a.mean_power_uw:.4g}"),
        "together": a.combined.verdict,
        "status": top.source.status if top.source is not None else top.case.status,
        "weather": (f"FAR: {far.distance_km:,.0f} km away" if far is not None
                    else "synthetic, for the spot" if a.spec.weather.source_kind == "synthetic" else "near the spot"),
        "weather_warning": None if far is None else far.sentence,
        "sources": len(a.sources),
        "file": file,
    }
    return row | {f"{c}_rank": verdict_rank(row[c]) for c in RANKED}
