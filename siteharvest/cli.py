"""Command line: ``siteharvest assess | size | report | schema | serve | survey``.

Bad input prints one line naming the file, the field and what was expected, and exits with 2.
"""

from __future__ import annotations

import argparse
import gc
import json
import os
import sys
from collections.abc import Sequence
from pathlib import Path

from .errors import SiteInputError

# Only the standard library and the light errors module load at import: ``--version`` and ``--help`` need
# no more, and each command imports what it uses (pvlib, numba, pandas, the dashboard) when it runs.

EXIT_BAD_INPUT = 2
EXIT_INTERNAL = 1
DEBUG_ENV = "SITEHARVEST_DEBUG"


def _fmt(x: float | None, digits: int = 1) -> str:
    if x is None or x != x or x in (float("inf"), float("-inf")):
        return "-"
    return f"{x:,.{digits}f}"


def format_table(assessment) -> str:
    """A readable comparison table of every source and all sources together."""
    from .findings import (
        WHOLE_YEAR,
        WHOLE_YEAR_MEANING,
        case_findings,
        demand_summary,
        headline,
        outage_text,
        place_text,
        sig_text,
        source_inputs,
        weather_warning,
    )
    from .store import backup_life_text

    a = assessment
    spot = a.spec.spot
    found = case_findings(a)
    top = headline(a, found)
    far = weather_warning(a)
    lines = [
        f"Spot: {spot.name}  ({place_text(spot.latitude_deg, spot.longitude_deg)})",
        *([f"WARNING: {far.sentence}"] if far is not None else []),
        f"Node: mean demand {a.mean_power_uw:,.1f} uW  "
        f"({demand_summary(a).annual_energy_wh:,.2f} Wh/yr);  store usable {a.usable_energy_j:,.1f} J",
        f"Backup cell alone ({a.backup.cell}{', assumed' if a.backup_is_assumed else ''}): "
        f"{backup_life_text(a.backup_only_life_years, a.backup.shelf_life_years)} years",
        "",
        f"Answer: {top.answer} {top.sentence}",
        f"Why: {top.reason}",
        "",
    ]
    head = ["source", "kind", "into store Wh/yr", "deficit days", "first wake h", "longest outage h",
            "lowest store %", "backup life yr", "verdict", "target"]
    rows = []
    for c in a.cases:
        rows.append([c.id, c.kind, sig_text(c.annual_energy_wh, 3), str(c.deficit_days),
                     _fmt(c.first_wake_hours, 0), outage_text(c), _fmt(c.lowest_soc_pct, 0),
                     backup_life_text(c.backup_life_years, a.backup.shelf_life_years), c.verdict,
                     found[c.id].status])
    widths = [max(len(r[i]) for r in [head, *rows]) for i in range(len(head))]
    right = {2, 3, 4, 5, 6, 7}

    def line(cells: list[str]) -> str:
        return "  ".join(c.rjust(w) if i in right else c.ljust(w)
                         for i, (c, w) in enumerate(zip(cells, widths, strict=True))).rstrip()

    lines.append(line(head))
    lines.append("  ".join("-" * w for w in widths))
    lines.extend(line(r) for r in rows)
    if any(r[5] == WHOLE_YEAR for r in rows):
        lines.append(f"Longest outage {WHOLE_YEAR_MEANING}.")
    surveys = [si.sentence for si in map(source_inputs, a.spec.source) if si.needs_survey]
    if surveys:
        lines += ["", "Needs a survey:"] + [f"  - {t}" for t in surveys]
    if a.warnings:
        lines += ["", "Notes:"] + [f"  - {w}" for w in a.warnings]
    if a.cautions:
        lines += ["", "Cautions (see the dashboard or report for the full text): "
                  + "; ".join(c.title for c in a.cautions)]
    return "\n".join(lines)


def cmd_assess(args: argparse.Namespace) -> int:
    from .assess import assess
    from .site import load_site

    assessment = assess(load_site(args.site))
    if args.hourly:
        assessment.hourly_frame().to_csv(args.hourly, float_format="%.6g")
    if args.json:
        from .findings import assessment_json

        print(json.dumps(assessment_json(assessment), indent=2))
    else:
        print(format_table(assessment))
    return 0


def format_sizing(maps, interval, risk) -> str:
    """Plain-text summary of the sizing study: the findings' sentences, one per line."""
    from .assess import COMBINED_ID
    from .findings import interval_finding, risk_findings, sizing_finding, study_limits

    lines = []
    risks = risk_findings(risk) if risk is not None else {}
    for m in maps:
        found = sizing_finding(m)
        lines.append(f"{m.source_id} ({m.kind}):")
        lines.extend(f"  {t}" for t in found.sentences)
        if m.source_id in risks:
            lines.append(f"  {risks[m.source_id].sentence}")
        lines.append("")
    if COMBINED_ID in risks and len(maps) != 1:
        lines.append(risks[COMBINED_ID].sentence)
    if interval is not None:
        lines.append(interval_finding(interval).sentence)
    lines.extend(["", *study_limits().sentences])
    return "\n".join(lines).rstrip()


def _size_option(text: object, flag: str, bounds: tuple[float, float], *, integer: bool) -> int | float:
    """A ``size`` option's value, parsed and bounded; one :class:`SiteInputError` line naming ``flag``."""
    from .sizing import check_option

    value: object = text
    if isinstance(text, str):
        try:
            value = int(text) if integer else float(text)
        except ValueError:   # not a number at all, or an integer past Python's digit limit
            kind = "a whole number" if integer else "a finite number"
            span = f"{int(bounds[0])} to {int(bounds[1])}" if integer else f"{bounds[0]:g} to {bounds[1]:g}"
            raise SiteInputError(f"{kind} from {span}", field=flag,
                                 got=text if len(text) <= 40 else f"{len(text)} characters") from None
    return check_option(value, flag, bounds, integer=integer)


def _knobs_for(spec, chosen: list[str], knob: str | None, site: str) -> dict[str, str | None]:
    """The size knob of each chosen source: ``knob`` where its kind declares it, else the kind's default."""
    from .sources import kind_of

    kinds = {s.id: kind_of(s) for s in spec.source if s.id in chosen}
    if knob is None:
        return dict.fromkeys(chosen)
    declared = {k.field for kind in kinds.values() for k in kind.size_knobs}
    if knob not in declared:
        raise SiteInputError("a size the chosen sources declare: " + ", ".join(sorted(declared)), file=site,
                             field="--knob", got=knob)
    return {sid: knob if knob in {k.field for k in kinds[sid].size_knobs} else None for sid in chosen}


def cmd_size(args: argparse.Namespace) -> int:
    from .assess import COMBINED_ID, prepare
    from .site import load_site
    from .sizing import (
        DEFICIT_DAYS_RANGE,
        OUTAGE_DAYS_RANGE,
        OUTAGES_PER_YEAR_RANGE,
        RISK_YEARS_RANGE,
        SEED_RANGE,
        STEPS_RANGE,
        report_interval,
        sizing_map,
        weather_risk,
    )

    # every option checked before the site is read or anything is allocated
    args.steps = _size_option(args.steps, "--steps", STEPS_RANGE, integer=True)
    args.years = _size_option(args.years, "--years", (0, RISK_YEARS_RANGE[1]), integer=True)
    args.seed = _size_option(args.seed, "--seed", SEED_RANGE, integer=True)
    args.outages_per_year = _size_option(args.outages_per_year, "--outages-per-year", OUTAGES_PER_YEAR_RANGE,
                                         integer=False)
    args.outage_days = _size_option(args.outage_days, "--outage-days", OUTAGE_DAYS_RANGE, integer=False)
    if args.max_deficit_days is not None:
        args.max_deficit_days = _size_option(args.max_deficit_days, "--max-deficit-days", DEFICIT_DAYS_RANGE,
                                             integer=True)
    spec = load_site(args.site)
    ids = [s.id for s in spec.source]
    if args.source and args.source not in ids:
        raise SiteInputError("one of the site's source ids: " + ", ".join(ids), file=args.site, field="--source",
                             got=args.source)
    tasks = [t.name for t in spec.node.task]
    if args.task is not None and args.task not in tasks:
        raise SiteInputError("one of the node's task names: " + "; ".join(tasks), file=args.site, field="--task",
                             got=args.task)
    chosen = [args.source] if args.source else ids
    knobs = _knobs_for(spec, chosen, args.knob, args.site)
    prep = prepare(spec)
    maps = [sizing_map(prep, sid, n_harvester=args.steps, n_store=args.steps, max_deficit_days=args.max_deficit_days,
                       knob=knobs[sid]) for sid in chosen]
    interval = report_interval(prep, args.source or COMBINED_ID, max_deficit_days=args.max_deficit_days,
                               task=args.task)
    risk = None if args.years == 0 else weather_risk(prep, years=args.years, seed=args.seed,
                                                     outage_rate_per_year=args.outages_per_year,
                                                     outage_mean_days=args.outage_days)
    if args.json:
        print(json.dumps({"sources": [m.to_json() for m in maps],
                          "report_interval": None if interval is None else interval.to_json(),
                          "weather_risk": None if risk is None else risk.to_json()}, indent=1))
    else:
        print(format_sizing(maps, interval, risk))
    return 0


def _progress_line(line: str) -> None:
    """A report's progress at a terminal (a portfolio takes about a second a spot): one line on stderr."""
    print(f"siteharvest: {line}", file=sys.stderr, flush=True)


def cmd_report(args: argparse.Namespace) -> int:
    try:
        from siteharvest_app.report import ReportError, write_report
    except ImportError:
        print("siteharvest: the report needs the dashboard package (app), which is not installed in this build",
              file=sys.stderr)
        return 1
    out = Path(args.output)
    if out.suffix.lower() not in (".pdf", ".html", ".htm"):
        raise SiteInputError("an output file ending in .pdf or .html", field="-o/--output", got=args.output)
    if args.risk_years < 0:
        raise SiteInputError("0 (to skip) or a positive number of years", field="--risk-years", got=args.risk_years)
    if args.sizing_steps < 2:
        raise SiteInputError("at least 2 sizes along each axis", field="--sizing-steps", got=args.sizing_steps)
    try:
        written = write_report(args.site, out, sizing=not args.no_sizing, risk_years=args.risk_years,
                               sizing_steps=args.sizing_steps, hourly=not args.no_hourly,
                               progress=_progress_line if sys.stderr.isatty() else None)
    except ReportError as exc:
        print(f"siteharvest: {exc}", file=sys.stderr)
        return 1
    for path in written:
        print(path)
    return 0


def cmd_schema(args: argparse.Namespace) -> int:
    from .site import site_schema_text

    print(site_schema_text())
    return 0


def cmd_serve(args: argparse.Namespace) -> int:
    try:
        from siteharvest_app.server import serve
    except ImportError:
        print("siteharvest: the dashboard is not installed in this build", file=sys.stderr)
        return 1
    return serve([Path(p) for p in args.paths], host=args.host, port=args.port, workers=args.workers,
                 password_file=args.password_file)


EXAMPLES = {
    "assess": ["siteharvest assess sample_sites/plant-room.toml",
               "siteharvest assess sample_sites/plant-room.toml --json > plant-room.json",
               "siteharvest assess sample_sites/plant-room.toml --hourly plant-room.hourly.csv"],
    "size": ["siteharvest size sample_sites/plant-room.toml",
             "siteharvest size sample_sites/plant-room.toml --source motor-casing --max-deficit-days 5",
             "siteharvest size sample_sites/plant-room.toml --years 0 --steps 12 --json"],
    "report": ["siteharvest report sample_sites/plant-room.toml -o plant-room.pdf",
               "siteharvest report sample_sites -o plant.pdf            (a portfolio of every spot in the folder)",
               "siteharvest report sample_sites/plant-room.toml -o plant-room.html --no-sizing --risk-years 0"],
    "schema": ["siteharvest schema > site.schema.json"],
    "serve": ["siteharvest serve",
              "siteharvest serve sample_sites --port 8060",
              "siteharvest serve sites/ --host 0.0.0.0 --password-file pw.txt --workers 4"],
}


def _sub(sub, name: str, **kwargs) -> argparse.ArgumentParser:
    """A subcommand whose help ends with its examples."""
    epilog = "examples:\n" + "\n".join(f"  {x}" for x in EXAMPLES[name])
    return sub.add_parser(name, epilog=epilog, formatter_class=argparse.RawDescriptionHelpFormatter, **kwargs)


def build_parser() -> argparse.ArgumentParser:
    from . import __version__

    parser = argparse.ArgumentParser(
        prog="siteharvest",
        description="Can a wireless sensor node at this spot run all year on harvested energy?",
        epilog="examples:\n  siteharvest assess sample_sites/plant-room.toml\n"
               "  siteharvest report sample_sites/plant-room.toml -o plant-room.pdf\n"
               "  siteharvest <command> --help    (each command's options and examples)",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--version", action="version", version=f"siteharvest {__version__}",
                        help="print the version and exit")
    sub = parser.add_subparsers(dest="command", required=True)
    p = _sub(sub, "assess", help="simulate a spot's year and compare its sources")
    p.add_argument("site", help="site file (.toml)")
    p.add_argument("--json", action="store_true", help="print the results as JSON (default: a text table)")
    p.add_argument("--hourly", metavar="FILE.csv",
                   help="also write the hourly series of the year, with the weather it used, to a CSV file "
                   "(default: none written)")
    p.set_defaults(func=cmd_assess)
    p = _sub(sub, "size", help="what harvester and store sizes meet the target, how often the node can "
                       "report, and how sure that is over many weather years")
    p.add_argument("site", help="site file (.toml)")
    p.add_argument("--source", metavar="ID", help="only this source (default: each source of the site)")
    # Options are read as text and bounded in cmd_size, so a bad value gets one line (not usage + error).
    p.add_argument("--max-deficit-days", default=None, metavar="N",
                   help="target: at most N deficit days a year, 0..365 (default: the site's run.target_deficit_days)")
    p.add_argument("--steps", default=40, metavar="N", help="sizes tried along each axis, 2..200 (default 40)")
    p.add_argument("--knob", default=None, metavar="FIELD",
                   help="the harvester size to vary where a source's kind declares it, e.g. heat_sink.area_cm2 "
                   "for thermoelectric sources (default: each kind's first size)")
    p.add_argument("--task", default=None, metavar="NAME",
                   help="the node task whose interval the reporting search varies (default: the task named as "
                   "the report, e.g. 'send ...', else the one that costs the most energy)")
    p.add_argument("--years", default=500, metavar="N",
                   help="resampled weather years, 0..5000 (0 to skip; default 500)")
    p.add_argument("--seed", default=1, metavar="N", help="seed of the resampling, 0..4294967295 (default 1)")
    p.add_argument("--outages-per-year", default=0.0, metavar="RATE",
                   help="unplanned process/machine outages per year for heat and vibration sources, 0..52 "
                   "(default 0)")
    p.add_argument("--outage-days", default=3.0, metavar="DAYS",
                   help="mean length of an outage [days], 0..90 (default 3)")
    p.add_argument("--json", action="store_true", help="print the results as JSON (default: sentences)")
    p.set_defaults(func=cmd_size)
    p = _sub(sub, "report", help="write a feasibility report (PDF or HTML) for a spot, or for a folder of "
                       "spots as a portfolio, with each spot's hourly series as CSV beside it")
    p.add_argument("site", help="site file (.toml), or a folder of them for a portfolio")
    p.add_argument("-o", "--output", required=True, metavar="OUT.pdf",
                   help="the report to write: .pdf or .html (required; no default)")
    p.add_argument("--no-sizing", action="store_true", help="leave out the sizing study (default: included)")
    p.add_argument("--risk-years", type=int, default=200, metavar="N",
                   help="resampled weather years for the weather risk (0 to skip; default 200)")
    p.add_argument("--sizing-steps", type=int, default=24, metavar="N",
                   help="sizes tried along each axis of a sizing map (default 24)")
    p.add_argument("--no-hourly", action="store_true",
                   help="do not write the hourly CSV files (default: written beside the report)")
    p.set_defaults(func=cmd_report)
    p = _sub(sub, "schema", help="print the JSON Schema of the site file")
    p.set_defaults(func=cmd_schema)
    p = _sub(sub, "serve", help="start the dashboard (default: the bundled sample spots)",
                       description="Serve the dashboard on a production WSGI server (waitress; gunicorn with "
                       "--workers). An address other than loopback needs a password: $SITEHARVEST_PASSWORD or "
                       "--password-file; a password given on loopback is asked for too.")
    p.add_argument("paths", nargs="*", help="site files or folders of them (default: the bundled sample spots)")
    p.add_argument("--host", default="127.0.0.1", metavar="ADDRESS",
                   help="address to listen on (default 127.0.0.1: this machine only; another needs a password)")
    p.add_argument("--port", type=int, default=8050, metavar="N", help="port to listen on (default 8050)")
    p.add_argument("--workers", type=int, default=1, metavar="N",
                   help="worker processes (default 1: one waitress process; N > 1 runs gunicorn, Linux only)")
    p.add_argument("--password-file", metavar="FILE",
                   help="file whose first line is the password (user 'siteharvest'; default: $SITEHARVEST_PASSWORD)")
    p.set_defaults(func=cmd_serve)
    from .cli_survey import add_survey_parser  # survey logs -> fitted site fields
    add_survey_parser(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run one command. Without ``argv`` it is this process's own command line (the ``siteharvest`` script,
    ``python -m siteharvest``): a command other than ``serve`` then runs as a one-shot process (see
    :func:`_one_shot_gc`)."""
    args = build_parser().parse_args(argv)
    one_shot = argv is None and args.func is not cmd_serve
    if one_shot:
        _one_shot_gc()
    try:
        return int(args.func(args))
    except SiteInputError as exc:
        print(f"siteharvest: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        return 130
    except Exception as exc:  # a fault of the program, not of the input: one line, the details on request
        if os.environ.get(DEBUG_ENV):
            raise
        print(f"siteharvest: internal error ({type(exc).__name__}: {' '.join(str(exc).split())[:200]}); "
              f"this is a fault of the program, not of your input: set {DEBUG_ENV}=1 to see where",
              file=sys.stderr)
        return EXIT_INTERNAL
    finally:
        if one_shot:
            gc.freeze()  # what is left is freed at exit anyway: the collection at shutdown need not walk it


def _one_shot_gc() -> None:
    """Fewer cyclic garbage collections in a process that runs one command and exits.

    Its imports leave some 200,000 long-lived objects that each collection walks again (about 0.3 s of
    collections in one ``assess`` with the default thresholds) while a one-shot command makes little cyclic
    garbage; collections still run, a hundred times less often. The server keeps Python's defaults.
    """
    gc.set_threshold(100_000, 50, 100)


if __name__ == "__main__":
    raise SystemExit(main())
