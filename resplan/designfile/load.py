"""Design files: TOML text → checked tables → core objects → :class:`resplan.chain.design.Design`.

A design file is plain TOML kept beside the schematic. Reading it goes in three
steps, and every problem of every step is collected so the user sees them all
at once, one line each (:class:`resplan.errors.DesignErrors`):

1. ``tomllib`` parses the text (a syntax error is one line ``file:line:col: ...``);
2. pydantic models check the structure: the tables and fields that exist, their
   types, no unknown keys (with a "did you mean" suggestion);
3. every quantity is read with its unit (:func:`resplan.units.parse.parse_quantity`),
   checked for its dimension and range, and the core objects are built.

The same pydantic models give the JSON Schema (:func:`design_schema`), so an
editor can complete and check a design file. The format is described in
``docs/design-file.md``.

This module runs the steps and puts the design together; the models and the
schema live in :mod:`resplan.designfile.models`, the structure problems in
:mod:`resplan.designfile.structure`, the reading of each table in
:mod:`resplan.designfile.parts` and :mod:`resplan.designfile.converter`.

Examples
--------
>>> from resplan.designfile.examples import example_text
>>> design = loads_design(example_text("hive-scale"), "hive-scale.toml")
>>> design.is_complete, round(design.requirement.span_v * 1e3, 3)
(True, 10.0)
"""

from __future__ import annotations

import hashlib
import math
import re
import tomllib
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from ..chain.design import Design, Meta, OpenPart, Revision
from ..chain.signal_chain import ROOM_TEMPERATURE_K
from ..errors import DesignError, DesignErrors, ResplanError, describe_value, escaped
from ..units.formatting import format_si
from .bounds import MAX_FILE_BYTES, DesignFileError, capped, check_bounds, read_bounded
from .converter import (
    MAX_AVERAGE,
    MAX_DECIMATION,
    read_adc,
    read_band,
    read_digital,
    read_reference,
)
from .interference import read_interferers
from .models import STAGE_TYPES, DesignFile, MetaTable, PlanTable, design_schema
from .parts import TableReader, read_requirement, read_sensor, read_stage
from .spreads import split_spreads, variant_maker
from .structure import (
    MissingField,
    UnknownField,
    did_you_mean,
    field_is_under,
    toml_key,
    validate_structure,
    with_source,
)

__all__ = [
    "DesignFile",
    "DesignFileError",
    "MissingField",
    "UnknownField",
    "load_design",
    "loads_design",
    "design_from_mapping",
    "design_schema",
    "check_design",
    "placed",
    "STAGE_TYPES",
    "MAX_DECIMATION",
    "MAX_AVERAGE",
]


# ---------------------------------------------------------------------------
# names and weights across parts


def _names(r: TableReader, parts: list[tuple[str, str]]) -> None:
    seen: dict[str, str] = {}
    for path, name in parts:
        if name in seen:
            r.bad(f"{path}.name", name, f"a name no other part uses ({seen[name]} has it)")
        else:
            seen[name] = path


def _weights(
    r: TableReader, t: PlanTable | None, parts: list[tuple[str, str, bool]]
) -> dict[str, float]:
    """Weights keyed by part name; a key may also be the part's table (``adc``, ``stages[1]``)."""
    out: dict[str, float] = {}
    if t is None or t.weights is None:
        return out
    by_name = {name: is_open for _, name, is_open in parts}
    by_path = {path: name for path, name, _ in parts}
    open_names = [name for _, name, is_open in parts if is_open]
    for key, value in t.weights.items():
        path = f"plan.weights.{toml_key(key)}"
        name = key if key in by_name else by_path.get(key)
        if name is None:
            more = did_you_mean(key, [*by_name, *by_path])
            listed = ", ".join(open_names) if open_names else "none is open"
            r.bad(path, key, f"the name of an open part ({listed}){more}")
            continue
        if not by_name[name]:
            r.bad(
                path,
                key,
                f"the name of an open part ({name} is given: only open parts share the budget)",
            )
            continue
        w = r.number(value, path, "a weight ≥ 0", minimum="≥ 0")
        if w is not None:
            out[name] = w
    return out


def _weighted(part: Any, weights: dict[str, float]) -> Any:
    if isinstance(part, OpenPart) and part.name in weights:
        return OpenPart(part.kind, part.name, part.field_path, part.known, weights[part.name])
    return part


# ---------------------------------------------------------------------------
# the design from its tables


def design_from_mapping(
    data: Mapping[str, Any], source: str = "<design>", sha256: str = ""
) -> Design:
    """Build a :class:`Design` from the parsed TOML tables.

    Parameters
    ----------
    data : mapping
        The design as ``tomllib`` returns it.
    source : str
        Where it came from, named in every error.
    sha256 : str
        Digest of the file's bytes, kept for traceability.

    Raises
    ------
    DesignErrors
        Every problem found, one per line, each naming the field, the value and
        what was expected.
    """
    try:
        data, spreads, yield_required, spread_notes = split_spreads(data)
    except DesignErrors as err:
        raise DesignErrors(with_source(e, source) for e in err.errors) from None
    model, structure, reported = validate_structure(data)
    r = TableReader(source)
    meta_t = model.meta or MetaTable()
    meta = Meta(
        title=meta_t.title or "Untitled design",
        project=meta_t.project or "",
        revision=meta_t.revision or "",
        author=meta_t.author or "",
        date=meta_t.date or "",
        history=tuple(
            Revision(h.revision or "", h.date or "", h.author or "", h.change or "")
            for h in meta_t.history or ()
        ),
    )
    current = model.sensor.shunt_resistance is not None
    requirement, span = read_requirement(r, model.requirement, current)
    temperature = r.q(
        model.requirement.temperature,
        "temperature",
        "requirement.temperature",
        minimum="> 0",
        default=ROOM_TEMPERATURE_K,
    )
    sensor = read_sensor(r, model.sensor, span)
    stages = [read_stage(r, i, s) for i, s in enumerate(model.stages or [])]
    reference = read_reference(r, model.reference) if model.reference else None
    adc = read_adc(r, model.adc, reference, model.reference)
    digital = read_digital(r, model.digital, adc)
    band = read_band(r, model.requirement, digital, adc)
    if current and (model.requirement.interferers or model.requirement.interferer):
        key = "interferers" if model.requirement.interferers else "interferer"
        r.bad(
            f"requirement.{key}",
            "given",
            "no stated interferers for a current-output sensor yet (their amplitudes are "
            "volts at the sensor): reserve an allowance in A rms as requirement.interference",
        )
        interferers: tuple = ()
    else:
        interferers = read_interferers(r, model.requirement, source)
    interferer = None
    if model.requirement.interferer is not None and interferers:
        interferer = (interferers[0].frequency_hz, interferers[0].amplitude_v)
    parts = [
        (f"stages[{i}]", s.name or f"stage {i + 1}", bool(s.open))
        for i, s in enumerate(model.stages or [])
    ]
    if model.reference:
        parts.append(("reference", model.reference.name or "reference", bool(model.reference.open)))
    parts.append(("adc", model.adc.name or "ADC", bool(model.adc.open)))
    _names(r, [(path, name) for path, name, _ in parts])
    weights = _weights(r, model.plan, parts)
    if (
        structure
        or r.errors
        or None in (requirement, sensor, adc, band, temperature)
        or (None in stages)
    ):
        # Problems inside a part already refused for its structure are not repeated.
        later = [e for e in r.errors if not field_is_under(e.field, reported)]
        found = structure + later
        if not found:  # pragma: no cover - every None comes with a recorded problem
            found = [DesignError("design", "?", "a complete design")]
        raise DesignErrors(capped([with_source(e, source) for e in found], source))
    stages = [_weighted(s, weights) for s in stages]
    reference = _weighted(reference, weights)
    adc = _weighted(adc, weights)
    design = Design(
        meta=meta,
        requirement=requirement,
        band=band,
        sensor=sensor,
        stages=tuple(stages),
        adc=adc,
        reference=reference,
        digital=digital,
        temperature_k=temperature,
        source=source,
        sha256=sha256,
        weights=weights,
        alias_interferer=interferer,
        interferers=interferers,
        notes=tuple(r.notes) + spread_notes,
        spreads=spreads,
        yield_required=yield_required,
        variant=variant_maker(data, spreads, lambda d: design_from_mapping(d, source, sha256)),
    )
    if design.is_complete:
        try:
            design.chain()
        except DesignError as err:
            raise DesignErrors([with_source(err, source)]) from None
    return design


# ---------------------------------------------------------------------------
# text and files

_TOML_POSITION = re.compile(r"\s*\(at line (\d+), column (\d+)\)\s*$")


def loads_design(text: str, source: str = "<design>") -> Design:
    """Read a design from TOML text. See :func:`design_from_mapping` for the errors.

    Raises
    ------
    DesignFileError
        For bad TOML, with ``source:line:col``.
    DesignErrors
        For everything else.
    """
    if len(text) > MAX_FILE_BYTES:
        raise DesignFileError(
            f"{source}: longer than the {MAX_FILE_BYTES:,} characters (1 MB) a design may hold"
        )
    try:
        data = tomllib.loads(text)
    except RecursionError:
        raise DesignFileError(
            f"{source}: tables or arrays nested too deeply (at most 16 levels)"
        ) from None
    except tomllib.TOMLDecodeError as err:
        message = str(err)
        m = _TOML_POSITION.search(message)
        if m:
            where = f"{source}:{m.group(1)}:{m.group(2)}"
            message = message[: m.start()]
        else:
            lines = text.count("\n") + 1
            where = f"{source}:{lines}:1"
            message = message.replace(" (at end of document)", "")
        raise DesignFileError(f"{where}: bad TOML syntax: {message}") from None
    too_big = check_bounds(data)
    if too_big:
        raise DesignErrors(capped([with_source(e, source) for e in too_big], source))
    digest = hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()
    return design_from_mapping(data, source, digest)


def load_design(path: str | Path) -> Design:
    """Read a design file.

    Parameters
    ----------
    path : str or Path
        The TOML file.

    Raises
    ------
    DesignFileError
        The file does not exist, cannot be read, is not UTF-8 text, or is not TOML.
    DesignErrors
        Every problem in its content, one per line.
    """
    source = escaped(str(path))
    raw = read_bounded(path, source)
    try:
        text = raw.decode("utf-8-sig")  # a byte-order mark, as some editors write, is fine
    except UnicodeDecodeError as err:
        raise DesignFileError(
            f"{source}: not UTF-8 text (byte {describe_value(raw[err.start : err.start + 1])} "
            f"at offset {err.start})"
        ) from None
    design = loads_design(text, source)
    digest = hashlib.sha256(raw).hexdigest()
    if design.sha256 != digest:  # the digest is of the file's bytes, byte-order mark included
        design = Design(**{**design.__dict__, "sha256": digest})
    return design


def check_design(design: Design, *, grid_points: int = 2000):
    """The forward budget of a complete design against its requirement.

    Raises
    ------
    DesignErrors
        One line per open part (``resplan plan`` sizes them).
    ChainError
        A chain valid field by field that cannot be computed.
    """
    import numpy as np

    from ..chain.budget import forward_budget
    from ..errors import ChainError

    chain = design.chain()
    try:
        with np.errstate(all="ignore"):  # a figure that is not finite is caught below
            budget = forward_budget(
                chain, design.band, requirement=design.requirement, grid_points=grid_points
            )
        # Edges validate, the core trusts: the ranges keep every figure finite, and this
        # check says where, should a combination of them still overflow.
        for item in budget.contributions:
            if not (math.isfinite(item.rms_v) and math.isfinite(item.adc_rms_v)):
                raise ChainError(
                    item.stage,
                    item.name,
                    f"figures whose noise stays finite (its {item.name} is "
                    f"{format_si(item.rms_v, 'V')} rms at the sensor)",
                )
        if not math.isfinite(budget.total_rms_v):
            raise ChainError("design", "?", "figures whose total noise stays finite")
        return budget
    except DesignError as err:  # name the file and the table, as every other problem does
        err = _with_place(err, design)
        raise with_source(err, design.source) if design.source else err from None


def placed(err: ResplanError, design: Design) -> ResplanError:
    """A problem found while computing ``design``, naming its file and the part's table.

    ``front end.gain`` becomes ``hive.toml: stages[0].gain``, as the problems found
    when reading the file read; several problems are each placed.
    """
    if isinstance(err, DesignErrors):
        return DesignErrors(placed(e, design) for e in err.errors)
    if not isinstance(err, DesignError):
        return err
    err = _with_place(err, design)
    return with_source(err, design.source) if design.source else err


def _with_place(err: DesignError, design: Design) -> DesignError:
    """``err`` with a part's name in its field replaced by the part's table path."""
    places = {design.sensor.name: "sensor"}
    places.update({stage.name: f"stages[{i}]" for i, stage in enumerate(design.stages)})
    if design.reference is not None:
        places[design.reference.name] = "reference"
    places[design.adc.name] = "adc"
    head, dot, rest = err.field.partition(".")
    if head in places and head != places[head]:
        return type(err)(places[head] + dot + rest, err.value, err.expected, err.source)
    if err.field in places:
        return type(err)(places[err.field], err.value, err.expected, err.source)
    return err
