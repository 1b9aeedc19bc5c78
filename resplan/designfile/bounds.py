"""Bounded input: how big a design file may be, and how it is read.

A design file is read only if it is a regular file of at most
:data:`MAX_FILE_BYTES`, in bounded chunks, so that no file (a FIFO, a device,
``/dev/zero`` behind a symlink, a file that grows while it is read) can block
the reader or make it allocate without bound. After parsing, the tables are
walked once, without recursion, and refused if they nest deeper, hold longer
text, more keys, more stages or more table rows than the limits below; the
structure check then never meets a pathological document. The limits are
stated in ``docs/design-file.md`` (a test keeps the two the same).

Every limit is far beyond what a real design needs: common practice, no source.

Examples
--------
>>> print(*check_bounds({"meta": {"title": "x" * 2000}}))  # doctest: +ELLIPSIS
meta.title: got "xxx...xxx..., expected text of at most 1000 characters (got 2000)
>>> check_bounds({"stages": [{"type": "rc_filter"}] * 1000})
[]
"""

from __future__ import annotations

import errno
import os
import re
import stat
from collections.abc import Mapping
from typing import Any

from ..errors import DesignError, ResplanError, describe_file_kind, escaped

__all__ = [
    "MAX_FILE_BYTES",
    "MAX_DEPTH",
    "MAX_TEXT",
    "MAX_KEY",
    "MAX_KEYS",
    "MAX_STAGES",
    "MAX_ROWS",
    "MAX_PROBLEMS",
    "DesignFileError",
    "MoreProblems",
    "read_bounded",
    "capped",
    "check_bounds",
]

#: Largest design file read, bytes (1 MB).
MAX_FILE_BYTES = 1_000_000
#: Deepest nesting of tables and arrays (the document itself is depth 0).
MAX_DEPTH = 16
#: Longest text value, characters.
MAX_TEXT = 1000
#: Longest key, characters.
MAX_KEY = 100
#: Most keys in one table.
MAX_KEYS = 200
#: Most analog stages (``[[stages]]`` tables).
MAX_STAGES = 1000
#: Most items in any other array (rows of a noise table, a band's two edges ...).
MAX_ROWS = 1000
#: Most problems listed for one file; the rest are counted in one last line.
MAX_PROBLEMS = 100

_CHUNK = 64 * 1024
#: Keys whose text is a label shown in tables and figures: one line, no control characters.
_LABELS = frozenset({"name", "title"})
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029]")


class DesignFileError(ResplanError, ValueError):
    """A design file that cannot be read at all: missing, not text, or bad TOML.

    The message is one line, starting with the file (and ``line:col`` for syntax);
    control characters and line separators in it are escaped.
    """

    def __init__(self, message: str):
        super().__init__(escaped(message))


class MoreProblems(DesignError):
    """The last line of a long list: how many more problems were found and not listed."""

    def _message(self) -> str:
        where = f"{self.source}: " if self.source else ""
        return f"{where}{self.value} more problems not listed; fix the ones above first"


def capped(problems: list[DesignError], source: str | None = None) -> list[DesignError]:
    """At most :data:`MAX_PROBLEMS` problems, each once, the rest counted in one last line."""
    unique = list({str(p): p for p in problems}.values())
    if len(unique) <= MAX_PROBLEMS:
        return unique
    rest = len(unique) - MAX_PROBLEMS
    return [*unique[:MAX_PROBLEMS], MoreProblems("design", rest, "", source)]




def read_bounded(path: str | os.PathLike, source: str | None = None) -> bytes:
    """The bytes of a regular file of at most :data:`MAX_FILE_BYTES`.

    The file is opened without blocking (a FIFO without a writer does not hang),
    checked with ``fstat`` before any byte is read, and read in chunks up to one
    byte past the limit.

    Raises
    ------
    DesignFileError
        Missing, unreadable, not a regular file, or too large; one line naming it.
    """
    source = str(path) if source is None else source
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0)
    try:
        fd = os.open(path, flags)
    except FileNotFoundError:
        raise DesignFileError(f"{source}: no such design file") from None
    except IsADirectoryError:
        raise DesignFileError(f"{source}: is a folder, expected a design file") from None
    except OSError as err:
        if err.errno == errno.ENXIO:  # a socket or a FIFO opened for reading only
            raise DesignFileError(f"{source}: not a regular file, expected a design file") from None
        raise DesignFileError(f"{source}: cannot be read ({err.strerror or err})") from None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            kind = describe_file_kind(info.st_mode)
            raise DesignFileError(f"{source}: is {kind}, expected a design file (a regular file)")
        if info.st_size > MAX_FILE_BYTES:
            raise DesignFileError(
                f"{source}: {info.st_size} bytes, larger than the {MAX_FILE_BYTES:,} bytes "
                "(1 MB) a design file may hold"
            )
        chunks: list[bytes] = []
        size = 0
        while size <= MAX_FILE_BYTES:
            try:
                chunk = os.read(fd, min(_CHUNK, MAX_FILE_BYTES + 1 - size))
            except BlockingIOError:  # pragma: no cover - regular files do not block
                continue
            except OSError as err:
                raise DesignFileError(f"{source}: cannot be read ({err.strerror or err})") from None
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
        if size > MAX_FILE_BYTES:
            raise DesignFileError(
                f"{source}: larger than the {MAX_FILE_BYTES:,} bytes (1 MB) a design file may hold"
            )
        return b"".join(chunks)
    finally:
        os.close(fd)


def _path(parts: tuple[Any, ...]) -> str:
    out = ""
    for part in parts:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            text = str(part)
            text = text if len(text) <= 40 else text[:37] + "..."
            out += ("." if out else "") + text
    return out or "design"


def check_bounds(data: Mapping[str, Any]) -> list[DesignError]:
    """Problems with the size of a parsed design: depth, text, keys, stages, rows.

    Walks the tables once with an explicit stack (no recursion, so any depth is
    safe to measure) and stops looking inside anything already refused.
    """
    problems: list[DesignError] = []
    stack: list[tuple[tuple[Any, ...], Any]] = [((), data)]
    while stack and len(problems) < MAX_PROBLEMS:
        where, node = stack.pop()
        depth = len(where)
        if isinstance(node, str):
            if where and where[-1] in _LABELS and _CONTROL.search(node):
                problems.append(
                    DesignError(
                        _path(where),
                        node,
                        "a label on one line, without control characters or line breaks "
                        "(it goes into tables and figures)",
                    )
                )
                continue
            if len(node) > MAX_TEXT:
                problems.append(
                    DesignError(
                        _path(where),
                        node,
                        f"text of at most {MAX_TEXT} characters (got {len(node)})",
                    )
                )
            continue
        if not isinstance(node, Mapping | list):
            continue
        if depth >= MAX_DEPTH:
            problems.append(
                DesignError(
                    _path(where), node, f"tables and arrays nested at most {MAX_DEPTH} deep"
                )
            )
            continue
        if isinstance(node, Mapping):
            if len(node) > MAX_KEYS:
                problems.append(
                    DesignError(
                        _path(where),
                        node,
                        f"a table of at most {MAX_KEYS} keys (got {len(node)})",
                    )
                )
                continue
            items = list(node.items())
            for key, _ in items:
                if len(str(key)) > MAX_KEY:
                    problems.append(
                        DesignError(
                            _path((*where, key)),
                            str(key),
                            f"a key of at most {MAX_KEY} characters (got {len(str(key))})",
                        )
                    )
            stack.extend(
                ((*where, key), value) for key, value in reversed(items) if len(str(key)) <= MAX_KEY
            )
            continue
        limit = MAX_STAGES if where == ("stages",) else MAX_ROWS
        if len(node) > limit:
            what = "stages" if where == ("stages",) else "items"
            problems.append(
                DesignError(_path(where), node, f"at most {limit} {what} (got {len(node)})")
            )
            continue
        stack.extend(((*where, i), value) for i, value in reversed(list(enumerate(node))))
    return problems
