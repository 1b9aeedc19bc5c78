"""Wall time of a full PDF report of each complete embedded example, imports included.

Each run is a fresh interpreter that imports resplan, loads the example, and
writes the report (budget, plan, figures at 200 dpi, PDF) to a temporary
folder: what ``resplan report`` costs a user. The target is 4 s on a 2-core
machine. With ``--figures`` the PNG and SVG files are written too.

This is a measurement, not a test: machines differ and a loaded machine is
slower. Usage::

    python3 benchmarks/bench_report.py [--runs 3] [--example hive-scale] [--figures]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

TARGET_S = 4.0

_SCRIPT = """
import sys
from resplan.designfile.examples import load_example
from resplan.output.report import write_report
folder = sys.argv[2]
figures = sys.argv[3] == "1"
write_report(load_example(sys.argv[1]), folder + "/report.pdf",
             figures_dir=(folder + "/figures") if figures else None)
"""


def _complete_examples() -> list[str]:
    from resplan.designfile.examples import EXAMPLE_NAMES, load_example

    return [name for name in EXAMPLE_NAMES if load_example(name).is_complete]


def _run(name: str, figures: bool) -> float:
    with tempfile.TemporaryDirectory() as tmp:
        cmd = [sys.executable, "-c", _SCRIPT, name, tmp, "1" if figures else "0"]
        start = time.perf_counter()
        done = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, check=False)
        elapsed = time.perf_counter() - start
        if done.returncode != 0:
            raise SystemExit(f"report of {name} failed:\n{done.stderr.decode()}")
        if not (Path(tmp) / "report.pdf").is_file():
            raise SystemExit(f"report of {name} wrote no PDF")
    return elapsed


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=3, help="runs per example; the best counts")
    parser.add_argument("--example", help="one embedded example (default: every complete one)")
    parser.add_argument("--figures", action="store_true", help="also write PNG and SVG files")
    args = parser.parse_args(argv)

    names = [args.example] if args.example else _complete_examples()
    print(f"machine: {os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.2f}")
    worst = 0.0
    for name in names:
        _run(name, args.figures)  # warm the file cache and the .pyc files
        times = sorted(_run(name, args.figures) for _ in range(args.runs))
        best = times[0]
        worst = max(worst, best)
        verdict = "PASS" if best < TARGET_S else "FAIL"
        extra = " with figure files" if args.figures else ""
        print(
            f"resplan report {name}{extra}: best {best:.2f} s, median "
            f"{times[len(times) // 2]:.2f} s over {args.runs} runs "
            f"(target < {TARGET_S:.1f} s) {verdict}"
        )
    print(f"result: worst best-of-runs {worst:.2f} s: " + ("PASS" if worst < TARGET_S else "FAIL"))
    return 0


if __name__ == "__main__":
    sys.exit(main())
