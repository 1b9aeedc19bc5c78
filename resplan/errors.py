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
    "escaped",
]


#: Control characters and line separators written as escapes, so that a message stays on
#: one line for every splitter (str.splitlines breaks at U+0085, U+2028 and U+2029 too).
_CONTROL = {
    c: chr(c).encode("unicode_escape").decode("ascii")
    for c in (*range(32), *range(127, 160), 0x2028, 0x2029)
}


_LIMIT = 60


def escaped(text: str) -> str:
    r"""``text`` with control characters and line separators escaped: it stays on one line.

    For names, paths and file names put into messages.

    Examples
    --------
    >>> escaped("design\nfile.toml")
    'design\\nfile.toml'
    """
    return str(text).translate(_CONTROL)


def _toml_string(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"').translate(_CONTROL) + '"'


def _toml(value: Any, budget: int, depth: int = 0) -> str:
    """``value`` in TOML syntax, stopping once about ``budget`` characters are written."""
    import datetime as dt
    import math

    if isinstance(value, str):
        return _toml_string(value[: budget + 1])
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        # TOML integers are 64-bit; a Python caller may pass more digits than str() writes.
        return str(value) if value.bit_length() < 1000 else "an integer of over 300 digits"
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value).replace("e+", "e")  # 1e308, as written, not 1e+308
    if isinstance(value, dt.datetime | dt.date | dt.time):
        return value.isoformat()
    if isinstance(value, list | tuple | dict):
        if depth >= 3:
            return "{...}" if isinstance(value, dict) else "[...]"
        items = value.items() if isinstance(value, dict) else value
        parts: list[str] = []
        used = 2
        for item in items:
            if used > budget:
                parts.append("...")
                break
            if isinstance(value, dict):
                key, v = item
                key = str(key)
                name = (
                    key
                    if key.replace("_", "").replace("-", "").isalnum() and key.isascii()
                    else _toml_string(key)
                )
                piece = f"{name} = {_toml(v, budget - used, depth + 1)}"
            else:
                piece = _toml(item, budget - used, depth + 1)
            parts.append(piece)
            used += len(piece) + 2
        if isinstance(value, dict):
            return "{ " + ", ".join(parts) + " }" if parts else "{}"
        return "[" + ", ".join(parts) + "]"
    return _toml_string(str(value)[: budget + 1])


def describe_value(value: Any) -> str:
    r"""Render a user-given value for an error message: TOML syntax, one line, shortened if long.

    The value is written as it would be in the design file, not as Python
    writes it: text in double quotes, ``true``, arrays in brackets, tables
    inline, dates in ISO form.

    Examples
    --------
    >>> describe_value("4.5 nV")
    '"4.5 nV"'
    >>> describe_value("a\nb")
    '"a\\nb"'
    >>> len(describe_value("0\x855 V\u2028").splitlines())
    1
    >>> describe_value({"type": "rc_filter", "open": True})
    '{ type = "rc_filter", open = true }'
    >>> import datetime
    >>> describe_value(datetime.datetime(2024, 5, 1, 10, 0))
    '2024-05-01T10:00:00'
    """
    text = _toml(value, _LIMIT)
    return text if len(text) <= _LIMIT else text[: _LIMIT - 3] + "..."


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
        if self.value is None:  # an absent field
            return f"{where}{self.field}: missing, expected {self.expected}"
        return f"{where}{self.field}: got {describe_value(self.value)}, expected {self.expected}"

    def with_context(self, prefix: str | None = None, source: str | None = None) -> DesignError:
        """Return a copy whose field path is prefixed (``prefix.field``) and/or with a file."""
        field = f"{prefix}.{self.field}" if prefix and self.field else (prefix or self.field)
        return DesignError(field, self.value, self.expected, source or self.source)


class DesignErrors(ResplanError, ValueError):
    """Several problems found at once; the message has one line per problem."""

    def __init__(self, errors: Iterable[DesignError]):
        # Each problem once, in the order found.
        self.errors = list({str(e): e for e in errors}.values())
        super().__init__("\n".join(str(e) for e in self.errors))


class ChainError(DesignError):
    """A chain that is valid field by field but cannot be computed as a whole.

    For example a noise bandwidth that nothing limits, or ADC noise quoted at a
    data rate the chain does not run at.
    """


def describe_file_kind(mode: int) -> str:
    """What a path that is not a regular file is, from its ``st_mode``, for a message.

    Examples
    --------
    >>> import stat
    >>> describe_file_kind(stat.S_IFIFO)
    'a FIFO (named pipe)'
    """
    import stat

    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a FIFO (named pipe)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"
