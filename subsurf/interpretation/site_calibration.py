"""Calibrate a plan to the site from a short test profile: noise floor, observed
penetration, effective attenuation, effective Q* and the effective system performance.

:func:`calibrate_profile` measures; :func:`effective_performance` turns the observed
penetration and the fitted loss into the performance figure the detection budget needs.
SI units throughout (s, m, Hz; attenuation reported in dB/m as the budget uses it).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import Literal

import numpy as np
from scipy import constants

from ..errors import InputError, ModelRangeWarning, check_positive
from ..waves.propagation import NP_TO_DB, depth_from_time, time_from_depth
from .decay_fits import (
    LineFit,
    robust_line_fit,
    short_time_spectra,
    spectral_moments,
    window_spectral_variance,
)
from .trace_profile import (
    NoiseFloor,
    TimeZero,
    TraceProfile,
    crossing_time,
    envelope_power,
    noise_floor,
    pick_time_zero,
    smooth,
)

__all__ = ["QStar", "SiteCalibration", "calibrate_profile", "effective_performance", "SPREADING_POWER"]

#: Geometric spreading of the received power, P ∝ d^(−p): planar reflector (image source
#: at 2d), line target, compact target; the exponents of the detection budget.
SPREADING_POWER = {"planar": 2.0, "line": 3.0, "point": 4.0}


@dataclass(frozen=True)
class QStar:
    """Effective Q* from the centroid downshift, or a lower bound when no shift is resolved."""

    value: float | None
    se: float | None
    lower_bound: float | None
    slope: float  # d f_centroid / d(∫σ² dt), dimensionless; −2π/Q*
    slope_se: float
    window_twt_s: np.ndarray  # effective two-way time (after time zero) of each window
    centroid_hz: np.ndarray
    variance_hz2: np.ndarray
    fit: LineFit

    def attenuation_slope_np_per_m_per_hz(self, velocity: float) -> float:
        """dα/df = π/(Q*·v) (Np/m per Hz); 0 when only a lower bound is known."""
        return 0.0 if self.value is None else float(np.pi / (self.value * velocity))


@dataclass(frozen=True)
class SiteCalibration:
    """Everything measured on a test profile (SI units; see :func:`calibrate_profile`)."""

    time_zero: TimeZero
    velocity: float
    velocity_se: float
    separation_m: float
    noise: NoiseFloor
    margin_db: float
    twt_s: np.ndarray  # record clock, per sample
    mean_power: np.ndarray  # trace-averaged envelope power (smoothed)
    mean_power_se: np.ndarray
    penetration_twt_s: float | None  # after time zero
    penetration_twt_se_s: float | None
    penetration_m: float | None
    penetration_se_m: float | None
    penetration_lower_bound: bool
    fit_from_m: float
    attenuation_db_per_m: float
    attenuation_se_db_per_m: float
    attenuation_fit: LineFit
    fit_depth_m: np.ndarray
    fit_corrected_db: np.ndarray  # 10·log10(P − noise) + 10·p·log10(d) on the fit samples
    spreading: str
    reference_freq_hz: float
    band_hz: tuple[float, float]
    q_star: QStar | None
    n_traces: int

    @property
    def attenuation_np_per_m(self) -> float:
        return self.attenuation_db_per_m / NP_TO_DB


def _depth(twt_after_t0, velocity, separation):
    t = np.maximum(np.asarray(twt_after_t0, dtype=float), separation / velocity)
    return depth_from_time(t, velocity, separation)


def calibrate_profile(profile: TraceProfile, *, centre_freq_hz: float, separation_m: float, velocity: float,
                      velocity_se: float = 0.0, time_zero_s: float | None = None, time_zero_se_s: float = 0.0,
                      noise_window: Literal["late", "pre"] = "late", noise_from_s: float | None = None,
                      margin_db: float = 3.0, spreading: Literal["planar", "line", "point"] = "planar",
                      fit_from_m: float | None = None, bandwidth_hz: float | None = None) -> SiteCalibration:
    """Measure noise floor, penetration, attenuation and Q* on a test profile.

    Parameters
    ----------
    profile : TraceProfile
    centre_freq_hz : float
        Centre frequency of the antenna used (Hz): sets the smoothing (two periods), the
        spectral windows (four periods) and the default start of the fits.
    separation_m : float
        Transmitter–receiver separation (m), for time zero and time → depth.
    velocity, velocity_se : float
        Ground velocity and its standard error (m/s).
    time_zero_s : float or None
        Time zero on the record clock (s); None picks it from the direct wave
        (:func:`~subsurf.interpretation.trace_profile.pick_time_zero`).
    noise_window : {"late", "pre"}
        Noise from the end of the record (from ``noise_from_s``, default the last 10 %),
        or from the samples before the direct wave.
    margin_db : float
        The observed penetration is where the trace-averaged envelope power falls to the
        noise floor plus this margin (dB).  The default 3 dB is where the signal power
        equals the noise power (E|a|² = S² + 2σ², so floor + 3 dB ⇔ S² = 2σ²).  Later
        excursions above that level count only when they exceed it by twice the
        smoothed curve's own fluctuation in the noise window (hysteresis).
    spreading : {"planar", "line", "point"}
        Geometric spreading corrected before the decay fit, power ∝ d^(−p), p = 2, 3, 4.
    fit_from_m : float or None
        Shallowest depth of the decay fit (default one wavelength in the ground, the
        antenna's far field; common practice).
    bandwidth_hz : float or None
        Antenna bandwidth, used for the calibrated band when Q* windows are too few.

    Returns
    -------
    SiteCalibration

    Notes
    -----
    With P(t) the envelope power averaged over traces and P_n the noise floor, the
    signal power P − P_n of reflections from depth d falls as d^(−p)·10^(−2·A·d/10) with A
    the one-way attenuation in dB/m, so over the samples above the floor + margin
    10·log10(P − P_n) + 10·p·log10(d) = c − 2·A·d is fitted robustly
    (:func:`~subsurf.interpretation.decay_fits.robust_line_fit`).  The standard error of A
    adds the velocity's (A ∝ 1/v) in quadrature.  Q* comes from the centroid of
    short-time power spectra (noise spectrum removed) against ∫σ²dt
    (:func:`~subsurf.interpretation.decay_fits.constant_q_centroid`).

    References
    ----------
    Annan, A. P. (2009). Electromagnetic principles of ground penetrating radar. In Jol,
    H. M. (ed.), *Ground Penetrating Radar: Theory and Applications*, Elsevier, ch. 1.
    Quan, Y. & Harris, J. M. (1997). Geophysics 62(3), 895–905. doi:10.1190/1.1444197
    Turner, G. & Siggins, A. F. (1994). Constant Q attenuation of subsurface radar pulses.
    Geophysics 59(8), 1192–1200. doi:10.1190/1.1443677
    """
    fc = float(check_positive("centre_freq_hz", centre_freq_hz, unit="Hz"))
    v = float(check_positive("velocity", velocity, unit="m/s"))
    if v > constants.c * (1 + 1e-9):
        raise InputError(f"velocity must be <= c, got {v * 1e-9:.4g} m/ns")
    if spreading not in SPREADING_POWER:
        raise InputError(f"spreading must be planar, line or point, got {spreading!r}")
    if noise_window not in ("late", "pre"):
        raise InputError(f"noise_window must be 'late' or 'pre', got {noise_window!r}")
    if not 0.0 <= margin_db <= 40.0:
        raise InputError(f"margin_db must be between 0 and 40 dB, got {margin_db:g}")
    dt = float(profile.sample_interval_s)
    if 1.0 / (2.0 * dt) < 1.5 * fc:
        raise InputError(f"the sample interval {dt * 1e9:.4g} ns is too coarse for a {fc / 1e6:g} MHz antenna "
                         f"(Nyquist {0.5e-6 / dt:.4g} MHz < 1.5 × centre frequency)")
    t = profile.twt_s
    power = envelope_power(profile.amplitude)
    if time_zero_s is None:
        tz = pick_time_zero(power, dt, profile.first_sample_s, separation_m=separation_m)
    else:
        tz = TimeZero(float(time_zero_s), float(time_zero_se_s), "given", None)
    t0 = tz.time_s
    period = 1.0 / fc
    direct = tz.direct_wave_s if tz.direct_wave_s is not None else t0 + separation_m / constants.c
    d_from = v / fc if fit_from_m is None else float(check_positive("fit_from_m", fit_from_m, unit="m"))
    t_start = max(direct + 2.0 * period, t0 + float(time_from_depth(d_from, v, separation_m)))
    t_end = float(t[-1]) + dt
    if noise_window == "late":
        n_start = t_end - 0.1 * (t_end - t[0]) if noise_from_s is None else float(noise_from_s)
        if n_start <= t_start:
            raise InputError(f"the late noise window starts at {n_start * 1e9:.4g} ns, before the fit can start "
                             f"({t_start * 1e9:.4g} ns): the traces are shorter than the window needed")
        noise = noise_floor(power, t, window="late", start_s=n_start, stop_s=t_end)
        search_stop = n_start
    else:
        noise = noise_floor(power, t, window="pre", start_s=float(t[0]), stop_s=direct - 2.0 * period)
        search_stop = t_end
    if t_start >= search_stop - 8 * dt:
        raise InputError(f"the record ends (or its noise window starts) at {search_stop * 1e9:.4g} ns, before "
                         f"the decay fit can start at {t_start * 1e9:.4g} ns: traces shorter than the window")
    if abs(noise.trend_db) > 1.0:
        warnings.warn(f"the {noise_window} noise window ({noise.start_s * 1e9:.4g}–{noise.stop_s * 1e9:.4g} ns) changes "
                      f"by {noise.trend_db:+.1f} dB across it: it still holds signal (or clutter), so the noise floor "
                      "is over-estimated; record a longer window or choose another noise window",
                      ModelRangeWarning, stacklevel=2)
    mean_p = power.mean(axis=0)
    se_p = power.std(axis=0, ddof=1) / np.sqrt(power.shape[0]) if power.shape[0] > 1 else np.abs(mean_p) * 0.5
    k_smooth = max(1, int(round(2.0 * period / dt)))
    curve = smooth(mean_p, k_smooth)
    threshold = noise.power * 10.0 ** (margin_db / 10.0)
    in_noise = (t >= noise.start_s) & (t < noise.stop_s)
    fluctuation = float(np.std(curve[in_noise]))  # of the smoothed mean where there is only noise
    t_pen, lower = crossing_time(curve, t, threshold, start_s=t_start, stop_s=search_stop,
                                 significance=2.0 * fluctuation)
    if t_pen is None:
        raise InputError(f"the averaged envelope never rises {margin_db:g} dB above the noise floor "
                         f"({noise.db:.1f} dB) after the direct wave (from {t_start * 1e9:.4g} ns): no reflections "
                         "to calibrate with")
    p_exp = SPREADING_POWER[spreading]
    sel = (t >= t_start) & (t <= t_pen) & (curve >= threshold)
    if np.count_nonzero(sel) < 8:
        raise InputError(f"the signal is above the noise floor + {margin_db:g} dB for only "
                         f"{np.count_nonzero(sel)} samples after {t_start * 1e9:.4g} ns: too short to fit a decay")
    depth = _depth(t[sel] - t0, v, separation_m)
    y = 10.0 * np.log10(curve[sel] - noise.power) + 10.0 * p_exp * np.log10(depth)
    fit = robust_line_fit(depth, y, min_inflation=k_smooth)
    att = -0.5 * fit.slope
    att_se = float(np.hypot(0.5 * fit.slope_se, abs(att) * velocity_se / v))
    if att <= 0:
        warnings.warn(f"the envelope does not decay faster than the {spreading} spreading (fitted attenuation "
                      f"{att:.3g} dB/m): attenuation not resolved; check the velocity and the spreading kind",
                      ModelRangeWarning, stacklevel=2)
    # penetration and its uncertainty (see module notes)
    tau = t_pen - t0
    d_pen = float(_depth(tau, v, separation_m))
    i = int(np.clip(np.searchsorted(t, t_pen), 0, t.size - 1))
    sd_db = float(np.hypot(noise.se_db, 10.0 / np.log(10.0) * se_p[i] / max(mean_p[i], 1e-300)))
    dd_dt = v * v * tau / (4.0 * max(d_pen, 1e-9))
    model_slope_db_per_s = (fit.slope - 10.0 * p_exp / (max(d_pen, 1e-9) * np.log(10.0))) * dd_dt
    obs_slope = (1.0 - 10.0 ** (-margin_db / 10.0)) * abs(model_slope_db_per_s)
    t_se = float(np.hypot(sd_db / obs_slope if obs_slope > 0 else np.inf, dt / np.sqrt(12.0)))
    dd_dv = v * tau * tau / (4.0 * max(d_pen, 1e-9))
    d_se = float(np.sqrt((dd_dt * np.hypot(t_se, tz.se_s)) ** 2 + (dd_dv * velocity_se) ** 2))
    qs = _q_star(profile.amplitude, t, dt, t0, t_start, t_pen, curve, noise, fc, power.shape[0])
    if qs is not None and qs.centroid_hz.size:
        ref = float(np.mean(qs.centroid_hz))
        spread = float(np.sqrt(max(np.mean(qs.variance_hz2), 0.0)))
        band = (max(float(qs.centroid_hz.min()) - spread, 0.1 * fc), float(qs.centroid_hz.max()) + spread)
    else:
        ref = fc
        half = 0.5 * (bandwidth_hz if bandwidth_hz else fc)
        band = (fc - half, fc + half)
    return SiteCalibration(
        time_zero=tz, velocity=v, velocity_se=float(velocity_se), separation_m=float(separation_m), noise=noise,
        margin_db=float(margin_db), twt_s=t, mean_power=curve, mean_power_se=se_p, penetration_twt_s=tau,
        penetration_twt_se_s=float(np.hypot(t_se, tz.se_s)), penetration_m=d_pen, penetration_se_m=d_se,
        penetration_lower_bound=bool(lower), fit_from_m=float(_depth(t_start - t0, v, separation_m)),
        attenuation_db_per_m=float(att), attenuation_se_db_per_m=att_se, attenuation_fit=fit,
        fit_depth_m=depth, fit_corrected_db=y, spreading=spreading, reference_freq_hz=ref, band_hz=band,
        q_star=qs, n_traces=int(power.shape[0]))


def _q_star(amplitude, t, dt, t0, t_start, t_pen, curve, noise, fc, n_traces) -> QStar | None:
    """Centroid downshift over the above-noise window; None when fewer than 4 windows fit."""
    length = max(8, int(round(3.0 / (fc * dt))))
    hop = max(1, length // 4)
    i0 = int(np.searchsorted(t, t_start))
    i1 = int(np.searchsorted(t, t_pen))
    starts = np.arange(i0, i1 - length + 1, hop)
    n0 = int(np.searchsorted(t, noise.start_s))
    n1 = int(np.searchsorted(t, noise.stop_s))
    noise_starts = np.arange(n0, n1 - length + 1, hop)
    if noise_starts.size == 0:  # a noise window shorter than a spectral window: one window at its edge
        noise_starts = np.array([n1 - length] if noise.window == "late" else [n0])
    if starts.size < 4 or noise_starts.min() < 0 or noise_starts.max() + length > t.size:
        return None
    spectra, taper = short_time_spectra(amplitude, starts, length)
    nfft = 2 * (spectra.shape[-1] - 1)
    noise_spec = short_time_spectra(amplitude, noise_starts, length, nfft=nfft)[0].mean(axis=0)
    freqs = np.fft.rfftfreq(nfft, d=dt)
    band = (0.1 * fc, min(3.0 * fc, 0.9 * freqs[-1]))
    centroid, var = spectral_moments(freqs, spectra - noise_spec, band_hz=band)
    var = var - window_spectral_variance(taper, dt, nfft)
    # effective time of each window: the taper² × signal power weighted mean time
    idx = starts[:, None] + np.arange(length)[None, :]
    w = taper**2 * np.maximum(curve[idx] - noise.power, 0.0)
    tw = (w * t[idx]).sum(axis=1) / np.maximum(w.sum(axis=1), 1e-300) - t0
    ok = np.isfinite(centroid) & np.isfinite(var) & (var > 0)
    if np.count_nonzero(ok) < 4:
        return None
    tw, centroid, var = tw[ok], centroid[ok], var[ok]
    x = np.concatenate([[0.0], np.cumsum(0.5 * (var[1:] + var[:-1]) * np.diff(tw))])
    fit = robust_line_fit(x, centroid, min_inflation=length / hop)
    b, b_se = fit.slope, fit.slope_se
    if b < 0 and -b > 2.0 * b_se:
        q = -2.0 * np.pi / b
        return QStar(float(q), float(2.0 * np.pi * b_se / b**2), None, b, b_se, tw, centroid, var, fit)
    steepest = b - 2.0 * b_se
    bound = 2.0 * np.pi / -steepest if steepest < 0 else None
    return QStar(None, None, bound, b, b_se, tw, centroid, var, fit)


def effective_performance(penetration_m: float, attenuation_db_per_m: float, velocity: float, freq_hz: float, *,
                          penetration_se_m: float = 0.0, attenuation_se_db_per_m: float = 0.0, gain: float | None = 1.0,
                          reference_reflection: float = 0.1) -> tuple[float, float]:
    """System performance (dB) that puts the maximum detectable depth at the observed penetration.

    Parameters
    ----------
    penetration_m : float
        Observed penetration (m).
    attenuation_db_per_m, velocity, freq_hz : float
        Site attenuation (dB/m), velocity (m/s) and the frequency they hold at (Hz).
    gain : float or None
        One-way antenna gain (linear), as in the catalogue; None: the in-ground coupling model.
    reference_reflection : float
        |R| of the faintest reflectors that were still seen (planar); 0.1 is the order of
        a soil-stratigraphy contrast, e.g. ε' 9 over 13 (common practice).

    Returns
    -------
    (performance_db, se_db) : float, float
        P = L(d_obs), the two-way loss of :func:`subsurf.detection.two_way_loss_db` at the
        observed depth, for a planar reflector of |R| in the effective ground that has the
        site's α and v (:func:`subsurf.interpretation.calibrated_ground.effective_medium`);
        :func:`subsurf.detection.max_depth` with P returns d_obs (same budget, same
        solver).  se: first order in the depth and attenuation errors,
        (∂L/∂d)² = (10·2/(d·ln 10) + 2A)².
    """
    from ..detection import Target, two_way_loss_db
    from .calibrated_ground import effective_medium

    d = float(check_positive("penetration_m", penetration_m, unit="m"))
    if not 0 < reference_reflection <= 1:
        raise InputError(f"reference_reflection must be in (0, 1], got {reference_reflection!r}")
    eps, sigma = effective_medium(max(attenuation_db_per_m, 0.0) / NP_TO_DB, velocity, freq_hz)
    target = Target("planar", reflection=float(reference_reflection))
    perf = float(np.asarray(two_way_loss_db(d, eps, sigma, freq_hz, target, gain=gain)))
    dl_dd = 20.0 / (d * np.log(10.0)) + 2.0 * max(attenuation_db_per_m, 0.0)
    se = float(np.hypot(dl_dd * penetration_se_m, 2.0 * d * attenuation_se_db_per_m))
    return perf, se
