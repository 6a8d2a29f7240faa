"""Quantities with units at the edges (CLI flags, survey files, tables).

Strings such as ``"250 MHz"``, ``"12 mS/m"``, ``"25 %"`` or ``"0.1 m/ns"`` are parsed
with `pint <https://pint.readthedocs.io>`_ (a well-kept unit library; we do not write
unit arithmetic by hand) and converted to the SI unit the physics expects.  A bare
number is taken in the *default unit* the caller names for that field (e.g. MHz for a
frequency flag) - never guessed.  Physics modules never import this file.
"""

from __future__ import annotations

import math
import re
from functools import lru_cache

from .errors import InputError

__all__ = ["parse_quantity", "SI_UNITS", "to_si", "from_si"]

#: The SI unit each kind of quantity is converted to.
SI_UNITS: dict[str, str] = {
    "frequency": "Hz",
    "conductivity": "S/m",
    "length": "m",
    "time": "s",
    "velocity": "m/s",
    "fraction": "dimensionless",
    "density": "kg/m**3",
    "temperature": "degC",
    "salinity": "dimensionless",  # practical salinity (PSU) is a ratio-like number
    "dimensionless": "dimensionless",
    "decibel": "dimensionless",
    "power": "W",
    "area": "m**2",
    "speed": "m/s",
    "mass_concentration": "kg/m**3",
}


@lru_cache(maxsize=1)
def _registry():
    import pint

    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    # Trade units that pint does not define: practical salinity and dB (taken as a plain number).
    ureg.define("psu = 1 = PSU")
    ureg.define("dB = 1 = db")
    ureg.define("ppt_salinity = 1")
    return ureg


def parse_quantity(text, kind: str, *, default_unit: str, name: str = "value") -> float:
    """Parse ``text`` (number or string with unit) into the SI unit of ``kind``.

    Parameters
    ----------
    text : str or float
        ``"250 MHz"``, ``"12 mS/m"``, ``"25 %"``, ``"0.1 m/ns"``, or a bare number.
    kind : str
        One of the keys of :data:`SI_UNITS`.
    default_unit : str
        Unit of a bare number (e.g. ``"MHz"``), stated in the calling flag's help.
    name : str
        Name of the field, used in error messages.

    Returns
    -------
    float
        The value in SI units (fractions for ``%``; degrees Celsius for temperature).
    """
    if kind not in SI_UNITS:
        raise InputError(f"unknown quantity kind {kind!r}; allowed: {', '.join(SI_UNITS)}")
    ureg = _registry()
    target = SI_UNITS[kind]
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        q = ureg.Quantity(float(text), default_unit)
    else:
        s = str(text).strip()
        if not s:
            raise InputError(f"{name}: empty value; expected a number with unit such as '1 {default_unit}'")
        s = s.replace("µ", "u").replace("μ", "u").replace("³", "**3").replace("²", "**2")
        # "g/cm3", "kg/m3", "m2": a unit letter followed by an exponent digit
        s = re.sub(r"(?<=[A-Za-z])([23])\b", r"**\1", s)
        try:
            num = float(s)
        except ValueError:
            num = None
        try:
            if num is not None:
                q = ureg.Quantity(num, default_unit)
            else:
                q = ureg.Quantity(s)
        except Exception:
            raise InputError(
                f"{name}: cannot read {text!r} as a {kind}; write e.g. '1 {default_unit}'"
            ) from None
    if kind == "temperature":
        try:
            value = float(q.to("degC").magnitude)
        except Exception:
            raise InputError(f"{name}: {text!r} is not a temperature; write e.g. '20 degC'") from None
    else:
        try:
            value = float(q.to(target).magnitude)
        except Exception:
            raise InputError(
                f"{name}: {text!r} has units of {q.units:~}, which cannot be read as a {kind} "
                f"(expected something convertible to {target}, e.g. '1 {default_unit}')"
            ) from None
    if not math.isfinite(value):
        # 'nan' and 'inf' parse as floats; no edge quantity may be either
        raise InputError(f"{name}: must be a finite number, got {text!r}; write e.g. '1 {default_unit}'")
    return value


def to_si(value: float, unit: str) -> float:
    """Convert ``value`` given in ``unit`` (e.g. ``"MHz"``) to SI."""
    q = _registry().Quantity(value, unit)
    return float(q.to_base_units().magnitude)


def from_si(value, unit: str):
    """Convert an SI ``value`` (scalar or array) to ``unit`` (e.g. ``"ns"``, ``"mS/m"``)."""
    ureg = _registry()
    q = ureg.Quantity(1.0, unit)
    factor = q.to_base_units().magnitude
    return value / factor
