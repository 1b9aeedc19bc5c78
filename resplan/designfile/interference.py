"""Design-file interferers → :mod:`resplan.chain.interference` objects.

``[requirement] interferer = {...}`` (one tone, the older form) and every
``[[requirement.interferers]]`` table are read into tones, mains pickup and
out-of-band spectra; a spectrum may be inline or a CSV file of
``frequency,density`` rows, each cell a quantity with its unit (``"100 kHz",
"2 µV/√Hz"``) or a bare number in Hz and V/√Hz. A header row is skipped when
its first cell is not a number.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path
from typing import Any

from ..chain.interference import Broadband, Mains, Tone
from ..units.parse import parse_percent
from .models import InterferenceEntry, RequirementTable
from .parts import TableReader

__all__ = ["read_interferers", "MAX_HARMONICS", "MAX_SPECTRUM_POINTS"]

MAX_HARMONICS = 50
MAX_SPECTRUM_POINTS = 10_000


def _as_list(value: Any) -> list[Any]:
    return list(value) if isinstance(value, list) else [value]


def _spectrum_rows(r: TableReader, t: InterferenceEntry, p: str, folder: Path | None) -> Any:
    if t.spectrum is not None:
        return [(row, f"{p}.spectrum[{k}]") for k, row in enumerate(t.spectrum)]
    name = Path(t.spectrum_file)
    path = name if name.is_absolute() or folder is None else folder / name
    try:
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        r.bad(f"{p}.spectrum_file", t.spectrum_file, f"a CSV file that exists ({path})")
        return None
    except (OSError, UnicodeDecodeError) as err:
        r.bad(f"{p}.spectrum_file", t.spectrum_file, f"a readable UTF-8 CSV file ({err})")
        return None
    rows = []
    for k, row in enumerate(csv.reader(text.splitlines())):
        cells = [c.strip() for c in row if c.strip()]
        if not cells or cells[0].startswith("#"):
            continue
        if not rows and not cells[0][:1].isdigit() and cells[0][:1] not in ".+-":
            continue  # a header row
        rows.append((cells, f"{p}.spectrum_file line {k + 1}"))
    return rows


def _cell(r: TableReader, value: Any, dimension: str, where: str) -> float | None:
    """A quantity with its unit, or a bare number in SI (Hz, V/√Hz) from a CSV file."""
    if isinstance(value, str):
        try:
            x = float(value)
        except ValueError:
            return r.q(value, dimension, where, minimum="> 0")
        value = x
    if isinstance(value, int | float) and not isinstance(value, bool):
        if math.isfinite(value) and value > 0:
            return float(value)
        r.bad(where, value, "a number > 0 (Hz, V/√Hz)")
        return None
    return r.q(value, dimension, where, minimum="> 0")


def _spectrum(r: TableReader, t: InterferenceEntry, p: str, folder: Path | None) -> Any:
    rows = _spectrum_rows(r, t, p, folder)
    if rows is None:
        return None
    if len(rows) > MAX_SPECTRUM_POINTS:
        r.bad(f"{p}.spectrum", f"{len(rows)} points", f"at most {MAX_SPECTRUM_POINTS} points")
        return None
    freqs, dens = [], []
    ok = True
    for row, where in rows:
        if len(row) != 2:
            r.bad(where, row, 'a pair [frequency, density], such as ["100 kHz", "2 µV/√Hz"]')
            ok = False
            continue
        f = _cell(r, row[0], "frequency", where)
        d = _cell(r, row[1], "voltage_density", where)
        if f is None or d is None:
            ok = False
            continue
        freqs.append(f)
        dens.append(d)
    if not ok:
        return None
    return r.build(p, Broadband, tuple(freqs), tuple(dens), t.name or "broadband", None)


def _entry(r: TableReader, i: int, t: InterferenceEntry, folder: Path | None) -> Any:
    p = f"requirement.interferers[{i}]"
    form = r.one_of(
        t,
        p,
        ("frequency", "mains", "spectrum", "spectrum_file"),
        "exactly one of frequency (a tone), mains, spectrum or spectrum_file",
        "frequency",
    )
    if form is None:
        return None
    allowance = r.q(t.allowance, "voltage", f"{p}.allowance", minimum="> 0")
    if t.allowance is not None and allowance is None:
        return None
    if form in ("frequency", "mains"):
        r.refuse(t, p, ("spectrum", "spectrum_file"), f"not used with {form}")
    else:
        r.refuse(t, p, ("amplitude", "tolerance", "harmonics"), "not used with a spectrum")
    if form != "mains":
        r.refuse(t, p, ("tolerance", "harmonics"), "used with mains only")
    if form == "frequency":
        f = r.q(t.frequency, "frequency", f"{p}.frequency", minimum="> 0")
        if isinstance(t.amplitude, list):
            r.bad(f"{p}.amplitude", t.amplitude, "one amplitude for a tone")
            return None
        a = r.q(t.amplitude, "voltage", f"{p}.amplitude", required=True, minimum="≥ 0")
        if f is None or a is None:
            return None
        return r.build(p, Tone, f, a, t.name or f"tone at {t.frequency}", allowance)
    if form == "mains":
        mains = [r.q(m, "frequency", f"{p}.mains", minimum="> 0") for m in _as_list(t.mains)]
        harmonics = 1 if t.harmonics is None else t.harmonics
        if not 1 <= harmonics <= MAX_HARMONICS:
            r.bad(f"{p}.harmonics", t.harmonics, f"an order from 1 to {MAX_HARMONICS}")
            return None
        if t.amplitude is None:
            r.missing(f"{p}.amplitude", 'the pickup at the sensor, such as "2 mV"')
            return None
        given = _as_list(t.amplitude)
        if len(given) == 1:
            given = given * harmonics
        elif len(given) != harmonics:
            r.bad(
                f"{p}.amplitude",
                t.amplitude,
                f"one amplitude, or one for each of the {harmonics} harmonics",
            )
            return None
        amplitudes = [r.q(a, "voltage", f"{p}.amplitude", minimum="≥ 0") for a in given]
        tolerance = 0.01
        if t.tolerance is not None:
            tolerance = r.parse(parse_percent, t.tolerance, f"{p}.tolerance")
        if None in mains or None in amplitudes or tolerance is None:
            return None
        name = t.name or "mains " + " / ".join(str(m) for m in _as_list(t.mains))
        return r.build(p, Mains, tuple(mains), tuple(amplitudes), tolerance, name, allowance)
    spectrum = _spectrum(r, t, p, folder)
    if spectrum is None or allowance is None:
        return spectrum
    return Broadband(
        spectrum.frequencies_hz, spectrum.densities_v_per_rthz, spectrum.name, allowance
    )


def read_interferers(r: TableReader, t: RequirementTable, source: str) -> tuple[Any, ...]:
    """Every interferer the requirement states, the single ``interferer`` table first."""
    out: list[Any] = []
    if t.interferer is not None:
        it = t.interferer
        f = r.q(it.frequency, "frequency", "requirement.interferer.frequency", minimum="> 0")
        a = r.q(it.amplitude, "voltage", "requirement.interferer.amplitude", minimum="≥ 0")
        if f is not None and a is not None:
            out.append(Tone(f, a, "stated interferer"))
    folder = None if source.startswith("<") else Path(source).parent
    for i, entry in enumerate(t.interferers or []):
        x = _entry(r, i, entry, folder)
        if x is not None:
            out.append(x)
    return tuple(out)
