"""Pore-water conductivity (temperature correction, TDS, salinity) and bulk soil conductivity.

Bulk conductivity follows Archie (1942) for the pore-water path, and Waxman & Smits
(1968) to add clay surface conduction, its clay counter-ion term derived from the
clay fraction through a cation-exchange capacity (common practice, see
:func:`cec_from_clay`).  Waxman–Smits reduces to Archie when the clay term vanishes.
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from ..errors import InputError, check_nonnegative, check_positive, check_range
from ..quantities import accepts_quantities
from ._validity import PARTICLE_DENSITY_RANGE, check_density
from .clay import (
    CLAY_CEC,
    CLAY_MINERAL_CEC,
    SURFACE_CONDUCTANCE_TEMPERATURE_COEFFICIENT,
    clay_cec_of_mineral,
)
from .water import _temperature, salinity_from_conductivity

__all__ = [
    "ec_from_ec25",
    "ec25_from_ec",
    "ec25_from_tds",
    "salinity_from_ec25",
    "archie_conductivity",
    "waxman_smits_b",
    "qv_from_cec",
    "cec_from_clay",
    "waxman_smits_conductivity",
    "EC_TEMPERATURE_COEFFICIENT",
    "TDS_FACTOR",
    "CLAY_CEC",
    "CLAY_MINERAL_CEC",
    "clay_cec_of_mineral",
    "SURFACE_CONDUCTANCE_TEMPERATURE_COEFFICIENT",
]

#: Linear temperature coefficient of natural-water EC, 1/°C (common practice 2 %/°C;
#: Hayashi 2004 measured 0.0187–0.0198 /°C for natural waters).
EC_TEMPERATURE_COEFFICIENT = 0.02

#: TDS[mg/L] ≈ TDS_FACTOR · EC25[µS/cm] (common practice; 0.55–0.7 depending on the ions).
TDS_FACTOR = 0.64

def _out(x):
    return x[()] if isinstance(x, np.ndarray) and x.ndim == 0 else x


def _temperature_factor(t, a):
    """1 + α(T − 25), refused where it is not positive (steep α at low T would flip the sign)."""
    factor = 1.0 + a * (t - 25.0)
    if np.any(factor <= 0):
        tb, ab = np.broadcast_arrays(t, a)
        i = np.flatnonzero(np.broadcast_to(factor <= 0, tb.shape))[0]
        raise InputError(
            f"alpha {ab.ravel()[i]:.6g} /°C at temp_c {tb.ravel()[i]:.6g} °C gives a non-positive "
            "correction factor 1 + alpha·(T − 25); allowed: alpha < 1/(25 − T) (0.02 is common practice)")
    return factor


def ec_from_ec25(ec25, temp_c, *, alpha=EC_TEMPERATURE_COEFFICIENT):
    """Water conductivity at ``temp_c`` from its value referred to 25 °C.

    Parameters
    ----------
    ec25 : float or array_like
        Conductivity at 25 °C in S/m, >= 0.
    temp_c : float or array_like
        Temperature in °C, >= 0 (liquid water).
    alpha : float
        Linear temperature coefficient per °C, 0–0.05 (default 0.02: common practice).

    Returns
    -------
    float or ndarray
        EC(T) = EC25·[1 + α(T − 25)] in S/m.

    Notes
    -----
    Linear compensation; Hayashi (2004) found α = 0.0187–0.0198 /°C for natural waters
    between 0 and 30 °C, so the common-practice 2 %/°C is within about 1 % there.

    References
    ----------
    Hayashi, M. (2004). Temperature-electrical conductivity relation of water for
    environmental monitoring and geophysical data inversion. Environ. Monit. Assess.,
    96, 119–128. doi:10.1023/B:EMAS.0000031719.83065.68
    """
    ec = check_nonnegative("ec25", ec25, unit="S/m")
    t = _temperature(temp_c)
    a = check_range("alpha", alpha, 0.0, 0.05, unit="1/°C")
    return _out(ec * _temperature_factor(t, a))


def ec25_from_ec(ec, temp_c, *, alpha=EC_TEMPERATURE_COEFFICIENT):
    """Refer a water conductivity measured at ``temp_c`` to 25 °C (inverse of :func:`ec_from_ec25`).

    Parameters
    ----------
    ec : float or array_like
        Conductivity at ``temp_c`` in S/m, >= 0.
    temp_c : float or array_like
        Temperature in °C, >= 0.
    alpha : float
        Linear temperature coefficient per °C, 0–0.05 (default 0.02, common practice).

    Returns
    -------
    float or ndarray
        EC25 = EC/[1 + α(T − 25)] in S/m.

    Notes
    -----
    See :func:`ec_from_ec25`.

    References
    ----------
    Hayashi, M. (2004). Environ. Monit. Assess., 96, 119–128.
    doi:10.1023/B:EMAS.0000031719.83065.68
    """
    e = check_nonnegative("ec", ec, unit="S/m")
    t = _temperature(temp_c)
    a = check_range("alpha", alpha, 0.0, 0.05, unit="1/°C")
    return _out(e / _temperature_factor(t, a))


def ec25_from_tds(tds, *, factor=TDS_FACTOR):
    """Water conductivity at 25 °C from total dissolved solids.

    Parameters
    ----------
    tds : float or array_like
        Total dissolved solids in kg/m³ (= g/L), >= 0.
    factor : float
        TDS[mg/L] per EC[µS/cm], 0.4–1.0 (default 0.64, common practice).

    Returns
    -------
    float or ndarray
        EC25 in S/m: EC25[µS/cm] = TDS[mg/L]/factor, i.e. 0.156 S/m per kg/m³ by default.

    Notes
    -----
    Common-practice conversion; the factor depends on the ionic composition
    (about 0.55–0.7 for natural waters).

    References
    ----------
    Common practice (e.g. water-quality field manuals); no single published source.
    """
    t = check_nonnegative("tds", tds, unit="kg/m³")
    k = check_range("factor", factor, 0.4, 1.0)
    # TDS in mg/L = 1000 * kg/m³; EC in µS/cm = 1e-4 S/m.
    return _out(1000.0 * t / k * 1e-4)


def salinity_from_ec25(ec25):
    """Practical salinity equivalent of a pore-water EC referred to 25 °C.

    Parameters
    ----------
    ec25 : float or array_like
        Conductivity at 25 °C in S/m, >= 0.

    Returns
    -------
    float or ndarray
        Practical salinity (sea-salt equivalent) for the Debye water model.

    Notes
    -----
    Inverts PSS-78 at 25 °C via :func:`subsurf.soil.water.salinity_from_conductivity`.

    References
    ----------
    UNESCO (1983). Unesco Technical Papers in Marine Science 44.
    """
    return salinity_from_conductivity(ec25, 25.0)


@accepts_quantities(
    water_conductivity="S/m",
    porosity="dimensionless",
    saturation="dimensionless",
    a="dimensionless",
    m="dimensionless",
    n="dimensionless",
)
def archie_conductivity(water_conductivity, porosity, saturation=1.0, a=1.0, m=2.0, n=2.0):
    """Bulk conductivity of a clean (clay-free) porous medium, Archie's law.

    Parameters
    ----------
    water_conductivity : float or array_like
        Pore-water conductivity σ_w in S/m, >= 0.
    porosity : float or array_like
        Porosity φ, 0–1.
    saturation : float or array_like
        Water saturation S = θ/φ, 0–1.
    a : float or array_like
        Tortuosity factor, > 0 (1 by default).
    m : float or array_like
        Cementation exponent, 1–5 (2 for consolidated rock; about 1.3–1.5 for
        unconsolidated sands, common practice).
    n : float or array_like
        Saturation exponent, 1–5 (about 2).

    Returns
    -------
    float or ndarray
        σ = σ_w φ^m S^n / a in S/m, broadcast over all inputs.

    Notes
    -----
    Archie (1942), written for conductivity; surface conduction is neglected.

    References
    ----------
    Archie, G. E. (1942). The electrical resistivity log as an aid in determining some
    reservoir characteristics. Trans. AIME, 146(1), 54–62. doi:10.2118/942054-G
    """
    sw = check_nonnegative("water_conductivity", water_conductivity, unit="S/m")
    p = check_range("porosity", porosity, 0.0, 1.0)
    s = check_range("saturation", saturation, 0.0, 1.0)
    aa = check_positive("a", a)
    mm = check_range("m", m, 1.0, 5.0)
    nn = check_range("n", n, 1.0, 5.0)
    return _out(sw * p**mm * s**nn / aa)


def waxman_smits_b(water_conductivity, *, form: Literal["waxman-thomas-1974", "waxman-smits-1968"]
                   = "waxman-thomas-1974"):
    """Equivalent counter-ion conductance B of the Waxman–Smits model at 25 °C.

    Parameters
    ----------
    water_conductivity : float or array_like
        Pore-water conductivity σ_w in S/m, >= 0.
    form : {"waxman-thomas-1974", "waxman-smits-1968"}
        Which published fit of B(σ_w) to use.  The default, the revised fit of
        Waxman & Thomas (1974), gives a lower B in fresh pore water than the original
        1968 fit (0.65 against 1.84 (S/m)/(meq/cm³) as σ_w → 0), which matters for the
        fresh-to-brackish pore water of near-surface soils.

    Returns
    -------
    float or ndarray
        B in S·m²/eq (multiply by Q_v in eq/m³ to get S/m).

    Notes
    -----
    Waxman & Thomas (1974): B = 3.83 [1 − 0.83 exp(−0.5 σ_w)] (S/m)/(meq/cm³);
    Waxman & Smits (1968): B = 4.6 [1 − 0.6 exp(−σ_w/1.3)] (S/m)/(meq/cm³);
    σ_w in S/m; 1 (S/m)/(meq/cm³) = 1e-3 S·m²/eq.  Both at 25 °C (constants from
    memory of the published fits; the temperature dependence of B is neglected).

    References
    ----------
    Waxman, M. H., & Smits, L. J. M. (1968). Electrical conductivities in oil-bearing
    shaly sands. SPE Journal, 8(2), 107–122. doi:10.2118/1863-A
    Waxman, M. H., & Thomas, E. C. (1974). Electrical conductivities in shaly sands —
    I. The relation between hydrocarbon saturation and resistivity index; II. The
    temperature coefficient of electrical conductivity. J. Petroleum Technology 26(2),
    213–225. doi:10.2118/4094-PA
    """
    sw = check_nonnegative("water_conductivity", water_conductivity, unit="S/m")
    if form == "waxman-thomas-1974":
        return _out(3.83e-3 * (1.0 - 0.83 * np.exp(-0.5 * sw)))
    if form == "waxman-smits-1968":
        return _out(4.6e-3 * (1.0 - 0.6 * np.exp(-sw / 1.3)))
    raise InputError(f"form must be 'waxman-thomas-1974' or 'waxman-smits-1968', got {form!r}")


def cec_from_clay(clay, *, clay_cec=CLAY_CEC):
    """Cation-exchange capacity of a soil from its clay mass fraction (common practice).

    Parameters
    ----------
    clay : float or array_like
        Clay mass fraction, 0–1.
    clay_cec : float or array_like
        CEC of the clay itself in eq/kg (mol(+)/kg), 0–2; default 0.5 (common practice).

    Returns
    -------
    float or ndarray
        Soil CEC in eq/kg (1 eq/kg = 100 cmol(+)/kg = 1 meq/g).

    Notes
    -----
    CEC = clay·CEC_clay: the clay fraction is taken as the only exchanger (organic
    matter neglected); a common-practice rule, not a published regression.

    References
    ----------
    Common practice; mineral CEC ranges from standard soil-science texts
    (e.g. Sposito, G. (2008). The Chemistry of Soils, 2nd ed., Oxford Univ. Press).
    """
    c = check_range("clay", clay, 0.0, 1.0)
    k = check_range("clay_cec", clay_cec, 0.0, 2.0, unit="eq/kg")
    return _out(c * k)


def qv_from_cec(cec, porosity, particle_density=2660.0):
    """Cation-exchange capacity per unit pore volume, Q_v of Waxman & Smits (1968).

    Parameters
    ----------
    cec : float or array_like
        Cation-exchange capacity of the dry solid in eq/kg, >= 0.
    porosity : float or array_like
        Porosity φ, 0 < φ <= 1.
    particle_density : float or array_like
        Grain density in kg/m³, > 0.

    Returns
    -------
    float or ndarray
        Q_v = CEC ρ_s (1 − φ)/φ in eq/m³ (1 meq/cm³ = 1000 eq/m³).

    Notes
    -----
    Definition used by Waxman & Smits (1968).

    References
    ----------
    Waxman, M. H., & Smits, L. J. M. (1968). SPE Journal, 8(2), 107–122. doi:10.2118/1863-A
    """
    c = check_nonnegative("cec", cec, unit="eq/kg")
    p = check_range("porosity", porosity, 0.0, 1.0)
    if np.any(p == 0):
        raise InputError("porosity must be > 0 for Q_v, got 0; allowed range 0 < porosity <= 1")
    rs = check_density("particle_density", particle_density, *PARTICLE_DENSITY_RANGE)
    return _out(c * rs * (1.0 - p) / p)


def waxman_smits_conductivity(water_conductivity, porosity, saturation=1.0, *, qv=0.0,
                              a=1.0, m=2.0, n=2.0,
                              b_form: Literal["waxman-thomas-1974", "waxman-smits-1968"]
                              = "waxman-thomas-1974", temp_c=25.0):
    """Bulk conductivity with clay surface conduction, Waxman & Smits (1968).

    Parameters
    ----------
    water_conductivity : float or array_like
        Pore-water conductivity σ_w in S/m, >= 0.
    porosity : float or array_like
        Porosity φ, 0–1.
    saturation : float or array_like
        Water saturation S, 0–1.
    qv : float or array_like
        Exchange cations per pore volume in eq/m³ (see :func:`qv_from_cec`), >= 0.
    a, m, n : float or array_like
        Archie parameters as in :func:`archie_conductivity`.
    b_form : {"waxman-thomas-1974", "waxman-smits-1968"}
        Published fit for the counter-ion conductance B (see :func:`waxman_smits_b`).
    temp_c : float or array_like
        Temperature of the ground in °C (default 25, the temperature of the B fits).
        B is evaluated at the pore-water conductivity referred to 25 °C and scaled by
        1 + 0.02(T − 25) (:data:`SURFACE_CONDUCTANCE_TEMPERATURE_COEFFICIENT`), so the
        clay term follows temperature as the pore-water term does.

    Returns
    -------
    float or ndarray
        σ = φ^m S^(n−1) (S σ_w + B Q_v)/a in S/m; equals Archie when Q_v = 0.

    Notes
    -----
    σ = (φ^m S^n / a)(σ_w + B Q_v/S), with B from :func:`waxman_smits_b`, written
    without the division so that S = 0 gives 0.

    References
    ----------
    Waxman, M. H., & Smits, L. J. M. (1968). Electrical conductivities in oil-bearing
    shaly sands. SPE Journal, 8(2), 107–122. doi:10.2118/1863-A
    """
    sw = check_nonnegative("water_conductivity", water_conductivity, unit="S/m")
    p = check_range("porosity", porosity, 0.0, 1.0)
    s = check_range("saturation", saturation, 0.0, 1.0)
    q = check_nonnegative("qv", qv, unit="eq/m³")
    aa = check_positive("a", a)
    mm = check_range("m", m, 1.0, 5.0)
    nn = check_range("n", n, 1.0, 5.0)
    t = _temperature(temp_c)
    tf = _temperature_factor(t, SURFACE_CONDUCTANCE_TEMPERATURE_COEFFICIENT)
    b = waxman_smits_b(sw / tf, form=b_form) * tf
    if np.any(q > 0):
        from ._validity import warn_validity

        # Waxman & Smits (1968) cores: Qv up to about 1.5 meq/cm³ = 1500 eq/m³ (from memory)
        warn_validity("Waxman & Smits (1968) clay conduction", [("Q_v", q, 0.0, 1500.0, "eq/m³")])
    return _out(p**mm * s ** (nn - 1.0) * (s * sw + b * q) / aa)
