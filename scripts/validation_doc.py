"""Write docs/validation.md from the external-check records in the tests.

    python scripts/validation_doc.py           # rewrite docs/validation.md
    python scripts/validation_doc.py --check   # exit 1 if docs/validation.md is out of date

The test modules are imported (no test is run); each test function decorated with
``tests/validation.py``'s ``external_check`` contributes its records, and every property test
(hypothesis) without a record is listed by name as an invariant (read from the source).
"""

from __future__ import annotations

import argparse
import ast
import importlib
import inspect
import sys
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
TESTS = ROOT / "tests"
DOC = ROOT / "docs" / "validation.md"

INTRO = """\
# Validation

What siteharvest's tests check against values published outside the project: standards, papers,
handbooks, open data shipped with a package (pvlib's TMY3 files and module databases, the CIE tables
in colour-science), and values computed in a test from a reference library or worked by hand from a
published formula. One row per checked value: what is checked, the value, its source, the tolerance
the test allows, and the test that holds it.

Values a source gives only from memory or as common practice are checked as ranges or sanity bounds,
never as exact figures; such rows say so in their source.

This file is generated from records beside the tests (`external_check` in `tests/validation.py`).
Do not edit it by hand: change the record and run `python scripts/validation_doc.py`.
`tests/test_validation_doc.py` fails when this file is out of date or a record lacks a source or a
tolerance.
"""


@dataclass(frozen=True)
class Row:
    area: str
    quantity: str
    value: str
    source: str
    tolerance: str
    test: str


def _tests_on_path() -> None:
    if str(TESTS) not in sys.path:
        sys.path.insert(0, str(TESTS))


def _record_modules() -> list[object]:
    """The top-level test modules with records (tests/e2e is left out), imported by name.

    Under pytest they are already imported under the same names, so nothing is imported twice.
    """
    _tests_on_path()
    paths = [p for p in sorted(TESTS.glob("test_*.py")) if "external_check" in p.read_text(encoding="utf-8")]
    return [importlib.import_module(path.stem) for path in paths]


def _line(func: object) -> int:
    inner = getattr(getattr(func, "hypothesis", None), "inner_test", func)
    return inspect.unwrap(inner).__code__.co_firstlineno


def _tests_of(module: object) -> list[tuple[str, object]]:
    found = [(name, obj) for name, obj in vars(module).items()
             if name.startswith("test_") and callable(obj) and getattr(obj, "__module__", None) == module.__name__]
    return sorted(found, key=lambda item: _line(item[1]))


def _decorator_names(func: ast.FunctionDef) -> set[str]:
    names = set()
    for dec in func.decorator_list:
        target = dec.func if isinstance(dec, ast.Call) else dec
        names.add(target.attr if isinstance(target, ast.Attribute) else getattr(target, "id", ""))
    return names


def _property_tests() -> list[str]:
    """Hypothesis tests without a record, read from the source (nothing imported)."""
    names = []
    for path in sorted(TESTS.glob("test_*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in tree.body:
            if isinstance(node, ast.FunctionDef) and node.name.startswith("test_"):
                decorators = _decorator_names(node)
                if "given" in decorators and "external_check" not in decorators:
                    names.append(f"tests/{path.name}::{node.name}")
    return names


def collect() -> tuple[list[Row], list[str]]:
    """(external-check rows in test order, names of the property tests without a record)."""
    rows: list[Row] = []
    for module in _record_modules():
        file = f"tests/{Path(module.__file__).name}"
        for name, func in _tests_of(module):
            for rec in getattr(func, "external_checks", ()):
                rows.append(Row(rec.area, rec.quantity, rec.value, rec.source, rec.tolerance, f"{file}::{name}"))
    return rows, _property_tests()


def _cell(text: str) -> str:
    return " ".join(text.split()).replace("|", "\\|")


def render(rows: list[Row], invariants: list[str], areas: dict[str, str]) -> str:
    out = [INTRO]
    for area, title in areas.items():
        mine = [r for r in rows if r.area == area]
        if not mine:
            continue
        out += [f"\n## {title}\n",
                "| what is checked | published value | source | tolerance | test |",
                "|---|---|---|---|---|"]
        out += [f"| {_cell(r.quantity)} | {_cell(r.value)} | {_cell(r.source)} | {_cell(r.tolerance)} | "
                f"`{r.test}` |" for r in mine]
    out += ["\n## Invariants held by property tests\n",
            "Not checks against published values: hypothesis searches inputs for a counter-example to a",
            "property (energy balance, bounds, monotonicity, symmetry, agreement with a plain loop).\n"]
    out += [f"- `{name}`" for name in invariants]
    return "\n".join(out) + "\n"


def document() -> str:
    _tests_on_path()
    from validation import AREAS

    rows, invariants = collect()
    return render(rows, invariants, AREAS)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="only say whether docs/validation.md is up to date")
    args = parser.parse_args(argv)
    text = document()
    if args.check:
        same = DOC.exists() and DOC.read_text(encoding="utf-8") == text
        print(f"{DOC.relative_to(ROOT)} is {'up to date' if same else 'out of date'}")
        return 0 if same else 1
    DOC.parent.mkdir(exist_ok=True)
    DOC.write_text(text, encoding="utf-8")
    print(f"wrote {DOC.relative_to(ROOT)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
