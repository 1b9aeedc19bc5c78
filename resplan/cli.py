"""The resplan command line: thin click commands that parse, call the library, format.

Exit codes
----------
0  success; for ``check``, the requirement is met
1  ``check``: the design is valid but does not meet its requirement
2  bad input: any :class:`resplan.errors.ResplanError` (one line per problem on
   stderr, never a traceback) and click's usage errors

Heavy modules (pydantic, pint, the budget) are imported inside the commands so
that ``resplan --help`` stays fast; matplotlib, reportlab and scipy are never
imported on the ``check`` path.

Adding a command: write it below the marked place with ``@main.command()``, load
its design with :func:`load_design_or_exit`, wrap library calls in
:func:`exit_on_error`, print data with :func:`emit_json`.
"""

from __future__ import annotations

import contextlib
import json
import sys
from collections.abc import Iterator
from pathlib import Path
from typing import TYPE_CHECKING, Any, NoReturn

import click

from . import __version__
from .errors import ResplanError

if TYPE_CHECKING:  # pragma: no cover
    from .chain.design import Design

__all__ = [
    "main",
    "fail",
    "exit_on_error",
    "load_design_or_exit",
    "emit_json",
    "wants_ascii",
    "write_text_atomic",
    "EXIT_OK",
    "EXIT_NOT_MET",
    "EXIT_BAD_INPUT",
]

EXIT_OK = 0
EXIT_NOT_MET = 1
EXIT_BAD_INPUT = 2

_CONTEXT = {"help_option_names": ["-h", "--help"], "max_content_width": 100}


# ---------------------------------------------------------------------------
# helpers shared by every command


def fail(lines: str | list[str]) -> NoReturn:
    """Print each problem as one ``error:`` line on stderr and exit with code 2.

    A string holds one problem per ``\n``; control characters and line separators
    inside a problem are escaped, so that none is ever split over lines.
    """
    from .errors import escaped

    if isinstance(lines, str):
        lines = lines.split("\n")
    for line in dict.fromkeys(lines):  # each problem once
        click.echo(f"error: {escaped(line)}", err=True)
    sys.exit(EXIT_BAD_INPUT)


@contextlib.contextmanager
def exit_on_error(design: Design | None = None) -> Iterator[None]:
    """Turn any :class:`ResplanError` raised inside into ``error:`` lines and exit 2.

    With ``design``, a problem found while computing names the design file and the
    part's table (``stages[1].gain``), as the problems found when reading it do.
    Numpy's floating-point warnings are silenced inside (a result that is not
    finite is caught and reported instead), and an overflow in the arithmetic
    is one line naming the design, never a traceback.
    """
    import numpy as np

    try:
        with np.errstate(all="ignore"):
            yield
    except ResplanError as err:
        if design is not None:
            from .designfile.load import placed

            err = placed(err, design)
        fail(str(err))
    except ArithmeticError as err:  # overflow, division by zero, decimal errors
        where = f"{design.source}: " if design is not None and design.source else ""
        fail(
            f"{where}design: a figure overflows or vanishes while computing "
            f"({type(err).__name__}); check the largest and smallest values and the gains"
        )


def load_design_or_exit(path: str) -> Design:
    """Load a design file, or print its problems (one per line) and exit 2."""
    from .designfile.load import load_design

    with exit_on_error():
        return load_design(path)
    raise AssertionError("unreachable")  # pragma: no cover


def wants_ascii(flag: bool = False) -> bool:
    """ASCII output when asked, or when stdout cannot encode µ, Ω, √ and °."""
    if flag:
        return True
    encoding = getattr(sys.stdout, "encoding", None) or "ascii"
    try:
        "µΩ√°±·×…∞−".encode(encoding)
    except (UnicodeEncodeError, LookupError):
        return True
    return False


def emit_json(data: Any) -> None:
    """Print data as JSON: stable key order, no NaN or inf (they must be made safe first)."""
    click.echo(json.dumps(data, indent=2, allow_nan=False, ensure_ascii=wants_ascii()))


def write_text_atomic(path: Path, text: str, *, force: bool = False) -> None:
    """Write ``text`` to ``path`` through a temporary file in the same folder and a rename.

    Never leaves a half-written file; refuses to replace an existing file unless
    ``force``, and anything that is not a regular file or a new path always.

    Raises
    ------
    FileExistsError, FileNotFoundError, IsADirectoryError, ResplanError, OSError
        Handled by the callers: they turn it into one ``error:`` line.
    """
    from .output.atomic import check_output_target
    from .output.atomic import write_text_atomic as write

    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise FileNotFoundError(f"{folder}: no such folder")
    if path.is_dir():
        raise IsADirectoryError(f"{path}: is a folder")
    if path.exists() and not force:
        raise FileExistsError(f"{path}: exists; use --force to overwrite it")
    check_output_target(path, "PATH")
    write(path, text)


# ---------------------------------------------------------------------------
# the group


@click.group(context_settings=_CONTEXT)
@click.version_option(__version__, "-V", "--version", prog_name="resplan")
@click.pass_context
def main(ctx: click.Context) -> None:
    """Plan the resolution of a measurement signal chain: noise budgets with sources.

    \b
    Start from an example, edit it, check it:
      resplan init --list
      resplan init --example hive-scale my-scale.toml
      resplan check my-scale.toml          # exit 0 meets, 1 does not, 2 bad input
      resplan check my-scale.toml --json   # the same as JSON
      resplan schema > resplan-schema.json # for editor completion
      resplan plan kickoff.toml            # backward: the limit for every open part
      resplan report my-scale.toml -o my-scale.pdf   # the PDF requirements appendix

    The numbers are estimates from typical data; verify on the bench. Sensors on
    mains or high voltage need isolation and protection that no noise budget
    decides: follow local codes and licensed practice.
    """
    from .output.atomic import sigterm_as_interrupt

    # SIGTERM (a CI timeout, a service stop) is handled like Ctrl-C: temporary files go.
    ctx.with_resource(sigterm_as_interrupt())


@main.command()
@click.argument("path", required=False, type=click.Path(dir_okay=False, path_type=Path))
@click.option(
    "--example",
    "-e",
    "name",
    default=None,
    metavar="NAME",
    help="Example to write (default hive-scale); see --list.",
)
@click.option("--list", "list_only", is_flag=True, help="List the examples and exit.")
@click.option("--force", "-f", is_flag=True, help="Overwrite PATH if it exists.")
def init(path: Path | None, name: str | None, list_only: bool, force: bool) -> None:
    """Write an embedded example as a commented design file to PATH.

    PATH defaults to NAME.toml in the current folder. An existing file is never
    replaced without --force; the file is written whole or not at all.

    \b
    Examples:
      resplan init                               # writes hive-scale.toml
      resplan init --example soil-temperature logger.toml
      resplan init --list
    """
    from .designfile.examples import DEFAULT_EXAMPLE, example_text, list_examples

    if list_only:
        items = list_examples()
        width = max(len(n) for n, _ in items)
        for example, description in items:
            click.echo(f"{example.ljust(width)}  {description}")
        return
    name = name or DEFAULT_EXAMPLE
    with exit_on_error():
        text = example_text(name)
    target = path or Path(f"{name}.toml")
    try:
        write_text_atomic(target, text, force=force)
    except (FileExistsError, FileNotFoundError, IsADirectoryError, ResplanError) as err:
        fail(str(err))
    except OSError as err:
        fail(f"{target}: cannot write ({err.strerror or err})")
    click.echo(f"wrote {target} (example {name}); check it with: resplan check {target}")


@main.command()
@click.argument("design", metavar="DESIGN")
@click.option("--json", "as_json", is_flag=True, help="Print the budget as JSON.")
@click.option(
    "--ascii", "ascii_only", is_flag=True, help="Write units in ASCII (u, ohm, rtHz, degC)."
)
@click.option(
    "--worst-case",
    "worst_case",
    is_flag=True,
    help="Judge the worst-case corner: every spread at its adverse end (default: typical).",
)
def check(design: str, as_json: bool, ascii_only: bool, worst_case: bool) -> None:
    """Check a complete design against its requirement: the forward noise budget.

    Prints every noise contributor referred to the sensor, the resolution over
    the sensor span and the ADC range, the requirement, the margin, every item
    that fails (noise, each stated interferer, the ADC input window ...) with its
    figure and its limit, and the verdict. Exit status: 0 every item passes,
    1 any fails, 2 bad input (one line per problem).

    \b
    Examples:
      resplan check hive-scale.toml
      resplan check hive-scale.toml --json | python3 -m json.tool
      resplan check design.toml || echo "review needed"
      resplan check design.toml --worst-case   # every spread at its adverse end
    """
    from .chain.verdict import judge_design
    from .designfile.load import check_design
    from .output.budget_text import check_data, format_budget
    from .output.spread_text import (
        figures_line,
        format_corner,
        format_improvements,
        improvements_data,
    )
    from .spread.corner import worst_case as corner_of
    from .spread.improve import improvements

    loaded = load_design_or_exit(design)
    ascii_only = wants_ascii(ascii_only)
    with exit_on_error(loaded):
        corner = corner_of(loaded) if worst_case else None
        judged_design = corner.design if corner else loaded
        budget = check_design(judged_design)
        judged = judge_design(judged_design, budget)
        better = improvements(judged_design)
    with exit_on_error(loaded):  # the figures written may be infinite: no numpy warning
        if as_json:
            data = check_data(budget, judged_design, judged)
            data["figures"] = "worst-case corner" if corner else "typical"
            if corner:
                data["worst_case"] = corner.to_dict()
            data["improve_first"] = improvements_data(better)
            emit_json(data)
        else:
            text = format_budget(budget, judged_design, ascii_only=ascii_only, judged=judged)
            body, _, last = text.rpartition("\n")  # the verdict stays the last line
            if corner:
                click.echo(format_corner(corner, ascii_only=ascii_only) + "\n")
            click.echo(body)
            click.echo(format_improvements(better, ascii_only=ascii_only) + "\n")
            click.echo(figures_line(loaded, corner=corner is not None))
            click.echo(last)
    sys.exit(EXIT_OK if judged.meets and budget.requirement is not None else EXIT_NOT_MET)


@main.command()
def schema() -> None:
    """Print the JSON Schema of design files (for editor completion and checks).

    \b
    Example:
      resplan schema > resplan-design.schema.json
    """
    from .designfile.load import design_schema

    emit_json(design_schema())


@main.command(name="yield")
@click.argument("design", metavar="DESIGN")
@click.option(
    "--trials",
    "-n",
    default=100_000,
    show_default=True,
    type=click.IntRange(1, 100_000_000),
    help="Number of boards to sample.",
)
@click.option("--seed", default=1, show_default=True, type=click.IntRange(0), help="Seed.")
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON.")
@click.option("--ascii", "ascii_only", is_flag=True, help="Plain ASCII units (u, ohm, rtHz).")
@click.option(
    "--exact",
    is_flag=True,
    help="Solve every trial with a full budget (slow; checks the factor model).",
)
def yield_(
    design: str, trials: int, seed: int, as_json: bool, ascii_only: bool, exact: bool
) -> None:
    """Monte Carlo yield of DESIGN: the fraction of boards that meet, with its interval.

    Samples every spread of the design file (typ/max, tolerance, min/max, sigma,
    temperature ranges), judges each trial on every verdict item, and prints the
    yield with its Clopper-Pearson 95 % interval, percentiles of noise and
    noise-free bits, the drivers of the spread and the worst trial. The same
    seed gives the same numbers on any machine. Exit status: 0 when the
    interval's lower bound meets requirement.yield (or none is stated), 1 when
    not, 2 bad input.

    \b
    Examples:
      resplan yield hive-scale.toml
      resplan yield hive-scale.toml --trials 1000000 --seed 7 --json
    """
    from .output.spread_text import format_trials, trials_data
    from .spread.model import build_model
    from .spread.trials import run_trials

    loaded = load_design_or_exit(design)
    with exit_on_error(loaded):
        model = build_model(loaded)
        with _progress(trials) as tick:
            result = run_trials(model, trials, seed, progress=tick, exact=exact)
    if as_json:
        emit_json(trials_data(result, loaded))
    else:
        click.echo(format_trials(result, loaded, ascii_only=wants_ascii(ascii_only)))
    sys.exit(EXIT_NOT_MET if result.meets is False else EXIT_OK)


@contextlib.contextmanager
def _progress(total: int) -> Iterator[Any]:
    """A progress callback that shows a bar on stderr once a run will take over a second."""
    import time

    start = time.perf_counter()
    state: dict[str, Any] = {"bar": None, "shown": 0}

    def tick(done: int, total_: int) -> None:
        elapsed = time.perf_counter() - start
        bar = state["bar"]
        if bar is None and done < total_ and elapsed * total_ / done > 1.0:
            bar = click.progressbar(length=total_, label="trials", file=sys.stderr)
            bar.__enter__()
            state["bar"] = bar
        if bar is not None:
            bar.update(done - state["shown"])
            state["shown"] = done

    try:
        yield tick
    finally:
        if state["bar"] is not None:
            state["bar"].__exit__(None, None, None)


# ---------------------------------------------------------------------------
# More commands (plan, report) are added below with @main.command(); use
# load_design_or_exit, exit_on_error and emit_json so that they keep the same
# exit codes and one-line errors.


@main.command()
@click.argument("design", metavar="DESIGN")
@click.option(
    "--weights",
    metavar="NAME=W,...",
    help='Allocation weights by part name or place, such as "front end=2,adc=1".',
)
@click.option("--json", "as_json", is_flag=True, help="Print the plan as JSON.")
@click.option("--ascii", "ascii_only", is_flag=True, help="Plain ASCII units (u, ohm, rtHz).")
def plan(design: str, weights: str | None, as_json: bool, ascii_only: bool) -> None:
    """Work backward: the noise limit every open part of DESIGN must meet.

    Subtracts the fixed parts (the sensor's thermal noise, every part already
    given) from the noise the requirement allows, shares the rest among the open
    parts by weight (equal power by default) and turns each share into the
    figures data sheets quote. Exit status: 0 feasible, 1 infeasible (with the
    reasons and the levers that would fix it), 2 bad input.

    \b
    Examples:
      resplan init --example kickoff-bridge kickoff.toml
      resplan plan kickoff.toml
      resplan plan kickoff.toml --weights "front end=2,adc=1" --json
    """
    from .output.plan_text import format_plan, plan_data
    from .output.spread_text import figures_line
    from .plan.allocation import parse_weights, plan_design

    loaded = load_design_or_exit(design)
    with exit_on_error(loaded):
        overrides = parse_weights(weights) if weights else None
        result = plan_design(loaded, overrides)
        if as_json:
            data = plan_data(result, loaded)
            data["figures"] = "typical"
            emit_json(data)
        else:
            text = format_plan(result, loaded, ascii_only=wants_ascii(ascii_only))
            body, _, last = text.rpartition("\n")  # the verdict stays the last line
            click.echo(body + "\n" + figures_line(loaded) + "\n" + last)
    sys.exit(EXIT_OK if result.feasible else EXIT_NOT_MET)


@main.command()
@click.argument("design", metavar="[DESIGN]", required=False)
@click.option(
    "-o",
    "--output",
    default="report.pdf",
    show_default=True,
    metavar="PATH",
    # checked by resplan (one error line, before any work), not by click
    help="The PDF to write (atomically: an existing file is replaced only on success).",
)
@click.option(
    "--paper",
    type=click.Choice(["A4", "letter"], case_sensitive=False),
    default="A4",
    show_default=True,
)
@click.option(
    "--figures",
    "figures_dir",
    metavar="FOLDER",
    help="Also write every figure as PNG and SVG into this folder.",
)
@click.option("--weights", metavar="NAME=W,...", help="Allocation weights for the plan section.")
def report(
    design: str | None, output: str, paper: str, figures_dir: str | None, weights: str | None
) -> None:
    """Write the PDF requirements appendix of DESIGN (the hive-scale example if omitted).

    Summary, requirement and assumptions, the plan, the budget of every
    contributor, figures, the formulas with their sources and the
    measurement-safety cautions; the design file's SHA-256 in the title block.

    \b
    Examples:
      resplan report -o hive-scale-report.pdf
      resplan report design.toml -o appendix.pdf --paper letter --figures figures/
    """
    from .designfile.examples import DEFAULT_EXAMPLE, load_example
    from .designfile.load import check_design
    from .errors import escaped
    from .output.atomic import check_output_folder, check_output_target

    # The targets are checked before any work, so a bad -o or --figures costs nothing.
    with exit_on_error():
        check_output_target(output, "--output")
        if figures_dir is not None:
            check_output_folder(figures_dir, "--figures")
    loaded = load_design_or_exit(design) if design else load_example(DEFAULT_EXAMPLE)
    from .output.report import write_report
    from .plan.allocation import parse_weights, plan_design

    with exit_on_error(loaded):
        the_plan = None
        if weights:
            the_plan = plan_design(loaded, parse_weights(weights))
        budget = check_design(loaded) if loaded.is_complete else None
        try:
            path = write_report(
                loaded,
                output,
                paper=paper,
                figures_dir=figures_dir,
                plan=the_plan,
                budget=budget,
            )
        except OSError as err:  # a full disk, a file-size limit, a folder made read-only
            where = err.filename if isinstance(err.filename, str) else output
            fail(f"{escaped(where)}: cannot write ({err.strerror or err}); nothing was written")
    click.echo(f"wrote {escaped(str(path))}")
