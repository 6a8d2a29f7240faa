"""Feasibility chain over grids (subsurf.feasibility)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq
from scipy.stats import norm

from subsurf.detection import budget as detection
from subsurf.detection.verdicts import REACHES_MARGIN_DB
from subsurf.ground import Soil
from subsurf.planning.antennas import make_target
from subsurf.site.feasibility import (
    AntennaParameters,
    area_fractions,
    evaluate,
    feasibility_chain,
    reach_probability,
    recommend_antenna,
)

ANTS = [AntennaParameters("low", 100e6, 70.0, 2.0), AntennaParameters("mid", 250e6, 80.0, 2.5),
        AntennaParameters("high", 1000e6, 80.0, 4.0)]
PIPE = make_target("line", depth_m=1.0, size_m=0.1, material="metal")


def uniform(shape=(6, 7), moisture=0.12, ec=0.02):
    return {"moisture": np.full(shape, moisture), "pore_water_ec": np.full(shape, ec)}


def _single_point_terms(a):
    """Loss terms of one antenna (no bandwidth: its centre frequency) in the uniform soil, with its rough surface."""
    from subsurf.detection.evaluate import soil_loss_terms

    soil = Soil(moisture=0.12, pore_water_ec25=0.02, texture="loamy_sand")
    f = np.array([a.centre_freq_hz])
    eps, sig = soil.electrical(f)
    extra, surface = soil_loss_terms(soil, f, eps)
    return detection.loss_terms(eps, sig, f, PIPE, gain=np.array([a.gain]), extra_attenuation_np_per_m=extra,
                                surface_power_factor=surface)


def test_uniform_site_equals_single_point():
    """A uniform site gives every cell the single-point Soil → detection.max_depth result."""
    out = evaluate(uniform(), ANTS, target=PIPE, target_depth_m=1.0, texture="loamy_sand")
    for i, a in enumerate(ANTS):
        want = detection.max_depth(performance_db=a.performance_db, terms=_single_point_terms(a))
        assert np.allclose(out["max_depth"][i], want, rtol=1e-12)


def test_max_depth_solves_loss_equation_brentq():
    """The map's max depth is where the two-way loss equals the performance (brentq, independent solver)."""
    a = ANTS[1]
    out = feasibility_chain(0.12, freq_hz=a.centre_freq_hz, performance_db=a.performance_db, gain=a.gain,
                            target=PIPE, target_depth_m=1.0, pore_water_ec25=0.02, texture="loamy_sand")
    terms = _single_point_terms(a)

    def excess(d):
        return float(detection.two_way_loss_db(d, terms=terms)) - a.performance_db

    assert float(out["max_depth"]) == pytest.approx(brentq(excess, 1e-3, 50.0, xtol=1e-12), rel=1e-8)


def test_margin_sign_matches_depth_comparison():
    """Margin at the target depth is >= 0 exactly where the max depth reaches it (invariant)."""
    m = np.linspace(0.05, 0.35, 40).reshape(5, 8)
    out = evaluate({"moisture": m, "pore_water_ec": np.full_like(m, 0.03)}, ANTS, target=PIPE,
                   target_depth_m=1.0, texture="loamy_sand")
    assert np.array_equal(out["margin_db"] >= 0, out["max_depth"] >= 1.0)


def test_nan_cells_stay_nan():
    """Cells without soil data (NaN) give NaN layers; others are finite."""
    vals = uniform()
    vals["moisture"][0, 0] = np.nan
    out = evaluate(vals, ANTS, target=PIPE, target_depth_m=1.0, texture="loamy_sand")
    assert np.all(np.isnan(out["velocity"][:, 0, 0])) and np.all(np.isfinite(out["velocity"][:, 1:, :]))


def test_recommendation_rule():
    """Highest frequency with >= 6 dB margin; else largest non-negative margin; else -1."""
    margin = np.array([[10.0, 3.0, -5.0], [8.0, 1.0, -2.0], [2.0, -1.0, -3.0]])  # antennas x cells
    rec = recommend_antenna(margin, [100e6, 250e6, 1000e6])
    assert rec.tolist() == [1, 0, -1]


def test_area_fractions_count_cells():
    """Area fractions count inside cells only."""
    margin = np.array([[[1.0, -1.0], [7.0, 5.0]]])
    mask = np.array([[True, True], [True, False]])
    fr = area_fractions(margin, mask)
    # inside: 1.0 (marginal), -1.0 (does not reach), 7.0 (reaches, >= 6 dB); 5.0 is outside the site
    assert fr["reach"][0] == pytest.approx(1 / 3) and fr["marginal_or_better"][0] == pytest.approx(2 / 3)


def test_area_fractions_never_count_the_blind_zone():
    """A cell inside the blind zone is not reached whatever its margin (verdicts.reaches), in both fractions."""
    margin = np.array([[[20.0, 20.0], [3.0, -2.0]]])
    shallow = np.array([[[True, False], [False, False]]])
    fr = area_fractions(margin, np.ones((2, 2), bool), too_shallow=shallow)
    assert fr["reach"][0] == pytest.approx(1 / 4) and fr["marginal_or_better"][0] == pytest.approx(2 / 4)


def test_monte_carlo_without_uncertainty_is_deterministic_verdict():
    """With zero standard deviations the probability is 1 where the margin is >= the reach threshold (6 dB)
    outside the blind zone, else 0."""
    m = np.linspace(0.05, 0.35, 12).reshape(3, 4)
    vals = {"moisture": m, "pore_water_ec": np.full_like(m, 0.03)}
    out = evaluate(vals, ANTS, target=PIPE, target_depth_m=1.0, texture="loamy_sand")
    p, _ = reach_probability(vals, {}, ANTS, target=PIPE, target_depth_m=1.0, draws=20, seed=1,
                             texture="loamy_sand")
    assert np.array_equal(p, ((out["margin_db"] >= REACHES_MARGIN_DB) & ~out["too_shallow"]).astype(float))


def test_monte_carlo_matches_analytic_normal_probability():
    """With only moisture uncertain, P(reach) = Φ((θ* − μ)/s), θ* the brentq moisture where the margin equals the
    reach threshold (6 dB)."""
    a = ANTS[1]
    s = 0.02

    def margin(theta):
        return float(feasibility_chain(theta, freq_hz=a.centre_freq_hz, performance_db=a.performance_db,
                                       gain=a.gain, target=PIPE, target_depth_m=2.0, pore_water_ec25=0.05,
                                       texture="loamy_sand")["margin_db"]) - REACHES_MARGIN_DB

    theta_star = brentq(margin, 0.02, 0.35, xtol=1e-10)
    mu = theta_star - 0.5 * s
    assert mu - 5 * s > 0  # draws are clipped at 0: keep the clipping out of the comparison
    p_exact = norm.cdf((theta_star - mu) / s)  # margin falls as moisture rises
    draws = 4000
    p, se = reach_probability({"moisture": np.array([mu]), "pore_water_ec": np.array([0.05])},
                              {"moisture": np.array([s])}, [a], target=PIPE, target_depth_m=2.0, draws=draws,
                              seed=11, texture="loamy_sand")
    assert 0.05 < p_exact < 0.95
    assert abs(p[0, 0] - p_exact) < 4 * np.sqrt(p_exact * (1 - p_exact) / draws)


def test_monte_carlo_converges_between_draw_counts():
    """Two seeded runs with 300 and 1200 draws agree within 4 combined standard errors per cell."""
    m = np.array([0.10, 0.14, 0.18, 0.22])
    vals = {"moisture": m, "pore_water_ec": np.full(4, 0.05)}
    sds = {"moisture": np.full(4, 0.03), "pore_water_ec": np.full(4, 0.008)}
    p1, se1 = reach_probability(vals, sds, ANTS, target=PIPE, target_depth_m=2.0, draws=300, seed=5,
                                texture="loamy_sand")
    p2, se2 = reach_probability(vals, sds, ANTS, target=PIPE, target_depth_m=2.0, draws=1200, seed=6,
                                texture="loamy_sand")
    bound = 4 * np.sqrt(se1**2 + se2**2) + 1e-12
    assert np.all(np.abs(p1 - p2) <= np.maximum(bound, 4 * np.sqrt(0.25 / 300)))


def test_monte_carlo_is_reproducible_with_seed():
    """The same seed gives identical probabilities."""
    vals = {"moisture": np.array([0.15, 0.2])}
    sds = {"moisture": np.array([0.03, 0.03])}
    kw = dict(target=PIPE, target_depth_m=1.0, draws=100, seed=9, texture="loamy_sand")
    assert np.array_equal(reach_probability(vals, sds, ANTS, **kw)[0], reach_probability(vals, sds, ANTS, **kw)[0])
