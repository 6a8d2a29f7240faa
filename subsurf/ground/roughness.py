"""Coherent reflection and transmission of a rough interface (Rayleigh / Ament factor).

A surface whose height h about its mean plane is Gaussian with rms σ_h sends part of the
reflected energy out of the specular direction.  The coherent (specular) reflected
field is the smooth-interface field times the characteristic function of the phase
2 k₁ h cos θ:

    ρ_R = ⟨exp(j 2 k₁ h cos θ)⟩ = exp(−2 (k₁ σ_h cos θ)²)         (amplitude),
    ρ_R² = exp(−(2 k₁ σ_h cos θ)²) = exp(−g)                     (power),

with k₁ = 2π f √ε'₁ / c the wavenumber of the medium the wave comes from (air for the
ground surface, the ground for a buried target) and g the Rayleigh roughness parameter.
The coherent field transmitted through the interface (Kirchhoff approximation) carries
the phase (k₁ cos θ₁ − k₂ cos θ₂) h instead, so

    ρ_T = exp(−½ ((k₁ cos θ₁ − k₂ cos θ₂) σ_h)²)                 (amplitude).

Rayleigh's criterion (smooth when σ_h < λ/(8 cos θ)) corresponds to g < π²/4.

References
----------
Ament, W. S. (1953). Toward a theory of reflection by a rough surface. Proc. IRE, 41(1),
142–146. doi:10.1109/JRPROC.1953.274195
Beckmann, P., & Spizzichino, A. (1963). The Scattering of Electromagnetic Waves from
Rough Surfaces. Pergamon (coherent reflection of a Gaussian surface).
Ulaby, F. T., Moore, R. K., & Fung, A. K. (1982). Microwave Remote Sensing, Vol. II.
Addison-Wesley (Kirchhoff coherent transmission; from memory).
"""

from __future__ import annotations

import numpy as np

from .. import _codata as constants  # scipy.constants values without its import cost (start-up)
from ..errors import check_nonnegative, check_positive, check_range

__all__ = ["roughness_reflection_factor", "roughness_transmission_factor", "SURFACE_ROUGHNESS_M"]

#: Default rms height of the ground surface, m: 1 cm, a graded or mown surface
#: (common practice; agricultural fields span about 0.5–4 cm, Ulaby et al. 1982, from memory).
SURFACE_ROUGHNESS_M = 0.01


def _out(x):
    return x[()] if isinstance(x, np.ndarray) and x.ndim == 0 else x


def _k(freq_hz, eps):
    e = np.asarray(eps)
    e = check_range("eps", e.real if np.iscomplexobj(e) else e, 1.0, 1e4)
    return 2.0 * np.pi * freq_hz * np.sqrt(e) / constants.c


def roughness_reflection_factor(freq_hz, rms_height_m, *, eps_incident=1.0, incidence_angle_rad=0.0,
                                power: bool = False):
    """Coherent-reflection reduction factor of a Gaussian rough interface (Ament 1953).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, > 0.
    rms_height_m : float or array_like
        rms height σ_h of the interface in m, >= 0 (0: smooth, factor 1).
    eps_incident : float, complex or array_like
        Relative permittivity of the medium the wave arrives from (its real part used);
        1 for the ground surface seen from the air, the ground's ε for a buried target.
    incidence_angle_rad : float or array_like
        Angle from the normal in that medium, 0 <= θ < π/2.
    power : bool
        False (default): amplitude factor exp(−2(kσ_h cos θ)²), which multiplies a
        reflection coefficient R; True: power factor exp(−(2kσ_h cos θ)²), which
        multiplies |R|².

    Returns
    -------
    float or ndarray
        Factor in (0, 1], broadcast over the inputs; decreasing with frequency and σ_h.
    """
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    s = check_nonnegative("rms_height_m", rms_height_m, unit="m")
    th = check_range("incidence_angle_rad", incidence_angle_rad, 0.0, 0.5 * np.pi)
    g = (2.0 * _k(f, eps_incident) * s * np.cos(th)) ** 2
    return _out(np.exp(-g) if power else np.exp(-0.5 * g))


def roughness_transmission_factor(freq_hz, rms_height_m, *, eps_incident=1.0, eps_transmitted,
                                  incidence_angle_rad=0.0, power: bool = False):
    """Coherent-transmission reduction factor of a Gaussian rough interface (Kirchhoff approximation).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, > 0.
    rms_height_m : float or array_like
        rms height σ_h in m, >= 0.
    eps_incident, eps_transmitted : float, complex or array_like
        Relative permittivities of the two media (real parts used).
    incidence_angle_rad : float or array_like
        Angle of incidence from the normal, 0 <= θ₁ < π/2; θ₂ follows from Snell's law.
    power : bool
        Amplitude factor (default) or its square.

    Returns
    -------
    float or ndarray
        exp(−½((k₁cos θ₁ − k₂cos θ₂)σ_h)²) (amplitude) in (0, 1].
    """
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    s = check_nonnegative("rms_height_m", rms_height_m, unit="m")
    th = check_range("incidence_angle_rad", incidence_angle_rad, 0.0, 0.5 * np.pi)
    k1 = _k(f, eps_incident)
    k2 = _k(f, eps_transmitted)
    if np.ndim(th) == 0 and th == 0.0:  # normal incidence (the budget's): cos θ₂ = 1, the same dq without Snell
        dq = k1 - k2
    else:
        sin2 = np.clip(k1 * np.sin(th) / k2, 0.0, 1.0)
        dq = k1 * np.cos(th) - k2 * np.sqrt(1.0 - sin2**2)
    g = (dq * s) ** 2
    return _out(np.exp(-g) if power else np.exp(-0.5 * g))
