"""A long fuzz campaign: mutated design files through check, plan and report.

Not run by pytest (the quick run is ``tests/test_fuzz.py``). Every embedded example
is mutated (values swapped for hostile ones, numbers scaled by huge powers of
ten, lines deleted, duplicated, truncated, keys invented, stage types changed,
deep nesting, long and control-character text) and the result is run through
the command line in-process (click's CliRunner): every file through ``check``
or ``check --json``, a share through ``plan``, a smaller share through
``report``, and a sample in a fresh subprocess. A run counts as

- a traceback: any exception other than a clean exit;
- a hang: over ``--timeout`` seconds of CPU time, or six times that of wall time (a
  subprocess: twice the timeout of wall time);
- a bad exit: an exit code outside {0, 1, 2};
- a bad message: on exit 2, a stderr line that does not start with ``error:``,
  a repeated line, or any Python warning on stderr;
- bad output: ``--json`` that is not strict JSON (NaN, inf), a report that is
  not a whole PDF, or a ``.partial`` file left behind.

Usage::

    python benchmarks/fuzz_campaign.py --files 100000 --seconds 3600 --out /tmp/fuzz

The summary is printed and written to ``OUT/summary.json``; each failing file
is kept in ``OUT/failures/`` with what went wrong, for a regression test.
"""

from __future__ import annotations

import argparse
import json
import os
import random
import re
import signal
import subprocess
import sys
import tempfile
import time
import traceback
import warnings
from collections import Counter
from pathlib import Path

NASTY = [
    "0",
    "-1",
    "1e-320",
    "1e308",
    "-1e308",
    "1e309",
    "nan",
    "inf",
    "-inf",
    "true",
    "2024-05-01T10:00:00",
    "1979-05-27",
    "07:32:00",
    "[]",
    "[1, 2, 3]",
    "{}",
    '{ type = "rc_filter", open = true }',
    '""',
    '" "',
    '"1e-320 Hz"',
    '"1e308 Hz"',
    '"1e-320 F"',
    '"1e308 ohm"',
    '"1e309 nV"',
    '"1e308 V/rtHz"',
    '"1e308 V"',
    '"1e308 K"',
    '"1e-300 %"',
    '"100 %"',
    '"50 %"',
    '"1e-12 %"',
    '"0 Hz"',
    '"0 K"',
    '"-5 ohm"',
    '"0.3 Hz"',
    '"10 mV/V"',
    '"1e300 dB"',
    '"-1e300 dB"',
    '"10 furlong"',
    '"4.5 nV p-p"',
    '"1,5 V"',
    '"√√Hz"',
    '"((((((V))))))"',
    '"a\\nb"',
    '"a\\u0085b\\u2028c"',
    '"\\u0000"',
    '"' + "x" * 1500 + '"',
    '"' + "y" * 20000 + '"',
    "[" * 60 + "]" * 60,
    "9223372036854775807",
    "-9223372036854775808",
    "0.000000000000000000000000000001",
    '"1 nHz"',
    '"100 GHz"',
    '"1 TΩ"',
    '"1 mK"',
    '"1000 K"',
    "1099511627776",
    "1099511627777",
    '["0.1 Hz"]',
    '["0.1 Hz", "10 Hz", "1 kHz"]',
    '[["10 Hz", "40 nV"], ["10 Hz", "40 nV"]]',
    '[["1e-320 Hz", "1e308 V"]]',
]
STAGE_TYPES = ["noninverting", "amplifier", "rc_filter", "active_filter", "bogus"]
_ASSIGN = re.compile(r"^(\s*)([A-Za-z0-9_\-\"]+)\s*=\s*(.*)$")
_NUMBER = re.compile(r"(\d+(?:\.\d+)?(?:[eE][+-]?\d+)?)")


def _assignment_lines(lines: list[str]) -> list[int]:
    return [i for i, line in enumerate(lines) if _ASSIGN.match(line.split("#", 1)[0])]


def mutate(text: str, rng: random.Random) -> str:
    """One to three random mutations of a design file's text."""
    lines = text.split("\n")
    for _ in range(rng.choice((1, 1, 2, 3))):
        assigns = _assignment_lines(lines)
        op = rng.randrange(12)
        if op <= 2 and assigns:  # a hostile value
            i = rng.choice(assigns)
            m = _ASSIGN.match(lines[i].split("#", 1)[0])
            lines[i] = f"{m.group(1)}{m.group(2)} = {rng.choice(NASTY)}"
        elif op == 3 and assigns:  # a number scaled by a huge power of ten
            i = rng.choice(assigns)
            k = rng.choice((-320, -300, -50, -12, -5, 5, 12, 50, 300, 308))
            lines[i] = _NUMBER.sub(lambda n, k=k: f"{n.group(1)}e{k}", lines[i], count=1)
        elif op == 4 and lines:
            del lines[rng.randrange(len(lines))]
        elif op == 5 and lines:
            i = rng.randrange(len(lines))
            lines.insert(i, lines[i])
        elif op == 6 and lines:  # an unknown key somewhere
            i = rng.randrange(len(lines) + 1)
            key = rng.choice(("x", "resistnce", "k" * 10000, "e\u2028n", '"a\\nb"'))
            lines.insert(i, f"{key} = {rng.choice(NASTY)}")
        elif op == 7:
            typed = [i for i, line in enumerate(lines) if line.strip().startswith("type =")]
            if typed:
                lines[rng.choice(typed)] = f'type = "{rng.choice(STAGE_TYPES)}"'
        elif op == 8 and assigns:  # a sign flipped
            i = rng.choice(assigns)
            lines[i] = _NUMBER.sub(lambda n: f"-{n.group(1)}", lines[i], count=1)
        elif op == 9 and len(assigns) > 1:  # two values swapped
            a, b = rng.sample(assigns, 2)
            ma = _ASSIGN.match(lines[a].split("#", 1)[0])
            mb = _ASSIGN.match(lines[b].split("#", 1)[0])
            lines[a] = f"{ma.group(1)}{ma.group(2)} = {mb.group(3)}"
            lines[b] = f"{mb.group(1)}{mb.group(2)} = {ma.group(3)}"
        elif op == 10:  # many stages, or many rows
            block = (
                '\n[[stages]]\ntype = "rc_filter"\nresistance = "10 ohm"\ncapacitance = "1 nF"\n'
            )
            at = next((i for i, line in enumerate(lines) if line.startswith("[adc]")), len(lines))
            lines[at:at] = (block * rng.choice((2, 20, 1001))).split("\n")
        elif op == 11:  # truncated
            joined = "\n".join(lines)
            joined = joined[: rng.randrange(len(joined) + 1)]
            lines = joined.split("\n")
    return "\n".join(lines)


class Hang(Exception):
    pass


def _alarm(signum, frame):
    raise Hang()


#: Wall time allowed per run, as a multiple of the CPU-time limit: on a shared machine a
#: run at low priority may wait for the processor far longer than it computes.
WALL_FACTOR = 6


def _examples() -> dict[str, str]:
    from resplan.designfile.examples import EXAMPLE_NAMES, example_text

    out = {name: example_text(name) for name in EXAMPLE_NAMES}
    for path in sorted(Path(__file__).parents[1].joinpath("examples").glob("*.toml")):
        out.setdefault(path.stem, path.read_text(encoding="utf-8"))
    return out


def judge(command: str, result, folder: Path, seconds: float) -> list[str]:
    """What went wrong with one run (empty when it went right)."""
    problems = []
    exc = result.exception
    if isinstance(exc, Hang):  # the time limit fired inside the command
        problems.append(f"hang: over the time limit ({seconds:.0f} s of CPU)")
        return problems
    if exc is not None and not isinstance(exc, SystemExit):
        tb = "".join(traceback.format_exception(type(exc), exc, exc.__traceback__)[-3:])
        problems.append(f"traceback {type(exc).__name__}: {exc!s:.200} | {tb!s:.400}")
        return problems
    if result.exit_code not in (0, 1, 2):
        problems.append(f"exit {result.exit_code}")
    err = result.stderr
    if "Warning" in err or "warn(" in err:
        problems.append(f"warning on stderr: {err[:200]}")
    lines = [line for line in err.splitlines() if line.strip()]
    if result.exit_code == 2:
        if not lines:
            problems.append("exit 2 without a message")
        bad = [line for line in lines if not line.startswith("error: ")]
        if bad:
            problems.append(f"stderr line not starting with error: {bad[0][:200]}")
        if len(set(lines)) != len(lines):
            problems.append("a problem printed twice")
        if any(len(line) > 2000 for line in lines):
            problems.append("a message line over 2000 characters")
    if command == "check --json" and result.exit_code in (0, 1):
        try:
            json.loads(result.stdout, parse_constant=lambda c: (_ for _ in ()).throw(ValueError(c)))
        except ValueError as e:
            problems.append(f"bad JSON: {e!s:.200}")
    if command == "report":
        pdf = folder / "out.pdf"
        if result.exit_code == 0:
            data = pdf.read_bytes() if pdf.exists() else b""
            if not (data.startswith(b"%PDF") and b"%%EOF" in data[-64:]):
                problems.append("report: not a whole PDF")
        leftovers = [p.name for p in folder.iterdir() if p.name.endswith(".partial")]
        if leftovers:
            problems.append(f"report left {leftovers}")
        pdf.unlink(missing_ok=True)
    if seconds > 20:
        problems.append(f"slow: {seconds:.1f} s of CPU")
    return problems


def run_one(runner, main, args: list[str], timeout: float):
    """Run one command in-process; a hang is over ``timeout`` s of CPU time (a loop) or
    over WALL_FACTOR times that of wall time (a blocked read). Returns the result and
    the CPU seconds it took."""
    signal.signal(signal.SIGALRM, _alarm)
    signal.signal(signal.SIGPROF, _alarm)
    signal.setitimer(signal.ITIMER_PROF, timeout)
    signal.setitimer(signal.ITIMER_REAL, WALL_FACTOR * timeout)
    start = time.process_time()
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("default")
            result = runner.invoke(main, args, catch_exceptions=True)
    finally:
        signal.setitimer(signal.ITIMER_PROF, 0)
        signal.setitimer(signal.ITIMER_REAL, 0)
    return result, time.process_time() - start


def subprocess_check(path: Path, timeout: float) -> list[str]:
    try:
        done = subprocess.run(
            [sys.executable, "-m", "resplan", "check", "--json", str(path)],
            capture_output=True,
            text=True,
            timeout=timeout,
            env={**os.environ, "PYTHONWARNINGS": "default"},
        )
    except subprocess.TimeoutExpired:
        return ["subprocess hang"]
    problems = []
    if done.returncode not in (0, 1, 2):
        problems.append(f"subprocess exit {done.returncode}")
    if "Traceback" in done.stderr:
        problems.append(f"subprocess traceback: {done.stderr[-300:]}")
    if "Warning" in done.stderr:
        problems.append(f"subprocess warning: {done.stderr[:300]}")
    return problems


def main_campaign(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--files", type=int, default=100_000)
    ap.add_argument("--seconds", type=float, default=3600.0)
    ap.add_argument("--seed", type=int, default=15)
    ap.add_argument("--timeout", type=float, default=30.0)
    ap.add_argument("--plan-every", type=int, default=5)
    ap.add_argument("--report-every", type=int, default=400)
    ap.add_argument("--subprocess-every", type=int, default=500)
    ap.add_argument("--out", default=None)
    ap.add_argument("--worker", type=int, default=0, help="this worker's index")
    ap.add_argument("--workers", type=int, default=1, help="how many workers share the files")
    args = ap.parse_args(argv)

    from click.testing import CliRunner

    from resplan.cli import main

    out = Path(args.out or tempfile.mkdtemp(prefix="resplan-fuzz-"))
    failures = out / "failures"
    failures.mkdir(parents=True, exist_ok=True)
    work = Path(tempfile.mkdtemp(prefix=f"fuzz-work-{args.worker}-"))
    examples = _examples()
    names = sorted(examples)
    rng = random.Random(args.seed * 1000 + args.worker)
    runner = CliRunner()
    counts: Counter[str] = Counter()
    kinds: Counter[str] = Counter()
    exits: Counter[str] = Counter()
    start = time.monotonic()
    n = 0
    for n in range(args.worker, args.files, args.workers):
        if time.monotonic() - start > args.seconds:
            break
        name = names[n % len(names)]
        text = mutate(examples[name], rng)
        path = work / f"{name}.toml"
        path.write_text(text, encoding="utf-8", errors="surrogatepass")
        commands = ["check --json" if n % 2 else "check"]
        if n % args.plan_every == 0:
            commands.append("plan")
        if n % args.report_every == 0:
            commands.append("report")
        found: list[str] = []
        for command in commands:
            cli = command.split() + [str(path)]
            if command == "report":
                cli += ["-o", str(work / "out.pdf")]
            try:
                result, seconds = run_one(runner, main, cli, args.timeout)
            except Hang:
                found.append(f"{command}: hang over {args.timeout} s")
                kinds["hang"] += 1
                continue
            counts[command] += 1
            exits[f"{command} exit {result.exit_code}"] += 1
            for problem in judge(command, result, work, seconds):
                found.append(f"{command}: {problem}")
                kinds[problem.split(":")[0].split(" ")[0]] += 1
        if n % args.subprocess_every == 0:
            counts["subprocess check --json"] += 1
            for problem in subprocess_check(path, args.timeout * 2):
                found.append(problem)
                kinds[problem.split(":")[0]] += 1
        counts["files"] += 1
        if found:
            keep = failures / f"w{args.worker}-{n:06d}-{name}.toml"
            keep.write_text(text, encoding="utf-8", errors="surrogatepass")
            keep.with_suffix(".txt").write_text("\n".join(found) + "\n", encoding="utf-8")
        if counts["files"] % 1000 == 0:
            print(
                f"[worker {args.worker}] {counts['files']} files, "
                f"{time.monotonic() - start:.0f} s, problems {dict(kinds)}",
                flush=True,
            )
    summary = {
        "worker": args.worker,
        "files": counts["files"],
        "runs": {k: v for k, v in counts.items() if k != "files"},
        "problems": dict(kinds),
        "tracebacks": kinds.get("traceback", 0),
        "hangs": kinds.get("hang", 0) + kinds.get("subprocess hang", 0),
        "exits": dict(exits),
        "seconds": round(time.monotonic() - start, 1),
        "seed": args.seed,
    }
    (out / f"summary-{args.worker}.json").write_text(json.dumps(summary, indent=2))
    print(json.dumps(summary, indent=2))
    return 0 if not kinds else 1


if __name__ == "__main__":
    sys.exit(main_campaign())
