"""docs/api.md runs: every example of the Python walk-through is a doctest.

The parts in it are INVENTED (labelled so on the page); the numbers it shows
are what the code gives, so this checks that the page and the code agree, not
the physics (the physics is checked against outside references in
test_budget.py and test_hand.py).
"""

from __future__ import annotations

import doctest
from pathlib import Path

DOC = Path(__file__).parents[1] / "docs" / "api.md"


def test_the_walk_through_runs():
    result = doctest.testfile(
        str(DOC),
        module_relative=False,
        optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE,
        verbose=False,
        report=True,
    )
    assert result.attempted > 30
    assert result.failed == 0, f"{result.failed} example(s) of docs/api.md failed (see above)"


def test_the_walk_through_carries_the_safety_caution():
    text = " ".join(DOC.read_text(encoding="utf-8").replace(">", " ").split())
    assert "IEC 61010-1" in text and "licensed practice" in text
