"""Band-limited constant-Q description of radar attenuation: Q*, and its relation to ε(f).

Turner & Siggins (1994) observed that over the band of a radar pulse the attenuation of
many geological materials is close to linear in frequency, α(f) ≈ α₀ + π f/(Q* v), and
named Q* the parameter of the slope.  Bradford (2007) derived Q* of any permittivity
model from the first-order Taylor expansion of α(f):

    1/Q*(f) = (v/π) · dα/df.

This module gives the attenuation of a given Q* (:func:`attenuation_from_q_star`) and
the exact dielectric Q of Kjartansson's constant-Q permittivity that has a requested Q*
(:func:`q_from_q_star`, :func:`q_star_from_q`).  Q* of any ground model from its α(f),
and the ground described by attenuations measured at two frequencies, need the wave
propagation and live in :mod:`subsurf.waves.attenuation`.

References
----------
Turner, G., & Siggins, A. F. (1994). Constant Q attenuation of subsurface radar pulses.
Geophysics, 59(8), 1192–1200. doi:10.1190/1.1443677
Bradford, J. H. (2007). Frequency-dependent attenuation analysis of ground-penetrating
radar data. Geophysics, 72(3), J7–J16. doi:10.1190/1.2710183
Kjartansson, E. (1979). Constant Q-wave propagation and attenuation. J. Geophys. Res.,
84(B9), 4737–4748. doi:10.1029/JB084iB09p04737
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError, check_nonnegative, check_positive

__all__ = ["attenuation_from_q_star", "q_from_q_star", "q_star_from_q"]


def _out(x):
    return x[()] if isinstance(x, np.ndarray) and x.ndim == 0 else x


def attenuation_from_q_star(freq_hz, q_star_value, velocity, *, alpha0=0.0):
    """Attenuation α(f) = α₀ + π f/(Q* v) in Np/m (Turner & Siggins 1994).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, > 0.
    q_star_value : float or array_like
        Q*, > 0.
    velocity : float or array_like
        Phase velocity in m/s, > 0.
    alpha0 : float or array_like
        Intercept in Np/m, >= 0.

    Returns
    -------
    float or ndarray
        α in Np/m, broadcast over the inputs.
    """
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    q = check_positive("q_star", q_star_value)
    v = check_positive("velocity", velocity, unit="m/s")
    a0 = check_nonnegative("alpha0", alpha0, unit="Np/m")
    return _out(a0 + np.pi * f / (q * v))


def q_star_from_q(q):
    """Q* of Kjartansson's constant-Q permittivity of dielectric Q: 1/Q* = 2(1 − γ)·tan(πγ/2), γ = arctan(1/Q)/π.

    Notes
    -----
    ε = |ε|e^(−jπγ) with |ε| ∝ f^(−2γ) gives α = ω√(μ₀ε₀|ε|)·sin(πγ/2) ∝ f^(1−γ)
    and β = ω√(μ₀ε₀|ε|)·cos(πγ/2); then (v/π)dα/df = 2(1 − γ)tan(πγ/2), with no
    conduction.  For large Q, Q* → Q.
    """
    qq = check_positive("q", q)
    g = np.arctan(1.0 / qq) / np.pi
    return _out(1.0 / (2.0 * (1.0 - g) * np.tan(0.5 * np.pi * g)))


def q_from_q_star(q_star_value):
    """Dielectric Q = ε'/ε'' of the constant-Q permittivity whose Q* (no conduction) is ``q_star_value``.

    Inverts :func:`q_star_from_q`, which increases monotonically from 0 to 1 as γ goes
    from 0 to 1/2, by bracketing root finding (scipy brentq); so Q* must be > 1 (no
    passive constant-Q permittivity is lossier).
    """
    qs = check_positive("q_star", q_star_value)
    if np.any(qs <= 1.0):
        raise InputError(f"q_star must be > 1 (no constant-Q ground is lossier), got "
                         f"{qs[qs <= 1.0].ravel()[0]:.6g}")

    from scipy import optimize

    def one(target):
        fn = lambda g: 2.0 * (1.0 - g) * np.tan(0.5 * np.pi * g) - 1.0 / target  # noqa: E731
        g = optimize.brentq(fn, 1e-15, 0.5 - 1e-12, xtol=1e-15, rtol=1e-14)
        return 1.0 / np.tan(np.pi * g)

    out = np.vectorize(one, otypes=[float])(qs)
    return _out(out)
