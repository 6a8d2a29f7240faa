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


# --- the plain-table path (no pint at start-up) --------------------------------------------

def _pint_si(value, unit, target):
    """The same conversion by pint itself (the reference library the table must agree with)."""
    from subsurf.units import _registry  # pint's registry with our three trade-unit definitions

    return float(_registry().Quantity(value, unit).to(target).magnitude)


@pytest.mark.parametrize("unit", sorted(__import__("subsurf.units", fromlist=["x"])._PLAIN_UNITS))
def test_plain_table_agrees_with_pint(unit):
    """Every unit read without pint converts to its SI unit exactly as pint converts it (1e-15)."""
    from subsurf.units import _PLAIN_UNITS

    target, factor = _PLAIN_UNITS[unit]
    if unit == "dB":  # defined by us as a plain number (dB values are not converted), as in the registry
        assert factor == 1.0 and target == "dimensionless"
        return
    for v in (1.0, 12.5, -3e-4):
        assert v * factor == pytest.approx(_pint_si(v, unit, target), rel=1e-15, abs=0)


@pytest.mark.parametrize("text, kind, default", [
    ("250 MHz", "frequency", "MHz"), ("0.1 m/ns", "velocity", "m/ns"), ("12 mS/m", "conductivity", "mS/m"),
    ("20%", "fraction", "dimensionless"), ("1.6 g/cm3", "density", "g/cm**3"), ("-2 degC", "temperature", "degC"),
    ("5 kg", "conductivity", "mS/m"), ("300 K", "temperature", "degC"), ("1 mS / m", "conductivity", "mS/m"),
    ("1e3 kHz", "frequency", "MHz"), (".5 cm", "length", "m"), ("7", "time", "ns"),
])
def test_plain_path_gives_what_pint_gives(text, kind, default, monkeypatch):
    """parse_quantity returns the same value (or the same error) with the plain table as through pint alone."""
    import subsurf.units as u

    def outcome():
        try:
            return u.parse_quantity(text, kind, default_unit=default, name="--x")
        except InputError as exc:
            return str(exc)

    fast = outcome()
    monkeypatch.setattr(u, "_parse_plain", lambda *a: None)  # force pint for everything
    slow = outcome()
    if isinstance(slow, str):
        assert fast == slow
    else:
        assert fast == pytest.approx(slow, rel=1e-15)


def test_codata_values_are_those_of_scipy_constants():
    """subsurf._codata (the start-up path's constants) equals scipy.constants exactly (CODATA 2022)."""
    from scipy import constants

    from subsurf import _codata

    assert (_codata.c, _codata.mu_0, _codata.epsilon_0) == (constants.c, constants.mu_0, constants.epsilon_0)
