"""The antenna's transmitted spectrum and the fixed frequencies at which the budget is evaluated.

The power spectrum of an impulse GPR antenna is modelled as

    S(x) = x⁴ · exp(2·(1 − x^(2c))/c),    x = f/f_c,

peaking at the centre frequency f_c (S = 1), rolling off as f⁴ below the band (the
amplitude ∝ f² of a Ricker-like wavelet: a resistively loaded dipole radiates the time
derivative of its drive current, and no DC; common practice for GPR wavelets, e.g.
Irving & Knight 2003) and falling above it with a steepness c chosen so that the full
width at half power is the catalogue bandwidth B.

The budget is evaluated at :data:`BAND_NODES` frequencies per antenna: Gauss–Legendre
nodes in ln f between the points where S is 60 dB (low side) and 40 dB (high side) below
its peak, weights normalised by the whole spectrum.  Measured against a 40 000-point
trapezoid of the same integrand (8 soils from dry sand to wet clay, every bundled antenna,
each at its own maximum depth; tests/detection/test_budget_physics.py): 8 nodes err by up
to 0.83 dB, 10 by 0.37, 12 by 0.097, 14 by 0.04 dB — so 14, the smallest count with a
safe margin under the 0.1 dB target.  Dispersive wet soils need the most nodes.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
from scipy.optimize import brentq

from ..errors import InputError

__all__ = ["BAND_NODES", "LOW_EDGE_DB", "HIGH_EDGE_DB", "spectrum_steepness", "power_spectrum",
           "band_nodes"]

#: Frequencies per antenna at which the band-integrated budget is evaluated.
BAND_NODES = 14
#: The band is integrated from where the power spectrum is this far below its peak (dB) ...
LOW_EDGE_DB = 60.0
#: ... to where it is this far below on the high side (dB).
HIGH_EDGE_DB = 40.0
_ROLL_OFF = 2.0  # amplitude ∝ f^2 below the band


def _log_power(x, c):
    x = np.asarray(x, dtype=float)
    with np.errstate(over="ignore", divide="ignore"):
        return 2.0 * _ROLL_OFF * np.log(x) + _ROLL_OFF * (1.0 - np.exp(2.0 * c * np.log(x))) / c


def _total_power(c: float) -> float:
    """∫₀^∞ S(x) dx in closed form.

    S(x) = x⁴·exp(2(1 − x^(2c))/c) (roll-off 2); with u = (2/c)·x^(2c) the integral is
    e^(2/c)·(c/2)^(5/(2c))·Γ(5/(2c))/(2c), evaluated in logarithms (Γ(125) at c = 0.02).
    """
    a = (2.0 * _ROLL_OFF + 1.0) / (2.0 * c)
    log_total = _ROLL_OFF / c + a * math.log(c / _ROLL_OFF) + math.lgamma(a) - math.log(2.0 * c)
    return math.exp(log_total)


def _edges(c, low_db, high_db):
    lo = brentq(lambda x: _log_power(x, c) + low_db * np.log(10.0) / 10.0, 1e-12, 1.0, xtol=1e-14)
    hi = brentq(lambda x: _log_power(x, c) + high_db * np.log(10.0) / 10.0, 1.0, 1e4, xtol=1e-12)
    return lo, hi


@lru_cache(maxsize=256)
def spectrum_steepness(fractional_bandwidth: float) -> float:
    """The c of the spectrum whose full width at half power is ``fractional_bandwidth``·f_c."""
    b = float(fractional_bandwidth)
    if not (np.isfinite(b) and 0.25 <= b <= 2.0):
        raise InputError(f"bandwidth must be between 0.25 and 2 times the centre frequency, got {b:g}×")

    def width(c):
        lo, hi = _edges(c, 10 * np.log10(2.0), 10 * np.log10(2.0))
        return hi - lo - b

    return brentq(width, 0.02, 200.0, xtol=1e-12)


def power_spectrum(freq_hz, centre_freq_hz, bandwidth_hz):
    """Transmitted power spectrum S(f) (peak 1 at f_c); see the module notes."""
    c = spectrum_steepness(float(bandwidth_hz) / float(centre_freq_hz))
    x = np.asarray(freq_hz, dtype=float) / float(centre_freq_hz)
    with np.errstate(divide="ignore"):
        return np.exp(_log_power(x, c))


@lru_cache(maxsize=256)
def _nodes(fractional_bandwidth: float, n: int):
    c = spectrum_steepness(fractional_bandwidth)
    lo, hi = _edges(c, LOW_EDGE_DB, HIGH_EDGE_DB)
    g, gw = np.polynomial.legendre.leggauss(n)
    half = 0.5 * (np.log(hi) - np.log(lo))
    x = np.exp(half * g + 0.5 * (np.log(hi) + np.log(lo)))
    q = half * gw * x * np.exp(_log_power(x, c))  # ∫S(x)dx = ∫S(x)·x d(ln x)
    total = _total_power(c)  # the whole spectrum
    return x, q * x**2 / total


def band_nodes(centre_freq_hz: float, bandwidth_hz: float, *, n: int = BAND_NODES):
    """The fixed frequencies (Hz) of an antenna's band and their energy weights (Σ = 1).

    Returns
    -------
    (freqs_hz, weights) : ndarray, ndarray of shape (n,)
        ``weights`` = quadrature weight × S(f) × (f/f_c)², normalised by ∫S(f)df, so that
        Σ wᵢ·λᵢ² = λ_c² in a non-dispersive ground.

    Notes
    -----
    S(f) is the spectrum a system records from a planar reflector in low-loss ground (what
    a catalogue's centre frequency and bandwidth describe; the antennas' apertures are in
    it).  The budget carries λ(f)² of the receiving aperture explicitly, so the weights take
    it out again, (f/f_c)²: in a lossless, non-dispersive ground the band budget of a planar
    target equals the single-frequency budget at f_c and the received centroid is that of S.
    """
    fc, bw = float(centre_freq_hz), float(bandwidth_hz)
    if not (np.isfinite(fc) and fc > 0 and np.isfinite(bw) and bw > 0):
        raise InputError(f"centre frequency and bandwidth must be > 0 Hz, got {fc:g} and {bw:g}")
    x, w = _nodes(round(bw / fc, 12), int(n))
    return x * fc, w.copy()
