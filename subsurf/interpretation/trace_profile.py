"""A recorded test profile (traces × samples) and the measurements on its envelope.

The pieces of a site calibration that look at amplitude only: the Hilbert envelope
averaged over traces, time zero from the direct wave, the noise floor and the observed
penetration.  Files are read in :mod:`subsurf.io.profiles`; everything here works on
arrays, SI units (s, m), vectorised over traces.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

import numpy as np
from scipy import constants

from ..errors import InputError

__all__ = [
    "TraceProfile",
    "envelope_power",
    "smooth",
    "TimeZero",
    "pick_time_zero",
    "NoiseFloor",
    "noise_floor",
    "crossing_time",
]

#: Fewest samples a trace may have for a calibration (a few wavelets and a noise window).
MIN_SAMPLES = 64
#: Fewest samples a noise window may hold.
MIN_NOISE_SAMPLES = 16


@dataclass(frozen=True)
class TraceProfile:
    """A test profile: equal-length traces on one time axis.

    Attributes
    ----------
    amplitude : ndarray, shape (n_traces, n_samples)
        Recorded amplitudes (any linear unit; only ratios are used).
    sample_interval_s : float
        Time between samples (s, > 0).
    first_sample_s : float
        Time of the first sample on the record's clock (s); time zero is measured on it.
    distance_m : ndarray or None, shape (n_traces,)
        Position of each trace along the line (m), when known.
    source : str
        Where the traces came from (file name), for messages.
    stacks : int or None
        Traces stacked per recorded trace, when the file says.
    dropped : dict
        Traces left out when reading and why (e.g. ``{"dead (header code 2)": 3}``).
    """

    amplitude: np.ndarray
    sample_interval_s: float
    first_sample_s: float = 0.0
    distance_m: np.ndarray | None = None
    source: str = ""
    stacks: int | None = None
    dropped: dict = field(default_factory=dict)

    def __post_init__(self):
        a = np.asarray(self.amplitude)
        where = f"{self.source}: " if self.source else ""
        if a.ndim != 2:
            raise InputError(f"{where}a profile is a 2-D array (traces × samples), got shape {a.shape}")
        if a.shape[0] < 1:
            raise InputError(f"{where}the profile holds no traces")
        if a.shape[1] < MIN_SAMPLES:
            raise InputError(f"{where}traces have {a.shape[1]} samples; a calibration needs at least "
                             f"{MIN_SAMPLES} (the record must reach past the penetration into the noise)")
        if not np.issubdtype(a.dtype, np.number) or np.iscomplexobj(a):
            raise InputError(f"{where}amplitudes must be real numbers, got dtype {a.dtype}")
        if not np.all(np.isfinite(a)):
            bad = np.argwhere(~np.isfinite(a))[0]
            raise InputError(f"{where}trace {bad[0] + 1}, sample {bad[1] + 1} is not a finite number")
        zero = ~np.any(a != 0, axis=1)
        if np.any(zero):
            k = np.flatnonzero(zero)
            raise InputError(f"{where}{k.size} trace(s) are all zeros (first: trace {k[0] + 1}); remove them "
                             "or flag them dead (SEG-Y trace identification code 2)")
        dt = self.sample_interval_s
        if not (isinstance(dt, (int, float, np.floating)) and np.isfinite(dt) and dt > 0):
            raise InputError(f"{where}the sample interval must be a number > 0 s, got {dt!r}")
        if not np.isfinite(self.first_sample_s):
            raise InputError(f"{where}the time of the first sample must be finite, got {self.first_sample_s!r}")
        if self.distance_m is not None and np.shape(self.distance_m) != (a.shape[0],):
            raise InputError(f"{where}distance_m needs one value per trace ({a.shape[0]}), "
                             f"got shape {np.shape(self.distance_m)}")

    @property
    def n_traces(self) -> int:
        return int(np.shape(self.amplitude)[0])

    @property
    def n_samples(self) -> int:
        return int(np.shape(self.amplitude)[1])

    @property
    def twt_s(self) -> np.ndarray:
        """Time of every sample on the record's clock (s), shape (n_samples,)."""
        return self.first_sample_s + self.sample_interval_s * np.arange(self.n_samples)


def envelope_power(amplitude) -> np.ndarray:
    """Squared Hilbert envelope |s + j·H[s]|² of each trace, after removing its mean.

    Parameters
    ----------
    amplitude : array_like, shape (..., n_samples)

    Returns
    -------
    ndarray, same shape (float64)

    Notes
    -----
    The analytic signal a(t) = s(t) + j·H[s](t) (Gabor 1946) has |a| the instantaneous
    amplitude; for zero-mean noise of variance σ², E|a|² = 2σ² whatever its spectrum, so
    power-averaging the envelope over traces keeps signal and noise additive:
    E|a|² = S² + 2σ².  Computed by :func:`scipy.signal.hilbert` (FFT along the last axis, zero
    padded to twice the trace length).

    References
    ----------
    Gabor, D. (1946). Theory of communication. J. IEE 93(26), 429–457.
    doi:10.1049/ji-3-2.1946.0074
    """
    from scipy.fft import next_fast_len
    from scipy.signal import hilbert

    s = np.asarray(amplitude, dtype=float)
    s = s - s.mean(axis=-1, keepdims=True)
    n = s.shape[-1]
    # zero padding to twice the length: without it the FFT's circular wrap leaks the strong
    # direct wave at the start of the record into the envelope of its last samples
    a = hilbert(s, N=next_fast_len(2 * n), axis=-1)[..., :n]
    return a.real**2 + a.imag**2


def smooth(values, n_samples: int) -> np.ndarray:
    """Running mean over ``n_samples`` (odd, centred; edges use the nearest values)."""
    from scipy.ndimage import uniform_filter1d

    n = max(1, int(n_samples) | 1)
    return uniform_filter1d(np.asarray(values, dtype=float), size=n, axis=-1, mode="nearest")


@dataclass(frozen=True)
class TimeZero:
    """Time zero (s, on the record's clock), its standard error and how it was found."""

    time_s: float
    se_s: float
    method: Literal["given", "direct wave"]
    direct_wave_s: float | None = None  # time of the direct-wave envelope peak


def _parabolic_peak(y, k):
    """Sub-sample position of the maximum at index k (three-point parabola), per row."""
    n = y.shape[-1]
    k = np.clip(k, 1, n - 2)
    rows = np.arange(y.shape[0])
    ym, y0, yp = y[rows, k - 1], y[rows, k], y[rows, k + 1]
    den = ym - 2.0 * y0 + yp
    with np.errstate(divide="ignore", invalid="ignore"):
        shift = np.where(den < 0, 0.5 * (ym - yp) / den, 0.0)
    return k + np.clip(shift, -0.5, 0.5)


def pick_time_zero(power, sample_interval_s: float, first_sample_s: float, *, separation_m: float,
                   search_to_s: float | None = None) -> TimeZero:
    """Time zero from the direct (air) wave: its envelope peak less the air travel time.

    Parameters
    ----------
    power : ndarray, shape (n_traces, n_samples)
        Envelope power of every trace (:func:`envelope_power`).
    sample_interval_s, first_sample_s : float
        Time axis of the record (s).
    separation_m : float
        Transmitter–receiver separation (m); the air wave crosses it at c.
    search_to_s : float or None
        Look for the direct wave before this time (default: the first third of the record).

    Returns
    -------
    TimeZero
        ``time_s`` = t_peak − x/c, with t_peak the trace-mean of each trace's peak time
        (three-point parabolic refinement); ``se_s`` combines the spread of the per-trace
        peaks (standard error of their mean) with the sampling, dt/√12.

    Notes
    -----
    Reflections are timed by the same envelope peak, so the wavelet's own delay cancels
    in the difference (common practice: time zero at the first arrival, corrected by
    x/c for the air path between the antennas; Yelf 2004).

    References
    ----------
    Yelf, R. (2004). Where is true time zero? Proc. 10th Int. Conf. on Ground Penetrating
    Radar, Delft, 279–282.
    """
    p = np.asarray(power, dtype=float)
    n = p.shape[-1]
    stop = n // 3 if search_to_s is None else int(np.ceil((search_to_s - first_sample_s) / sample_interval_s))
    if stop < 3:
        raise InputError("the direct-wave search window holds fewer than 3 samples; give --time-zero")
    stop = min(stop, n)
    k = np.argmax(p[:, :stop], axis=1)
    if np.all(k == 0):
        raise InputError("the envelope is largest at the first sample: the direct wave is cut off at the "
                         "start of the record; give the time zero explicitly")
    peaks = first_sample_s + sample_interval_s * _parabolic_peak(p[:, :stop], k)
    t_peak = float(peaks.mean())
    spread = float(peaks.std(ddof=1) / np.sqrt(peaks.size)) if peaks.size > 1 else 0.0
    se = float(np.hypot(spread, sample_interval_s / np.sqrt(12.0)))
    return TimeZero(t_peak - separation_m / constants.c, se, "direct wave", t_peak)


@dataclass(frozen=True)
class NoiseFloor:
    """Noise floor of the trace-averaged envelope power.

    ``power`` in the data's amplitude unit squared; ``db`` = 10·log10(power);
    ``se_db`` its standard error in dB; ``start_s``/``stop_s`` the window on the record clock.
    """

    power: float
    se_power: float
    window: Literal["late", "pre"]
    start_s: float
    stop_s: float
    n_samples: int
    trend_db: float  # change of the mean envelope power across the window (dB), ~0 for pure noise

    @property
    def db(self) -> float:
        return float(10.0 * np.log10(self.power))

    @property
    def se_db(self) -> float:
        return float(10.0 / np.log(10.0) * self.se_power / self.power)


def noise_floor(power, twt_s, *, window: Literal["late", "pre"], start_s: float, stop_s: float) -> NoiseFloor:
    """Mean envelope power over traces and the window [start_s, stop_s) (record clock, s).

    The standard error is the spread of the per-trace window means over √n_traces (for a
    single trace: the window's spread over √(samples/4), the envelope being correlated
    over a few samples).  ``trend_db`` is the fitted change of 10·log10(power) across the
    window: a large fall means the window still holds signal (record too short).
    """
    p = np.asarray(power, dtype=float)
    t = np.asarray(twt_s, dtype=float)
    sel = (t >= start_s) & (t < stop_s)
    m = int(np.count_nonzero(sel))
    if m < MIN_NOISE_SAMPLES:
        raise InputError(f"the {window} noise window {start_s * 1e9:.4g}–{stop_s * 1e9:.4g} ns holds {m} samples; "
                         f"it needs at least {MIN_NOISE_SAMPLES} (the traces are shorter than the window)")
    per_trace = p[:, sel].mean(axis=1)
    floor = float(per_trace.mean())
    if floor <= 0:
        raise InputError(f"the {window} noise window holds no signal at all (all zeros)")
    if p.shape[0] > 1:
        se = float(per_trace.std(ddof=1) / np.sqrt(p.shape[0]))
    else:
        se = float(p[0, sel].std(ddof=1) / np.sqrt(max(m / 4.0, 1.0)))
    curve = 10.0 * np.log10(np.maximum(p[:, sel].mean(axis=0), floor * 1e-12))
    tt = t[sel]
    slope = np.polyfit(tt - tt.mean(), curve, 1)[0]
    return NoiseFloor(floor, se, window, float(start_s), float(stop_s), m, float(slope * (tt[-1] - tt[0])))


def crossing_time(curve, twt_s, threshold: float, *, start_s: float, stop_s: float, significance: float = 0.0):
    """Last time in [start_s, stop_s) where ``curve`` falls through ``threshold``.

    Parameters
    ----------
    significance : float
        Hysteresis: only samples above ``threshold + significance`` count as "above", so a
        noise bump that barely touches the threshold beyond the true penetration does not
        extend it; the crossing itself is still found at ``threshold`` (the first sample
        below it after the last significant one).

    Returns
    -------
    (time_s, lower_bound) : (float or None, bool)
        Linear interpolation in log(curve) between the last sample above the threshold
        and the next; None when the curve never exceeds it significantly; ``lower_bound``
        True when it is still above at ``stop_s`` (then the time returned is ``stop_s``).
    """
    c = np.asarray(curve, dtype=float)
    t = np.asarray(twt_s, dtype=float)
    idx = np.flatnonzero((t >= start_s) & (t < stop_s))
    if idx.size < 2:
        return None, False
    strong = np.flatnonzero(c[idx] >= threshold + significance)
    if strong.size == 0:
        return None, False
    after = idx[strong[-1]:]
    below = np.flatnonzero(c[after] < threshold)
    if below.size == 0:
        return float(t[idx[-1]]), True
    last = after[below[0]] - 1
    y0, y1 = np.log(c[last]), np.log(max(c[last + 1], 1e-300))
    frac = (y0 - np.log(threshold)) / (y0 - y1) if y0 != y1 else 0.0
    return float(t[last] + frac * (t[last + 1] - t[last])), False
