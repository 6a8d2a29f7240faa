"""The full loss budget against outside physics: physical optics, invariants, coupling, band, geometry."""

import numpy as np
import pytest
from scipy import constants, special
from scipy.integrate import quad
from scipy.optimize import brentq

import subsurf.detection as D
from subsurf.errors import InputError
from subsurf.ground import Soil
from subsurf.planning.antennas import load_catalogue, make_target

C = constants.c


# --- line target: stationary-phase length against a physical-optics integral -------------------

def _po_effective_length_sq(k, d):
    """L_eff² = d⁴·|∫ e^(−2jk(r−d))·cos²ψ / r² dx|² along an infinite line at depth d (monostatic).

    Physical optics of a thin line: each element dx scatters like a short segment (amplitude
    ∝ dx/r² over the two legs, pattern cos ψ = d/r each way for E along the axis); a segment of
    length L ≪ √(λd) gives |∫|² = L²/d⁴, so L_eff is the in-phase length the infinite line acts as.
    Evaluated with scipy.integrate.quad's Fourier weights (independent of subsurf).
    """
    # in u = x/d: ∫ e^(−2jkd(√(1+u²)−1)) / (d·(1+u²)²) du ; substitute s = √(1+u²) − 1 (phase linear in s)
    def amp(s):
        u = np.sqrt((s + 1.0) ** 2 - 1.0)
        return (s + 1.0) / u / (1.0 + u * u) ** 2  # du/ds · (1+u²)^-2
    kd2 = 2.0 * k * d
    # split near s = 0 where du/ds ~ 1/√(2s) is integrable: integrate in t = √s there
    def near(t, part):
        s = t * t
        v = 2.0 * t * amp(s)
        return v * (np.cos(kd2 * s) if part == 0 else -np.sin(kd2 * s))
    edge = 1e-2
    re = quad(near, 0.0, np.sqrt(edge), args=(0,), limit=400)[0]
    im = quad(near, 0.0, np.sqrt(edge), args=(1,), limit=400)[0]
    re += quad(amp, edge, np.inf, weight="cos", wvar=kd2, limlst=200)[0]
    im -= quad(amp, edge, np.inf, weight="sin", wvar=kd2, limlst=200)[0]
    # x = d·u: ∫ … dx = (1/d)·J with J = ∫ e^(−2jkd(√(1+u²)−1))/(1+u²)² du (both sides), so L_eff² = d²·|J|²
    return d**2 * abs(2.0 * (re + 1j * im)) ** 2


@pytest.mark.parametrize("d_over_lambda", [5.0, 20.0, 80.0])
def test_line_stationary_phase_length_matches_physical_optics(d_over_lambda):
    """The infinite line acts as an in-phase length L² = λd/2 (64π³ in the budget), to O(λ/d)."""
    lam = 0.5
    k = 2 * np.pi / lam
    d = d_over_lambda * lam
    got = _po_effective_length_sq(k, d)
    assert got == pytest.approx(lam * d / 2.0, rel=0.6 / d_over_lambda)


def test_line_budget_equals_po_radar_equation():
    """Line loss = radar equation with σ = 2σ₂L_eff²/λ and L_eff² from the physical-optics integral (0.05 dB)."""
    eps, f, d, gain = 9.0, 200e6, 10.0, 2.0
    lam = C / f / 3.0
    t = D.Target("line", size_m=0.1, conductor=True)
    sigma2 = float(D.echo_width(eps, 0.0, f, t))
    l2 = _po_effective_length_sq(2 * np.pi / lam, d)
    ratio = gain**2 * lam**2 * (2 * sigma2 * l2 / lam) / ((4 * np.pi) ** 3 * d**4)
    assert float(D.two_way_loss_db(d, eps, 0.0, f, t, gain=gain)) == pytest.approx(-10 * np.log10(ratio), abs=0.05)


# --- invariants ----------------------------------------------------------------------------------

@pytest.mark.parametrize("kind,expected", [("planar", 6.02), ("line", 9.03), ("point", 12.04)])
def test_margin_halving_per_doubling_in_lossless_host(kind, expected):
    """margin(d) − margin(2d) = 10·p·log10 2 in a lossless host (spreading laws), with the full band budget."""
    target = {"planar": D.Target("planar", reflection=0.5), "line": D.Target("line", size_m=0.05, conductor=True),
              "point": D.Target("point", size_m=0.3, eps=1.0 + 0j)}[kind]
    f, w = D.band_nodes(250e6, 250e6)
    terms = D.loss_terms(np.full(f.shape, 9.0 + 0j), np.zeros(f.shape), f, target, weights=w)
    m1, m2 = (float(D.margin_db(d, performance_db=100.0, terms=terms)) for d in (3.0, 6.0))
    assert m1 - m2 == pytest.approx(expected, abs=0.005)


def test_margin_monotonic_in_loss():
    """More conductivity, less margin and less depth (every target kind, band budget)."""
    f, w = D.band_nodes(400e6, 400e6)
    for target in (D.Target("planar", reflection=0.3), D.Target("line", size_m=0.1, conductor=True),
                   D.Target("point", size_m=0.4, eps=1.0 + 0j)):
        sig = np.array([0.0, 1e-3, 5e-3, 2e-2])[:, None]
        terms = D.loss_terms(np.full((4, f.size), 9.0 + 0j), np.broadcast_to(sig, (4, f.size)), f, target, weights=w)
        m = D.margin_db(1.0, performance_db=90.0, terms=terms)
        dmax = D.max_depth(performance_db=90.0, terms=terms)
        assert np.all(np.diff(m) < 0) and np.all(np.diff(dmax) < 0)


def test_band_solver_matches_brentq():
    """The band solver's depth equals scipy brentq on the band loss (lossy ground, separation, layers)."""
    f, w = D.band_nodes(250e6, 250e6)
    eps, sig = Soil(texture="loam", moisture=0.2).electrical(f)
    lay = (D.Layer(0.08, 4.5 + 0j, 1e-3, "asphalt"),)
    for target in (D.Target("planar", reflection=0.3), D.Target("line", size_m=0.1, conductor=True)):
        terms = D.loss_terms(eps, sig, f, target, weights=w, separation_m=0.3, layers=lay)
        got = float(D.max_depth(performance_db=80.0, terms=terms))
        root = brentq(lambda d, terms=terms: float(D.two_way_loss_db(d, terms=terms)) - 80.0, 0.09, 100.0,
                      xtol=1e-13)
        assert got == pytest.approx(root, rel=1e-9)


# --- geometry: separation, layers ------------------------------------------------------------

def test_bistatic_planar_loss_is_image_source_slant_path():
    """With separation x the planar loss uses the image-source slant range 2√(d² + x²/4) (geometry)."""
    eps, sig, f, d, x, g = 9.0, 0.01, 100e6, 1.5, 2.0, 2.0
    omega = 2 * np.pi * f
    gam = np.sqrt(1j * omega * constants.mu_0 * (sig + 1j * omega * constants.epsilon_0 * eps))
    lam, alpha = 2 * np.pi / gam.imag, gam.real
    r = np.sqrt(d * d + x * x / 4)
    ratio = g**2 * lam**2 * 0.25 / ((4 * np.pi) ** 2 * (2 * r) ** 2) * np.exp(-4 * alpha * r)
    got = float(D.two_way_loss_db(d, eps, sig, f, D.Target("planar", reflection=0.5), gain=g, separation_m=x))
    assert got == pytest.approx(-10 * np.log10(ratio), abs=1e-9)


def test_layer_of_host_material_changes_nothing():
    """A surface layer made of the host itself leaves the loss unchanged (limit: no interface, no shift)."""
    t = D.Target("point", size_m=0.3, eps=1.0 + 0j)
    lay = (D.Layer(0.3, 9.0 - 0.2j, 0.004, "same"),)
    a = float(D.two_way_loss_db(1.2, 9.0 - 0.2j, 0.004, 300e6, t, gain=2.0))
    b = float(D.two_way_loss_db(1.2, 9.0 - 0.2j, 0.004, 300e6, t, gain=2.0, layers=lay))
    assert b == pytest.approx(a, abs=1e-9)


def test_lossless_layer_adds_transmission_and_newman_spreading():
    """Lossless layer (ε₁) over lossless host (ε_h), planar target: hand calculation of the host-frame budget.

    Range in host units r = t·v₁/v_h + (d − t) (Newman 1973 paraxial distance referred to the host),
    power transmission (1 − R²)² with R = (√ε₁ − √ε_h)/(√ε₁ + √ε_h), aperture λ_h² of the host.
    """
    e1, eh, t, d, f, g = 4.0, 16.0, 0.5, 2.0, 100e6, 1.0
    v1, vh = C / 2.0, C / 4.0
    lamh = C / f / 4.0
    dist = t * v1 / vh + (d - t)
    r12 = ((2.0 - 4.0) / (2.0 + 4.0)) ** 2
    ratio = g**2 * lamh**2 * 1.0 / ((4 * np.pi) ** 2 * (2 * dist) ** 2) * (1 - r12) ** 2
    got = float(D.two_way_loss_db(d, eh, 0.0, f, D.Target("planar", reflection=1.0), gain=g,
                                  layers=(D.Layer(t, e1 + 0j, 0.0, "layer"),)))
    assert got == pytest.approx(-10 * np.log10(ratio), abs=1e-9)


def test_target_inside_layers_refused():
    """A target shallower than the surface layers: one-line InputError."""
    f, w = D.band_nodes(400e6, 400e6)
    with pytest.raises(InputError, match="within the surface layers"):
        D.antenna_budget(np.full(f.shape, 9.0 + 0j), np.zeros(f.shape), f, w, D.Target("planar", reflection=0.5),
                         depth_m=0.05, performance_db=80.0, pulse_length_s=3e-9,
                         layers=(D.Layer(0.1, 5.0 + 0j, 0.0, "asphalt"),))


def test_bad_layer_thickness_refused():
    """Layer thickness <= 0 names the thickness."""
    with pytest.raises(InputError, match="thickness"):
        D.Layer(0.0, 5.0 + 0j)


# --- coupling -----------------------------------------------------------------------------------

def test_coupling_vacuum_is_short_dipole_directivity():
    """ε' = 1: the interfacial dipole is a short dipole in free space, directivity 1.5 (Balanis, Antenna Theory)."""
    assert float(D.interfacial_dipole_gain(1.0)) == pytest.approx(1.5, rel=1e-10)
    p_air, p_ground = D.interfacial_dipole_power(1.0)
    assert float(p_air + p_ground) == pytest.approx(8 * np.pi / 3, rel=1e-10)  # ∮ sin²ψ dΩ


def test_coupling_power_integral_against_scipy_quad():
    """Total radiated power of the pattern (Gauss–Legendre) equals scipy.quad of the same far fields (ε' = 9)."""
    n = 3.0

    def air(t):
        c, s = np.cos(t), np.sin(t)
        c2 = np.sqrt(1 - s * s / n**2)
        return ((2 * c * c2 / (n * c + c2)) ** 2 + (2 * c / (c + n * c2)) ** 2) * s

    def ground(t):  # complex Fresnel coefficients (Lukosz & Kunz 1977), evanescent beyond the critical angle
        c, s = np.cos(t), np.sin(t)
        c1 = np.sqrt(complex(1 - n * n * s * s))
        if 1 - n * n * s * s < 0:
            c1 = -1j * np.sqrt(n * n * s * s - 1)
        return n * (abs(2 * n * c * c1 / (c + n * c1)) ** 2 + abs(2 * n * c / (n * c + c1)) ** 2) * s

    tc = np.arcsin(1 / n)
    want = np.pi * (quad(air, 0, np.pi / 2)[0] + quad(ground, 0, tc)[0] + quad(ground, tc, np.pi / 2)[0])
    p_air, p_ground = D.interfacial_dipole_power(9.0)
    assert float(p_air + p_ground) == pytest.approx(want, rel=1e-8)


def test_coupling_gain_rises_with_permittivity_and_table_is_accurate():
    """In-ground gain rises with ε' (better coupling into wetter ground); table within 1e-4 of direct."""
    e = np.geomspace(1.0, 390.0, 300)
    g = D.interfacial_dipole_gain(e)
    assert np.all(np.diff(g) > 0)
    np.testing.assert_allclose(D.coupling_gain(e), g, rtol=1e-4)


# --- band ---------------------------------------------------------------------------------------

def test_spectrum_bandwidth_is_half_power_width():
    """The spectrum's full width at half power is the catalogue bandwidth (brentq on S(f) = 1/2)."""
    for frac in (0.5, 1.0, 1.5):
        lo = brentq(lambda x, frac=frac: D.power_spectrum(x, 1.0, frac) - 0.5, 1e-3, 1.0)
        hi = brentq(lambda x, frac=frac: D.power_spectrum(x, 1.0, frac) - 0.5, 1.0, 50.0)
        assert hi - lo == pytest.approx(frac, rel=1e-9)
        assert float(D.power_spectrum(1.0, 1.0, frac)) == pytest.approx(1.0)


@pytest.mark.parametrize("frac", [0.25, 0.5, 1.0, 1.5, 2.0])
def test_band_weights_normalised_by_the_whole_spectrum_from_scipy_quad(frac):
    """The band weights are normalised by ∫S(f)df over (0, ∞), computed in closed form with Γ;
    scipy's adaptive quad of S agrees to 1e-9, and the weights (with (f/f_c)² taken out) hold the
    share of the spectrum between the band edges that quad gives, within 0.1 dB (14 nodes)."""
    c = D.band.spectrum_steepness(frac)
    total = quad(lambda x: float(D.power_spectrum(x, 1.0, frac)), 0.0, np.inf, limit=400)[0]
    assert D.band._total_power(c) == pytest.approx(total, rel=1e-9)
    f, w = D.band_nodes(1.0, frac)
    lo, hi = D.band._edges(c, D.LOW_EDGE_DB, D.HIGH_EDGE_DB)
    inside = quad(lambda x: float(D.power_spectrum(x, 1.0, frac)), lo, hi, limit=400)[0]
    assert 10 * np.log10(float(np.sum(w / f**2)) / (inside / total)) == pytest.approx(0.0, abs=0.1)


@pytest.mark.parametrize("texture,moisture", [("sand", 0.05), ("loam", 0.2), ("clay", 0.3), ("loam", 0.35),
                                              ("sand", 0.15), ("clay", 0.15), ("clay_loam", 0.1), ("loamy_sand", 0.3)])
def test_band_nodes_within_a_tenth_of_a_db_of_fine_quadrature(texture, moisture):
    """14 band frequencies give the received energy within 0.1 dB of a 40 000-point trapezoid at each antenna's depth.

    The fine integral is written here from S(f), λ(f)² of the receiving aperture taken out by the
    (f/f_c)² of the weights' definition, |R(f)|², the coupling gain and e^(−4α(f)r) with α, β from
    numpy's complex square root.
    """
    soil = Soil(texture=texture, moisture=moisture)
    target = D.Target("planar", eps=25.0 + 0j, sigma=0.01)
    for a in load_catalogue().values():
        f, w = D.band_nodes(a.centre_freq_hz, a.bandwidth_hz)
        eps, sig = soil.electrical(f)
        terms = D.loss_terms(eps, sig, f, target, weights=w)
        d = float(D.max_depth(performance_db=a.effective_performance_db, terms=terms))
        if d <= 0.05:
            continue
        ff = np.linspace(1e-4, 12.0, 40001) * a.centre_freq_hz
        ef, sf = soil.electrical(ff)
        om = 2 * np.pi * ff
        gam = np.sqrt(1j * om * constants.mu_0 * (sf + 1j * om * constants.epsilon_0 * ef))
        gt = np.sqrt(1j * om * constants.mu_0 * (0.01 + 1j * om * constants.epsilon_0 * 25.0))
        r2 = np.abs((gam - gt) / (gam + gt)) ** 2
        lam = 2 * np.pi / gam.imag
        g = D.coupling_gain(ef.real)
        s = D.power_spectrum(ff, a.centre_freq_hz, a.bandwidth_hz)
        x = ff / a.centre_freq_hz
        num = np.trapezoid(s * x**2 * g**2 * lam**2 * r2 / ((4 * np.pi) ** 2 * 4 * d**2) * np.exp(-4 * gam.real * d),
                           ff)
        fine = -10 * np.log10(num / np.trapezoid(s, ff))
        assert float(D.two_way_loss_db(d, terms=terms)) == pytest.approx(fine, abs=0.1), a.name


def test_received_centroid_is_transmitted_centroid_without_loss():
    """Lossless non-dispersive ground, planar target: the received centroid is the spectrum's own centroid."""
    f, w = D.band_nodes(500e6, 500e6)
    terms = D.loss_terms(np.full(f.shape, 9.0 + 0j), np.zeros(f.shape), f, D.Target("planar", reflection=0.5),
                         weights=w)
    e = D.received_energy(2.0, terms)
    fr = np.sum(e * f) / np.sum(e)
    ff = np.linspace(1e-3, 12, 200001) * 500e6
    s = D.power_spectrum(ff, 500e6, 500e6)
    assert fr == pytest.approx(np.trapezoid(ff * s, ff) / np.trapezoid(s, ff), rel=0.01)


# --- blind zone, verdicts, orientation -------------------------------------------------------

def test_min_depth_hand_calculation():
    """d_min = ½√(vτ(2x + vτ)): v = 0.1 m/ns, τ = 10 ns, x = 1 m → ½√(1·3) = 0.866 m; x = 0: vτ/2."""
    assert float(D.min_detectable_depth(1e8, 10e-9, 1.0)) == pytest.approx(0.5 * np.sqrt(3.0))
    assert float(D.min_detectable_depth(1e8, 10e-9, 0.0)) == pytest.approx(0.5)
    # the echo then arrives exactly at the end of the ground wave: 2√(d² + x²/4)/v = x/v + τ
    d = float(D.min_detectable_depth(1e8, 10e-9, 1.0))
    assert 2 * np.sqrt(d * d + 0.25) / 1e8 == pytest.approx(1.0 / 1e8 + 10e-9)
    with pytest.raises(InputError, match="pulse length"):
        D.min_detectable_depth(1e8, 0.0, 1.0)


def test_verdict_words_and_share_word():
    """Too shallow overrides any margin; majority above one half, plurality otherwise."""
    assert list(D.verdict([80.0, 3.0, -1.0], too_shallow=[True, False, False])) == [
        "too shallow", "marginal", "does not reach"]
    assert D.share_word(0.43) == "plurality" and D.share_word(0.6) == "majority"
    assert "6 dB" in D.reach_definition()


def _te_series_pec(ka, k):
    # exact TE backscatter echo width of a PEC cylinder (Balanis 2012, §11.5): (4/k)|Σ ε_n (−1)^n J_n'/H_n'|²
    n = np.arange(int(ka + 40))
    e = np.where(n == 0, 1.0, 2.0)
    return 4.0 / k * abs(np.sum(e * (-1.0) ** n * special.jvp(n, ka) / special.h2vp(n, ka))) ** 2


@pytest.mark.parametrize("ka", [0.02, 0.1, 0.3, 3.0, 30.0])
def test_perpendicular_metal_echo_width_against_series(ka):
    """E across a metal pipe: regime formulas within 1.5 dB of the exact TE series (worst near ka ≈ 0.5–1)."""
    eps, f = 9.0, 100e6
    k = float(D.targets.wave_properties(eps, 0.0, f).beta)
    t = D.Target("line", size_m=2 * ka / k, conductor=True)
    got = float(D.echo_width(eps, 0.0, f, t, polarisation="perpendicular"))
    assert 10 * np.log10(got / _te_series_pec(ka, k)) == pytest.approx(0.0, abs=1.5)


def test_orientation_penalty_thin_pipe_is_large():
    """A 2 cm metal pipe at 100 MHz in ε' 9 loses > 20 dB with the dipoles across it (TE vs TM thin-wire)."""
    t = make_target("line", depth_m=1.0, size_m=0.02, material="metal")
    assert float(D.orientation_penalty_db(9.0, 0.0, 100e6, t)) > 20.0
