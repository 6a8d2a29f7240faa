"""Shared machinery of the declared file schemas (survey files, soil files).

A file's schema is written once as pydantic v2 models (:mod:`subsurf.site.schema`,
:mod:`subsurf.ground.schema`).  This module supplies what every such schema needs:

- :class:`Strict`, a base model that refuses unknown keys and suggests the closest
  valid key (:func:`difflib.get_close_matches`);
- :func:`quantity_type`, a field type that reads a bare number in a stated unit or a
  string with units (``"20 %"``, ``"12 mS/m"``) through :func:`subsurf.units.parse_quantity`,
  converts it to SI and checks the allowed range, with a JSON Schema that editors can use;
- :func:`validate_file`, which turns pydantic's validation errors into one
  :class:`~subsurf.errors.FileInputError` line naming the file, the key path in TOML terms
  (``[grid] cell_size``, ``[[scenarios]] "wet" offset.moisture``) and the allowed values;
- :func:`json_schema`, the JSON Schema (draft 2020-12) of a model as a TOML editor needs it
  (no ``null``: TOML has none).

Library choice: pydantic (v2) declares the keys, types, defaults and ranges once and
generates both the validation and the JSON Schema from that one declaration; hand-written
checks had drifted from the documentation (a ``cellsize`` typo was silently accepted).
"""

from __future__ import annotations

import difflib
import math
from typing import Annotated, Any

from pydantic import BaseModel, BeforeValidator, ConfigDict, ValidationError, WithJsonSchema, model_validator
from pydantic.json_schema import GenerateJsonSchema
from pydantic_core import PydanticCustomError

from .errors import FileInputError, InputError
from .units import from_si, parse_quantity

__all__ = ["Strict", "quantity_type", "validate_file", "json_schema", "closest", "key_path", "fail"]


def closest(word: str, choices) -> str | None:
    """The valid key nearest to ``word`` (difflib ratio >= 0.6), or None."""
    found = difflib.get_close_matches(str(word), [str(c) for c in choices], n=1, cutoff=0.6)
    return found[0] if found else None


def _unknown_key_message(key: str, allowed: list[str]) -> str:
    near = closest(key, allowed)
    hint = f"; did you mean '{near}'?" if near else ""
    return f"unknown key{hint} (allowed here: {', '.join(allowed)})"


class Strict(BaseModel):
    """Base of every file-schema table: unknown keys are refused with the closest valid key."""

    model_config = ConfigDict(extra="forbid", frozen=True, populate_by_name=False)

    @model_validator(mode="before")
    @classmethod
    def _known_keys(cls, data):
        if isinstance(data, dict):
            allowed = list(cls.model_fields)
            for key in data:
                if key not in cls.model_fields:
                    raise PydanticCustomError("unknown_key", _unknown_key_message(key, allowed), {"key": key})
        elif data is not None and not isinstance(data, BaseModel):
            raise PydanticCustomError("table_type", "expected a table (key = value pairs), got {got}",
                                      {"got": repr(data)})
        return data


def display_range(low, high, unit: str, kind: str) -> str:
    """'0 to 0.7 (0 to 70 %)' — the range in the unit of a bare number (and % for fractions)."""
    def show(v):
        return f"{from_si(v, unit) if kind != 'temperature' and unit != 'dimensionless' else v:.6g}"

    u = "" if unit == "dimensionless" else f" {unit}"
    if low is not None and high is not None:
        text = f"between {show(low)} and {show(high)}{u}"
        if kind == "fraction":
            text += f" ({low * 100:g} to {high * 100:g} %)"
        return text
    if low is not None:
        return f">= {show(low)}{u}"
    return f"<= {show(high)}{u}"


def quantity_type(kind: str, unit: str, *, low: float | None = None, high: float | None = None,
                  difference: bool = False, description: str = "", allow_list: bool = False,
                  above_low: bool = False):
    """A field type reading a number in ``unit`` or a string with units into SI, range-checked.

    Parameters
    ----------
    kind : str
        Quantity kind of :func:`subsurf.units.parse_quantity` (``"fraction"``, ``"length"``...).
    unit : str
        Unit of a bare number (e.g. ``"mS/m"``); stated in every error and in the JSON Schema.
    low, high : float, optional
        Inclusive allowed range in SI (None: open).
    difference : bool
        A difference or spread of the quantity: a temperature difference carries no
        offset (``"1 K"`` = ``"1.8 degF"`` = 1 degC of difference).
    above_low : bool
        The lower bound is exclusive (``v > low``), e.g. a length that must be positive.
    allow_list : bool
        Also accept a (nested) list of such values, returned as nested lists of floats.
    """
    shown_unit = "a fraction" if unit == "dimensionless" and kind == "fraction" else \
        ("a plain number" if unit == "dimensionless" else unit)
    rng = display_range(low, high, unit, kind) if (low is not None or high is not None) else ""
    if above_low and high is None:
        rng = rng.replace(">=", ">")

    def one(value):
        if isinstance(value, bool) or not isinstance(value, (int, float, str)):
            raise PydanticCustomError("quantity_type", "expected a number or a string with units such as "
                                      "'1 {unit}', got {got}", {"unit": unit, "got": repr(value)})
        try:
            v = _parse(value, kind, unit, difference)
        except InputError:
            raise PydanticCustomError("quantity_unit", "cannot read {got} as {what}; give a bare number ({shown}) "
                                      "or a string with units, e.g. {example}",
                                      {"got": repr(value), "what": f"a {kind}", "shown": shown_unit,
                                       "example": repr(_EXAMPLES.get(kind, f"1 {unit}"))}) from None
        if not math.isfinite(v):
            raise PydanticCustomError("quantity_finite", "must be a finite number, got {got}", {"got": repr(value)})
        if (low is not None and (v <= low if above_low else v < low)) or (high is not None and v > high):
            raise PydanticCustomError("quantity_range", "must be {rng}, got {got}", {"rng": rng, "got": repr(value)})
        return v

    def parse(value):
        if allow_list and isinstance(value, list):
            return [parse(v) for v in value]
        return one(value)

    number: dict[str, Any] = {"type": "number"}
    if low is not None and kind != "temperature":
        number["minimum"] = float(f"{from_si(low, unit) if unit != 'dimensionless' else low:.12g}")
    elif low is not None:
        number["minimum"] = low
    if above_low and "minimum" in number:
        number["exclusiveMinimum"] = number.pop("minimum")
    if high is not None and kind != "temperature":
        number["maximum"] = float(f"{from_si(high, unit) if unit != 'dimensionless' else high:.12g}")
    elif high is not None:
        number["maximum"] = high
    string = {"type": "string", "pattern": r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*[^\s\d].*$|^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$"}
    one_schema = {"anyOf": [number, string]}
    doc = (description + "; " if description else "") + f"a bare number is {shown_unit}, a string may carry units"
    if rng:
        doc += f"; allowed {rng}"
    schema = {"anyOf": [number, string, {"type": "array", "items": one_schema}]} if allow_list else dict(one_schema)
    schema["description"] = doc
    base = Any if allow_list else float
    return Annotated[base, BeforeValidator(parse), WithJsonSchema(schema)]


#: An example of a string with units per kind, for error messages.
_EXAMPLES = {"fraction": "20 %", "conductivity": "12 mS/m", "length": "2 m", "temperature": "12 degC",
             "density": "1.6 g/cm3", "salinity": "0.5", "mass_concentration": "300 mg/L", "time": "20 ns",
             "velocity": "0.1 m/ns", "frequency": "250 MHz"}


def _parse(value, kind, unit, difference) -> float:
    if not difference or kind != "temperature" or not isinstance(value, str):
        return parse_quantity(value, kind, default_unit=unit, name="value")
    import re

    m = re.fullmatch(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*", value)
    if m is None or not m.group(2):
        return parse_quantity(value, kind, default_unit=unit, name="value")
    u = m.group(2)
    return (parse_quantity(f"{m.group(1)} {u}", kind, default_unit=unit, name="value")
            - parse_quantity(f"0 {u}", kind, default_unit=unit, name="value"))


# --- errors --------------------------------------------------------------------------------

def fail(path, where: str, message: str) -> FileInputError:
    """A :class:`~subsurf.errors.FileInputError` ``FILE: WHERE: message`` (``where`` a key path)."""
    err = FileInputError(path, f"{where}: {message}" if where else message)
    err.field = where or None
    return err


def key_path(loc, data) -> str:
    """TOML-style location of ``loc`` in ``data``: ``[soil.defaults] moisture``,
    ``[[soil.samples]] no. 1 crs``, ``[[scenarios]] "wet" offset.moisture``, ``[grid]``."""
    tables: list[str] = []
    keys: list[str] = []
    header = ""
    node = data
    in_keys = False
    for i, part in enumerate(loc):
        if isinstance(part, int):
            item = node[part] if isinstance(node, list) and part < len(node) else None
            name = item.get("name") if isinstance(item, dict) else None
            label = f'"{name}"' if isinstance(name, str) and name else f"no. {part + 1}"
            if not in_keys:
                header = f"[[{'.'.join(tables)}]] {label}"
                in_keys = True
            else:
                keys[-1] += f"[{part}]"
            node = item
            continue
        child = node.get(part) if isinstance(node, dict) else None
        last = i == len(loc) - 1
        if not in_keys and isinstance(child, dict):
            tables.append(str(part))
        elif not in_keys and isinstance(child, list) and (last or isinstance(loc[i + 1], int)) \
                and child and all(isinstance(c, dict) for c in child):
            tables.append(str(part))
            if last:
                header = f"[[{'.'.join(tables)}]]"
        else:
            in_keys = True
            keys.append(str(part))
        node = child
    if not header and tables:
        header = f"[{'.'.join(tables)}]"
    return " ".join(p for p in (header, ".".join(keys)) if p)


_PLAIN = {
    "string_type": "expected text (a quoted string), got {input}",
    "int_type": "expected a whole number, got {input}",
    "int_from_float": "expected a whole number, got {input}",
    "float_type": "expected a number, got {input}",
    "bool_type": "expected true or false, got {input}",
    "list_type": "expected an array [ ... ], got {input}",
    "tuple_type": "expected an array [ ... ], got {input}",
    "dict_type": "expected a table (key = value pairs), got {input}",
    "model_type": "expected a table (key = value pairs), got {input}",
    "model_attributes_type": "expected a table (key = value pairs), got {input}",
}


def _message(err: dict, model) -> str:
    typ = err["type"]
    inp = err.get("input")
    ctx = err.get("ctx") or {}
    if typ == "missing":
        return "missing required key"
    if typ == "literal_error":
        expected = str(ctx.get("expected", "")).replace("'", "").replace(" or ", ", ")
        near = closest(inp, [e.strip() for e in expected.split(",")]) if isinstance(inp, str) else None
        hint = f"; did you mean '{near}'?" if near else ""
        return f"{inp!r} is not one of {expected}{hint}"
    if typ in ("greater_than_equal", "less_than_equal", "greater_than", "less_than"):
        bound = {"greater_than_equal": ">=", "less_than_equal": "<=", "greater_than": ">", "less_than": "<"}[typ]
        limit = next(iter(ctx.values()), "?")
        return f"must be {bound} {limit}, got {inp!r}"
    if typ in ("too_short", "too_long"):
        n = ctx.get("min_length") if typ == "too_short" else ctx.get("max_length")
        return f"expected {'at least' if typ == 'too_short' else 'at most'} {n} item{'s' if n != 1 else ''}, got {inp!r}"
    if typ == "list_type" and isinstance(inp, dict):
        return "expected an array of tables: write the header with double brackets, [[...]]"
    if typ in _PLAIN:
        return _PLAIN[typ].format(input=repr(inp))
    msg = err["msg"]
    if msg.startswith("Value error, "):
        msg = msg[len("Value error, "):]
    return msg


def validate_file(model, data, path):
    """Validate the parsed TOML ``data`` of file ``path`` against ``model``.

    Returns the model instance; the first problem raises one
    :class:`~subsurf.errors.FileInputError` line: ``FILE: KEY PATH: what is wrong (allowed ...)``.
    """
    try:
        return model.model_validate(data)
    except ValidationError as exc:
        errors = exc.errors(include_url=False)
        # report the most specific problem: prefer errors that do not come from a union's
        # alternative branches (pydantic reports each branch), then the deepest location
        err = errors[0]
        loc = [p for p in err["loc"] if not (isinstance(p, str) and ("[" in p or p.startswith("function-")))]
        if err["type"] == "unknown_key":
            loc.append(err["ctx"]["key"])
        where = key_path(tuple(loc), data)
        more = f" (and {len(errors) - 1} more problem{'s' if len(errors) > 2 else ''})" if len(errors) > 1 else ""
        text = _missing(model, loc) if err["type"] == "missing" else _message(err, model)
        if text == "missing required table" and all(isinstance(p, str) for p in loc):
            where = f"[{'.'.join(loc)}]"
        raise fail(path, where, f"{text}{more}") from None


def _field_at(model, loc):
    """(FieldInfo, inner annotation) of the field at ``loc`` of ``model``, or (None, None)."""
    import typing

    cls, fld = model, None
    for part in loc:
        if isinstance(part, int):
            continue
        fld = getattr(cls, "model_fields", {}).get(part)
        if fld is None:
            return None, None
        ann = fld.annotation
        if typing.get_origin(ann) is typing.Annotated:
            ann = typing.get_args(ann)[0]
        args = [a for a in (typing.get_args(ann) or (ann,)) if a is not type(None)]
        inner = args[0] if args and typing.get_origin(ann) is not list else ann
        if typing.get_origin(inner) is list:
            inner = typing.get_args(inner)[0]
        cls = inner
    return fld, cls


def _missing(model, loc) -> str:
    fld, inner = _field_at(model, loc)
    if isinstance(inner, type) and issubclass(inner, BaseModel):
        return "missing required table"
    meta = [m for m in getattr(fld, "metadata", []) if hasattr(m, "description")]
    doc = getattr(fld, "description", None) or next((m.description for m in meta if m.description), None)
    return "missing required key" + (f" ({doc})" if doc else "")


# --- JSON Schema ---------------------------------------------------------------------------

class _TomlJsonSchema(GenerateJsonSchema):
    """JSON Schema for TOML files: optional keys are simply absent (TOML has no null)."""

    def nullable_schema(self, schema):
        return self.generate_inner(schema["schema"])

    def default_schema(self, schema):
        out = super().default_schema(schema)
        if out.get("default", 0) is None:
            out.pop("default")
        return out


def json_schema(model, *, title: str, description: str) -> dict:
    """The JSON Schema (draft 2020-12) of ``model`` for editors of TOML files."""
    schema = model.model_json_schema(schema_generator=_TomlJsonSchema, mode="validation")
    out = {"$schema": "https://json-schema.org/draft/2020-12/schema", "title": title,
           "description": description}
    out.update({k: v for k, v in schema.items() if k not in ("title", "description")})
    return out
