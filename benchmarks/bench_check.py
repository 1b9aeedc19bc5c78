"""Start-up time of ``resplan check`` on an embedded example, Python start-up included.

Runs ``python -m resplan check FILE`` in a fresh interpreter N times and prints
the best wall time against the target (0.6 s on a 2-core machine). Also runs
``-X importtime`` once and lists the slowest imports, and says whether any
module that must stay off this path (matplotlib, reportlab, scipy) was loaded.
It also checks every complete embedded example for modules its units do not
need: pint reads only units outside resplan.units.tables, so a design with
exotic units may load it, but the examples must not.

This is a measurement, not a test: machines differ and a loaded machine is
slower. Usage::

    python3 benchmarks/bench_check.py [--runs 10] [--example hive-scale]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

TARGET_S = 0.6
#: Modules that must never load on the check path.
FORBIDDEN = ("matplotlib", "reportlab", "scipy")
#: Modules the common units do not need (a design with exotic units may load them).
NOT_NEEDED = ("pint",)


def _write_example(name: str, folder: Path) -> Path:
    from resplan.designfile.examples import example_text

    path = folder / f"{name}.toml"
    path.write_text(example_text(name), encoding="utf-8")
    return path


def _complete_examples() -> list[str]:
    from resplan.designfile.examples import EXAMPLE_NAMES, load_example

    return [name for name in EXAMPLE_NAMES if load_example(name).is_complete]


def _run(cmd: list[str]) -> float:
    start = time.perf_counter()
    done = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, check=False)
    elapsed = time.perf_counter() - start
    if done.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(cmd)} failed:\n{done.stderr.decode()}")
    return elapsed


_PROBE = """
import atexit, runpy, sys
def report():
    loaded = sorted({m.split(".")[0] for m, mod in sys.modules.items() if mod is not None})
    print("LOADED " + " ".join(loaded), file=sys.stderr)
atexit.register(report)
sys.argv = ["resplan", "check", sys.argv[1]]
runpy.run_module("resplan", run_name="__main__")
"""


def _loaded(path: Path) -> set[str]:
    """Top-level modules present in sys.modules at exit of a check run."""
    done = subprocess.run(
        [sys.executable, "-c", _PROBE, str(path)],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        check=False,
        text=True,
    )
    for line in done.stderr.splitlines():
        if line.startswith("LOADED "):
            return set(line.split()[1:])
    raise SystemExit(f"probe failed:\n{done.stderr}")


def _imports(cmd: list[str]) -> list[tuple[int, str]]:
    """(cumulative µs, module) from -X importtime, slowest first."""
    done = subprocess.run(
        [cmd[0], "-X", "importtime", *cmd[1:]],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        check=False,
        text=True,
    )
    rows = []
    for line in done.stderr.splitlines():
        if not line.startswith("import time:") or "|" not in line:
            continue
        parts = line.split("|")
        try:
            cumulative = int(parts[1])
        except ValueError:
            continue
        rows.append((cumulative, parts[2].strip()))
    rows.sort(reverse=True)
    return rows


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=10, help="runs; the best is reported")
    parser.add_argument("--example", default="hive-scale", help="embedded example to check")
    args = parser.parse_args(argv)

    with tempfile.TemporaryDirectory() as tmp:
        path = _write_example(args.example, Path(tmp))
        cmd = [sys.executable, "-m", "resplan", "check", str(path)]
        _run(cmd)  # warm the file cache and the .pyc files
        times = sorted(_run(cmd) for _ in range(args.runs))
        bare = min(_run([sys.executable, "-c", "pass"]) for _ in range(5))
        rows = _imports(cmd)
        loaded = _loaded(path)
        needless = {}
        for name in dict.fromkeys([args.example, *_complete_examples()]):
            found = _loaded(_write_example(name, Path(tmp)))
            needless[name] = [m for m in NOT_NEEDED if m in found]

    best = times[0]
    print(
        f"resplan check {args.example}: best {best:.3f} s, median {times[len(times) // 2]:.3f} s "
        f"over {args.runs} runs (target < {TARGET_S} s; Python start-up alone {bare:.3f} s)"
    )
    print(f"machine: {os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.2f}")
    print("slowest imports (cumulative):")
    for cumulative, name in rows[:8]:
        print(f"  {cumulative / 1000:7.1f} ms  {name}")
    bad = [m for m in FORBIDDEN if m in loaded]
    print("forbidden modules loaded: " + (", ".join(bad) if bad else "none"))
    for name, modules in needless.items():
        shown = ", ".join(modules) if modules else "none"
        print(f"not needed ({', '.join(NOT_NEEDED)}), loaded by check {name}: {shown}")
    print("result: " + ("within target" if best < TARGET_S else "ABOVE target"))
    return 0


if __name__ == "__main__":
    sys.exit(main())
