"""Ordinary kriging of soil samples with a fitted variogram (gstools), and its leave-one-out check.

Samples are kriged as residuals from the zone/raster/default trend (regression kriging):

1. the empirical semivariogram of the residuals, γ̂(h) = 1/(2N(h)) Σ (z_i − z_j)² over the
   N(h) pairs in each distance bin (Matheron's estimator; bins from gstools'
   ``standard_bins``: Sturges' rule up to a third of the sample-cloud diameter);
2. a variogram model with nugget, γ(h) = c₀ + c·(1 − ρ(h/ℓ)), fitted to it by robust
   least squares weighted by the pair counts (gstools ``fit_variogram``), the correlation
   length bounded by the diameter of the sample cloud and sill and nugget by twice the
   sample variance;
3. ordinary kriging (unknown constant mean) with that model, the nugget read as
   measurement error and micro-scale variation (gstools ``krige.Ordinary``, not exact).
   The kriging variance σ²_K(x) is that of the error of predicting the soil value at x,
   nugget included: an honest, slightly conservative interpolation variance, because a
   variogram cannot separate the measurement error from variation within a cell.

Leave-one-out cross-validation uses Dubrule's (1983) closed form of the same ordinary
kriging system: with B the inverse of the augmented matrix [[C, 1], [1ᵀ, 0]] (C the data
covariance, nugget on its diagonal) and b = B·[z; 0], the error of predicting sample i
from all the others is e_i = b_i / B_ii and its kriging variance is 1/B_ii.  The
standardised errors e_i/σ_{−i} should have mean 0 and variance 1 when the variogram is
right (tests check this on Gaussian fields that gstools generates with a known variogram).

Kriging needs a variogram, and a variogram needs pairs: below :data:`MIN_KRIGING_SAMPLES`
samples the fitted model is too unstable to trust (Webster & Oliver 1992 recommend about
100 for a reliable variogram, 50 at the very least; common practice, from memory), and
``interpolation = "auto"`` keeps the thin-plate spline there, with a note.

References
----------
Matheron, G. (1963). Principles of geostatistics. *Economic Geology* 58(8), 1246–1266.
doi:10.2113/gsecongeo.58.8.1246
Dubrule, O. (1983). Cross validation of kriging in a unique neighborhood. *Mathematical
Geology* 15(6), 687–699. doi:10.1007/BF01033232
Webster, R. & Oliver, M.A. (1992). Sample adequately to estimate variograms of soil
properties. *Journal of Soil Science* 43(1), 177–192. doi:10.1111/j.1365-2389.1992.tb00128.x
Müller, S., Schüler, L., Zech, A. & Heße, F. (2022). GSTools v1.3: a toolbox for
geostatistical modelling in Python. *Geoscientific Model Development* 15, 3161–3182.
doi:10.5194/gmd-15-3161-2022
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

__all__ = ["MIN_KRIGING_SAMPLES", "VARIOGRAM_MODELS", "KrigingResult", "fit_variogram", "krige",
           "leave_one_out"]

#: Fewest samples of one quantity that ordinary kriging with a fitted variogram is used for.
MIN_KRIGING_SAMPLES = 30
VariogramModel = Literal["exponential", "spherical", "gaussian", "matern"]
VARIOGRAM_MODELS = ("exponential", "spherical", "gaussian", "matern")


@dataclass(frozen=True)
class KrigingResult:
    """Kriged values, kriging standard deviation, the fitted variogram and leave-one-out statistics."""

    estimate: np.ndarray
    kriging_sd: np.ndarray
    variogram: dict  # model, sill, partial_sill, nugget, len_scale_m, n_bins
    loo: dict  # n, mean_error, rmse, mean_standardised_error, standardised_error_variance


def _model_class(name: str):
    import gstools as gs

    return {"exponential": gs.Exponential, "spherical": gs.Spherical, "gaussian": gs.Gaussian,
            "matern": gs.Matern}[name]


def fit_variogram(x, y, values, *, model: VariogramModel = "exponential"):
    """Fit a variogram model with nugget to the empirical semivariogram of ``values`` (module notes).

    Returns
    -------
    (gstools.CovModel, dict)
        The fitted model and a summary (model name, sill, partial sill, nugget, length scale
        in m, number of bins).  Raises ``ValueError`` when the values do not vary.
    """
    import gstools as gs

    pos = (np.asarray(x, float), np.asarray(y, float))
    z = np.asarray(values, float)
    var = float(np.var(z))
    if not var > 0:
        raise ValueError("sample values do not vary")
    diameter = float(np.hypot(np.ptp(pos[0]), np.ptp(pos[1])))
    bins = gs.standard_bins(pos, dim=2)
    centres, gamma, counts = gs.vario_estimate(pos, z, bins, return_counts=True)
    keep = counts > 0
    centres, gamma, counts = centres[keep], gamma[keep], counts[keep]
    cov = _model_class(model)(dim=2)
    # a correlation length beyond the sample cloud, or a sill far above the sample variance,
    # cannot be identified from these pairs: bound them (the fit otherwise runs off to a
    # near-linear variogram with huge sill and length on some fields)
    cov.len_scale_bounds = [1e-6 * max(diameter, 1.0), max(diameter, 1e-6)]
    cov.var_bounds = [0.0, 2.0 * var]
    cov.nugget_bounds = [0.0, 2.0 * var]
    fit_kw = {"nu": False} if model == "matern" else {}
    cov.fit_variogram(centres, gamma, nugget=True, weights=counts, **fit_kw)
    summary = {"model": model, "sill": float(cov.sill), "partial_sill": float(cov.var),
               "nugget": float(cov.nugget), "len_scale_m": float(cov.len_scale), "n_bins": int(centres.size)}
    return cov, summary


def leave_one_out(x, y, values, cov) -> dict:
    """Leave-one-out errors of ordinary kriging with ``cov`` (Dubrule 1983 closed form).

    Returns
    -------
    dict
        ``errors`` (prediction − value), ``sd`` (kriging sd of each prediction),
        ``standardised`` (errors / sd) as arrays, and the summary statistics ``n``,
        ``mean_error``, ``rmse``, ``mean_standardised_error``, ``standardised_error_variance``.
    """
    from scipy.spatial.distance import cdist

    pts = np.column_stack([np.asarray(x, float), np.asarray(y, float)])
    z = np.asarray(values, float)
    n = z.size
    c = cov.covariance(cdist(pts, pts)) + cov.nugget * np.eye(n)  # var·ρ(h), nugget at h = 0
    a = np.ones((n + 1, n + 1))
    a[:n, :n] = c
    a[n, n] = 0.0
    b = np.linalg.inv(a)
    rhs = np.append(z, 0.0)
    coef = b @ rhs
    diag = np.diag(b)[:n]
    residual = coef[:n] / diag  # z_i minus its prediction from the others
    sd = 1.0 / np.sqrt(diag)
    err = -residual
    std = err / sd
    return {"errors": err, "sd": sd, "standardised": std, "n": int(n), "mean_error": float(err.mean()),
            "rmse": float(np.sqrt(np.mean(err**2))), "mean_standardised_error": float(std.mean()),
            "standardised_error_variance": float(np.mean(std**2))}


def krige(sx, sy, values, px, py, *, model: VariogramModel = "exponential") -> KrigingResult:
    """Ordinary kriging of scattered samples to points with a fitted variogram (module notes).

    Parameters
    ----------
    sx, sy : (n,) array_like
        Sample coordinates (m, projected).
    values : (n,) array_like
        Sample values (residuals from the trend, any unit).
    px, py : array_like
        Points to predict at (any shape, m).
    model : {"exponential", "spherical", "gaussian", "matern"}
        Variogram model family.

    Returns
    -------
    KrigingResult
        ``estimate`` and ``kriging_sd`` shaped like ``px``; the fitted ``variogram`` and the
        leave-one-out statistics ``loo``.
    """
    import gstools as gs

    sx, sy, z = (np.asarray(a, float) for a in (sx, sy, values))
    cov, summary = fit_variogram(sx, sy, z, model=model)
    k = gs.krige.Ordinary(cov, (sx, sy), z, exact=False, cond_err="nugget")
    shape = np.shape(px)
    est, var = k((np.ravel(px).astype(float), np.ravel(py).astype(float)), mesh_type="unstructured",
                 return_var=True, store=False)
    loo = leave_one_out(sx, sy, z, cov)
    stats = {k_: v for k_, v in loo.items() if not isinstance(v, np.ndarray)}
    return KrigingResult(estimate=np.asarray(est).reshape(shape),
                         kriging_sd=np.sqrt(np.clip(np.asarray(var), 0.0, None)).reshape(shape),
                         variogram=summary, loo=stats)
