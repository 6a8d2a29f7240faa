"""Volume scattering by stones: Mie against miepython, Rayleigh limit, saturation, limits."""

import miepython
import numpy as np
import pytest
from scipy import constants

from subsurf.errors import InputError
from subsurf.ground import Soil
from subsurf.ground.scattering import (
    mie_efficiencies,
    packing_factor,
    rayleigh_efficiency,
    scattering_attenuation,
)


@pytest.mark.parametrize("x", [0.05, 0.3, 1.0, 2.5, 7.0, 20.0])
@pytest.mark.parametrize("m", [0.5, 0.8, 1.2, 1.6])
def test_mie_matches_miepython(x, m):
    """Reference library: miepython (Prahl) efficiencies of a sphere, relative error 1e-9."""
    qext, qsca, _, _ = miepython.efficiencies(m, 2 * x / (2 * np.pi), 1.0)
    got_ext, got_sca = mie_efficiencies(x, m)
    assert got_sca == pytest.approx(float(qsca), rel=1e-9)
    assert got_ext == pytest.approx(float(qext), rel=1e-9)


def test_optical_theorem_energy_conservation():
    """Physical invariant: for a lossless sphere extinction (forward amplitude) equals scattering."""
    x = np.geomspace(0.03, 40, 200)
    qext, qsca = mie_efficiencies(x, 1.4)
    np.testing.assert_allclose(qext, qsca, rtol=1e-9)


def test_rayleigh_limit_at_small_ka():
    """Bohren & Huffman (1983) eq. 5.8: Q = (8/3)x⁴|(m²−1)/(m²+2)|² recovered by Mie as x → 0 (error ~x²)."""
    for x in (0.03, 0.05, 0.1):
        got = mie_efficiencies(x, 1.5)[1]
        assert got == pytest.approx(rayleigh_efficiency(x, 1.5), rel=3 * x * x)


def test_geometric_limit_extinction_paradox():
    """Large spheres: Q_sca → 2 (van de Hulst 1957, extinction paradox), within 10 % at x = 200."""
    assert mie_efficiencies(200.0, 1.3)[1] == pytest.approx(2.0, rel=0.1)


def test_attenuation_saturates_instead_of_growing_as_f4():
    """Mie loss of 5 cm stones grows as f⁴ at low frequency and no faster than ~f above resonance."""
    f = np.array([10e6, 20e6, 4e9, 8e9, 16e9])
    a = scattering_attenuation(f, 9.0, stone_fraction=0.2, stone_size=0.05)
    assert a[1] / a[0] == pytest.approx(16.0, rel=0.02)       # Rayleigh regime
    assert a[4] / a[3] < 1.5 and a[3] / a[2] < 1.5              # beyond resonance: saturating (Q → 2)
    ray = scattering_attenuation(f, 9.0, stone_fraction=0.2, stone_size=0.05, method="rayleigh")
    assert ray[4] > 10 * a[4]


def test_attenuation_closed_form():
    """α = 3 f_v Q/(4D)·(1−f)⁴/(1+2f)² with x = πD√ε_h f/c, against an independent miepython Q."""
    f, eh, fv, d, es = 900e6, 6.0, 0.25, 0.04, 5.0
    x = np.pi * d * np.sqrt(eh) * f / constants.c
    q = float(miepython.efficiencies(np.sqrt(es / eh), 2 * x / (2 * np.pi), 1.0)[1])
    want = 0.75 * fv * q / d * (1 - fv) ** 4 / (1 + 2 * fv) ** 2
    assert scattering_attenuation(f, eh, stone_fraction=fv, stone_size=d, eps_stone=es) == pytest.approx(want, rel=1e-9)


def test_no_scattering_without_stones_or_contrast():
    """Limits: zero stone fraction or zero permittivity contrast gives exactly zero loss."""
    f = np.geomspace(1e7, 3e9, 20)
    assert np.all(scattering_attenuation(f, 6.0, stone_fraction=0.0, stone_size=0.05) == 0)
    assert np.allclose(scattering_attenuation(f, 5.0, stone_fraction=0.3, stone_size=0.05, eps_stone=5.0), 0,
                       atol=1e-15)
    assert np.all(Soil(moisture=0.1, texture="sand").scattering_attenuation(f) == 0)


def test_loss_never_negative_and_monotone_in_fraction_while_dilute():
    """Invariants: α >= 0; rises with stone fraction while dilute (Percus–Yevick f(1−f)⁴/(1+2f)² peaks near 0.13)."""
    f = np.geomspace(1e7, 3e9, 30)
    a = [scattering_attenuation(f, 12.0, stone_fraction=fv, stone_size=0.06) for fv in (0.02, 0.05, 0.1)]
    assert np.all(np.asarray(a) >= 0)
    assert np.all(a[1] > a[0]) and np.all(a[2] > a[1])


def test_packing_factor_limits():
    """Percus–Yevick S(0) = (1−f)⁴/(1+2f)²: 1 for dilute, 0 at f = 1 (Tsang, Kong & Ding 2000)."""
    assert packing_factor(0.0) == 1.0
    assert packing_factor(1.0) == 0.0
    assert packing_factor(0.3) == pytest.approx(0.7**4 / 1.6**2)


def test_size_spread_is_volume_weighted_mean():
    """A log-normal spread averages α over diameters; zero spread is the single size."""
    base = scattering_attenuation(500e6, 8.0, stone_fraction=0.2, stone_size=0.05)
    assert scattering_attenuation(500e6, 8.0, stone_fraction=0.2, stone_size=0.05, size_sd_log=0.0) == base
    spread = scattering_attenuation(500e6, 8.0, stone_fraction=0.2, stone_size=0.05, size_sd_log=0.6)
    assert spread > base  # Rayleigh side: the larger stones dominate (Q/D ∝ D³)


@pytest.mark.parametrize("kwargs, field", [
    ({"stone_fraction": 1.2}, "stone_fraction"),
    ({"stone_fraction": -0.1}, "stone_fraction"),
    ({"stone_fraction": 0.7}, "1 - porosity"),
    ({"stone_fraction": 0.2, "stone_size": -0.01}, "stone_size"),
    ({"surface_roughness": -0.01}, "surface_roughness"),
])
def test_bad_stone_and_roughness_facts_are_refused(kwargs, field):
    """Bad input: one InputError naming the field and the allowed range."""
    with pytest.raises(InputError, match=field):
        Soil(moisture=0.1, texture="sand", **kwargs)
