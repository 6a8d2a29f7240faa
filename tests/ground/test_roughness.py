"""Rough-interface coherent reflection and transmission factors (Ament 1953; Kirchhoff)."""

import numpy as np
import pytest
from scipy import constants, integrate

from subsurf.errors import InputError
from subsurf.ground.roughness import roughness_reflection_factor, roughness_transmission_factor


def _gaussian_mean_phase(q, sigma):
    """⟨exp(j q h)⟩ for Gaussian h ~ N(0, σ²), by numerical quadrature (independent of the closed form)."""
    re, _ = integrate.quad(lambda h: np.cos(q * h) * np.exp(-h * h / (2 * sigma * sigma)), -12 * sigma, 12 * sigma)
    return re / (sigma * np.sqrt(2 * np.pi))


@pytest.mark.parametrize("f, s, eps, th", [(100e6, 0.05, 1.0, 0.0), (1e9, 0.02, 1.0, 0.3), (500e6, 0.03, 9.0, 0.0)])
def test_reflection_factor_is_characteristic_function(f, s, eps, th):
    """Ament (1953): coherent factor = ⟨exp(j2k h cosθ)⟩ of Gaussian heights, checked by scipy quadrature."""
    k = 2 * np.pi * f * np.sqrt(eps) / constants.c
    want = _gaussian_mean_phase(2 * k * np.cos(th), s)
    got = roughness_reflection_factor(f, s, eps_incident=eps, incidence_angle_rad=th)
    assert got == pytest.approx(want, rel=1e-9)
    assert roughness_reflection_factor(f, s, eps_incident=eps, incidence_angle_rad=th, power=True) == \
        pytest.approx(want**2, rel=1e-9)


def test_rayleigh_criterion_value():
    """Rayleigh criterion σ_h = λ/(8 cosθ) gives g = (π/2)², power factor exp(−π²/4) ≈ 0.085."""
    lam = constants.c / 400e6
    assert roughness_reflection_factor(400e6, lam / 8, power=True) == pytest.approx(np.exp(-np.pi**2 / 4))


def test_smooth_is_one_and_rougher_is_lower():
    """Limits and monotonicity: σ_h = 0 gives 1; the factor falls with frequency and σ_h."""
    f = np.geomspace(1e7, 3e9, 30)
    assert np.all(roughness_reflection_factor(f, 0.0) == 1.0)
    r1 = roughness_reflection_factor(f, 0.01)
    r2 = roughness_reflection_factor(f, 0.02)
    assert np.all(np.diff(r1) < 0) and np.all(r2 < r1) and np.all(r2 > 0)


def test_transmission_factor_phase_difference():
    """Kirchhoff coherent transmission: ⟨exp(j(k1 − k2)h)⟩ at normal incidence, by quadrature."""
    f, s = 800e6, 0.02
    k1 = 2 * np.pi * f / constants.c
    k2 = k1 * np.sqrt(6.0)
    want = _gaussian_mean_phase(k1 - k2, s)
    assert roughness_transmission_factor(f, s, eps_transmitted=6.0) == pytest.approx(want, rel=1e-9)


def test_negative_roughness_is_refused():
    """Bad input: negative rms height names the parameter."""
    with pytest.raises(InputError, match="rms_height_m"):
        roughness_reflection_factor(1e9, -0.01)
