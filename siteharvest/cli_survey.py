"""``siteharvest survey light|temperature|vibration LOG... --site SITE.toml -o NEW.toml [--json]``.

Fits a spot's inputs to survey logs and writes a copy of the site with the fitted fields and their
``[[measured]]`` records; ``--json`` prints the fit. Registered from :mod:`siteharvest.cli`.
"""

from __future__ import annotations

import argparse
import json
import os
from pathlib import Path
from typing import Any

from .errors import SiteInputError

EXAMPLES = [
    "siteharvest survey light sample_sites/surveys/light-week.csv --site sample_sites/plant-room.toml "
    "-o plant-room.surveyed.toml",
    "siteharvest survey temperature sample_sites/surveys/casing-week.csv --site sample_sites/plant-room.toml --json",
    "siteharvest survey vibration sample_sites/surveys/bearing-*.csv --unit g "
    "--rms-log sample_sites/surveys/bearing-rms-week.csv --site sample_sites/plant-room.toml -o out.toml",
    "siteharvest survey vibration rec.wav --unit g --wav-scale 16 --site spot.toml --json",
]


def _number(text: str | None, flag: str, low: float, high: float) -> float | None:
    if text is None:
        return None
    try:
        value = float(text)
    except ValueError:
        raise SiteInputError(f"a number from {low:g} to {high:g}", field=flag, got=text[:40]) from None
    if not low <= value <= high:
        raise SiteInputError(f"a number from {low:g} to {high:g}", field=flag, got=value)
    return value


def _moved_names(data: dict[str, Any], old_dir: Path, new_dir: Path) -> None:
    """Relative file names a site names, rewritten to resolve from ``new_dir`` as they did from ``old_dir``."""
    from .files import named_in_dict

    if old_dir.resolve() == new_dir.resolve():
        return
    for keys, name in named_in_dict(data):
        if Path(name).is_absolute():
            continue
        node = data
        for k in keys[:-1]:
            node = node[k]
        node[keys[-1]] = Path(os.path.relpath(old_dir / name, new_dir)).as_posix()


def cmd_survey(args: argparse.Namespace) -> int:
    from .site import dump_site, load_site, parse_site
    from .survey import apply_update, survey_light, survey_temperature, survey_vibration

    out = Path(args.output) if args.output else None
    if out is None and not args.json:
        raise SiteInputError("-o NEW.toml (the site to write) or --json (print the fit)", field="-o/--output")
    if out is not None and out.suffix.lower() != ".toml":
        raise SiteInputError("an output site file ending in .toml", field="-o/--output", got=args.output)
    spec = load_site(args.site)
    common = {"source_id": args.source}
    if args.log_kind == "light":
        result = survey_light(spec, args.logs, column=args.column, unit=args.unit, timezone=args.timezone,
                              reference=args.daylight_reference,
                              full_scale=_number(args.full_scale, "--full-scale", 1e-6, 1e7), **common)
    elif args.log_kind == "temperature":
        result = survey_temperature(spec, args.logs, surface_column=args.column, air_column=args.air_column,
                                    timezone=args.timezone, **common)
    else:
        scale = _number(args.wav_scale, "--wav-scale", 1e-6, 1e6)
        if scale is None:
            scale = _number(args.full_scale, "--full-scale", 1e-6, 1e6)
        result = survey_vibration(spec, args.logs, unit=args.unit, column=args.column,
                                  sample_rate_hz=_number(args.sample_rate, "--sample-rate", 1, 1e6),
                                  full_scale=scale, rms_log=args.rms_log, timezone=args.timezone, **common)
    new = apply_update(spec, result.update)
    if out is not None:
        data = new.model_dump(mode="json")
        _moved_names(data, Path(args.site).parent, out.parent)
        text = dump_site(parse_site(data, file=str(out), base_dir=out.parent.resolve()))
        out.write_text(text, encoding="utf-8")
    if args.json:
        print(json.dumps(result.to_json(), indent=1, default=str))
    else:
        q = result.update.quality
        print(f"{result.update.source_id}: " + ", ".join(f"{k} = {v}" for k, v in result.update.fields.items()
                                                        if v is not None))
        print(f"fit: {q.summary}")
        for note in q.notes:
            print(f"  - {note}")
        if result.update.year_spread_pct is not None:
            print(f"year from the log: +/- {result.update.year_spread_pct:.1f} % (90 % interval)")
        if out is not None:
            print(out)
    return 0


def add_survey_parser(sub: Any) -> None:
    """Register ``survey`` on the command line's subparsers."""
    p = sub.add_parser("survey", help="fit a spot's inputs to survey logs (light, temperature, vibration) and "
                       "write a copy of the site with them",
                       epilog="examples:\n" + "\n".join(f"  {x}" for x in EXAMPLES),
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("log_kind", choices=["light", "temperature", "vibration"], help="what the logs measure")
    p.add_argument("logs", nargs="+", metavar="LOG", help="log files (CSV; vibration also WAV)")
    p.add_argument("--site", required=True, metavar="SITE.toml", help="the spot's site file (required)")
    p.add_argument("-o", "--output", metavar="NEW.toml", help="write the site with the fitted fields here")
    p.add_argument("--json", action="store_true", help="print the fit as JSON")
    p.add_argument("--source", metavar="ID", help="the source to fit (default: the site's only one of the kind)")
    p.add_argument("--column", metavar="NAME", help="the value column (vibration WAV: the channel number)")
    p.add_argument("--air-column", metavar="NAME", help="temperature: the air column (default air_c, ...)")
    p.add_argument("--unit", metavar="UNIT", help="light: lx or W/m2; vibration: g or m/s2 (default: from the "
                   "column's name or a '# unit =' line)")
    p.add_argument("--timezone", metavar="ZONE", help="how to read timestamps without offsets: 'standard' (the "
                   "spot's standard time, the default), 'UTC', or a zone name such as Europe/Berlin")
    p.add_argument("--daylight-reference", default="weather", choices=["weather", "clear-sky"],
                   help="light: the outdoor light the daylight factor is fitted against (default weather)")
    p.add_argument("--full-scale", metavar="X", help="the logger's full scale in the log's unit (readings at it "
                   "are refused as clipped)")
    p.add_argument("--wav-scale", metavar="X", help="vibration WAV: the acceleration at digital full scale, "
                   "in --unit")
    p.add_argument("--sample-rate", metavar="HZ", help="vibration CSV without time_s: the sample rate [Hz]")
    p.add_argument("--rms-log", metavar="FILE", help="vibration: a timestamped RMS log for the running schedule")
    p.set_defaults(func=cmd_survey)
