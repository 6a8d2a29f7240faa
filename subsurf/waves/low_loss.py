"""Low-loss approximations of plane-wave attenuation and velocity, never used silently.

They warn with :class:`~subsurf.errors.LowLossApproximationWarning` when the loss tangent
is not small; :func:`subsurf.waves.propagation.wave_properties` gives the exact values.
All functions broadcast over numpy arrays and accept scalars.  Units are SI.
"""

from __future__ import annotations

import warnings

import numpy as np

from .. import _codata as constants
from ..errors import LowLossApproximationWarning, check_nonnegative, check_positive

__all__ = ["low_loss_attenuation", "low_loss_velocity"]

_EPS0 = constants.epsilon_0
_MU0 = constants.mu_0
_C = constants.c


def _warn_if_lossy(eps_r, sigma, freq_hz, limit, stacklevel=3):
    eps = np.asarray(eps_r)
    eps_imag = -np.imag(eps) if np.iscomplexobj(eps) else 0.0
    tan_d = (eps_imag + np.asarray(sigma) / (2 * np.pi * np.asarray(freq_hz) * _EPS0)) / np.real(eps)
    tan_d = np.asarray(tan_d, dtype=float)
    if np.any(tan_d > limit):
        warnings.warn(
            f"low-loss approximation used where the loss tangent reaches {np.max(tan_d):.3g} "
            f"(> {limit:g}); use wave_properties for the exact value",
            LowLossApproximationWarning,
            stacklevel=stacklevel,
        )
    return tan_d


def low_loss_attenuation(eps_real, sigma, freq_hz=None, *, limit: float = 0.1):
    """Low-loss attenuation α ≈ (σ/2)·√(μ₀/(ε₀ε')) in Np/m (frequency independent).

    In dB/m this is the familiar ≈ 1.64·σ[mS/m]/√ε'.  Warns with
    :class:`~subsurf.errors.LowLossApproximationWarning` when ``freq_hz`` is given and
    the loss tangent exceeds ``limit``.

    References
    ----------
    Annan, A. P. (2009). Electromagnetic principles of ground penetrating radar. In
    Jol, H. M. (ed.), *Ground Penetrating Radar: Theory and Applications*, Elsevier.
    """
    eps_real = check_positive("eps_real", eps_real)
    sigma = check_nonnegative("sigma", sigma, unit="S/m")
    if freq_hz is not None:
        _warn_if_lossy(eps_real, sigma, check_positive("freq_hz", freq_hz), limit)
    return 0.5 * sigma * np.sqrt(_MU0 / (_EPS0 * eps_real))


def low_loss_velocity(eps_real):
    """Lossless-limit velocity c/√ε' (m/s)."""
    eps_real = check_positive("eps_real", eps_real)
    return _C / np.sqrt(eps_real)
