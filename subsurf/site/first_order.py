"""The first-order (linearised) reach probability of :mod:`subsurf.site.probability`.

Reaching needs two things at once: the margin above the threshold M (dB) is at least 0 and
the target lies below the antenna's blind zone, i.e. the slack S = target depth − blind-zone
depth (m) is at least 0.  Both are smooth functions of the same soil quantities (S through
the velocity, which the drawn moisture, temperature and conductivity set), so both are
linearised on one stencil (centre and ±h standard deviations along each uncertain quantity,
2k + 1 chain evaluations).  With central-difference slopes g_i (of M) and u_i (of S) in
standard deviations,

    p₁ = P(M ≥ 0, S ≥ 0) = Φ₂(M₀/s_M, S₀/s_S; ρ),  s_M² = Σ g_i², s_S² = Σ u_i², ρ = Σ g_i u_i/(s_M s_S),

a bivariate normal probability (Owen's T, :func:`_bivariate_normal_cdf`).  Its error is
estimated as |p₁ − p₂|, p₂ the same probability from the second-order moments of the
diagonal quadratic models (means M₀ + Σ c_i, S₀ + Σ d_i, variances s_M² + 2Σ c_i²,
s_S² + 2Σ d_i², covariance Σ g_i u_i + 2Σ c_i d_i, with c_i, d_i half the second differences),
plus, per quantity and bound, the probability that clipping the quantity to its accepted
range changes the event M ≥ 0 and the event S ≥ 0 under the linear models
(:func:`_clip_bound`; the change of the joint event is at most the sum of the two).

Physics-free numerics: no files, no printing.

References
----------
Ditlevsen, O. & Madsen, H. O. (1996). *Structural Reliability Methods*. Wiley, ch. 4–5 and
ch. 14 (first-order second-moment reliability; series and parallel systems, the bivariate
normal probability of two linearised limit states).
Owen, D. B. (1956). Tables for computing bivariate normal probabilities. *Ann. Math. Statist.*
27(4), 1075–1090.
"""

from __future__ import annotations

import numpy as np

#: |ρ| above which the two linearised limit states count as fully (anti)correlated.
_RHO_ONE = 1.0 - 1e-9


def _normal_cdf(x):
    from scipy.special import ndtr

    return ndtr(x)


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


def joint_upper_probability(a, sa, b, sb, cov):
    """P(A ≥ 0, B ≥ 0) for jointly normal A ~ N(a, sa²), B ~ N(b, sb²) with covariance ``cov``.

    Φ₂(a/sa, b/sb; ρ) with ρ = cov/(sa·sb) (the events A ≥ 0 and −A ≤ a/sa coincide);
    ρ = ±1 exactly: Φ(min(h, k)), max(Φ(h) + Φ(k) − 1, 0); a zero spread makes its event
    certain or impossible (A ≥ 0 decided by a ≥ 0).
    """
    a, sa, b, sb, cov = np.broadcast_arrays(*(np.asarray(x, float) for x in (a, sa, b, sb, cov)))
    both = (sa > 0) & (sb > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        h = np.where(sa > 0, a / np.where(sa > 0, sa, 1.0), np.where(a >= 0, np.inf, -np.inf))
        k = np.where(sb > 0, b / np.where(sb > 0, sb, 1.0), np.where(b >= 0, np.inf, -np.inf))
        rho = np.where(both, cov / np.where(both, sa * sb, 1.0), 0.0)
    rho = np.clip(np.nan_to_num(rho), -1.0, 1.0)
    # Φ beyond ±40 is 0 or 1 in double precision: bound the arguments so Owen's T sees finite numbers
    hc, kc = np.clip(h, -40.0, 40.0), np.clip(k, -40.0, 40.0)
    middle = np.abs(rho) < _RHO_ONE
    out = np.where(rho >= _RHO_ONE, _normal_cdf(np.minimum(h, k)),
                   np.maximum(_normal_cdf(h) + _normal_cdf(k) - 1.0, 0.0))  # rho <= -1 (and rho = 0 is overwritten)
    if np.any(middle):
        out = np.where(middle, _bivariate_normal_cdf(hc, kc, np.where(middle, rho, 0.0)), out)
    out = np.where(both, out, _normal_cdf(h) * _normal_cdf(k))  # a degenerate one: the product is exact
    return np.clip(out, 0.0, 1.0)


def _clip_bound(prob, q: str, cells, m0, g, var1):
    """Change of P(Y ≥ 0) that clipping ``q`` to its range makes, Y = M₀ + g·Z + (rest) linear.

    Beyond a bound at a standard deviations (z < −a, or z > a for the upper one) the clipped
    value stays at the bound's M₀ + g·(∓a) while the linear one keeps moving.  With
    Y = M₀ + g·Z + (the other quantities' terms, variance r² = s₁² − g²) the change is
    Δ = Φ(−a)·Φ((M₀ ∓ g·a)/r) − P(Z beyond the bound, Y ≥ 0), the last term a bivariate
    normal probability of correlation g/s₁ (:func:`_bivariate_normal_cdf`); with r = 0 both
    terms are one-dimensional.  Beyond a bound one of the two events contains the other, so
    |Δ| is the probability that clipping changes the event.  Returned: Σ |Δ| over the two bounds.
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
            # Δ is 0 where the tail is (a bound beyond ~38 sd, or no spread): evaluated only on the other cells
            live = np.flatnonzero(tail > 0)
            if live.size:
                total[..., live] += _bound_change(a[live], tail[live], m0[..., live], g[..., live], s1[..., live],
                                                  rest[..., live], sign)
    return np.nan_to_num(total, nan=1.0)


def _bound_change(a, tail, m0, g, s1, rest, sign):
    """|Δ| of :func:`_clip_bound` for one bound (``sign`` −1 lower, +1 upper) at cells where its tail is > 0."""
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
                 np.where(gw < 0, np.maximum(_normal_cdf(-a) - _normal_cdf(-(-m0 / np.where(gw != 0, gw, 1.0))), 0.0),
                          tail * (m0 >= 0))))
    return np.abs(clipped - joint)


def _moments(v, h):
    """Centre, slopes (per sd) and half second differences of stencil values v, shape (..., 2k + 1, c)."""
    v0 = v[:, 0]
    up, dn = v[:, 1::2], v[:, 2::2]
    return v0, (up - dn) / (2.0 * h), (up + dn - 2.0 * v0[:, None]) / (2.0 * h * h)


def linearised(prob, cells: np.ndarray, h: float, blocks):
    """First-order probability and its estimated error at ``cells`` (flat indices).

    ``prob`` is the :class:`subsurf.site.probability._Problem` of the call (``flat``, ``sd``,
    ``uncertain``, ``n_ant`` and ``margin_and_slack``), ``blocks`` its block iterator.
    """
    k = len(prob.uncertain)
    p1 = np.empty((prob.n_ant, cells.size))
    err = np.empty_like(p1)
    done = 0
    given = 0 if getattr(prob, "centre", None) is None else 1  # the centre given: not evaluated again
    for blk in blocks(cells, prob.n_ant * (2 * k + 1 - given)):
        # evaluation points on the first axis: centre, then +h, -h for each uncertain quantity
        fields = {}
        for q, v in prob.flat.items():
            pts = np.repeat(v[blk][None, :], 2 * k + 1 - given, axis=0)
            if q in prob.uncertain:
                i = prob.uncertain.index(q)
                step = h * prob.sd[q][blk]
                pts[1 + 2 * i - given] += step
                pts[2 + 2 * i - given] -= step
            fields[q] = pts
        m, s = prob.margin_and_slack(fields)  # (n_ant, 2k + 1, cells) each; the margin as if no blind zone
        if given:
            m0, s0 = prob.centre_margin_and_slack(blk)
            m, s = np.concatenate([m0, m], axis=1), np.concatenate([s0, s], axis=1)
        bad = ~(np.all(np.isfinite(m), axis=1) & np.all(np.isfinite(s), axis=1))
        centre = ((m[:, 0] >= 0) & (s[:, 0] >= 0)).astype(float)
        m, s = np.where(np.isfinite(m), m, 0.0), np.where(np.isfinite(s), s, 0.0)
        m0, g, c = _moments(m, h)
        s0, u, d = _moments(s, h)
        var_m, var_s, cov = np.sum(g * g, axis=1), np.sum(u * u, axis=1), np.sum(g * u, axis=1)
        first = joint_upper_probability(m0, np.sqrt(var_m), s0, np.sqrt(var_s), cov)
        second = joint_upper_probability(m0 + np.sum(c, axis=1), np.sqrt(var_m + 2.0 * np.sum(c * c, axis=1)),
                                         s0 + np.sum(d, axis=1), np.sqrt(var_s + 2.0 * np.sum(d * d, axis=1)),
                                         cov + 2.0 * np.sum(c * d, axis=1))
        e = np.abs(first - second)
        for i, q in enumerate(prob.uncertain):
            e = e + _clip_bound(prob, q, blk, m0, g[:, i], var_m) + _clip_bound(prob, q, blk, s0, u[:, i], var_s)
        first = np.where(bad, centre, first)
        e = np.where(bad | ~np.isfinite(e), 1.0, e)  # no linear model through a non-finite point: 'auto' samples
        n = blk.size
        p1[:, done:done + n], err[:, done:done + n] = first, e
        done += n
    return p1, err
