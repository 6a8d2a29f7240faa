"""Site facts → relative complex permittivity ε(f) and DC conductivity σ of soils.

Modules: :mod:`.water` (free and saline water), :mod:`.mixing` (Topp 1980, CRIM /
Lichtenecker–Rother), :mod:`.conductivity` (pore-water EC, Archie, Waxman–Smits),
:mod:`.clay` (CEC per clay mineral), :mod:`.peplinski` (Peplinski et al. 1995),
:mod:`.relaxation` (Cole–Cole, Jonscher, constant Q), :mod:`.constant_q` (Q*),
:mod:`.scattering` (Mie volume scattering by stones), :mod:`.roughness` (Ament factor),
:mod:`.losses` (loss facts of a soil), :mod:`.pedotransfer` (Saxton & Rawls 2006
normal density), :mod:`.models` (the :class:`Soil` type) and
:mod:`.presets` (loaders of the bundled texture and material tables).

Permittivities follow ε = ε' − jε'' with ε'' >= 0; all functions broadcast over numpy
arrays and accept scalars; SI units throughout.
"""

from .clay import CLAY_MINERAL_CEC, clay_cec_of_mineral
from .conductivity import (
    archie_conductivity,
    cec_from_clay,
    ec25_from_ec,
    ec25_from_tds,
    ec_from_ec25,
    qv_from_cec,
    salinity_from_ec25,
    waxman_smits_b,
    waxman_smits_conductivity,
)
from .constant_q import attenuation_from_q_star, q_from_q_star, q_star_from_q
from .mixing import (
    crim_permittivity,
    lichtenecker_permittivity,
    porosity_from_density,
    topp_moisture,
    topp_permittivity,
)
from .models import Soil
from .pedotransfer import saxton_rawls_normal_density, saxton_rawls_saturation
from .peplinski import peplinski_effective_conductivity, peplinski_permittivity
from .presets import load_materials, load_textures, texture_preset
from .relaxation import cole_cole_permittivity, constant_q_permittivity, jonscher_permittivity
from .roughness import roughness_reflection_factor, roughness_transmission_factor
from .scattering import mie_efficiencies, scattering_attenuation
from .water import (
    salinity_from_conductivity,
    water_conductivity,
    water_permittivity,
    water_relaxation_time,
    water_static_permittivity,
)

__all__ = [
    "Soil",
    "water_permittivity",
    "water_static_permittivity",
    "water_relaxation_time",
    "water_conductivity",
    "salinity_from_conductivity",
    "topp_permittivity",
    "topp_moisture",
    "crim_permittivity",
    "lichtenecker_permittivity",
    "porosity_from_density",
    "archie_conductivity",
    "waxman_smits_conductivity",
    "waxman_smits_b",
    "qv_from_cec",
    "cec_from_clay",
    "ec_from_ec25",
    "ec25_from_ec",
    "ec25_from_tds",
    "salinity_from_ec25",
    "peplinski_permittivity",
    "peplinski_effective_conductivity",
    "load_textures",
    "load_materials",
    "texture_preset",
    "CLAY_MINERAL_CEC",
    "saxton_rawls_normal_density",
    "saxton_rawls_saturation",
    "clay_cec_of_mineral",
    "cole_cole_permittivity",
    "jonscher_permittivity",
    "constant_q_permittivity",
    "attenuation_from_q_star",
    "q_from_q_star",
    "q_star_from_q",
    "scattering_attenuation",
    "mie_efficiencies",
    "roughness_reflection_factor",
    "roughness_transmission_factor",
]
