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
    g.add_argument("--clay-cec", metavar="Q", help="cation-exchange capacity of the clay fraction (bare number: "
                   "cmol(+)/kg = meq/100 g; or 'Q eq/kg'); default from --clay-mineral")
    g.add_argument("--clay-mineral", choices=["kaolinite", "halloysite", "illite", "chlorite", "smectite",
                                              "vermiculite"],
                   help="clay mineral whose CEC (Brady & Weil 2002 table) sets the surface conduction (default illite)")
    g.add_argument("--archie-m", metavar="M", help="Archie cementation exponent, 1-5 (default 1.5)")
    g.add_argument("--archie-n", metavar="N", help="Archie saturation exponent, 1-5 (default 2)")
    g.add_argument("--archie-a", metavar="A", help="Archie tortuosity factor, > 0 (default 1)")
    g.add_argument("--stone-fraction", metavar="Q", help="volume fraction of stones/gravel/rubble (bare number: "
                   "fraction; or '20 %%'), 0 to 1 - porosity; default 0")
    g.add_argument("--stone-size", metavar="Q", help="median stone diameter (bare number: mm), > 0; default 20 mm")
    g.add_argument("--stone-eps", metavar="EPS", help="relative permittivity of the stones, 1-100 (default 5)")
    g.add_argument("--roughness", metavar="Q", help="rms height of the ground surface (bare number: cm), >= 0; "
                   "default 1 cm")
    g.add_argument("--no-interface-loss", action="store_true",
                   help="leave out the bound-water / clay-water interface relaxation loss (on by default)")
    d = parser.add_argument_group("loss slope of a direct --eps/--sigma ground (else: conduction only)")
    d.add_argument("--q-star", metavar="Q", help="band-limited Q* of the ground (Turner & Siggins 1994), > 1")
    d.add_argument("--attenuation-at", metavar="F=A", action="append",
                   help="measured one-way attenuation at a frequency, e.g. '100 MHz=1.5' (bare numbers: MHz and "
                        "dB/m); give it twice: sets σ and the loss slope together")


# flags that are Soil fields but not soil facts for the --eps/--sigma check: see _LOSS_FLAGS
_LOSS_FLAGS = {
    # flag attribute: (Soil field, converter of the flag text, allowed text for the error)
    "archie_m": "archie_m",
    "archie_n": "archie_n",
    "archie_a": "archie_a",
    "stone_eps": "eps_stone",
}

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
    "stone_fraction": ("stone_fraction", "fraction", "dimensionless"),
    "stone_size": ("stone_size", "length", "mm"),
    "roughness": ("surface_roughness", "length", "cm"),
}


def medium_from_args(args, *, required: bool = True) -> Medium | None:
    """Build the :class:`Medium` described by the parsed flags; errors name the flag."""
    from ..errors import InputError
    from ..ground.medium import Medium
    from ..units import parse_quantity

    soil_given = any(getattr(args, k, None) is not None for k in _SOIL_FLAGS) or args.texture or args.soil
    soil_only = [f"--{k.replace('_', '-')}" for k in (*_LOSS_FLAGS, "clay_cec", "clay_mineral")
                 if getattr(args, k, None) is not None]
    if getattr(args, "no_interface_loss", False):
        soil_only.append("--no-interface-loss")
    direct_only = [f for f, k in (("--q-star", "q_star"), ("--attenuation-at", "attenuation_at"))
                   if getattr(args, k, None) is not None]
    if args.eps is None and direct_only:
        raise InputError(f"{direct_only[0]} describes the loss of a direct --eps/--sigma ground; a soil description "
                         "gets its loss slope from its texture and moisture")
    if args.eps is not None:
        if soil_given:
            raise InputError("give either --eps/--sigma or soil facts (--texture, --moisture, --soil ...), not both")
        if soil_only:
            raise InputError(f"{soil_only[0]} applies to a soil description (--texture/--moisture or --soil), "
                             "not to a direct --eps/--sigma ground")
        try:
            eps = complex(str(args.eps).replace(" ", ""))
        except ValueError:
            raise InputError(f"--eps: cannot read {args.eps!r} as a number (e.g. 9 or '9-0.5j')") from None
        if not (math.isfinite(eps.real) and math.isfinite(eps.imag)) or eps.real < 1 or eps.imag > 0:
            raise InputError(f"--eps must be finite with real part >= 1 and imaginary part <= 0 (ε' − jε''), got {args.eps}")
        if eps.real > MAX_GROUND_EPS or -eps.imag > MAX_GROUND_EPS:
            raise InputError(f"--eps must have real and imaginary parts at most {MAX_GROUND_EPS:g} (water is ~80; "
                             f"no ground is more), got {args.eps}")
        sigma = 0.0 if args.sigma is None else parse_quantity(args.sigma, "conductivity",
                                                                default_unit="mS/m", name="--sigma")
        if sigma < 0:
            raise InputError(f"--sigma must be >= 0 S/m, got {sigma:g}")
        if sigma > MAX_GROUND_SIGMA:
            raise InputError(f"--sigma must be at most {MAX_GROUND_SIGMA:g} S/m ({MAX_GROUND_SIGMA * 1e3:g} mS/m; "
                             f"saturated brine is ~25 S/m, a metal is a target, not a ground), got {args.sigma!r}")
        facts = {"eps_real": eps.real, "eps_imag": -eps.imag + 0.0, "sigma_s_per_m": sigma}
        q, note = _direct_loss_slope(args, eps, facts)
        if q is not None and "sigma_s_per_m" in facts:
            sigma = facts["sigma_s_per_m"]
        label = f"ε'={eps.real:g}" + (f", ε''={-eps.imag:g}" if eps.imag else "") + f", σ={sigma * 1e3:.4g} mS/m"
        if q is not None:
            label += f", Q*={facts['q_star']:.4g}"
        return Medium(label=label, facts=facts, eps_const=eps, sigma_const=sigma, q=q, loss_note=note)
    if args.sigma is not None:
        raise InputError("--sigma goes with --eps; for a soil, give pore water as --pore-water-ec or --salinity")
    if not soil_given:
        if required:
            raise InputError("describe the ground: --eps/--sigma, or --texture/--moisture, or --soil FILE.toml")
        return None
    from ..ground import Soil

    mapping: dict = {}
    source = "command line"
    from ..ground.schema import SOIL_FACTS

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
            _check_flag_range(flag, val, mapping[fld], SOIL_FACTS.get(attr) or SOIL_FACTS[fld], unit)
    for attr, fld in _LOSS_FLAGS.items():
        val = getattr(args, attr, None)
        if val is not None:
            mapping[fld] = _plain_number(val, "--" + attr.replace("_", "-"))
    if getattr(args, "clay_cec", None) is not None:
        mapping["clay_cec"] = _clay_cec(args.clay_cec)
    if getattr(args, "clay_mineral", None) is not None:
        mapping["clay_mineral"] = args.clay_mineral
    if getattr(args, "no_interface_loss", False):
        mapping["interface_relaxation"] = False
    if "moisture" not in mapping:
        raise InputError("soil description needs a moisture (--moisture, e.g. '20 %')")
    try:
        soil = Soil.from_mapping(mapping, source=source)
    except InputError as exc:
        if args.soil or "needs porosity (0-1), bulk_density (kg/m³) or a texture preset" not in str(exc):
            raise
        raise InputError("the crim model needs the pore space: give --texture (a preset), --porosity or "
                         "--bulk-density") from None
    parts = []
    if mapping.get("texture"):
        parts.append(str(mapping["texture"]))
    import numpy as np

    theta = np.asarray(soil.moisture, dtype=float)
    parts.append(f"θ={float(theta) * 100:g} %" if theta.ndim == 0
                 else f"θ={theta.min() * 100:g}-{theta.max() * 100:g} %")
    return Medium(label=", ".join(parts), facts=dict(mapping), soil=soil)


def _check_flag_range(flag: str, text, value: float, fact, unit: str) -> None:
    """Refuse a soil flag's SI ``value`` outside the range declared in ground/schema.py, naming the flag.

    Without it a --temp of '400 K' reached the water relaxation formulas, whose fitted
    relaxation time turns negative above ~100 degC, and was blamed on an internal ε''.
    """
    from .._schema import display_range
    from ..errors import InputError

    if (fact.low is not None and value < fact.low) or (fact.high is not None and value > fact.high):
        kind = "temperature" if fact.kind == "temperature" else fact.kind
        raise InputError(f"{flag} must be {display_range(fact.low, fact.high, unit, kind)}, got {text!r} "
                         f"({fact.doc})")


#: Largest relative permittivity (real or imaginary part) of a direct --eps ground.  Our limit,
#: stated, the same as the grains' eps_solid in ground/schema.py: liquid water (~80 at 20 °C)
#: is the most polar thing in a ground at radio frequencies.
MAX_GROUND_EPS = 100.0

#: Largest DC conductivity of a direct --sigma ground, S/m.  Our limit, stated: bulk ground conducts
#: less than its pore water, and saturated NaCl brine is ~25 S/m (from memory); sea water is ~5 S/m.
MAX_GROUND_SIGMA = 100.0

#: Frequencies a medium flag may name, Hz.  Common practice, not a published bound: GPR works
#: from ~10 MHz to a few GHz, and a decade or more either side still means something here; below
#: ~1 kHz ground response is quasi-static (electrode and induced polarisation, which no model here
#: describes), above ~100 GHz water's second (fast) relaxation and scattering by sand grains
#: comparable to the wavelength leave the single-Debye, plane-wave mixing models.
FREQUENCY_RANGE_HZ = (1e3, 1e11)


def frequency_flag(text, flag: str) -> float:
    """A frequency flag (bare number: MHz) in Hz, refused outside :data:`FREQUENCY_RANGE_HZ` naming ``flag``."""
    from ..errors import InputError
    from ..units import parse_quantity

    f = parse_quantity(text, "frequency", default_unit="MHz", name=flag)
    low, high = FREQUENCY_RANGE_HZ
    if not low <= f <= high:
        raise InputError(f"{flag} must be between 1 kHz and 100 GHz (0.001 to 1e+05 MHz; the models here describe "
                         f"radio frequencies only), got {text!r}")
    return f


def _plain_number(text, flag: str) -> float:
    from ..errors import InputError

    try:
        v = float(str(text).strip())
    except ValueError:
        raise InputError(f"{flag}: cannot read {text!r} as a number") from None
    if not math.isfinite(v):
        raise InputError(f"{flag} must be a finite number, got {text!r}")
    return v


def _clay_cec(text) -> float:
    """--clay-cec in eq/kg: bare number cmol(+)/kg (= meq/100 g), or with 'eq/kg', 'cmol/kg', 'meq/100g'."""
    from ..errors import InputError

    t = str(text).strip().lower().replace(" ", "")
    scale = 0.01
    for suffix, sc in (("cmol(+)/kg", 0.01), ("cmol/kg", 0.01), ("meq/100g", 0.01), ("eq/kg", 1.0)):
        if t.endswith(suffix):
            t, scale = t[: -len(suffix)], sc
            break
    v = _plain_number(t, "--clay-cec") * scale
    if not 0.0 <= v <= 2.0:
        raise InputError(f"--clay-cec must be between 0 and 200 cmol(+)/kg (0-2 eq/kg), got {text!r}")
    return v


def _direct_loss_slope(args, eps, facts):
    """(Q of the constant-Q ε or None, note) for a direct ground from --q-star or two --attenuation-at."""
    from ..errors import InputError

    q_star = getattr(args, "q_star", None)
    pairs = getattr(args, "attenuation_at", None)
    if q_star is not None and pairs:
        raise InputError("give --q-star or two --attenuation-at, not both")
    if q_star is None and not pairs:
        return None, ("loss frequency dependence: conduction only (constant ε); give --q-star or two "
                      "--attenuation-at for a loss that rises with frequency")
    from ..ground.constant_q import q_from_q_star
    from ..waves.attenuation import loss_from_two_attenuations

    if q_star is not None:
        qs = _plain_number(q_star, "--q-star")
        if not qs > 1.0:
            raise InputError(f"--q-star must be > 1 (no passive constant-Q ground is lossier), got {q_star!r}")
        facts["q_star"] = qs
        return float(q_from_q_star(qs)), None
    if len(pairs) != 2:
        raise InputError(f"--attenuation-at must be given exactly twice (two frequencies), got {len(pairs)}")
    if args.sigma is not None:
        raise InputError("--attenuation-at sets the conductivity from the two attenuations; leave out --sigma")
    pts = []
    for text in pairs:
        if "=" not in text:
            raise InputError(f"--attenuation-at: write FREQUENCY=ATTENUATION, e.g. '100 MHz=1.5', got {text!r}")
        fs, a_s = text.split("=", 1)
        f = frequency_flag(fs, "--attenuation-at frequency")
        a = _plain_number(a_s.lower().replace("db/m", ""), "--attenuation-at attenuation (dB/m)")
        if a < 0:
            raise InputError(f"--attenuation-at needs an attenuation >= 0 dB/m, got {text!r}")
        pts.append((f, a / (20.0 / math.log(10.0))))
    fit = loss_from_two_attenuations(eps.real, pts[0][0], pts[0][1], pts[1][0], pts[1][1])
    facts["sigma_s_per_m"] = fit.sigma
    facts["q_star"] = fit.q_star
    return fit.q, None
