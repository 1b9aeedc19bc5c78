"""Design-file tables → core objects: the requirement, the sensor, the analog stages.

Each table that passed the structure check (:mod:`resplan.designfile.structure`)
is read into its core object: every quantity is read with its unit
(:func:`resplan.units.parse.parse_quantity`) and checked for its dimension and range,
then the :class:`~resplan.chain.requirement.Requirement`,
:class:`~resplan.chain.stages.Sensor` and stages are built; a part marked ``open``
becomes an :class:`~resplan.chain.design.OpenPart` holding what is known of it. A
:class:`TableReader` records every problem, one line each, and the notes on
what was derived; nothing stops at the first problem. The converter side
(reference, ADC, digital filtering, band) is read in
:mod:`resplan.designfile.converter` with the same reader.

Examples
--------
>>> from resplan.designfile.models import SensorTable
>>> r = TableReader("demo.toml")
>>> r.q("10 kohm", "resistance", "sensor.resistance", minimum="> 0")
10000.0
>>> read_sensor(r, SensorTable(resistance="-5 ohm"), 0.01) is None
True
>>> [(e.field, e.value) for e in r.errors]
[('sensor.resistance', '-5 ohm')]
"""

from __future__ import annotations

import math
import re
import typing
from collections.abc import Callable
from typing import Any

from pydantic import BaseModel

from ..chain.design import OpenPart
from ..chain.engineering import span_from_sensitivity
from ..chain.requirement import DEFAULT_COVERAGE, Requirement
from ..chain.stages import (
    ActiveFilter,
    IntegratedAmplifier,
    InvertingStage,
    NoiseDensity,
    NonInvertingStage,
    RCFilter,
    Sensor,
    TransimpedanceStage,
)
from ..errors import DesignError
from ..units.formatting import format_percent, format_si
from ..units.parse import DIMENSIONS, parse_any, parse_db, parse_percent, parse_quantity
from ..units.ranges import (
    RANGES,
    count_problem,
    coverage_problem,
    level_db_problem,
    range_problem,
)
from .models import (
    ActiveFilterTable,
    AmplifierTable,
    InvertingTable,
    NonInvertingTable,
    RCFilterTable,
    RequirementTable,
    SensorTable,
    StageTable,
    TransimpedanceTable,
)
from .open_stages import open_filter_circuit, open_inverting, open_transimpedance
from .structure import MissingField

__all__ = [
    "TableReader",
    "put_known",
    "read_requirement",
    "read_sensor",
    "read_stage",
]


# ---------------------------------------------------------------------------
# reading values with units, collecting every problem

_EXAMPLE = {
    "voltage": '"5 V"',
    "current": '"10 µA"',
    "resistance": '"10 kΩ"',
    "capacitance": '"100 nF"',
    "frequency": '"10 Hz"',
    "temperature": '"25 degC"',
    "voltage_density": '"4.5 nV/√Hz"',
    "current_density": '"0.5 pA/√Hz"',
    "dimensionless": "128",
    "ratio_per_volt": '"2 mV/V"',
}

_NUMBER = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?\s*")


def _unit_text(text: Any) -> str:
    """The unit as the user wrote it (``"200 kg"`` → ``"kg"``)."""
    if not isinstance(text, str):
        return ""
    m = _NUMBER.match(text)
    return text[m.end() :].strip() if m else ""


def _below(x: float, minimum: str | None) -> bool:
    """``x`` fails ``minimum`` (``"> 0"``, ``"≥ 0"`` or None for no bound)."""
    return minimum == "> 0" and not x > 0 or minimum == "≥ 0" and not x >= 0


#: Why a noise field of an open part is refused.
_OPEN = "not used for an open part (the planner sets it); remove it or set open = false"


class TableReader:
    """Turns the checked tables into core objects, collecting every problem."""

    def __init__(self, source: str):
        self.source = source
        self.errors: list[DesignError] = []
        self.notes: list[str] = []

    # -- recording ---------------------------------------------------------
    def bad(self, path: str, value: Any, expected: str) -> None:
        self.errors.append(DesignError(path, value, expected))

    def missing(self, path: str, expected: str) -> None:
        self.errors.append(MissingField(path, None, expected))

    def build(self, path: str, make: Callable[..., Any], *args: Any, **kwargs: Any) -> Any:
        """Call a core constructor; its errors are recorded with ``path`` in front."""
        try:
            return make(*args, **kwargs)
        except DesignError as err:
            self.errors.append(err.with_context(prefix=path) if path else err)
            return None

    def parse(self, read: Callable[..., Any], *args: Any) -> Any:
        """Call a parser of :mod:`resplan.units.parse`; record its error as is, return None."""
        return self.build("", read, *args)

    def refuse(self, table: BaseModel, path: str, keys: typing.Iterable[str], why: str) -> None:
        for key in keys:
            value = getattr(table, key)
            if value is not None:
                alias = type(table).model_fields[key].alias or key
                self.bad(f"{path}.{alias}", value, why)

    def refuse_open(self, table: BaseModel, path: str, keys: typing.Iterable[str]) -> None:
        """Refuse the noise fields of an open part: the planner sets them."""
        self.refuse(table, path, keys, _OPEN)

    def one_of(
        self, table: BaseModel, path: str, keys: tuple[str, ...], expected: str, missing: str
    ) -> str | None:
        """The one field of ``keys`` that ``table`` gives, or None with the problem recorded.

        With two or more given, the second is refused; with none, ``missing`` is.
        """
        given = [k for k in keys if getattr(table, k) is not None]
        if len(given) == 1:
            return given[0]
        if given:
            self.bad(f"{path}.{given[1]}", getattr(table, given[1]), expected)
        else:
            self.missing(f"{path}.{missing}", expected)
        return None

    # -- values ------------------------------------------------------------
    def q(
        self,
        value: Any,
        dimension: str,
        path: str,
        *,
        required: bool = False,
        minimum: str | None = None,
        default: float | None = None,
    ) -> float | None:
        """Read a quantity; ``minimum`` is ``"> 0"`` or ``"≥ 0"``."""
        what = DIMENSIONS[dimension].description
        if value is None:
            if required:
                self.missing(path, f"{what} such as {_EXAMPLE.get(dimension, '')}".strip())
            return default
        x = self.parse(parse_quantity, value, dimension, path)
        if x is None:
            return None
        problem = range_problem(x, dimension, zero=minimum != "> 0")
        if problem is not None:
            self.bad(path, value, problem)
            return None
        if _below(x, minimum):
            unit = DIMENSIONS[dimension].si_unit
            self.bad(path, value, f"{what} {minimum}{' ' + unit if unit else ''}")
            return None
        return x

    def number(
        self,
        value: Any,
        path: str,
        what: str,
        *,
        required: bool = False,
        default: float | None = None,
        minimum: str = "> 0",
    ) -> float | None:
        if value is None:
            if required:
                self.missing(path, what)
            return default
        try:
            x = parse_quantity(value, "dimensionless", path)
        except DesignError:
            self.bad(path, value, what)
            return None
        if range_problem(x, "dimensionless") is not None:
            ranged = what if "2^40" in what else f"{what}, from {RANGES['dimensionless'].text}"
            self.bad(path, value, ranged)
            return None
        if _below(x, minimum):
            self.bad(path, value, what)
            return None
        return x

    def level_db(self, value: Any, path: str) -> float | None:
        """Read a level in dB, checked against :data:`resplan.units.ranges.LEVEL_DB_RANGE`."""
        x = self.parse(parse_db, value, path)
        if x is None:
            return None
        problem = level_db_problem(x)
        if problem is not None:
            self.bad(path, value, problem)
            return None
        return x

    def density(
        self,
        white: Any,
        corner: Any,
        path: str,
        white_key: str,
        corner_key: str,
        dimension: str = "voltage_density",
        *,
        required: bool = False,
        default_corner: float = 0.0,
    ) -> NoiseDensity | None:
        w = self.q(white, dimension, f"{path}.{white_key}", required=required, minimum="≥ 0")
        c = self.q(
            corner, "frequency", f"{path}.{corner_key}", minimum="≥ 0", default=default_corner
        )
        if w is None or c is None:
            return None
        return NoiseDensity(w, c)

    def pp_factor(self, value: Any, path: str) -> float | None:
        """The factor a peak-to-peak figure was quoted with; required, none is assumed."""
        return self.number(
            value,
            f"{path}.pp_factor",
            "the peak-to-peak factor the figure was "
            "quoted with, such as 6.6 (a p-p figure is refused without it)",
            required=True,
        )


# ---------------------------------------------------------------------------
# requirement, sensor and analog stages


def _span(r: TableReader, value: Any, current: bool, path: str) -> float | None:
    """The span, V, or A for a current-output sensor; a span of the other kind is named so."""
    dimension, other = ("current", "voltage") if current else ("voltage", "current")
    try:
        parse_quantity(value, other, path)
    except DesignError:
        return r.q(value, dimension, path, minimum="> 0")
    if current:
        why = (
            'a current span such as "10 µA": the sensor has a shunt_resistance, a current-output '
            "sensor (give sensor.resistance instead for a voltage output)"
        )
    else:
        why = (
            'a voltage span such as "10 mV": a span in A is for a current-output sensor '
            "(give sensor.shunt_resistance instead of sensor.resistance)"
        )
    r.bad(path, value, why)
    return None


def read_requirement(
    r: TableReader, t: RequirementTable, current: bool = False
) -> tuple[Requirement | None, float | None]:
    """The requirement and the span; ``current``: the sensor is a current source (spans in A)."""
    p = "requirement"
    span: float | None = None
    by_sensitivity = t.sensitivity is not None or t.excitation is not None
    if t.span is not None and by_sensitivity:
        r.bad(f"{p}.span", t.span, "either span, or sensitivity and excitation, not both")
    elif current and by_sensitivity:
        key = "sensitivity" if t.sensitivity is not None else "excitation"
        r.bad(
            f"{p}.{key}",
            getattr(t, key),
            'a span given as a current, such as span = "10 µA", for a current-output sensor '
            "(sensor.shunt_resistance), not sensitivity and excitation",
        )
    elif t.span is not None:
        span = _span(r, t.span, current, f"{p}.span")
    elif by_sensitivity:
        s = r.q(t.sensitivity, "ratio_per_volt", f"{p}.sensitivity", required=True, minimum="> 0")
        e = r.q(t.excitation, "voltage", f"{p}.excitation", required=True, minimum="> 0")
        if s is not None and e is not None:
            span = span_from_sensitivity(s, e)
            if span > 0:
                r.notes.append(
                    f"span = sensitivity × excitation = {t.sensitivity} × {t.excitation} "
                    f"= {format_si(span, 'V')}"
                )
            else:
                r.bad(f"{p}.sensitivity", t.sensitivity, "a sensitivity giving a span > 0 V")
                span = None
    else:
        r.missing(f"{p}.span", 'a span such as "10 mV", or sensitivity and excitation')

    capacity = capacity_unit = None
    if t.capacity is not None:
        read = r.parse(parse_any, t.capacity, f"{p}.capacity")
        if read is not None:
            capacity, capacity_unit = read
            if (
                not capacity > 0
                or not _unit_text(t.capacity)
                or range_problem(capacity, "any") is not None
            ):
                r.bad(
                    f"{p}.capacity", t.capacity, 'a full scale > 0 with its unit, such as "200 kg"'
                )
                capacity = None

    form = r.one_of(
        t,
        p,
        ("noise_free_counts", "noise_free_bits", "resolution", "dynamic_range"),
        "exactly one of noise_free_counts, noise_free_bits, resolution, dynamic_range",
        "resolution",
    )
    counts = dr = None
    unit_shown = _unit_text(t.capacity) if capacity is not None else ""
    if form == "noise_free_counts":
        what = count_problem(0.0)
        counts = r.number(t.noise_free_counts, f"{p}.noise_free_counts", what)
        if counts is not None and count_problem(counts) is not None:
            r.bad(f"{p}.noise_free_counts", t.noise_free_counts, what)
            counts = None
    elif form == "noise_free_bits":
        bits = r.number(
            t.noise_free_bits,
            f"{p}.noise_free_bits",
            "a number of bits from 0 to 40",
            minimum="≥ 0",
        )
        if bits is not None and bits > 40:  # 2^40 counts, the largest count accepted
            r.bad(f"{p}.noise_free_bits", t.noise_free_bits, "a number of bits from 0 to 40")
        elif bits is not None:
            counts = 2.0**bits
    elif form == "resolution":
        read = r.parse(parse_any, t.resolution, f"{p}.resolution")
        if read is not None:
            res, res_unit = read
            if t.capacity is None:
                r.missing(
                    f"{p}.capacity",
                    "the full scale in the resolution's unit, such as "
                    '"200 kg", to turn the resolution into counts',
                )
            elif capacity is not None and res_unit != capacity_unit:
                r.bad(
                    f"{p}.resolution",
                    t.resolution,
                    f"a resolution in the unit of the capacity ({t.capacity})",
                )
            elif not res > 0:
                r.bad(f"{p}.resolution", t.resolution, "a resolution > 0")
            elif range_problem(res, "any") is not None:
                r.bad(f"{p}.resolution", t.resolution, range_problem(res, "any"))
            elif capacity is not None:
                counts = capacity / res
                if counts < 1:
                    r.bad(f"{p}.resolution", t.resolution, f"a resolution at most {t.capacity}")
                    counts = None
                elif count_problem(counts) is not None:
                    r.bad(
                        f"{p}.resolution",
                        t.resolution,
                        f"a resolution giving at most 2^40 counts of {t.capacity}",
                    )
                    counts = None
                else:
                    unit_shown = _unit_text(t.resolution)
    elif form == "dynamic_range":
        dr = r.level_db(t.dynamic_range, f"{p}.dynamic_range")
        if dr is not None and not dr > 0:
            r.bad(f"{p}.dynamic_range", t.dynamic_range, "a dynamic range > 0 dB")
            dr = None

    read = r.parse(parse_percent, t.coverage, f"{p}.coverage") if t.coverage is not None else None
    if read is not None and coverage_problem(read) is not None:
        r.bad(f"{p}.coverage", t.coverage, coverage_problem(read))
        read = None
    coverage = DEFAULT_COVERAGE if read is None else read
    interference = r.q(
        t.interference,
        "current" if current else "voltage",
        f"{p}.interference",
        minimum="≥ 0",
        default=0.0,
    )

    extra = _requirement_extras(r, t, p)
    if span is None or (counts is None and dr is None) or interference is None or extra is None:
        return None, span
    engineering_per_volt = None
    if capacity is not None and unit_shown:
        try:
            unit_si, _ = parse_any(f"1 {unit_shown}", f"{p}.capacity")
        except DesignError:  # pragma: no cover - the unit was read above
            unit_si = 0.0
        if unit_si > 0:
            engineering_per_volt = capacity / unit_si / span
    description = t.description or _describe(t, counts, form, coverage)
    req = r.build(
        "",
        Requirement,
        span_v=span,
        noise_free_counts=counts,
        dynamic_range_db=dr,
        coverage=coverage,
        interference_rms_v=interference,
        description=description,
        engineering_unit=unit_shown if engineering_per_volt is not None else "",
        engineering_per_volt=engineering_per_volt,
        **extra,
    )
    return req, span


def _requirement_extras(r: TableReader, t: RequirementTable, p: str) -> dict[str, Any] | None:
    """Flatness, headroom, settling, channel rate and signal frequency, when stated."""
    out: dict[str, Any] = {}
    ok = True
    if t.passband_flatness is not None:
        x = r.level_db(t.passband_flatness, f"{p}.passband_flatness")
        if x is not None and not x > 0:
            r.bad(f"{p}.passband_flatness", t.passband_flatness, "a flatness > 0 dB")
            x = None
        ok &= x is not None
        out["passband_flatness_db"] = x
    if t.headroom is not None:
        x = r.parse(parse_percent, t.headroom, f"{p}.headroom")
        if x is not None and x > 0.9:
            r.bad(f"{p}.headroom", t.headroom, "a headroom from 0 to 90 %")
            x = None
        ok &= x is not None
        out["headroom"] = x
    for key, name, dimension in (
        ("settling_time_s", "settling_time", "time"),
        ("channel_rate_hz", "channel_rate", "frequency"),
        ("signal_frequency_hz", "signal_frequency", "frequency"),
    ):
        value = getattr(t, name)
        if value is not None:
            x = r.q(value, dimension, f"{p}.{name}", minimum="> 0")
            ok &= x is not None
            out[key] = x
    return out if ok else None


def _describe(t: RequirementTable, counts: float | None, form: str, coverage: float) -> str:
    cov = f"{format_percent(coverage)} coverage"
    span = t.span if t.span is not None else f"{t.sensitivity} × {t.excitation}"
    if form == "resolution":
        return f"{t.resolution} noise-free out of {t.capacity} at {cov}"
    if form == "noise_free_bits":
        return f"{t.noise_free_bits} noise-free bits over {span} at {cov}"
    if form == "noise_free_counts":
        return f"{counts:,.0f} noise-free counts over {span} at {cov}"
    return f"{t.dynamic_range} dynamic range over {span}"


def read_sensor(r: TableReader, t: SensorTable, span: float | None) -> Sensor | None:
    """The sensor; with ``shunt_resistance`` a current source (its span read in A)."""
    p = "sensor"
    current = t.shunt_resistance is not None
    if current and t.resistance is not None:
        r.bad(
            f"{p}.shunt_resistance",
            t.shunt_resistance,
            "either resistance (a voltage-output sensor) or shunt_resistance (a current-output "
            "sensor, such as a photodiode), not both",
        )
        return None
    if t.resistance is None and not current:
        r.missing(
            f"{p}.resistance",
            'a resistance such as "10 kΩ" (or shunt_resistance for a current-output sensor)',
        )
        return None
    key = "shunt_resistance" if current else "resistance"
    resistance = r.q(getattr(t, key), "resistance", f"{p}.{key}", required=True, minimum="> 0")
    noise = None
    if t.noise_density is not None or t.noise_corner is not None:
        noise = r.density(
            t.noise_density,
            t.noise_corner,
            p,
            "noise_density",
            "noise_corner",
            "current_density" if current else "voltage_density",
            required=True,
        )
    temperature = r.q(t.temperature, "temperature", f"{p}.temperature", minimum="> 0")
    offset = r.q(t.offset, "current" if current else "voltage", f"{p}.offset", default=0.0)
    capacitance = r.q(t.capacitance, "capacitance", f"{p}.capacitance", minimum="> 0")
    dark = r.q(t.dark_current, "current", f"{p}.dark_current", minimum="≥ 0", default=0.0)
    if span is None or resistance is None or offset is None or dark is None:
        return None
    if t.capacitance is not None and capacitance is None:
        return None
    if (t.noise_density is not None and noise is None) or (
        t.temperature is not None and temperature is None
    ):
        return None
    return r.build(
        p,
        Sensor,
        span_v=span,
        resistance_ohm=resistance,
        bipolar=bool(t.bipolar),
        noise=noise,
        temperature_k=temperature,
        name=t.name or "sensor",
        offset_v=offset,
        capacitance_f=capacitance,
        dark_current_a=dark,
        differential=bool(t.differential),
        output="current" if current else "voltage",
    )


def read_stage(r: TableReader, i: int, t: StageTable) -> Any:
    p = f"stages[{i}]"
    name = t.name or f"stage {i + 1}"
    if isinstance(t, NonInvertingTable):
        return _noninverting(r, p, name, t)
    if isinstance(t, AmplifierTable):
        return _amplifier(r, p, name, t)
    if isinstance(t, RCFilterTable):
        return _rc_filter(r, p, name, t)
    if isinstance(t, InvertingTable):
        return _inverting(r, p, name, t)
    if isinstance(t, TransimpedanceTable):
        return _transimpedance(r, p, name, t)
    return _active_filter(r, p, name, t)


def _transimpedance(r: TableReader, p: str, name: str, t: TransimpedanceTable) -> Any:
    if t.open:
        return open_transimpedance(r, p, name, t)
    rf = r.q(t.rf, "resistance", f"{p}.rf", required=True, minimum="> 0")
    cf = r.q(t.cf, "capacitance", f"{p}.cf", minimum="> 0")
    gbw = r.q(t.gbw, "frequency", f"{p}.gbw", minimum="> 0")
    c_in = r.q(
        t.input_capacitance, "capacitance", f"{p}.input_capacitance", minimum="≥ 0", default=0.0
    )
    en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
    i_minus = NoiseDensity(0.0)
    if t.in_ is not None or t.in_corner is not None:
        i_minus = r.density(
            t.in_, t.in_corner, p, "in", "in_corner", "current_density", required=True
        )
    if None in (rf, en, i_minus, c_in):
        return None
    if (t.cf is not None and cf is None) or (t.gbw is not None and gbw is None):
        return None
    return r.build(
        p,
        TransimpedanceStage,
        name,
        rf,
        en,
        i_minus,
        cf_f=cf,
        gbw_hz=gbw,
        input_capacitance_f=c_in,
    )


def _inverting(r: TableReader, p: str, name: str, t: InvertingTable) -> Any:
    if t.open:
        return open_inverting(r, p, name, t)
    rf = r.q(t.rf, "resistance", f"{p}.rf", required=True, minimum="> 0")
    rin = r.q(t.rin, "resistance", f"{p}.rin", required=True, minimum="> 0")
    gbw = r.q(t.gbw, "frequency", f"{p}.gbw", minimum="> 0")
    en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
    i_minus = NoiseDensity(0.0)
    if t.in_ is not None or t.in_corner is not None:
        i_minus = r.density(
            t.in_, t.in_corner, p, "in", "in_corner", "current_density", required=True
        )
    if None in (rf, rin, en, i_minus) or (t.gbw is not None and gbw is None):
        return None
    return r.build(p, InvertingStage, name, rf, rin, en, i_minus, gbw)


def _noninverting(r: TableReader, p: str, name: str, t: NonInvertingTable) -> Any:
    rf = r.q(t.rf, "resistance", f"{p}.rf", required=not t.open, minimum="≥ 0")
    rg = r.q(t.rg, "resistance", f"{p}.rg", minimum="> 0")
    gbw = r.q(t.gbw, "frequency", f"{p}.gbw", minimum="> 0")
    en_c = r.q(t.en_corner, "frequency", f"{p}.en_corner", minimum="≥ 0", default=0.0)
    in_c = r.q(t.in_corner, "frequency", f"{p}.in_corner", minimum="≥ 0", default=0.0)
    if t.open:
        r.refuse_open(t, p, ("en", "in_", "in_minus", "in_minus_corner"))
        known: dict[str, Any] = {}
        gain = r.number(t.gain, f"{p}.gain", "a gain > 0 V/V")
        if t.gain is not None and t.rf is not None:
            r.bad(f"{p}.gain", t.gain, "either gain or rf and rg, not both")
        elif gain is not None:
            known["gain"] = gain
        elif rf is not None:
            known["gain"] = 1.0 + (rf / rg if rg else 0.0)
            if rf > 0 and rg:  # the resistors are chosen: their noise is fixed
                known.update(rf_ohm=rf, rg_ohm=rg)
        put_known(known, "gbw_hz", gbw, t.gbw)
        put_known(known, "en_corner_hz", en_c, t.en_corner)
        put_known(known, "in_corner_hz", in_c, t.in_corner)
        known["op_amp"] = True
        return r.build(p, OpenPart, "amplifier", name, p, known)
    r.refuse(
        t,
        p,
        ("gain",),
        "not given for a non-inverting stage: its gain is 1 + rf/rg "
        "(give gain only with open = true)",
    )
    en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
    i_plus = r.density(t.in_, t.in_corner, p, "in", "in_corner", "current_density", required=True)
    i_minus = None
    if t.in_minus is not None or t.in_minus_corner is not None:
        i_minus = r.density(
            t.in_minus,
            t.in_minus_corner,
            p,
            "in_minus",
            "in_minus_corner",
            "current_density",
            required=True,
            default_corner=in_c or 0.0,
        )
        if i_minus is None:
            return None
    if None in (rf, en, i_plus, en_c, in_c) or (t.rg is not None and rg is None):
        return None
    if t.gbw is not None and gbw is None:
        return None
    return r.build(p, NonInvertingStage, name, rf, rg, en, i_plus, i_minus, gbw)


def put_known(known: dict[str, Any], key: str, value: Any, given: Any) -> None:
    """Keep what the file says of an open part: ``value`` when the field was given and read."""
    if given is not None and value is not None:
        known[key] = value


def _amplifier(r: TableReader, p: str, name: str, t: AmplifierTable) -> Any:
    gain = r.number(t.gain, f"{p}.gain", "a gain > 0 V/V", required=not t.open)
    bandwidth = r.q(t.bandwidth, "frequency", f"{p}.bandwidth", minimum="> 0")
    en_c = r.q(t.en_corner, "frequency", f"{p}.en_corner", minimum="≥ 0", default=0.0)
    in_c = r.q(t.in_corner, "frequency", f"{p}.in_corner", minimum="≥ 0", default=0.0)
    if t.open:
        r.refuse_open(t, p, ("en", "en_out", "en_out_corner", "in_"))
        known: dict[str, Any] = {}
        put_known(known, "gain", gain, t.gain)
        put_known(known, "bandwidth_hz", bandwidth, t.bandwidth)
        put_known(known, "en_corner_hz", en_c, t.en_corner)
        put_known(known, "in_corner_hz", in_c, t.in_corner)
        return r.build(p, OpenPart, "amplifier", name, p, known)
    en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
    en_out = current = None
    if t.en_out is not None or t.en_out_corner is not None:
        en_out = r.density(t.en_out, t.en_out_corner, p, "en_out", "en_out_corner", required=True)
        if en_out is None:
            return None
    if t.in_ is not None:
        current = r.density(t.in_, t.in_corner, p, "in", "in_corner", "current_density")
        if current is None:
            return None
    elif t.in_corner is not None:
        r.bad(f"{p}.in_corner", t.in_corner, "a current noise `in` to go with it")
    else:
        r.notes.append(f"{name}: no current noise (in) given, none counted")
    if gain is None or en is None or (t.bandwidth is not None and bandwidth is None):
        return None
    return r.build(p, IntegratedAmplifier, name, gain, en, en_out, current, bandwidth)


def _rc_filter(r: TableReader, p: str, name: str, t: RCFilterTable) -> Any:
    res = r.q(t.resistance, "resistance", f"{p}.resistance", required=not t.open, minimum="> 0")
    cap = r.q(t.capacitance, "capacitance", f"{p}.capacitance", required=not t.open, minimum="> 0")
    if t.open:
        known: dict[str, Any] = {"response": "rc", "order": 1}
        cutoff = r.q(t.cutoff, "frequency", f"{p}.cutoff", minimum="> 0")
        if t.cutoff is not None and (t.resistance is not None or t.capacitance is not None):
            r.bad(f"{p}.cutoff", t.cutoff, "either cutoff, or resistance and capacitance")
        elif cutoff is not None:
            known["cutoff_hz"] = cutoff
        elif res is not None and cap is not None:
            known["cutoff_hz"] = 1.0 / (2.0 * math.pi * res * cap)
        return r.build(p, OpenPart, "filter", name, p, known)
    r.refuse(
        t,
        p,
        ("cutoff",),
        "not given for an RC filter: its cut-off is 1/(2πRC) (give cutoff only with open = true)",
    )
    leg = r.q(
        t.leg_capacitance, "capacitance", f"{p}.leg_capacitance", minimum="≥ 0", default=0.0
    )
    if res is None or cap is None or leg is None:
        return None
    return r.build(p, RCFilter, name, res, cap, leg)


def _active_filter(r: TableReader, p: str, name: str, t: ActiveFilterTable) -> Any:
    if t.sections is not None:  # given by its component values
        from .filters import read_filter_sections

        return read_filter_sections(r, p, name, t)
    need = not t.open
    if t.response is None and need:
        r.missing(f"{p}.response", "one of butterworth, bessel, rc")
    if t.order is None and need:
        r.missing(f"{p}.order", "a whole number from 1 to 8")
    cutoff = r.q(t.cutoff, "frequency", f"{p}.cutoff", required=need, minimum="> 0")
    gain = r.number(t.gain, f"{p}.gain", "a pass-band gain > 0 V/V", default=1.0)
    if t.open:
        known: dict[str, Any] = {}
        if t.topology is not None:
            open_filter_circuit(r, p, t, known)
        else:
            r.refuse_open(t, p, ("noise_resistance", "en", "en_corner"))
        put_known(known, "response", t.response, t.response)
        put_known(known, "order", t.order, t.order)
        put_known(known, "cutoff_hz", cutoff, t.cutoff)
        put_known(known, "gain", gain, t.gain)
        return r.build(p, OpenPart, "filter", name, p, known)
    nr = r.q(t.noise_resistance, "resistance", f"{p}.noise_resistance", minimum="≥ 0", default=0.0)
    en = None
    if t.en is not None or t.en_corner is not None:
        en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
        if en is None:
            return None
    else:
        r.notes.append(f"{name}: no op-amp noise (en) given, none counted")
    if None in (t.response, t.order, cutoff, gain, nr):
        return None
    if t.topology is None:
        r.refuse(t, p, ("in_", "in_corner", "gbw", "capacitor"), "given only with a topology")
        return r.build(p, ActiveFilter, name, t.response, t.order, cutoff, gain, nr, en)
    gbw = r.q(t.gbw, "frequency", f"{p}.gbw", minimum="> 0")
    cap = r.q(t.capacitor, "capacitance", f"{p}.capacitor", minimum="> 0", default=10e-9)
    i_n = None
    if t.in_ is not None or t.in_corner is not None:
        i_n = r.density(t.in_, t.in_corner, p, "in", "in_corner", "current_density", required=True)
        if i_n is None:
            return None
    if cap is None or (t.gbw is not None and gbw is None):
        return None
    return r.build(
        p,
        ActiveFilter,
        name,
        t.response,
        t.order,
        cutoff,
        gain,
        nr,
        en,
        t.topology,
        i_n,
        gbw,
        cap,
    )
