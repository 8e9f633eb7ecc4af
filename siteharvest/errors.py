"""One exception for every bad input: names the file, the field and what was expected."""

from __future__ import annotations


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
            parts.append(str(self.file))
        if self.field:
            parts.append(self.field)
        text = f"expected {self.expected}"
        if self.got is not None:
            got = repr(self.got) if not isinstance(self.got, str) else f"'{self.got}'"
            if len(got) > 60:
                got = got[:57] + "..."
            text += f", got {got}"
        if self.line is not None:
            text += f" (line {self.line})"
        parts.append(text)
        return ": ".join(parts)

    def with_file(self, file: str) -> SiteInputError:
        """The same error, naming ``file`` when it named none."""
        if self.file:
            return self
        return SiteInputError(self.expected, file=file, field=self.field, got=self.got, line=self.line)
