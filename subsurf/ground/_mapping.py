"""Reading a soil description from a TOML-like mapping (edge input for :class:`Soil`)."""

from __future__ import annotations

import re

import numpy as np

from ..errors import InputError, SubsurfError
from ..units import parse_quantity

__all__ = ["soil_kwargs_from_mapping"]

# Field name -> (quantity kind for subsurf.units.parse_quantity, default unit of bare numbers).
_FIELD_KINDS = {
    "moisture": ("fraction", "dimensionless"),
    "sand": ("fraction", "dimensionless"),
    "clay": ("fraction", "dimensionless"),
    "porosity": ("fraction", "dimensionless"),
    "bulk_density": ("density", "kg/m**3"),
    "particle_density": ("density", "kg/m**3"),
    "temp_c": ("temperature", "degC"),
    "pore_water_salinity_psu": ("salinity", "psu"),
    "pore_water_ec25": ("conductivity", "S/m"),
    "pore_water_tds": ("mass_concentration", "kg/m**3"),
    "eps_solid": ("dimensionless", "dimensionless"),
    "archie_a": ("dimensionless", "dimensionless"),
    "archie_m": ("dimensionless", "dimensionless"),
    "archie_n": ("dimensionless", "dimensionless"),
    "clay_cec": ("dimensionless", "dimensionless"),
}
_CUBE = re.compile(r"(?<=[A-Za-z])(?<![0-9][eE])([23])(?![\d.])")


def soil_kwargs_from_mapping(mapping, allowed, *, source: str = "<input>") -> dict:
    """Keyword arguments for :class:`Soil` from ``mapping``; numbers SI, strings with units.

    Raises :class:`~subsurf.errors.InputError` naming ``source``, the field and the value.
    """
    if not isinstance(mapping, dict):
        raise InputError(f"{source}: soil must be a table of fields, got {type(mapping).__name__}")
    kwargs = {}
    for key, value in mapping.items():
        if key not in allowed:
            raise InputError(f"{source}: unknown soil field {key!r}; allowed: {', '.join(allowed)}")
        if key in ("texture", "model"):
            if not isinstance(value, str):
                raise InputError(f"{source}: field '{key}' must be a string, got {value!r}")
            kwargs[key] = value
            continue
        kind, unit = _FIELD_KINDS[key]

        def one(v, key=key, kind=kind, unit=unit):
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
