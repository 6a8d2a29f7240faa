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

``"linearised"`` (first-order second-moment, the delta method, :mod:`subsurf.site.first_order`)
    M and the blind-zone slack S (target depth − blind-zone depth, which moves with the
    drawn velocity) are evaluated at the centre and at ±h standard deviations along each
    uncertain quantity (2k + 1 chain evaluations for k uncertain quantities); with the
    central-difference slopes of both, P(M ≥ 0, S ≥ 0) is the bivariate normal probability
    of the two linear models, and its error is estimated as its difference from the same
    probability with the second-order moments of the diagonal quadratic models, plus the
    probability that clipping a quantity to its range changes either event.
``"sampling"`` (Monte Carlo)
    ``draws`` draws per cell; the standard error is √(p(1 − p)/N).
``"auto"`` (default)
    the linearised estimate wherever its estimated error is at most ``tolerance`` or at most
    the standard error √(max(p(1 − p), 1/N)/N) that sampling with N = ``draws`` would have;
    sampling elsewhere (where clipping or nonlinearity matter more than N draws' noise).

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
from .first_order import _bivariate_normal_cdf, _clip_bound, linearised  # noqa: F401  (tests use them here)

__all__ = ["ReachProbability", "reach_probability", "TILE_CELLS", "DEFAULT_TOLERANCE", "STEP_SD"]

#: Largest estimated error (probability) accepted from the linearised estimate in ``"auto"``.
#: A quarter of the Monte Carlo standard error of 200 draws at p = 0.5 (0.035).
DEFAULT_TOLERANCE = 0.01
#: Finite-difference step, in standard deviations of each quantity.
STEP_SD = 1.0
#: Antenna × evaluation × cell elements per chain call: bounds the chain's temporaries whatever the grid
#: or draws.  Each carries the band's frequency nodes (14 for the catalogue's antennas), so one float64
#: temporary is 2^14 × 14 × 8 B = 1.75 MiB and the chain's few tens of them stay near 50 MiB.  Measured
#: on the example map (compute_maps in fresh processes, alternating, 2 cores): 2^14 takes 0.92× the wall
#: time of 2^15 (0.86× on a variant where a quarter of the cells are sampled) and peaks 33-40 MiB lower;
#: 2^13 is no faster than 2^14 (smaller blocks stay in cache; below that the per-call overhead grows).
#: The results do not depend on it (tests: draws keyed per tile, the linearised estimate per cell).
BLOCK_ELEMENTS = 1 << 14

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


class _Problem:
    """The flattened inputs and the margin function M(x) of a reach-probability call."""

    def __init__(self, values, sds, antennas, *, target, target_depth_m, texture, model, reaches_db,
                 calibration=None, centre=None):
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
        # the chain at the values themselves (the map's own layers): the stencil's centre is not evaluated again.
        # Not with a calibration, where the stencil keeps the centre frequency (above) and the map does not
        self.centre = None if centre is None or calibration is not None else {
            k: np.asarray(centre[k], float).reshape(self.n_ant, -1) for k in ("margin_db", "blind_zone_slack_m")}

    def draw(self, q: str, cells, z):
        """Values of uncertain quantity ``q`` at ``cells`` for standard normals ``z`` (broadcast against
        (…, cells)): the truncated-normal or log-normal map the Monte Carlo draws with."""
        draw = _lognormal if q in _LOGNORMAL else _truncated
        return draw(self.flat[q][cells][None, :], self.sd[q][cells][None, :], z, self.low[q],
                    self.high[q][cells][None, :])

    def _chain(self, fields):
        from .feasibility import _chain_kwargs, _clip_moisture, feasibility_chain
        from .survey import QUANTITIES

        clipped = {k: np.clip(v, QUANTITIES[k].low, QUANTITIES[k].high) for k, v in fields.items()}
        clipped = _clip_moisture(clipped, texture=self.kw["texture"])
        try:
            return feasibility_chain(**self.antenna_kw, margin_only=True, **self.kw, **_chain_kwargs(clipped))
        except SubsurfError as exc:
            raise InputError(f"draws of the soil inputs are not physically possible: {exc}") from None

    def margins(self, fields):
        """Margin above the reach threshold (dB) of every antenna, shape (n_antennas, m, c), for fields of
        shape (m, c); −inf inside the blind zone: the antenna reaches the target where it is >= 0."""
        out = self._chain(fields)
        # inside the antenna's blind zone the target is not seen, whatever the margin (as recommend_antenna)
        return np.where(out["too_shallow"], -np.inf, out["margin_db"] - self.reaches_db)

    def margin_and_slack(self, fields):
        """The two limit states of the first-order estimate, each (n_antennas, m, c); reached where both >= 0.

        The margin above the threshold (dB, as if there were no blind zone) and the blind zone as the
        ratio vτ*/vτ − 1 (dimensionless): d_min = ½√(vτ(2x + vτ)) (detection.blindzone) is below the
        target depth d exactly when vτ ≤ vτ* = √(x² + 4d²) − x, so this is the same event as
        d − d_min ≥ 0, but proportional to the slowness 1/v, which the soil quantities move almost
        linearly (√ε' is linear in moisture under CRIM), where d_min itself is convex in them.
        """
        return self._limit_states(self._chain(fields))

    def centre_margin_and_slack(self, cells):
        """:meth:`margin_and_slack` at the values themselves, shape (n_antennas, 1, c), from ``centre``."""
        return self._limit_states({k: v[:, None, cells] for k, v in self.centre.items()})

    def _limit_states(self, out):
        x = np.asarray(self.antenna_kw["separation_m"], float).reshape((-1, 1, 1))
        d = float(self.kw["target_depth_m"])
        top = getattr(self.kw["target"], "depth_top_m", None)  # a range: the blind zone is judged at its top
        d = float(top) if top is not None and top < d else d
        d_min = d - out["blind_zone_slack_m"]
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = (np.sqrt(x * x + 4.0 * d * d) - x) / (np.sqrt(x * x + 4.0 * d_min * d_min) - x) - 1.0
        return out["margin_db"] - self.reaches_db, ratio


def _blocks(cells: np.ndarray, per_cell: int):
    """Consecutive slices of ``cells`` with at most BLOCK_ELEMENTS antenna-evaluation-cell elements."""
    size = max(1, BLOCK_ELEMENTS // max(per_cell, 1))
    for start in range(0, cells.size, size):
        yield cells[start:start + size]


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
                fields[q] = prob.draw(q, blk, z[prob.uncertain.index(q)])
            else:
                fields[q] = np.broadcast_to(base, (draws, blk.size))
        hits[:, done:done + blk.size] = np.mean(prob.margins(fields) >= 0.0, axis=1)
        done += blk.size
    return hits, np.sqrt(hits * (1.0 - hits) / draws)


def reach_probability(values: dict, sds: dict, antennas, *, target, target_depth_m: float, draws: int,
                      seed: int, texture: str | None = None, model: str = "crim", method: Method = "auto",
                      tolerance: float = DEFAULT_TOLERANCE, calibration=None,
                      reaches_db: float | None = None, centre: dict | None = None) -> ReachProbability:
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
        Largest estimated error of the linearised estimate accepted by ``"auto"`` in any case;
        a larger one is kept where it is still below the standard error of ``draws`` draws.
    calibration : subsurf.site.calibrated.GridCalibration, optional
        Site calibration in every evaluation (its own standard errors are not drawn).
    reaches_db : float, optional
        Margin (dB) at which the target counts as reached; default
        :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`, the threshold every output states.
    centre : dict, optional
        The chain already evaluated at ``values`` with these antennas and options
        (:func:`subsurf.site.feasibility.evaluate`'s ``margin_db`` and ``blind_zone_slack_m``, shape
        (n_antennas, *cells)): the first-order stencil reuses it instead of evaluating its centre again
        (the same numbers; ignored with a ``calibration``).

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
                    model=model, calibration=calibration, centre=centre,
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
            p1, e1 = linearised(prob, cells, STEP_SD, _blocks)
            cost += cells.size * (2 * len(prob.uncertain) + (prob.centre is None))
            p[:, cells], err[:, cells] = p1, e1
            # sampled where the first-order error estimate exceeds the tolerance and the standard error the
            # sampled estimate would have (floored at p(1 - p) = 1/N): never replaced by a noisier estimate
            se_mc = np.sqrt(np.maximum(p1 * (1.0 - p1), 1.0 / draws) / draws)
            worse = (e1 > tolerance) & (e1 > se_mc)
            to_sample = cells[np.any(worse, axis=0)] if method == "auto" else cells[:0]
        if to_sample.size:
            ps, es = _sampled(prob, to_sample, int(draws), seed)
            p[:, to_sample], err[:, to_sample] = ps, es
            sampled[to_sample] = True
            cost += to_sample.size * int(draws)
    full = (prob.n_ant,) + prob.shape
    return ReachProbability(probability=p.reshape(full), error=err.reshape(full), sampled=sampled.reshape(prob.shape),
                            method=method, draws=int(draws), chain_cells=int(cost))
