"""Per-cell probability that the target depth is reached, from the uncertainty of the soil inputs.

The margin M (dB) of :func:`subsurf.site.feasibility.feasibility_chain` is a smooth
function of the soil quantities x, independent per cell and quantity: normal with mean μ
and standard deviation σ truncated to the quantity's accepted range (``_truncated``; not
clipped, so no draw sits on a bound), log-normal with that mean and σ for the pore-water
conductivity and salinity (``_lognormal``).  The antenna *reaches* the target when the
margin is at least T outside the blind zone, T the one threshold of every subsurf output
(:data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`, 6 dB); below, M stands for the
shifted margin (margin − T), so P(M ≥ 0) is the probability of reaching.  It is
estimated per cell and antenna by one of two methods:

``"linearised"`` (first-order second-moment, the delta method)
    M is evaluated at the centre and at ±h standard deviations along each uncertain
    quantity (2k + 1 chain evaluations for k uncertain quantities); with the central
    difference slopes g_i and curvatures c_i,

        p₁ = Φ(M₀ / s₁),   s₁² = Σ g_i²,

    and its error is estimated as |p₁ − p₂| (p₂ from the second-order moments,
    mean M₀ + Σ c_i and variance s₁² + 2 Σ c_i² of the diagonal quadratic model)
    plus the probability put at stake by clipping (the mass of each quantity's normal
    beyond its range, times the largest change the linear model could make there).
``"sampling"`` (Monte Carlo)
    ``draws`` draws per cell; the standard error is √(p(1 − p)/N).
``"auto"`` (default)
    the linearised estimate wherever its estimated error is at most ``tolerance``,
    sampling elsewhere (where clipping or nonlinearity matter).

The Monte Carlo normals are keyed per tile of :data:`TILE_CELLS` consecutive cells of
the flattened grid: tile ``j`` draws its normals from
``numpy.random.default_rng(numpy.random.SeedSequence(seed, spawn_key=(j,)))`` as an
array of shape (uncertain quantities in the order of :data:`subsurf.site.survey.QUANTITIES`,
draws, TILE_CELLS).  A cell's draws therefore depend only on the seed, the number of
draws, the set of uncertain quantities and the cell's position, never on how the work
is cut into blocks or which other cells are sampled.  Every antenna sees the same draws
(common random numbers).

References
----------
Ditlevsen, O. & Madsen, H. O. (1996). *Structural Reliability Methods*. Wiley, ch. 4–5
(first-order second-moment reliability, the linearised limit state).
JCGM 100:2008. *Evaluation of measurement data — Guide to the expression of uncertainty
in measurement* (GUM), section 5.1.2 (first-order propagation) and 5.1.2 note
(the second-order term).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from ..errors import InputError, SubsurfError
from .draws import _LOGNORMAL, TILE_CELLS, _lognormal, _tile_normals, _truncated  # noqa: F401  (tests use them here)

__all__ = ["ReachProbability", "reach_probability", "TILE_CELLS", "DEFAULT_TOLERANCE", "STEP_SD"]

#: Largest estimated error (probability) accepted from the linearised estimate in ``"auto"``.
#: A quarter of the Monte Carlo standard error of 200 draws at p = 0.5 (0.035).
DEFAULT_TOLERANCE = 0.01
#: Finite-difference step, in standard deviations of each quantity.
STEP_SD = 1.0
#: Antenna × evaluation × cell elements per chain call: bounds the chain's temporaries
#: (a few tens of float64 arrays of this size times the band's frequency nodes, about
#: 60 MiB at most) whatever the grid or draws.
BLOCK_ELEMENTS = 1 << 18

Method = Literal["auto", "linearised", "sampling"]


@dataclass(frozen=True)
class ReachProbability:
    """Reach probability per antenna and cell with its estimated error.

    Attributes
    ----------
    probability : ndarray, shape (n_antennas, *cells)
        P(margin ≥ the reach threshold, outside the blind zone); NaN outside the data.
    error : ndarray, shape (n_antennas, *cells)
        Standard error √(p(1 − p)/N) where sampled; the linearisation's estimated error
        (second-order difference plus clipping bound) elsewhere.
    sampled : ndarray of bool, shape cells
        Cells estimated by Monte Carlo.
    method : str
        The method asked for.
    draws : int
        Monte Carlo draws per sampled cell.
    chain_cells : int
        Cells × chain evaluations spent (each over every antenna): the cost.
    """

    probability: np.ndarray
    error: np.ndarray
    sampled: np.ndarray
    method: str
    draws: int
    chain_cells: int

    @property
    def sampled_fraction(self) -> float:
        """Fraction of the cells with data that were sampled."""
        ok = np.isfinite(self.probability[0]) if self.probability.size else np.zeros(0, bool)
        return float(np.count_nonzero(self.sampled & ok) / max(np.count_nonzero(ok), 1))


def _normal_cdf(x):
    from scipy.special import ndtr

    return ndtr(x)


class _Problem:
    """The flattened inputs and the margin function M(x) of a reach-probability call."""

    def __init__(self, values, sds, antennas, *, target, target_depth_m, texture, model, reaches_db,
                 calibration=None):
        from .feasibility import _antenna_chain_kwargs, _soil_porosity_limit
        from .survey import QUANTITIES

        ref = np.asarray(next(iter(values.values())))
        self.shape = ref.shape
        self.flat = {k: np.asarray(v, float).ravel() for k, v in values.items()}
        sd = {k: np.asarray(v, float).ravel() for k, v in sds.items() if k in self.flat}
        valid = np.ones(ref.size, bool)
        for v in self.flat.values():
            valid &= np.isfinite(v)
        self.valid = valid
        # uncertain quantities in a fixed order (that of QUANTITIES), so the streams are keyed stably
        self.uncertain = [k for k in QUANTITIES if k in sd and np.any(sd[k][valid] > 0)]
        self.sd = {k: np.where(np.isfinite(sd[k]), sd[k], 0.0) for k in self.uncertain}
        self.low = {k: QUANTITIES[k].low for k in self.flat}
        self.high = {k: np.full(ref.size, QUANTITIES[k].high) for k in self.flat}
        phi = _soil_porosity_limit(texture, self.flat.get("bulk_density"))
        if phi is not None and "moisture" in self.flat:  # moisture also below the porosity (as the chain clips)
            self.high["moisture"] = np.minimum(self.high["moisture"], 0.995 * np.broadcast_to(phi, (ref.size,)))
        # every antenna input the map's own chain takes (band, separation, pulse length), so the probability
        # judges the same budget and blind zone as the map's margin and verdicts
        self.antenna_kw = _antenna_chain_kwargs(antennas, 2)
        if calibration is not None:  # the calibrated ground is anchored at the band centre: drawn soils over the
            # band's nodes can make impossible (eps, alpha) pairs, so calibrated maps keep the centre frequency here
            self.antenna_kw["bandwidth_hz"] = None
        self.n_ant = len(antennas)
        self.kw = {"target": target, "target_depth_m": target_depth_m, "texture": texture, "model": model,
                   "calibration": calibration}
        self.reaches_db = float(reaches_db)

    def margins(self, fields, *, with_slack: bool = False):
        """Margin above the reach threshold (dB) of every antenna, shape (n_antennas, m, c), for fields of
        shape (m, c); the antenna reaches the target where it is >= 0."""
        from .feasibility import _chain_kwargs, _clip_moisture, feasibility_chain
        from .survey import QUANTITIES

        clipped = {k: np.clip(v, QUANTITIES[k].low, QUANTITIES[k].high) for k, v in fields.items()}
        clipped = _clip_moisture(clipped, texture=self.kw["texture"])
        try:
            out = feasibility_chain(**self.antenna_kw, margin_only=True, **self.kw, **_chain_kwargs(clipped))
        except SubsurfError as exc:
            raise InputError(f"draws of the soil inputs are not physically possible: {exc}") from None
        # inside the antenna's blind zone the target is not seen, whatever the margin (as recommend_antenna)
        # M − T: the antenna reaches the target where this is >= 0
        m = np.where(out["too_shallow"], -np.inf, out["margin_db"] - self.reaches_db)
        return (m, out["blind_zone_slack_m"]) if with_slack else m


def _blocks(cells: np.ndarray, per_cell: int):
    """Consecutive slices of ``cells`` with at most BLOCK_ELEMENTS antenna-evaluation-cell elements."""
    size = max(1, BLOCK_ELEMENTS // max(per_cell, 1))
    for start in range(0, cells.size, size):
        yield cells[start:start + size]


def _linearised(prob: _Problem, cells: np.ndarray, h: float):
    """First-order probability and its estimated error at ``cells`` (flat indices)."""
    k = len(prob.uncertain)
    p1 = np.empty((prob.n_ant, cells.size))
    err = np.empty_like(p1)
    done = 0
    for blk in _blocks(cells, prob.n_ant * (2 * k + 1)):
        # evaluation points on the first axis: centre, then +h, -h for each uncertain quantity
        fields = {}
        for q, v in prob.flat.items():
            pts = np.repeat(v[blk][None, :], 2 * k + 1, axis=0)
            if q in prob.uncertain:
                i = prob.uncertain.index(q)
                step = h * prob.sd[q][blk]
                pts[1 + 2 * i] += step
                pts[2 + 2 * i] -= step
            fields[q] = pts
        m, slack = prob.margins(fields, with_slack=True)
        # a stencil point in the blind zone (margin -inf): no linear model; 'auto' samples these cells
        kinked = ~np.all(np.isfinite(m), axis=1)
        # the blind zone is a step the linear model of M cannot see: the probability of entering it (the
        # depth's slack below the blind zone, linearised on the same stencil) is put at stake and added
        # to the estimated error, so 'auto' samples cells near its edge
        s_up, s_dn = slack[:, 1::2], slack[:, 2::2]
        s_g = np.sqrt(np.sum(((s_up - s_dn) / (2.0 * h)) ** 2, axis=1))
        with np.errstate(divide="ignore", invalid="ignore"):
            p_blind = np.where(s_g > 0, _normal_cdf(-slack[:, 0] / s_g), (slack[:, 0] < 0).astype(float))
        centre_reaches = (m[:, 0] >= 0).astype(float)
        m = np.where(np.isfinite(m), m, 0.0)
        m0 = m[:, 0]
        up, dn = m[:, 1::2], m[:, 2::2]
        g = (up - dn) / (2.0 * h)                      # dM/dz_i
        c = (up + dn - 2.0 * m0[:, None]) / (2.0 * h * h)  # ½ d²M/dz_i²
        var1 = np.sum(g * g, axis=1)
        s1 = np.sqrt(var1)
        with np.errstate(divide="ignore", invalid="ignore"):
            first = np.where(s1 > 0, _normal_cdf(m0 / s1), (m0 >= 0).astype(float))
            mean2 = m0 + np.sum(c, axis=1)
            s2 = np.sqrt(var1 + 2.0 * np.sum(c * c, axis=1))
            second = np.where(s2 > 0, _normal_cdf(mean2 / s2), (mean2 >= 0).astype(float))
        e = np.abs(first - second)
        for i, q in enumerate(prob.uncertain):
            e = e + _clip_bound(prob, q, blk, m0, g[:, i], var1)
        p_blind = np.where(np.isfinite(p_blind), p_blind, 1.0)
        first, e = first * (1.0 - p_blind), e + p_blind  # not reached inside the blind zone (independence assumed)
        first = np.where(kinked, centre_reaches, first)
        e = np.where(kinked | ~np.isfinite(e), 1.0, e)
        n = blk.size
        p1[:, done:done + n], err[:, done:done + n] = first, e
        done += n
    return p1, err


def _bivariate_normal_cdf(h, k, rho):
    """Φ₂(h, k; ρ) = P(X ≤ h, Y ≤ k) for standard normals of correlation ρ (|ρ| < 1), by Owen's T.

    Owen (1956): Φ₂ = ½Φ(h) + ½Φ(k) − T(h, a_h) − T(k, a_k) − β, with
    a_h = (k − ρh)/(h√(1 − ρ²)), a_k = (h − ρk)/(k√(1 − ρ²)) and β = ½ where hk < 0 or
    (hk = 0 and h + k < 0), else 0; an argument 0 is nudged to 1e-300 (T is continuous there).
    """
    from scipy.special import owens_t

    q = np.sqrt(1.0 - rho * rho)
    hh = np.where(h == 0, 1e-300, h)
    kk = np.where(k == 0, 1e-300, k)
    beta = np.where((hh * kk < 0), 0.5, 0.0)
    return (0.5 * _normal_cdf(h) + 0.5 * _normal_cdf(k) - owens_t(hh, (kk - rho * hh) / (hh * q))
            - owens_t(kk, (hh - rho * kk) / (kk * q)) - beta)


def _clip_bound(prob: _Problem, q: str, cells, m0, g, var1):
    """Change of the reach probability that clipping ``q`` to its range makes, under the linear model.

    Beyond a bound at a standard deviations (z < −a, or z > a for the upper one) the clipped
    margin stays at the bound's value M₀ + g·(∓a) while the linear one keeps moving.  With
    Y = M₀ + g·Z + (the other quantities' terms, variance r² = s₁² − g²) the change is
    Δ = Φ(−a)·Φ((M₀ ∓ g·a)/r) − P(Z beyond the bound, Y ≥ 0), the last term a bivariate
    normal probability of correlation g/s₁ (:func:`_bivariate_normal_cdf`); with r = 0 both
    terms are one-dimensional.  Returned: Σ |Δ| over the two bounds.
    """
    sd = prob.sd[q][cells]
    mu = prob.flat[q][cells]
    s1 = np.sqrt(var1)
    rest = np.sqrt(np.maximum(var1 - g * g, 0.0))
    total = np.zeros_like(m0)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        for bound, sign in ((prob.low[q], -1.0), (prob.high[q][cells], 1.0)):
            a = np.where(sd > 0, sign * (bound - mu) / sd, np.inf)  # distance to the bound in sd, ≥ 0 inside
            tail = _normal_cdf(-a)
            at_bound = m0 + g * sign * a
            # the margin's variable w = sign·Z: beyond the bound means w > a; slope of Y in w is sign·g
            gw = sign * g
            clipped = tail * np.where(rest > 0, _normal_cdf(at_bound / rest), (at_bound >= 0).astype(float))
            # P(w > a, Y ≥ 0) = P(−w < −a, −Y' < M₀/s₁), Y' standardised, corr(−w, −Y') = gw/s₁
            rho = np.clip(np.where(s1 > 0, gw / s1, 0.0), -1.0, 1.0)
            joint = np.where(
                rest > 1e-12 * np.maximum(s1, 1e-300),
                _bivariate_normal_cdf(-a, np.where(s1 > 0, m0 / s1, np.inf), np.clip(rho, -0.999999, 0.999999)),
                # one-dimensional: Y = M₀ + gw·w ≥ 0 with w > a
                np.where(gw > 0, _normal_cdf(-np.maximum(a, -m0 / np.where(gw != 0, gw, 1.0))),
                         np.where(gw < 0, np.maximum(_normal_cdf(-a) - _normal_cdf(-(-m0 / np.where(gw != 0, gw, 1.0))),
                                                     0.0),
                                  tail * (m0 >= 0))))
            delta = np.where(tail > 0, np.abs(clipped - joint), 0.0)
            total = total + delta
    return np.nan_to_num(total, nan=1.0)


def _sampled(prob: _Problem, cells: np.ndarray, draws: int, seed: int):
    """Monte Carlo probability and standard error at ``cells`` (flat indices, ascending)."""
    k = len(prob.uncertain)
    hits = np.empty((prob.n_ant, cells.size))
    done = 0
    cache: dict[int, np.ndarray] = {}
    for blk in _blocks(cells, prob.n_ant * draws):
        tiles, col = np.divmod(blk, TILE_CELLS)
        z = np.empty((k, draws, blk.size))
        for t in np.unique(tiles):
            if t not in cache:
                cache.clear()  # blocks are ascending: a tile is needed by at most two consecutive blocks
                cache[t] = _tile_normals(seed, int(t), k, draws)
            sel = tiles == t
            z[:, :, sel] = cache[t][:, :, col[sel]]
        fields = {}
        for q, v in prob.flat.items():
            base = v[blk][None, :]
            if q in prob.uncertain:
                draw = _lognormal if q in _LOGNORMAL else _truncated
                fields[q] = draw(base, prob.sd[q][blk][None, :], z[prob.uncertain.index(q)],
                                 prob.low[q], prob.high[q][blk][None, :])
            else:
                fields[q] = np.broadcast_to(base, (draws, blk.size))
        hits[:, done:done + blk.size] = np.mean(prob.margins(fields) >= 0.0, axis=1)
        done += blk.size
    return hits, np.sqrt(hits * (1.0 - hits) / draws)


def reach_probability(values: dict, sds: dict, antennas, *, target, target_depth_m: float, draws: int,
                      seed: int, texture: str | None = None, model: str = "crim", method: Method = "auto",
                      tolerance: float = DEFAULT_TOLERANCE, calibration=None,
                      reaches_db: float | None = None) -> ReachProbability:
    """Per-cell probability that each antenna reaches the target depth (margin ≥ the reach threshold).

    Parameters
    ----------
    values, sds : dict of str -> ndarray
        Soil quantities and their standard deviations (survey names, SI), all of one
        shape (cells); NaN marks a cell without data.
    antennas : sequence of antenna records (``centre_freq_hz``, ``performance_db``, ``gain``)
    target : subsurf.detection.Target
    target_depth_m : float
    draws : int
        Monte Carlo draws per sampled cell (≥ 1).
    seed : int
        Seed of the Monte Carlo streams (≥ 0).
    method : {"auto", "linearised", "sampling"}
        See the module docstring.
    tolerance : float
        Largest estimated error of the linearised estimate accepted by ``"auto"``.
    calibration : subsurf.site.calibrated.GridCalibration, optional
        Site calibration in every evaluation (its own standard errors are not drawn).
    reaches_db : float, optional
        Margin (dB) at which the target counts as reached; default
        :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`, the threshold every output states.

    Returns
    -------
    ReachProbability
    """
    from ..errors import check_seed

    if method not in ("auto", "linearised", "sampling"):
        raise InputError(f"method must be one of auto, linearised, sampling; got {method!r}")
    if isinstance(draws, bool) or not isinstance(draws, (int, np.integer)) or draws < 1:
        raise InputError(f"draws must be an integer >= 1, got {draws!r}")
    seed = check_seed(seed)
    if not 0.0 < tolerance < 1.0:
        raise InputError(f"tolerance must be between 0 and 1 (a probability), got {tolerance!r}")
    from ..detection.verdicts import REACHES_MARGIN_DB

    prob = _Problem(values, sds, antennas, target=target, target_depth_m=target_depth_m, texture=texture,
                    model=model, calibration=calibration,
                    reaches_db=REACHES_MARGIN_DB if reaches_db is None else reaches_db)
    n = prob.valid.size
    p = np.full((prob.n_ant, n), np.nan)
    err = np.full((prob.n_ant, n), np.nan)
    sampled = np.zeros(n, bool)
    cells = np.flatnonzero(prob.valid)
    cost = 0
    if cells.size and not prob.uncertain:  # nothing uncertain: the margin decides
        m = prob.margins({q: v[cells][None, :] for q, v in prob.flat.items()})[:, 0]
        p[:, cells], err[:, cells] = (m >= 0).astype(float), 0.0
        cost = cells.size
    elif cells.size:
        to_sample = cells
        if method != "sampling":
            p1, e1 = _linearised(prob, cells, STEP_SD)
            cost += cells.size * (2 * len(prob.uncertain) + 1)
            p[:, cells], err[:, cells] = p1, e1
            to_sample = cells[np.any(e1 > tolerance, axis=0)] if method == "auto" else cells[:0]
        if to_sample.size:
            ps, es = _sampled(prob, to_sample, int(draws), seed)
            p[:, to_sample], err[:, to_sample] = ps, es
            sampled[to_sample] = True
            cost += to_sample.size * int(draws)
    full = (prob.n_ant,) + prob.shape
    return ReachProbability(probability=p.reshape(full), error=err.reshape(full), sampled=sampled.reshape(prob.shape),
                            method=method, draws=int(draws), chain_cells=int(cost))
