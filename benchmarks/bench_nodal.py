"""Time the nodal noise solver on a 30-node circuit and a 2,000-point frequency grid.

Target: a few milliseconds per solve (every noise transfer, every output PSD and
the signal transfer). Both methods of :func:`resplan.noise.nodal.solve_noise` are
timed: ``"lu"`` (numpy.linalg.solve on the stacked matrices, O(n³) per frequency)
and ``"schur"`` (one QZ form, then O(n²) per frequency).

The circuit is INVENTED: a non-inverting gain-10 stage followed by an 8th-order
Butterworth Sallen-Key cascade and a 4th-order Bessel multiple-feedback cascade
(30 nodes besides ground, 45 unknowns), every op amp with e_n, i_n± and a finite
GBW, every resistor noisy. It is not a timed test; run it by hand from the repository root:

    python3 benchmarks/bench_nodal.py [--runs N] [--profile]

On a shared machine set OPENBLAS_NUM_THREADS=1: the Schur path's many small
matrix products slow down several-fold when BLAS threads compete for a busy core.
"""

from __future__ import annotations

import argparse
import cProfile
import pstats
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from resplan.noise.netlist import Netlist, OpAmpModel, Resistor, VoltageSource  # noqa: E402
from resplan.noise.nodal import build_mna, solve_noise  # noqa: E402
from resplan.noise.sections import lowpass_cascade_parts  # noqa: E402

TARGET_S = 5e-3
GRID_POINTS = 2000


def invented_circuit() -> Netlist:
    """The benchmark circuit (invented values)."""
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=10e6,
        en_v_per_rthz=5e-9,
        en_corner_hz=10.0,
        in_plus_a_per_rthz=1e-12,
        in_minus_a_per_rthz=1e-12,
        in_corner_hz=100.0,
    )
    return Netlist(
        [
            VoltageSource("vin", "src", "0"),
            Resistor("sensor.R", "src", "cable", 1e3),
            Resistor("cable.R", "cable", "p", 10.0),
            *amp.parts("stages[0].opamp", "p", "m", "g"),
            Resistor("stages[0].RF", "g", "m", 9e3),
            Resistor("stages[0].RG", "m", "0", 1e3),
            *lowpass_cascade_parts("stages[1]", "butterworth", 8, 20e3, "g", "f1", amp),
            *lowpass_cascade_parts(
                "stages[2]", "bessel", 4, 50e3, "f1", "out", amp, topology="multiple-feedback"
            ),
        ],
        output="out",
        signal_input="vin",
    )


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=50)
    parser.add_argument("--profile", action="store_true")
    args = parser.parse_args()

    net = invented_circuit()
    grid = np.geomspace(0.1, 1e7, GRID_POINTS)
    mna = build_mna(net)
    print(
        f"circuit: {len(net.nodes)} nodes, {mna.size} unknowns, "
        f"{len(net.noise_sources)} noise sources; grid: {grid.size} points"
    )
    solve_noise(net, grid)  # first call: imports and set-up outside the timing

    if args.profile:
        profiler = cProfile.Profile()
        profiler.enable()
        for _ in range(args.runs):
            solve_noise(net, grid)
        profiler.disable()
        pstats.Stats(profiler).sort_stats("cumulative").print_stats(15)
        return 0

    verdicts = []
    for method in ("lu", "schur"):
        solve_noise(net, grid, method=method)
        times = []
        for _ in range(args.runs):
            start = time.perf_counter()
            solve_noise(net, grid, method=method)
            times.append(time.perf_counter() - start)
        median = statistics.median(times)
        verdict = "PASS" if median < TARGET_S else "FAIL"
        verdicts.append(verdict)
        print(
            f"solve_noise(method={method!r}): median {median * 1e3:.2f} ms, "
            f"best {min(times) * 1e3:.2f} ms over {args.runs} runs "
            f"(target {TARGET_S * 1e3:.0f} ms): {verdict}"
        )
    return 0 if "PASS" in verdicts else 1


if __name__ == "__main__":
    raise SystemExit(main())
