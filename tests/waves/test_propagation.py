"""Checks of subsurf.propagation against outside sources, each named beside the check."""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants
from scipy.optimize import brentq

from subsurf import SubsurfError
from subsurf.errors import LowLossApproximationWarning
from subsurf.propagation import (
    NP_TO_DB,
    depth_from_time,
    low_loss_attenuation,
    max_detectable_depth,
    reflection_coefficient,
    time_from_depth,
    transmission_coefficient,
    wave_properties,
)

EPS0, MU0, C = constants.epsilon_0, constants.mu_0, constants.c


# --- reference library: scikit-rf's lossy homogeneous medium ---------------------------

@pytest.mark.parametrize(
    "eps, sigma, f",
    [(9.0, 0.0, 100e6), (9 - 2j, 0.0, 100e6), (25.0, 0.05, 250e6), (4.0, 1e-3, 1e9), (81 - 5j, 3.0, 50e6)],
)
def test_gamma_and_impedance_match_scikit_rf(eps, sigma, f):
    """γ and Z agree with scikit-rf's Freespace medium (conductivity folded into ε'')."""
    skrf = pytest.importorskip("skrf")
    from skrf.media import Freespace

    freq = skrf.Frequency(f, f, 1, unit="Hz")
    # scikit-rf uses the same exp(jωt) convention: ε_r = ε' − j(ε'' + σ/(ωε₀))
    ep_r = complex(eps) - 1j * sigma / (2 * np.pi * f * EPS0)
    medium = Freespace(frequency=freq, ep_r=ep_r, mu_r=1.0)
    w = wave_properties(eps, sigma, f)
    assert w.gamma == pytest.approx(complex(medium.gamma[0]), rel=1e-10)
    assert w.impedance == pytest.approx(complex(medium.z0_characteristic[0]), rel=1e-10)


def test_alpha_beta_match_textbook_closed_form():
    """α, β agree with the real-valued closed form (Balanis 2012, eq. 4-51/4-52)."""
    eps_r, sigma, f = 16.0, 0.02, 200e6
    omega = 2 * math.pi * f
    tan_d = sigma / (omega * EPS0 * eps_r)
    k = omega * math.sqrt(MU0 * EPS0 * eps_r)
    alpha = k * math.sqrt(0.5 * (math.sqrt(1 + tan_d**2) - 1))
    beta = k * math.sqrt(0.5 * (math.sqrt(1 + tan_d**2) + 1))
    w = wave_properties(eps_r, sigma, f)
    assert w.alpha == pytest.approx(alpha, rel=1e-10)
    assert w.beta == pytest.approx(beta, rel=1e-10)
    assert w.velocity == pytest.approx(omega / beta, rel=1e-12)
    assert w.loss_tangent == pytest.approx(tan_d, rel=1e-12)


def test_independent_complex_sqrt_cmath():
    """γ from cmath.sqrt of jωμ(σ + jωε₀ε) computed independently, element by element."""
    eps = np.array([4 - 0.1j, 12 - 1j, 30 - 6j])
    sig = np.array([0.0, 0.01, 0.2])
    f = np.array([25e6, 400e6, 1.6e9])
    w = wave_properties(eps, sig, f)
    for i in range(3):
        om = 2 * math.pi * f[i]
        g = cmath.sqrt(1j * om * MU0 * (sig[i] + 1j * om * EPS0 * eps[i]))
        assert w.gamma[i] == pytest.approx(g, rel=1e-12)


def test_field_satisfies_helmholtz_by_finite_differences():
    """E = exp(−γz) satisfies d²E/dz² = γ²E (second-order central difference residual)."""
    w = wave_properties(9 - 0.5j, 0.01, 300e6)
    g = complex(w.gamma)
    h = 1e-4
    z = np.linspace(0.1, 2.0, 50)
    e = np.exp(-g * z)
    d2 = (np.exp(-g * (z + h)) - 2 * e + np.exp(-g * (z - h))) / h**2
    resid = np.abs(d2 - g**2 * e) / np.abs(g**2 * e)
    # truncation error of the central difference is |γ|²h²/12 ≈ 1e-7 here
    assert resid.max() < 1e-5


def test_lossless_limit_is_exact():
    """In a lossless medium α = 0, v = c/√ε', skin depth infinite, Z = η₀/√ε'."""
    w = wave_properties(4.0, 0.0, 100e6)
    assert w.alpha == 0.0
    assert w.velocity == pytest.approx(C / 2.0, rel=1e-12)
    assert math.isinf(w.skin_depth)
    eta0 = math.sqrt(MU0 / EPS0)
    assert w.impedance == pytest.approx(eta0 / 2.0, rel=1e-12)


# --- handbook table: Davis & Annan (1989), Geophys. Prosp. 37, 531-551, Table 1 (values from memory) ---
# (material, eps', sigma mS/m, table velocity m/ns, table attenuation dB/m); the table is for
# ~100 MHz and its entries are rounded, so tolerances are per row.
DAVIS_ANNAN = [
    ("air", 1.0, 0.0, 0.30, 0.0),
    ("fresh water", 80.0, 0.5, 0.033, 0.1),
    ("dry sand", 4.0, 0.01, 0.15, 0.01),
    ("saturated sand", 25.0, 0.5, 0.06, 0.15),
]


@pytest.mark.parametrize("name, eps, sig_ms, v_table, a_table", DAVIS_ANNAN)
def test_davis_annan_table_velocity_and_attenuation(name, eps, sig_ms, v_table, a_table):
    """Velocity within 10 % and attenuation within a factor 1.5 of the Davis & Annan table."""
    w = wave_properties(eps, sig_ms * 1e-3, 100e6)
    assert w.velocity / 1e9 == pytest.approx(v_table, rel=0.1), name
    if a_table == 0:
        assert w.attenuation_db_per_m == 0
    else:
        assert a_table / 1.5 < w.attenuation_db_per_m < a_table * 1.5, name


def test_sea_water_and_clay_order_of_magnitude():
    """Sea water (~4.3 S/m: ~340 dB/m, ~0.015 m/ns at 100 MHz) and clay (1-300 dB/m, table from memory)."""
    import gsw

    # TEOS-10: conductivity of SP 35 water at 15 degC, 0 dbar (gsw returns mS/cm)
    sea = wave_properties(78.0, gsw.C_from_SP(35.0, 15.0, 0.0) * 0.1, 100e6)
    assert 300 < sea.attenuation_db_per_m < 400
    assert 0.012 < sea.velocity / 1e9 < 0.018
    for sig_ms in (2.0, 100.0, 1000.0):
        clay = wave_properties(25.0, sig_ms * 1e-3, 100e6)
        assert 0.3 < clay.attenuation_db_per_m < 400


# --- low-loss approximation (Annan 2009: α ≈ 1.64 σ[mS/m]/√ε' dB/m) --------------------------

def test_low_loss_formula_constant_is_1_64():
    """(1/2)·√(μ₀/ε₀)·8.686·1e-3 ≈ 1.64 dB/m per mS/m (Annan 2009, from memory)."""
    a = low_loss_attenuation(1.0, 1e-3) * NP_TO_DB
    assert a == pytest.approx(1.64, abs=0.005)


def test_low_loss_agrees_with_exact_when_tan_delta_small():
    """Low-loss α within 0.01 % of exact where tan δ ≤ 0.01 (error ~ tan²δ/8)."""
    eps, sig, f = 9.0, 0.5e-3, 500e6
    w = wave_properties(eps, sig, f)
    assert w.loss_tangent < 0.01
    assert low_loss_attenuation(eps, sig, f) == pytest.approx(w.alpha, rel=1e-4)


def test_low_loss_warns_and_differs_when_lossy():
    """Where tan δ > 0.1 the approximation warns, and it really is off by > 5 %."""
    eps, sig, f = 9.0, 0.1, 25e6
    w = wave_properties(eps, sig, f)
    assert w.loss_tangent > 1
    with pytest.warns(LowLossApproximationWarning):
        approx = low_loss_attenuation(eps, sig, f)
    assert abs(approx - w.alpha) / w.alpha > 0.05


# --- reflection and transmission -------------------------------------------------------------

def test_reflection_lossless_textbook():
    """R = (√ε₁ − √ε₂)/(√ε₁ + √ε₂) for lossless media (Annan 2009); air→ε=9 gives −0.5."""
    r = reflection_coefficient(1.0, 0.0, 9.0, 0.0, 100e6)
    assert r == pytest.approx(-0.5, abs=1e-12)
    r2 = reflection_coefficient(25.0, 0.0, 4.0, 0.0, 100e6)
    assert r2 == pytest.approx((5 - 2) / (5 + 2), abs=1e-12)


def test_transmission_energy_conservation_lossless():
    """|R|² + (√ε₂/√ε₁)|T|² = 1 across a lossless interface (power flux conservation)."""
    e1, e2 = 4.0, 20.0
    r = reflection_coefficient(e1, 0, e2, 0, 200e6)
    t = transmission_coefficient(e1, 0, e2, 0, 200e6)
    assert abs(r) ** 2 + math.sqrt(e2 / e1) * abs(t) ** 2 == pytest.approx(1.0, abs=1e-12)
    assert t == pytest.approx(1 + r, abs=1e-12)


def test_metal_reflection_tends_to_minus_one():
    """A very good conductor (σ = 1e7 S/m) reflects with R → −1 (perfect conductor limit)."""
    r = reflection_coefficient(9.0, 0.001, 1.0, 1e7, 250e6)
    assert abs(r) == pytest.approx(1.0, abs=1e-3)
    assert r.real < -0.99


# --- time ↔ depth --------------------------------------------------------------------------

def test_depth_from_time_zero_offset():
    """d = v·t/2: 20 ns at 0.1 m/ns is 1 m."""
    assert depth_from_time(20e-9, 0.1e9) == pytest.approx(1.0)


def test_depth_from_time_with_separation_pythagoras():
    """With separation x the slant path gives d = √((vt/2)² − (x/2)²): 3-4-5 triangle."""
    # half path 5 m, half separation 3 m → depth 4 m
    assert depth_from_time(100e-9, 0.1e9, offset_m=6.0) == pytest.approx(4.0)
    assert time_from_depth(4.0, 0.1e9, offset_m=6.0) == pytest.approx(100e-9)


def test_depth_from_time_refuses_separation_too_large():
    """No real depth when v·t < x."""
    with pytest.raises(SubsurfError, match="offset_m"):
        depth_from_time(10e-9, 0.1e9, offset_m=2.0)


# --- detection depth vs an independent root finder -------------------------------------------

def _planar_loss(d, eps, sig, f, gain, refl):
    # DESIGN.md definition, written independently of the package
    om = 2 * math.pi * f
    g = cmath.sqrt(1j * om * MU0 * (sig + 1j * om * EPS0 * eps))
    lam = 2 * math.pi / g.imag
    spread = -10 * math.log10(gain**2 * lam**2 * refl**2 / ((4 * math.pi) ** 2 * (2 * d) ** 2))
    return spread + 2 * (20 / math.log(10)) * g.real * d


def _point_loss(d, eps, sig, f, gain, rcs):
    om = 2 * math.pi * f
    g = cmath.sqrt(1j * om * MU0 * (sig + 1j * om * EPS0 * eps))
    lam = 2 * math.pi / g.imag
    spread = -10 * math.log10(gain**2 * lam**2 * rcs / ((4 * math.pi) ** 3 * d**4))
    return spread + 2 * (20 / math.log(10)) * g.real * d


@pytest.mark.parametrize("eps, sig, f, perf", [(4, 1e-3, 100e6, 150), (9, 0.01, 250e6, 130),
                                                (25, 0.05, 50e6, 160), (15, 0.1, 1e9, 120)])
def test_planar_max_depth_matches_brentq(eps, sig, f, perf):
    """Lambert W depth solves L(d) = P to 1e-9 relative, against scipy's brentq."""
    d = max_detectable_depth(eps, sig, f, perf, target="planar", reflection=0.3, gain=2.0)
    ref = brentq(lambda x: _planar_loss(x, eps, sig, f, 2.0, 0.3) - perf, 1e-9, 1e6, xtol=1e-14)
    assert d == pytest.approx(ref, rel=1e-9)


@pytest.mark.parametrize("eps, sig, f, perf", [(4, 1e-3, 100e6, 150), (9, 0.01, 250e6, 130)])
def test_point_max_depth_matches_brentq(eps, sig, f, perf):
    """Point-target depth against brentq on the d⁴ range equation."""
    d = max_detectable_depth(eps, sig, f, perf, target="point", rcs_m2=0.05)
    ref = brentq(lambda x: _point_loss(x, eps, sig, f, 1.0, 0.05) - perf, 1e-9, 1e6, xtol=1e-14)
    assert d == pytest.approx(ref, rel=1e-9)


def _soil_grid():
    """A grid of soils: ε' 1-81 (real and with a dielectric loss ε''), σ 0 and 1e-5-1 S/m, 10 MHz-2 GHz."""
    eps_re = np.array([1.0, 3.0, 9.0, 25.0, 81.0])
    eps = np.concatenate([eps_re, eps_re - 1j * 0.05 * eps_re])[:, None, None]
    sig = np.array([0.0, 1e-5, 1e-3, 0.03, 1.0])[None, :, None]
    f = np.array([10e6, 100e6, 500e6, 2e9])[None, None, :]
    return eps, sig, f


def _max_depth_from_wave_properties(eps, sig, f, perf, refl, gain):
    # the path before the lean α/λ one: full WaveProperties, then the same loss terms and solver
    from subsurf.propagation import depth_from_loss_terms
    w = wave_properties(eps, sig, f)
    k0 = -10.0 * np.log10(gain**2 * w.wavelength**2 * refl**2 / ((4 * np.pi) ** 2 * 4.0))
    return depth_from_loss_terms(k0, 2.0, w.alpha, perf)


def test_max_depth_lean_path_equals_wave_properties_path():
    """The α/λ-only path gives the depths of the full-WaveProperties path to 1e-12 (grid of soils)."""
    eps, sig, f = _soil_grid()
    for e in (eps, eps.real):  # complex ε (own validation branch) and real ε'
        lean = max_detectable_depth(e, sig, f, 140.0, reflection=0.4, gain=2.0)
        full = _max_depth_from_wave_properties(e, sig, f, 140.0, 0.4, 2.0)
        assert lean.shape == full.shape == (10, 5, 4)
        np.testing.assert_allclose(lean, full, rtol=1e-12, atol=0.0)


def test_max_depth_grid_matches_brentq_on_hand_written_budget():
    """Every cell of the soil grid against scipy's brentq on the scalar range equation written here
    (cmath complex square root, DESIGN.md's planar L(d)), including ε'' > 0 and σ = 0."""
    eps, sig, f = _soil_grid()
    perf = 140.0
    d = max_detectable_depth(eps, sig, f, perf, reflection=0.4, gain=2.0)
    e_b, s_b, f_b = np.broadcast_arrays(eps, sig, f)
    for idx in np.ndindex(d.shape):
        e, s, fr = complex(e_b[idx]), float(s_b[idx]), float(f_b[idx])

        def budget(x, e=e, s=s, fr=fr):
            om = 2 * math.pi * fr
            g = cmath.sqrt(1j * om * MU0 * (s + 1j * om * EPS0 * e))
            lam = 2 * math.pi / g.imag
            spread = -10 * math.log10(2.0**2 * lam**2 * 0.4**2 / ((4 * math.pi) ** 2 * (2 * x) ** 2))
            return spread + 2 * (20 / math.log(10)) * g.real * x - perf

        ref = brentq(budget, 1e-12, 1e9, xtol=1e-15, rtol=1e-14, maxiter=500)
        assert d[idx] == pytest.approx(ref, rel=1e-9), idx


def test_max_depth_lossless_closed_form():
    """Lossless planar: d = G·λ·|R|·10^(P/20)/(8π) exactly."""
    eps, f, perf, refl, gain = 4.0, 100e6, 120.0, 0.5, 1.5
    lam = C / math.sqrt(eps) / f
    expected = gain * lam * refl * 10 ** (perf / 20) / (8 * math.pi)
    assert max_detectable_depth(eps, 0.0, f, perf, reflection=refl, gain=gain) == pytest.approx(expected, rel=1e-12)


def test_max_depth_huge_performance_no_overflow():
    """Very large κ (e^κ overflows a float) is still solved accurately (asymptotic Newton)."""
    eps, sig, f, perf = 4.0, 1e-6, 100e6, 7000.0
    d = max_detectable_depth(eps, sig, f, perf)
    assert np.isfinite(d)
    assert _planar_loss(float(d), eps, sig, f, 1.0, 1.0) == pytest.approx(perf, rel=1e-9)


def test_max_depth_broadcasts_soils_by_frequencies():
    """Soils × frequencies broadcast to a 2-D result equal to scalar calls."""
    sig = np.array([1e-3, 1e-2, 5e-2])[:, None]
    f = np.array([50e6, 250e6, 1e9])[None, :]
    d = max_detectable_depth(9.0, sig, f, 140.0)
    assert d.shape == (3, 3)
    assert d[1, 2] == pytest.approx(max_detectable_depth(9.0, 1e-2, 1e9, 140.0))


# --- property tests (hypothesis) ---------------------------------------------------------

eps_st = st.floats(1.0, 90.0)
sig_st = st.floats(0.0, 5.0)
f_st = st.floats(1e6, 5e9)


@settings(max_examples=200, deadline=None)
@given(eps_st, st.floats(1e-6, 2.0), st.floats(1.01, 3.0), f_st)
def test_attenuation_rises_with_conductivity(eps, sig, factor, f):
    """α increases strictly with σ (physical invariant)."""
    a1 = wave_properties(eps, sig, f).alpha
    a2 = wave_properties(eps, sig * factor, f).alpha
    assert a2 > a1


@settings(max_examples=200, deadline=None)
@given(eps_st, st.floats(1e-6, 2.0), st.floats(1e6, 2e9), st.floats(1.01, 3.0))
def test_attenuation_rises_with_frequency(eps, sig, f, factor):
    """α is non-decreasing in frequency for constant ε and σ."""
    a1 = wave_properties(eps, sig, f).alpha
    a2 = wave_properties(eps, sig, f * factor).alpha
    assert a2 >= a1 * (1 - 1e-12)


@settings(max_examples=200, deadline=None)
@given(st.floats(1.0, 80.0), st.floats(1.01, 2.0), sig_st, f_st)
def test_velocity_falls_with_permittivity(eps, factor, sig, f):
    """Phase velocity decreases as ε' increases."""
    assert wave_properties(eps * factor, sig, f).velocity < wave_properties(eps, sig, f).velocity


@settings(max_examples=200, deadline=None)
@given(eps_st, sig_st, st.floats(0, 30), eps_st, sig_st, st.floats(0, 30), f_st)
def test_reflection_magnitude_bounded_for_passive_media(e1, s1, l1, e2, s2, l2, f):
    """|R| ≤ 1 between any two passive media."""
    r = reflection_coefficient(complex(e1, -l1), s1, complex(e2, -l2), s2, f)
    assert abs(r) <= 1 + 1e-12


@settings(max_examples=200, deadline=None)
@given(eps_st, st.floats(0, 30), sig_st, f_st)
def test_outputs_finite_for_valid_input(eps, loss, sig, f):
    """Every property is finite (skin depth may be +inf only where 1/α overflows a float)."""
    w = wave_properties(complex(eps, -loss), sig, f)
    for name in ("alpha", "beta", "velocity", "wavelength", "attenuation_db_per_m", "loss_tangent"):
        assert np.isfinite(getattr(w, name)), name
    assert np.isfinite(w.impedance)
    # a subnormal σ (e.g. 5e-324 S/m) gives α ~ 1e-321 Np/m, whose reciprocal is beyond
    # the largest float: an infinite skin depth is then the correct float answer
    assert np.isfinite(w.skin_depth) or w.alpha < 1.0 / np.finfo(float).max


@settings(max_examples=100, deadline=None)
@given(st.one_of(st.floats(-100, 0.999), st.just(float("nan"))), st.floats(-5, 5), st.floats(-1e9, 5e9))
def test_invalid_input_raises_project_error(eps, sig, f):
    """ε' < 1, σ < 0, f ≤ 0 or NaN always raise SubsurfError."""
    with pytest.raises(SubsurfError):
        wave_properties(eps, sig, f)


@settings(max_examples=100, deadline=None)
@given(st.floats(1, 40), st.floats(1e-5, 0.2), st.floats(20e6, 2e9), st.floats(60, 200), st.floats(1, 40))
def test_max_depth_monotone_in_performance(eps, sig, f, perf, extra):
    """More system performance never reduces the detectable depth."""
    d1 = max_detectable_depth(eps, sig, f, perf)
    d2 = max_detectable_depth(eps, sig, f, perf + extra)
    assert d2 > d1


@pytest.mark.parametrize("call", [
    lambda: wave_properties(np.ones(3) * 4, np.ones(2) * 0.01, 1e8),
    lambda: reflection_coefficient(np.ones(3) * 4, 0, np.ones(2) * 9, 0, 1e8),
    lambda: depth_from_time(np.ones(3) * 1e-8, np.ones(2) * 1e8),
    lambda: time_from_depth(np.ones(3), np.ones(2) * 1e8),
])
def test_shape_mismatch_is_project_error(call):
    """Inputs that do not broadcast raise InputError naming the shapes, not numpy's bare ValueError."""
    with pytest.raises(SubsurfError, match="broadcast"):
        call()


@pytest.mark.parametrize("refl", ["strong", float("nan"), 1.5])
def test_bad_reflection_refused(refl):
    """A non-number, NaN or |R| > 1 (not passive) reflection is refused by the depth solver."""
    with pytest.raises(SubsurfError, match="reflection"):
        max_detectable_depth(9.0, 0.01, 1e8, 100.0, reflection=refl)
