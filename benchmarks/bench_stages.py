"""How `resplan check` scales with the number of analog stages.

Not collected by pytest. A chain of N tiny passive RC stages (10 Ω, 1 nF each;
INVENTED) between the minimal example's sensor and its delta-sigma ADC is
checked for growing N, each in a fresh subprocess with a time limit, and the
wall time is printed. The target (issue 15) is 1,000 stages in under a second:
the work must be linear in the number of stages.

    python benchmarks/bench_stages.py [--counts 1,3,10,30,100,1000] [--limit 120]
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import time
from pathlib import Path

STAGE = '[[stages]]\ntype = "rc_filter"\nresistance = "10 ohm"\ncapacitance = "1 nF"\n\n'


def design_with(count: int) -> str:
    """The minimal example with ``count`` tiny RC stages in front of its own RC."""
    base = (Path(__file__).parents[1] / "examples" / "minimal.toml").read_text(encoding="utf-8")
    return base.replace("[[stages]]", STAGE * count + "[[stages]]", 1)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--counts", default="1,3,10,30,100,1000")
    ap.add_argument("--limit", type=float, default=120.0, help="seconds per run")
    args = ap.parse_args()
    folder = Path(tempfile.mkdtemp(prefix="bench-stages-"))
    print(f"{'stages':>7}  {'check, s':>9}  exit")
    for count in (int(c) for c in args.counts.split(",")):
        path = folder / f"rc{count}.toml"
        path.write_text(design_with(count), encoding="utf-8")
        start = time.perf_counter()
        try:
            done = subprocess.run(
                [sys.executable, "-m", "resplan", "check", str(path)],
                capture_output=True,
                timeout=args.limit,
            )
            seconds, code = time.perf_counter() - start, str(done.returncode)
        except subprocess.TimeoutExpired:
            seconds, code = time.perf_counter() - start, f"over {args.limit:g} s"
        print(f"{count:>7}  {seconds:>9.2f}  {code}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
