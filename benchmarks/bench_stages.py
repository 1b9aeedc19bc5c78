"""How `resplan check` scales with the number of analog stages.

Not collected by pytest. A chain of N tiny passive RC stages (10 Ω, 1 nF each;
INVENTED) between the minimal example's sensor and its own RC is checked for
growing N, each in a fresh interpreter with a time limit; the best wall time of
``--repeats`` runs is printed. The start-up is the best wall time of checking the
minimal example itself (interpreter, imports and a one-stage check), and the work of
N stages is the wall time less that start-up.

Target (issue 15): 1,000 stages in under a second of work. The work must be linear in
the number of stages; the last column is the work per stage.

    python benchmarks/bench_stages.py [--counts 10,100,300,1000] [--repeats 3] [--limit 120]
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import time
from pathlib import Path

STAGE = '[[stages]]\ntype = "rc_filter"\nresistance = "10 ohm"\ncapacitance = "1 nF"\n\n'
TARGET_STAGES, TARGET_S = 1000, 1.0


def design_with(count: int) -> str:
    """The minimal example with ``count`` tiny RC stages in front of its own RC."""
    base = (Path(__file__).parents[1] / "examples" / "minimal.toml").read_text(encoding="utf-8")
    return base.replace("[[stages]]", STAGE * count + "[[stages]]", 1)


def timed_check(path: Path, limit: float, repeats: int) -> tuple[float, str]:
    """Best wall time of ``resplan check`` on ``path`` and its exit status."""
    best, code = float("inf"), ""
    for _ in range(repeats):
        start = time.perf_counter()
        try:
            done = subprocess.run(
                [sys.executable, "-m", "resplan", "check", str(path)],
                capture_output=True,
                timeout=limit,
            )
            code = str(done.returncode)
        except subprocess.TimeoutExpired:
            return time.perf_counter() - start, f"over {limit:.0f} s"
        best = min(best, time.perf_counter() - start)
    return best, code


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--counts", default="10,100,300,1000", help="total stages of each design")
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--limit", type=float, default=120.0, help="seconds per run")
    args = ap.parse_args()
    folder = Path(tempfile.mkdtemp(prefix="bench-stages-"))
    minimal = folder / "minimal.toml"
    minimal.write_text(design_with(0), encoding="utf-8")
    startup, _ = timed_check(minimal, args.limit, args.repeats)
    print(f"start-up (check of the one-stage minimal example): {startup:.3f} s")
    print(f"{'stages':>7}  {'wall, s':>8}  {'work, s':>8}  {'work/stage, ms':>14}  exit")
    verdict = None
    for total in (int(c) for c in args.counts.split(",")):
        path = folder / f"rc{total}.toml"
        path.write_text(design_with(total - 1), encoding="utf-8")
        seconds, code = timed_check(path, args.limit, args.repeats)
        work = max(seconds - startup, 0.0)
        print(f"{total:>7}  {seconds:>8.3f}  {work:>8.3f}  {1e3 * work / total:>14.3f}  {code}")
        if total == TARGET_STAGES:
            verdict = work < TARGET_S and code in ("0", "1")
    if verdict is not None:
        print(
            f"target: {TARGET_STAGES} stages in under {TARGET_S:.0f} s of work: "
            + ("PASS" if verdict else "FAIL")
        )
    return 0


if __name__ == "__main__":
    sys.exit(main())
