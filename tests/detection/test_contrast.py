"""Target contrast |R| and the low-contrast limit (subsurf.detection.contrast) against closed forms and scikit-rf."""

import cmath
import math

import numpy as np
import pytest
from scipy import constants

from subsurf.detection.contrast import LOW_CONTRAST_REFLECTION, target_contrast
from subsurf.detection.targets import Target


def host(eps, sigma):
    """A uniform host ground: electrical(f) -> (ε, σ)."""
    def electrical(f):
        f = np.asarray(f, dtype=float)
        return np.full(f.shape, complex(eps)), np.full(f.shape, float(sigma))
    return electrical


def _hand_reflection(eps1, sigma1, eps2, sigma2, f):
    """Normal-incidence R = (Z2 − Z1)/(Z2 + Z1), Z = jωμ0/γ, γ = √(jωμ0(σ + jωε0ε)) (Balanis 2012, ch. 4–5)."""
    w = 2 * math.pi * f
    mu0, eps0 = constants.mu_0, constants.epsilon_0

    def z(eps, sigma):
        gamma = cmath.sqrt(1j * w * mu0 * (sigma + 1j * w * eps0 * eps))
        return 1j * w * mu0 / gamma
    z1, z2 = z(eps1, sigma1), z(eps2, sigma2)
    return (z2 - z1) / (z2 + z1)


def test_granite_under_dry_sand_is_low_contrast():
    """Lossless Fresnel form (√ε1 − √ε2)/(√ε1 + √ε2) (Annan 2009): ε' 4 over 5 gives |R| = 0.056 < 0.1."""
    c = target_contrast(host(4.0, 0.0), Target("planar", eps=5.0, material="granite"), [250e6])
    expected = (math.sqrt(5.0) - 2.0) / (math.sqrt(5.0) + 2.0)
    assert c.reflection_magnitude == pytest.approx(expected, rel=1e-9)
    assert c.low and c.reflection_db == pytest.approx(20 * math.log10(expected))
    note = c.note()
    assert "|R| = 0.056" in note and "host ε' 4" in note and "target ε' 5" in note and "below 0.1" in note


def test_lossy_contrast_matches_the_hand_formula_and_scikit_rf():
    """Water pipe in wet conductive clay at 250 MHz: |R| from Z = jωμ0/γ by hand and from scikit-rf's Freespace."""
    eps_h, sig_h, eps_t, sig_t, f = 22.0, 0.1, 80.0, 5e-4, 250e6
    c = target_contrast(host(eps_h, sig_h), Target("line", size_m=0.1, eps=eps_t, sigma=sig_t), [f])
    r_hand = _hand_reflection(eps_h, sig_h, eps_t, sig_t, f)
    assert c.reflection_magnitude == pytest.approx(abs(r_hand), rel=1e-10)
    skrf = pytest.importorskip("skrf")
    from skrf.media import Freespace

    freq = skrf.Frequency(f, f, 1, unit="Hz")
    w = 2 * math.pi * f
    # scikit-rf: same exp(jωt) convention, conduction folded into ε'' = σ/(ωε0)
    z = [complex(Freespace(frequency=freq, ep_r=e - 1j * s / (w * constants.epsilon_0), mu_r=1.0)
                 .z0_characteristic[0]) for e, s in ((eps_h, sig_h), (eps_t, sig_t))]
    assert c.reflection_magnitude == pytest.approx(abs((z[1] - z[0]) / (z[1] + z[0])), rel=1e-10)
    assert not c.low and c.note() is None  # |R| ≈ 0.3: a water-filled pipe stands out even in wet clay


def test_metal_is_never_low_contrast():
    """A perfect conductor reflects fully: |R| = 1, no note."""
    c = target_contrast(host(9.0, 0.01), Target("line", size_m=0.1, conductor=True, material="metal"), [400e6])
    assert c.reflection_magnitude == 1.0 and not c.low and c.note() is None and c.target_eps_real is None


def test_the_weakest_frequency_is_reported():
    """Over several antennas' frequencies the lowest |R| (hand formula at each) is the one stated."""
    freqs = [50e6, 250e6, 1000e6]
    c = target_contrast(host(9.0, 0.05), Target("planar", eps=12.0, sigma=0.0), freqs)
    hand = [abs(_hand_reflection(9.0, 0.05, 12.0, 0.0, f)) for f in freqs]
    assert c.reflection_magnitude == pytest.approx(min(hand), rel=1e-10)
    assert c.freq_hz == freqs[int(np.argmin(hand))]


@pytest.mark.parametrize("r, low", [(0.099, True), (LOW_CONTRAST_REFLECTION, False), (0.5, False)])
def test_limit_both_ways(r, low):
    """|R| just below the limit is flagged, at and above it not (the limit is 0.1, −20 dB)."""
    c = target_contrast(host(9.0, 0.0), Target("planar", reflection=r), [250e6])
    assert c.low is low and (c.note() is not None) is low
    assert LOW_CONTRAST_REFLECTION == 0.1
