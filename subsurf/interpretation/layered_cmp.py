"""A layered velocity model from a CMP/WARR gather with several flat reflectors.

The t²–x² fit of each reflector (:func:`subsurf.interpretation.cmp.fit_cmp`) returns an
RMS velocity, and Dix's equation turns those into interval velocities; both rest on the
hyperbolic moveout t² = t₀² + x²/V², which is exact only in homogeneous ground.  Below
the first layer the moveout is not hyperbolic and the bias grows with the ratio of the
spread to the reflector depth.  :func:`fit_layered_cmp` therefore fits all reflectors
at once with the exact travel times of straight rays refracted at every interface
(Snell's law, :func:`subsurf.interpretation.layers.layered_time_from_depth`), starting
from the Dix values, and returns the interval velocities and thicknesses with their full
covariance, so that depths of deeper reflectors, and depths converted through the model,
carry honest, correlated errors.

Physics module: SI units, no files, no printing.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import constants, optimize

from ..errors import InputError, ModelRangeError, check_nonnegative, check_positive
from .cmp import dix_interval_velocities, fit_cmp
from .layers import LayeredEarth, layered_time_from_depth

__all__ = ["LayeredCmpFit", "fit_layered_cmp", "HYPERBOLIC_SPREAD_LIMIT", "fit_flags",
           "RELATIVE_SE_LIMIT", "CORRELATION_LIMIT"]

_C_M_PER_NS = constants.c * 1e-9

#: Largest spread-to-depth ratio x_max/z at which the hyperbolic (t²–x²) moveout of a
#: reflector below other layers is taken as unbiased.  Common practice in reflection
#: seismology is a spread about equal to the reflector depth (Yilmaz 2001, §3.1, from
#: memory); beyond it the fourth-order moveout term (Taner & Koehler 1969) matters.
HYPERBOLIC_SPREAD_LIMIT = 1.0
#: A fitted parameter whose standard error exceeds this fraction of its value is
#: flagged as poorly constrained (our stated limit).
RELATIVE_SE_LIMIT = 0.2
#: Two fitted parameters whose correlation exceeds this in magnitude are flagged as
#: not separately determined (our stated limit).
CORRELATION_LIMIT = 0.95


@dataclass(frozen=True)
class LayeredCmpFit:
    """Result of :func:`fit_layered_cmp` (SI units); reflector k is the base of layer k.

    Attributes
    ----------
    velocity, velocity_se : ndarray, shape (n,), m/s (interval velocity of each layer)
    thickness, thickness_se : ndarray, shape (n,), m
    reflector_depth, reflector_depth_se : ndarray, shape (n,), m (Σ of the thicknesses above)
    covariance : ndarray, shape (2n, 2n) (velocity..., thickness...)
    rms_s : float, s; residuals_s : list of ndarray per reflector, s
    spread_ratio : ndarray, shape (n,) (largest separation / reflector depth)
    dix_depth : ndarray, shape (n,), m (depths from the t²–x² fits and Dix, for comparison)
    n_picks : int
    """

    velocity: np.ndarray
    velocity_se: np.ndarray
    thickness: np.ndarray
    thickness_se: np.ndarray
    reflector_depth: np.ndarray
    reflector_depth_se: np.ndarray
    covariance: np.ndarray
    rms_s: float
    residuals_s: list
    spread_ratio: np.ndarray
    dix_depth: np.ndarray
    n_picks: int

    def earth(self) -> LayeredEarth:
        """The model as a :class:`LayeredEarth`: the deepest layer continues as the half-space."""
        n = self.velocity.size
        keep = list(range(n)) + list(range(n, 2 * n - 1))  # all velocities, all thicknesses but the last
        return LayeredEarth.from_thicknesses(self.velocity, self.thickness[:-1],
                                             covariance=self.covariance[np.ix_(keep, keep)])


def _times(params, offsets, n):
    """Two-way times (ns) of every reflector's picks for params (v in m/ns, h in m)."""
    v, h = params[:n] * 1e9, params[n:]
    out = []
    for k, x in enumerate(offsets):
        earth = LayeredEarth(v[: k + 1], h[:k], np.zeros(k + 1), np.zeros(k))
        out.append(layered_time_from_depth(np.full(x.shape, h[: k + 1].sum()), earth, offset_m=x) * 1e9)
    return out


def fit_layered_cmp(offsets_m, twts_s) -> LayeredCmpFit:
    """Interval velocities and thicknesses of flat layers from a CMP gather of several reflectors.

    Parameters
    ----------
    offsets_m, twts_s : sequence of array_like
        One array per reflector, ordered from the top: antenna separations (m, >= 0) and
        two-way times after time zero (s, > 0) of that reflector's picks.

    Returns
    -------
    LayeredCmpFit

    Notes
    -----
    Model: layer i has velocity vᵢ and thickness hᵢ; reflector k lies at z_k = Σ_{i<=k} hᵢ.
    The time of a pick at separation x is that of the ray with parameter p solving
    Σ hᵢ p vᵢ/√(1 − p²vᵢ²) = x/2 (Snell), t = 2 Σ hᵢ/(vᵢ√(1 − p²vᵢ²)).  All picks are fitted
    together by least squares in time (equal pick errors), starting from the per-reflector
    t²–x² fits and Dix's interval velocities; the covariance is s²(JᵀJ)⁻¹ with
    s² = Σr²/(N − 2n), so the picks' own scatter sets the errors.  σ(z_k)² = 1ᵀC_hh1 over
    the thicknesses above reflector k.

    References
    ----------
    Dix, C. H. (1955). Seismic velocities from surface measurements. *Geophysics* 20,
    68–86. doi:10.1190/1.1438126
    Taner, M. T. & Koehler, F. (1969). Velocity spectra — digital computer derivation and
    applications of velocity functions. *Geophysics* 34, 859–881. doi:10.1190/1.1440058
    Yilmaz, Ö. (2001). *Seismic Data Analysis*, SEG, §3.1. doi:10.1190/1.9781560801580
    """
    if len(offsets_m) != len(twts_s) or len(offsets_m) < 1:
        raise InputError("give one offsets array and one times array per reflector (at least one reflector)")
    xs = [check_nonnegative(f"offsets_m[{k}]", x, unit="m").ravel() for k, x in enumerate(offsets_m)]
    ts = [check_positive(f"twts_s[{k}]", t, unit="s").ravel() for k, t in enumerate(twts_s)]
    n = len(xs)
    singles = [fit_cmp(x, t) for x, t in zip(xs, ts)]
    t0 = np.array([f.t0 for f in singles])
    if np.any(np.diff(t0) <= 0):
        raise InputError("reflectors must be ordered from the top: their zero-offset times must increase "
                         f"(got {', '.join(f'{v * 1e9:.4g} ns' for v in t0)})")
    dix = dix_interval_velocities(t0, [f.velocity for f in singles])
    dix_depth = np.cumsum(dix.thickness)
    p0 = np.concatenate([np.clip(dix.velocity * 1e-9, 0.01, 0.99 * _C_M_PER_NS), dix.thickness])
    tns = [t * 1e9 for t in ts]

    def resid(p):
        return np.concatenate([m - t for m, t in zip(_times(p, xs, n), tns)])

    lower = np.concatenate([np.full(n, 1e-3), np.full(n, 1e-6)])
    upper = np.concatenate([np.full(n, _C_M_PER_NS), np.full(n, np.inf)])
    n_picks = sum(x.size for x in xs)
    if n_picks <= 2 * n:
        raise InputError(f"a layered fit of {n} reflectors needs more than {2 * n} picks, got {n_picks}")
    sol = optimize.least_squares(resid, np.clip(p0, lower * 1.0001, upper * 0.9999), bounds=(lower, upper),
                                 x_scale="jac", xtol=1e-12, ftol=1e-12)
    if not sol.success:  # pragma: no cover - defensive
        raise ModelRangeError(f"the layered CMP fit did not converge: {sol.message}")
    p, r = sol.x, sol.fun
    if np.any(p[:n] >= _C_M_PER_NS * (1 - 1e-9)):
        raise ModelRangeError("the layered fit drives an interval velocity to the speed of light; the picks do "
                              "not describe flat layers (check the reflector assignment and times)")
    jac = sol.jac
    s2 = float(r @ r) / (n_picks - 2 * n)
    try:
        cov_n = s2 * np.linalg.inv(jac.T @ jac)
    except np.linalg.LinAlgError:
        cov_n = s2 * np.linalg.pinv(jac.T @ jac)
    scale = np.concatenate([np.full(n, 1e9), np.ones(n)])  # m/ns -> m/s; m stays m
    cov = cov_n * np.outer(scale, scale)
    se = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    lower_tri = np.tril(np.ones((n, n)))
    cov_h = cov[n:, n:]
    depth = lower_tri @ p[n:]
    depth_se = np.sqrt(np.clip(np.einsum("ki,ij,kj->k", lower_tri, cov_h, lower_tri), 0.0, None))
    split = np.cumsum([x.size for x in xs])[:-1]
    spread = np.array([x.max() for x in xs]) / depth
    return LayeredCmpFit(velocity=p[:n] * 1e9, velocity_se=se[:n], thickness=p[n:].copy(), thickness_se=se[n:],
                         reflector_depth=depth, reflector_depth_se=depth_se, covariance=cov,
                         rms_s=float(np.sqrt(np.mean(r**2)) * 1e-9),
                         residuals_s=[a * 1e-9 for a in np.split(r, split)], spread_ratio=spread,
                         dix_depth=dix_depth, n_picks=int(n_picks))


def fit_flags(names, values, covariance, *, relative_se_limit: float = RELATIVE_SE_LIMIT,
              correlation_limit: float = CORRELATION_LIMIT, positions=()) -> list[str]:
    """Plain-language flags for poorly constrained fit parameters.

    A parameter is flagged when its standard error exceeds ``relative_se_limit`` of its
    magnitude (not for the names in ``positions``, e.g. an apex position, whose size
    depends on where the line starts); a pair when the magnitude of their correlation exceeds
    ``correlation_limit`` (they trade off against each other; the picks determine a
    combination of them better than either alone).
    """
    values = np.asarray(values, dtype=float)
    cov = np.asarray(covariance, dtype=float)
    se = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    flags = []
    for name, v, s in zip(names, values, se):
        if name in positions:
            continue
        if v != 0 and s >= abs(v):
            places = max(0, 1 - int(np.floor(np.log10(s))))  # two significant digits of the error
            flags.append(f"{name} poorly constrained: {v:.{places}f} ± {s:.{places}f}, not distinguishable from 0 "
                         f"(standard error above the value itself; limit {relative_se_limit:.0%} of it)")
        elif v != 0 and s > relative_se_limit * abs(v):
            flags.append(f"{name} poorly constrained: standard error {s / abs(v):.0%} of its value "
                         f"(limit {relative_se_limit:.0%})")
        elif v == 0 and s > 0:
            flags.append(f"{name} poorly constrained: fitted as 0 with a standard error of {s:.3g}")
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(se, se)
    for i in range(len(names)):
        for j in range(i + 1, len(names)):
            if np.isfinite(corr[i, j]) and abs(corr[i, j]) > correlation_limit:
                flags.append(f"{names[i]} and {names[j]} strongly correlated ({corr[i, j]:+.3f}, limit "
                             f"±{correlation_limit}): the picks fix a combination of them better than either "
                             "alone; use them with their covariance")
    return flags
