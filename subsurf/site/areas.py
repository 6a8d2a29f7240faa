"""Fractions of a site's area that each antenna reaches, from the per-cell margins.

Physics module: SI units, no files, no printing.
"""

from __future__ import annotations

import numpy as np

__all__ = ["area_fractions"]


def area_fractions(margin_db, mask, *, probability=None, reaches_db=None, too_shallow=None):
    """Fractions of the site area where each antenna reaches the target.

    Parameters
    ----------
    margin_db : ndarray, shape (n_antennas, *cells)
    mask : ndarray of bool, shape cells
        Cells inside the site.
    probability : ndarray, shape (n_antennas, *cells), optional
        Reach probability per cell.
    reaches_db : float, optional
        The reach threshold (default :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`).
    too_shallow : ndarray of bool, optional
        Cells inside an antenna's blind zone (never reached, whatever the margin).

    Returns
    -------
    dict of ndarray, each of shape (n_antennas,)
        ``reach`` (the one "reaches": margin ≥ reaches_db outside the blind zone,
        :func:`subsurf.detection.verdicts.reaches`), ``marginal_or_better`` (margin ≥ 0
        outside the blind zone), ``too_shallow`` (target inside the antenna's blind zone) and,
        when ``probability`` is given, ``expected_reach`` (mean
        probability over the site) and ``reach_p90`` (probability ≥ 0.9).
    """
    from ..detection.verdicts import REACHES_MARGIN_DB, reaches

    threshold = REACHES_MARGIN_DB if reaches_db is None else reaches_db
    m = np.asarray(margin_db, dtype=float)
    inside = np.broadcast_to(np.asarray(mask, bool), m.shape[1:])
    shallow = np.zeros(m.shape, bool) if too_shallow is None else np.broadcast_to(np.asarray(too_shallow, bool),
                                                                                  m.shape)
    n_in = max(int(inside.sum()), 1)
    axes = tuple(range(1, m.ndim))
    out = {
        "reach": np.count_nonzero(reaches(m, too_shallow=shallow, reaches_db=threshold) & inside, axis=axes) / n_in,
        "marginal_or_better": np.count_nonzero(reaches(m, too_shallow=shallow, reaches_db=0.0) & inside,
                                               axis=axes) / n_in,
        "too_shallow": np.count_nonzero(shallow & inside, axis=axes) / n_in,
    }
    if probability is not None:
        p = np.asarray(probability, float)
        out["expected_reach"] = np.array([np.nanmean(np.where(inside, pi, np.nan)) for pi in p])
        out["reach_p90"] = np.array([np.count_nonzero((pi >= 0.9) & inside) / n_in for pi in p])
    return out
