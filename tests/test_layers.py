"""The package's layers: every import runs downward (docs/architecture.md).

Each module's imports — at module level and inside functions (the lazy ones) —
are read from its source with :mod:`ast`, resolved to resplan's sub-packages, and
checked against the layer order below. Two layers of the same rank (plan and
designfile) may not import each other either.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).parents[1] / "resplan"

#: Rank of each layer: a module may import only layers of a lower rank, or its own.
RANKS = {
    "errors": 0,
    "units": 1,
    "noise": 2,
    "chain": 3,
    "plan": 4,
    "designfile": 4,
    "spread": 4,
    "output": 5,
    "cli": 6,
    "__main__": 7,
}
#: The root package re-exports the public API; below it only its version may be read.
ROOT_NAMES_ALLOWED = {"__version__"}


def _modules():
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = path.relative_to(PACKAGE).with_suffix("").parts
        yield path, parts


def _layer(parts: tuple[str, ...]) -> str:
    return parts[0]


def _imports(path: Path, parts: tuple[str, ...]):
    """(target parts, imported names, line) for every resplan import in ``path``."""
    here = list(parts[:-1])  # the package the module sits in
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = here[: len(here) - (node.level - 1)] if node.level > 1 else here
                target = [*base, *(node.module.split(".") if node.module else [])]
            elif node.module and node.module.split(".")[0] == "resplan":
                target = node.module.split(".")[1:]
            else:
                continue
            yield tuple(target), [a.name for a in node.names], node.lineno
        elif isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.split(".")[0] == "resplan":
                    yield tuple(alias.name.split(".")[1:]), [], node.lineno


def _violations():
    found = []
    for path, parts in _modules():
        if parts == ("__init__",):
            continue  # the root re-exports the public API from every layer
        mine = _layer(parts)
        for target, names, line in _imports(path, parts):
            where = f"{path.relative_to(PACKAGE.parent)}:{line}"
            if not target:
                extra = set(names) - ROOT_NAMES_ALLOWED
                if extra:
                    found.append(f"{where} imports {sorted(extra)} from the root package")
                continue
            theirs = target[0]
            if theirs == mine:
                continue
            if theirs not in RANKS:
                found.append(f"{where} imports an unknown layer {theirs!r}")
            elif RANKS[theirs] >= RANKS[mine]:
                found.append(f"{where}: {mine} (rank {RANKS[mine]}) imports {theirs}")
    return found


def test_every_module_belongs_to_a_layer():
    unknown = sorted({_layer(p) for _, p in _modules() if p != ("__init__",)} - set(RANKS))
    assert unknown == []


def test_imports_run_only_downward():
    assert _violations() == []


def test_the_checker_sees_an_upward_import(tmp_path, monkeypatch):
    # The test must be able to fail: a noise module importing the chain layer.
    fake = tmp_path / "resplan"
    (fake / "noise").mkdir(parents=True)
    (fake / "chain").mkdir()
    (fake / "noise" / "bad.py").write_text("from ..chain.budget import Budget\n")
    (fake / "chain" / "budget.py").write_text("from ..noise import bad\n")
    monkeypatch.setattr(f"{__name__}.PACKAGE", fake)
    assert _violations() == [
        "resplan/noise/bad.py:1: noise (rank 2) imports chain",
    ]


#: Modules still to be split along their concepts (the report's sections).
STILL_TO_SPLIT: set[str] = set()


@pytest.mark.parametrize("path", sorted(PACKAGE.rglob("*.py")), ids=lambda p: p.name)
def test_no_module_holds_two_concepts(path):
    # STYLE.md: past ~800 lines a file holds two concepts.
    lines = len(path.read_text(encoding="utf-8").splitlines())
    if path.name in STILL_TO_SPLIT:
        pytest.skip(f"{path.name} ({lines} lines) is still to be split into its sections")
    assert lines <= 850, f"{path.name} has {lines} lines"
