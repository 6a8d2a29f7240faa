"""Pore-water EC helpers, Archie (1942) and Waxman-Smits (1968)."""

import numpy as np
import pytest

from subsurf.errors import InputError
from subsurf.ground import (
    archie_conductivity,
    ec25_from_ec,
    ec25_from_tds,
    ec_from_ec25,
    qv_from_cec,
    salinity_from_ec25,
    water_conductivity,
    waxman_smits_b,
    waxman_smits_conductivity,
)


def test_archie_hand_computed():
    """σ = σw φ^m S^n / a = 0.1·0.3²·0.5² = 2.25e-3 S/m (Archie 1942, m = n = 2)."""
    assert archie_conductivity(0.1, 0.3, 0.5, a=1.0, m=2.0, n=2.0) == pytest.approx(2.25e-3)


def test_waxman_smits_reduces_to_archie_without_clay():
    """Q_v = 0 gives Archie's law exactly, over a grid of inputs."""
    sw = np.array([0.01, 0.1, 1.0])[:, None]
    sat = np.array([0.2, 0.6, 1.0])[None, :]
    np.testing.assert_allclose(waxman_smits_conductivity(sw, 0.35, sat, qv=0.0, m=1.5),
                               archie_conductivity(sw, 0.35, sat, m=1.5))


def test_waxman_smits_hand_computed_with_clay():
    """Saturated, σw = 1.3 S/m: B = 4.6e-3(1 − 0.6/e) S·m²/eq; σ = φ²(σw + B·Qv)."""
    # Waxman & Smits (1968) with B = 4.6[1 − 0.6 exp(−σw/1.3)] (S/m)/(meq/cm³).
    b = 4.6e-3 * (1 - 0.6 * np.exp(-1.0))
    expected = 0.09 * (1.3 + b * 500.0)
    assert waxman_smits_conductivity(1.3, 0.3, 1.0, qv=500.0, b_form="waxman-smits-1968") == pytest.approx(expected)


def test_waxman_thomas_b_hand_computed():
    """Default B is the Waxman & Thomas (1974) fit 3.83[1 − 0.83 exp(−0.5σw)] (S/m)/(meq/cm³) (from memory)."""
    # σw = 2 S/m: 3.83·(1 − 0.83/e) = 2.6606 (S/m)/(meq/cm³) = 2.6606e-3 S·m²/eq
    b = 3.83e-3 * (1 - 0.83 * np.exp(-1.0))
    assert waxman_smits_b(2.0) == pytest.approx(b, rel=1e-12)
    assert b == pytest.approx(2.6606e-3, rel=1e-4)
    expected = 0.09 * (2.0 + b * 500.0)
    assert waxman_smits_conductivity(2.0, 0.3, 1.0, qv=500.0) == pytest.approx(expected)


def test_fresh_water_b_lower_in_1974_fit():
    """In fresh pore water the 1974 fit's B is about a third of the 1968 fit's (0.65 vs 1.84 as σw → 0)."""
    assert waxman_smits_b(0.0) == pytest.approx(3.83e-3 * 0.17, rel=1e-9)
    assert waxman_smits_b(0.0, form="waxman-smits-1968") == pytest.approx(4.6e-3 * 0.4, rel=1e-9)


def test_qv_definition():
    """Q_v = CEC ρs (1 − φ)/φ: 0.1 eq/kg · 2650 · 0.6/0.4 = 397.5 eq/m³."""
    assert qv_from_cec(0.1, 0.4, 2650.0) == pytest.approx(397.5)


def test_ec_temperature_correction_round_trip():
    """Linear 2 %/°C: EC(15 °C) = 0.8·EC25; ec25_from_ec inverts it."""
    assert ec_from_ec25(0.1, 15.0) == pytest.approx(0.08)
    assert ec25_from_ec(ec_from_ec25(0.1, 7.0), 7.0) == pytest.approx(0.1)


def test_tds_common_practice():
    """TDS 640 mg/L ↔ EC 1000 µS/cm = 0.1 S/m (factor 0.64)."""
    assert ec25_from_tds(0.64) == pytest.approx(0.1)


def test_salinity_from_ec25_round_trip_through_pss78():
    """EC25 → SP → water_conductivity(SP, 25 °C) returns the EC25."""
    ec = np.array([0.01, 0.1, 1.0, 5.0])
    np.testing.assert_allclose(water_conductivity(salinity_from_ec25(ec), 25.0), ec, rtol=1e-6)


def test_archie_errors_name_parameter():
    """Porosity above 1 is refused with the range in the message."""
    with pytest.raises(InputError, match="porosity must be between 0 and 1"):
        archie_conductivity(0.1, 1.2)


@pytest.mark.parametrize("func", ["ec_from_ec25", "ec25_from_ec"])
def test_temperature_correction_refuses_sign_flip(func):
    """α = 0.05 /°C at 0 °C gives 1 + α(T − 25) < 0: refused instead of a negative conductivity."""
    from subsurf.ground import conductivity

    with pytest.raises(InputError, match="alpha"):
        getattr(conductivity, func)(0.1, 0.0, alpha=0.05)
