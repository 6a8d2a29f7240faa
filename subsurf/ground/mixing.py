"""Empirical and volumetric mixing rules: Topp (1980), CRIM / Lichtenecker–Rother, porosity."""

from __future__ import annotations

import numpy as np

from ..errors import InputError, check_broadcast, check_finite, check_range
from ..quantities import accepts_quantities
from ._validity import BULK_DENSITY_RANGE, PARTICLE_DENSITY_RANGE, check_density, warn_validity

__all__ = [
    "topp_permittivity",
    "topp_moisture",
    "lichtenecker_permittivity",
    "crim_permittivity",
    "porosity_from_density",
]

_TOPP = "Topp et al. (1980)"
_TOPP_THETA_MAX = 0.55   # highest water content in the published calibration (about 0.55)
_TOPP_KA_RANGE = (3.0, 40.0)

#: Units of the mixing models' arguments: all dimensionless (fractions and relative permittivities).
_MIXING_FRACTIONS = dict.fromkeys(("moisture", "porosity", "eps_solid", "eps_water", "eps_air"), "dimensionless")


def _out(x):
    return x[()] if isinstance(x, np.ndarray) and x.ndim == 0 else x


@accepts_quantities(theta="dimensionless")
def topp_permittivity(theta):
    """Apparent relative permittivity of a mineral soil from its volumetric water content.

    Parameters
    ----------
    theta : float or array_like
        Volumetric water content (m³/m³), 0–1. Warns above 0.55 (end of the calibration).

    Returns
    -------
    float or ndarray
        Apparent permittivity Ka (real; the calibration was made with time-domain
        reflectometry at roughly 20 MHz–1 GHz and lumps all losses into a travel time).

    Notes
    -----
    Ka = 3.03 + 9.3 θ + 146 θ² − 76.7 θ³.

    References
    ----------
    Topp, G. C., Davis, J. L., & Annan, A. P. (1980). Electromagnetic determination of
    soil water content: measurements in coaxial transmission lines. Water Resour. Res.,
    16(3), 574–582. doi:10.1029/WR016i003p00574
    """
    th = check_range("theta", theta, 0.0, 1.0, unit="m³/m³")
    warn_validity(_TOPP, [("theta", th, 0.0, _TOPP_THETA_MAX, "m³/m³")])
    return _out(3.03 + 9.3 * th + 146.0 * th**2 - 76.7 * th**3)


@accepts_quantities(ka="dimensionless")
def topp_moisture(ka):
    """Volumetric water content from apparent permittivity (Topp et al. 1980 inverse fit).

    Parameters
    ----------
    ka : float or array_like
        Apparent relative permittivity, >= 1. Warns outside 3–40, the calibrated range.

    Returns
    -------
    float or ndarray
        θ (m³/m³).  Below Ka ≈ 3.9 the polynomial gives θ < 0.01 and below Ka ≈ 2.9 a
        negative value, returned as computed (with the range warning).

    Notes
    -----
    θ = −5.3·10⁻² + 2.92·10⁻² Ka − 5.5·10⁻⁴ Ka² + 4.3·10⁻⁶ Ka³.  This is the
    separately published regression, only an approximate inverse of
    :func:`topp_permittivity`: round trips agree within about 0.025 m³/m³ for θ = 0.05–0.5
    (0.03 at θ = 0).

    References
    ----------
    Topp, G. C., Davis, J. L., & Annan, A. P. (1980). Water Resour. Res., 16(3),
    574–582. doi:10.1029/WR016i003p00574
    """
    k = check_finite("ka", ka)
    if np.any(k < 1.0):
        raise InputError(f"ka must be >= 1 (vacuum), got {k[k < 1.0].ravel()[0]:.6g}")
    warn_validity(_TOPP, [("ka", k, *_TOPP_KA_RANGE, "")])
    return _out(-5.3e-2 + 2.92e-2 * k - 5.5e-4 * k**2 + 4.3e-6 * k**3)


def _fraction(name, value):
    return check_range(name, value, 0.0, 1.0, unit="(fraction)")


def _check_moisture(moisture, porosity):
    m = _fraction("moisture", moisture)
    p = _fraction("porosity", porosity)
    check_broadcast(moisture=m, porosity=p)
    over = m > p
    if np.any(over):
        mb, pb = np.broadcast_arrays(m, p)
        i = np.flatnonzero(np.broadcast_to(over, mb.shape))[0]
        raise InputError(
            f"moisture must be <= porosity (water cannot exceed the pore space), got "
            f"moisture {mb.ravel()[i]:.6g} with porosity {pb.ravel()[i]:.6g}; allowed range 0 to porosity"
        )
    return m, p


def _check_eps(name, eps):
    e = np.asarray(eps)
    if np.iscomplexobj(e):
        if not np.all(np.isfinite(e)):
            raise InputError(f"{name} must be finite")
        re, im = e.real, e.imag
    else:
        re, im = check_finite(name, e), np.zeros(())
    if np.any(re < 1.0):
        raise InputError(f"{name} real part must be >= 1, got {re[re < 1.0].ravel()[0]:.6g}")
    if np.any(im > 0):
        raise InputError(
            f"{name} imaginary part must be <= 0 (convention ε = ε' − jε'', ε'' >= 0), "
            f"got {im[im > 0].ravel()[0]:.6g}")
    return e


def _sqrt_passive(eps):
    """Principal square root of a complex permittivity with Re ε ≥ 1 (checked by the caller), real arithmetic.

    √(x + jy) = u + j·y/(2u) with u = √((|ε| + x)/2); no cancellation since x > 0.  Same
    value as ``np.sqrt`` to round-off, about four times faster on large arrays.
    """
    x, y = eps.real, eps.imag
    if eps.ndim == 0:
        return np.sqrt(eps)
    u = np.sqrt(0.5 * (np.sqrt(x * x + y * y) + x))
    out = np.empty(eps.shape, dtype=complex)
    out.real = u
    out.imag = y / (2.0 * u)
    return out


@accepts_quantities(**_MIXING_FRACTIONS, exponent="dimensionless")
def lichtenecker_permittivity(moisture, porosity, eps_solid, eps_water, eps_air=1.0, *,
                              exponent=0.5):
    """Three-phase (solid, water, air) power-law mixing of permittivities.

    Parameters
    ----------
    moisture : float or array_like
        Volumetric water content θ (m³/m³), 0 <= θ <= porosity.
    porosity : float or array_like
        Porosity φ, 0–1.
    eps_solid, eps_water, eps_air : float, complex or array_like
        Relative permittivities of the phases (complex allowed, ε = ε' − jε'').
    exponent : float
        Mixing exponent a, −1 <= a <= 1; 0.5 is CRIM, 1 the volume average,
        1/3 Looyenga, 0 the logarithmic (Lichtenecker) limit.

    Returns
    -------
    float, complex or ndarray
        Mixture permittivity, broadcast over all inputs.

    Notes
    -----
    ε^a = (1 − φ) ε_s^a + θ ε_w^a + (φ − θ) ε_air^a  (a ≠ 0);
    ln ε = (1 − φ) ln ε_s + θ ln ε_w + (φ − θ) ln ε_air  (a = 0).

    References
    ----------
    Lichtenecker, K., & Rother, K. (1931). Die Herleitung des logarithmischen
    Mischungsgesetzes aus allgemeinen Prinzipien der stationären Strömung.
    Physikalische Zeitschrift, 32, 255–260.
    Birchak, J. R., Gardner, C. G., Hipp, J. E., & Victor, J. M. (1974). High dielectric
    constant microwave probes for sensing soil moisture. Proc. IEEE, 62(1), 93–98.
    doi:10.1109/PROC.1974.9388
    """
    a = float(check_range("exponent", exponent, -1.0, 1.0))
    m, p = _check_moisture(moisture, porosity)
    es = _check_eps("eps_solid", eps_solid)
    ew = _check_eps("eps_water", eps_water)
    ea = _check_eps("eps_air", eps_air)
    check_broadcast(moisture=m, porosity=p, eps_solid=es, eps_water=ew, eps_air=ea)
    complex_in = any(np.iscomplexobj(e) for e in (es, ew, ea))
    cast = (lambda e: np.asarray(e, dtype=complex)) if complex_in else (lambda e: np.asarray(e, dtype=float))
    es, ew, ea = cast(es), cast(ew), cast(ea)
    if a == 0.0:
        out = np.exp((1 - p) * np.log(es) + m * np.log(ew) + (p - m) * np.log(ea))
    elif a == 0.5 and complex_in:  # CRIM: the same formula with a faster principal square root
        out = np.square((1 - p) * _sqrt_passive(es) + m * _sqrt_passive(ew) + (p - m) * _sqrt_passive(ea))
    else:
        out = ((1 - p) * es**a + m * ew**a + (p - m) * ea**a) ** (1.0 / a)
    return _out(out)


@accepts_quantities(**_MIXING_FRACTIONS)
def crim_permittivity(moisture, porosity, eps_solid, eps_water, eps_air=1.0):
    """Complex refractive index model (CRIM): Lichtenecker–Rother mixing with exponent 1/2.

    Parameters
    ----------
    moisture : float or array_like
        Volumetric water content θ (m³/m³), 0 <= θ <= porosity.
    porosity : float or array_like
        Porosity φ, 0–1.
    eps_solid, eps_water, eps_air : float, complex or array_like
        Relative permittivities (ε = ε' − jε''); pass :func:`water_permittivity` for
        a frequency-dependent water phase.

    Returns
    -------
    float, complex or ndarray
        √ε = (1 − φ)√ε_s + θ√ε_w + (φ − θ)√ε_air, squared; broadcast over inputs.

    Notes
    -----
    Travel-time (refractive index) averaging of the three phases.

    References
    ----------
    Birchak, J. R., Gardner, C. G., Hipp, J. E., & Victor, J. M. (1974). Proc. IEEE,
    62(1), 93–98. doi:10.1109/PROC.1974.9388
    Roth, K., Schulin, R., Flühler, H., & Attinger, W. (1990). Calibration of time
    domain reflectometry for water content measurement using a composite dielectric
    approach. Water Resour. Res., 26(10), 2267–2273. doi:10.1029/WR026i010p02267
    """
    return lichtenecker_permittivity(moisture, porosity, eps_solid, eps_water, eps_air,
                                     exponent=0.5)


def porosity_from_density(bulk_density, particle_density=2660.0):
    """Porosity from dry bulk density and particle (grain) density.

    Parameters
    ----------
    bulk_density : float or array_like
        Dry bulk density ρ_b in kg/m³, 0 < ρ_b < ρ_s.
    particle_density : float or array_like
        Particle density ρ_s in kg/m³, > 0 (about 2650–2660 for quartz-rich soils).

    Returns
    -------
    float or ndarray
        φ = 1 − ρ_b/ρ_s.

    Notes
    -----
    Definition of porosity for a dry soil of solids and voids.

    References
    ----------
    Hillel, D. (1998). Environmental Soil Physics. Academic Press. (Ch. 2)
    """
    rb = check_density("bulk_density", bulk_density, *BULK_DENSITY_RANGE)
    rs = check_density("particle_density", particle_density, *PARTICLE_DENSITY_RANGE)
    bad = rb >= rs
    if np.any(bad):
        b1, s1 = np.broadcast_arrays(rb, rs)
        i = np.flatnonzero(np.broadcast_to(bad, b1.shape))[0]
        raise InputError(
            f"bulk_density must be < particle_density, got {b1.ravel()[i]:.6g} kg/m³ with "
            f"particle_density {s1.ravel()[i]:.6g} kg/m³; allowed range 0 < bulk_density < particle_density"
        )
    return _out(1.0 - rb / rs)
