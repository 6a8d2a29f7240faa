"""Target materials: buried targets from material names of ``configs/materials.toml``.

:func:`make_target` builds a :class:`subsurf.detection.targets.Target`; :func:`target_summary`
gives its JSON-able facts.  Re-exported by :mod:`subsurf.planning.antennas`.
"""

from __future__ import annotations

import math

from ..detection.targets import Target
from ..errors import InputError
from ..quantities import accepts_quantities

__all__ = ["MATERIAL_ALIASES", "material_names", "make_target", "target_summary"]


#: Target-material words accepted besides the keys of configs/materials.toml.
MATERIAL_ALIASES = {
    "void": "air",                # air-filled void or cavity
    "plastic_pipe": "air",        # empty plastic pipe: the air inside dominates the contrast
    "water": "fresh_water",       # water-filled pipe or cavity
    "water_table": "saturated_sand",
    "concrete": "concrete_dry",
    "rock": "granite",
    "bedrock": "granite",
    "steel": "metal",
    "iron": "metal",
}


def _canonical(name: str) -> str:
    key = str(name).strip().lower().replace(" ", "_").replace("-", "_")
    return MATERIAL_ALIASES.get(key, key)


def material_names() -> list[str]:
    """Material names accepted by :func:`make_target` (table keys and aliases)."""
    from ..ground.presets import load_materials

    return sorted(set(load_materials()) | set(MATERIAL_ALIASES))


@accepts_quantities(depth_m="m", size_m="m", eps="dimensionless", sigma="S/m", reflection="dimensionless")
def make_target(kind: str, *, depth_m=None, size_m=None, material: str | None = None,
                eps: complex | None = None, sigma: float = 0.0, reflection: complex | None = None) -> Target:
    """Build a :class:`~subsurf.detection.Target` from a material name or explicit values.

    Parameters
    ----------
    kind : {"planar", "point", "line"}
    depth_m, size_m : float, optional
        Depth to the top (m) and diameter (m) of the target.
    material : str, optional
        A key of ``configs/materials.toml`` (e.g. ``metal``, ``air``, ``fresh_water``,
        ``concrete_dry``, ``granite``, ``saturated_sand``) or an alias of
        :data:`MATERIAL_ALIASES` (``void``, ``plastic_pipe``, ``water``, ``water_table``,
        ``concrete``, ``rock``).
    eps, sigma : explicit relative permittivity and conductivity (S/m) instead of a material.
    reflection : explicit amplitude reflection coefficient instead of a material.

    Notes
    -----
    A material's representative value is the middle of its permittivity range and
    the geometric mean of its conductivity range (conductivity spans decades; the
    arithmetic mean when the low end is 0).  ``perfect_conductor`` materials become
    ``conductor=True`` (|R| = 1).
    """
    given = sum(x is not None for x in (material, eps, reflection))
    if given != 1:
        raise InputError("give the target as exactly one of a material name, eps (with sigma) or a reflection")
    if material is None:
        return Target(kind=kind, depth_m=depth_m, size_m=size_m, eps=eps, sigma=sigma, reflection=reflection,
                      material="custom")
    from ..ground.presets import load_materials

    table = load_materials()
    key = _canonical(material)
    if key not in table:
        raise InputError(f"unknown target material {material!r}; available: {', '.join(material_names())}")
    rec = table[key]
    asked = str(material).strip().lower().replace(" ", "_").replace("-", "_")
    label = key if asked == key else f"{asked} (as {key})"  # show what an alias stands for
    if rec["perfect_conductor"]:
        return Target(kind=kind, depth_m=depth_m, size_m=size_m, conductor=True, material=label)
    e_lo, e_hi = rec["relative_permittivity"]
    s_lo, s_hi = rec["conductivity"]
    s = math.sqrt(s_lo * s_hi) if s_lo > 0 else 0.5 * (s_lo + s_hi)
    return Target(kind=kind, depth_m=depth_m, size_m=size_m, eps=complex(0.5 * (e_lo + e_hi)), sigma=s,
                  material=label)


def target_summary(target) -> dict:
    """The target as plain JSON-able facts (SI units, keys with units).

    ``depth_m`` is the depth at which reach is judged; a range of depths of interest adds
    ``depth_top_m`` (blind zone and resolution judged there), ``depth_bottom_m`` (= ``depth_m``)
    and, for a list, ``depths_m``.
    """
    out = {"kind": target.kind, "depth_m": target.depth_m, "size_m": target.size_m,
           "material": target.material}
    if getattr(target, "is_range", False):
        out["depth_top_m"] = target.depth_top_m
        out["depth_bottom_m"] = target.depth_m
        if target.depths_m is not None:
            out["depths_m"] = list(target.depths_m)
    if target.kind == "line":
        out["orientation"] = target.orientation
    if target.conductor:
        out["perfect_conductor"] = True
    elif target.eps is not None:
        out["eps_real"] = complex(target.eps).real
        out["sigma_ms_per_m"] = target.sigma * 1e3
    else:
        out["reflection"] = target.reflection
    return out
