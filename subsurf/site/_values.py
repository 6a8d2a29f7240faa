"""Private helpers of the survey readers: one soil quantity value in SI, range-checked.

Kinds, bare-number units and ranges come from :data:`subsurf.site.schema.QUANTITIES`.
"""

from __future__ import annotations

import math
import re

from .._schema import closest, display_range
from ..errors import FileInputError, InputError
from ..units import from_si, parse_quantity
from .schema import QUANTITIES, SD_SUFFIX

_SD_SUFFIX = SD_SUFFIX


def _quantity(name: str, value, *, path, field: str, row: int | None = None) -> float:
    q = QUANTITIES[name]
    if isinstance(value, bool):
        raise FileInputError(path, f"expected a number for {name}, got {value!r}", row=row, field=field)
    try:
        v = parse_quantity(value, q.kind, default_unit=q.default_unit, name=field)
    except InputError as exc:
        raise FileInputError(path, str(exc), row=row, field=field) from None
    if not math.isfinite(v):
        raise FileInputError(path, f"{name} must be a finite number, got {value!r}", row=row, field=field)
    return v


def _difference(name: str, value, *, path, field: str, row: int | None = None) -> float:
    """A spread or shift of quantity ``name`` in SI: like :func:`_quantity`, but a temperature
    difference carries no offset ("1 K" and "1.8 degF" are both 1 degC of difference)."""
    if QUANTITIES[name].kind != "temperature" or not isinstance(value, str):
        return _quantity(name, value, path=path, field=field, row=row)
    m = re.fullmatch(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*", value)
    if m is None or not m.group(2):
        return _quantity(name, value, path=path, field=field, row=row)
    unit = m.group(2)
    return (_quantity(name, f"{m.group(1)} {unit}", path=path, field=field, row=row)
            - _quantity(name, f"0 {unit}", path=path, field=field, row=row))


def _check_value(name: str, v: float, *, path, field: str, row: int | None = None, sd: bool = False):
    q = QUANTITIES[name]
    if sd:
        if v < 0:
            raise FileInputError(path, f"a standard deviation must be >= 0, got {v:g}", row=row, field=field)
        return
    if not (q.low <= v <= q.high):
        shown = f"{from_si(v, q.default_unit):.6g}" if q.default_unit != "dimensionless" and \
            q.kind != "temperature" else f"{v:.6g}"
        unit = "" if q.default_unit == "dimensionless" else f" {q.default_unit}"
        raise FileInputError(path, f"{name} = {shown}{unit} is outside the accepted range, which is "
                             f"{display_range(q.low, q.high, q.default_unit, q.kind)}", row=row, field=field)


def _texture(name, *, path, field: str) -> dict:
    from ..ground.presets import texture_preset

    try:
        return texture_preset(str(name))
    except InputError as exc:
        raise FileInputError(path, str(exc), field=field) from None


def _quantity_table(table: dict, *, path, where: str) -> tuple[dict, dict]:
    values, sds = {}, {}
    for key, raw in table.items():
        base = key[: -len(_SD_SUFFIX)] if key.endswith(_SD_SUFFIX) else key
        if base not in QUANTITIES:
            allowed = list(QUANTITIES) + [q + _SD_SUFFIX for q in QUANTITIES]
            near = closest(key, allowed)
            raise FileInputError(path, f"unknown soil quantity {key!r}"
                                 + (f"; did you mean '{near}'?" if near else "")
                                 + f" (allowed: {', '.join(QUANTITIES)}, each optionally with '{_SD_SUFFIX}')",
                                 field=f"{where}.{key}")
        is_sd = key.endswith(_SD_SUFFIX)
        v = (_difference if is_sd else _quantity)(base, raw, path=path, field=f"{where}.{key}")
        _check_value(base, v, path=path, field=f"{where}.{key}", sd=is_sd)
        (sds if is_sd else values)[base] = v
    return values, sds


