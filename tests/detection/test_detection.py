"""Checks of subsurf.detection against independent solvers, closed forms and published results."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants, special
from scipy.optimize import brentq

import subsurf.detection as D
from subsurf.errors import InputError, ModelRangeWarning
from subsurf.waves import propagation as P

METAL_LINE = D.Target("line", depth_m=1.0, size_m=0.1, conductor=True, material="metal")
VOID = D.Target("point", depth_m=1.0, size_m=0.5, eps=1.0 + 0j, material="air")
TABLE = D.Target("planar", depth_m=2.0, eps=25.0 + 0j, sigma=1e-3, material="saturated_sand")
KINDS = [METAL_LINE, VOID, TABLE]


@pytest.mark.parametrize("target", KINDS, ids=lambda t: t.kind)
def test_max_depth_matches_brentq_root(target):
    """Lambert-W depth equals an independent brentq root of L(d) = P (each target kind)."""
    eps, sigma, f, perf = 9.0, 0.01, 250e6, 90.0
    d = float(D.max_depth(eps, sigma, f, perf, target=target, gain=2.0))
    root = brentq(lambda x: float(D.two_way_loss_db(x, eps, sigma, f, target, gain=2.0)) - perf, 1e-4, 1e3,
                  xtol=1e-12)
    assert d == pytest.approx(root, rel=1e-9)


def test_planar_budget_agrees_with_propagation_module():
    """With a fixed gain, one frequency, no layers or separation the budget is DESIGN.md's max_detectable_depth."""
    from subsurf.propagation import max_detectable_depth

    t = D.Target("planar", reflection=0.4)
    mine = D.max_depth(9.0, 0.005, 200e6, 100.0, target=t, gain=3.0)
    theirs = max_detectable_depth(9.0, 0.005, 200e6, 100.0, target="planar", reflection=0.4, gain=3.0)
    assert float(mine) == pytest.approx(float(theirs), rel=1e-12)


def test_metal_reflection_is_minus_one():
    """A perfect conductor reflects with R = −1 (|R| = 1) whatever the host."""
    r = D.target_reflection(np.array([4.0, 9.0, 25.0]), 0.01, 100e6, METAL_LINE)
    np.testing.assert_allclose(r, -1.0)


def test_good_conductor_approaches_metal():
    """A very conductive target material gives |R| → 1 (limit of the exact coefficient)."""
    t = D.Target("planar", eps=1.0 + 0j, sigma=1e7)
    assert abs(complex(D.target_reflection(9.0, 0.0, 100e6, t))) == pytest.approx(1.0, abs=1e-3)


@pytest.mark.parametrize("eps_host,eps_target,expected", [
    (9.0, 1.0, 0.5),      # soil over air void: (3 − 1)/(3 + 1), textbook lossless contrast
    (1.0, 9.0, -0.5),     # air over ε = 9
    (4.0, 81.0, -7 / 11),  # dry sand over water: (2 − 9)/(2 + 9)
])
def test_textbook_dielectric_reflection(eps_host, eps_target, expected):
    """Lossless R = (√ε₁ − √ε₂)/(√ε₁ + √ε₂) (e.g. Annan 2009), to 1e-12."""
    t = D.Target("planar", eps=complex(eps_target))
    assert complex(D.target_reflection(eps_host, 0.0, 100e6, t)) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize("target", [METAL_LINE, VOID], ids=lambda t: t.kind)
def test_point_and_line_loss_match_radar_equation_written_here(target):
    """L(d) of point and line targets equals the radar range equation written independently here.

    Point: P_r/P_t = G²λ²σ/((4π)³d⁴) (Daniels 2004, ch. 4).  Line: the same equation with the
    finite-cylinder cross-section σ = 2σ₂L²/λ (Knott et al. 2004) over the stationary-phase length
    L² = λd/2 (checked against a physical-optics integral in test_budget_physics), i.e. σ = σ₂·d.
    Fixed gain, one frequency, no surface loss (the coupling model is checked separately).
    """
    eps, sigma, f, d, gain = 9.0, 0.004, 250e6, 1.7, 2.0
    omega = 2 * np.pi * f
    gamma = np.sqrt(1j * omega * constants.mu_0 * (sigma + 1j * omega * constants.epsilon_0 * eps))
    lam, alpha = 2 * np.pi / gamma.imag, gamma.real
    if target.kind == "point":
        cross = float(D.radar_cross_section(eps, sigma, f, target))
    else:
        cross = float(D.echo_width(eps, sigma, f, target)) * 2 * (lam * d / 2) / lam
    ratio = gain**2 * lam**2 * cross / ((4 * np.pi) ** 3 * d**4) * np.exp(-4 * alpha * d)
    got = float(D.two_way_loss_db(d, eps, sigma, f, target, gain=gain))
    assert got == pytest.approx(-10 * np.log10(ratio), abs=1e-9)


def _exact_echo_width_pec(ka, k):
    # exact TM backscatter echo width of a PEC cylinder (Balanis 2012, §11.5): (4/k)|Σ ε_n (−1)^n J_n/H_n|²
    n = np.arange(int(ka + 40))
    e = np.where(n == 0, 1.0, 2.0)
    return 4.0 / k * abs(np.sum(e * (-1.0) ** n * special.jv(n, ka) / special.hankel2(n, ka))) ** 2


def _exact_echo_width_dielectric(ka, er, k):
    n = np.arange(int(ka * np.sqrt(er) + 40))
    e = np.where(n == 0, 1.0, 2.0)
    x1, k1 = ka * np.sqrt(er + 0j), np.sqrt(er + 0j)
    num = special.jvp(n, ka) * special.jv(n, x1) - k1 * special.jv(n, ka) * special.jvp(n, x1)
    den = special.h2vp(n, ka) * special.jv(n, x1) - k1 * special.hankel2(n, ka) * special.jvp(n, x1)
    return 4.0 / k * abs(np.sum(e * (-1.0) ** n * (-num / den))) ** 2


@pytest.mark.parametrize("ka", [0.02, 0.1, 1.0, 3.0, 10.0, 30.0])
def test_metal_echo_width_against_series(ka):
    """Metal cylinder echo width within 1 dB of the exact Bessel series (regime formulas' worst case ka≈0.3)."""
    eps, f = 9.0, 100e6
    k = float(P.wave_properties(eps, 0.0, f).beta)
    t = D.Target("line", size_m=2 * ka / k, conductor=True)
    ours = float(D.echo_width(eps, 0.0, f, t))
    assert 10 * np.log10(ours / _exact_echo_width_pec(ka, k)) == pytest.approx(0.0, abs=1.0)


@pytest.mark.parametrize("ka,er", [(0.01, 1 / 9), (0.01, 9.0), (0.02, 0.25)])
def test_thin_dielectric_echo_width_against_series(ka, er):
    """Thin dielectric cylinder: small-argument form within 2 % of the exact series for k·a·√ε_r ≪ 1."""
    eps_host, f = 9.0, 100e6
    k = float(P.wave_properties(eps_host, 0.0, f).beta)
    t = D.Target("line", size_m=2 * ka / k, eps=complex(er * eps_host))
    assert float(D.echo_width(eps_host, 0.0, f, t)) == pytest.approx(_exact_echo_width_dielectric(ka, er, k),
                                                                       rel=0.02)


def test_large_sphere_rcs_is_optical():
    """Sphere with ka ≫ 1: σ = πa²|R|² (Knott et al. 2004, optical region)."""
    t = D.Target("point", size_m=4.0, conductor=True)
    assert float(D.radar_cross_section(9.0, 0.0, 1e9, t)) == pytest.approx(np.pi * 4.0)


def test_small_metal_sphere_rcs_is_rayleigh():
    """Metal sphere with ka ≪ 1: σ = 9πa²(ka)⁴ (Knott et al. 2004, Rayleigh region)."""
    f, eps, a = 50e6, 9.0, 0.01
    k = float(P.wave_properties(eps, 0.0, f).beta)
    t = D.Target("point", size_m=2 * a, conductor=True)
    assert float(D.radar_cross_section(eps, 0.0, f, t)) == pytest.approx(9 * np.pi * a**2 * (k * a) ** 4)


def test_line_depth_between_planar_and_point():
    """Spreading exponent ordering: in the lossless limit the line budget's slope lies between planar and point."""
    d = np.array([1.0, 10.0])
    slopes = []
    for t in (TABLE, METAL_LINE, VOID):
        L = D.two_way_loss_db(d, 9.0, 0.0, 100e6, t)
        slopes.append(L[1] - L[0])
    assert slopes == pytest.approx([20.0, 30.0, 40.0])


def test_fresnel_radius_textbook_value():
    """r = √(λd/2 + λ²/16): λ = 1 m, d = 2 m gives √(1 + 1/16) (hand calculation)."""
    assert float(D.fresnel_radius(1.0, 2.0)) == pytest.approx(np.sqrt(1 + 1 / 16))


def test_footprint_annan_cosway():
    """A = λ/4 + d/√(ε'−1): λ = 0.4 m, d = 3 m, ε' = 10 gives 0.1 + 1 m (Annan & Cosway 1992)."""
    assert float(D.footprint_radius(0.4, 3.0, 10.0)) == pytest.approx(1.1)


def test_vectorised_shapes():
    """max_depth broadcasts over (n_antennas, ny, nx) arrays."""
    rng = np.random.default_rng(3)
    eps = rng.uniform(4, 25, (1, 5, 7))
    sigma = rng.uniform(1e-4, 0.05, (1, 5, 7))
    f = np.array([100e6, 250e6, 500e6])[:, None, None]
    perf = np.array([80.0, 88.0, 80.0])[:, None, None]
    out = D.max_depth(eps, sigma, f, perf, target=METAL_LINE, gain=2.0)
    assert out.shape == (3, 5, 7) and np.all(out > 0)


@settings(max_examples=40, deadline=None)
@given(s1=st.floats(1e-3, 0.1), factor=st.floats(1.1, 10.0), eps=st.floats(3.0, 30.0))
def test_depth_falls_with_conductivity(s1, factor, eps):
    """Property: more conductive ground, shallower maximum depth."""
    d1, d2 = (float(D.max_depth(eps, s, 200e6, 90.0, target=METAL_LINE)) for s in (s1, s1 * factor))
    assert d2 < d1


@settings(max_examples=40, deadline=None)
@given(f1=st.floats(50e6, 1e9), factor=st.floats(1.2, 4.0))
def test_depth_falls_with_frequency_in_lossy_ground(f1, factor):
    """Property: at fixed performance, higher frequency reaches less deep in lossy ground."""
    eps = 12.0 - 1.0j
    d1, d2 = (float(D.max_depth(eps, 0.02, f, 90.0, target=TABLE)) for f in (f1, f1 * factor))
    assert d2 < d1


@settings(max_examples=40, deadline=None)
@given(p1=st.floats(40.0, 150.0), extra=st.floats(0.5, 40.0))
def test_depth_rises_with_performance(p1, extra):
    """Property: more system performance, deeper detection."""
    d1, d2 = (float(D.max_depth(9.0, 0.01, 250e6, p, target=VOID)) for p in (p1, p1 + extra))
    assert d2 > d1


@settings(max_examples=40, deadline=None)
@given(d1=st.floats(0.05, 20.0), extra=st.floats(0.01, 10.0))
def test_margin_monotone_in_depth(d1, extra):
    """Property: the margin falls as the target gets deeper."""
    m1, m2 = (float(D.margin_db(d, 9.0, 0.005, 250e6, 90.0, target=METAL_LINE)) for d in (d1, d1 + extra))
    assert m2 < m1


def test_verdict_thresholds():
    """Verdicts at the documented thresholds: ≥ 6 dB reaches, 0–6 marginal, < 0 does not reach."""
    assert list(D.verdict([6.0, 5.9, 0.0, -0.1])) == ["reaches", "marginal", "marginal", "does not reach"]


@pytest.mark.parametrize("kwargs", [
    {"kind": "line", "size_m": -0.1, "conductor": True},
    {"kind": "point", "conductor": True},
    {"kind": "planar", "depth_m": 0.0, "conductor": True},
    {"kind": "blob", "conductor": True},
    {"kind": "planar"},
])
def test_bad_targets_raise(kwargs):
    """Non-positive size or depth, missing size or contrast, unknown kind: InputError."""
    with pytest.raises(InputError):
        D.Target(**kwargs)


def test_nonpositive_performance_raises():
    """performance_db ≤ 0 is refused with a message naming it."""
    with pytest.raises(InputError, match="performance_db"):
        D.max_depth(9.0, 0.01, 1e8, 0.0, target=TABLE)


def test_target_wider_than_footprint_warns():
    """A target wider than the footprint triggers a ModelRangeWarning."""
    t = D.Target("point", depth_m=0.2, size_m=3.0, conductor=True)
    with pytest.warns(ModelRangeWarning, match="footprint"):
        D.check_target_footprint(t, 0.3)
