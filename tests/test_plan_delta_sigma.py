"""An open ADC's limits in the forms its data sheet quotes.

A delta-sigma converter is asked for noise in V rms and V p-p at the data rate
and gain (plus density over its decimator's noise bandwidth and the effective
and noise-free resolution at that rate), never transition noise in LSB or a
full-scale-sine SNR/ENOB; a SAR keeps transition noise in LSB, SNR and ENOB.
The kickoff-bridge example and the SAR variant below are invented.
"""

from __future__ import annotations

import json
import math
import re

import pypdf
import pytest
from click.testing import CliRunner
from scipy import integrate, special

from resplan.cli import main
from resplan.designfile.examples import example_text


@pytest.fixture
def kickoff(tmp_path):
    path = tmp_path / "kickoff.toml"
    path.write_text(example_text("kickoff-bridge"), encoding="utf-8")
    return path


def _sar_variant(tmp_path):
    """The kickoff design with an invented open 18-bit SAR at 1 kHz, 100 samples averaged."""
    text = example_text("kickoff-bridge")
    text = text.replace('architecture = "delta-sigma"', 'architecture = "sar"')
    text = text.replace("bits = 24", "bits = 18")
    text = text.replace('sample_rate = "256 kHz"\ndata_rate = "10 Hz"', 'sample_rate = "1 kHz"')
    text = text.replace('decimation = "sinc3"', "average = 100")
    assert 'architecture = "sar"' in text and "average = 100" in text
    path = tmp_path / "sar.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _plan_json(path):
    result = CliRunner().invoke(main, ["plan", str(path), "--json"])
    assert result.exit_code == 0, result.output
    return json.loads(result.stdout)


def _adc_rows(data):
    return [r for r in data["requirements"] if r["field_path"] == "adc"]


def _k_pp(coverage: float) -> float:
    # Peak-to-peak factor of Gaussian noise: P = erf(k/(2√2)) (JCGM 100:2008, G.1;
    # normal distribution), inverted with scipy's erfinv.
    return 2.0 * math.sqrt(2.0) * float(special.erfinv(coverage))


def test_delta_sigma_limits_are_rms_and_pp_at_the_data_rate_json(kickoff):
    data = _plan_json(kickoff)
    rows = _adc_rows(data)
    units = {r["unit"] for r in rows}
    assert "LSB" not in units and "dB" not in units
    assert not any("ENOB" in r["quantity"] or "SNR" in r["quantity"] for r in rows)
    rms, pp = rows[0], rows[1]
    assert "10.0 Hz data rate, gain 1" in rms["quantity"]
    assert "peak-to-peak" in pp["quantity"] and "10.0 Hz data rate" in pp["quantity"]
    # rms limit = the ADC's allocated share referred to its input by the gain in
    # front of it (the example has no digital post-filter, so no post factor).
    share = next(a for a in data["allocations"] if a["field_path"] == "adc")
    gain_in_front = share["adc_rms_v"] / share["rms_v"]
    assert gain_in_front == pytest.approx(500.0)
    assert rms["value"] == pytest.approx(share["rms_v"] * gain_in_front, rel=1e-12)
    assert rms["value"] == pytest.approx(share["adc_rms_v"], rel=1e-12)
    # p-p = k_pp × rms at the plan's coverage (99.9 % → 6.58).
    k = _k_pp(data["coverage"])
    assert k == pytest.approx(6.58, abs=0.005)
    assert pp["value"] == pytest.approx(k * rms["value"], rel=1e-9)
    # Effective and noise-free resolution of a 5 V p-p range (log2(FSR/σ), log2(FSR/(k·σ))).
    bits = {r["quantity"].split(" at ")[0]: r["value"] for r in rows if r["unit"] == "bits"}
    assert bits["effective resolution"] == pytest.approx(math.log2(5.0 / rms["value"]))
    assert bits["noise-free resolution"] == pytest.approx(math.log2(5.0 / (k * rms["value"])))


def test_delta_sigma_density_uses_the_sinc3_noise_bandwidth(kickoff):
    # A sinc³ decimator to ODR has |H(f)|² = sinc⁶(f/ODR), so its one-sided noise
    # bandwidth is ODR·∫₀^∞ sinc⁶(x) dx = ODR·11/40, since ∫_{-∞}^{∞} sinc⁶ = 11/20
    # (a standard integral, from memory): 2.75 Hz at 10 Hz. The integral is
    # checked here with scipy.integrate.quad rather than taken on trust.
    integral, _ = integrate.quad(lambda x: 2.0 * special.sinc(x) ** 6, 0.0, 200.0, limit=2000)
    assert integral == pytest.approx(11 / 20, rel=1e-4)
    enbw = integral * 10.0 / 2.0
    rows = _adc_rows(_plan_json(kickoff))
    density = next(r for r in rows if r["unit"] == "V/√Hz")
    assert density["value"] == pytest.approx(rows[0]["value"] / math.sqrt(enbw), rel=2e-3)


def test_delta_sigma_limits_in_text_and_pdf_have_no_lsb(kickoff, tmp_path):
    runner = CliRunner()
    text = runner.invoke(main, ["plan", str(kickoff)])
    assert text.exit_code == 0, text.output
    adc_lines = [ln for ln in text.stdout.splitlines() if ln.strip().startswith("ADC ")]
    body = "\n".join(adc_lines)
    assert "LSB" not in body and "ENOB" not in body and "SNR" not in body
    at = r"at 10\.0 Hz data rate, gain 1 V/V +"
    assert re.search(r"input-referred noise " + at + r"≤ 19\.0 µV rms", body)
    assert re.search(r"peak-to-peak at 10\.0 Hz data rate, gain 1 V/V +≤ 125 µV p-p", body)
    pdf = tmp_path / "kickoff.pdf"
    made = runner.invoke(main, ["report", str(kickoff), "-o", str(pdf)])
    assert made.exit_code == 0, made.output
    reader = pypdf.PdfReader(str(pdf))
    words = re.sub(r"\s+", " ", " ".join(p.extract_text() for p in reader.pages))
    assert "LSB" not in words and "transition noise" not in words
    assert "10.0 Hz data rate, gain 1 V/V at most 19.0 µV rms" in words
    assert "at most 125 µV p-p" in words


def test_open_sar_keeps_transition_noise_snr_and_enob(tmp_path):
    data = _plan_json(_sar_variant(tmp_path))
    rows = _adc_rows(data)
    quantities = [r["quantity"] for r in rows]
    assert "transition noise" in quantities and "ENOB" in quantities
    lsb = next(r for r in rows if r["quantity"] == "transition noise")
    assert lsb["unit"] == "LSB"
    # √(σ² − q²/12)/LSB with LSB = 5 V / 2¹⁸ (Bennett 1948: q²/12 for a uniform quantiser).
    sigma = rows[0]["value"]
    q = 5.0 / 2**18
    assert lsb["value"] == pytest.approx(math.sqrt(sigma**2 - q**2 / 12) / q, rel=1e-9)
    # IEEE Std 1241: ENOB = (SNR − 1.76)/6.02; SNR = 20·log10((FSR/2√2)/σ).
    snr = next(r for r in rows if r["quantity"] == "SNR, full-scale sine")
    assert snr["value"] == pytest.approx(20 * math.log10(5.0 / (2 * math.sqrt(2)) / sigma))
    enob = next(r for r in rows if r["quantity"] == "ENOB")
    assert enob["value"] == pytest.approx((snr["value"] - 1.76) / 6.02, abs=0.01)
    text = CliRunner().invoke(main, ["plan", str(_sar_variant(tmp_path))]).stdout
    assert re.search(r"ADC +transition noise +≤ [\d.]+ LSB", text)
