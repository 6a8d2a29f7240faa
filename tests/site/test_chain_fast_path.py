"""The grid chain's lean formulation: real-valued Lambert W, α and β in real arithmetic,
|R|² from propagation constants, and the whole chain against the per-antenna budget of `choose`."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import constants, special

from subsurf.detection.solver import lambertw_of_exp
from subsurf.ground import Soil
from subsurf.ground.mixing import _sqrt_passive, crim_permittivity
from subsurf.planning.antennas import antenna_budget_for, load_catalogue, make_target
from subsurf.site.feasibility import evaluate
from subsurf.waves.propagation import _alpha_beta, _reflection_power_from_gamma

EPS0, MU0 = constants.epsilon_0, constants.mu_0
NP_TO_DB = 20.0 / np.log(10.0)


def _gamma_reference(eps, sigma, freq_hz, mu_r=1.0):
    """γ = √(jωμ(σ + jωε₀ε)) by numpy's complex principal square root (Balanis 2012, ch. 4)."""
    omega = 2.0 * np.pi * np.asarray(freq_hz)
    return np.sqrt(1j * omega * mu_r * MU0 * (sigma + 1j * omega * EPS0 * np.asarray(eps, dtype=complex)))


# --- Lambert W -------------------------------------------------------------------------------

def test_lambertw_matches_scipy_over_600_decades():
    """W(x) equals scipy.special.lambertw (independent, complex-valued) for x = 1e-300 … 1e300."""
    x = np.logspace(-300, 300, 20001)
    want = special.lambertw(x, 0).real
    got = lambertw_of_exp(np.log(x))
    # 1e-13: the log domain costs |ln x|·ulp near x → 0 (ln w ≈ ln x ≈ −40 at the switch to W = x)
    np.testing.assert_allclose(got, want, rtol=1e-13, atol=0)


def test_lambertw_log_domain_solves_defining_equation():
    """Beyond overflow (ln x = 710 … 1e300) w + ln w = ln x holds to round-off (definition)."""
    lx = np.concatenate([np.linspace(709.0, 5000.0, 2001), np.logspace(4, 300, 300)])
    w = lambertw_of_exp(lx)
    np.testing.assert_allclose(w + np.log(w), lx, rtol=4e-16, atol=0)


def test_lambertw_log_domain_matches_asymptotic_series():
    """For ln x ≥ 1e6, W = L₁ − L₂ + L₂/L₁ + L₂(L₂ − 2)/(2L₁²) (Corless et al. 1996, eq. 4.19)."""
    l1 = np.logspace(6, 300, 200)
    l2 = np.log(l1)
    series = l1 - l2 + l2 / l1 + l2 * (l2 - 2.0) / (2.0 * l1) / l1  # next term O((ln L₁)³/L₁³)
    np.testing.assert_allclose(lambertw_of_exp(l1), series, rtol=2e-16, atol=0)


def test_lambertw_tiny_arguments_and_nan():
    """W(x) = x for x ≪ 1 (series W = x − x² + …), 0 for x = 0, NaN in gives NaN; scalars stay scalar."""
    lx = np.array([-800.0, -745.2, -100.0, -40.5, -np.inf, np.nan])
    got = lambertw_of_exp(lx)
    np.testing.assert_array_equal(got[:5], np.exp(lx[:5]))
    assert np.isnan(got[5])
    assert np.shape(lambertw_of_exp(2.0)) == ()
    assert float(lambertw_of_exp(1.0)) == pytest.approx(1.0, rel=1e-15)  # W(e) = 1 (definition)


# --- α, β and |R|² in real arithmetic ----------------------------------------------------------

def test_alpha_beta_equal_complex_square_root():
    """α, β equal Re, Im of numpy's complex √(γ²) from lossless to metallic media (seeded random)."""
    rng = np.random.default_rng(11)
    n = 20000
    eps = rng.uniform(1.0, 90.0, n) - 1j * rng.uniform(0.0, 40.0, n) * (rng.random(n) < 0.7)
    sigma = 10.0 ** rng.uniform(-12, 8, n) * (rng.random(n) < 0.9)  # includes σ = 0 and 1e8 S/m
    freq = 10.0 ** rng.uniform(5, 10, n)
    mu = rng.uniform(1.0, 5.0, n)
    g = _gamma_reference(eps, sigma, freq, mu)
    alpha, beta = _alpha_beta(eps.real, -eps.imag, sigma, 2.0 * np.pi * freq, mu)
    np.testing.assert_allclose(beta, g.imag, rtol=1e-14, atol=0)
    np.testing.assert_allclose(alpha, g.real, rtol=1e-13, atol=0)
    assert np.all(alpha[(sigma == 0) & (eps.imag == 0)] == 0.0)  # lossless: α exactly 0


def test_alpha_beta_no_overflow_for_huge_loss_tangent():
    """σ = 1e300 S/m (tan²δ overflows a float) still gives α = β = √(ωμσ/2) (good-conductor limit)."""
    omega = 2.0 * np.pi * 1e8
    alpha, beta = _alpha_beta(np.array([4.0]), np.array([0.0]), np.array([1e300]), omega)
    good_conductor = np.sqrt(omega * MU0 * 1e300 / 2.0)
    np.testing.assert_allclose([alpha[0], beta[0]], good_conductor, rtol=1e-14)


def test_reflection_power_equals_impedance_formula():
    """|R|² from γ equals |(Z₂ − Z₁)/(Z₂ + Z₁)|², Z = jωμ/γ (Balanis 2012, §5.3), unequal μ included."""
    rng = np.random.default_rng(12)
    n = 5000
    e1, e2 = rng.uniform(1, 80, n) - 1j * rng.uniform(0, 10, n), rng.uniform(1, 80, n) - 1j * rng.uniform(0, 10, n)
    s1, s2 = 10.0 ** rng.uniform(-6, 1, n), 10.0 ** rng.uniform(-6, 1, n)
    f = 10.0 ** rng.uniform(6, 9.5, n)
    mu1, mu2 = rng.uniform(1, 3, n), rng.uniform(1, 3, n)
    g1, g2 = _gamma_reference(e1, s1, f, mu1), _gamma_reference(e2, s2, f, mu2)
    z1, z2 = 1j * 2 * np.pi * f * mu1 * MU0 / g1, 1j * 2 * np.pi * f * mu2 * MU0 / g2
    want = np.abs((z2 - z1) / (z2 + z1)) ** 2
    got = _reflection_power_from_gamma(g1.real, g1.imag, g2.real, g2.imag, mu1, mu2)
    np.testing.assert_allclose(got, want, rtol=1e-12, atol=1e-15)


def test_crim_square_root_equals_numpy_sqrt():
    """The CRIM path's real-arithmetic √ε equals numpy's complex principal square root."""
    rng = np.random.default_rng(13)
    eps = rng.uniform(1.0, 90.0, (50, 40)) - 1j * 10.0 ** rng.uniform(-8, 2.5, (50, 40))
    np.testing.assert_allclose(_sqrt_passive(eps), np.sqrt(eps), rtol=1e-15, atol=0)


def test_crim_equals_refractive_index_average():
    """CRIM ε = ((1 − φ)√ε_s + θ√ε_w + (φ − θ))² (Birchak et al. 1974) with numpy's complex sqrt."""
    rng = np.random.default_rng(14)
    theta = rng.uniform(0.0, 0.3, (3, 30))
    phi = theta + rng.uniform(0.01, 0.3, (3, 30))
    ew = rng.uniform(60, 85, (3, 1)) - 1j * rng.uniform(0.1, 30, (3, 1))
    want = ((1 - phi) * np.sqrt(4.7 + 0j) + theta * np.sqrt(ew) + (phi - theta)) ** 2
    np.testing.assert_allclose(crim_permittivity(theta, phi, 4.7, ew), want, rtol=1e-14)


# --- the whole chain against the per-antenna budget that `choose` uses -------------------------

def _per_antenna(soil_kw, antennas, target, depth_m):
    """Per antenna: the planning path of `choose` (antenna_budget_for) on a Soil with a band axis."""
    out = {k: [] for k in ("max_depth", "margin_db", "min_depth", "vertical_resolution", "received_freq")}
    kw = {k: np.asarray(v)[..., None] for k, v in soil_kw.items()}
    for a in antennas:
        b = antenna_budget_for(Soil(texture="loam", **kw).electrical, a, target, depth_m=depth_m)
        for k, src in (("max_depth", "max_depth"), ("margin_db", "margin_db"), ("min_depth", "min_depth"),
                       ("vertical_resolution", "vertical_resolution"), ("received_freq", "received_freq_hz")):
            out[k].append(np.broadcast_to(b[src], np.shape(soil_kw["moisture"])))
    return {k: np.array(v) for k, v in out.items()}


def test_chain_equals_choose_budget_per_antenna():
    """evaluate() on a seeded random grid equals, cell by cell, the budget `choose` evaluates per antenna."""
    rng = np.random.default_rng(15)
    shape = (12, 17)
    values = {"moisture": rng.uniform(0.03, 0.4, shape), "pore_water_ec": 10 ** rng.uniform(-3, 0, shape),
              "clay": rng.uniform(0.0, 0.35, shape)}
    antennas = list(load_catalogue().values())
    target = make_target("planar", depth_m=1.5, material="water_table")
    got = evaluate(values, antennas, target=target, target_depth_m=1.5, texture="loam")
    soil_kw = {"moisture": values["moisture"], "pore_water_ec25": values["pore_water_ec"], "clay": values["clay"]}
    want = _per_antenna(soil_kw, antennas, target, 1.5)
    for key in ("max_depth", "min_depth", "vertical_resolution", "received_freq"):
        np.testing.assert_allclose(got[key], want[key], rtol=1e-10, atol=0, err_msg=key)
    np.testing.assert_allclose(got["margin_db"], want["margin_db"], rtol=1e-10, atol=1e-9)


def test_chain_with_gaps_equals_choose_budget_at_the_cells_with_data():
    """evaluate() over a grid with gaps (NaN in either quantity) equals `choose`'s budget at the cells with data,
    with NaN layers and too_shallow False elsewhere, on the grid's shape (only the cells with data are run)."""
    rng = np.random.default_rng(17)
    shape = (9, 11)
    m, ec = rng.uniform(0.05, 0.35, shape), 10 ** rng.uniform(-3, -1, shape)
    gap_m, gap_ec = rng.random(shape) < 0.2, rng.random(shape) < 0.1
    ants = list(load_catalogue().values())[:3]
    target = make_target("line", depth_m=0.3, size_m=0.1, material="metal")
    got = evaluate({"moisture": np.where(gap_m, np.nan, m), "pore_water_ec": np.where(gap_ec, np.nan, ec)}, ants,
                   target=target, target_depth_m=0.3, texture="loam")
    want = _per_antenna({"moisture": m, "pore_water_ec25": ec}, ants, target, 0.3)
    have = ~(gap_m | gap_ec)
    for key in ("max_depth", "min_depth", "vertical_resolution", "received_freq"):
        assert got[key].shape == (len(ants),) + shape
        np.testing.assert_allclose(got[key][:, have], want[key][:, have], rtol=1e-12, err_msg=key)
        assert np.all(np.isnan(got[key][:, ~have])), key
    np.testing.assert_allclose(got["margin_db"][:, have], want["margin_db"][:, have], rtol=1e-12, atol=1e-10)
    assert got["too_shallow"].dtype == bool and not np.any(got["too_shallow"][:, ~have])
    assert np.any(got["too_shallow"][:, have])  # a shallow target: the blind zone matters in some cells


@pytest.mark.parametrize("target", [make_target("point", depth_m=1.0, size_m=0.3, material="air"),
                                    make_target("line", depth_m=1.0, size_m=0.1, material="metal"),
                                    make_target("planar", depth_m=1.0, reflection=0.3)])
def test_chain_other_targets_equal_choose_budget(target):
    """For point, line and explicit-R targets the grid path equals the per-antenna budget per cell."""
    rng = np.random.default_rng(16)
    m = rng.uniform(0.05, 0.35, (4, 5))
    ants = list(load_catalogue().values())[:3]
    got = evaluate({"moisture": m, "pore_water_ec": np.full_like(m, 0.02)}, ants, target=target,
                   target_depth_m=1.0, texture="loam")
    want = _per_antenna({"moisture": m, "pore_water_ec25": np.full_like(m, 0.02)}, ants, target, 1.0)
    np.testing.assert_allclose(got["max_depth"], want["max_depth"], rtol=1e-12)
    np.testing.assert_allclose(got["margin_db"], want["margin_db"], rtol=1e-12, atol=1e-10)
