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


#: Units read without pint (importing pint and building its registry costs ~0.5 s of CPU,
#: four times numpy, and it pulls dask and uncertainties when they are installed): unit ->
#: (SI unit of :data:`SI_UNITS`, factor).  Only exact SI prefixes and definitions; every entry
#: is checked against pint in tests/test_units.py.  Anything else goes to pint.
_PLAIN_UNITS: dict[str, tuple[str, float]] = {
    "Hz": ("Hz", 1.0), "kHz": ("Hz", 1e3), "MHz": ("Hz", 1e6), "GHz": ("Hz", 1e9),
    "S/m": ("S/m", 1.0), "mS/m": ("S/m", 1e-3), "dS/m": ("S/m", 0.1), "mS/cm": ("S/m", 0.1),
    "uS/cm": ("S/m", 1e-4),
    "m": ("m", 1.0), "km": ("m", 1e3), "cm": ("m", 1e-2), "mm": ("m", 1e-3),
    "s": ("s", 1.0), "ms": ("s", 1e-3), "us": ("s", 1e-6), "ns": ("s", 1e-9),
    "m/s": ("m/s", 1.0), "m/ns": ("m/s", 1e9), "cm/ns": ("m/s", 1e7), "mm/ns": ("m/s", 1e6),
    "dimensionless": ("dimensionless", 1.0), "%": ("dimensionless", 1e-2),
    "psu": ("dimensionless", 1.0), "PSU": ("dimensionless", 1.0), "dB": ("dimensionless", 1.0),
    "kg/m**3": ("kg/m**3", 1.0), "g/cm**3": ("kg/m**3", 1e3), "mg/L": ("kg/m**3", 1e-3),
    "g/L": ("kg/m**3", 1.0),
    "degC": ("degC", 1.0),
    "W": ("W", 1.0), "m**2": ("m**2", 1.0),
}
_PLAIN = re.compile(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S+)\s*")


def _plain(value: float, unit: str, target: str):
    """``value`` in ``unit`` converted to ``target`` without pint, or None when the table cannot."""
    entry = _PLAIN_UNITS.get(unit)
    if entry is None or entry[0] != target:
        return None
    return value * entry[1]


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
    target = SI_UNITS[kind]
    value = _parse_plain(text, default_unit, target)
    if value is None:
        value = _parse_with_pint(text, kind, target, default_unit=default_unit, name=name)
    if not math.isfinite(value):
        # 'nan' and 'inf' parse as floats; no edge quantity may be either
        raise InputError(f"{name}: must be a finite number, got {text!r}; write e.g. '1 {default_unit}'")
    return value


def _normalise(text: str) -> str:
    s = str(text).strip()
    s = s.replace("µ", "u").replace("μ", "u").replace("³", "**3").replace("²", "**2")
    # "g/cm3", "kg/m3", "m2": a unit letter followed by an exponent digit
    return re.sub(r"(?<=[A-Za-z])([23])\b", r"**\1", s)


def _parse_plain(text, default_unit: str, target: str):
    """A bare number or '<number> <unit>' with a unit of the plain table, without pint; else None."""
    if isinstance(text, bool):
        return None
    if isinstance(text, (int, float)):
        return _plain(float(text), default_unit, target)
    s = _normalise(text)
    try:
        return _plain(float(s), default_unit, target)
    except ValueError:
        pass
    m = _PLAIN.fullmatch(s)
    return None if m is None else _plain(float(m.group(1)), m.group(2), target)


def _parse_with_pint(text, kind: str, target: str, *, default_unit: str, name: str) -> float:
    ureg = _registry()
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        q = ureg.Quantity(float(text), default_unit)
    else:
        s = _normalise(text)
        if not s:
            raise InputError(f"{name}: empty value; expected a number with unit such as '1 {default_unit}'")
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
    return value


def to_si(value: float, unit: str) -> float:
    """Convert ``value`` given in ``unit`` (e.g. ``"MHz"``) to SI."""
    entry = _PLAIN_UNITS.get(unit)
    if entry is not None and entry[0] != "degC":
        return float(value) * entry[1]
    q = _registry().Quantity(value, unit)
    return float(q.to_base_units().magnitude)


def from_si(value, unit: str):
    """Convert an SI ``value`` (scalar or array) to ``unit`` (e.g. ``"ns"``, ``"mS/m"``)."""
    entry = _PLAIN_UNITS.get(unit)
    if entry is not None and entry[0] != "degC":
        return value / entry[1]
    ureg = _registry()
    q = ureg.Quantity(1.0, unit)
    factor = q.to_base_units().magnitude
    return value / factor
