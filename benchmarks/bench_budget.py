"""Time a forward budget of a four-stage chain on a 2,000-point frequency grid.

Target: under 5 ms per budget. Two paths are timed:

- cold: a chain never seen before — every cache of :mod:`resplan.noise.bandwidth` and
  :mod:`resplan.noise.responses` is cleared before each run, so every noise bandwidth,
  integration grid and lobe mean is computed afresh;
- warm: the same chain again, with the caches filled by the run before.

The chain is INVENTED (see ``invented_chain``): sensor → in-amp → op-amp gain stage →
4th-order Butterworth → RC → delta-sigma ADC with a sinc3 decimator. It is not a
timed test; run it by hand:

    python3 benchmarks/bench_budget.py [--runs N] [--profile]
"""

from __future__ import annotations

import argparse
import cProfile
import pstats
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from resplan import (  # noqa: E402
    Band,
    bandwidth,
    forward_budget,
    responses,
)
from resplan.chain.signal_chain import Chain  # noqa: E402

TARGET_S = 5e-3
GRID_POINTS = 2000


def invented_chain() -> Chain:
    """The INVENTED four-stage chain the tests use (tests/conftest.py), demo values only."""
    sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))
    from conftest import invented_four_stage_chain

    return invented_four_stage_chain()


def clear_caches() -> None:
    """Forget every cached integral, grid and prototype, as for a chain never seen before."""
    bandwidth._cached_noise_bandwidth.cache_clear()
    bandwidth._cached_base_grid.cache_clear()
    bandwidth._fast_mean.cache_clear()
    for name in ("_bessel_magnitude_poly", "_numerical_enbw_ratio"):
        cached = getattr(responses, name, None)
        if cached is not None:
            cached.cache_clear()


def run_once(chain: Chain, band: Band) -> float:
    start = time.perf_counter()
    forward_budget(chain, band, grid_points=GRID_POINTS)
    return time.perf_counter() - start


def measure(runs: int) -> dict[str, list[float]]:
    chain = invented_chain()
    band = Band(0.01)
    forward_budget(chain, band, grid_points=GRID_POINTS)  # imports and first-call set-up
    cold, warm = [], []
    for _ in range(runs):
        clear_caches()
        cold.append(run_once(chain, band))
        warm.append(run_once(chain, band))
    return {"cold": cold, "warm": warm}


def report(times: dict[str, list[float]]) -> bool:
    ok = True
    print(
        f"forward budget, four-stage invented chain, {GRID_POINTS}-point grid; target "
        f"{TARGET_S * 1e3:.1f} ms"
    )
    for path, values in times.items():
        median = statistics.median(values)
        best = min(values)
        passed = median < TARGET_S
        ok = ok and passed
        print(
            f"  {path:4s}: median {median * 1e3:7.3f} ms, best {best * 1e3:7.3f} ms "
            f"of {len(values)} runs  {'PASS' if passed else 'FAIL'}"
        )
    return ok


def profile() -> None:
    chain = invented_chain()
    band = Band(0.01)
    forward_budget(chain, band, grid_points=GRID_POINTS)
    clear_caches()
    profiler = cProfile.Profile()
    profiler.enable()
    forward_budget(chain, band, grid_points=GRID_POINTS)
    profiler.disable()
    print("\ncold run, by cumulative time:")
    pstats.Stats(profiler).sort_stats("cumulative").print_stats(18)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=50, help="runs of each path (default 50)")
    parser.add_argument("--profile", action="store_true", help="profile one cold run")
    args = parser.parse_args(argv)
    ok = report(measure(args.runs))
    if args.profile:
        profile()
    return 0 if ok else 1


if __name__ == "__main__":
    raise SystemExit(main())
