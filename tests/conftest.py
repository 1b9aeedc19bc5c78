"""Fixtures shared by the tests; the invented chains themselves live in invented.py."""

from __future__ import annotations

import os

import pytest
from hypothesis import settings
from invented import (
    invented_bridge_chain,
    invented_four_stage_chain,
    invented_vibration_chain,
)

# CI must be reproducible: the same commit gives the same examples. Locally the
# property tests keep exploring new examples on every run.
settings.register_profile("ci", derandomize=True, print_blob=True)
if os.environ.get("CI") == "true":
    settings.load_profile("ci")


@pytest.fixture
def bridge_chain():
    """Builder of the INVENTED load-cell chain (see :func:`invented_bridge_chain`)."""
    return invented_bridge_chain


@pytest.fixture
def vibration_chain():
    """Builder of the INVENTED SAR vibration chain (see :func:`invented_vibration_chain`)."""
    return invented_vibration_chain


@pytest.fixture
def four_stage_chain():
    """Builder of the INVENTED four-stage chain (see :func:`invented_four_stage_chain`)."""
    return invented_four_stage_chain
