"""Atomic file output: write beside the target, then rename over it.

A reader never sees a half-written file, and an existing file is untouched
unless the whole new one was written. The new file gets the usual permissions
(0666 less the umask), not the private mode of a temporary file.

Faults are survived, not just avoided:

- a target that is not a regular file or a new path (a folder, a FIFO, a
  device) is refused before anything is written (:func:`check_output_target`),
  as is a folder that cannot be written to;
- the temporary file is named ``.NAME.PID-XXXXXXXX.partial`` (the process that
  writes it in its name), removed on any error or interrupt, and a leftover
  of a run that was killed outright (SIGKILL, power loss) is removed by the next
  run that writes into the same folder (:func:`remove_stale_partials`): only
  files of exactly this pattern, and only when the process that wrote them is
  gone (or, without a process id, when they are more than an hour old);
- SIGTERM is turned into the same interrupt as Ctrl-C while a command runs
  (:func:`sigterm_as_interrupt`), so the clean-up runs for it too.
"""

from __future__ import annotations

import contextlib
import os
import re
import signal
import stat
import tempfile
import threading
import time
from collections.abc import Iterator
from pathlib import Path

from ..errors import DesignError, describe_file_kind

__all__ = [
    "atomic_path",
    "write_bytes_atomic",
    "write_text_atomic",
    "check_output_target",
    "check_output_folder",
    "remove_stale_partials",
    "sigterm_as_interrupt",
    "Terminated",
    "PARTIAL_PATTERN",
]

#: The temporary files this module writes: ``.NAME.PID-XXXXXXXX.partial``; the older
#: form without the process id, ``.NAME.XXXXXXXX.partial``, is recognised too.
PARTIAL_PATTERN = re.compile(r"^\.(?P<name>.+?)\.(?:(?P<pid>\d+)-)?[A-Za-z0-9_]{8}\.partial$")
#: A leftover without a process id is taken as stale after this long, s.
_STALE_WITHOUT_PID_S = 3600.0


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask




def check_output_target(path: str | os.PathLike, field: str = "output") -> Path:
    """Refuse an output path that is not a regular file or a new path in a writable folder.

    Called before any expensive work, so that a bad ``-o`` costs nothing.

    Raises
    ------
    DesignError
        Naming ``field``, the path and what was expected.
    """
    target = Path(path)
    try:
        info = os.stat(target)
    except FileNotFoundError:
        info = None
    except OSError as err:
        raise DesignError(
            field, str(target), f"a path that can be written ({err.strerror})"
        ) from None
    if info is not None and not stat.S_ISREG(info.st_mode):
        kind = describe_file_kind(info.st_mode)
        raise DesignError(field, str(target), f"a regular file or a new path (this is {kind})")
    folder = target.parent
    if not folder.is_dir():
        raise DesignError(field, str(target), "a path in an existing folder")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise DesignError(field, str(target), "a path in a folder you can write to")
    return target


def check_output_folder(path: str | os.PathLike, field: str = "figures") -> Path:
    """Refuse an output folder that is not a folder, or that cannot be made or written to."""
    folder = Path(path)
    if folder.exists():
        if not folder.is_dir():
            raise DesignError(field, str(folder), "a folder (a file of that name exists)")
        if not os.access(folder, os.W_OK | os.X_OK):
            raise DesignError(field, str(folder), "a folder you can write to")
        return folder
    parent = next((p for p in folder.absolute().parents if p.exists()), None)
    if parent is None or not parent.is_dir() or not os.access(parent, os.W_OK | os.X_OK):
        raise DesignError(
            field, str(folder), "a folder that can be made (its parent is not writable)"
        )
    return folder


def _process_alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OverflowError, ValueError):
        return True  # someone else's process (or an absurd number): leave its file alone
    return True


def remove_stale_partials(folder: str | os.PathLike) -> list[Path]:
    """Remove the temporary files left in ``folder`` by runs that were killed.

    Only names matching :data:`PARTIAL_PATTERN`, only regular files, and only
    when the writing process is gone (no process id: older than an hour).

    Returns
    -------
    list of Path
        The files removed.
    """
    removed: list[Path] = []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    now = time.time()
    for entry in entries:
        m = PARTIAL_PATTERN.match(entry.name)
        if m is None:
            continue
        try:
            info = entry.stat(follow_symlinks=False)
        except OSError:
            continue
        if not stat.S_ISREG(info.st_mode):
            continue
        pid = m.group("pid")
        stale = (
            not _process_alive(int(pid))
            if pid is not None
            else now - info.st_mtime > _STALE_WITHOUT_PID_S
        )
        if stale:
            with contextlib.suppress(OSError):
                os.unlink(entry.path)
                removed.append(Path(entry.path))
    return removed


@contextlib.contextmanager
def atomic_path(path: str | os.PathLike) -> Iterator[Path]:
    """Yield a temporary path in the target's folder; rename it over ``path`` on success.

    On any exception inside the block (an interrupt included) the temporary file
    is removed and the exception propagates; ``path`` is left as it was.

    Raises
    ------
    DesignError
        The target is not a regular file or a new path (see :func:`check_output_target`).
    """
    target = check_output_target(path)
    remove_stale_partials(target.parent)
    fd, name = tempfile.mkstemp(
        dir=target.parent, prefix=f".{target.name}.{os.getpid()}-", suffix=".partial"
    )
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


class Terminated(KeyboardInterrupt):
    """SIGTERM received: handled as an interrupt, so temporary files are removed."""


def _raise_terminated(signum, frame):  # pragma: no cover - exercised in a subprocess
    raise Terminated()


@contextlib.contextmanager
def sigterm_as_interrupt() -> Iterator[None]:
    """While inside, SIGTERM raises :class:`Terminated` (a KeyboardInterrupt).

    Only in the main thread and only when SIGTERM has its default action (an
    application embedding resplan keeps its own handler).
    """
    install = (
        threading.current_thread() is threading.main_thread()
        and signal.getsignal(signal.SIGTERM) == signal.SIG_DFL
    )
    if not install:
        yield
        return
    previous = signal.signal(signal.SIGTERM, _raise_terminated)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)
