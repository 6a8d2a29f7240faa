"""Reading a soil description from a TOML-like mapping (edge input for :class:`Soil`).

Kinds, bare-number units and ranges come from :data:`subsurf.ground.schema.SOIL_FACTS`,
declared once; unknown keys are refused with the closest valid key suggested.
"""

from __future__ import annotations

import re

import numpy as np

from ..errors import InputError, SubsurfError
from ..units import parse_quantity

__all__ = ["soil_kwargs_from_mapping"]

_CUBE = re.compile(r"(?<=[A-Za-z])(?<![0-9][eE])([23])(?![\d.])")


def soil_kwargs_from_mapping(mapping, allowed, *, source: str = "<input>") -> dict:
    """Keyword arguments for :class:`Soil` from ``mapping``; numbers SI, strings with units.

    Raises :class:`~subsurf.errors.InputError` naming ``source``, the field and the value.
    Ranges are left to :class:`Soil` itself (arrays from code are checked there).
    """
    from .schema import SOIL_FACTS, soil_fact

    if not isinstance(mapping, dict):
        raise InputError(f"{source}: soil must be a table of fields, got {type(mapping).__name__}")
    allowed = list(allowed)
    kwargs = {}
    for key, value in mapping.items():
        if key not in allowed:
            fact = SOIL_FACTS.get(key)
            from .._schema import closest  # here, not at import: _schema loads pydantic (~0.1 s, start-up)

            near = fact.field if fact is not None and fact.field in allowed else closest(key, allowed)
            hint = f"; did you mean '{near}'?" if near else ""
            raise InputError(f"{source}: unknown soil field {key!r}{hint} (allowed: {', '.join(allowed)})")
        if key == "interface_relaxation":
            if not isinstance(value, bool):
                raise InputError(f"{source}: field 'interface_relaxation' must be true or false, got {value!r}")
            kwargs[key] = value
            continue
        if key in ("texture", "model", "clay_mineral"):
            if not isinstance(value, str):
                raise InputError(f"{source}: field '{key}' must be a string, got {value!r}")
            kwargs[key] = value
            continue
        fact = soil_fact(key)

        def one(v, key=key, kind=fact.kind, unit=fact.unit):
            if isinstance(v, bool) or not isinstance(v, (int, float, str)):
                raise InputError(f"field '{key}' must be a number or a string with unit, got {v!r}")
            if isinstance(v, str):
                v = _CUBE.sub(r"**\1", v)
            return parse_quantity(v, kind, default_unit=unit, name=f"field '{key}'")

        if isinstance(value, np.ndarray) and value.dtype.kind in "iuf":
            kwargs[key] = value.astype(float)  # arrays from code are taken as SI already
            continue
        try:
            kwargs[key] = (np.asarray(_map_nested(one, value), dtype=float)
                           if isinstance(value, list) else one(value))
        except SubsurfError as exc:
            raise InputError(f"{source}: {exc}") from None
    return kwargs


def _map_nested(fn, value):
    if isinstance(value, list):
        return [_map_nested(fn, v) for v in value]
    return fn(value)
