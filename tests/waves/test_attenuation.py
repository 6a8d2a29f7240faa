"""Band-limited Q* (Turner & Siggins 1994; Bradford 2007) and the two-frequency description."""

import numpy as np
import pytest

from subsurf.errors import InputError
from subsurf.ground.constant_q import attenuation_from_q_star, q_from_q_star, q_star_from_q
from subsurf.ground.relaxation import constant_q_permittivity
from subsurf.waves.attenuation import loss_from_two_attenuations, q_star
from subsurf.waves.propagation import wave_properties

NP = 20 / np.log(10)


@pytest.mark.parametrize("q", [3.0, 10.0, 40.0, 300.0])
def test_q_star_of_constant_q_medium_closed_form(q):
    """Bradford (2007) Q* by finite difference of the exact α(f) equals 1/(2(1−γ)tan(πγ/2)) (derived in constant_q)."""
    eps = lambda f: constant_q_permittivity(f, 7.0, q)  # noqa: E731
    got = q_star(eps, 0.0, np.array([50e6, 300e6, 2e9]))
    np.testing.assert_allclose(got, q_star_from_q(q), rtol=1e-5)


def test_q_star_tends_to_q_for_low_loss_and_inverts():
    """Limit: Q* → Q for large Q (Turner & Siggins 1994); q_from_q_star inverts q_star_from_q."""
    assert q_star_from_q(1000.0) == pytest.approx(1000.0, rel=2e-3)
    for qs in (1.5, 5.0, 20.0, 200.0):
        assert q_star_from_q(q_from_q_star(qs)) == pytest.approx(qs, rel=1e-10)


def test_linear_attenuation_law():
    """Turner & Siggins (1994): α = α₀ + πf/(Q* v), evaluated independently."""
    assert attenuation_from_q_star(200e6, 20.0, 1e8, alpha0=0.01) == pytest.approx(0.01 + np.pi * 200e6 / 2e9)


def test_two_attenuations_are_reproduced_by_wave_properties():
    """The fitted (σ, Q) give back both measured attenuations through the project's γ (wave_properties), 1e-6."""
    f1, f2, a1, a2 = 100e6, 500e6, 1.2 / NP, 3.0 / NP
    fit = loss_from_two_attenuations(6.0, f1, a1, f2, a2)
    f = np.array([f1, f2])
    w = wave_properties(fit.permittivity(6.0, f), fit.sigma, f)
    np.testing.assert_allclose(w.alpha, [a1, a2], rtol=1e-6)
    assert fit.sigma > 0 and 1 < fit.q_star < 1e4


@pytest.mark.parametrize("a1, a2, match", [(2.0, 1.0, "negative dielectric loss"),
                                           (0.5, 3.0, "negative conduction loss")])
def test_two_attenuations_implying_negative_loss_are_refused(a1, a2, match):
    """Bad input: falling attenuation, or a line through 0 Hz below zero, is one InputError naming why."""
    with pytest.raises(InputError, match=match):
        loss_from_two_attenuations(5.0, 100e6, a1 / NP, 200e6, a2 / NP)


def test_q_star_not_above_one_is_refused():
    """Bad input: Q* <= 1 has no passive constant-Q ground."""
    with pytest.raises(InputError, match="q_star must be > 1"):
        q_from_q_star(0.8)
