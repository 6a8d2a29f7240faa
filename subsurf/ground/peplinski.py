"""Semi-empirical soil dielectric model of Peplinski, Ulaby & Dobson (1995).

Corrected form of the Dobson et al. (1985) model for 0.3–1.3 GHz.  Its imaginary
part includes an effective-conductivity loss, so a caller must not add a DC
conductivity on top of it (see :class:`subsurf.soil.Soil`).
"""

from __future__ import annotations

from math import pi

import numpy as np

from .._codata import epsilon_0  # scipy.constants value without its import cost (start-up)
from ..errors import InputError, check_broadcast, check_positive, check_range
from ..quantities import accepts_quantities
from ._validity import BULK_DENSITY_RANGE, PARTICLE_DENSITY_RANGE, check_density, warn_validity
from .water import _debye, _relaxation_temperature

__all__ = ["peplinski_permittivity", "peplinski_effective_conductivity", "PEPLINSKI_VALIDITY"]

_ALPHA = 0.65
_MODEL = "Peplinski et al. (1995) soil model"

#: Published validity of the model: frequency (Hz) from the paper's title range; moisture,
#: sand and clay spans of the measured soils are approximate (from memory).
PEPLINSKI_VALIDITY = {
    "freq_hz": (0.3e9, 1.3e9, "Hz"),
    "moisture": (0.01, 0.5, "m³/m³"),
    "sand": (0.05, 0.95, ""),
    "clay": (0.02, 0.6, ""),
    "temp_c": (0.0, 40.0, "°C"),
}


def _check_soil(moisture, sand, clay, bulk_density, particle_density):
    mv = check_range("moisture", moisture, 0.0, 1.0, unit="m³/m³")
    s = check_range("sand", sand, 0.0, 1.0, unit="(mass fraction)")
    c = check_range("clay", clay, 0.0, 1.0, unit="(mass fraction)")
    check_broadcast(moisture=mv, sand=s, clay=c, bulk_density=bulk_density, particle_density=particle_density)
    total = s + c
    if np.any(total > 1.0 + 1e-12):
        raise InputError(
            f"sand + clay must be <= 1, got {total[total > 1.0 + 1e-12].ravel()[0]:.6g}; "
            "allowed range 0 to 1 (mass fractions of the mineral solids)")
    rb = check_density("bulk_density", bulk_density, *BULK_DENSITY_RANGE)
    rs = check_density("particle_density", particle_density, *PARTICLE_DENSITY_RANGE)
    if np.any(rb >= rs):
        b1, s1 = np.broadcast_arrays(rb, rs)
        i = np.flatnonzero(b1 >= s1)[0]
        raise InputError(
            f"bulk_density must be < particle_density, got {b1.ravel()[i]:.6g} kg/m³ with "
            f"particle_density {s1.ravel()[i]:.6g} kg/m³")
    porosity = 1.0 - rb / rs
    if np.any(mv > porosity):
        m1, p1 = np.broadcast_arrays(mv, porosity)
        i = np.flatnonzero(m1 > p1)[0]
        raise InputError(
            f"moisture must be <= porosity 1 - bulk_density/particle_density, got moisture "
            f"{m1.ravel()[i]:.6g} with porosity {p1.ravel()[i]:.6g}; allowed range 0 to porosity")
    return mv, s, c, rb, rs


def peplinski_effective_conductivity(sand, clay, bulk_density=1.5e3):
    """Effective conductivity term of Peplinski et al. (1995) for 0.3–1.3 GHz.

    Parameters
    ----------
    sand, clay : float or array_like
        Mass fractions of the mineral solids, 0–1.
    bulk_density : float or array_like
        Dry bulk density in kg/m³, > 0.

    Returns
    -------
    float or ndarray
        σ_eff = 0.0467 + 0.2204 ρ_b − 0.4111 S + 0.6614 C in S/m (ρ_b in g/cm³),
        clipped at 0 (the regression turns negative for very sandy, loose soils).

    Notes
    -----
    A regression fitted with the permittivity model; it is a loss parameter of that
    model, not a DC conductivity.

    References
    ----------
    Peplinski, N. R., Ulaby, F. T., & Dobson, M. C. (1995). Dielectric properties of
    soils in the 0.3–1.3-GHz range. IEEE Trans. Geosci. Remote Sens., 33(3), 803–807.
    doi:10.1109/36.387598
    """
    s = check_range("sand", sand, 0.0, 1.0)
    c = check_range("clay", clay, 0.0, 1.0)
    rb = check_density("bulk_density", bulk_density, *BULK_DENSITY_RANGE)
    out = np.maximum(0.0467 + 0.2204 * rb / 1000.0 - 0.4111 * s + 0.6614 * c, 0.0)
    return out[()] if out.ndim == 0 else out


@accepts_quantities(
    freq_hz="Hz",
    moisture="dimensionless",
    sand="dimensionless",
    clay="dimensionless",
    bulk_density="kg/m**3",
    particle_density="kg/m**3",
    temp_c="degC",
)
def peplinski_permittivity(freq_hz, moisture, sand, clay, bulk_density=1.5e3,
                           particle_density=2.66e3, temp_c=20.0):
    """Complex relative permittivity of a mineral soil, Peplinski et al. (1995).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, > 0.  Published range 0.3–1.3 GHz; GPR frequencies below
        300 MHz are outside it and the result is an extrapolation (a
        :class:`~subsurf.errors.ModelRangeWarning` says so).
    moisture : float or array_like
        Volumetric water content m_v (m³/m³), 0 <= m_v <= 1 − ρ_b/ρ_s.
    sand, clay : float or array_like
        Mass fractions of the mineral solids, each 0–1, sand + clay <= 1.
    bulk_density : float or array_like
        Dry bulk density ρ_b in kg/m³, 0 < ρ_b < ρ_s.
    particle_density : float or array_like
        Particle density ρ_s in kg/m³.
    temp_c : float or array_like
        Temperature in °C, >= 0 (liquid water), used by the free-water Debye term.

    Returns
    -------
    complex or ndarray of complex
        ε = ε' − jε'' broadcast over all inputs.  ε'' *includes* the model's
        effective-conductivity loss: do not add a DC conductivity on top.
        One warning per call when any input leaves the validity ranges in
        :data:`PEPLINSKI_VALIDITY`.

    Notes
    -----
    With α = 0.65, β' = 1.2748 − 0.519 S − 0.152 C, β'' = 1.33797 − 0.603 S − 0.166 C,
    ε_s = (1.01 + 0.44 ρ_s)² − 0.062 (ρ in g/cm³):

    ε' = 1.15 [1 + (ρ_b/ρ_s)(ε_s^α − 1) + m_v^β' ε'_fw^α − m_v]^(1/α) − 0.68,
    ε'' = [m_v^β'' ε''_fw^α]^(1/α),

    where ε'_fw, ε''_fw are the Debye free-water parts (Klein & Swift 1977, fresh
    water) and ε''_fw also holds σ_eff(ρ_s − ρ_b)/(2π ε₀ f ρ_s m_v) with σ_eff from
    :func:`peplinski_effective_conductivity`.  Dry soil (m_v = 0) gives ε'' = 0.

    References
    ----------
    Peplinski, N. R., Ulaby, F. T., & Dobson, M. C. (1995). Dielectric properties of
    soils in the 0.3–1.3-GHz range. IEEE Trans. Geosci. Remote Sens., 33(3), 803–807.
    doi:10.1109/36.387598
    Dobson, M. C., Ulaby, F. T., Hallikainen, M. T., & El-Rayes, M. A. (1985). Microwave
    dielectric behavior of wet soil — Part II: Dielectric mixing models. IEEE Trans.
    Geosci. Remote Sens., GE-23(1), 35–46. doi:10.1109/TGRS.1985.289498
    """
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    t = _relaxation_temperature(temp_c)
    mv, s, c, rb, rs = _check_soil(moisture, sand, clay, bulk_density, particle_density)
    check_broadcast(freq_hz=f, temp_c=t, moisture=mv, sand=s, clay=c, bulk_density=rb, particle_density=rs)
    v = PEPLINSKI_VALIDITY
    warn_validity(_MODEL, [
        ("freq_hz", f, *v["freq_hz"]),
        ("moisture", mv, *v["moisture"]),
        ("sand", s, *v["sand"]),
        ("clay", c, *v["clay"]),
        ("temp_c", t, *v["temp_c"]),
    ])
    rb_g, rs_g = rb / 1000.0, rs / 1000.0
    beta1 = 1.2748 - 0.519 * s - 0.152 * c
    beta2 = 1.33797 - 0.603 * s - 0.166 * c
    eps_solid = (1.01 + 0.44 * rs_g) ** 2 - 0.062
    sigma_eff = np.maximum(0.0467 + 0.2204 * rb_g - 0.4111 * s + 0.6614 * c, 0.0)
    water = _debye(f, t, 0.0)
    wet = mv > 0
    mv_safe = np.where(wet, mv, 1.0)
    ew1 = water.real
    ew2 = -water.imag + sigma_eff * (rs - rb) / (2.0 * pi * epsilon_0 * f * rs * mv_safe)
    eps1 = 1.15 * (1.0 + (rb / rs) * (eps_solid**_ALPHA - 1.0)
                   + mv**beta1 * ew1**_ALPHA - mv) ** (1.0 / _ALPHA) - 0.68
    eps2 = np.where(wet, (mv_safe**beta2 * ew2**_ALPHA) ** (1.0 / _ALPHA), 0.0)
    out = eps1 - 1j * eps2
    return out[()] if out.ndim == 0 else out
