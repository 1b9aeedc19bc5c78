"""Errors raised by resplan.

Every error a user can cause derives from :class:`ResplanError` and from the
builtin it resembles, carries structured fields, and builds its one-line
message from them. The command line maps them to exit code 2.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

__all__ = [
    "ResplanError",
    "DesignError",
    "DesignErrors",
    "ChainError",
    "describe_value",
]


#: Control characters and line separators written as escapes, so that a message stays on
#: one line for every splitter (str.splitlines breaks at U+0085, U+2028 and U+2029 too).
_CONTROL = {
    c: chr(c).encode("unicode_escape").decode("ascii")
    for c in (*range(32), *range(127, 160), 0x2028, 0x2029)
}


def describe_value(value: Any) -> str:
    r"""Render a user-given value for an error message: one line, shortened if long.

    Examples
    --------
    >>> describe_value("4.5 nV")
    '"4.5 nV"'
    >>> describe_value("a\nb")
    '"a\\nb"'
    >>> len(describe_value("0\x855 V\u2028").splitlines())
    1
    """
    text = repr(value) if not isinstance(value, str) else f'"{value.translate(_CONTROL)}"'
    return text if len(text) <= 60 else text[:57] + "..."


class ResplanError(Exception):
    """Base class of every error resplan raises for bad input."""


class DesignError(ResplanError, ValueError):
    """One bad value in a design: which field, what was given, what was expected.

    Parameters
    ----------
    field : str
        Path of the field, such as ``"stages[1].en"``.
    value : object
        The value given.
    expected : str
        What would have been accepted, such as ``"a resistance > 0 ohm"``.
    source : str, optional
        The file the value came from, if any.

    Examples
    --------
    >>> str(DesignError("sensor.resistance", -5.0, "a resistance > 0 ohm"))
    'sensor.resistance: got -5.0, expected a resistance > 0 ohm'
    """

    def __init__(self, field: str, value: Any, expected: str, source: str | None = None):
        self.field = field
        self.value = value
        self.expected = expected
        self.source = source
        # A file name or a key can hold line separators too: escape the whole line, for
        # every subclass's message.
        super().__init__(self._message().translate(_CONTROL))

    def _message(self) -> str:
        where = f"{self.source}: " if self.source else ""
        return f"{where}{self.field}: got {describe_value(self.value)}, expected {self.expected}"

    def with_context(self, prefix: str | None = None, source: str | None = None) -> DesignError:
        """Return a copy whose field path is prefixed (``prefix.field``) and/or with a file."""
        field = f"{prefix}.{self.field}" if prefix and self.field else (prefix or self.field)
        return DesignError(field, self.value, self.expected, source or self.source)


class DesignErrors(ResplanError, ValueError):
    """Several problems found at once; the message has one line per problem."""

    def __init__(self, errors: Iterable[DesignError]):
        self.errors = list(errors)
        super().__init__("\n".join(str(e) for e in self.errors))


class ChainError(DesignError):
    """A chain that is valid field by field but cannot be computed as a whole.

    For example a noise bandwidth that nothing limits, or ADC noise quoted at a
    data rate the chain does not run at.
    """
