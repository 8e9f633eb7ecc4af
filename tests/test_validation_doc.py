"""docs/validation.md is generated from the external-check records beside the tests and must not drift."""

from __future__ import annotations

import importlib.util
import sys
from functools import cache

from shared import ROOT
from validation import AREAS


@cache
def _generator():
    """scripts/validation_doc.py, imported once (registered by name, as its dataclasses need)."""
    spec = importlib.util.spec_from_file_location("validation_doc", ROOT / "scripts" / "validation_doc.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


def test_every_record_names_area_source_and_tolerance():
    rows, _ = _generator().collect()
    assert rows, "no external_check records found"
    for row in rows:
        assert row.area in AREAS, f"{row.test}: unknown area {row.area!r}"
        for field in ("quantity", "value", "source", "tolerance"):
            assert getattr(row, field).strip(), f"{row.test}: record without a {field}"


def test_validation_document_is_up_to_date():
    gen = _generator()
    expected = gen.document()
    current = gen.DOC.read_text(encoding="utf-8") if gen.DOC.exists() else ""
    assert current == expected, "docs/validation.md is out of date: run python scripts/validation_doc.py"


def test_property_tests_are_listed_as_invariants():
    _, invariants = _generator().collect()
    assert "tests/test_kernel.py::test_kernel_matches_plain_loop_and_balances" in invariants
    assert not any(name.endswith("test_validation_document_is_up_to_date") for name in invariants)
