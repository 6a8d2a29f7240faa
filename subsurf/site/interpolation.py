"""Point samples to the grid: ordinary kriging with a fitted variogram, or a thin-plate spline.

:func:`interpolate_quantity` chooses per soil quantity (``[soil] interpolation``):

* ``"kriging"``: ordinary kriging of the residuals with a fitted variogram
  (:mod:`subsurf.site.kriging`); the kriging variance (nugget included) is the
  interpolation variance, and a sample's measurement variance is added only where it
  exceeds the fitted nugget (the nugget already holds the measurement error).  Needs at
  least :data:`~subsurf.site.kriging.MIN_KRIGING_SAMPLES` samples of the quantity.
* ``"spline"``: :func:`interpolate_samples`, below.
* ``"auto"`` (default): kriging where there are enough samples, the spline elsewhere.

Either way the method, and for kriging the variogram and the leave-one-out statistics,
are returned as attributes for the ``NAME_interp_sd`` layer; kriging also issues a note.

The thin-plate spline
---------------------
``scipy.interpolate.RBFInterpolator`` (thin-plate spline with a linear polynomial, no
smoothing, so the surface passes through every sample), its residual surface clipped to
the range of the sample residuals.  Its uncertainty is estimated from leave-one-out
cross-validation: each sample is predicted from the others, and the squared errors e_i²
are fitted with a linear model e² = c·d against the distance d_i to the nearest other
sample (least squares through the origin).  At a cell at distance d from the nearest
sample the interpolation variance is min(c·d, s²), with s² the variance of the sample
residuals; the measurement standard deviation of the nearest sample is added in
quadrature.
"""

from __future__ import annotations

import numpy as np

from ..errors import FileInputError

__all__ = ["interpolate_quantity", "interpolate_samples", "check_layout"]


def interpolate_quantity(q: str, sx, sy, values, px, py, *, sample_sd, path, rows, method="auto",
                         variogram="exponential", survey_path=None):
    """Residuals of quantity ``q`` interpolated to points by the chosen method (module notes).

    Returns
    -------
    estimate, interp_sd, total_sd : ndarray
        Shaped like ``px``; ``total_sd`` combines interpolation and measurement uncertainty.
    info : dict
        Attributes describing the method (``interpolation_method``; for kriging the
        variogram and leave-one-out statistics, prefixed ``variogram_`` and ``loo_``).
    """
    from scipy.spatial import cKDTree

    from .kriging import MIN_KRIGING_SAMPLES, krige
    from .vectors import note

    sx, sy, values = (np.asarray(a, float) for a in (sx, sy, values))
    n = values.size
    if method == "kriging" and n < MIN_KRIGING_SAMPLES:
        raise FileInputError(survey_path or path, f"[soil] interpolation: kriging {q} needs at least "
                             f"{MIN_KRIGING_SAMPLES} samples with a value, the samples give {n}; use "
                             "interpolation = \"auto\" or \"spline\"")
    use_kriging = method == "kriging" or (method == "auto" and n >= MIN_KRIGING_SAMPLES and np.ptp(values) > 0)
    if not use_kriging:
        est, isd, msd = interpolate_samples(sx, sy, values, px, py, sample_sd=sample_sd, path=path, rows=rows)
        why = "chosen" if method == "spline" else f"fewer than {MIN_KRIGING_SAMPLES} samples for kriging"
        return est, isd, np.sqrt(isd**2 + msd**2), {
            "interpolation_method": f"thin-plate spline of {n} samples ({why}); variance min(c d, s^2) from "
                                    "leave-one-out errors"}
    pts = np.column_stack([sx, sy])
    check_layout(pts, rows=np.asarray(rows), path=path)
    try:
        kr = krige(sx, sy, values, px, py, model=variogram)
    except (ValueError, np.linalg.LinAlgError) as exc:
        raise FileInputError(path, f"kriging {q}: {exc}; use interpolation = \"spline\"") from None
    sd_meas = np.zeros(n) if sample_sd is None else np.asarray(sample_sd, float)
    _, idx = cKDTree(pts).query(np.column_stack([np.ravel(px), np.ravel(py)]))
    msd = sd_meas[idx].reshape(np.shape(px))
    extra = np.clip(msd**2 - kr.variogram["nugget"], 0.0, None)
    v, loo = kr.variogram, kr.loo
    note(f"{q}: ordinary kriging of {n} samples, {v['model']} variogram (nugget {v['nugget']:.3g}, sill "
         f"{v['sill']:.3g}, length scale {v['len_scale_m']:.3g} m; SI units); leave-one-out RMSE "
         f"{loo['rmse']:.3g}, standardised errors mean {loo['mean_standardised_error']:.2f}, variance "
         f"{loo['standardised_error_variance']:.2f} (1 when the variogram is right)")
    info = {"interpolation_method": f"ordinary kriging of {n} samples with a fitted {v['model']} variogram "
                                    "(gstools); kriging variance including the nugget",
            **{f"variogram_{k}": val for k, val in v.items()}, **{f"loo_{k}": val for k, val in loo.items()}}
    return kr.estimate, kr.kriging_sd, np.sqrt(kr.kriging_sd**2 + extra), info


def check_layout(pts, *, rows, path) -> None:
    """Refuse samples all on one point or line, and repeated locations (naming the rows)."""
    from scipy.spatial import cKDTree

    n = len(pts)
    centred = pts - pts.mean(axis=0)
    sv = np.linalg.svd(centred, compute_uv=False) if n >= 2 else np.zeros(2)
    spread = sv / np.sqrt(max(n, 1))
    if n < 3 or spread[1] < 1e-6 * max(spread[0], 1.0) or spread[0] < 1e-3:
        raise FileInputError(path, f"{n} sample(s) lie on one point or one line; interpolation over an area "
                             "needs at least 3 samples not all in a line (or give the value as a default/zone)")
    tree = cKDTree(pts)
    pairs = tree.query_pairs(0.0, output_type="ndarray")
    if pairs.size:
        i, j = pairs[np.argmin(pairs.max(axis=1))]  # the first row that repeats an earlier one
        first, again = sorted((int(i), int(j)))
        raise FileInputError(path, f"sample repeats the location of row {int(rows[first])}; "
                             "average repeated measurements into one row", row=int(rows[again]))


def interpolate_samples(sx, sy, values, px, py, *, sample_sd=None, path="samples", rows=None):
    """Interpolate scattered samples to points, with an uncertainty estimate.

    Parameters
    ----------
    sx, sy : (n,) array_like
        Sample coordinates (m, projected).
    values : (n,) array_like
        Sample values.
    px, py : array_like
        Points to predict at (any shape, m).
    sample_sd : (n,) array_like, optional
        Measurement standard deviation of each sample (0 when omitted).

    Returns
    -------
    estimate, interp_sd, measurement_sd : ndarray
        Shaped like ``px``.  ``interp_sd`` is the interpolation uncertainty (module notes),
        ``measurement_sd`` that of the nearest sample.

    Notes
    -----
    Thin-plate-spline radial basis function interpolation with a linear polynomial
    (scipy.interpolate.RBFInterpolator), exact at the samples; uncertainty
    σ²(d) = min(c·d, s²) with c fitted to leave-one-out errors.

    References
    ----------
    Duchon, J. (1977). Splines minimizing rotation-invariant semi-norms in Sobolev
    spaces. Lect. Notes Math. 571 (Springer), 85–100.
    Wahba, G. (1990). *Spline Models for Observational Data*. SIAM (cross-validation).
    """
    from scipy.interpolate import RBFInterpolator
    from scipy.spatial import cKDTree

    pts = np.column_stack([np.asarray(sx, float), np.asarray(sy, float)])
    vals = np.asarray(values, dtype=float)
    n = vals.size
    rows = np.arange(n) + 2 if rows is None else np.asarray(rows)
    sd_meas = np.zeros(n) if sample_sd is None else np.asarray(sample_sd, float)
    check_layout(pts, rows=rows, path=path)
    tree = cKDTree(pts)
    dd, ii = tree.query(pts, k=2)
    flat_x, flat_y = np.ravel(px), np.ravel(py)
    q = np.column_stack([flat_x, flat_y])
    rbf = RBFInterpolator(pts, vals, kernel="thin_plate_spline", degree=1)
    est = np.clip(rbf(q), vals.min(), vals.max())
    # leave-one-out errors (loop over samples, not cells; n is small)
    loo = np.full(n, np.nan)
    if n >= 4:
        for i in range(n):
            keep = np.arange(n) != i
            try:
                sub = RBFInterpolator(pts[keep], vals[keep], kernel="thin_plate_spline", degree=1)
            except np.linalg.LinAlgError:  # the others lie on a line: no prediction from them
                continue
            loo[i] = float(np.clip(sub(pts[i:i + 1])[0], vals[keep].min(), vals[keep].max())) - vals[i]
    ok = np.isfinite(loo)
    if np.any(ok):
        d_nn = dd[ok, 1]
        c = float(np.sum(loo[ok]**2 * d_nn) / np.sum(d_nn**2))
    else:
        c = float(np.var(vals, ddof=0) / np.max(dd[:, 1]))
    sill = float(np.var(vals, ddof=1)) if n > 1 else 0.0
    dist, idx = tree.query(q)
    interp_var = np.minimum(c * dist, sill)
    shape = np.shape(px)
    return est.reshape(shape), np.sqrt(interp_var).reshape(shape), sd_meas[idx].reshape(shape)
