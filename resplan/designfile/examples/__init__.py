"""Embedded example designs: invented scenarios that teach the design-file format.

Each example is a commented TOML design file shipped with the package
(``resplan/examples/NAME.toml``). Its first line is ``# NAME: one-line
description``; :func:`list_examples` reads it from there. Every part and
scenario in them is invented and labelled so.

Examples
--------
>>> DEFAULT_EXAMPLE in EXAMPLE_NAMES
True
>>> example_text("hive-scale").startswith("# hive-scale:")
True
"""

from __future__ import annotations

import difflib
from importlib.resources import files

from ...errors import DesignError

__all__ = ["EXAMPLE_NAMES", "DEFAULT_EXAMPLE", "list_examples", "example_text", "load_example"]

#: The examples, in the order ``resplan init --list`` shows them.
EXAMPLE_NAMES: tuple[str, ...] = (
    "hive-scale",
    "soil-temperature",
    "pipeline-vibration",
    "kickoff-bridge",
    "hive-spread",
    "tank-pressure",
    "turbidity-photodiode",
)
#: What ``resplan init`` writes without ``--example``.
DEFAULT_EXAMPLE = "hive-scale"


def _check(name: str) -> str:
    if name not in EXAMPLE_NAMES:
        hint = difflib.get_close_matches(str(name), EXAMPLE_NAMES, n=1, cutoff=0.5)
        more = f' (did you mean "{hint[0]}"?)' if hint else ""
        raise DesignError("--example", name, "one of " + ", ".join(EXAMPLE_NAMES) + more)
    return name


def example_text(name: str) -> str:
    """The commented TOML text of an example.

    Raises
    ------
    DesignError
        For a name that is not an example (with a suggestion).
    """
    return files(__name__).joinpath(f"{_check(name)}.toml").read_text(encoding="utf-8")


def list_examples() -> list[tuple[str, str]]:
    """(name, one-line description) of every example."""
    out = []
    for name in EXAMPLE_NAMES:
        first = example_text(name).splitlines()[0]
        out.append((name, first.removeprefix("#").strip().removeprefix(f"{name}:").strip()))
    return out


def load_example(name: str):
    """Load an example as a :class:`resplan.chain.design.Design` (source ``<example NAME>``)."""
    from ..load import loads_design

    return loads_design(example_text(name), f"<example {_check(name)}>")
