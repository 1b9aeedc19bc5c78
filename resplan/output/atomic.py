"""Atomic file output: write beside the target, then rename over it.

A reader never sees a half-written file, and an existing file is untouched
unless the whole new one was written. The new file gets the usual permissions
(0666 less the umask), not the private mode of a temporary file.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Iterator
from pathlib import Path

__all__ = ["atomic_path", "write_bytes_atomic", "write_text_atomic"]


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


@contextlib.contextmanager
def atomic_path(path: str | os.PathLike) -> Iterator[Path]:
    """Yield a temporary path in the target's folder; rename it over ``path`` on success.

    On any exception inside the block the temporary file is removed and the
    exception propagates; ``path`` is left as it was.
    """
    target = Path(path)
    fd, name = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.", suffix=".partial")
    os.close(fd)
    temp = Path(name)
    try:
        yield temp
        os.chmod(temp, 0o666 & ~_umask())
        os.replace(temp, target)
    except BaseException:
        temp.unlink(missing_ok=True)
        raise


def write_bytes_atomic(path: str | os.PathLike, data: bytes) -> None:
    """Write ``data`` to ``path`` atomically."""
    with atomic_path(path) as temp:
        with open(temp, "wb") as out:
            out.write(data)
            out.flush()
            os.fsync(out.fileno())


def write_text_atomic(path: str | os.PathLike, text: str) -> None:
    """Write ``text`` (UTF-8, ``\\n`` line ends) to ``path`` atomically."""
    write_bytes_atomic(path, text.encode("utf-8"))
