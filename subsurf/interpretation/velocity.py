"""Radar velocity from field evidence: diffraction hyperbolas, CMP/WARR gathers,
calibration targets at known depth, and soil descriptions.

Every fit returns its standard errors from the fit covariance scaled by the residual
variance of the picks themselves (the data say how good they are), so a one-standard-
error interval holds the true value about 68 % of the time when the model is right.
Times are two-way travel times after time zero, in seconds; positions in metres;
velocities in m/s.  Internally fits run in ns and m/ns for good conditioning.

This is a physics module: it never reads files, prints or plots.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import constants, optimize

from ..errors import (
    InputError,
    ModelRangeError,
    check_finite,
    check_nonnegative,
    check_positive,
    check_seed,
)

__all__ = [
    "HyperbolaFit",
    "CmpFit",
    "IntervalVelocities",
    "CalibrationVelocity",
    "SoilVelocity",
    "hyperbola_twt",
    "fit_hyperbola",
    "cmp_twt",
    "fit_cmp",
    "dix_interval_velocities",
    "velocity_from_calibration",
    "velocity_from_soil",
]

_C = constants.c
_C_M_PER_NS = _C * 1e-9
#: Huber tuning constant (95 % efficiency at the normal distribution), in units of the
#: robust residual scale.
HUBER_K = 1.345


# --- forward models -----------------------------------------------------------------

def _cylinder_leg_sum(xa, xb, zc, radius, *, iterations: int = 48):
    """Shortest Tx → cylinder surface → Rx path length (m), vectorised.

    ``xa``, ``xb``: horizontal positions of the two antennas relative to the cylinder's
    axis; ``zc``: depth of the axis; ``radius``: cylinder radius.  The specular point on
    a convex reflector minimises the path (Fermat); it lies on the arc between the
    directions from the axis to the two antennas, where the path derivative changes
    sign once, so bisection on the angle converges.
    """
    xa, xb, zc, radius = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (xa, xb, zc, radius)))
    # angle φ measured from the upward vertical through the axis, positive toward +x
    pa = np.arctan2(xa, zc)
    pb = np.arctan2(xb, zc)
    lo, hi = np.minimum(pa, pb), np.maximum(pa, pb)

    def dpath(phi):
        px, pz = radius * np.sin(phi), zc - radius * np.cos(phi)
        ta = np.hypot(px - xa, pz)
        tb = np.hypot(px - xb, pz)
        tx, tz = radius * np.cos(phi), radius * np.sin(phi)
        return ((px - xa) * tx + pz * tz) / ta + ((px - xb) * tx + pz * tz) / tb

    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        pos = dpath(mid) > 0
        hi = np.where(pos, mid, hi)
        lo = np.where(pos, lo, mid)
    phi = 0.5 * (lo + hi)
    px, pz = radius * np.sin(phi), zc - radius * np.cos(phi)
    return np.hypot(px - xa, pz) + np.hypot(px - xb, pz)


def hyperbola_twt(x_m, velocity, x0, depth, *, radius_m=0.0, offset_m=0.0):
    """Two-way travel time (s) over a point diffractor or a buried cylinder.

    Parameters
    ----------
    x_m : array_like
        Antenna midpoint positions along the line, m.
    velocity : float
        Velocity of the ground above the target, m/s.
    x0 : float
        Position of the apex (target's axis), m.
    depth : float
        Depth to the top of the target below the apex, m.
    radius_m : float, optional
        Cylinder radius, m (0: point diffractor).
    offset_m : float, optional
        Transmitter–receiver separation along the line, m (antennas at x ∓ s/2).

    Returns
    -------
    ndarray
        Two-way travel time, s.

    Notes
    -----
    Point diffractor at (x₀, d):
    t = [√((x − s/2 − x₀)² + d²) + √((x + s/2 − x₀)² + d²)] / v.
    Cylinder of radius R with axis at depth d + R: zero offset
    t = 2[√((x − x₀)² + (d + R)²) − R] / v; with separation the specular point on the
    circle is found by minimising the path (Fermat's principle).

    References
    ----------
    Shihab, S. & Al-Nuaimy, W. (2005). Radius estimation for cylindrical objects detected
    by ground penetrating radar. *Subsurface Sensing Technologies and Applications* 6,
    151–166. doi:10.1007/s11220-005-0004-1
    """
    x = np.asarray(x_m, dtype=float)
    dx = x - x0
    s = np.asarray(offset_m, dtype=float)
    r = float(radius_m)
    if r == 0.0:
        path = np.hypot(dx - s / 2, depth) + np.hypot(dx + s / 2, depth)
    elif np.all(s == 0):
        path = 2.0 * (np.hypot(dx, depth + r) - r)
    else:
        path = _cylinder_leg_sum(dx - s / 2, dx + s / 2, depth + r, r)
    return path / velocity


def cmp_twt(offset_m, velocity, t0_s):
    """Normal-moveout time t = √(t₀² + x²/v²) (s) of a flat reflector in a CMP gather.

    References
    ----------
    Dix, C. H. (1955). Seismic velocities from surface measurements. *Geophysics* 20,
    68–86. doi:10.1190/1.1438126
    """
    x = np.asarray(offset_m, dtype=float)
    return np.sqrt(t0_s**2 + (x / velocity) ** 2)


# --- hyperbola fit ------------------------------------------------------------------

@dataclass(frozen=True)
class HyperbolaFit:
    """Result of :func:`fit_hyperbola` (SI units).

    Attributes
    ----------
    velocity, velocity_se : float, m/s
    x0, x0_se : float, m (apex position along the line)
    depth, depth_se : float, m (to the top of the target below the apex)
    radius, radius_se : float, m (``radius_se`` is 0 when the radius was fixed)
    rms_s : float, s (root-mean-square misfit of all picks)
    weights : ndarray (final robust weight per pick, 1 = full weight)
    residuals_s : ndarray, s (pick minus fitted curve)
    downweighted : ndarray of int (indices of picks with weight < 1)
    covariance : ndarray (parameters velocity, x0, depth[, radius], SI units)
    residual_scale_s : float, s (robust scale of the residuals used for the loss)
    offset_m, time_zero_s : float (as used)
    radius_fitted : bool
    """

    velocity: float
    velocity_se: float
    x0: float
    x0_se: float
    depth: float
    depth_se: float
    radius: float
    radius_se: float
    rms_s: float
    weights: np.ndarray
    residuals_s: np.ndarray
    downweighted: np.ndarray
    covariance: np.ndarray
    residual_scale_s: float
    offset_m: float
    time_zero_s: float
    radius_fitted: bool
    n_picks: int = 0
    parameters: tuple = field(default=("velocity", "x0", "depth"))

    @property
    def permittivity(self) -> float:
        """Apparent relative permittivity (c/v)² of the ground above the target."""
        return (_C / self.velocity) ** 2

    def twt(self, x_m):
        """Fitted two-way time (s, before adding back time zero) at positions ``x_m``."""
        return hyperbola_twt(x_m, self.velocity, self.x0, self.depth, radius_m=self.radius,
                             offset_m=self.offset_m)


def _huber_weights(r, c):
    a = np.abs(r)
    return np.where(a <= c, 1.0, c / np.maximum(a, 1e-300))


def _numeric_jacobian(fun, p, rel=1e-6):
    p = np.asarray(p, dtype=float)
    cols = []
    for i in range(p.size):
        h = rel * max(abs(p[i]), 1e-3)
        up, dn = p.copy(), p.copy()
        up[i] += h
        dn[i] -= h
        cols.append((fun(up) - fun(dn)) / (2 * h))
    return np.column_stack(cols)


def _robust_covariance(jac, r, c):
    """Huber's sandwich covariance of an M-estimate, scaled by the residuals.

    cov = K² · [Σψ(rᵢ)²/(n − p)] / [mean ψ'(rᵢ)]² · (JᵀJ)⁻¹,
    K = 1 + (p/n)·var(ψ')/mean(ψ')²  (Huber 1981, *Robust Statistics*, Wiley, §7.6).
    With no down-weighted residual this is the familiar s²(JᵀJ)⁻¹, s² = Σr²/(n − p).
    """
    n, p = jac.shape
    psi = np.clip(r, -c, c)
    dpsi = (np.abs(r) <= c).astype(float)
    m = dpsi.mean()
    if m == 0:
        m = 1.0 / n
    k = 1.0 + (p / n) * dpsi.var() / m**2
    scale2 = k**2 * np.sum(psi**2) / (n - p) / m**2
    jtj = jac.T @ jac
    try:
        inv = np.linalg.inv(jtj)
    except np.linalg.LinAlgError:
        inv = np.linalg.pinv(jtj)
    return scale2 * inv


def fit_hyperbola(x_m, twt_s, *, radius_m: float | None = 0.0, offset_m: float = 0.0,
                  time_zero_s: float = 0.0) -> HyperbolaFit:
    """Fit a diffraction hyperbola to picks by robust (Huber) least squares.

    Parameters
    ----------
    x_m : array_like, shape (n,)
        Antenna midpoint positions along the line, m.
    twt_s : array_like, shape (n,)
        Picked two-way travel times, s (before subtracting ``time_zero_s``).
    radius_m : float or None, optional
        Radius of a cylindrical target, m; 0 for a point diffractor; ``None`` to fit it
        (needs at least 5 picks and a well-sampled hyperbola; a radius is weakly
        determined by travel times alone).
    offset_m : float, optional
        Transmitter–receiver separation along the line, m.
    time_zero_s : float, optional
        Time zero to subtract from the picks, s.

    Returns
    -------
    HyperbolaFit

    Raises
    ------
    InputError
        Fewer than 4 picks (5 with a fitted radius), non-finite values, times at or
        before time zero, picks on one flank of the apex only.
    ModelRangeError
        The curvature implies a velocity faster than light in air, or the fit fails.

    Notes
    -----
    The forward model is :func:`hyperbola_twt`.  A first ordinary least-squares fit gives
    the residual scale σ̂ = 1.4826·MAD; the final fit uses the Huber loss with threshold
    1.345·σ̂ (``scipy.optimize.least_squares``).  Standard errors come from Huber's
    sandwich covariance scaled by the residuals (see ``_robust_covariance``), i.e. the
    picks' own scatter sets the uncertainty.

    References
    ----------
    Huber, P. J. (1981). *Robust Statistics*. Wiley. doi:10.1002/0471725250
    """
    x = check_finite("x_m", x_m).ravel()
    t = check_finite("twt_s", twt_s).ravel()
    if x.size != t.size:
        raise InputError(f"x_m and twt_s must have the same length, got {x.size} and {t.size}")
    s = float(check_nonnegative("offset_m", offset_m, unit="m"))
    tz = float(check_finite("time_zero_s", time_zero_s))
    fit_radius = radius_m is None
    r_fixed = 0.0 if fit_radius else float(check_nonnegative("radius_m", radius_m, unit="m"))
    need = 5 if fit_radius else 4
    if x.size < need:
        raise InputError(f"a hyperbola fit needs at least {need} picks, got {x.size}")
    tt = (t - tz) * 1e9  # ns after time zero
    if np.any(tt <= 0):
        i = int(np.argmax(tt <= 0))
        raise InputError(f"twt_s[{i}] = {t[i]:.6g} s is not after time zero ({tz:.6g} s)")
    order = np.argsort(x)
    i_apex = int(np.argmin(tt))
    if x[i_apex] in (x[order[0]], x[order[-1]]) or np.ptp(x) == 0:
        raise InputError(
            "the picks lie on one flank of the hyperbola only (the earliest pick is at an end "
            f"of the picked positions, x = {x[i_apex]:.4g} m); pick both flanks around the apex")

    # starting values: apex at the earliest pick; slope of t² against (x − x₀)² is 4/v²
    x0_0 = x[i_apex]
    slope, _ = np.polyfit((x - x0_0) ** 2, tt**2, 1)
    v0 = 2.0 / np.sqrt(slope) if slope > 0 else 0.1
    v0 = float(np.clip(v0, 0.02, 0.29))
    half = v0 * tt[i_apex] / 2
    d0 = float(np.sqrt(max(half**2 - (s / 2) ** 2, (0.05 * half) ** 2)))
    p0 = [v0, x0_0, d0] + ([0.05] if fit_radius else [])
    lower = [1e-4, x.min(), 0.0] + ([0.0] if fit_radius else [])
    upper = [10.0, x.max(), np.inf] + ([np.inf] if fit_radius else [])
    p0 = np.clip(p0, np.array(lower) + 1e-9, upper)

    def model(p):
        r = p[3] if fit_radius else r_fixed
        return hyperbola_twt(x, p[0], p[1], p[2], radius_m=r, offset_m=s)

    def resid(p):
        return model(p) - tt

    try:
        first = optimize.least_squares(resid, p0, bounds=(lower, upper), x_scale="jac")
        r1 = -first.fun
        scale = 1.4826 * np.median(np.abs(r1 - np.median(r1)))
        scale = max(scale, 1e-9 * np.max(tt))
        c = HUBER_K * scale
        final = optimize.least_squares(resid, first.x, bounds=(lower, upper), loss="huber",
                                       f_scale=c, x_scale="jac")
    except (ValueError, np.linalg.LinAlgError) as exc:  # pragma: no cover - defensive
        raise ModelRangeError(f"the hyperbola fit failed: {exc}") from None
    p = final.x
    r = tt - model(p)
    if p[0] > _C_M_PER_NS * (1 + 1e-9):
        raise ModelRangeError(
            f"the hyperbola's curvature implies a velocity of {p[0]:.4g} m/ns, faster than light "
            f"in air ({_C_M_PER_NS:.4g} m/ns); check position and time units, antenna separation, "
            "time zero and that the picks follow one hyperbola")
    left = np.count_nonzero(x < p[1])
    right = np.count_nonzero(x > p[1])
    if left == 0 or right == 0:
        raise InputError(
            f"the fitted apex (x0 = {p[1]:.4g} m) lies at the end of the picks: picks on one flank "
            "only; pick both flanks around the apex")
    jac = _numeric_jacobian(model, p)
    cov_n = _robust_covariance(jac, r, c)
    se = np.sqrt(np.clip(np.diag(cov_n), 0, None))
    w = _huber_weights(r, c)
    # back to SI: velocity m/ns → m/s, times ns → s
    conv = np.array([1e9, 1.0, 1.0] + ([1.0] if fit_radius else []))
    cov = cov_n * np.outer(conv, conv)
    names = ("velocity", "x0", "depth") + (("radius",) if fit_radius else ())
    return HyperbolaFit(
        velocity=float(p[0] * 1e9), velocity_se=float(se[0] * 1e9),
        x0=float(p[1]), x0_se=float(se[1]),
        depth=float(p[2]), depth_se=float(se[2]),
        radius=float(p[3]) if fit_radius else r_fixed,
        radius_se=float(se[3]) if fit_radius else 0.0,
        rms_s=float(np.sqrt(np.mean(r**2)) * 1e-9),
        weights=w, residuals_s=r * 1e-9, downweighted=np.flatnonzero(w < 1.0),
        covariance=cov, residual_scale_s=float(scale * 1e-9), offset_m=s, time_zero_s=tz,
        radius_fitted=fit_radius, n_picks=int(x.size), parameters=names,
    )


# --- CMP / WARR -----------------------------------------------------------------------

@dataclass(frozen=True)
class CmpFit:
    """Result of :func:`fit_cmp` (SI units).

    Attributes
    ----------
    velocity, velocity_se : float, m/s (RMS velocity to the reflector)
    t0, t0_se : float, s (zero-offset two-way time)
    rms_s : float, s (root-mean-square misfit in time)
    residuals_s : ndarray, s
    depth, depth_se : float, m (v·t₀/2, first-order error with the v–t₀ covariance)
    covariance : ndarray (velocity, t0)
    """

    velocity: float
    velocity_se: float
    t0: float
    t0_se: float
    rms_s: float
    residuals_s: np.ndarray
    depth: float
    depth_se: float
    covariance: np.ndarray
    n_picks: int = 0

    def twt(self, offset_m):
        """Fitted two-way time (s) at antenna separations ``offset_m``."""
        return cmp_twt(offset_m, self.velocity, self.t0)


def fit_cmp(offset_m, twt_s) -> CmpFit:
    """Velocity and zero-offset time of a flat reflector from a CMP or WARR gather.

    Parameters
    ----------
    offset_m : array_like, shape (n,)
        Transmitter–receiver separations, m (≥ 0).
    twt_s : array_like, shape (n,)
        Reflection two-way times after time zero, s (> 0).

    Returns
    -------
    CmpFit

    Notes
    -----
    t² = t₀² + x²/v² is a straight line in x²: weighted least squares of t² on x² with
    weights 1/(4t²) (the variance of t² is 4t²σ_t² when every pick has the same time
    error σ_t), covariance scaled by the residual variance; then v = b^(−1/2),
    t₀ = √a with first-order (delta-method) standard errors.

    References
    ----------
    Dix, C. H. (1955). Seismic velocities from surface measurements. *Geophysics* 20,
    68–86. doi:10.1190/1.1438126
    """
    x = check_nonnegative("offset_m", offset_m, unit="m").ravel()
    t = check_positive("twt_s", twt_s, unit="s").ravel()
    if x.size != t.size:
        raise InputError(f"offset_m and twt_s must have the same length, got {x.size} and {t.size}")
    if x.size < 3:
        raise InputError(f"a CMP fit needs at least 3 picks, got {x.size}")
    if np.unique(x).size < 2:
        raise InputError("a CMP fit needs picks at two or more different antenna separations")
    tn = t * 1e9
    X = np.column_stack([np.ones_like(x), x**2])
    y = tn**2
    sw = 1.0 / (2.0 * tn)  # sqrt of weights 1/(4 t²)
    coef, *_ = np.linalg.lstsq(X * sw[:, None], y * sw, rcond=None)
    a, b = coef
    if b <= 0:
        raise ModelRangeError("the reflection times do not increase with separation (slope of t² "
                              "against x² ≤ 0); check that the picks follow one reflection")
    v = 1.0 / np.sqrt(b)
    if v > _C_M_PER_NS * (1 + 1e-9):
        raise ModelRangeError(f"the moveout implies a velocity of {v:.4g} m/ns, faster than light in air "
                              f"({_C_M_PER_NS:.4g} m/ns); check separations and times")
    if a <= 0:
        raise ModelRangeError(f"the fitted zero-offset time² is {a:.4g} ns² ≤ 0; the picks do not "
                              "describe a reflection below the surface")
    n = x.size
    rw = (y - X @ coef) * sw
    dof = n - 2
    s2 = np.sum(rw**2) / dof if dof > 0 else 0.0
    cov_ab = s2 * np.linalg.inv((X * sw[:, None]).T @ (X * sw[:, None]))
    t0 = np.sqrt(a)
    jac = np.array([[0.0, -0.5 * b**-1.5], [0.5 / t0, 0.0]])  # d(v, t0)/d(a, b)
    cov_n = jac @ cov_ab @ jac.T
    se = np.sqrt(np.clip(np.diag(cov_n), 0, None))
    r = tn - np.sqrt(a + b * x**2)
    depth = v * t0 / 2
    g = np.array([t0 / 2, v / 2])
    depth_se = float(np.sqrt(max(g @ cov_n @ g, 0.0)))
    cov = cov_n * np.outer([1e9, 1e-9], [1e9, 1e-9])
    return CmpFit(velocity=float(v * 1e9), velocity_se=float(se[0] * 1e9), t0=float(t0 * 1e-9),
                  t0_se=float(se[1] * 1e-9), rms_s=float(np.sqrt(np.mean(r**2)) * 1e-9),
                  residuals_s=r * 1e-9, depth=float(depth), depth_se=depth_se, covariance=cov,
                  n_picks=int(n))


@dataclass(frozen=True)
class IntervalVelocities:
    """Interval velocities and thicknesses from RMS velocities (Dix), SI units."""

    velocity: np.ndarray
    velocity_se: np.ndarray
    thickness: np.ndarray
    thickness_se: np.ndarray
    t0: np.ndarray


def dix_interval_velocities(t0_s, rms_velocity, *, t0_se=0.0, rms_velocity_se=0.0) -> IntervalVelocities:
    """Interval velocities of layers from a stack of CMP results (Dix equation).

    Parameters
    ----------
    t0_s : array_like, shape (n,)
        Zero-offset two-way times of the reflectors, s, strictly increasing.
    rms_velocity : array_like, shape (n,)
        RMS (stacking) velocities to each reflector, m/s.
    t0_se, rms_velocity_se : float or array_like, optional
        Standard errors, propagated to first order (reflectors taken as independent).

    Returns
    -------
    IntervalVelocities
        Velocity and thickness of each layer above each reflector.

    Notes
    -----
    v_n² = (V_n² t_n − V_{n−1}² t_{n−1}) / (t_n − t_{n−1}),  h_n = v_n (t_n − t_{n−1})/2.

    References
    ----------
    Dix, C. H. (1955). Seismic velocities from surface measurements. *Geophysics* 20,
    68–86. doi:10.1190/1.1438126
    """
    t = check_positive("t0_s", t0_s, unit="s").ravel()
    V = check_positive("rms_velocity", rms_velocity, unit="m/s").ravel()
    if t.size != V.size:
        raise InputError(f"t0_s and rms_velocity must have the same length, got {t.size} and {V.size}")
    if np.any(np.diff(t) <= 0):
        raise InputError("t0_s must be strictly increasing (reflectors ordered from the top)")
    st = np.broadcast_to(check_nonnegative("t0_se", t0_se, unit="s"), t.shape).astype(float)
    sV = np.broadcast_to(check_nonnegative("rms_velocity_se", rms_velocity_se, unit="m/s"), t.shape).astype(float)
    tp = np.concatenate([[0.0], t[:-1]])
    Vp = np.concatenate([[0.0], V[:-1]])
    num = V**2 * t - Vp**2 * tp
    dt = t - tp
    v2 = num / dt
    if np.any(v2 <= 0):
        i = int(np.argmax(v2 <= 0))
        raise ModelRangeError(f"reflector {i}: the RMS velocities imply an imaginary interval velocity "
                              "(V_n²t_n < V_(n-1)²t_(n-1)); the stack is inconsistent")
    v = np.sqrt(v2)
    # first-order propagation: partial derivatives of v_n
    dv_dV = V * t / (v * dt)
    dv_dt = (V**2 - v2) / (2 * v * dt)
    dv_dVp = -Vp * tp / (v * dt)
    dv_dtp = (v2 - Vp**2) / (2 * v * dt)
    stp = np.concatenate([[0.0], st[:-1]])
    sVp = np.concatenate([[0.0], sV[:-1]])
    vse = np.sqrt((dv_dV * sV) ** 2 + (dv_dt * st) ** 2 + (dv_dVp * sVp) ** 2 + (dv_dtp * stp) ** 2)
    h = v * dt / 2
    # h = v·dt/2: add the dt terms via the chain rule
    dh_dV = dv_dV * dt / 2
    dh_dVp = dv_dVp * dt / 2
    dh_dt = dv_dt * dt / 2 + v / 2
    dh_dtp = dv_dtp * dt / 2 - v / 2
    hse = np.sqrt((dh_dV * sV) ** 2 + (dh_dt * st) ** 2 + (dh_dVp * sVp) ** 2 + (dh_dtp * stp) ** 2)
    return IntervalVelocities(velocity=v, velocity_se=vse, thickness=h, thickness_se=hse, t0=t)


# --- calibration targets ---------------------------------------------------------------

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


# --- soil description -------------------------------------------------------------------

@dataclass(frozen=True)
class SoilVelocity:
    """Velocity of a described soil with its spread from the spread of the inputs."""

    velocity: float
    velocity_sd: float
    velocity_p05: float
    velocity_p95: float
    draws: int
    seed: int
    samples: np.ndarray = field(repr=False)


def velocity_from_soil(soil, freq_hz: float, *, sd: dict | None = None, draws: int = 4000,
                       seed: int = 0) -> SoilVelocity:
    """Phase velocity (m/s) of a described soil, with Monte Carlo spread from its inputs.

    Parameters
    ----------
    soil : subsurf.soil.Soil
        The nominal description (any model the soil package offers).
    freq_hz : float
        Centre frequency of the antenna, Hz.
    sd : dict, optional
        Standard deviation of each uncertain input, keyed by the Soil field name
        (e.g. ``{"moisture": 0.03, "temp_c": 3.0}``), in the field's own units.
        Draws are normal, clipped to be non-negative (fractions also ≤ 1; moisture
        also at most the soil's porosity).
    draws : int, optional
        Number of Monte Carlo draws (≥ 100).
    seed : int, optional
        Seed of ``numpy.random.default_rng``.

    Returns
    -------
    SoilVelocity
        Velocity at the nominal inputs, the standard deviation and 5–95 % range of the
        draws, and the draw count and seed used.

    Notes
    -----
    The soil package gives ε(f) and σ; the velocity is the exact phase velocity ω/β of
    :func:`subsurf.propagation.wave_properties`.
    """
    import dataclasses

    from ..waves.propagation import wave_properties

    f = float(check_positive("freq_hz", freq_hz, unit="Hz"))
    if isinstance(draws, bool) or not isinstance(draws, (int, np.integer)) or draws < 100:
        raise InputError(f"draws must be an integer >= 100 for a meaningful spread, got {draws!r}")
    seed = check_seed(seed)
    eps, sigma = soil.electrical(f)
    v_nom = float(np.asarray(wave_properties(eps, sigma, f).velocity).ravel()[0])
    rng = np.random.default_rng(seed)
    changes = {}
    fractions = {"moisture", "sand", "clay", "porosity"}
    for name, s in (sd or {}).items():
        if not hasattr(soil, name):
            raise InputError(f"sd: the soil description has no field {name!r}")
        base = getattr(soil, name)
        if base is None:
            raise InputError(f"sd: field {name!r} is not set in the soil description, so it cannot vary")
        if isinstance(base, str) or np.size(base) != 1:
            raise InputError(f"sd: field {name!r} must be a single number to vary, got {base!r}")
        s = float(check_nonnegative(f"sd[{name!r}]", s))
        val = rng.normal(float(np.asarray(base, dtype=float)), s, int(draws))
        val = np.clip(val, 0.0, 1.0 if name in fractions else None)
        changes[name] = val
    porosity = getattr(soil, "porosity_value", None)
    if "moisture" in changes and "porosity" not in changes and porosity is not None:
        # water cannot exceed the pore space: clip the draws there (Soil refuses θ > φ)
        changes["moisture"] = np.minimum(changes["moisture"], porosity)
    if changes:
        varied = dataclasses.replace(soil, **changes)
        eps_d, sigma_d = varied.electrical(f)
        v = np.asarray(wave_properties(eps_d, sigma_d, f).velocity, dtype=float).ravel()
    else:
        v = np.full(int(draws), v_nom)
    return SoilVelocity(velocity=v_nom, velocity_sd=float(np.std(v, ddof=1)),
                        velocity_p05=float(np.percentile(v, 5)), velocity_p95=float(np.percentile(v, 95)),
                        draws=int(draws), seed=int(seed), samples=v)
