"""The reach probability's random draws: keyed standard normals, then truncated normals and log-normals.

The rule by which draws are keyed (per tile of ``TILE_CELLS`` cells) is stated in
:mod:`subsurf.site.probability`.  Physics module: no files, no printing.
"""

from __future__ import annotations

import numpy as np

#: Cells per tile of the Monte Carlo random streams (the stated rule of subsurf.site.probability).
TILE_CELLS = 256


def _tile_normals(seed: int, tile: int, n_uncertain: int, draws: int) -> np.ndarray:
    """Normals of one tile, shape (n_uncertain, draws, TILE_CELLS) (the rule of the module docstring)."""
    rng = np.random.default_rng(np.random.SeedSequence(seed, spawn_key=(tile,)))
    return rng.standard_normal((n_uncertain, draws, TILE_CELLS))


#: Survey quantities drawn from a log-normal with the stated mean and sd (positive and
#: right-skewed, as subsurf.ground.spread draws conductivities and salinity).
_LOGNORMAL = frozenset({"pore_water_ec", "salinity"})


def _lognormal(mean, sd, z, low, high):
    """Log-normal draws with arithmetic mean ``mean`` and sd ``sd`` from standard normals ``z``.

    σ_ln² = ln(1 + sd²/mean²), μ_ln = ln(mean) − σ_ln²/2; kept within [low, high].  A zero
    mean with a spread falls back to the truncated normal (a log-normal needs mean > 0).
    """
    pos = (mean > 0) & (sd > 0)
    m = np.where(pos, mean, 1.0)
    s2 = np.log1p((np.where(pos, sd, 0.0) / m) ** 2)
    x = np.exp(np.log(m) - s2 / 2.0 + np.sqrt(s2) * z)
    x = np.clip(x, -np.inf if low is None else low, np.inf if high is None else high)
    return np.where(pos, x, _truncated(mean, sd, z, low, high))


def _truncated(mean, sd, z, low, high):
    """Draws of normal(mean, sd) truncated to [low, high], made from standard normals ``z``.

    The inverse-CDF map u = Φ(a) + Φ(z)(Φ(b) − Φ(a)), x = mean + sd·Φ⁻¹(u), with
    a = (low − mean)/sd and b = (high − mean)/sd, turns each standard normal into a draw of
    the truncated normal (Robert 1995, Statistics and Computing 5:121), so the keyed streams
    of the module docstring still decide every draw, and no draw piles up on a bound as
    clipping would.  Where sd is 0 the draw is the mean.
    """
    from scipy.special import ndtr, ndtri

    sd_safe = np.where(sd > 0, sd, 1.0)
    lo_cdf = ndtr((low - mean) / sd_safe) if low is not None else 0.0
    hi_cdf = ndtr((high - mean) / sd_safe) if high is not None else 1.0
    u = lo_cdf + ndtr(z) * (hi_cdf - lo_cdf)
    x = mean + sd_safe * ndtri(np.clip(u, 1e-300, 1.0 - 1e-16))
    lo = -np.inf if low is None else low
    hi = np.inf if high is None else high
    return np.where(sd > 0, np.clip(x, lo, hi), mean)
