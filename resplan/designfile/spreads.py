"""Spreads in a design file: read them before the tables are checked, one per field.

Any numeric field may be written as a small inline table instead of a plain
value (plain values keep meaning "typical")::

    en = { typ = "4 nV/√Hz", max = "6 nV/√Hz" }
    resistance = { value = "1 kohm", tolerance = "1 %" }
    temperature = { min = "-10 degC", max = "50 degC" }
    noise_density = { value = "20 nV/√Hz", sigma = "2 nV/√Hz", tempco = "0.3 %/K" }

:func:`split_spreads` walks the parsed TOML, replaces every such table by its
typical value (so the table readers see plain values and check them as they
always do) and returns one :class:`~resplan.chain.tolerance.Spread` per field.
Each value of a spread is read with the same unit parser as the field and must
have the dimension of its typical value. ``requirement.yield`` (the fraction of
boards that must meet, for Monte Carlo runs) is taken out here too.

:func:`variant_maker` gives the function that rebuilds the design with some
fields set to other values (SI), temperature coefficients applied: the exact
path of the worst case, of the Monte Carlo model's calibration and of the
sensitivities.

Examples
--------
>>> typical, spreads, y, notes = split_spreads(
...     {"stages": [{"en": {"typ": "4 nV/√Hz", "max": "6 nV/√Hz"}}]})
>>> typical["stages"][0]["en"], spreads[0].field, spreads[0].distribution
('4 nV/√Hz', 'stages[0].en', 'normal')
"""

from __future__ import annotations

import copy
import functools
import math
import re
from collections.abc import Callable, Mapping
from typing import Any

from ..chain.tolerance import TEMPCO_REFERENCE_K, WORST_CASE_SIGMAS, Spread
from ..errors import DesignError, DesignErrors
from ..units.formatting import format_si, format_temperature
from ..units.parse import DIMENSIONS, parse_any, parse_percent, parse_quantity

__all__ = [
    "DesignVariant",
    "split_spreads",
    "variant_maker",
    "SPREAD_KEYS",
    "set_path",
    "get_path",
    "si_value",
]

#: Keys of a spread table.
SPREAD_KEYS = frozenset({"typ", "max", "min", "value", "tolerance", "sigma", "tempco"})
_NUMBER = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?\s*")


def _is_spread(value: Any) -> bool:
    return isinstance(value, dict) and bool(value) and set(value) <= SPREAD_KEYS


def _walk(node: Any, path: str):
    """(path, container, key) of every spread table below ``node``."""
    if isinstance(node, dict):
        for key, value in node.items():
            here = f"{path}.{key}" if path else str(key)
            if _is_spread(value) and path != "plan.weights":
                yield here, node, key
            else:
                yield from _walk(value, here)
    elif isinstance(node, list):
        for i, value in enumerate(node):
            here = f"{path}[{i}]"
            if _is_spread(value):
                yield here, node, i
            else:
                yield from _walk(value, here)


def _unit_text(text: Any) -> str:
    if not isinstance(text, str):
        return ""
    m = _NUMBER.match(text)
    return text[m.end() :].strip() if m else ""


def si_value(text: Any, field: str, of: str | None = None) -> tuple[float, str]:
    """A field's value in SI and its SI unit key (``"K"`` for absolute temperatures).

    A temperature field (``of`` names the field when ``field`` is a part of its
    spread) is read as an absolute temperature; a level ``"98 dB"`` stays in dB
    (unit ``"dB"``).
    """
    if (of or field).endswith(".temperature"):
        return parse_quantity(text, "temperature", field), "K"
    if isinstance(text, str) and _unit_text(text).lower() == "db":
        return float(_NUMBER.match(text).group()), "dB"
    return parse_any(text, field)


def _text_for(value: float, written: Any, unit_key: str) -> Any:
    """``value`` (SI) written in the unit of ``written``, for the field's own reader."""
    value = float(value)
    # 15 significant digits: exact to 1e-15 and read back without float noise in notes.
    if unit_key == "K":
        return f"{value:.15g} K"  # number-format: reviewed (read back by the field's reader)
    if unit_key == "dB":
        return f"{value:.15g} dB"  # number-format: reviewed (read back by the field's reader)
    unit = _unit_text(written)
    if not unit:
        return value
    factor, _ = parse_any(f"1 {unit}", "unit")
    return f"{value / factor:.15g} {unit}"  # number-format: reviewed (read back)


def _read_spread(path: str, table: dict[str, Any]) -> tuple[Spread, Any]:
    """One spread table → its :class:`Spread` and the typical value to write back."""
    keys = set(table)
    forms = {
        "typ-max": {"typ", "max"},
        "sigma": {"value", "sigma"},
        "tolerance": {"value", "tolerance"},
        "min-max": {"min", "max"},
        "min-max-typ": {"typ", "min", "max"},
        "tempco": {"value"},
    }
    body = keys - {"tempco"}
    form = next((name for name, need in forms.items() if body == need), None)
    if form is None:
        raise DesignError(
            path,
            "{ " + ", ".join(sorted(keys)) + " }",
            "a spread { typ, max }, { value, tolerance }, { min, max } (optionally with typ) "
            "or { value, sigma }, each optionally with tempco",
        )
    values: dict[str, float] = {}
    unit = None
    for key in sorted(body):
        if key in ("tolerance", "sigma"):
            continue
        v, u = si_value(table[key], f"{path}.{key}", path)
        if unit is not None and u != unit:
            raise DesignError(f"{path}.{key}", table[key], f"a value in the unit of {path}")
        unit = u
        values[key] = v
    tempco = 0.0
    if "tempco" in table:
        tc, tu = parse_any(table["tempco"], f"{path}.tempco")
        if tu != "1/K":
            raise DesignError(f"{path}.tempco", table["tempco"], 'a coefficient such as "0.3 %/K"')
        tempco = tc
    text = "{ " + ", ".join(f"{k} = {table[k]!r}" for k in table) + " }"
    display = _display_unit(unit or "")
    if form == "typ-max":
        typ, top = values["typ"], values["max"]
        if top < typ:
            raise DesignError(f"{path}.max", table["max"], f"a maximum ≥ typ ({table['typ']})")
        sigma = (top - typ) / WORST_CASE_SIGMAS
        spread = Spread(
            path, "typ-max", typ, "normal", sigma, 2 * typ - top, top, display, tempco, text
        )
        written = table["typ"]
    elif form == "sigma":
        typ = values["value"]
        sigma, su = _difference(table["sigma"], f"{path}.sigma", unit)
        k = WORST_CASE_SIGMAS * sigma
        spread = Spread(
            path, "sigma", typ, "normal", sigma, typ - k, typ + k, display, tempco, text
        )
        written = table["value"]
    elif form == "tolerance":
        typ = values["value"]
        tol_text = table["tolerance"]
        tol, tu = parse_any(tol_text, f"{path}.tolerance")
        relative = isinstance(tol_text, str) and ("%" in tol_text or "ppm" in tol_text)
        if tu == "" and (unit != "" or relative):
            if not 0 <= tol < 1:
                raise DesignError(f"{path}.tolerance", tol_text, 'a tolerance such as "1 %"')
            half = abs(typ) * tol
        else:
            half, _ = _difference(tol_text, f"{path}.tolerance", unit)
        spread = Spread(
            path, "tolerance", typ, "uniform", 0.0, typ - half, typ + half, display, tempco, text
        )
        written = table["value"]
    elif form in ("min-max", "min-max-typ"):
        low, high = values["min"], values["max"]
        if high < low:
            raise DesignError(f"{path}.max", table["max"], f"a maximum ≥ min ({table['min']})")
        typ = values.get("typ", 0.5 * (low + high))
        if not low <= typ <= high:
            raise DesignError(f"{path}.typ", table["typ"], "a typical value between min and max")
        spread = Spread(path, "min-max", typ, "uniform", 0.0, low, high, display, tempco, text)
        written = table.get("typ", table["min"])
        if "typ" not in table:
            written = _text_for(typ, table["min"], unit)
    else:  # value with a temperature coefficient only
        typ = values["value"]
        spread = Spread(path, "tempco", typ, "fixed", unit=display, tempco_per_k=tempco, text=text)
        written = table["value"]
    return spread, (written, unit)


@functools.cache
def _si_symbols() -> dict[str, str]:
    out = {"K": "K", "dB": "dB", "1/K": "1/K"}
    for dim in DIMENSIONS.values():
        if dim.si_unit and dim.dimensionality:
            out.setdefault(parse_any(f"1 {dim.si_unit}", "unit")[1], dim.si_unit)
    return out


def _display_unit(base: str) -> str:
    """The SI symbol of a base-unit string (``"V/√Hz"``), or the string itself."""
    return _si_symbols().get(base, base)


def _difference(text: Any, field: str, unit: str | None) -> tuple[float, str]:
    """A standard deviation or absolute tolerance: a difference in the field's unit, ≥ 0."""
    v, u = parse_any(text, field)
    if u != (unit or "") or v < 0:
        raise DesignError(field, text, "a non-negative difference in the unit of the value")
    return v, u


def get_path(data: Any, path: str) -> Any:
    """The value at a design-file path such as ``"stages[0].en"`` (KeyError if absent)."""
    node = data
    for name, index in _steps(path):
        node = node[name] if name else node
        if index is not None:
            for i in index:
                node = node[i]
    return node


def set_path(data: Any, path: str, value: Any) -> None:
    """Set the value at a design-file path in place."""
    steps = _steps(path)
    node = data
    for n, (name, index) in enumerate(steps):
        last = n == len(steps) - 1
        if name:
            if last and index is None:
                node[name] = value
                return
            node = node[name]
        if index is not None:
            for j, i in enumerate(index):
                if last and j == len(index) - 1:
                    node[i] = value
                    return
                node = node[i]


_STEP = re.compile(r"([^.\[\]]*)((?:\[\d+\])*)")


def _steps(path: str) -> list[tuple[str, tuple[int, ...] | None]]:
    out = []
    for part in path.split("."):
        m = _STEP.fullmatch(part)
        if m is None:  # pragma: no cover - paths are built here
            raise KeyError(path)
        idx = tuple(int(i) for i in re.findall(r"\[(\d+)\]", m.group(2)))
        out.append((m.group(1), idx or None))
    return out


def split_spreads(
    data: Mapping[str, Any],
) -> tuple[dict[str, Any], tuple[Spread, ...], float | None, tuple[str, ...]]:
    """Take the spreads out of a parsed design file.

    Returns
    -------
    typical : dict
        A copy of ``data`` with every spread replaced by its typical value
        (temperature coefficients applied at the typical temperatures) and
        ``requirement.yield`` removed.
    spreads : tuple of Spread
    yield_required : float or None
        The fraction of boards that must meet, from ``requirement.yield``.
    notes : tuple of str

    Raises
    ------
    DesignErrors
        One line per bad spread.
    """
    typical = copy.deepcopy(dict(data))
    errors: list[DesignError] = []
    spreads: list[Spread] = []
    written_units: dict[str, tuple[Any, str]] = {}
    yield_required = None
    req = typical.get("requirement")
    if isinstance(req, dict) and "yield" in req:
        try:
            yield_required = parse_percent(req.pop("yield"), "requirement.yield")
        except DesignError as err:
            errors.append(err)
    for path, container, key in list(_walk(typical, "")):
        try:
            spread, (written, unit) = _read_spread(path, container[key])
        except DesignError as err:
            errors.append(err)
            continue
        spreads.append(spread)
        container[key] = written
        written_units[path] = (written, unit)
    if errors:
        raise DesignErrors(errors)
    notes: list[str] = []
    tempcos = [s for s in spreads if s.tempco_per_k]
    if tempcos:
        temps = _temperatures(typical, {})
        for s in tempcos:
            t = temps[1] if s.field.startswith("sensor.") else temps[0]
            value = s.typical * (1 + s.tempco_per_k * (t - TEMPCO_REFERENCE_K))
            written, unit = written_units[s.field]
            set_path(typical, s.field, _text_for(value, written, unit))
            notes.append(
                f"{s.field}: {format_si(s.typical, s.unit, 4)} at 25 °C scaled by its temperature "
                f"coefficient to {format_si(value, s.unit, 4)} at {format_temperature(t)}"
            )
    return typical, tuple(spreads), yield_required, tuple(notes)


def _temperatures(typical: Mapping[str, Any], values: Mapping[str, float]) -> tuple[float, float]:
    """Electronics and sensor temperature, K: ``values`` first, then the file (25 °C default)."""

    def read(path: str) -> float | None:
        if path in values:
            return values[path]
        try:
            raw = get_path(typical, path)
        except (KeyError, IndexError, TypeError):
            return None
        try:
            return si_value(raw, path)[0]
        except DesignError:
            return None

    t = read("requirement.temperature") or TEMPCO_REFERENCE_K
    ts = read("sensor.temperature") or t
    return t, ts


class DesignVariant:
    """Rebuilds a design with some fields at other SI values (see :func:`variant_maker`)."""

    def __init__(
        self,
        typical: Mapping[str, Any],
        spreads: tuple[Spread, ...],
        build: Callable[[dict], Any],
    ):
        self._typical = typical
        self._build = build
        self._tempcos = {s.field: s for s in spreads if s.tempco_per_k}
        self._by_field = {s.field: s for s in spreads}
        self._fields: tuple[tuple[str, float], ...] | None = None

    def __call__(self, values: Mapping[str, float]) -> Any:
        typical = self._typical
        data = copy.deepcopy(dict(typical))
        temps = _temperatures(typical, values)
        for path in set(values) | set(self._tempcos):
            raw = get_path(typical, path)
            if path in values:
                value = float(values[path])
            elif path in self._by_field:
                value = self._by_field[path].typical
            else:  # pragma: no cover - tempco fields are spreads
                value = si_value(raw, path)[0]
            spread = self._tempcos.get(path)
            if spread is not None:
                t = temps[1] if path.startswith("sensor.") else temps[0]
                value *= 1 + spread.tempco_per_k * (t - TEMPCO_REFERENCE_K)
            unit = si_value(raw, path)[1]
            if not math.isfinite(value):
                raise DesignError(path, value, "a finite value")
            set_path(data, path, _text_for(value, raw, unit))
        return self._build(data)

    def fields(self) -> tuple[tuple[str, float], ...]:
        """Every numeric field of the design file: (path, typical SI value), in file order.

        Values with a temperature coefficient are given at 25 °C, as :meth:`__call__` takes them.
        """
        if self._fields is None:
            out: list[tuple[str, float]] = []
            for path, value in _leaves(self._typical, ""):
                if path in self._by_field:
                    out.append((path, self._by_field[path].typical))
                    continue
                try:
                    out.append((path, si_value(value, path)[0]))
                except DesignError:
                    continue
            self._fields = tuple(out)
        return self._fields


#: Free-text fields: a label such as "4.096 V reference" is not a figure (and reading it
#: as one would send its words to the unit parser).
_TEXT_KEYS = frozenset({"name", "title", "project", "revision", "author", "date", "change"})


def _leaves(node: Any, path: str):
    if isinstance(node, dict):
        for key, value in node.items():
            if key in _TEXT_KEYS or (not path and key == "meta"):
                continue
            yield from _leaves(value, f"{path}.{key}" if path else str(key))
    elif isinstance(node, list):
        for i, value in enumerate(node):
            yield from _leaves(value, f"{path}[{i}]")
    elif (
        isinstance(node, str)
        and _NUMBER.match(node)
        or (isinstance(node, int | float) and not isinstance(node, bool))
    ):
        yield path, node


def variant_maker(
    typical: Mapping[str, Any], spreads: tuple[Spread, ...], build: Callable[[dict], Any]
) -> DesignVariant:
    """The function that rebuilds the design with some fields at other SI values.

    Parameters
    ----------
    typical : mapping
        The design file with spreads replaced by typical values.
    spreads : tuple of Spread
        Their temperature coefficients are applied at the temperatures of each variant.
    build : callable
        Turns a mapping like ``typical`` into a design.

    Returns
    -------
    DesignVariant
        ``variant({"stages[0].en": 6e-9, "requirement.temperature": 358.15})`` → design.
        A field's value is SI at 25 °C when it has a temperature coefficient;
        ``variant.fields()`` lists every numeric field with its typical value.
    """
    return DesignVariant(typical, spreads, build)
