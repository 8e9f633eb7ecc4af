"""Findings: the conclusions of an assessment and its studies, each with its numbers and one plain sentence.

The command line, the dashboard and the report format these; none of them works a conclusion out
again. Everything here is a pure function of an :class:`~siteharvest.assess.Assessment`, a
:class:`~siteharvest.sizing.SizingMap`, a :class:`~siteharvest.sizing.ReportInterval` or a
:class:`~siteharvest.sizing.WeatherRisk`.

- Case status: a source *meets* the target (deficit days at most the target and a first wake),
  *misses* it, or *needs a survey*: it would meet it, but an input that decides its yield is a
  default (:data:`SURVEY_INPUTS`), so the pass is not a finding yet.
- Headline pick: among the sources that meet the target on given inputs, the one with the widest
  margin in its worst month (energy into the store over the node's demand), ties by annual energy;
  sources resting on defaults come after those on given inputs; when none meets the target, the one
  with the fewest deficit days (then a first wake, then the worst-month margin), and by how much it
  misses.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from pydantic import BaseModel

from .assess import COMBINED_ID, Assessment, CaseResult
from .metrics import annual_demand_wh, monthly_demand_wh
from .sizing import (
    FIRST_WAKE_HORIZON_H,
    LONGEST_REPORT_INTERVAL_S,
    TASK_COSTLIEST,
    TASK_GIVEN,
    TASK_NAMED,
    ReportInterval,
    SizingMap,
    WeatherRisk,
    meets_target,
)
from .weather import FarStation

MONTH_NAMES = ("January", "February", "March", "April", "May", "June", "July", "August", "September",
               "October", "November", "December")

# ------------------------------------------------------------------------------------------- words

COMBINED_LABEL = "all sources together"
FIRST_WAKE_HORIZON_DAYS = FIRST_WAKE_HORIZON_H // 24
NO_WAKE_TEXT = f"no wake within {FIRST_WAKE_HORIZON_DAYS} days"

MEETS = "meets"
MISSES = "misses"
NEEDS_SURVEY = "needs a survey"
STATUSES = (MEETS, NEEDS_SURVEY, MISSES)

# Plain names of each store's size field (a harvester's come with its map, from its kind's size knob).
STORE_LABELS = {"capacitance_f": "Supercapacitor capacitance", "capacity_mah": "Cell capacity"}
# Unit strings of the site file as shown to a reader.
UNIT_TEXT = {"cm2": "cm²", "m2": "m²", "mm2": "mm²", "degC": "°C", "W/m2": "W/m²", "uW": "µW", "uA": "µA"}
# Nouns for dimensionless counts, singular and plural.
COUNT_NOUNS = {"modules": ("module", "modules")}


def case_label(case_id: str) -> str:
    """How a case is named to a reader: a source by its id, the combined case as all sources together."""
    return COMBINED_LABEL if case_id == COMBINED_ID else case_id


def unit_text(unit: str, integer: bool = False) -> str:
    """A site-file unit as printed: ``cm2`` -> ``cm²``; dimensionless counts -> ``count``."""
    if unit in ("-", ""):
        return "count" if integer else "-"
    return UNIT_TEXT.get(unit, unit)


def sig_text(x: float, digits: int = 3) -> str:
    """``digits`` significant figures, never in exponent form: 100, 2,000, 0.0123 (``-`` if not finite)."""
    x = float(x)
    if not math.isfinite(x):
        return "-"
    if x == 0:
        return "0"
    text = np.format_float_positional(x, precision=digits, unique=False, fractional=False, trim="-")
    whole, dot, frac = text.partition(".")
    return f"{int(whole):,}{dot}{frac}" if whole.lstrip("-").isdigit() and abs(x) >= 1000 else text


def _degrees(value: float, positive: str, negative: str) -> str:
    return f"{abs(value):.3f}° {positive if value >= 0 else negative}"


def place_text(latitude_deg: float, longitude_deg: float) -> str:
    """A place as printed: ``48.100° N, 160.500° W`` (south and west for negative degrees)."""
    return f"{_degrees(latitude_deg, 'N', 'S')}, {_degrees(longitude_deg, 'E', 'W')}"


WHOLE_YEAR = "whole year"
WHOLE_YEAR_MEANING = "whole year: the node never wakes from an empty store, so it is off all year"


def outage_text(case: CaseResult) -> str:
    """The longest outage after first wake in hours, or :data:`WHOLE_YEAR` for a case that never wakes
    (the number in the JSON is then 0: there is no outage *after* a first wake)."""
    if not math.isfinite(case.first_wake_hours):
        return WHOLE_YEAR
    return f"{int(case.longest_outage_hours):,}"


def size_text(value: float, unit: str, field: str = "") -> str:
    """A harvester or store size with its unit (``3 modules``, ``6.17 cm²``, ``0.47 F``)."""
    shown = unit_text(unit, integer=float(value).is_integer())
    text = sig_text(value, 3)
    if shown == "count":
        one, many = COUNT_NOUNS.get(field, ("unit", "units"))
        return f"{text} {one if value == 1 else many}"
    return text if shown == "-" else f"{text} {shown}"


def interval_text(seconds: float) -> str:
    """A task period in plain units: 45 s, 12 min, 2.5 h, 1.2 days."""
    if seconds < 120:
        return f"{seconds:.3g} s"
    if seconds < 2 * 3600:
        return f"{seconds / 60:.3g} min"
    if seconds < 2 * 86400:
        return f"{seconds / 3600:.3g} h"
    return f"{seconds / 86400:.3g} days"


def longest_interval_text(seconds: float = LONGEST_REPORT_INTERVAL_S) -> str:
    """The slow end of the reporting search in words: ``once a week``."""
    return "once a week" if math.isclose(seconds, 7 * 86400.0) else f"once every {interval_text(seconds)}"


def wake_text(hours: float) -> str:
    """``first wake after 12 h`` or :data:`NO_WAKE_TEXT`."""
    return f"first wake after {hours:,.0f} h" if math.isfinite(hours) else NO_WAKE_TEXT


def _days(n: int) -> str:
    return f"{n} deficit day{'' if n == 1 else 's'}"


def times_text(ratio: float) -> str:
    """A ratio in words: ``6.38 times``, ``598 times``, ``1,640 times``."""
    return f"{ratio:,.0f} times" if abs(ratio) >= 100 else f"{ratio:.3g} times"


def target_text(target: int) -> str:
    """``no deficit day`` or ``at most 5 deficit days``."""
    return "no deficit day" if target == 0 else f"at most {_days(target)}"


# ------------------------------------------------------------------------------------------ demand


@dataclass
class DemandSummary:
    """What the node draws over the year."""

    mean_power_uw: float
    annual_energy_wh: float
    monthly_energy_wh: np.ndarray
    sentence: str


def demand_summary(a: Assessment) -> DemandSummary:
    """The node's mean power and its annual and monthly energy [Wh]."""
    annual = annual_demand_wh(a.prepared.demand_j)
    return DemandSummary(a.mean_power_uw, annual, monthly_demand_wh(a.prepared.demand_j),
                         f"The node draws {a.mean_power_uw:,.1f} µW on average, {annual:.4g} Wh a year.")


# ------------------------------------------------------------------------------- inputs given/assumed

# The inputs that decide each kind's yield at a spot and can only come from the spot itself (a survey,
# a reading, a drawing of the transmitter). A source whose deciding input is a default needs a survey.
# (Belongs in each kind's record; kept here until those records exist.)
SURVEY_INPUTS: dict[str, tuple[tuple[str, str], ...]] = {
    "solar": (),
    "indoor_light": (("lamp_lux", "lamp illuminance at the cell"), ("lamp_schedule", "lamp hours")),
    "thermoelectric": (("hot_side", "hot-surface temperature"),),
    "vibration": (("spectrum", "vibration spectrum"),),
    "rf": (("distance_m", "distance from the transmitter"), ("eirp_dbm", "transmitter EIRP")),
}
# Further inputs the result leans on, listed as given or assumed (they do not by themselves ask for a survey).
LISTED_INPUTS: dict[str, tuple[tuple[str, str], ...]] = {
    "solar": (("tilt_deg", "tilt"), ("azimuth_deg", "facing"), ("horizon", "horizon (shading)")),
    "indoor_light": (("occupancy_fraction", "share of lamp hours lit"),
                     ("daylight_factor_pct", "daylight factor")),
    "thermoelectric": (("heat_sink", "heat sink"), ("cold_side_offset_c", "air at the sink")),
    "vibration": (("resonant_frequency_hz", "tuning (default: exactly on the strongest peak)"),
                  ("machine_schedule", "machine hours"), ("running_fraction", "share of hours running")),
    "rf": (("transmitter", "transmitter hours"), ("extra_loss_db", "extra losses")),
}


def _field_given(model: BaseModel, name: str) -> bool:
    """Given: set in the site file with a value other than the field's default (a default written out,
    as a saved file or a new form does, counts as assumed)."""
    if name not in model.model_fields_set:
        return False
    info = type(model).model_fields[name]
    default = info.get_default(call_default_factory=True)
    return getattr(model, name) != default


def input_given(src: BaseModel, name: str) -> bool:
    """Whether the deciding input ``name`` of source ``src`` was given (see :data:`SURVEY_INPUTS`)."""
    if name == "spectrum":   # a survey file, or peaks typed in (not a preset of a kind of machine)
        return getattr(src, "spectrum_file", None) is not None or (
            getattr(src, "preset", None) is None and bool(getattr(src, "peak", None)))
    if name == "hot_side":
        hot = src.hot_side  # type: ignore[attr-defined]
        if hot.mode == "file":
            return True
        temp = "surface_c" if hot.mode == "constant" else "process_on_c"
        return "hot_side" in src.model_fields_set and _field_given(hot, temp)
    if name == "heat_sink":
        sink = src.heat_sink  # type: ignore[attr-defined]
        return "heat_sink" in src.model_fields_set and any(_field_given(sink, f) for f in type(sink).model_fields)
    return _field_given(src, name)


@dataclass
class SourceInputs:
    """Which of a source's deciding inputs were given and which assumed."""

    source_id: str
    kind: str
    given: list[str]
    assumed: list[str]
    survey_assumed: list[str]
    sentence: str

    @property
    def needs_survey(self) -> bool:
        return bool(self.survey_assumed)

    def to_json(self) -> dict[str, Any]:
        return {"given": self.given, "assumed": self.assumed, "needs_survey": self.needs_survey,
                "survey_assumed": self.survey_assumed}


def source_inputs(src: BaseModel) -> SourceInputs:
    """Given and assumed deciding inputs of one source, and a sentence saying which."""
    kind = str(getattr(src, "kind", ""))
    given, assumed, survey = [], [], []
    for name, words in SURVEY_INPUTS.get(kind, ()):
        (given if input_given(src, name) else survey).append(words)
    for name, words in LISTED_INPUTS.get(kind, ()):
        (given if input_given(src, name) else assumed).append(words)
    sid = str(getattr(src, "id", ""))
    if survey:
        sentence = (f"{sid} rests on assumed inputs ({', '.join(survey)}): it needs a survey at the spot "
                    "before its result can be relied on.")
    elif assumed:
        sentence = f"{sid}: given {', '.join(given) or 'nothing beyond the hardware'}; assumed {', '.join(assumed)}."
    else:
        sentence = f"{sid}: every deciding input given ({', '.join(given) or 'the hardware alone'})."
    return SourceInputs(sid, kind, given, survey + assumed, survey, sentence)


# -------------------------------------------------------------------------------------------- cases


@dataclass
class CaseFinding:
    """One case's year against the target."""

    id: str
    label: str
    kind: str
    target: int
    deficit_days: int
    first_wake_hours: float
    annual_energy_wh: float
    worst_month: int            # 1..12
    worst_month_margin: float   # energy into the store over demand in that month [-]
    meets_target: bool          # on the numbers alone
    resting_on: list[str]       # assumed deciding inputs (the sources' own, for the combined case)
    status: str
    sentence: str

    @property
    def needs_survey(self) -> bool:
        return self.status == NEEDS_SURVEY

    @property
    def misses_by_days(self) -> int:
        return max(0, self.deficit_days - self.target)

    def to_json(self) -> dict[str, Any]:
        return {"status": self.status, "meets_target": self.meets_target, "needs_survey": self.needs_survey,
                "worst_month": self.worst_month, "worst_month_margin": round(self.worst_month_margin, 4),
                "finding": self.sentence}


def case_finding(a: Assessment, case: CaseResult, inputs: dict[str, SourceInputs] | None = None, *,
                 given_source_meets: bool = False) -> CaseFinding:
    """The status and sentence of one case (a source or the combined case). The combined case rests on
    the assumed inputs of its sources unless ``given_source_meets``: a source on given inputs meets the
    target alone, so adding the others to the one store does not decide the pass."""
    inputs = inputs if inputs is not None else {s.id: source_inputs(s) for s in a.spec.source}
    target = a.spec.run.target_deficit_days
    fw = float(case.first_wake_hours)
    meets = case.deficit_days <= target and math.isfinite(fw)
    if case.id == COMBINED_ID:
        resting = [] if given_source_meets else [f"{sid}: {w}" for sid, si in inputs.items() for w in si.survey_assumed]
    else:
        resting = list(inputs[case.id].survey_assumed) if case.id in inputs else []
    margin = np.asarray(case.monthly_margin, dtype=float)
    worst = int(np.argmin(margin)) + 1
    worst_margin = float(margin[worst - 1])
    label = case_label(case.id)
    numbers = f"{_days(case.deficit_days)} a year ({target_text(target)} allowed), {wake_text(fw)}"
    if meets and resting:
        status = NEEDS_SURVEY
        sentence = (f"{label} would meet the target ({numbers}), but it rests on assumed inputs "
                    f"({'; '.join(resting)}): it needs a survey before it counts as a pass.")
    elif meets:
        status = MEETS
        sentence = (f"{label} meets the target: {numbers}; its worst month, {MONTH_NAMES[worst - 1]}, brings in "
                    f"{times_text(worst_margin)} the node's demand.")
    else:
        status = MISSES
        why = "; it never starts from an empty store" if not math.isfinite(fw) else ""
        sentence = f"{label} misses the target: {numbers}{why}."
    return CaseFinding(case.id, label, case.kind, target, int(case.deficit_days), fw, float(case.annual_energy_wh),
                       worst, worst_margin, meets, resting, status, sentence)


def case_findings(a: Assessment) -> dict[str, CaseFinding]:
    """Every case's finding, by case id (sources, then the combined case)."""
    inputs = {s.id: source_inputs(s) for s in a.spec.source}
    out = {c.id: case_finding(a, c, inputs) for c in a.sources}
    alone = any(f.status == MEETS for f in out.values())
    out[COMBINED_ID] = case_finding(a, a.combined, inputs, given_source_meets=alone)
    return out


# ----------------------------------------------------------------------------------------- headline

YES = "Yes."
ONLY_TOGETHER = "Only with all sources together."
NOT_YET = "Not yet: needs a survey."
NOT_AS_DRAWN = "Not as drawn."
ANSWERS = (YES, ONLY_TOGETHER, NOT_YET, NOT_AS_DRAWN)   # best first


@dataclass
class Headline:
    """The answer for the spot: which source to fit, and why, in one sentence each."""

    answer: str                  # one of ANSWERS
    source: CaseFinding | None   # the picked single source (None when the spot has none)
    case: CaseFinding            # the case the answer rests on (the picked source, or the combined case)
    sentence: str                # what the answer means, with the numbers
    reason: str                  # why this source is the pick

    @property
    def rank(self) -> tuple[float, ...]:
        """Sort key of spots by their answer, best first."""
        c = self.source or self.case
        fw = c.first_wake_hours if math.isfinite(c.first_wake_hours) else math.inf
        return (float(ANSWERS.index(self.answer)), float(c.deficit_days), fw, -c.worst_month_margin)

    def to_json(self) -> dict[str, Any]:
        return {"answer": self.answer, "source": None if self.source is None else self.source.id,
                "case": self.case.id, "status": self.case.status, "sentence": self.sentence, "reason": self.reason}


PICK_RULE = ("The pick: among the sources that meet the target on given inputs, the one with the widest margin in "
             "its worst month (energy into the store over the node's demand), ties by annual energy; sources "
             "resting on assumed inputs come after; when none meets the target, the one with the fewest deficit "
             "days.")


def _robust_key(c: CaseFinding) -> tuple[float, float]:
    return (-c.worst_month_margin, -c.annual_energy_wh)


def _closest_key(c: CaseFinding) -> tuple[float, float, float]:
    return (float(c.deficit_days), 0.0 if math.isfinite(c.first_wake_hours) else 1.0, -c.worst_month_margin)


def headline(a: Assessment, findings: dict[str, CaseFinding] | None = None) -> Headline:
    """The headline pick and its reason (the rule is in the module docstring)."""
    f = findings if findings is not None else case_findings(a)
    sources = [f[c.id] for c in a.sources]
    combined = f[COMBINED_ID]
    target_words = target_text(a.spec.run.target_deficit_days)
    meeting = sorted((c for c in sources if c.status == MEETS), key=_robust_key)
    surveyed = sorted((c for c in sources if c.status == NEEDS_SURVEY), key=_robust_key)
    aside = ""
    if surveyed:
        one = len(surveyed) == 1
        aside = (f"; {', '.join(c.id for c in surveyed)} {'is' if one else 'are'} left aside because "
                 f"{'it rests' if one else 'they rest'} on assumed inputs")
    if meeting:
        best = meeting[0]
        runner = (f"; next is {meeting[1].id} with {times_text(meeting[1].worst_month_margin)}" if len(meeting) > 1
                  else "")
        reason = (f"{best.id} is the pick because it meets the target with the widest margin in its worst month "
                  f"({MONTH_NAMES[best.worst_month - 1]}: {times_text(best.worst_month_margin)} the demand){runner}"
                  f"{aside}.")
        sentence = (f"With {best.id} ({best.kind}) the node has {_days(best.deficit_days)} in the year "
                    f"(target: {target_words}), {wake_text(best.first_wake_hours)}.")
        return Headline(YES, best, best, sentence, reason)
    closest = min([c for c in sources if c.status == MISSES] or sources or [combined], key=_closest_key)
    if combined.meets_target and len(sources) > 1:
        rest = (f" (resting on assumed inputs: {'; '.join(combined.resting_on)})" if combined.resting_on else "")
        answer = NOT_YET if combined.resting_on else ONLY_TOGETHER
        sentence = (f"No single source meets the target ({target_words}) on given inputs; together they give "
                    f"{_days(combined.deficit_days)}{rest}.")
        reason = (f"No single source meets the target; {closest.id} comes closest with "
                  f"{_days(closest.deficit_days)}{aside}.")
        return Headline(answer, closest if sources else None, combined, sentence, reason)
    if surveyed:
        best = surveyed[0]
        sentence = (f"Only {best.id} ({best.kind}) would meet the target ({target_words}), but its "
                    f"{', '.join(best.resting_on)} {'is' if len(best.resting_on) == 1 else 'are'} assumed, "
                    "not measured.")
        reason = (f"{best.id} is named because no source on given inputs meets the target; survey it at the spot "
                  "before relying on it.")
        return Headline(NOT_YET, best, best, sentence, reason)
    if not sources:
        return Headline(NOT_AS_DRAWN, None, combined, combined.sentence, "The spot has no source.")
    miss = ("it never starts from an empty store" if not math.isfinite(closest.first_wake_hours)
            else f"it misses by {closest.misses_by_days} deficit day{'' if closest.misses_by_days == 1 else 's'}")
    sentence = (f"The best source, {closest.id} ({closest.kind}), leaves {_days(closest.deficit_days)} a year "
                f"(target: {target_words}).")
    reason = f"No source meets the target; {closest.id} comes closest, and {miss}."
    return Headline(NOT_AS_DRAWN, closest, closest, sentence, reason)


# ---------------------------------------------------------------------------------------- weather


def weather_warning(a: Assessment) -> FarStation | None:
    """The far-station warning of the spot's weather year (see :class:`siteharvest.weather.FarStation`)."""
    return a.prepared.weather_meta.far_station


# ------------------------------------------------------------------------------------------ sizing


def bigger_store_misses(m: SizingMap) -> bool:
    """Some harvester size meets the target with one store but misses it with a larger one."""
    meets = meets_target(m.deficit_days, m.first_wake_hours, m.target_deficit_days)
    first = np.where(meets.any(axis=1), meets.argmax(axis=1), meets.shape[1])
    later = np.arange(meets.shape[1])[None, :] > first[:, None]
    return bool((later & ~meets).any())


def drawn_cell(m: SizingMap) -> tuple[int, int]:
    """The map cell nearest the sizes as drawn."""
    return (int(np.argmin(np.abs(m.harvester_sizes - m.harvester_drawn))),
            int(np.argmin(np.abs(m.store_sizes - m.store_drawn))))


@dataclass
class SizingFinding:
    """A sizing map's conclusions: as drawn, the pick (or none), the edge, and a bigger store doing worse."""

    source_id: str
    target: int
    drawn_deficit_days: int
    meets_as_drawn: bool
    harvester_name: str
    store_name: str
    drawn_text: str
    pick: tuple[int, int] | None
    pick_text: str               # "2 modules + 0.5 F", or "nothing in the map"
    pick_deficit_days: int | None
    pick_first_wake_hours: float | None
    pick_at_edge: bool
    bigger_store_worse: bool
    fewest_deficit_days: int
    map_top_text: str
    frontier_texts: list[str]
    drawn_sentence: str
    pick_sentence: str
    edge_sentence: str = ""
    bigger_store_sentence: str = ""
    frontier_sentence: str = ""
    limits_sentence: str = ""

    @property
    def sentences(self) -> list[str]:
        """Every sentence, in reading order, empty ones left out."""
        return [s for s in (self.drawn_sentence, self.pick_sentence, self.edge_sentence, self.bigger_store_sentence,
                            self.frontier_sentence) if s]


def _harvester_text(m: SizingMap, i: int | None = None) -> str:
    """The harvester's size in plain words; ``i`` a map row, None the size as drawn."""
    n = m.harvester_drawn if i is None else m.harvester_sizes[i]
    if m.harvester_field == "modules":
        return f"{n:.3g} thermoelectric module{'' if n == 1 else 's'}"
    return f"{_harvester_name(m)} {size_text(n, m.harvester_unit, m.harvester_field)}"


def _harvester_name(m: SizingMap) -> str:
    return (m.harvester_label or m.harvester_field.replace("_", " ")).lower()


def _store_name(m: SizingMap) -> str:
    return STORE_LABELS.get(m.store_field, m.store_field.replace("_", " ")).lower()


def _store_text(m: SizingMap, j: int | None = None) -> str:
    return f"{_store_name(m)} {size_text(m.store_drawn if j is None else m.store_sizes[j], m.store_unit)}"


def _pair(m: SizingMap, i: int, j: int) -> str:
    return f"{size_text(m.harvester_sizes[i], m.harvester_unit, m.harvester_field)} + " \
           f"{size_text(m.store_sizes[j], m.store_unit)}"


def sizing_finding(m: SizingMap, case: CaseResult | None = None, own_target: int | None = None) -> SizingFinding:
    """What a sizing map says. ``case``: the assessment's case of the same source (its as-drawn year);
    ``own_target``: the spot's own target when the map was made for another one."""
    target = m.target_deficit_days
    i0, j0 = drawn_cell(m)
    if case is not None:
        drawn_dd = int(case.deficit_days)
        meets = drawn_dd <= target and math.isfinite(case.first_wake_hours)
    else:
        drawn_dd = int(m.deficit_days[i0, j0])
        meets = drawn_dd <= target and bool(np.isfinite(m.first_wake_hours[i0, j0]))
    tried = "" if own_target is None or own_target == target else f" (tried here; the spot's own is {own_target})"
    drawn_text = (f"{size_text(m.harvester_drawn, m.harvester_unit, m.harvester_field)} + "
                  f"{size_text(m.store_drawn, m.store_unit)}")
    drawn_sentence = (f"As drawn ({_harvester_text(m)} with {_store_text(m)}), {m.source_id} has "
                      f"{_days(drawn_dd)} a year: it "
                      f"{MEETS if meets else MISSES} the target of at most {target}{tried}.")
    top = (f"{size_text(m.harvester_sizes[-1], m.harvester_unit, m.harvester_field)} and "
           f"{size_text(m.store_sizes[-1], m.store_unit)}")
    fewest = int(m.deficit_days.min())
    frontier = [_pair(m, a, b) for a, b in m.frontier if (a, b) != m.pick]
    edge = bigger = front = ""
    if m.pick is not None:
        i, j = m.pick
        fw = float(m.first_wake_hours[i, j])
        pick_text = _pair(m, i, j)
        pick_sentence = (f"The least harvester, then least store, in the map that meets it: {_harvester_text(m, i)} "
                         f"with {_store_text(m, j)} ({_days(int(m.deficit_days[i, j]))}, {wake_text(fw)}).")
        if m.pick_at_edge:
            edge = "This sits at the edge of the map: smaller may pass too."
        if frontier:
            front = ("Other least combinations that pass (the frontier): " + "; ".join(frontier[:6])
                     + (" ..." if len(frontier) > 6 else "") + ".")
        pick_dd, pick_fw = int(m.deficit_days[i, j]), (fw if math.isfinite(fw) else None)
    else:
        pick_text, pick_dd, pick_fw = "nothing in the map", None, None
        if fewest == int(m.deficit_days.max()):
            where = f"every combination in it (up to {top}) leaves {_days(fewest)}"
        else:
            k = np.unravel_index(int(np.argmin(m.deficit_days)), m.deficit_days.shape)
            where = (f"the fewest deficit days in it are {fewest}, with {_pair(m, int(k[0]), int(k[1]))} "
                     f"(the map goes up to {top})")
        pick_sentence = f"Nothing in this map meets the target: {where}."
    if bigger_store_misses(m):
        bigger = ("Past a point a bigger store does worse here: it leaks more and takes longer to charge up to "
                  "its turn-on voltage.")
    limits = (f"The map runs from {_pair(m, 0, 0)} to {_pair(m, len(m.harvester_sizes) - 1, len(m.store_sizes) - 1)}; "
              f"a first wake later than {FIRST_WAKE_HORIZON_DAYS} days counts as none.")
    return SizingFinding(
        m.source_id, target, drawn_dd, meets, _harvester_name(m), _store_name(m), drawn_text, m.pick, pick_text,
        pick_dd, pick_fw, m.pick_at_edge, bigger_store_misses(m), fewest, top, frontier, drawn_sentence,
        pick_sentence, edge, bigger, front, limits)


# -------------------------------------------------------------------------------- reporting interval

TASK_REASON_WORDS = {TASK_NAMED: "the task named as the report", TASK_COSTLIEST: "the task that costs the most energy",
                     TASK_GIVEN: "the task chosen"}


@dataclass
class IntervalFinding:
    """How often the chosen task can run with the drawn harvester and store."""

    source_id: str
    task: str
    task_reason: str
    drawn_every_s: float
    shortest_every_s: float | None
    at_floor: bool
    sentence: str

    @property
    def none_within_limit(self) -> bool:
        return self.shortest_every_s is None


def interval_finding(iv: ReportInterval) -> IntervalFinding:
    """The sentence of a reporting-interval search, naming the task and why it was chosen."""
    who = f"'{iv.task}' ({TASK_REASON_WORDS.get(iv.task_reason, iv.task_reason)})"
    drawn = f"drawn: every {interval_text(iv.drawn_every_s)}"
    lead = f"Fastest sustainable reporting with the drawn harvester and store ({case_label(iv.source_id)})"
    if iv.shortest_every_s is None:
        sentence = (f"{lead}: none; even {longest_interval_text(iv.longest_s)} {who} misses the target ({drawn}).")
    elif iv.at_floor:
        sentence = (f"{lead}: {who} every {interval_text(iv.shortest_every_s)} or faster ({drawn}; the search goes "
                    "no faster).")
    else:
        sentence = f"{lead}: {who} every {interval_text(iv.shortest_every_s)} at the most ({drawn})."
    return IntervalFinding(iv.source_id, iv.task, iv.task_reason, iv.drawn_every_s, iv.shortest_every_s, iv.at_floor,
                           sentence)


# ------------------------------------------------------------------------------------- weather risk


@dataclass
class RiskFinding:
    """Deficit days of one case over the resampled years."""

    case_id: str
    label: str
    years: int
    p50: float
    p90: float
    p99: float
    mean: float
    chance_any: float
    sentence: str


def risk_findings(risk: WeatherRisk) -> dict[str, RiskFinding]:
    """Each case's weather risk, by case id."""
    out = {}
    for case_id in risk.deficit_days:
        s = risk.summary(case_id)
        label = case_label(case_id)
        out[case_id] = RiskFinding(
            case_id, label, risk.years, s["p50"], s["p90"], s["p99"], s["mean"], s["chance_any"],
            f"{label}, weather risk over {risk.years} years: deficit days P50 {s['p50']:.0f}, P90 {s['p90']:.0f}, "
            f"P99 {s['p99']:.0f}; years with any deficit day {s['chance_any']:.0%}.")
    return out


# ------------------------------------------------------------------------------------------- limits


@dataclass
class StudyLimits:
    """The bounds of the studies, as numbers and in words."""

    first_wake_horizon_h: float = float(FIRST_WAKE_HORIZON_H)
    longest_interval_s: float = LONGEST_REPORT_INTERVAL_S
    sentences: list[str] = field(default_factory=list)


def study_limits() -> StudyLimits:
    """The first-wake horizon of a sizing map and the slow end of the reporting search."""
    return StudyLimits(sentences=[
        f"In a sizing map a first wake later than {FIRST_WAKE_HORIZON_DAYS} days after installation counts as none.",
        f"The reporting-interval search goes no slower than {longest_interval_text()}.",
    ])


# ------------------------------------------------------------------------------------------ JSON


def assessment_json(a: Assessment) -> dict[str, Any]:
    """The ``assess --json`` document: :meth:`Assessment.to_json` with the findings added (new keys only)."""
    doc = a.to_json()
    f = case_findings(a)
    inputs = {s.id: source_inputs(s) for s in a.spec.source}
    for rec in doc["sources"]:
        rec.update(f[rec["id"]].to_json())
        rec["inputs"] = inputs[rec["id"]].to_json()
    doc["combined"].update(f[COMBINED_ID].to_json())
    doc["headline"] = headline(a, f).to_json()
    far = weather_warning(a)
    doc["weather_warning"] = None if far is None else far.to_json()
    return doc
