"""Assumptions, methods and references for the report, gathered per source kind used.

The references come from the References sections of the models' own docstrings, so that the report
cites what the code cites; a reference cited in short form in one place and in full in another is
printed once, in full.
"""

from __future__ import annotations

import importlib
import inspect
import re
from collections.abc import Iterable

from siteharvest.metrics import DEFICIT_DAY
from siteharvest.sources import KindTable

# Modules whose docstrings cite the methods used for each source kind (from the kinds' records).
KIND_MODULES = KindTable("reference_modules")
COMMON_MODULES = ("siteharvest.conditioning", "siteharvest.store")
SIZING_MODULES = ("siteharvest.sizing",)
SYNTHETIC_WEATHER_MODULES = ("siteharvest.synthetic_weather",)

# Our plain-words summary of each model, for the reader of the report (from the kinds' records).
KIND_METHODS = KindTable("method")

GENERAL_ASSUMPTIONS: tuple[str, ...] = (
    "The year is a reference year of 8,760 hourly steps in the spot's local standard time (no daylight "
    "saving); a day is a local calendar day.",
    "Weather is the spot's typical or synthetic year as named in the site file; a typical year is one "
    "plausible year, not a forecast.",
    "Energies are those reaching the store after power conditioning (tracking, converter efficiency, "
    "cold start and quiescent draw).",
    f"A deficit day is {DEFICIT_DAY}. The warm-up year makes the store's state on 1 January what the year "
    "itself leaves.",
    "First wake is counted from installation with an empty store, by default on the first day of the "
    "source's worst month; the longest outage is the longest run of hours off after that first wake.",
    "Backup cell life is the years until a primary cell covering what the harvester cannot supply is "
    "exhausted, self-discharge included and capped at the cell's shelf life; a reference cell is assumed "
    "where the site file names none.",
    "Verdicts: self-sufficient (no deficit day), brief gaps (1-5), seasonal gaps (6-60), insufficient (more), "
    "never starts (no wake at all).",
)
SIZING_ASSUMPTIONS: tuple[str, ...] = (
    "Sizing map: deficit days of the steady-state year over a grid of harvester sizes (each kind's natural "
    "size) and store sizes; a supercapacitor's leakage scales with its capacitance. The frontier is the set "
    "of passing combinations with no passing one smaller in both; the pick is the smallest harvester that "
    "passes, then its smallest store. Sizes outside the map are not tried.",
    "Reporting interval: the node's most frequent task is run less often until the drawn harvester and store "
    "just meet the target (bisection on the interval, up to once a week).",
)
RISK_ASSUMPTIONS: tuple[str, ...] = (
    "Weather risk: many years are made by resampling whole weeks of the spot's own year within the same "
    "calendar month, keeping to weeks whose schedules (lamps, process, machine, transmitter) are the same, "
    "so that weather moves and schedules do not. It shows how much the answer depends on the weather, "
    "within the variety of the one year on file.",
)

_SECTION = re.compile(r"^References\n-{3,}\n(.*?)(?=\n\S[^\n]*\n-{3,}\n|\Z)", re.S | re.M)
# A full reference starts with "Surname, I." (optionally a two-word surname) or a standard's body.
_FULL = re.compile(r"^(?:[A-Z][A-Za-z'\-]+(?: [A-Z][A-Za-z'\-]+)?, [A-Z]\.|(?:IEC|IEEE|ISO|CIE|BS|EN|ASTM) \d|BIPM \()")
_SPLIT = re.compile(r"(?<=\.) (?=[A-Z][A-Za-z'\-]+, [A-Z]\.[^()]*\(\d{4}\))")
_YEAR = re.compile(r"\((\d{4})\)|\b(\d{4})\b")
_TAIL = re.compile(r"(?:\s*\((?!\d{4}\))[^()]*\)"          # a trailing aside in brackets (not a year)
                   r"|\.?\s*See (?:also )?[^.]*"                # "See also ..."
                   r"|,\s*(?:eqs?|ch|chapter|sections?|tables?|fig)\.?\s+[\w.\- ,]+)\.?$", re.I)


def _docstrings(module_name: str) -> list[str]:
    mod = importlib.import_module(module_name)
    docs = [mod.__doc__ or ""]
    for obj in vars(mod).values():
        if (inspect.isfunction(obj) or inspect.isclass(obj)) and getattr(obj, "__module__", "") == module_name:
            docs.append(obj.__doc__ or "")
    return [inspect.cleandoc(d) for d in docs if d]


def reference_entries(doc: str) -> list[str]:
    """Reference entries of a numpydoc docstring's References section, one string each."""
    entries: list[str] = []
    for block in _SECTION.findall(doc):
        current: list[str] = []
        for raw in block.splitlines():
            line = raw.strip()
            if not line:
                continue
            if _FULL.match(line) and current:
                entries.append(" ".join(current))
                current = []
            current.append(line)
        if current:
            entries.append(" ".join(current))
    out = []
    for entry in entries:
        out.extend(part.strip() for part in _SPLIT.split(entry) if part.strip())
    return out


def _key(entry: str) -> tuple[str, str]:
    first = re.split(r"[ ,]", entry, maxsplit=1)[0].lower()
    year = _YEAR.search(entry)
    return first, (year.group(1) or year.group(2)) if year else ""


def _clean(entry: str) -> str:
    """A reference without a trailing remark on where in it to look (equation, section, aside)."""
    text = entry.strip()
    for _ in range(3):
        shorter = _TAIL.sub("", text).rstrip(" ,;")
        if shorter == text or len(shorter) < 20:
            break
        text = shorter
    return text if text.endswith(".") else text + "."


def collect_references(module_names: Iterable[str]) -> list[str]:
    """Full references cited in these modules' docstrings, one per work, sorted by first author."""
    best: dict[tuple[str, str], str] = {}
    for name in dict.fromkeys(module_names):
        for doc in _docstrings(name):
            for entry in reference_entries(doc):
                if not _FULL.match(entry):
                    continue  # short citations ("Friis (1946)") point to a full entry elsewhere
                text = _clean(entry)
                key = _key(text)
                if len(text) > len(best.get(key, "")):
                    best[key] = text
    return sorted(best.values(), key=str.lower)


def modules_for(kinds: Iterable[str], *, sizing: bool, synthetic_weather: bool) -> list[str]:
    """The modules whose references apply to a report on these source kinds."""
    names: list[str] = []
    for kind in kinds:
        names.extend(KIND_MODULES.get(kind, ()))
    names.extend(COMMON_MODULES)
    if sizing:
        names.extend(SIZING_MODULES)
    if synthetic_weather:
        names.extend(SYNTHETIC_WEATHER_MODULES)
    return list(dict.fromkeys(names))
