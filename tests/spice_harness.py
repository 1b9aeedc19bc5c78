"""Run a resplan netlist through ngspice's noise and AC analyses, for comparison.

:func:`to_spice` writes a :class:`resplan.noise.netlist.Netlist` as an ngspice deck;
:func:`run_noise` runs ``ngspice -b`` on it and parses the output density
(``onoise_spectrum``), its integral (``onoise_total``) and, when the netlist names
a signal input, the AC transfer to the output.

How each part is written (the deck is an independent model of the same circuit):

- Resistor: an ngspice resistor; ``noisy=0`` when noiseless; a resistor at its own
  temperature gets ``dtemp`` (ngspice ignores a resistor's ``temp`` in noise analysis).
- Capacitor: an ngspice capacitor.
- Op amp: a VCCS of gain A₀ into a noiseless 1 Ω ∥ A₀/(2π·GBW) F node, buffered
  by a unity VCVS to the output: A(s) = A₀/(1 + sA₀/(2π·GBW)).
- Noise voltage, noise current and shot noise: a noise generator — a noisy 1 Ω
  resistor carrying 1 A DC from an ideal current source, flicker model
  ``kf = 4·k·T·f_c``, ``af = 2``, ``ef = 1`` — whose open-circuit voltage has
  density² 4kT·(1 + f_c/f) exactly (ngspice's resistor flicker noise is
  kf·I^af/f^ef); a VCVS (voltage) or VCCS (current) scales it to the wanted
  white density. The generator draws nothing from the circuit.
- Signal sources: ``ac 1`` on the named input, ``ac 0`` elsewhere; without a
  signal input a dummy source drives nothing and serves as ngspice's noise input.

ngspice runs at 27 °C by default; the deck sets ``.options temp`` to the netlist's
temperature. ngspice's Boltzmann constant is the CODATA 2014 value
1.38064852e-23 J/K (read from its output: a 1 Ω resistor at 300 K gives
density²/(4T) = 1.38064852e-23), against the exact SI 2019 value resplan uses: the
two differ by 3.5e-7 relative, far below the 1e-3 the tests ask for. The generator
gains use ngspice's own value so that a noise source's density is exact in ngspice.
"""

from __future__ import annotations

import math
import os
import shutil
import subprocess
import tempfile
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from resplan.noise.netlist import (
    GROUND,
    Capacitor,
    CurrentNoise,
    CurrentSource,
    Netlist,
    OpAmp,
    Resistor,
    ShotNoise,
    VoltageNoise,
    VoltageSource,
    part_nodes,
)

#: ngspice's Boltzmann constant (CODATA 2014), J/K, as measured from its output.
NGSPICE_BOLTZMANN_J_PER_K = 1.38064852e-23
#: Elementary charge, C (SI 2019 exact); ngspice is not asked for shot noise.
ELEMENTARY_CHARGE_C = 1.602176634e-19
KELVIN_AT_0_CELSIUS = 273.15


def ngspice_path() -> str | None:
    """Path of the ngspice executable, or None."""
    return shutil.which("ngspice")


def require_ngspice() -> str:
    """The ngspice path; skips the test when absent, fails it when CI is "true"."""
    import pytest

    path = ngspice_path()
    if path is None:
        reason = "ngspice is not installed (needed for the simulator comparisons)"
        if os.environ.get("CI") == "true":
            pytest.fail(f"{reason}; CI=true requires it")
        pytest.skip(reason)
    return path


@dataclass(frozen=True)
class SpiceResult:
    """What ngspice computed: frequencies (Hz), output density (V/√Hz), its rms (V), AC gain."""

    frequency_hz: np.ndarray
    onoise_v_per_rthz: np.ndarray
    onoise_total_v: float
    ac_transfer: np.ndarray | None
    deck: str


def _number(x: float) -> str:
    return f"{x:.17g}"


def to_spice(netlist: Netlist) -> tuple[str, str, dict[str, str]]:
    """The element cards of a netlist, the name of the noise input source, and the node map."""
    names: dict[str, str] = {GROUND: "0"}
    for node in netlist.nodes:
        names[node] = f"n{len(names)}"
    t = netlist.temperature_k
    four_kt = 4.0 * NGSPICE_BOLTZMANN_J_PER_K * t
    cards: list[str] = []
    models: list[str] = []

    def nodes(part) -> list[str]:
        return [names[n] for n in part_nodes(part)]

    def generator(i: int, corner_hz: float) -> str:
        g = f"ng{i}"
        cards.append(f"Igen{i} 0 {g} dc 1")
        if corner_hz > 0.0:
            models.append(f".model rgen{i} r(kf={_number(four_kt * corner_hz)} af=2 ef=1)")
            cards.append(f"Rgen{i} {g} 0 1 rgen{i}")
        else:
            cards.append(f"Rgen{i} {g} 0 1")
        return g

    input_source = None
    for i, part in enumerate(netlist.parts):
        if isinstance(part, Resistor):
            a, b = nodes(part)
            extra = " noisy=0" if part.noiseless else ""
            if part.temperature_k is not None and part.temperature_k != t:
                extra += f" dtemp={_number(part.temperature_k - t)}"
            cards.append(f"R{i} {a} {b} {_number(part.resistance_ohm)}{extra}")
        elif isinstance(part, Capacitor):
            a, b = nodes(part)
            cards.append(f"C{i} {a} {b} {_number(part.capacitance_f)}")
        elif isinstance(part, OpAmp):
            p, m, o = nodes(part)
            x = f"nx{i}"
            cards.append(f"Gamp{i} 0 {x} {p} {m} {_number(part.dc_gain)}")
            cards.append(f"Ramp{i} {x} 0 1 noisy=0")
            if math.isfinite(part.gbw_hz):
                cards.append(f"Camp{i} {x} 0 {_number(part.dc_gain / (2 * math.pi * part.gbw_hz))}")
            cards.append(f"Eamp{i} {o} 0 {x} 0 1")
        elif isinstance(part, VoltageNoise):
            p, m = nodes(part)
            g = generator(i, part.corner_hz)
            cards.append(
                f"Enoise{i} {p} {m} {g} 0 {_number(part.white_v_per_rthz / math.sqrt(four_kt))}"
            )
        elif isinstance(part, CurrentNoise | ShotNoise):
            a, b = nodes(part)
            if isinstance(part, CurrentNoise):
                white, corner = part.white_a_per_rthz, part.corner_hz
            else:
                white, corner = math.sqrt(2 * ELEMENTARY_CHARGE_C * abs(part.current_a)), 0.0
            g = generator(i, corner)
            cards.append(f"Gnoise{i} {a} {b} {g} 0 {_number(white / math.sqrt(four_kt))}")
        elif isinstance(part, VoltageSource | CurrentSource):
            a, b = nodes(part)
            ac = 1 if part.name == netlist.signal_input else 0
            letter = "V" if isinstance(part, VoltageSource) else "I"
            cards.append(f"{letter}sig{i} {a} {b} dc 0 ac {ac}")
            if ac:
                input_source = f"{letter}sig{i}"
        else:  # pragma: no cover - every part type is listed above
            raise TypeError(part)
    if input_source is None:
        cards.append("Vdummy ndummy 0 dc 0 ac 1")
        cards.append("Rdummy ndummy 0 1 noisy=0")
        input_source = "Vdummy"
    return "\n".join(cards + models), input_source, names


def _read_table(path: Path) -> np.ndarray:
    lines = path.read_text().splitlines()
    return np.array([[float(x) for x in line.split()] for line in lines[1:] if line.strip()])


def run_noise(
    netlist: Netlist,
    f_start_hz: float,
    f_stop_hz: float,
    points_per_decade: int = 50,
    timeout_s: float = 60.0,
) -> SpiceResult:
    """Run ngspice's ``.noise`` (and ``.ac`` when there is a signal input) on a decade grid."""
    exe = require_ngspice()
    cards, source, names = to_spice(netlist)
    out = names[netlist.output]
    ref = names[netlist.output_reference]
    probe = f"v({out})" if ref == "0" else f"v({out},{ref})"
    celsius = netlist.temperature_k - KELVIN_AT_0_CELSIUS
    sweep = f"dec {points_per_decade} {_number(f_start_hz)} {_number(f_stop_hz)}"
    with tempfile.TemporaryDirectory(prefix="resplan-spice-") as tmp:
        d = Path(tmp)
        ac_lines = ""
        if netlist.signal_input is not None:
            ac_lines = f"ac {sweep}\nwrdata {d / 'ac.txt'} {probe}\n"
        deck = (
            "resplan comparison deck\n"
            f".options temp={_number(celsius)} tnom={_number(celsius)}\n"
            f"{cards}\n"
            ".control\n"
            "set wr_singlescale\nset wr_vecnames\n"
            f"noise {probe} {source} {sweep}\n"
            f"setplot noise1\nwrdata {d / 'density.txt'} onoise_spectrum\n"
            f"setplot noise2\nwrdata {d / 'total.txt'} onoise_total\n"
            f"{ac_lines}"
            "quit 0\n.endc\n.end\n"
        )
        (d / "deck.cir").write_text(deck)
        run = subprocess.run(
            [exe, "-b", str(d / "deck.cir")],
            capture_output=True,
            text=True,
            timeout=timeout_s,
            check=False,
        )
        if run.returncode != 0 or not (d / "density.txt").exists():
            raise RuntimeError(
                f"ngspice failed ({run.returncode}):\n{run.stdout}\n{run.stderr}"
                f"\n--- deck ---\n{deck}"
            )
        density = _read_table(d / "density.txt")
        total = _read_table(d / "total.txt")
        ac = None
        if netlist.signal_input is not None:
            table = _read_table(d / "ac.txt")
            ac = table[:, 1] + 1j * table[:, 2]
    return SpiceResult(density[:, 0], density[:, 1], float(total[0, 0]), ac, deck)
