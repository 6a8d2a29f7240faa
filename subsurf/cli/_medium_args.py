"""Command-line description of the ground, shared by ``medium``, ``choose``, ``setup`` etc.

The ground is given either directly (``--eps``, ``--sigma``) or as soil facts
(``--texture``, ``--moisture``, pore water, temperature, model) or as a TOML file
(``--soil FILE``) whose keys are declared in :mod:`subsurf.ground.schema`.
Only light imports at module level: numpy and the physics load when a command runs.
"""

from __future__ import annotations

import argparse
import math
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from ..ground.medium import Medium


def add_medium_arguments(parser: argparse.ArgumentParser) -> None:
    g = parser.add_argument_group(
        "ground",
        "either --eps/--sigma, or soil facts (--texture/--moisture/...), or --soil FILE.toml",
    )
    g.add_argument("--eps", metavar="EPS", help="relative permittivity ε' of the ground (direct); "
                   "a complex value '9-0.5j' gives ε' − jε''")
    g.add_argument("--sigma", metavar="Q", help="DC conductivity with the direct --eps (bare number: mS/m)")
    g.add_argument("--soil", metavar="FILE", help="TOML file of soil facts, keys as the soil flags "
                   "underscored and bare numbers in the same units, e.g. texture = \"loam\", "
                   "moisture = \"20 %%\", pore_water_ec = 50, temp = 12; flags given as well override it")
    g.add_argument("--texture", help="soil texture preset from configs/textures.toml (e.g. loam, clay, sand)")
    g.add_argument("--moisture", metavar="Q", help="volumetric water content (bare number: fraction; or '20 %%')")
    g.add_argument("--sand", metavar="Q", help="sand fraction (bare number: fraction; or '60 %%')")
    g.add_argument("--clay", metavar="Q", help="clay fraction (bare number: fraction; or '10 %%')")
    g.add_argument("--bulk-density", metavar="Q", help="dry bulk density (bare number: g/cm3)")
    g.add_argument("--porosity", metavar="Q", help="porosity (bare number: fraction)")
    g.add_argument("--temp", metavar="Q", help="ground temperature (bare number: degC)")
    g.add_argument("--salinity", metavar="Q", help="pore-water practical salinity (PSU)")
    g.add_argument("--pore-water-ec", metavar="Q", help="pore-water EC at 25 degC (bare number: mS/m)")
    g.add_argument("--tds", metavar="Q", help="pore-water total dissolved solids (bare number: mg/L)")
    g.add_argument("--model", choices=["crim", "peplinski", "topp"], help="soil permittivity model (default crim)")


_SOIL_FLAGS = {
    # flag attribute: (Soil field, quantity kind, default unit of a bare number)
    "moisture": ("moisture", "fraction", "dimensionless"),
    "sand": ("sand", "fraction", "dimensionless"),
    "clay": ("clay", "fraction", "dimensionless"),
    "bulk_density": ("bulk_density", "density", "g/cm**3"),
    "porosity": ("porosity", "fraction", "dimensionless"),
    "temp": ("temp_c", "temperature", "degC"),
    "salinity": ("pore_water_salinity_psu", "salinity", "dimensionless"),
    "pore_water_ec": ("pore_water_ec25", "conductivity", "mS/m"),
    "tds": ("pore_water_tds", "mass_concentration", "mg/L"),
}


def medium_from_args(args, *, required: bool = True) -> Medium | None:
    """Build the :class:`Medium` described by the parsed flags; errors name the flag."""
    from ..errors import InputError
    from ..ground.medium import Medium
    from ..units import parse_quantity

    soil_given = any(getattr(args, k, None) is not None for k in _SOIL_FLAGS) or args.texture or args.soil
    if args.eps is not None:
        if soil_given:
            raise InputError("give either --eps/--sigma or soil facts (--texture, --moisture, --soil ...), not both")
        try:
            eps = complex(str(args.eps).replace(" ", ""))
        except ValueError:
            raise InputError(f"--eps: cannot read {args.eps!r} as a number (e.g. 9 or '9-0.5j')") from None
        if not (math.isfinite(eps.real) and math.isfinite(eps.imag)) or eps.real < 1 or eps.imag > 0:
            raise InputError(f"--eps must be finite with real part >= 1 and imaginary part <= 0 (ε' − jε''), got {args.eps}")
        sigma = 0.0 if args.sigma is None else parse_quantity(args.sigma, "conductivity",
                                                                default_unit="mS/m", name="--sigma")
        if sigma < 0:
            raise InputError(f"--sigma must be >= 0 S/m, got {sigma:g}")
        label = f"ε'={eps.real:g}" + (f", ε''={-eps.imag:g}" if eps.imag else "") + f", σ={sigma * 1e3:g} mS/m"
        return Medium(label=label, facts={"eps_real": eps.real, "eps_imag": -eps.imag + 0.0, "sigma_s_per_m": sigma},
                      eps_const=eps, sigma_const=sigma)
    if args.sigma is not None:
        raise InputError("--sigma goes with --eps; for a soil, give pore water as --pore-water-ec or --salinity")
    if not soil_given:
        if required:
            raise InputError("describe the ground: --eps/--sigma, or --texture/--moisture, or --soil FILE.toml")
        return None
    from ..ground import Soil

    mapping: dict = {}
    source = "command line"
    if args.soil:
        from ..ground.schema import load_soil_file

        source = str(args.soil)
        mapping.update(load_soil_file(args.soil))  # SI values; keys and ranges from ground/schema.py
    if args.texture:
        mapping["texture"] = args.texture
    if args.model:
        mapping["model"] = args.model
    for attr, (fld, kind, unit) in _SOIL_FLAGS.items():
        val = getattr(args, attr, None)
        if val is not None:
            flag = "--" + attr.replace("_", "-")
            mapping[fld] = parse_quantity(val, kind, default_unit=unit, name=flag)
            if kind == "fraction" and mapping[fld] > 1:
                raise InputError(f"{flag} must be a fraction between 0 and 1, got {val!r}; "
                                 f"for a percentage write '{val} %'" if str(val).strip().replace(".", "").isdigit()
                                 else f"{flag} must be between 0 and 100 %, got {val!r}")
    if "moisture" not in mapping:
        raise InputError("soil description needs a moisture (--moisture, e.g. '20 %')")
    soil = Soil.from_mapping(mapping, source=source)
    parts = []
    if mapping.get("texture"):
        parts.append(str(mapping["texture"]))
    import numpy as np

    theta = np.asarray(soil.moisture, dtype=float)
    parts.append(f"θ={float(theta) * 100:g} %" if theta.ndim == 0
                 else f"θ={theta.min() * 100:g}-{theta.max() * 100:g} %")
    return Medium(label=", ".join(parts), facts=dict(mapping), soil=soil)
