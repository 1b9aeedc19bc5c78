"""The README's minimal design (kept as examples/minimal.toml) gives what the README shows."""

from __future__ import annotations

from pathlib import Path

from click.testing import CliRunner

from resplan.cli import main

ROOT = Path(__file__).resolve().parents[1]


def test_readme_minimal_design_is_the_shipped_file():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    design = (ROOT / "examples" / "minimal.toml").read_text(encoding="utf-8")
    assert design in readme


def test_readme_minimal_design_output_matches():
    result = CliRunner().invoke(main, ["check", str(ROOT / "examples" / "minimal.toml")])
    assert result.exit_code == 0, result.output
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    for line in result.stdout.splitlines():
        if "bits" in line and ("resolution" in line or "margin" in line):
            assert line in readme, line
    assert "MEETS the requirement with 0.62 bits to spare" in result.stdout
