"""Loaders for the bundled soil texture and material tables (``configs/*.toml``).

The only file-reading code of the soil package.  Tables are read with :mod:`tomllib`
from :func:`subsurf.config_dir` and returned as plain dictionaries in SI units.
"""

from __future__ import annotations

import math
import tomllib
from functools import lru_cache
from pathlib import Path

from ..errors import FileInputError

__all__ = ["load_textures", "load_materials", "texture_preset"]


def _read(name: str) -> tuple[Path, dict]:
    from .. import config_dir

    path = Path(config_dir()) / name
    try:
        with open(path, "rb") as fh:
            return path, tomllib.load(fh)
    except FileNotFoundError:
        raise FileInputError(path, "file not found") from None
    except tomllib.TOMLDecodeError as exc:
        raise FileInputError(path, f"invalid TOML: {exc}") from None


def _number(path, key, field, value, low, high):
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise FileInputError(path, f"entry [{key}] must be a number, got {value!r}", field=field)
    if not low <= value <= high:
        raise FileInputError(path, f"entry [{key}] must be between {low:g} and {high:g}, got {value!r}",
                             field=field)
    return float(value)


def _pair(path, key, field, value, low, high):
    if not isinstance(value, list) or len(value) != 2:
        raise FileInputError(path, f"entry [{key}] must be a [low, high] pair, got {value!r}", field=field)
    lo, hi = (_number(path, key, field, v, low, high) for v in value)
    if lo > hi:
        raise FileInputError(path, f"entry [{key}] has low {lo:g} > high {hi:g}", field=field)
    return (lo, hi)


def _source(path, key, entry):
    src = entry.get("source")
    if not isinstance(src, str) or not src.strip():
        raise FileInputError(path, f"entry [{key}] needs a 'source' string", field="source")
    return src


@lru_cache(maxsize=1)
def _textures() -> dict:
    path, data = _read("textures.toml")
    out = {}
    for key, entry in data.items():
        if not isinstance(entry, dict):
            raise FileInputError(path, f"[{key}] must be a table", field=key)
        rec = {f: _number(path, key, f, entry.get(f), 0.0, 1.0) for f in ("sand", "silt", "clay")}
        if abs(rec["sand"] + rec["silt"] + rec["clay"] - 1.0) > 0.011:
            raise FileInputError(path, f"entry [{key}]: sand + silt + clay must be 1", field="sand")
        rec["particle_density"] = _number(path, key, "particle_density_kg_m3",
                                          entry.get("particle_density_kg_m3"), 1000.0, 5000.0)
        rec["bulk_density"] = _number(path, key, "bulk_density_kg_m3",
                                      entry.get("bulk_density_kg_m3"), 100.0, rec["particle_density"])
        rec["source"] = _source(path, key, entry)
        _loss_facts(path, key, entry, rec)
        out[key] = rec
    return out


def _loss_facts(path, key, entry, rec):
    """Optional loss facts of a texture entry (see the header of configs/textures.toml)."""
    from .conductivity import CLAY_MINERAL_CEC

    n = entry.get("interface_n")
    if n is not None:
        rec["interface_n"] = _number(path, key, "interface_n", n, 0.05, 0.999)
    chi = entry.get("interface_chi_per_bound_water")
    if chi is not None:
        rec["interface_chi_per_bound_water"] = _number(path, key, "interface_chi_per_bound_water", chi, 0.0, 1000.0)
    if "stone_fraction" in entry:
        rec["stone_fraction"] = _number(path, key, "stone_fraction", entry["stone_fraction"], 0.0, 1.0)
        porosity = 1.0 - rec["bulk_density"] / rec["particle_density"]
        if rec["stone_fraction"] > 1.0 - porosity:
            raise FileInputError(path, f"entry [{key}] stone_fraction must be <= 1 - porosity = {1 - porosity:.3g}",
                                 field="stone_fraction")
    if "stone_size_m" in entry:
        rec["stone_size"] = _number(path, key, "stone_size_m", entry["stone_size_m"], 1e-4, 10.0)
    mineral = entry.get("clay_mineral")
    if mineral is not None:
        if not isinstance(mineral, str) or mineral not in CLAY_MINERAL_CEC:
            raise FileInputError(path, f"entry [{key}] clay_mineral must be one of {', '.join(CLAY_MINERAL_CEC)}, "
                                 f"got {mineral!r}", field="clay_mineral")
        rec["clay_mineral"] = mineral
    if "loss_source" in entry:
        rec["loss_source"] = str(entry["loss_source"])


def load_textures() -> dict[str, dict]:
    """Soil texture presets from ``configs/textures.toml``.

    Returns
    -------
    dict
        ``{name: {"sand", "silt", "clay" (mass fractions), "particle_density",
        "bulk_density" (kg/m³), "source"}}``; names use underscores (``"silt_loam"``).
        A fresh copy each call.

    Raises
    ------
    FileInputError
        Naming the file, the entry and the field when the table is invalid.
    """
    return {k: dict(v) for k, v in _textures().items()}


def texture_preset(name: str) -> dict:
    """One texture preset by name (case-insensitive; spaces or hyphens read as underscores)."""
    from ..errors import InputError

    key = str(name).strip().lower().replace(" ", "_").replace("-", "_")
    table = _textures()
    if key not in table:
        raise InputError(f"texture {name!r} is not a known preset; allowed: {', '.join(sorted(table))}")
    return dict(table[key])


@lru_cache(maxsize=1)
def _materials() -> dict:
    path, data = _read("materials.toml")
    out = {}
    for key, entry in data.items():
        if not isinstance(entry, dict):
            raise FileInputError(path, f"[{key}] must be a table", field=key)
        eps = _pair(path, key, "relative_permittivity", entry.get("relative_permittivity"), 1.0, 1e3)
        sig = _pair(path, key, "conductivity_ms_per_m", entry.get("conductivity_ms_per_m"), 0.0, 1e12)
        rec = {
            "description": str(entry.get("description", key)),
            "relative_permittivity": eps,
            "conductivity": (sig[0] * 1e-3, sig[1] * 1e-3),
            "perfect_conductor": bool(entry.get("perfect_conductor", False)),
            "velocity": None,
            "attenuation_db_per_m": None,
            "source": _source(path, key, entry),
        }
        if "velocity_m_per_ns" in entry:
            rec["velocity"] = _number(path, key, "velocity_m_per_ns", entry["velocity_m_per_ns"],
                                      0.0, 0.3) * 1e9
        if "attenuation_db_per_m" in entry:
            rec["attenuation_db_per_m"] = _pair(path, key, "attenuation_db_per_m",
                                                entry["attenuation_db_per_m"], 0.0, 1e5)
        out[key] = rec
    return out


def load_materials() -> dict[str, dict]:
    """Typical material properties from ``configs/materials.toml``, in SI units.

    Returns
    -------
    dict
        ``{name: {"description", "relative_permittivity" (low, high),
        "conductivity" (low, high) in S/m, "perfect_conductor" (bool),
        "velocity" (m/s or None), "attenuation_db_per_m" ((low, high) or None),
        "source"}}``.  A fresh copy each call.

    Raises
    ------
    FileInputError
        Naming the file, the entry and the field when the table is invalid.
    """
    return {k: dict(v) for k, v in _materials().items()}
