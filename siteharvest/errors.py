"""One exception for every bad input: names the file, the field and what was expected."""

from __future__ import annotations

import math
import numbers
import re
from collections.abc import Iterable
from typing import Any

# Line breaks and other control characters would split the one-line message.
_CONTROL = re.compile(r"[\x00-\x1f\x7f\u2028\u2029]+")
_GOT_CHARS = 60


def one_line(text: object) -> str:
    """``text`` as one line: control characters (line breaks, tabs, NUL) become a single space."""
    return _CONTROL.sub(" ", str(text)).strip()


def format_value(value: Any, depth: int = 0) -> str:
    """A value as a person reads it: numbers plainly (no ``np.float64(...)``), text in one pair of
    quotes, lists and tables shortened, huge integers by their number of digits."""
    if isinstance(value, str):
        text = one_line(value)
        if not text:
            return "an empty text"
        return text if len(text) >= 2 and text[0] == text[-1] and text[0] in "'\"" else f"'{text}'"
    if isinstance(value, bool):
        return "true" if value else "false"   # TOML's spelling
    if isinstance(value, numbers.Integral):
        try:
            text = str(int(value))
        except ValueError:                    # beyond Python's digit limit for int -> str
            return "an integer of thousands of digits"
        return text if len(text) <= 20 else f"an integer of {len(text.lstrip('-'))} digits"
    if isinstance(value, numbers.Real):
        number = float(value)
        if math.isnan(number):
            return "nan"
        if math.isinf(number):
            return "inf" if number > 0 else "-inf"
        return f"{number:.6g}"
    if hasattr(value, "tolist") and not isinstance(value, type):   # numpy arrays and scalars
        try:
            return format_value(value.tolist(), depth)
        except Exception:  # an odd object: fall back to its type
            return f"a {type(value).__name__}"
    if isinstance(value, dict):
        if depth > 1 or not value:
            return "a table" if value else "an empty table"
        items = [f"{one_line(k)} = {format_value(v, depth + 1)}" for k, v in list(value.items())[:4]]
        return "{" + ", ".join(items) + (", ..." if len(value) > 4 else "") + "}"
    if isinstance(value, list | tuple):
        if depth > 1:
            return f"a list of {len(value)}"
        items = [format_value(v, depth + 1) for v in list(value)[:6]]
        return "[" + ", ".join(items) + (", ..." if len(value) > 6 else "") + "]"
    if value is None:
        return "nothing"
    return f"a {type(value).__name__}"


class SiteInputError(ValueError):
    """Bad input from a user file or value.

    The message is one line: ``FILE: FIELD: expected EXPECTED, got GOT (line N)``.
    Structured fields are kept so the dashboard can place the message beside the input.
    """

    def __init__(
        self,
        expected: str,
        *,
        file: str | None = None,
        field: str | None = None,
        got: object = None,
        line: int | None = None,
    ) -> None:
        self.file = file
        self.field = field
        self.expected = expected
        self.got = got
        self.line = line
        super().__init__(self.message)

    @property
    def message(self) -> str:
        parts = []
        if self.file:
            parts.append(one_line(self.file))
        if self.field:
            parts.append(one_line(self.field))
        text = f"expected {one_line(self.expected)}"
        if self.got is not None:
            got = format_value(self.got)
            if len(got) > _GOT_CHARS:
                got = got[:_GOT_CHARS - 3] + "..."
            text += f", got {got}"
        if self.line is not None:
            text += f" (line {self.line})"
        parts.append(text)
        return ": ".join(parts)


class ChoiceError(ValueError):
    """A preset-type field holding something other than one of its names (raised in validators).

    ``str()`` reads ``KEY must be one of: a, b, c``; the site loader turns it into a
    :class:`SiteInputError` naming the field itself and the value given.
    """

    def __init__(self, key: str, names: Iterable[str], got: object) -> None:
        self.key = key
        self.names = tuple(names)
        self.got = got
        super().__init__(f"{key} must be one of: {', '.join(self.names)} (got {format_value(got)[:_GOT_CHARS]})")

    @property
    def expected(self) -> str:
        return "one of: " + ", ".join(self.names)


def choose(data: dict[str, Any], key: str, names: Iterable[str], default: str) -> str:
    """``data[key]`` (or ``default``) when it is one of ``names``; raises :class:`ChoiceError` for
    anything else, including lists and tables (which cannot be looked up by name)."""
    names = tuple(names)
    value = data.get(key, default)
    if isinstance(value, str) and value in names:
        return value
    raise ChoiceError(key, names, value)
