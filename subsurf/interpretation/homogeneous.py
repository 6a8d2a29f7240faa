"""Time zero and time → depth in homogeneous ground with a first-order uncertainty.

Homogeneous ground uses :func:`subsurf.propagation.depth_from_time`; the layered case
is in :mod:`.layers`.  Physics module: SI units, no files, no printing.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np
from scipy import constants

from ..errors import InputError, check_finite, check_nonnegative, check_positive
from ..quantities import accepts_quantities
from ..waves.propagation import depth_from_time

__all__ = ["DepthEstimate", "time_zero_from_direct_wave", "apply_time_zero", "depth_with_uncertainty"]

_C = constants.c


# --- time zero ---------------------------------------------------------------------

def time_zero_from_direct_wave(t_direct_s, offset_m, *, wave: Literal["air", "ground"] = "air",
                               ground_velocity=None):
    """Time zero (s) from the picked first break of the direct wave.

    Parameters
    ----------
    t_direct_s : float or array_like
        Picked arrival time of the direct wave on the record, s.
    offset_m : float or array_like
        Antenna separation, m.
    wave : {"air", "ground"}
        Which direct wave was picked: through the air (speed c) or along the ground
        surface (speed ``ground_velocity``).
    ground_velocity : float, optional
        Velocity of the near-surface ground, m/s (needed for ``wave="ground"``).

    Returns
    -------
    ndarray
        Record time at which the pulse left the transmitter, s.

    Notes
    -----
    The direct air wave arrives x/c after emission, the direct ground wave x/v:
    t_zero = t_direct − x/c (or − x/v).

    References
    ----------
    Yelf, R. (2004). Where is true time zero? *Proc. 10th Int. Conf. on Ground
    Penetrating Radar*, 279–282. doi:10.1109/ICGPR.2004.179873
    """
    t = check_finite("t_direct_s", t_direct_s)
    x = check_nonnegative("offset_m", offset_m, unit="m")
    if wave == "air":
        speed = _C
    elif wave == "ground":
        if ground_velocity is None:
            raise InputError("ground_velocity is required with wave='ground' (m/s)")
        speed = check_positive("ground_velocity", ground_velocity, unit="m/s")
    else:
        raise InputError(f"wave must be 'air' or 'ground', got {wave!r}")
    return t - x / speed


def apply_time_zero(twt_s, time_zero_s=0.0, *, name: str = "twt_s"):
    """Travel time after time zero, τ = t − t_zero (s); raises if any τ < 0."""
    t = check_finite(name, twt_s)
    tz = check_finite("time_zero_s", time_zero_s)
    tau = t - tz
    if np.any(tau < 0):
        i = np.flatnonzero(np.ravel(tau < 0))[0]
        raise InputError(f"{name} = {np.ravel(np.broadcast_to(t, tau.shape))[i]:.6g} s is before time zero "
                         f"({float(np.ravel(np.broadcast_to(tz, tau.shape))[i]):.6g} s)")
    return tau


# --- homogeneous ground with uncertainty ---------------------------------------------

@dataclass(frozen=True)
class DepthEstimate:
    """Depth and its standard deviation (m), with the parts that make it up."""

    depth: np.ndarray
    depth_sd: np.ndarray
    sd_from_velocity: np.ndarray
    sd_from_pick: np.ndarray
    sd_from_time_zero: np.ndarray


@accepts_quantities(
    twt_s="s",
    velocity="m/s",
    offset_m="m",
    time_zero_s="s",
    velocity_se="m/s",
    twt_sd_s="s",
    time_zero_sd_s="s",
)
def depth_with_uncertainty(twt_s, velocity, *, offset_m=0.0, time_zero_s=0.0, velocity_se=0.0,
                           twt_sd_s=0.0, time_zero_sd_s=0.0) -> DepthEstimate:
    """Depth in homogeneous ground with a first-order (linearised) standard deviation.

    Parameters
    ----------
    twt_s : float or array_like
        Picked two-way times, s (before time-zero correction).
    velocity : float or array_like
        Ground velocity, m/s.
    offset_m : float, optional
        Antenna separation, m.
    time_zero_s : float, optional
        Time zero, s (subtracted from ``twt_s``).
    velocity_se, twt_sd_s, time_zero_sd_s : float or array_like, optional
        Standard errors of the velocity, the pick and time zero (independent).

    Returns
    -------
    DepthEstimate

    Notes
    -----
    d = √((vτ/2)² − (x/2)²), τ = t − t_zero.  ∂d/∂v = vτ²/(4d), ∂d/∂τ = v²τ/(4d);
    σ_d² = (∂d/∂v)²σ_v² + (∂d/∂τ)²(σ_t² + σ_tz²).  At d = 0 (x = vτ) the derivative is
    infinite; the first-order value is reported as infinite there.

    References
    ----------
    JCGM 100:2008, *Guide to the expression of uncertainty in measurement* (GUM), §5.1.
    """
    tau = apply_time_zero(twt_s, time_zero_s)
    v = check_positive("velocity", velocity, unit="m/s")
    x = check_nonnegative("offset_m", offset_m, unit="m")
    d = depth_from_time(tau, v, offset_m=x)
    sv = check_nonnegative("velocity_se", velocity_se, unit="m/s")
    st = check_nonnegative("twt_sd_s", twt_sd_s, unit="s")
    stz = check_nonnegative("time_zero_sd_s", time_zero_sd_s, unit="s")
    with np.errstate(divide="ignore", invalid="ignore"):
        dd_dv = np.where(d > 0, v * tau**2 / (4 * d), np.inf)
        dd_dt = np.where(d > 0, v**2 * tau / (4 * d), np.inf)
        a = np.where(sv > 0, dd_dv * sv, 0.0)
        b = np.where(st > 0, dd_dt * st, 0.0)
        c = np.where(stz > 0, dd_dt * stz, 0.0)
    total = np.sqrt(a**2 + b**2 + c**2)
    return DepthEstimate(depth=d, depth_sd=total, sd_from_velocity=a, sd_from_pick=b, sd_from_time_zero=c)
