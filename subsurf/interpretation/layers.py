"""Time ↔ depth in a layered earth and the uncertainty of a depth from the uncertainties
of the layer velocities and thicknesses, the pick and time zero.

A layered earth is a stack of flat layers with interval velocities; with antenna
separation the two legs of the ray obey Snell's law at every interface (straight rays
within a layer).  Uncertainty is propagated to first order (linearised) and also by
Monte Carlo with a stated seed and draw count.  The homogeneous case and time zero are
in :mod:`.homogeneous` (re-exported here).

Physics module: SI units, no files, no printing.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import constants

from ..errors import InputError, check_finite, check_nonnegative, check_positive, check_seed
from .homogeneous import DepthEstimate, apply_time_zero, depth_with_uncertainty, time_zero_from_direct_wave

__all__ = [
    "LayeredEarth",
    "DepthEstimate",
    "time_zero_from_direct_wave",
    "apply_time_zero",
    "depth_with_uncertainty",
    "layered_depth_from_time",
    "layered_time_from_depth",
    "layered_depth_monte_carlo",
    "layered_depth_first_order",
]

_C = constants.c


# --- layered earth -------------------------------------------------------------------

@dataclass(frozen=True)
class LayeredEarth:
    """Flat layers from the surface down; the last layer is a half-space.

    Attributes
    ----------
    velocity : ndarray, shape (n,)
        Interval velocity of each layer, m/s.
    thickness : ndarray, shape (n − 1,)
        Thickness of each layer but the last, m.
    velocity_se, thickness_se : ndarray
        Standard errors (0 if unknown).
    covariance : ndarray, shape (2n − 1, 2n − 1), optional
        Full covariance of (velocity..., thickness...) in SI, e.g. from a joint fit
        (:func:`subsurf.interpretation.layered_cmp.fit_layered_cmp`); when given it is
        used instead of the independent standard errors.
    """

    velocity: np.ndarray
    thickness: np.ndarray
    velocity_se: np.ndarray
    thickness_se: np.ndarray
    covariance: np.ndarray | None = None

    @classmethod
    def from_thicknesses(cls, velocity, thickness, *, velocity_se=0.0, thickness_se=0.0,
                         covariance=None) -> LayeredEarth:
        """Layers from interval velocities (n) and thicknesses of all but the last (n − 1).

        ``covariance`` (optional): full covariance of (velocity..., thickness...), SI, shape
        (2n − 1, 2n − 1), symmetric positive semi-definite; its diagonal sets the standard errors.
        """
        v = np.atleast_1d(check_positive("velocity", velocity, unit="m/s")).astype(float)
        h = np.atleast_1d(check_positive("thickness", thickness, unit="m")).astype(float) if np.size(thickness) \
            else np.zeros(0)
        if h.size != v.size - 1:
            raise InputError(f"a layered earth with {v.size} velocities needs {v.size - 1} thicknesses "
                             f"(the last layer is a half-space), got {h.size}")
        if np.any(v > _C * (1 + 1e-9)):
            raise InputError(f"velocity must be <= c = {_C:.6g} m/s, got {float(v.max()):.6g}")
        vse = np.broadcast_to(check_nonnegative("velocity_se", velocity_se, unit="m/s"), v.shape).astype(float)
        hse = np.broadcast_to(check_nonnegative("thickness_se", thickness_se, unit="m"), h.shape).astype(float)
        cov = None
        if covariance is not None:
            cov = check_finite("covariance", covariance).astype(float)
            m = v.size + h.size
            if cov.shape != (m, m):
                raise InputError(f"covariance must have shape ({m}, {m}) for {v.size} velocities and {h.size} "
                                 f"thicknesses, got {cov.shape}")
            if not np.allclose(cov, cov.T, rtol=1e-8, atol=0.0) or np.min(np.linalg.eigvalsh(cov)) < \
                    -1e-9 * max(float(np.max(np.abs(np.diag(cov)))), 1e-300):
                raise InputError("covariance must be symmetric positive semi-definite")
            se = np.sqrt(np.clip(np.diag(cov), 0.0, None))
            vse, hse = se[: v.size], se[v.size:]
        return cls(velocity=v, thickness=h, velocity_se=vse, thickness_se=hse, covariance=cov)

    @classmethod
    def from_interfaces(cls, velocity, interface_depth, *, velocity_se=0.0, interface_se=0.0) -> LayeredEarth:
        """Layers from interval velocities (n) and the depths of the n − 1 interfaces below the surface."""
        z = np.atleast_1d(check_positive("interface_depth", interface_depth, unit="m")).astype(float)
        if np.any(np.diff(z) <= 0):
            raise InputError("interface_depth must increase downwards")
        zse = np.broadcast_to(check_nonnegative("interface_se", interface_se, unit="m"), z.shape).astype(float)
        h = np.diff(np.concatenate([[0.0], z]))
        # thickness error of layer i from its two bounding interfaces (independent)
        hse = np.sqrt(zse**2 + np.concatenate([[0.0], zse[:-1]]) ** 2)
        return cls.from_thicknesses(velocity, h, velocity_se=velocity_se, thickness_se=hse)


def _layer_tops(h):
    return np.concatenate([np.zeros(h.shape[:-1] + (1,)), np.cumsum(h, axis=-1)], axis=-1)


def _forward(depth, v, h, x, iterations=60):
    """Two-way time (s) to depth ``depth`` through layers (v: (..., n), h: (..., n−1)).

    Vectorised over leading axes; straight rays within layers, Snell at interfaces.
    """
    n = v.shape[-1]
    tops = _layer_tops(h)  # (..., n)
    bottoms = np.concatenate([tops[..., 1:], np.full(tops.shape[:-1] + (1,), np.inf)], axis=-1)
    # path length of the ray in each layer down to `depth`
    thick_in = np.clip(np.minimum(depth[..., None], bottoms) - tops, 0.0, None)  # (..., n)
    if np.all(x == 0):
        return 2.0 * np.sum(thick_in / v, axis=-1)
    # ray parameter p = sin θ / v; horizontal half-offset X(p) = Σ h_i p v_i/√(1 − p²v_i²)
    used = thick_in > 0
    vmax = np.max(np.where(used, v, 0.0), axis=-1)
    lo = np.zeros(depth.shape)
    hi = np.where(vmax > 0, (1.0 - 1e-12) / np.where(vmax > 0, vmax, 1.0), 0.0)
    half = np.broadcast_to(x / 2.0, depth.shape)
    for _ in range(iterations):
        p = 0.5 * (lo + hi)
        s = p[..., None] * v
        X = np.sum(thick_in * s / np.sqrt(1.0 - s**2), axis=-1)
        big = X > half
        hi = np.where(big, p, hi)
        lo = np.where(big, lo, p)
    p = 0.5 * (lo + hi)
    s = p[..., None] * v
    del n
    return 2.0 * np.sum(thick_in / (v * np.sqrt(1.0 - s**2)), axis=-1)


def layered_time_from_depth(depth_m, earth: LayeredEarth, *, offset_m=0.0):
    """Two-way time (s) to a reflector at ``depth_m`` in a layered earth.

    Notes
    -----
    Zero offset: t = 2 Σ hᵢ/vᵢ over the layers above the reflector (partial last layer).
    With separation x: the ray parameter p solves Σ hᵢ p vᵢ/√(1 − p²vᵢ²) = x/2 (Snell's
    law, found by bisection) and t = 2 Σ hᵢ/(vᵢ√(1 − p²vᵢ²)).

    References
    ----------
    Yilmaz, Ö. (2001). *Seismic Data Analysis*, SEG, §3.1 (layered-earth ray paths).
    doi:10.1190/1.9781560801580
    """
    d = check_nonnegative("depth_m", depth_m, unit="m")
    x = check_nonnegative("offset_m", offset_m, unit="m")
    d, x = np.broadcast_arrays(d, x)
    out = _forward(d.astype(float), earth.velocity, earth.thickness, x)
    return out


def _inverse(tau, v, h, x, iterations=60):
    """Depth for time τ (vectorised over leading axes of tau, v, h) by bisection on depth."""
    lo = np.zeros(tau.shape)
    vmax = np.max(v, axis=-1)
    hi = np.broadcast_to(vmax * tau / 2.0, tau.shape).copy() + 1e-12  # no path is faster than this
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        tm = _forward(mid, v, h, x)
        late = tm > tau
        hi = np.where(late, mid, hi)
        lo = np.where(late, lo, mid)
    return 0.5 * (lo + hi)


def layered_depth_from_time(twt_s, earth: LayeredEarth, *, offset_m=0.0, time_zero_s=0.0):
    """Depth (m) of a reflector from its two-way time in a layered earth.

    Zero offset is exact piecewise-linear; with antenna separation the depth is found
    by bisection on the forward model :func:`layered_time_from_depth`.

    Raises
    ------
    InputError
        Times before time zero, or a separation too large for the time (no real depth).
    """
    tau = apply_time_zero(twt_s, time_zero_s)
    x = check_nonnegative("offset_m", offset_m, unit="m")
    tau, x = np.broadcast_arrays(tau, x)
    v, h = earth.velocity, earth.thickness
    t_min = x / v[0]  # the direct path along the top of the first layer
    if np.any(tau < t_min * (1 - 1e-12)):
        raise InputError("offset_m is too large for the travel time: the direct path between the antennas "
                         "through the top layer takes longer than the pick (no real depth)")
    if np.all(x == 0):
        tops = _layer_tops(h)
        t_tops = 2.0 * np.concatenate([[0.0], np.cumsum(h / v[:-1])])
        k = np.searchsorted(t_tops, tau, side="right") - 1
        return tops[k] + v[k] * (tau - t_tops[k]) / 2.0
    return _inverse(tau.astype(float), v, h, x)


def layered_depth_first_order(twt_s, earth: LayeredEarth, *, offset_m=0.0, time_zero_s=0.0,
                              twt_sd_s=0.0, time_zero_sd_s=0.0) -> DepthEstimate:
    """Depth and first-order standard deviation in a layered earth.

    Partial derivatives of depth with respect to each velocity, thickness, the pick and
    time zero are taken by central differences of :func:`layered_depth_from_time`;
    inputs are independent: σ_d² = Σ (∂d/∂qᵢ · σᵢ)², or with the earth's full covariance C
    of the layer parameters σ_d² = gᵀCg + (∂d/∂t)²(σ_t² + σ_tz²), g = ∂d/∂(v, h).
    """
    d = layered_depth_from_time(twt_s, earth, offset_m=offset_m, time_zero_s=time_zero_s)
    st = check_nonnegative("twt_sd_s", twt_sd_s, unit="s")
    stz = check_nonnegative("time_zero_sd_s", time_zero_sd_s, unit="s")
    var_v = np.zeros(d.shape)
    if earth.covariance is not None:
        var_v = _model_variance_full(twt_s, earth, offset_m=offset_m, time_zero_s=time_zero_s)
    for i in range(earth.velocity.size if earth.covariance is None else 0):
        if earth.velocity_se[i] == 0:
            continue
        step = 1e-6 * earth.velocity[i]
        up, dn = earth.velocity.copy(), earth.velocity.copy()
        up[i] += step
        dn[i] -= step
        du = layered_depth_from_time(twt_s, LayeredEarth(up, earth.thickness, earth.velocity_se, earth.thickness_se),
                                     offset_m=offset_m, time_zero_s=time_zero_s)
        dd = layered_depth_from_time(twt_s, LayeredEarth(dn, earth.thickness, earth.velocity_se, earth.thickness_se),
                                     offset_m=offset_m, time_zero_s=time_zero_s)
        var_v += ((du - dd) / (2 * step) * earth.velocity_se[i]) ** 2
    for i in range(earth.thickness.size if earth.covariance is None else 0):
        if earth.thickness_se[i] == 0:
            continue
        step = 1e-6 * earth.thickness[i]
        up, dn = earth.thickness.copy(), earth.thickness.copy()
        up[i] += step
        dn[i] -= step
        du = layered_depth_from_time(twt_s, LayeredEarth(earth.velocity, up, earth.velocity_se, earth.thickness_se),
                                     offset_m=offset_m, time_zero_s=time_zero_s)
        dd = layered_depth_from_time(twt_s, LayeredEarth(earth.velocity, dn, earth.velocity_se, earth.thickness_se),
                                     offset_m=offset_m, time_zero_s=time_zero_s)
        var_v += ((du - dd) / (2 * step) * earth.thickness_se[i]) ** 2
    tau = apply_time_zero(twt_s, time_zero_s)
    step = 1e-6 * max(float(np.max(tau)), 1e-12)
    dp = layered_depth_from_time(np.asarray(twt_s, dtype=float) + step, earth, offset_m=offset_m,
                                 time_zero_s=time_zero_s)
    dm = layered_depth_from_time(np.asarray(twt_s, dtype=float) - np.minimum(step, tau), earth,
                                 offset_m=offset_m, time_zero_s=time_zero_s)
    dd_dt = (dp - dm) / (step + np.minimum(step, tau))
    sd_pick = np.abs(dd_dt) * st
    sd_tz = np.abs(dd_dt) * stz
    sd_model = np.sqrt(var_v)
    return DepthEstimate(depth=d, depth_sd=np.sqrt(var_v + sd_pick**2 + sd_tz**2), sd_from_velocity=sd_model,
                         sd_from_pick=sd_pick, sd_from_time_zero=sd_tz)


def _model_variance_full(twt_s, earth: LayeredEarth, *, offset_m, time_zero_s):
    """gᵀCg per pick, g the central-difference gradient of depth in (velocity..., thickness...)."""
    params = np.concatenate([earth.velocity, earth.thickness])
    nv = earth.velocity.size
    grads = []
    for i in range(params.size):
        step = 1e-6 * params[i]
        out = []
        for sign in (1.0, -1.0):
            q = params.copy()
            q[i] += sign * step
            e = LayeredEarth(q[:nv], q[nv:], earth.velocity_se, earth.thickness_se)
            out.append(layered_depth_from_time(twt_s, e, offset_m=offset_m, time_zero_s=time_zero_s))
        grads.append((out[0] - out[1]) / (2 * step))
    g = np.stack([np.ravel(a) for a in grads], axis=-1)  # (n_picks, n_params)
    var = np.einsum("ki,ij,kj->k", g, earth.covariance, g)
    return np.clip(var, 0.0, None).reshape(np.shape(grads[0]))


@dataclass(frozen=True)
class MonteCarloDepth:
    """Monte Carlo depth statistics (m) with the draw count and seed used."""

    depth: np.ndarray
    depth_mean: np.ndarray
    depth_sd: np.ndarray
    depth_p05: np.ndarray
    depth_p95: np.ndarray
    draws: int
    seed: int
    rejected: int


def layered_depth_monte_carlo(twt_s, earth: LayeredEarth, *, offset_m=0.0, time_zero_s=0.0, twt_sd_s=0.0,
                              time_zero_sd_s=0.0, draws: int = 2000, seed: int = 0) -> MonteCarloDepth:
    """Depth uncertainty in a layered earth by Monte Carlo.

    Each draw takes every velocity and thickness from a normal distribution about its
    value with its standard error (jointly normal with the earth's covariance when it has one), one time zero for all picks (it is common to the
    record) and an independent pick error per pick; the depth of each pick is computed
    for every draw.  Draws with a non-physical layer (velocity ≤ 0 or > c, thickness
    ≤ 0) or no real depth are rejected and counted.

    Returns
    -------
    MonteCarloDepth
        Nominal depth, and the mean, standard deviation and 5 % / 95 % points of the draws.
    """
    if isinstance(draws, bool) or not isinstance(draws, (int, np.integer)) or draws < 100:
        raise InputError(f"draws must be an integer >= 100, got {draws!r}")
    draws = int(draws)
    seed = check_seed(seed)
    t = np.atleast_1d(check_finite("twt_s", twt_s)).astype(float)
    nominal = layered_depth_from_time(t, earth, offset_m=offset_m, time_zero_s=time_zero_s)
    x = np.broadcast_to(check_nonnegative("offset_m", offset_m, unit="m"), t.shape)
    st = np.broadcast_to(check_nonnegative("twt_sd_s", twt_sd_s, unit="s"), t.shape)
    stz = float(check_nonnegative("time_zero_sd_s", time_zero_sd_s, unit="s"))
    tz = float(check_finite("time_zero_s", time_zero_s))
    rng = np.random.default_rng(seed)
    if earth.covariance is None:
        v = rng.normal(earth.velocity, earth.velocity_se, (draws, earth.velocity.size))
        h = rng.normal(earth.thickness, earth.thickness_se, (draws, earth.thickness.size))
    else:  # correlated layer parameters, e.g. from a joint CMP fit
        both = rng.multivariate_normal(np.concatenate([earth.velocity, earth.thickness]), earth.covariance,
                                       draws, method="eigh")
        v, h = both[:, : earth.velocity.size], both[:, earth.velocity.size:]
    tzd = rng.normal(tz, stz, draws)
    td = rng.normal(t, st, (draws, t.size))
    ok = np.all((v > 0) & (v <= _C), axis=1) & np.all(h > 0, axis=1)
    tau = td - tzd[:, None]
    vv = np.broadcast_to(v[:, None, :], (draws, t.size, v.shape[1]))
    hh = np.broadcast_to(h[:, None, :], (draws, t.size, h.shape[1]))
    xx = np.broadcast_to(x, tau.shape)
    tau_c = np.maximum(tau, 0.0)
    t_min = xx / np.where(ok[:, None], vv[..., 0], 1e8)
    good = ok[:, None] & (tau >= t_min)
    vsafe = np.where(ok[:, None, None], vv, 1e8)
    hsafe = np.where(ok[:, None, None], hh, 1.0)
    if np.all(xx == 0):
        tops = _layer_tops(hsafe)
        t_tops = 2.0 * np.concatenate([np.zeros(tau.shape + (1,)), np.cumsum(hsafe / vsafe[..., :-1], axis=-1)],
                                      axis=-1)
        k = np.sum(t_tops <= tau_c[..., None], axis=-1) - 1
        k = np.clip(k, 0, vsafe.shape[-1] - 1)
        take = lambda a: np.take_along_axis(a, k[..., None], axis=-1)[..., 0]  # noqa: E731
        dep = take(tops) + take(vsafe) * (tau_c - take(t_tops)) / 2.0
    else:
        dep = _inverse(tau_c, vsafe, hsafe, xx)
    dep = np.where(good, dep, np.nan)
    rejected = int(np.count_nonzero(~good))
    return MonteCarloDepth(depth=nominal, depth_mean=np.nanmean(dep, axis=0), depth_sd=np.nanstd(dep, axis=0, ddof=1),
                           depth_p05=np.nanpercentile(dep, 5, axis=0), depth_p95=np.nanpercentile(dep, 95, axis=0),
                           draws=draws, seed=int(seed), rejected=rejected)
