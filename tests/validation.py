"""Records of the external checks, read by ``scripts/validation_doc.py`` to write docs/validation.md.

A test that compares the code with a published value (a standard, a paper, a handbook, a package's open
data, or a value computed in the test from a reference library) carries one record per value::

    @external_check(area="light", quantity="luminous efficacy of CIE FL2, 380-780 nm", value="336.8 lm/W",
                    source="CIE 015:2018 illuminant FL2 x CIE 1924 V(lambda), computed", tolerance="0.1 %")
    def test_...():

The decorator only attaches the record (``test.external_checks``) and returns the test unchanged.
Property tests of invariants carry no record: the document lists them by name.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import TypeVar

# Area of each record (its key) and the title of its table in the document, in this order.
AREAS = {
    "sun": "Sun, irradiance and outdoor PV",
    "light": "Light",
    "thermoelectric": "Thermoelectric",
    "vibration": "Vibration",
    "rf": "RF",
    "store": "Store and node demand",
    "kernel": "Kernel and metrics",
    "weather": "Weather files and synthetic weather",
    "sizing": "Sizing",
    "dashboard": "Dashboard legibility",
}

_F = TypeVar("_F", bound=Callable)


@dataclass(frozen=True)
class ExternalCheck:
    """One checked value: what is checked, the published value, where it comes from, how close."""

    area: str
    quantity: str
    value: str
    source: str
    tolerance: str


def external_check(*, area: str, quantity: str, value: str, source: str,
                   tolerance: str) -> Callable[[_F], _F]:
    """Attach an `ExternalCheck` to a test function (records of stacked decorators keep their order)."""
    record = ExternalCheck(area=area, quantity=quantity, value=value, source=source, tolerance=tolerance)

    def attach(test: _F) -> _F:
        test.external_checks = (record, *getattr(test, "external_checks", ()))
        return test

    return attach
