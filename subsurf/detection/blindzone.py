"""Blind zone (minimum detectable depth) and the near-field limit of the far-field budget.

A ground-coupled antenna records the direct waves first: the air wave and the ground
wave travelling straight from transmitter to receiver, each lasting about one pulse
length τ.  An echo that arrives before the ground wave has died away is buried in it.
With transmitter–receiver separation x and velocity v the echo from depth d arrives at
t(d) = 2·√(d² + (x/2)²)/v and the ground wave ends at x/v + τ, so a target is resolved
from the direct wave when t(d) ≥ x/v + τ:

    d_min = ½·√(v·τ·(2x + v·τ))            (x = 0: d_min = v·τ/2).

The far-field budget (spreading as a power of depth) also needs the target away from the
antenna; :data:`NEAR_FIELD_WAVELENGTHS` is where the planar budget departs by 2 dB from a
full-wave layered-earth solution (empymod, tests/detection/test_fullwave.py).
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError, check_nonnegative, check_positive

__all__ = [
    "PULSE_CYCLES",
    "NEAR_FIELD_WAVELENGTHS",
    "default_pulse_length",
    "min_detectable_depth",
    "near_field_depth",
]

#: Pulse length in periods of the centre frequency when a catalogue gives none: an
#: impulse GPR wavelet (about a Ricker wavelet) spans about 1.5 cycles from onset to the
#: end of its main lobes (common practice; Annan 2009, ch. 1, "pulse width ≈ 1/bandwidth"
#: for a fractional bandwidth of about one gives 1–1.5 periods).
PULSE_CYCLES = 1.5

#: Depth, in wavelengths in the ground, below which the far-field budget is flagged as near
#: field.  Set from the full-wave comparison in tests/detection/test_fullwave.py (empymod:
#: horizontal electric dipole just below the surface of a lossy half-space, ε' 9, over a
#: reflector): the planar budget's absolute return is within 1 dB of the full-wave one from
#: 0.75 λ to 8 λ (−0.3 to −1.0 dB), −2.0 dB at 0.5 λ, −2.6 dB at 0.3 λ, −4.2 dB at 0.2 λ and
#: −6.6 dB at 0.1 λ; so 0.5 λ, where the departure reaches 2 dB.
NEAR_FIELD_WAVELENGTHS = 0.5


def default_pulse_length(centre_freq_hz):
    """Pulse length (s) of an antenna with no catalogue figure: :data:`PULSE_CYCLES`/f_c."""
    return PULSE_CYCLES / check_positive("centre_freq_hz", centre_freq_hz, unit="Hz")


def min_detectable_depth(velocity, pulse_length_s, separation_m=0.0):
    """Shallowest depth (m) whose echo arrives after the direct ground wave has ended.

    Parameters
    ----------
    velocity : array_like
        Velocity in the ground (m/s).
    pulse_length_s : array_like
        Duration of the transmitted pulse (s, > 0).
    separation_m : array_like
        Transmitter–receiver separation (m, ≥ 0).

    Returns
    -------
    ndarray
        d_min = ½·√(vτ(2x + vτ)), broadcast.

    Notes
    -----
    Two-way time to depth d with offset x, t = 2√(d² + x²/4)/v (as in
    :func:`subsurf.propagation.time_from_depth`); the ground wave arrives at x/v
    (Annan 2009, ch. 1: air and ground waves of a bistatic pair) and lasts τ.

    References
    ----------
    Annan, A. P. (2009). Electromagnetic principles of ground penetrating radar. In
    Jol, H. M. (ed.), *Ground Penetrating Radar: Theory and Applications*, Elsevier, ch. 1.
    """
    v = check_positive("velocity", velocity, unit="m/s")
    tau = np.asarray(pulse_length_s, dtype=float)
    if not np.all(np.isfinite(tau)) or np.any(tau <= 0):
        raise InputError(f"pulse length must be > 0 s, got {tau.ravel()[~(tau.ravel() > 0)][0]:g}")
    x = check_nonnegative("separation_m", separation_m, unit="m")
    vt = v * tau
    return 0.5 * np.sqrt(vt * (2.0 * x + vt))


def near_field_depth(wavelength_m):
    """Depth (m) above which the target is in the antenna's near field: NEAR_FIELD_WAVELENGTHS·λ."""
    return NEAR_FIELD_WAVELENGTHS * np.asarray(wavelength_m, dtype=float)
