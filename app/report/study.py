"""What the report needs for each spot: the assessment, the sizing study, the weather risk, and the
fingerprint of the inputs. No HTML here.
"""

from __future__ import annotations

import hashlib
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from siteharvest import findings
from siteharvest.assess import Assessment, CaseResult, assess
from siteharvest.errors import SiteInputError
from siteharvest.files import named_files
from siteharvest.findings import Headline, headline
from siteharvest.site import SiteSpec, dump_site, load_site
from siteharvest.sizing import ReportInterval, SizingMap, WeatherRisk, report_interval, sizing_map, weather_risk
from siteharvest.weather import pvlib_data_dir

SiteInput = str | Path | SiteSpec


@dataclass
class InputFile:
    """A file the spot's results depend on, besides the site file."""

    role: str
    name: str
    sha256: str | None  # None: the file could not be read


@dataclass
class SpotStudy:
    """Everything reported about one spot; ``error`` set (and the rest empty) when it could not be studied."""

    label: str
    file: str | None
    spec: SiteSpec | None = None
    assessment: Assessment | None = None
    error: str | None = None
    site_text: str = ""
    input_files: list[InputFile] = field(default_factory=list)
    input_sha256: str = ""
    maps: dict[str, SizingMap] = field(default_factory=dict)
    intervals: dict[str, ReportInterval | None] = field(default_factory=dict)
    sizing_error: str | None = None
    risk: WeatherRisk | None = None
    risk_error: str | None = None
    early_parts: dict[str, str] = field(default_factory=dict)  # sections built before the studies
    _headline: Headline | None = field(default=None, repr=False)

    @property
    def ok(self) -> bool:
        return self.assessment is not None

    @property
    def target(self) -> int:
        return self.spec.run.target_deficit_days if self.spec is not None else 0

    @property
    def headline(self) -> Headline | None:
        """The spot's answer and pick (see :func:`siteharvest.findings.headline`)."""
        if self.assessment is None:
            return None
        if self._headline is None:
            self._headline = headline(self.assessment)
        return self._headline

    @property
    def best(self) -> CaseResult | None:
        """The headline pick's source."""
        h = self.headline
        if h is None or h.source is None or self.assessment is None:
            return None
        return next(c for c in self.assessment.sources if c.id == h.source.id)

    def passes(self, case: CaseResult) -> bool:
        """The case meets the target on its numbers (see :func:`siteharvest.findings.case_finding`)."""
        assert self.assessment is not None
        return findings.case_finding(self.assessment, case).meets_target


def expand_inputs(paths_or_specs: SiteInput | Sequence[SiteInput]) -> tuple[list[SiteInput], bool, str]:
    """The spots to report, whether they make a portfolio, and a title for it.

    A folder is a portfolio of its ``*.toml`` files (sorted by name); so is more than one input.
    """
    items = [paths_or_specs] if isinstance(paths_or_specs, str | Path | SiteSpec) else list(paths_or_specs)
    out: list[SiteInput] = []
    portfolio = len(items) > 1
    title = ""
    for item in items:
        if isinstance(item, str | Path) and Path(item).is_dir():
            files = sorted(Path(item).glob("*.toml"))
            if not files:
                raise SiteInputError("a folder holding site files (*.toml)", file=str(item))
            out.extend(files)
            portfolio = True
            title = title or Path(item).resolve().name
        else:
            out.append(item)
    if not out:
        raise SiteInputError("at least one site file or folder")
    return out, portfolio, title


def input_files(spec: SiteSpec) -> list[tuple[str, str, Path]]:
    """(role, name as written, path) of every file the results depend on besides the site file."""
    out = []
    for named in named_files(spec):
        try:
            path = spec.files.path_of(named.name, named.field)
        except SiteInputError:
            path = Path("/nonexistent") / named.name  # refused: listed as unreadable, never opened
        out.append((named.field, named.name, path))
    if spec.weather.bundled:
        out.insert(0, ("weather.bundled", spec.weather.bundled, pvlib_data_dir() / spec.weather.bundled))
    return out


def fingerprint(site_text: str, files: Iterable[tuple[str, str, Path]]) -> tuple[str, list[InputFile]]:
    """SHA-256 over the dumped site text and the bytes of each file it names, and each file's own hash."""
    total = hashlib.sha256()
    total.update(b"site file\n" + site_text.encode("utf-8"))
    listed = []
    for role, name, path in files:
        try:
            data = path.read_bytes()
        except OSError:
            listed.append(InputFile(role, name, None))
            total.update(f"\n{role} unreadable\n".encode())
            continue
        listed.append(InputFile(role, name, hashlib.sha256(data).hexdigest()))
        total.update(f"\n{role} {name}\n".encode() + data)
    return total.hexdigest(), listed


def study_spot(item: SiteInput, *, sizing: bool = True, risk_years: int = 200, sizing_steps: int = 24,
               seed: int = 1) -> SpotStudy:
    """Load, assess, size and test one spot against resampled weather. Bad input raises SiteInputError."""
    if isinstance(item, SiteSpec):
        spec, file = item, item.file
    else:
        spec, file = load_site(item), str(item)
    label = Path(file).name if file else spec.spot.name
    text = dump_site(spec)
    digest, files = fingerprint(text, input_files(spec))
    study = SpotStudy(label=label, file=file, spec=spec, site_text=text, input_files=files, input_sha256=digest)
    study.assessment = assess(spec)
    complete_study(study, sizing=sizing, risk_years=risk_years, sizing_steps=sizing_steps, seed=seed)
    return study


def complete_study(study: SpotStudy, *, sizing: bool = True, risk_years: int = 200, sizing_steps: int = 24,
                   seed: int = 1) -> SpotStudy:
    """Add the sizing maps, report intervals and weather risk to an assessed spot."""
    if study.assessment is None:
        return study
    spec = study.assessment.spec
    prep = study.assessment.prepared
    if sizing:
        try:
            for src in spec.source:
                study.maps[src.id] = sizing_map(prep, src.id, n_harvester=sizing_steps, n_store=sizing_steps)
            for case in study.assessment.cases:
                if not study.passes(case):
                    study.intervals[case.id] = report_interval(prep, case.id)
        except SiteInputError as exc:
            study.sizing_error = str(exc)
    if risk_years > 0:
        try:
            study.risk = weather_risk(prep, years=risk_years, seed=seed)
        except SiteInputError as exc:
            study.risk_error = str(exc)
    return study


def study_spot_or_error(item: SiteInput, *, portfolio: bool, sizing: bool = True, risk_years: int = 200,
                        sizing_steps: int = 24, seed: int = 1) -> SpotStudy:
    """:func:`study_spot`; in a portfolio a spot with bad input comes back with its one-line error."""
    try:
        return study_spot(item, sizing=sizing, risk_years=risk_years, sizing_steps=sizing_steps, seed=seed)
    except SiteInputError as exc:
        if not portfolio:
            raise
        if isinstance(item, str | Path):
            return SpotStudy(label=Path(item).name, file=str(item), error=str(exc))
        # a spec: named by its site file where it has one; files in the error as the site file names them
        error = str(item.files.explained(exc))
        return SpotStudy(label=Path(item.file).name if item.file else item.spot.name, file=item.file, error=error)


def ranked(studies: Sequence[SpotStudy]) -> list[SpotStudy]:
    """Spots best first by their best source; spots that could not be studied last, in input order."""
    good = sorted((s for s in studies if s.ok and s.best is not None), key=lambda s: s.headline.rank)
    return good + [s for s in studies if not (s.ok and s.best is not None)]


def portfolio_sha256(studies: Sequence[SpotStudy]) -> str:
    total = hashlib.sha256()
    for s in studies:
        total.update(f"{s.label}\n{s.input_sha256 or s.error}\n".encode())
    return total.hexdigest()


def case_label(case: CaseResult) -> str:
    return findings.case_label(case.id)
