"""Structure problems of a design file, one line each.

pydantic checks the structure of the parsed tables against the models of
:mod:`resplan.designfile.models`. This module turns each of its errors into one line
that names the field path (``stages[1].en``), the value given and what was
expected, with a "did you mean" suggestion for a misspelt key or choice. A
refused field is set aside and validation runs again, so that the rest of the
file can still be read and every problem shown at once.

Examples
--------
>>> model, errors, set_aside = validate_structure(
...     {"requirement": {}, "sensor": {"resistnce": "350 ohm"}, "adc": {}}
... )
>>> [str(e) for e in errors]
['sensor.resistnce: unknown field, did you mean "resistance"?']
>>> set_aside
['sensor.resistnce']
"""

from __future__ import annotations

import re
import typing
from collections.abc import Mapping
from typing import Any, Literal

from pydantic import BaseModel, ValidationError

from ..errors import DesignError, DesignErrors
from .models import STAGE_MODELS, STAGE_TYPES, DesignFile

__all__ = [
    "MissingField",
    "UnknownField",
    "with_source",
    "did_you_mean",
    "toml_key",
    "validate_structure",
    "field_is_under",
]


# ---------------------------------------------------------------------------
# errors and suggestions


class MissingField(DesignError):
    """A required field that is absent."""

    def _message(self) -> str:
        where = f"{self.source}: " if self.source else ""
        return f"{where}{self.field}: missing, expected {self.expected}"


class UnknownField(DesignError):
    """A key the format does not know; ``expected`` holds the suggestion."""

    def _message(self) -> str:
        where = f"{self.source}: " if self.source else ""
        return f"{where}{self.field}: unknown field, {self.expected}"


def with_source(err: DesignError, source: str) -> DesignError:
    """``err`` naming the file ``source``, unless it already names one; its class is kept."""
    if err.source:
        return err
    return type(err)(err.field, err.value, err.expected, source)


def _close_match(word: str, choices: typing.Iterable[str]) -> str | None:
    """The choice closest to ``word`` (difflib's ratio ≥ 0.6), if any."""
    import difflib  # only on the error path

    close = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return close[0] if close else None


def did_you_mean(word: str, choices: typing.Iterable[str]) -> str:
    """``' (did you mean "x"?)'`` for the closest choice, or ``""`` when none is close."""
    hint = _close_match(word, choices)
    return f' (did you mean "{hint}"?)' if hint else ""


def _quoted(value: Any) -> str:
    import json  # only on the error path

    return json.dumps(value, ensure_ascii=False)


def _suggest(word: str, choices: typing.Iterable[str]) -> str:
    choices = list(choices)
    hint = _close_match(word, choices)
    if hint:
        return f'did you mean "{hint}"?'
    return "expected one of " + ", ".join(choices)


# ---------------------------------------------------------------------------
# pydantic errors → one line each

_TYPE_WORDS = {
    "int_type": "a whole number",
    "int_from_float": "a whole number",
    "int_parsing": "a whole number",
    "bool_type": "true or false",
    "bool_parsing": "true or false",
    "list_type": "a list in [brackets]",
    "tuple_type": "a pair [data rate, noise]",
    "dict_type": "a table",
    "model_type": "a table",
    "model_attributes_type": "a table",
    "too_short": "more items",
    "too_long": "fewer items",
}


_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")


def toml_key(name: Any) -> str:
    """A key as TOML would write it: bare when it can be, else quoted."""
    text = str(name)
    return text if _BARE_KEY.match(text) else _quoted(text)


def _path(loc: typing.Sequence[Any]) -> str:
    """``("stages", 1, "en")`` → ``"stages[1].en"``."""
    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += ("." if out else "") + toml_key(part)
    return out


def _strip_tags(loc: tuple) -> tuple:
    # A discriminated union puts the stage type in the location: drop it.
    if len(loc) > 2 and loc[0] == "stages" and isinstance(loc[1], int) and loc[2] in STAGE_MODELS:
        return loc[:2] + loc[3:]
    return loc


def _model_at(loc: tuple, data: Any) -> type[BaseModel] | None:
    """The model that holds the last key of ``loc`` (for suggestions)."""
    model: type[BaseModel] | None = DesignFile
    node = data
    for i, key in enumerate(loc[:-1]):
        if isinstance(key, int):
            node = node[key] if isinstance(node, list) and 0 <= key < len(node) else None
            if i > 0 and loc[i - 1] == "stages":
                tag = node.get("type") if isinstance(node, dict) else None
                model = STAGE_MODELS.get(tag) if isinstance(tag, str) else None
            continue
        if model is None:
            return None
        info = _fields_by_key(model).get(key)
        node = node.get(key) if isinstance(node, dict) else None
        model = _first_model(info.annotation) if info else None
    return model


def _describe_field(model: type[BaseModel] | None, key: Any) -> str:
    """What a field holds, from its description and example, for "missing" messages."""
    info = _fields_by_key(model).get(key) if model is not None else None
    if info is None or not info.description:
        return "a value here"
    text = info.description.rstrip(".")
    text = text[0].lower() + text[1:]
    sub = _first_model(info.annotation)
    if sub is not None:
        return f"a [{key}] table ({text})"
    if info.examples:
        return f"{text}, such as {_quoted(info.examples[0])}"
    return text


def _fields_by_key(model: type[BaseModel]) -> dict[str, Any]:
    return {(info.alias or name): info for name, info in model.model_fields.items()}


def _first_model(annotation: Any) -> type[BaseModel] | None:
    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return annotation
    for arg in typing.get_args(annotation):
        found = _first_model(arg)
        if found is not None:
            return found
    return None


def _literal_choices(model: type[BaseModel] | None, key: Any) -> list[str]:
    if model is None:
        return []
    info = _fields_by_key(model).get(key)
    if info is None:
        return []

    def walk(a: Any) -> list[str]:
        if typing.get_origin(a) is Literal:
            return [str(x) for x in typing.get_args(a)]
        return [c for arg in typing.get_args(a) for c in walk(arg)]

    return walk(info.annotation)


def _structure_errors(err: ValidationError, data: Any) -> list[DesignError]:
    out: list[DesignError] = []
    for e in err.errors(include_url=False):
        loc = _strip_tags(tuple(e["loc"]))
        path = _path(loc)
        kind = e["type"]
        value = e.get("input")
        key = loc[-1] if loc else ""
        if kind == "extra_forbidden":
            model = _model_at(loc, data)
            choices = list(_fields_by_key(model)) if model else []
            out.append(UnknownField(path, value, _suggest(str(key), choices)))
        elif kind == "missing":
            out.append(MissingField(path, None, _describe_field(_model_at(loc, data), key)))
        elif kind in ("union_tag_invalid", "union_tag_not_found"):
            tag = (e.get("ctx") or {}).get("tag")
            what = "a stage type: " + ", ".join(STAGE_TYPES)
            if tag is None:
                out.append(MissingField(f"{path}.type", None, what))
            else:
                more = did_you_mean(tag, STAGE_TYPES)
                out.append(DesignError(f"{path}.type", tag, what + more))
        elif kind == "literal_error":
            choices = _literal_choices(_model_at(loc, data), key)
            more = did_you_mean(value, choices)
            out.append(DesignError(path, value, "one of " + ", ".join(choices) + more))
        elif path == "stages" and kind == "list_type":
            out.append(DesignError(path, value, "[[stages]] tables, one per stage"))
        else:
            expected = _TYPE_WORDS.get(kind, e["msg"])
            out.append(DesignError(path, value, expected))
    return out


# ---------------------------------------------------------------------------
# validation that goes on past refused fields

#: Stand-in for a stage whose structure was refused, so the rest can still be read.
_PLACEHOLDER_STAGE = {"type": "rc_filter", "open": True}
_REQUIRED_TABLES = ("requirement", "sensor", "adc")


def validate_structure(data: Any) -> tuple[DesignFile, list[DesignError], list[str]]:
    """Validate the structure; on problems, set the offending fields aside and go on.

    Returns the model of what is left, the structure problems, and the paths of
    the fields set aside (problems found under them later are not repeated).
    """
    errors: list[DesignError] = []
    reported: list[str] = []
    if not isinstance(data, Mapping):
        data = {}
        errors.append(DesignError("design", "?", "a TOML document of tables"))
    work = _plain_copy(data)
    for _ in range(8):
        try:
            return DesignFile.model_validate(work), errors, reported
        except ValidationError as err:
            errors.extend(_structure_errors(err, work))
            for e in err.errors(include_url=False):
                reported.append(_path(_set_aside(work, _strip_tags(tuple(e["loc"])))))
    raise DesignErrors(errors)  # pragma: no cover - each round removes what it reports


def _plain_copy(node: Any) -> Any:
    if isinstance(node, Mapping):
        return {k: _plain_copy(v) for k, v in node.items()}
    if isinstance(node, list):
        return [_plain_copy(v) for v in node]
    return node


def _set_aside(work: dict, loc: tuple) -> tuple:
    """Remove (or neutralise) the field a structure error is about; return its location."""
    if not loc:
        return loc
    table = loc[0]
    if table == "stages" and len(loc) >= 2 and isinstance(loc[1], int):
        at = loc[:3] if len(loc) >= 3 and isinstance(loc[2], str) and loc[2] != "type" else loc[:2]
        if len(loc) > 3 and loc[2] == "sections":
            # A problem inside a section's table: the stage is set aside whole, so that
            # its other fields are not reported as missing.
            at = loc[:2]
    else:
        at = loc[:2] if len(loc) >= 2 and isinstance(loc[1], str) else loc[:1]
    if len(at) == 1:
        if table in _REQUIRED_TABLES:
            work[table] = {}
        else:
            work.pop(table, None)
        return at
    if at[0] == "stages" and len(at) == 2:
        stages = work.get("stages")
        if isinstance(stages, list) and 0 <= at[1] < len(stages):
            stages[at[1]] = dict(_PLACEHOLDER_STAGE)
        return at
    node: Any = work
    for key in at[:-1]:
        node = node[key] if isinstance(node, dict | list) else None
    if isinstance(node, dict):
        node.pop(at[-1], None)
    return at


def field_is_under(field: str, prefixes: list[str]) -> bool:
    """``field`` is one of ``prefixes`` or inside one (``stages[1].en`` is under ``stages[1]``)."""
    return any(
        field == p or field.startswith(p + ".") or field.startswith(p + "[") for p in prefixes
    )
