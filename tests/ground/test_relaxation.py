"""Cole–Cole, Jonscher and constant-Q permittivities: closed forms and Kramers–Kronig causality."""

import numpy as np
import pytest
from scipy import integrate

from subsurf.ground import Soil
from subsurf.ground.relaxation import (
    cole_cole_permittivity,
    constant_q_permittivity,
    jonscher_permittivity,
)


def kk_principal_value(eps_imag, f0):
    """P∫₀^∞ f ε''(f)/(f² − f0²) df (frequencies in units of f0 handled by the caller)."""
    near, _ = integrate.quad(lambda f: f * eps_imag(f) / (f + f0), 1e-9 * f0, 2.0 * f0, weight="cauchy",
                             wvar=f0, limit=400)
    far = 0.0
    lo = 2.0 * f0
    for _ in range(40):  # decades to infinity, each integrated separately (slowly decaying tails)
        hi = lo * 10.0
        part, _ = integrate.quad(lambda f: f * eps_imag(f) / (f * f - f0 * f0), lo, hi, limit=400)
        far += part
        lo = hi
    # power-law tail beyond the last decade: ε'' ≈ ε''(L)(f/L)^p gives ∫_L^∞ ε''/f df = ε''(L)/(−p)
    p = np.log10(eps_imag(lo) / eps_imag(lo / 10.0))
    return near + far + (eps_imag(lo) / -p if p < 0 else 0.0)


def kk_real_difference(eps_imag, f1, f2):
    """ε'(f1) − ε'(f2) predicted from ε'' by the subtracted Kramers–Kronig relation (no ε∞ needed)."""
    return 2.0 / np.pi * (kk_principal_value(eps_imag, f1) - kk_principal_value(eps_imag, f2))

F = np.geomspace(1e6, 1e10, 41)


def test_cole_cole_alpha_zero_is_debye():
    """Analytical: α = 0 is Debye, ε∞ + Δε/(1 + jωτ) (Debye 1929), evaluated independently."""
    tau = 1.0 / (2 * np.pi * 50e6)
    debye = 4.0 + 20.0 / (1.0 + 1j * 2 * np.pi * F * tau)
    np.testing.assert_allclose(cole_cole_permittivity(F, 4.0, 20.0, 50e6), debye, rtol=1e-12)


def test_cole_cole_real_and_imaginary_closed_forms():
    """Cole & Cole (1941), eqs. for ε' and ε'' written in real arithmetic (ε'' >= 0 with exp(jωt))."""
    a, ei, de, fr = 0.35, 5.0, 15.0, 30e6
    x = (F / fr) ** (1 - a)
    s, c = np.sin(a * np.pi / 2), np.cos(a * np.pi / 2)
    den = 1 + 2 * x * s + x * x
    eps = cole_cole_permittivity(F, ei, de, fr, alpha=a)
    np.testing.assert_allclose(eps.real, ei + de * (1 + x * s) / den, rtol=1e-12)
    np.testing.assert_allclose(-eps.imag, de * x * c / den, rtol=1e-12)


def test_jonscher_matches_hollender_tillard_form():
    """Hollender & Tillard (1998) eq. 3: ε' = ε∞ + χr (f/fr)^(n−1), ε'' = χr (f/fr)^(n−1) cot(nπ/2)."""
    ei, chi, n = 6.0, 1.7, 0.82
    eps = jonscher_permittivity(F, ei, chi, n)
    p = (F / 100e6) ** (n - 1)
    np.testing.assert_allclose(eps.real, ei + chi * p, rtol=1e-12)
    np.testing.assert_allclose(-eps.imag, chi * p / np.tan(n * np.pi / 2), rtol=1e-12)


def test_constant_q_has_constant_loss_ratio():
    """Kjartansson (1979): ε''/ε' = 1/Q at every frequency; ε' = eps_ref at the reference frequency."""
    eps = constant_q_permittivity(F, 9.0, 25.0, reference_freq_hz=250e6)
    np.testing.assert_allclose(-eps.imag / eps.real, 1 / 25.0, rtol=1e-12)
    assert constant_q_permittivity(250e6, 9.0, 25.0, reference_freq_hz=250e6).real == pytest.approx(9.0, rel=1e-12)


@pytest.mark.parametrize("model", ["cole_cole", "jonscher", "constant_q", "soil_loam", "soil_clay"])
def test_models_are_kramers_kronig_consistent(model):
    """Physical invariant (causality): ε'(f1) − ε'(f2) equals the KK integral of ε'' (scipy quad), within 1e-3."""
    models = {
        "cole_cole": lambda f: cole_cole_permittivity(f, 5.0, 12.0, 40e6, alpha=0.3),
        "jonscher": lambda f: jonscher_permittivity(f, 5.0, 2.0, 0.8),
        "constant_q": lambda f: constant_q_permittivity(f, 8.0, 12.0),
        "soil_loam": Soil(moisture=0.2, texture="loam").permittivity,
        "soil_clay": Soil(moisture=0.35, texture="clay").permittivity,
    }
    eps = models[model]
    scale = 1e8  # integrate in units of 100 MHz

    def eps_imag(x):
        return float(-np.imag(eps(x * scale)))

    for f1, f2 in [(1.0, 10.0), (2.5, 20.0)]:
        want = float(np.real(eps(f1 * scale)) - np.real(eps(f2 * scale)))
        got = kk_real_difference(eps_imag, f1, f2)
        assert got == pytest.approx(want, rel=1e-3, abs=1e-5)


def test_kramers_kronig_check_rejects_a_noncausal_model():
    """The KK check can fail: a constant ε' with a power-law ε'' (not causal) is caught."""
    def eps_imag(x):
        return 0.5 * x ** -0.2

    got = kk_real_difference(eps_imag, 1.0, 10.0)
    assert abs(got) > 0.1  # causality would demand this dispersion; the model has none


def test_soil_interface_loss_is_on_by_default_and_never_negative():
    """Limits: the interface term adds loss (ε'' grows), never negative, and vanishes in a dry soil."""
    wet = Soil(moisture=0.2, texture="loam")
    off = Soil(moisture=0.2, texture="loam", interface_relaxation=False)
    assert np.all(-wet.permittivity(F).imag > -off.permittivity(F).imag)
    assert np.all(-wet.interface_susceptibility(F).imag >= 0)
    assert np.all(Soil(moisture=0.0, texture="loam").interface_susceptibility(F) == 0)


def test_interface_term_is_jonscher_in_band_and_bounded_at_dc():
    """Soil interface term: Hollender & Tillard's Jonscher form within 1 % above 50 MHz (less its real part at
    500 MHz), and finite at DC (the Cole–Davidson corner at 1 MHz, Davidson & Cole 1951)."""
    soil = Soil(moisture=0.3, texture="clay")
    chi, n = soil.loss_facts["interface_chi"], float(soil.loss_facts["interface_n"])
    f = np.geomspace(50e6, 3e9, 20)
    jon = jonscher_permittivity(f, 1.0, chi, n) - 1.0 - chi * (500e6 / 100e6) ** (n - 1)
    np.testing.assert_allclose(soil.interface_susceptibility(f), jon, rtol=1e-2)
    low = soil.interface_susceptibility(np.array([1.0, 10.0, 1e3]))
    assert np.all(np.isfinite(low)) and np.ptp(low.real) < 1e-3 * abs(low[0])
