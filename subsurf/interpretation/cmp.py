"""Velocity from CMP/WARR gathers: the normal-moveout fit of one flat reflector and
interval velocities of a stack of reflectors (Dix).

Times are two-way travel times after time zero, in seconds; separations in metres;
velocities in m/s.  Physics module: it never reads files, prints or plots.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import constants

from ..errors import InputError, ModelRangeError, check_nonnegative, check_positive
from ..quantities import accepts_quantities

__all__ = ["CmpFit", "IntervalVelocities", "cmp_twt", "fit_cmp", "dix_interval_velocities"]

_C_M_PER_NS = constants.c * 1e-9


def cmp_twt(offset_m, velocity, t0_s):
    """Normal-moveout time t = √(t₀² + x²/v²) (s) of a flat reflector in a CMP gather.

    References
    ----------
    Dix, C. H. (1955). Seismic velocities from surface measurements. *Geophysics* 20,
    68–86. doi:10.1190/1.1438126
    """
    x = np.asarray(offset_m, dtype=float)
    return np.sqrt(t0_s**2 + (x / velocity) ** 2)


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


@accepts_quantities(offset_m="m", twt_s="s")
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
