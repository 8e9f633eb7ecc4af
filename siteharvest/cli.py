"""Command line: ``siteharvest assess | schema | serve``.

Bad input prints one line naming the file, the field and what was expected, and exits with 2.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence
from pathlib import Path

from .errors import SiteInputError

EXIT_BAD_INPUT = 2


def _fmt(x: float | None, digits: int = 1) -> str:
    if x is None or x != x or x in (float("inf"), float("-inf")):
        return "-"
    return f"{x:,.{digits}f}"


def format_table(assessment) -> str:
    """A readable comparison table of every source and all sources together."""
    a = assessment
    spot = a.spec.spot
    lines = [
        f"Spot: {spot.name}  ({spot.latitude_deg:.3f}, {spot.longitude_deg:.3f})",
        f"Node: mean demand {a.mean_power_uw:,.1f} uW  "
        f"({a.prepared.demand_j.sum() / 3600:,.2f} Wh/yr);  store usable {a.usable_energy_j:,.1f} J",
        f"Backup cell alone ({a.backup.cell}{', assumed' if a.backup_is_assumed else ''}): "
        f"{_fmt(a.backup_only_life_years)} years",
        "",
    ]
    head = ["source", "kind", "into store Wh/yr", "deficit days", "first wake h", "longest outage h",
            "lowest store %", "backup life yr", "verdict"]
    rows = []
    for c in a.cases:
        rows.append([c.id, c.kind, _fmt(c.annual_energy_wh, 2), str(c.deficit_days),
                     _fmt(c.first_wake_hours, 0), str(c.longest_outage_hours), _fmt(c.lowest_soc_pct, 0),
                     _fmt(c.backup_life_years), c.verdict])
    widths = [max(len(r[i]) for r in [head, *rows]) for i in range(len(head))]
    right = {2, 3, 4, 5, 6, 7}

    def line(cells: list[str]) -> str:
        return "  ".join(c.rjust(w) if i in right else c.ljust(w)
                         for i, (c, w) in enumerate(zip(cells, widths, strict=True))).rstrip()

    lines.append(line(head))
    lines.append("  ".join("-" * w for w in widths))
    lines.extend(line(r) for r in rows)
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
        print(json.dumps(assessment.to_json(), indent=2))
    else:
        print(format_table(assessment))
    return 0


def cmd_schema(args: argparse.Namespace) -> int:
    from .site import site_schema_text

    print(site_schema_text())
    return 0


def cmd_serve(args: argparse.Namespace) -> int:
    try:
        from app.server import serve
    except ImportError:
        print("siteharvest: the dashboard is not installed in this build", file=sys.stderr)
        return 1
    serve([Path(p) for p in args.paths], host=args.host, port=args.port)
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="siteharvest",
        description="Can a wireless sensor node at this spot run all year on harvested energy?")
    sub = parser.add_subparsers(dest="command", required=True)
    p = sub.add_parser("assess", help="simulate a spot's year and compare its sources")
    p.add_argument("site", help="site file (.toml)")
    p.add_argument("--json", action="store_true", help="print the results as JSON")
    p.add_argument("--hourly", metavar="FILE.csv", help="write the hourly series of the year to a CSV file")
    p.set_defaults(func=cmd_assess)
    p = sub.add_parser("schema", help="print the JSON Schema of the site file")
    p.set_defaults(func=cmd_schema)
    p = sub.add_parser("serve", help="start the dashboard (default: the bundled sample spots)")
    p.add_argument("paths", nargs="*", help="site files or folders of them")
    p.add_argument("--host", default="127.0.0.1")
    p.add_argument("--port", type=int, default=8050)
    p.set_defaults(func=cmd_serve)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    args = build_parser().parse_args(argv)
    try:
        return int(args.func(args))
    except SiteInputError as exc:
        print(f"siteharvest: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        return 130


if __name__ == "__main__":
    raise SystemExit(main())
