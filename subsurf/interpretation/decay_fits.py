"""Fits behind a site calibration: a robust straight line with its covariance, short-time
spectra of a profile, and the spectral-centroid downshift of constant-Q attenuation.

Arrays in, numbers out; SI units (s, Hz).  Vectorised over traces and windows.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError

__all__ = [
    "LineFit",
    "robust_line_fit",
    "short_time_spectra",
    "spectral_moments",
    "window_spectral_variance",
    "constant_q_centroid",
]

_HUBER_K = 1.345  # 95 % efficiency at the normal distribution (Huber 1981)
_MAD_TO_SD = 0.6744897501960817  # Φ⁻¹(3/4)


@dataclass(frozen=True)
class LineFit:
    """y ≈ intercept + slope·x, fitted robustly.

    ``covariance`` is Huber's H1 sandwich of (intercept, slope), inflated by
    ``(1 + ρ)/(1 − ρ)`` for a lag-one residual autocorrelation ρ > 0 (serially
    correlated samples carry fewer independent values); ``n_effective`` is n over that
    factor.  ``weights`` are the final Huber weights of the samples.
    """

    intercept: float
    slope: float
    covariance: np.ndarray
    scale: float
    weights: np.ndarray
    n: int
    n_effective: float
    lag1_autocorrelation: float

    @property
    def slope_se(self) -> float:
        return float(np.sqrt(self.covariance[1, 1]))

    @property
    def intercept_se(self) -> float:
        return float(np.sqrt(self.covariance[0, 0]))


def robust_line_fit(x, y, *, correlated: bool = True, min_inflation: float = 1.0, max_iter: int = 100) -> LineFit:
    """Huber M-estimate of a straight line by iteratively reweighted least squares.

    Parameters
    ----------
    x, y : array_like, shape (n,)
        Abscissae and data, n ≥ 4 with at least two distinct x.
    correlated : bool
        Inflate the covariance for serially correlated residuals (samples in order of x).
    min_inflation : float
        Smallest inflation of the covariance: the number of samples each independent value
        spans when the samples are known to be correlated (e.g. a running mean over k
        samples, or windows overlapping by 1 − 1/k).

    Returns
    -------
    LineFit

    Notes
    -----
    Weights w = min(1, k·s/|r|), k = 1.345, the scale s = median|r|/Φ⁻¹(3/4) re-estimated
    every iteration (Holland & Welsch 1977).  Covariance (Huber 1981, eq. 7.6.6, "H1"):
    K²·[Σψ²/(n−2)]/[Σψ'/n]²·s²·(XᵀX)⁻¹ with K = 1 + (2/n)·var(ψ')/mean(ψ')², ψ the Huber
    function of r/s.  For AR(1)-like residuals the variance of a mean grows by
    (1 + ρ)/(1 − ρ) (Bretherton et al. 1999, eq. 31), applied to the whole covariance.

    References
    ----------
    Huber, P. J. (1981). *Robust Statistics*. Wiley. doi:10.1002/0471725250
    Holland, P. W. & Welsch, R. E. (1977). Robust regression using iteratively reweighted
    least-squares. Commun. Stat. Theory Methods 6(9), 813–827. doi:10.1080/03610927708827533
    Bretherton, C. S., Widmann, M., Dymnikov, V. P., Wallace, J. M. & Bladé, I. (1999).
    The effective number of spatial degrees of freedom of a time-varying field.
    J. Climate 12(7), 1990–2009. doi:10.1175/1520-0442(1999)012<1990:TENOSD>2.0.CO;2
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    n = x.size
    if n < 4 or y.shape != x.shape:
        raise InputError(f"a line fit needs at least 4 (x, y) pairs of equal length, got {n}")
    if np.ptp(x) <= 0:
        raise InputError("a line fit needs at least two distinct x values")
    X = np.column_stack([np.ones(n), x - x.mean()])  # centred for conditioning
    beta = np.linalg.lstsq(X, y, rcond=None)[0]
    w = np.ones(n)
    s = 0.0
    for _ in range(max_iter):
        r = y - X @ beta
        s = float(np.median(np.abs(r)) / _MAD_TO_SD)
        if s <= 0:
            s = float(np.sqrt(np.mean(r**2))) or 1e-300
        u = np.abs(r) / s
        w = np.where(u <= _HUBER_K, 1.0, _HUBER_K / np.maximum(u, 1e-300))
        sw = np.sqrt(w)
        new = np.linalg.lstsq(X * sw[:, None], y * sw, rcond=None)[0]
        done = np.allclose(new, beta, rtol=1e-10, atol=1e-12 * (1.0 + np.abs(beta).max()))
        beta = new
        if done:
            break
    r = y - X @ beta
    u = r / s
    psi = np.clip(u, -_HUBER_K, _HUBER_K)
    dpsi = (np.abs(u) <= _HUBER_K).astype(float)
    m = dpsi.mean()
    if m <= 0:
        raise InputError("the line fit found no sample inside the robust band (all outliers)")
    k = 1.0 + (2.0 / n) * dpsi.var() / m**2
    cov = k**2 * (np.sum(psi**2) / (n - 2)) / m**2 * s**2 * np.linalg.inv(X.T @ X)
    rho = 0.0
    if correlated and n > 4:
        rw = psi - psi.mean()
        den = float(np.sum(rw**2))
        rho = float(np.sum(rw[1:] * rw[:-1]) / den) if den > 0 else 0.0
        rho = min(max(rho, 0.0), 0.999)
    inflate = max((1.0 + rho) / (1.0 - rho), float(min_inflation))
    cov = cov * inflate
    # back from the centred abscissa: intercept at x = 0
    xm = x.mean()
    J = np.array([[1.0, -xm], [0.0, 1.0]])
    cov = J @ cov @ J.T
    return LineFit(float(beta[0] - beta[1] * xm), float(beta[1]), cov, s, w, n, n / inflate, rho)


def short_time_spectra(amplitude, starts, length: int, *, nfft: int | None = None):
    """Power spectra of Hann-tapered windows of every trace, averaged over traces.

    Parameters
    ----------
    amplitude : ndarray, shape (n_traces, n_samples)
    starts : array_like of int, shape (n_windows,)
        First sample of each window (windows must lie inside the record).
    length : int
        Window length in samples (≥ 8).
    nfft : int or None
        FFT length (zero padding), default the next power of two ≥ 4·length.

    Returns
    -------
    (spectra, taper) : ndarray (n_windows, nfft//2 + 1), ndarray (length,)
        Mean |FFT|² over traces per window (one-sided, frequency bins k/(nfft·dt)), and the taper.
    """
    a = np.asarray(amplitude, dtype=float)
    starts = np.asarray(starts, dtype=int)
    if length < 8:
        raise InputError(f"spectral windows need at least 8 samples, got {length}")
    if starts.size == 0 or starts.min() < 0 or starts.max() + length > a.shape[-1]:
        raise InputError("a spectral window reaches past the end of the traces (traces shorter than the window)")
    nfft = int(nfft or 1 << int(np.ceil(np.log2(4 * length))))
    taper = np.hanning(length + 2)[1:-1]
    idx = starts[:, None] + np.arange(length)[None, :]
    # chunks of traces keep the (traces, windows, length) block small
    acc = np.zeros((starts.size, nfft // 2 + 1))
    step = max(1, int(4_000_000 // max(1, starts.size * nfft)))
    for i in range(0, a.shape[0], step):
        seg = a[i:i + step][:, idx]
        seg = seg - seg.mean(axis=-1, keepdims=True)
        f = np.fft.rfft(seg * taper, n=nfft, axis=-1)
        acc += (f.real**2 + f.imag**2).sum(axis=0)
    return acc / a.shape[0], taper


def spectral_moments(freqs_hz, spectra, *, band_hz: tuple[float, float]):
    """Centroid (Hz) and variance (Hz²) of power spectra over ``band_hz`` (last axis).

    f_c = Σ f·S / Σ S,  σ² = Σ (f − f_c)²·S / Σ S  (Quan & Harris 1997, eqs. 2–3, with
    the power spectrum as the weight).  Negative values left by a noise subtraction are
    kept: the estimate stays unbiased.
    """
    f = np.asarray(freqs_hz, dtype=float)
    s = np.asarray(spectra, dtype=float)
    sel = (f >= band_hz[0]) & (f <= band_hz[1])
    if np.count_nonzero(sel) < 3:
        raise InputError("the analysis band holds fewer than 3 frequency bins (sampling too coarse)")
    fs, ss = f[sel], s[..., sel]
    tot = ss.sum(axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        fc = (ss * fs).sum(axis=-1) / tot
        var = (ss * (fs - fc[..., None]) ** 2).sum(axis=-1) / tot
    return fc, var


def window_spectral_variance(taper, sample_interval_s: float, nfft: int) -> float:
    """Second moment (Hz²) of the taper's own power spectrum |H(f)|², two-sided about 0.

    A windowed spectrum is the true one convolved with |H|², which adds this variance
    and leaves the centroid unchanged (moments of a convolution add).
    """
    h = np.fft.fft(np.asarray(taper, dtype=float), n=nfft)
    p = h.real**2 + h.imag**2
    f = np.fft.fftfreq(nfft, d=sample_interval_s)
    return float((p * f**2).sum() / p.sum())


def constant_q_centroid(source_centroid_hz, source_variance_hz2, twt_s, q):
    """Centroid (Hz) of a Gaussian power spectrum after travelling ``twt_s`` through constant Q.

    Parameters
    ----------
    source_centroid_hz : float or array_like
        Centroid f_S of the power spectrum S(f) ∝ exp(−(f − f_S)²/(2σ²)) at time zero.
    source_variance_hz2 : float or array_like
        Its variance σ² (Hz²).
    twt_s : float or array_like
        Travel time along the path (s; two-way time for a reflection).
    q : float or array_like
        Quality factor (> 0).

    Returns
    -------
    ndarray
        f_R = f_S − 2π·σ²·t/Q.

    Notes
    -----
    Constant Q means α(f) = π·f/(Q·v), so along a path of length v·t the power spectrum is
    multiplied by exp(−2π·f·t/Q); completing the square in the Gaussian shifts its centre
    by 2π·σ²·t/Q and keeps σ².  This is Quan & Harris (1997, eq. 10) written for the power
    spectrum, whose variance is half that of the amplitude spectrum they use.  For any
    spectrum shape the shift rate is exact: d f_c/dt = −(2π/Q)·σ²(t) (the derivative of
    the mean of an exponentially tilted distribution is minus its variance times the tilt rate).

    References
    ----------
    Quan, Y. & Harris, J. M. (1997). Seismic attenuation tomography using the frequency
    shift method. Geophysics 62(3), 895–905. doi:10.1190/1.1444197
    """
    q = np.asarray(q, dtype=float)
    if np.any(~(q > 0)):
        raise InputError(f"q must be > 0, got {q[~(q > 0)].ravel()[0]!r}")
    return (np.asarray(source_centroid_hz, dtype=float)
            - 2.0 * np.pi * np.asarray(source_variance_hz2, dtype=float) * np.asarray(twt_s, dtype=float) / q)
