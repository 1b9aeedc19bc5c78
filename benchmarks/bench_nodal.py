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

ROOT = Path(__file__).resolve().parent.parent
sys.path[:0] = [str(ROOT), str(ROOT / "tests")]

from invented import invented_filter_chain  # noqa: E402  (tests/invented.py, circuit 14)

from resplan.noise.nodal import build_mna, solve_noise  # noqa: E402

TARGET_S = 5e-3
GRID_POINTS = 2000


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=50)
    parser.add_argument("--profile", action="store_true")
    args = parser.parse_args()

    net = invented_filter_chain()
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
