"""Velocity from a calibration target at a known depth (exposed pipe, borehole, trial hole).

Physics module: SI units, no files, no printing.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import constants

from ..errors import InputError, ModelRangeError, check_finite, check_nonnegative, check_positive

__all__ = ["CalibrationVelocity", "velocity_from_calibration"]

_C = constants.c


@dataclass(frozen=True)
class CalibrationVelocity:
    """Velocity from a target at a known depth (SI units)."""

    velocity: np.ndarray
    velocity_se: np.ndarray


def velocity_from_calibration(twt_s, depth_m, *, offset_m=0.0, twt_sd_s=0.0, depth_sd_m=0.0,
                              time_zero_s=0.0, time_zero_sd_s=0.0) -> CalibrationVelocity:
    """Average velocity above a target of known depth (exposed pipe, borehole, trial hole).

    Parameters
    ----------
    twt_s : float or array_like
        Two-way time of the target's reflection, s (before subtracting ``time_zero_s``).
    depth_m : float or array_like
        Known depth of the reflecting surface, m.
    offset_m : float, optional
        Antenna separation, m.
    twt_sd_s, depth_sd_m, time_zero_s, time_zero_sd_s : float, optional
        Pick uncertainty, depth uncertainty, time zero and its uncertainty.

    Returns
    -------
    CalibrationVelocity
        ``velocity`` and its first-order standard error, broadcast over the inputs.

    Notes
    -----
    v = 2√(d² + (x/2)²)/τ with τ = t − t_zero;
    σ_v² = (∂v/∂d·σ_d)² + (v/τ)²(σ_t² + σ_tz²) with ∂v/∂d = 2d/(τ√(d² + x²/4)).
    """
    t = check_finite("twt_s", twt_s)
    d = check_positive("depth_m", depth_m, unit="m")
    x = check_nonnegative("offset_m", offset_m, unit="m")
    tz = check_finite("time_zero_s", time_zero_s)
    tau = t - tz
    if np.any(tau <= 0):
        raise InputError(f"twt_s must be after time zero ({float(np.max(tz)):.6g} s), got {float(np.min(t)):.6g} s")
    slant = np.sqrt(d**2 + (x / 2) ** 2)
    v = 2 * slant / tau
    if np.any(v > _C * (1 + 1e-9)):
        raise ModelRangeError(f"depth and time imply a velocity of {float(np.max(v)) * 1e-9:.4g} m/ns, "
                              "faster than light in air; check the depth, time and time zero")
    dv_dd = 2 * d / (tau * slant)
    sd_t = check_nonnegative("twt_sd_s", twt_sd_s, unit="s")
    sd_d = check_nonnegative("depth_sd_m", depth_sd_m, unit="m")
    sd_tz = check_nonnegative("time_zero_sd_s", time_zero_sd_s, unit="s")
    se = np.sqrt((dv_dd * sd_d) ** 2 + (v / tau) ** 2 * (sd_t**2 + sd_tz**2))
    return CalibrationVelocity(velocity=v, velocity_se=se)
