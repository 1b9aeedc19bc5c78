"""Circuits a design file can describe but no bench could use: one line each, exit 2.

Through the command line (click's CliRunner), each bad circuit must give exactly one
``error:`` line naming the file, the stage and the field to change, exit status 2,
no traceback, and no output file. The circuits are the INVENTED embedded examples
with one thing changed:

- a Sallen-Key section whose gain is too high for its capacitors: its poles are in the
  right half-plane (b = C2(R1 + R2) + R1C1(1 − K) < 0, from the section's transfer
  function in resplan.noise.sections);
- a section with Q = ½·√(C1/C2) = 158 (unity-gain Sallen-Key, equal resistors) above
  the limit of 50 (common practice, no source);
- a transimpedance stage without C_f in front of a 2 nF photodiode: its loop's poles
  have Q ≈ 500 (√(ω_t·R_f·C_in), a second-order loop; from memory);
- op amps that cannot hold the gain at the band top: GBW/f_top below the stage's gain
  (a non-inverting gain of 100 with 100 kHz at 10 kHz) or below a transimpedance
  stage's noise gain 1 + Z_f/Z_in (≈ 120 at 10 kHz with 1 MHz);
- a singular segment. No design file can build one (every stage gives each node a DC
  path and each op amp its feedback); the test removes a transimpedance stage's
  feedback inside the circuit builder to show that the problem still reaches the user
  as one line naming the stage.
"""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from resplan.cli import main
from resplan.designfile.examples import example_text


def _replace(name: str, old: str, new: str) -> str:
    text = example_text(name)
    assert old in text, old
    return text.replace(old, new)


def _filter(sections: str) -> str:
    text = example_text("pipeline-vibration")
    start, end = text.index("[[stages]]"), text.index("[reference]")
    stage = (
        '[[stages]]\ntype = "active_filter"\nname = "invented filter"\n'
        'topology = "sallen-key"\nen = "8 nV/√Hz"\ngbw = "20 MHz"\n' + sections + "\n"
    )
    return text[:start] + stage + text[end:]


CASES = {
    "right-half-plane section": (
        _filter(
            'sections = [{ r1 = "10 kohm", r2 = "10 kohm", c1 = "10 nF", c2 = "10 nF", '
            'rf = "30 kohm", rg = "10 kohm" }]\n'
        ),
        "stages[0].sections[0]",
        "right half-plane",
    ),
    "section Q above 50": (
        _filter('sections = [{ r1 = "10 kohm", r2 = "10 kohm", c1 = "100 nF", c2 = "1 pF" }]\n'),
        "stages[0].sections[0]",
        "Q ≤ 50",
    ),
    "transimpedance loop without C_f": (
        _replace("turbidity-photodiode", 'cf = "5 pF"\n', ""),
        "stages[0].cf",
        "Q ≤ 50",
    ),
    "transimpedance GBW below the noise gain": (
        _replace("turbidity-photodiode", 'gbw = "20 MHz"', 'gbw = "1 MHz"'),
        "stages[0].gbw",
        "noise gain",
    ),
    "gain stage GBW below its gain": (
        _replace(
            "pipeline-vibration",
            "[[stages]]\n",
            '[[stages]]\ntype = "noninverting"\nname = "invented gain stage"\nrf = "99 kohm"\n'
            'rg = "1 kohm"\nen = "5 nV/√Hz"\nin = "1 pA/√Hz"\ngbw = "100 kHz"\n\n[[stages]]\n',
        ),
        "stages[0].gbw",
        "gain-bandwidth product above",
    ),
}


def _one_line(result, field: str, words: str) -> str:
    assert result.exception is None or isinstance(result.exception, SystemExit), result.exception
    assert result.exit_code == 2, result.output
    lines = result.stderr.splitlines()
    assert len(lines) == 1, lines
    assert lines[0].startswith("error: bad.toml: "), lines
    assert f"bad.toml: {field}:" in lines[0], lines[0]
    assert words in lines[0], lines[0]
    assert "Traceback" not in result.output
    return lines[0]


@pytest.mark.parametrize("case", list(CASES))
@pytest.mark.parametrize("command", ["check", "plan", "report"])
def test_bad_circuit_is_one_line_naming_the_stage_and_field(tmp_path, monkeypatch, case, command):
    text, field, words = CASES[case]
    monkeypatch.chdir(tmp_path)
    (tmp_path / "bad.toml").write_text(text, encoding="utf-8")
    args = [command, "bad.toml"] + (["-o", "out.pdf"] if command == "report" else [])
    result = CliRunner().invoke(main, args)
    _one_line(result, field, words)
    assert not (tmp_path / "out.pdf").exists()
    assert (tmp_path / "bad.toml").read_text(encoding="utf-8") == text


def test_singular_segment_is_one_line_naming_the_stage(tmp_path, monkeypatch):
    import resplan.chain.netlists as netlists
    from resplan.noise.netlist import OpAmp, Resistor

    original = netlists._stage_parts

    def without_feedback(i, stage, nodes_in, temperature_k):
        parts, *rest = original(i, stage, nodes_in, temperature_k)
        if isinstance(stage, netlists.TransimpedanceStage):
            # An ideal op amp with nothing from its output back to its input.
            parts = [p for p in parts if not p.name.endswith((".RF", ".CF"))]
            parts = [
                OpAmp(p.name, p.plus, p.minus, p.output, p.dc_gain, float("inf"))
                if isinstance(p, OpAmp)
                else p
                for p in parts
            ]
            parts.append(Resistor(f"stages[{i}].Rload", rest[0][0], "0", 1e3))
        return (parts, *rest)

    netlists.build_circuit.cache_clear()
    monkeypatch.setattr(netlists, "_stage_parts", without_feedback)
    try:
        (tmp_path / "bad.toml").write_text(example_text("turbidity-photodiode"), encoding="utf-8")
        monkeypatch.chdir(tmp_path)
        result = CliRunner().invoke(main, ["check", "bad.toml"])
        _one_line(result, "stages[0]", "singular")
    finally:
        monkeypatch.undo()
        netlists.build_circuit.cache_clear()
