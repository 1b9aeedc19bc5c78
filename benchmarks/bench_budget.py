"""Time a forward budget of a four-stage chain on a 2,000-point frequency grid.

Target: under 5 ms per budget warm, 20 ms cold, for the four-stage chain and for each
complete embedded example (INVENTED designs). Two paths are timed:

- cold: a chain never seen before — every cache of :mod:`resplan.noise.bandwidth` and
  :mod:`resplan.noise.responses` and every solved circuit and transfer table of
  :mod:`resplan.chain.netlists` is cleared before each run, so every circuit, noise
  bandwidth, integration grid and lobe mean is computed afresh;
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

from resplan import Band, forward_budget  # noqa: E402
from resplan.chain import budget as budget_module  # noqa: E402
from resplan.chain import netlists  # noqa: E402
from resplan.chain.signal_chain import Chain  # noqa: E402
from resplan.noise import bandwidth, responses, sections  # noqa: E402

TARGET_S = 5e-3
#: A chain never seen before (every cache cleared), per embedded example.
COLD_TARGET_S = 20e-3
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
    bandwidth._image_panels.cache_clear()
    netlists.build_circuit.cache_clear()
    netlists.transfer_table.cache_clear()
    budget_module._path_bandwidths.cache_clear()
    sections._sections.cache_clear()
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


def measure_examples(runs: int) -> dict[str, list[float]]:
    """Cold and warm forward budgets of every complete embedded example (INVENTED designs)."""
    from resplan.designfile.examples import EXAMPLE_NAMES, load_example

    out = {}
    for name in EXAMPLE_NAMES:
        design = load_example(name)
        if design.open_parts:
            continue
        chain, band = design.chain(), design.band
        forward_budget(chain, band, grid_points=GRID_POINTS)
        cold, warm = [], []
        for _ in range(runs):
            clear_caches()
            cold.append(run_once(chain, band))
            warm.append(run_once(chain, band))
        out[f"{name} cold"] = cold
        out[f"{name} warm"] = warm
    return out


def report(times: dict[str, list[float]]) -> bool:
    ok = True
    print(
        f"forward budget on a {GRID_POINTS}-point grid; target {TARGET_S * 1e3:.1f} ms warm, "
        f"{COLD_TARGET_S * 1e3:.0f} ms cold"
    )
    for path, values in times.items():
        median = statistics.median(values)
        best = min(values)
        target = COLD_TARGET_S if path.endswith("cold") else TARGET_S
        passed = median < target
        ok = ok and passed
        print(
            f"  {path:28s}: median {median * 1e3:7.3f} ms, best {best * 1e3:7.3f} ms "
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
    times = {f"four-stage chain {k}": v for k, v in measure(args.runs).items()}
    times.update(measure_examples(args.runs))
    ok = report(times)
    if args.profile:
        profile()
    return 0 if ok else 1


if __name__ == "__main__":
    raise SystemExit(main())
