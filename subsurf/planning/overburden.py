"""Surface layers (asphalt, concrete, topsoil, fill) from material names, for the loss budget.

A layer is written ``"THICKNESS MATERIAL"`` (e.g. ``"0.08 m asphalt"``, ``"20 cm concrete"``)
or ``"THICKNESS eps=E sigma=S"`` (σ in mS/m), top first.  Materials are the entries of
``configs/materials.toml`` and the aliases below; a material's value is the middle of its
permittivity range and the geometric mean of its conductivity range, as for targets.
"""

from __future__ import annotations

import math
import re

from ..detection.layers import Layer
from ..errors import InputError

__all__ = ["LAYER_ALIASES", "layer_material_names", "make_layer", "parse_layer"]

#: Layer words accepted besides the keys of configs/materials.toml (shown as "word (as entry)").
LAYER_ALIASES = {
    "concrete": "concrete_dry",
    "fill": "dry_sand",       # granular sub-base or trench fill, dry
    "sub_base": "dry_sand",
    "topsoil": "silt",        # a silty topsoil
    "gravel": "dry_sand",
}


def layer_material_names() -> list[str]:
    """Material words a layer accepts."""
    from ..ground.presets import load_materials

    return sorted(k for k, v in {**load_materials(), **dict.fromkeys(LAYER_ALIASES)}.items()
                  if v is None or not v["perfect_conductor"])


def make_layer(thickness_m: float, material: str, *, name: str = "--over") -> Layer:
    """A :class:`~subsurf.detection.layers.Layer` of a named material."""
    from ..ground.presets import load_materials

    if not (isinstance(thickness_m, (int, float)) and math.isfinite(thickness_m) and thickness_m > 0):
        raise InputError(f"{name}: layer thickness must be > 0 m, got {thickness_m!r}")
    table = load_materials()
    asked = str(material).strip().lower().replace(" ", "_").replace("-", "_")
    key = LAYER_ALIASES.get(asked, asked)
    if key not in table or table[key]["perfect_conductor"]:
        raise InputError(f"{name}: unknown layer material {material!r}; allowed: {', '.join(layer_material_names())} "
                         "or 'eps=E sigma=S' (S in mS/m)")
    rec = table[key]
    e_lo, e_hi = rec["relative_permittivity"]
    s_lo, s_hi = rec["conductivity"]
    s = math.sqrt(s_lo * s_hi) if s_lo > 0 else 0.5 * (s_lo + s_hi)
    label = key if asked == key else f"{asked} (as {key})"
    return Layer(thickness_m=float(thickness_m), eps=complex(0.5 * (e_lo + e_hi)), sigma=s, label=label)


_EXPLICIT = re.compile(r"^eps\s*=\s*(?P<eps>[^\s]+)(\s+sigma\s*=\s*(?P<sigma>[^\s]+))?$")


def parse_layer(text: str, *, name: str = "--over") -> Layer:
    """Parse ``"0.08 m asphalt"`` or ``"0.1 m eps=6 sigma=2"`` (thickness with unit, then what) into a Layer."""
    from ..units import parse_quantity

    parts = str(text).strip().split()
    if len(parts) < 2:
        raise InputError(f"{name}: write a layer as 'THICKNESS MATERIAL', e.g. '0.08 m asphalt', got {text!r}")
    # the thickness is the leading number with an optional unit word
    if len(parts) >= 3 and re.fullmatch(r"[A-Za-zµ]+", parts[1]) and parts[1].lower() not in ("eps",):
        thick_text, rest = " ".join(parts[:2]), parts[2:]
    else:
        thick_text, rest = parts[0], parts[1:]
    try:
        t = parse_quantity(thick_text, "length", default_unit="m", name=name)
    except InputError:
        raise InputError(f"{name}: cannot read the layer thickness in {text!r}; write e.g. '0.08 m asphalt'") from None
    if not t > 0:
        raise InputError(f"{name}: layer thickness must be > 0 m, got {thick_text!r}")
    what = " ".join(rest)
    m = _EXPLICIT.match(what.lower())
    if m:
        try:
            eps = complex(m.group("eps").replace(" ", ""))
            sigma = 0.0 if m.group("sigma") is None else float(m.group("sigma")) * 1e-3
        except ValueError:
            raise InputError(f"{name}: cannot read eps/sigma in {text!r}; write e.g. 'eps=6 sigma=2' "
                             "(sigma in mS/m)") from None
        if not (math.isfinite(eps.real) and eps.real >= 1 and eps.imag <= 0 and math.isfinite(sigma) and sigma >= 0):
            raise InputError(f"{name}: layer eps must be >= 1 and sigma >= 0 mS/m, got {what!r}")
        return Layer(thickness_m=float(t), eps=eps, sigma=sigma, label=f"eps={eps.real:g}, sigma={sigma * 1e3:g} mS/m")
    return make_layer(float(t), what, name=name)
