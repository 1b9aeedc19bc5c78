"""The nodal noise solver against ngspice, an independent circuit simulator.

Reference: ngspice (its ``.noise`` analysis: ``onoise_spectrum`` and
``onoise_total``; its ``.ac`` analysis for signal gains), run through
``tests/spice_harness.py``, which writes each netlist as an independent deck
(op amps as controlled-source macros, noise sources as scaled resistor noise
generators; see the harness docstring).

Every circuit here is INVENTED: round values of the size the trade meets, not
the data of any real part.

Each case is compared on

- the output density at 5 frequencies spread over the sweep, and
- the integrated output rms over the sweep, which is the stated band (ngspice
  integrates each generator as a power law between grid points; so does
  :func:`resplan.noise.nodal.integrate_psd`),
- the signal transfer (complex) on the whole grid when a signal input is named,

each within 1e-5 relative (the project asks for 1e-3; the tighter bound catches
more). What limits agreement: ngspice's Boltzmann constant (CODATA 2014, 3.5e-7
relative in power from the exact SI value, 1.75e-7 in density) and its split of a
1/f + white generator into two power-law integrals. Observed worst differences
are below 3e-7 on every case (densities, rms and signal transfers).

The tests skip, with the reason shown, when ngspice is not installed, and fail
when the environment variable CI is "true".
"""

from __future__ import annotations

import math
import sys
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))

from invented import (  # noqa: E402
    invented_balanced_source,
    invented_bessel_fourth_mfb,
    invented_follower,
    invented_inverting,
    invented_mfb_gain,
    invented_non_inverting,
    invented_rc_into_amplifier,
    invented_rc_ladder,
    invented_rc_lowpass,
    invented_sallen_key_fourth,
    invented_sallen_key_unity,
    invented_transimpedance,
    invented_warm_resistor,
)
from spice_harness import require_ngspice, run_noise  # noqa: E402

from resplan.noise.netlist import (  # noqa: E402
    BOLTZMANN_J_PER_K,
    Netlist,
)
from resplan.noise.nodal import solve_noise  # noqa: E402

TOLERANCE = 1e-5


@dataclass(frozen=True)
class SpiceCase:
    """A circuit and the band it is compared over (a decade sweep: f_high = f_low·10^k)."""

    name: str
    build: Callable[[], Netlist]
    f_low_hz: float
    f_high_hz: float


CASES = [
    SpiceCase("1 RC low-pass", invented_rc_lowpass, 1.0, 1e7),
    SpiceCase("2 RC ladder", invented_rc_ladder, 1.0, 1e7),
    SpiceCase("3 non-inverting", invented_non_inverting, 0.1, 1e7),
    SpiceCase("4a follower, 10 kOhm source", invented_follower(10e3), 0.1, 1e7),
    SpiceCase("4b follower, 100 kOhm source", invented_follower(100e3), 0.1, 1e7),
    SpiceCase("5 RC 80 Hz into amplifier", invented_rc_into_amplifier, 1.0, 1e7),
    SpiceCase("6 Sallen-Key unity", invented_sallen_key_unity, 1.0, 1e8),
    SpiceCase("7 Sallen-Key 4th order", invented_sallen_key_fourth, 1.0, 1e7),
    SpiceCase("8 MFB gain 10", invented_mfb_gain, 1.0, 1e7),
    SpiceCase("9 inverting", invented_inverting, 0.1, 1e7),
    SpiceCase("10 transimpedance", invented_transimpedance, 1.0, 1e7),
    SpiceCase("11 balanced source", invented_balanced_source, 1.0, 1e6),
    SpiceCase("12 Bessel 4th order MFB", invented_bessel_fourth_mfb, 1.0, 1e7),
    SpiceCase("13 resistor at its own temperature", invented_warm_resistor, 1.0, 1e8),
]

POINTS_PER_DECADE = 50


def compare(case: SpiceCase) -> dict[str, float]:
    """Worst relative differences between ngspice and the solver for one case."""
    net = case.build()
    spice = run_noise(net, case.f_low_hz, case.f_high_hz, POINTS_PER_DECADE)
    assert spice.frequency_hz[-1] == pytest.approx(case.f_high_hz, rel=1e-9), (
        "align the band to the decade grid"
    )
    sol = solve_noise(net, spice.frequency_hz)
    ours = sol.total_density_v_per_rthz
    picks = np.unique(np.round(np.linspace(0, spice.frequency_hz.size - 1, 5)).astype(int))
    density = float(np.max(np.abs(ours[picks] / spice.onoise_v_per_rthz[picks] - 1.0)))
    every = float(np.max(np.abs(ours / spice.onoise_v_per_rthz - 1.0)))
    rms = abs(sol.rms_v() / spice.onoise_total_v - 1.0)
    out = {"density_5": density, "density_all": every, "rms": rms}
    if spice.ac_transfer is not None:
        h = sol.signal_transfer
        out["signal"] = float(np.max(np.abs(h - spice.ac_transfer) / np.abs(spice.ac_transfer)))
    return out


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_solver_agrees_with_ngspice(case: SpiceCase) -> None:
    require_ngspice()
    worst = compare(case)
    assert worst["density_5"] <= TOLERANCE, worst
    assert worst["rms"] <= TOLERANCE, worst
    assert worst.get("signal", 0.0) <= TOLERANCE, worst


def test_rc_output_rms_over_a_wide_band_is_ktc() -> None:
    """ngspice's integral of an RC's output noise, 10 mHz to 10 GHz, against √(kT/C).

    Source: the equipartition result ½C⟨v²⟩ = ½kT (Nyquist 1928), k from
    scipy.constants (SI 2019 exact). The band misses 4e-6 of the power below
    10 mHz and 1e-7 above 10 GHz; ngspice's k differs by 3.5e-7; the power-law rule
    between grid points errs by about 3e-6 at 200 points per decade (it falls as
    1/n²: 2.8e-4 at 20 points per decade): 1e-5 covers all of them.
    """
    from scipy import constants

    require_ngspice()
    net = invented_rc_lowpass()
    spice = run_noise(net, 1e-2, 1e10, 200)
    expected = math.sqrt(constants.k * net.temperature_k / 10e-9)
    assert spice.onoise_total_v == pytest.approx(expected, rel=1e-5)
    assert solve_noise(net, spice.frequency_hz).rms_v() == pytest.approx(expected, rel=1e-5)


def test_rc_ladder_output_rms_is_ktc_of_the_output_capacitor() -> None:
    """Two loaded RC sections: the output rms over all frequencies is √(kT/C₂) exactly.

    Source: Nyquist (1928) equipartition — with every capacitor to ground, the
    stored energy is Σ ½C_i v_i², so each node voltage has ⟨v_i²⟩ = kT/C_i,
    whatever the resistors. Band, grid and tolerance as for the single RC (the
    band misses 5e-7 of the power below 1 mHz).
    """
    require_ngspice()
    net = invented_rc_ladder()
    spice = run_noise(net, 1e-3, 1e10, 200)
    expected = math.sqrt(BOLTZMANN_J_PER_K * net.temperature_k / 2.2e-9)
    assert spice.onoise_total_v == pytest.approx(expected, rel=1e-5)
    assert solve_noise(net, spice.frequency_hz).rms_v() == pytest.approx(expected, rel=1e-5)
