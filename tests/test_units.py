"""Checks of subsurf.units: edge quantities parsed to SI, with one-line errors."""

import math

import pytest

from subsurf.errors import InputError
from subsurf.units import from_si, parse_quantity


@pytest.mark.parametrize("text, kind, default, expected", [
    ("250 MHz", "frequency", "MHz", 250e6),       # SI prefix mega = 1e6 (SI Brochure)
    (250, "frequency", "MHz", 250e6),             # bare number in the named default unit
    ("12 mS/m", "conductivity", "mS/m", 0.012),
    ("500 uS/cm", "conductivity", "mS/m", 0.05),  # 1 µS/cm = 1e-4 S/m
    ("1.6 g/cm3", "density", "kg/m**3", 1600.0),  # 1 g/cm³ = 1000 kg/m³
    ("25 %", "fraction", "dimensionless", 0.25),
    ("0.1 m/ns", "velocity", "m/ns", 1e8),
    ("18.5 ns", "time", "ns", 18.5e-9),
    ("300 K", "temperature", "degC", 26.85),      # T[°C] = T[K] − 273.15
])
def test_parse_quantity_known_conversions(text, kind, default, expected):
    """Strings with units and bare numbers convert to SI by the SI definitions of the units."""
    assert parse_quantity(text, kind, default_unit=default) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("text", ["nan", "inf", "-inf MHz", float("nan")])
def test_parse_quantity_refuses_non_finite(text):
    """NaN and infinity are refused at the edge with the field's name, not passed inwards."""
    with pytest.raises(InputError, match="--freq: must be a finite number"):
        parse_quantity(text, "frequency", default_unit="MHz", name="--freq")


def test_parse_quantity_wrong_dimension_names_field():
    """A unit of the wrong dimension is an InputError naming the field and the unit."""
    with pytest.raises(InputError, match="--sigma: '5 kg' has units of kg"):
        parse_quantity("5 kg", "conductivity", default_unit="mS/m", name="--sigma")


def test_from_si_round_trip():
    """from_si inverts the parse: 2.5e8 Hz is 250 MHz, 0.012 S/m is 12 mS/m."""
    assert from_si(2.5e8, "MHz") == pytest.approx(250.0, rel=1e-12)
    assert from_si(0.012, "mS/m") == pytest.approx(12.0, rel=1e-12)
    assert math.isclose(from_si(18.5e-9, "ns"), 18.5, rel_tol=1e-12)
