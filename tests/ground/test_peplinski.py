"""Peplinski, Ulaby & Dobson (1995) soil model: limits, trends from the paper, ranges."""

import warnings

import numpy as np
import pytest

from subsurf.errors import InputError, ModelRangeWarning
from subsurf.ground import peplinski_permittivity


def test_dry_soil_closed_form():
    """m_v = 0: ε' = 1.15[1 + (ρb/ρs)(εs^0.65 − 1)]^(1/0.65) − 0.68 ≈ 2.5998, ε'' = 0."""
    # Peplinski et al. (1995) eq. with m_v = 0, ρb = 1.5, ρs = 2.66 g/cm³:
    # εs = (1.01 + 0.44·2.66)² − 0.062 = 4.6921; evaluated by hand to 2.5998.
    with pytest.warns(ModelRangeWarning, match="moisture"):  # m_v = 0 is below the 0.01 fitted
        eps = peplinski_permittivity(5e8, 0.0, 0.4, 0.2, 1500.0, 2660.0)
    assert eps.real == pytest.approx(2.5998, abs=2e-3)
    assert eps.imag == 0.0


def test_real_part_rises_with_moisture():
    """ε' increases with m_v (the paper's Fig. 1 trend)."""
    eps = peplinski_permittivity(5e8, np.linspace(0.02, 0.4, 20), 0.3, 0.3, 1400.0)
    assert np.all(np.diff(eps.real) > 0)


def test_loss_rises_with_clay_at_low_frequency():
    """At 300 MHz ε'' grows with clay content (σ_eff term; the paper's Fig. 2 trend)."""
    eps = peplinski_permittivity(3e8, 0.25, 0.3, np.array([0.05, 0.15, 0.3, 0.45]), 1400.0)
    assert np.all(np.diff(-eps.imag) > 0)


def test_conduction_loss_falls_with_frequency():
    """ε'' holds a σ/(ωε₀)-like term, so it falls from 0.3 to 1.3 GHz (the paper's Fig. 2)."""
    eps = peplinski_permittivity(np.linspace(3e8, 1.3e9, 11), 0.25, 0.3, 0.3, 1400.0)
    assert np.all(np.diff(-eps.imag) < 0)


def test_warns_once_below_300_mhz():
    """One ModelRangeWarning per call, saying results are extrapolated, at 100 MHz."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        peplinski_permittivity(1e8, 0.005, 0.99, 0.0, 1500.0)
    assert len(caught) == 1
    assert issubclass(caught[0].category, ModelRangeWarning)
    assert "extrapolated" in str(caught[0].message) and "freq_hz" in str(caught[0].message)


def test_warns_above_1_3_ghz():
    """Above the 0.3-1.3 GHz range a ModelRangeWarning is raised."""
    with pytest.warns(ModelRangeWarning, match="freq_hz"):
        peplinski_permittivity(3e9, 0.2, 0.3, 0.3)


@pytest.mark.parametrize(
    ("kwargs", "name"),
    [
        ({"moisture": 0.6}, "moisture"),               # above porosity 1 − 1.5/2.66 = 0.436
        ({"sand": 0.7, "clay": 0.5}, "sand \\+ clay"),
        ({"clay": -0.1}, "clay"),
        ({"bulk_density": 2700.0}, "bulk_density"),
        ({"bulk_density": 0.0}, "bulk_density"),
        ({"temp_c": -2.0}, "temp_c"),
    ],
)
def test_impossible_input_raises(kwargs, name):
    """Impossible input raises InputError naming the parameter."""
    args = {"freq_hz": 5e8, "moisture": 0.2, "sand": 0.3, "clay": 0.3, **kwargs}
    with pytest.raises(InputError, match=name):
        peplinski_permittivity(**args)


def test_wet_soil_matches_equations_written_here():
    """Wet soil at 800 MHz equals Peplinski et al. (1995) eqs. re-transcribed independently here.

    Free water: Debye with ε∞ = 4.9 and Klein & Swift (1977) fresh-water ε_s(T), 2πτ(T);
    ε''_fw adds σ_eff(ρs − ρb)/(2πε₀ f ρs m_v), σ_eff = 0.0467 + 0.2204ρb − 0.4111S + 0.6614C
    (ρ in g/cm³).  Guards the transcription of β', β'', σ_eff and the mixing exponents.
    """
    from scipy.constants import epsilon_0

    f, mv, sand, clay, rb, rs, t = 8e8, 0.25, 0.5, 0.15, 1.4, 2.65, 20.0
    es_w = 88.045 - 0.4147 * t + 6.295e-4 * t**2 + 1.075e-5 * t**3
    x = f * (1.1109e-10 - 3.824e-12 * t + 6.938e-14 * t**2 - 5.096e-16 * t**3)  # f·2πτ
    ew_real = 4.9 + (es_w - 4.9) / (1 + x**2)
    sig = 0.0467 + 0.2204 * rb - 0.4111 * sand + 0.6614 * clay
    ew_imag = x * (es_w - 4.9) / (1 + x**2) + sig * (rs - rb) / (2 * np.pi * epsilon_0 * f * rs * mv)
    b1 = 1.2748 - 0.519 * sand - 0.152 * clay
    b2 = 1.33797 - 0.603 * sand - 0.166 * clay
    es = (1.01 + 0.44 * rs) ** 2 - 0.062
    e1 = 1.15 * (1 + rb / rs * (es**0.65 - 1) + mv**b1 * ew_real**0.65 - mv) ** (1 / 0.65) - 0.68
    e2 = (mv**b2 * ew_imag**0.65) ** (1 / 0.65)
    got = peplinski_permittivity(f, mv, sand, clay, rb * 1000, rs * 1000, t)
    assert got.real == pytest.approx(e1, rel=1e-9)
    assert -got.imag == pytest.approx(e2, rel=1e-9)
    assert got.imag < 0  # ε = ε' − jε'' with ε'' > 0


@pytest.mark.parametrize("kwargs", [{"bulk_density": 1.5}, {"particle_density": 2.66, "bulk_density": 1.5}])
def test_density_in_g_per_cm3_refused(kwargs):
    """Densities given in g/cm³ where kg/m³ is expected are refused, not silently used."""
    with pytest.raises(InputError, match="kg/m³"):
        peplinski_permittivity(5e8, 0.2, 0.3, 0.3, **kwargs)
