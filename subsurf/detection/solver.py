"""The one depth solver: the depth at which the two-way loss equals the system performance.

Every detection depth in subsurf — the plain radar range equation of
:func:`max_detectable_depth` (DESIGN.md's fixed public name) and the full budget of
:mod:`subsurf.detection.budget` (coupling, layers, bistatic path, band integration) — is
written as loss terms and solved here.  The loss depends on the depth ``d`` only through
the equivalent range

    r = √((d + s)² + h²),

with ``h`` half the transmitter–receiver separation (bistatic slant leg) and ``s`` the
shift that turns a layered overburden into host-equivalent range (see
:func:`subsurf.detection.layers.overburden_terms`).  At one frequency

    L(r) = K₀ + 10·p·log10(r) + 2·(20/ln 10)·α·r                      (dB)

and L(r) = P has the closed form r = W(b·e^κ)/b (Lambert W), b = 4α/p,
κ = (P − K₀)·ln 10/(10p).  Across a band of n frequencies with energy weights wᵢ (Σwᵢ = 1)

    L(r) = 10·p·log10(r) − 10·log10 Σᵢ wᵢ·10^(−K₀ᵢ/10)·e^(−4αᵢr),

solved by safeguarded Newton steps in ln r inside a bracket given by two closed forms
(the single-frequency form is the exact answer when n = 1; no iteration then).
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from ..errors import InputError, check_finite, check_positive
from ..quantities import accepts_quantities
from ..waves.propagation import NP_TO_DB, _alpha_wavelength

__all__ = [
    "SPREADING_EXPONENT",
    "lambertw_of_exp",
    "depth_from_loss_terms",
    "range_from_loss_terms",
    "loss_from_terms",
    "band_loss_db",
    "band_range_from_loss_terms",
    "depth_from_range",
    "max_detectable_depth",
]

#: Exponent p of geometric spreading in 10·p·log10(r), per target kind: image source
#: (planar), echo width over the stationary-phase length (line), radar cross-section (point).
SPREADING_EXPONENT: dict[str, float] = {"planar": 2.0, "line": 3.0, "point": 4.0}

_LN10 = np.log(10.0)


def lambertw_of_exp(log_x):
    """Principal-branch Lambert W of exp(log_x), real-valued and accurate where exp(log_x) overflows.

    Parameters
    ----------
    log_x : float or array_like
        ln x; any real value (x = e^log_x from 0 to far beyond the largest float).

    Returns
    -------
    ndarray
        w ≥ 0 with w·e^w = e^log_x, i.e. w + ln w = log_x; NaN where log_x is NaN.

    Notes
    -----
    Vectorised, in the log domain so that nothing overflows: the starting value is
    Winitzki's (2003) uniform approximation W(x) ≈ y·(1 − ln(1 + y)/(2 + y)) with
    y = ln(1 + x) (within 2 % for every x ≥ 0), evaluated as y = log(1 + e^log_x)
    without forming x; then two Halley steps on f(w) = w + ln w − log_x,

        w ← w − f·w/((w + 1) + f/(2·(w + 1))),

    each cubically convergent (2 % → 1e-6 → round-off).  Below log_x = −40, W(x) = x
    to double precision (W(x) = x − x² + …, x < 5e-18).  The result agrees with
    ``scipy.special.lambertw`` to a few 1e-15 relative (tested over x = 1e-300 … 1e300).

    References
    ----------
    Corless, R. M., Gonnet, G. H., Hare, D. E. G., Jeffrey, D. J. & Knuth, D. E. (1996).
    On the Lambert W function. Adv. Comput. Math. 5, 329–359. doi:10.1007/BF02124750
    Winitzki, S. (2003). Uniform approximations for transcendental functions. In
    Computational Science and Its Applications – ICCSA 2003, LNCS 2667, 780–789.
    doi:10.1007/3-540-44839-X_82
    """
    log_x = np.asarray(log_x, dtype=float)
    if log_x.ndim == 0:
        return lambertw_of_exp(log_x.reshape(1)).reshape(())
    # The same arithmetic as written in the Notes, in place in three work arrays (bit-identical to
    # the expression form; allocating a fresh array per operation cost about a quarter of the time).
    lx = np.maximum(log_x, -40.0)  # NaN propagates through np.maximum
    t = np.abs(lx)
    np.negative(t, out=t)
    np.exp(t, out=t)
    np.log1p(t, out=t)
    y = np.maximum(lx, 0.0)
    y += t  # y = ln(1 + x) without overflow (np.logaddexp is slower)
    np.log1p(y, out=t)
    u = np.add(y, 2.0)
    t /= u
    np.subtract(1.0, t, out=t)
    w = np.multiply(y, t, out=y)  # w = y·(1 − ln(1 + y)/(2 + y))
    f, w_1 = t, u
    for _ in range(2):  # Halley: w ← w − f·w/((w + 1) + 0.5·f/(w + 1)), f = w + ln w − lx
        np.log(w, out=f)
        f += w
        f -= lx
        np.add(w, 1.0, out=w_1)
        q = np.multiply(f, 0.5)
        q /= w_1
        q += w_1
        f *= w
        f /= q
        w -= f
    tiny = log_x < -40.0
    if np.any(tiny):
        w[tiny] = np.exp(log_x[tiny])
    return w


def range_from_loss_terms(k0_db, p, alpha, performance_db):
    """Solve K₀ + 10·p·log10(r) + 2·8.686·α·r = P for the range r ≥ 0 (closed form, Lambert W).

    ``k0_db`` may be +inf (no return: range 0).  Everything broadcasts.
    """
    k0, p, alpha, perf = np.broadcast_arrays(
        np.asarray(k0_db, dtype=float), np.asarray(p, dtype=float),
        np.asarray(alpha, dtype=float), np.asarray(performance_db, dtype=float))
    kappa = (perf - k0) * _LN10 / (10.0 * p)
    b = 4.0 * alpha / p
    finite = np.isfinite(kappa)
    lossy = finite & (b > 0)
    if np.all(lossy):  # the usual case on a map: no masking passes
        log_x = np.log(b)
        log_x += kappa
        out = lambertw_of_exp(log_x)
        out /= b
        return out if out.ndim else out[()]
    out = np.zeros(kappa.shape)
    lossless = finite & (b <= 0)
    if np.any(lossy):
        bb = b[lossy]
        out[lossy] = lambertw_of_exp(np.log(bb) + kappa[lossy]) / bb
    if np.any(lossless):
        out[lossless] = np.exp(np.minimum(kappa[lossless], 700.0))
    return out if out.ndim else out[()]


def depth_from_range(range_m, *, half_separation_m=0.0, depth_shift_m=0.0):
    """Depth d ≥ 0 from the equivalent range r = √((d + s)² + h²); 0 where r ≤ h (nothing reached)."""
    r = np.asarray(range_m, dtype=float)
    h = np.asarray(half_separation_m, dtype=float)
    with np.errstate(invalid="ignore"):
        d = np.sqrt(np.maximum(r * r - h * h, 0.0)) - np.asarray(depth_shift_m, dtype=float)
    d = np.maximum(d, 0.0)
    return d if d.ndim else d[()]


def depth_from_loss_terms(k0_db, p, alpha, performance_db, *, half_separation_m=0.0, depth_shift_m=0.0):
    """Solve L(d) = P for the depth d ≥ 0 at one frequency (closed form), with the slant and layer range.

    Parameters
    ----------
    k0_db : array_like
        Depth-free part of the two-way loss (dB); +inf where nothing returns.
    p : float or array_like
        Spreading exponent (:data:`SPREADING_EXPONENT`).
    alpha : array_like
        Attenuation constant (Np/m) along the equivalent range.
    performance_db : array_like
        System performance (dB).
    half_separation_m, depth_shift_m : array_like
        h and s of r = √((d + s)² + h²) (0 for a monostatic antenna on a uniform ground).

    Returns
    -------
    ndarray
        Depth (m), 0 where the target cannot be detected at any depth.
    """
    r = range_from_loss_terms(k0_db, p, alpha, performance_db)
    return depth_from_range(r, half_separation_m=half_separation_m, depth_shift_m=depth_shift_m)


def loss_from_terms(k0_db, p, alpha, depth_m, *, half_separation_m=0.0, depth_shift_m=0.0):
    """Two-way loss (dB) at ``depth_m`` from the single-frequency terms: K₀ + 10·p·log10 r + 2·8.686·α·r."""
    d = np.asarray(depth_m, dtype=float)
    r = np.sqrt((d + depth_shift_m) ** 2 + np.square(half_separation_m))
    with np.errstate(divide="ignore"):
        return np.asarray(k0_db) + 10.0 * np.asarray(p) * np.log10(r) + 2.0 * NP_TO_DB * np.asarray(alpha) * r


def _log_band_sum(log_terms, alpha, weights, r):
    """ln Σᵢ wᵢ·exp(log_termsᵢ − 4αᵢr) over the last axis, overflow-free; also the weighted mean α."""
    z = np.log(weights) + log_terms - 4.0 * alpha * r[..., None]
    zmax = np.max(z, axis=-1, keepdims=True)
    zmax = np.where(np.isfinite(zmax), zmax, 0.0)
    e = np.exp(z - zmax)
    s = e.sum(axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        mean_alpha = (e * alpha).sum(axis=-1) / s
        return np.log(s) + zmax[..., 0], mean_alpha


def band_loss_db(k0_db, p, alpha, weights, depth_m, *, half_separation_m=0.0, depth_shift_m=0.0):
    """Band-integrated two-way loss (dB) at ``depth_m``.

    Parameters
    ----------
    k0_db, alpha : array_like, shape (..., n)
        Depth-free loss (dB) and attenuation (Np/m) at the n frequencies of the band (last axis).
    p : float
        Spreading exponent.
    weights : array_like, shape (n,) or (..., n)
        Energy weights of the frequencies (quadrature weight × transmitted power spectrum), Σ = 1.
    depth_m, half_separation_m, depth_shift_m : array_like
        Broadcast against the leading shape.

    Notes
    -----
    L = 10·p·log10(r) − 10·log10 Σᵢ wᵢ·10^(−K₀ᵢ/10)·e^(−4αᵢr): the received energy over the
    band against the transmitted energy.  With one frequency this is :func:`loss_from_terms`.
    """
    k0 = np.asarray(k0_db, dtype=float)
    a = np.asarray(alpha, dtype=float)
    d = np.asarray(depth_m, dtype=float)
    r = np.sqrt((d + depth_shift_m) ** 2 + np.square(half_separation_m))
    r = np.broadcast_to(r, np.broadcast_shapes(r.shape, k0.shape[:-1], a.shape[:-1]))
    lse, _ = _log_band_sum(-k0 * (_LN10 / 10.0), a, np.asarray(weights, dtype=float), r)
    return 10.0 * p * np.log10(r) - (10.0 / _LN10) * lse


def band_range_from_loss_terms(k0_db, p, alpha, weights, performance_db, *, iterations: int = 30,
                               rtol: float = 1e-13):
    """Solve the band-integrated L(r) = P for the range r ≥ 0 (vectorised safeguarded Newton).

    Parameters are as for :func:`band_loss_db` (node axis last) with ``performance_db``
    broadcast against the leading shape.  Returns the range (m), 0 where nothing returns.

    Notes
    -----
    The bracket comes from two closed forms (:func:`range_from_loss_terms`): since Σwᵢ = 1,
    L(r) ≥ minᵢK₀ᵢ + 10p·log10 r + 2·8.686·(minᵢαᵢ)·r gives an upper bound of the root, and
    L(r) ≤ K₀ⱼ − 10·log10 wⱼ + 10p·log10 r + 2·8.686·αⱼ·r for the strongest term j a lower
    bound.  Newton steps on g(u) = L(eᵘ) − P, u = ln r, with
    g'(u) = 10p/ln 10 + (40/ln 10)·⟨α⟩·r (⟨α⟩ the received-energy mean of α), replaced by
    bisection whenever a step leaves the bracket.  g is increasing in u, so the root is unique.
    """
    k0 = np.asarray(k0_db, dtype=float)
    a = np.asarray(alpha, dtype=float)
    w = np.asarray(weights, dtype=float)
    lead = np.broadcast_shapes(k0.shape[:-1], a.shape[:-1], w.shape[:-1], np.shape(performance_db))
    k0 = np.broadcast_to(k0, lead + k0.shape[-1:])
    a = np.broadcast_to(a, lead + a.shape[-1:])
    w = np.broadcast_to(w, lead + w.shape[-1:])
    perf = np.broadcast_to(np.asarray(performance_db, dtype=float), lead)
    if k0.shape[-1] == 1:
        return range_from_loss_terms(k0[..., 0], p, a[..., 0], perf)
    with np.errstate(divide="ignore"):
        strength = -k0 + 10.0 * np.log10(w)  # 10·log10 of each term at r = 1 without absorption
    j = np.argmax(strength, axis=-1)[..., None]
    r_lo = range_from_loss_terms(-np.take_along_axis(strength, j, -1)[..., 0], p,
                                 np.take_along_axis(a, j, -1)[..., 0], perf)
    r_hi = range_from_loss_terms(np.min(k0, axis=-1), p, np.min(a, axis=-1), perf)
    r_lo, r_hi = np.asarray(r_lo, dtype=float), np.asarray(r_hi, dtype=float)
    live = (r_hi > 0) & (r_lo > 0)
    out = np.where(live, r_lo, np.where(r_hi > 0, r_hi, 0.0))
    if not np.any(live):
        return out if out.ndim else out[()]
    lo, hi = np.log(r_lo[live]), np.log(r_hi[live]) + 1e-12
    k0l, al, wl, pl = k0[live], a[live], w[live], perf[live]
    log_terms = -k0l * (_LN10 / 10.0)
    u = lo.copy()
    for _ in range(iterations):
        r = np.exp(u)
        lse, mean_alpha = _log_band_sum(log_terms, al, wl, r)
        g = 10.0 * p * u / _LN10 - (10.0 / _LN10) * lse - pl
        lo = np.where(g < 0, u, lo)
        hi = np.where(g >= 0, u, hi)
        dg = 10.0 * p / _LN10 + (40.0 / _LN10) * mean_alpha * r
        step = u - g / dg
        bad = ~((step >= lo) & (step <= hi)) | ~np.isfinite(step)
        new = np.where(bad, 0.5 * (lo + hi), step)
        done = np.max(np.abs(new - u), initial=0.0) < rtol
        u = new
        if done:
            break
    out[live] = np.exp(u)
    return out if out.ndim else out[()]


# --- the plain radar range equation of DESIGN.md -----------------------------------------------

def _reflection_power(reflection):
    """|R|² of an amplitude reflection coefficient, refusing non-numbers, NaN and |R| > 1."""
    try:
        r = np.asarray(reflection, dtype=complex)
    except (TypeError, ValueError):
        raise InputError(f"reflection must be a number with |reflection| <= 1, got {reflection!r}") from None
    mag = np.abs(r)
    if not np.all(np.isfinite(mag)) or np.any(mag > 1.0 + 1e-12):
        bad = mag[~(np.isfinite(mag) & (mag <= 1.0 + 1e-12))].ravel()[0]
        raise InputError(f"reflection must be finite with |reflection| <= 1 (passive target), got |R| = {bad:.6g}")
    return mag**2


@accepts_quantities(
    eps_r="dimensionless",
    sigma="S/m",
    freq_hz="Hz",
    performance_db="dimensionless",
    reflection="dimensionless",
    gain="dimensionless",
    rcs_m2="m**2",
)
def max_detectable_depth(eps_r, sigma, freq_hz, performance_db, target: Literal["planar", "point"] = "planar",
                         reflection=1.0, gain=1.0, rcs_m2=None):
    """Largest depth (m) at which the plain two-way loss equals the system performance.

    Parameters
    ----------
    eps_r, sigma, freq_hz :
        Medium (relative complex permittivity, DC conductivity S/m) and frequency (Hz).
    performance_db : float or array_like
        System performance (dB): the largest two-way loss the instrument can detect.
    target : {"planar", "point"}
        Planar reflector (image-source spreading) or compact target with radar cross-section.
    reflection : float or complex or array_like
        Amplitude reflection coefficient of a planar target.
    gain : float or array_like
        Antenna gain in the ground (linear, one way).
    rcs_m2 : float or array_like
        Radar cross-section of a point target (m²).

    Returns
    -------
    ndarray
        Maximum detectable depth in metres (0 where the target returns nothing).

    Notes
    -----
    The radar range equation without coupling, layers, separation or band (DESIGN.md):

        planar: L(d) = −10·log10(G²λ²|R|²/((4π)²(2d)²)) + 2·8.686·α·d
        point:  L(d) = −10·log10(G²λ²·RCS/((4π)³·d⁴))   + 2·8.686·α·d

    with λ the wavelength in the ground.  Written as K₀ + 10·p·log10(d) + 2·8.686·α·d and
    solved by :func:`depth_from_loss_terms`, the same solver as the full budget.

    References
    ----------
    Annan, A. P. & Davis, J. L. (1977). Radar range analysis for geological materials.
    Geological Survey of Canada, Report of Activities 77-1B, 117–124.
    Corless, R. M. et al. (1996). On the Lambert W function. Adv. Comput. Math. 5, 329–359.
    """
    perf = check_finite("performance_db", performance_db)
    if np.any(perf <= 0):
        raise InputError(f"performance_db must be > 0 dB, got {perf[perf <= 0].ravel()[0]:.6g}")
    # α and λ only (not the whole WaveProperties: impedance, skin depth, ... are unused here)
    alpha, lam = _alpha_wavelength(eps_r, sigma, freq_hz)
    g = check_positive("gain", gain)
    if target == "planar":
        r2 = _reflection_power(reflection)
        with np.errstate(divide="ignore"):
            k0 = -10.0 * np.log10(g**2 * lam**2 * r2 / ((4 * np.pi) ** 2 * 4.0))
    elif target == "point":
        if rcs_m2 is None:
            raise InputError("rcs_m2 is required for target='point' (radar cross-section, m²)")
        rcs = check_positive("rcs_m2", rcs_m2, unit="m²")
        k0 = -10.0 * np.log10(g**2 * lam**2 * rcs / ((4 * np.pi) ** 3))
    else:
        raise InputError(f"target must be 'planar' or 'point', got {target!r}; line targets and the full "
                         "budget are in subsurf.detection.budget")
    return depth_from_loss_terms(k0, SPREADING_EXPONENT[target], alpha, perf)
