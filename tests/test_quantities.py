"""pint Quantities at the public API are converted to SI or refused (subsurf.quantities)."""

from __future__ import annotations

import numpy as np
import pytest

pint = pytest.importorskip("pint")

from subsurf import soil, velocity  # noqa: E402  (the public paths named in the design)
from subsurf.errors import InputError  # noqa: E402
from subsurf.interpretation.homogeneous import depth_with_uncertainty  # noqa: E402

ureg = pint.UnitRegistry()
Q_ = ureg.Quantity


def test_frequency_quantity_equals_hand_converted_si():
    """250 MHz as a Quantity gives the same water permittivity as 250e6 Hz (1 MHz = 1e6 Hz, SI prefix)."""
    assert soil.water_permittivity(Q_(250, "MHz"), Q_(20, "degC")) == soil.water_permittivity(250e6, 20.0)


def test_temperature_in_kelvin_is_converted_with_its_offset():
    """293.15 K is 20 °C (SI definition of the Celsius scale), not 293 °C."""
    got = soil.water_conductivity(35.0, temp_c=Q_(293.15, "K"))
    assert got == pytest.approx(soil.water_conductivity(35.0, temp_c=20.0), rel=1e-12)


def test_percent_moisture_becomes_a_fraction():
    """20 percent volumetric water content is the fraction 0.2 in Topp et al. (1980)."""
    assert soil.topp_permittivity(Q_(20, "percent")) == pytest.approx(soil.topp_permittivity(0.2))


def test_conductivity_in_millisiemens_per_metre():
    """Archie (1942) with σ_w = 50 mS/m equals σ_w = 0.05 S/m."""
    assert soil.archie_conductivity(Q_(50, "mS/m"), 0.3) == pytest.approx(soil.archie_conductivity(0.05, 0.3))


def test_depth_from_nanoseconds_and_metres_per_nanosecond():
    """20 ns at 0.1 m/ns is 1.0 m (d = v t / 2), not the 1e9 m that stripped units gave."""
    est = depth_with_uncertainty(Q_(20, "ns"), Q_(0.1, "m/ns"))
    assert float(np.asarray(est.depth)) == pytest.approx(1.0, rel=1e-12)


def test_array_quantities_in_a_fit():
    """A hyperbola fit from positions in cm and times in ns equals the fit from SI arrays."""
    x = np.linspace(-1.0, 1.0, 21)
    v, depth = 0.1e9, 0.8
    t = 2 * np.sqrt(depth**2 + x**2) / v
    si = velocity.fit_hyperbola(x, t)
    q = velocity.fit_hyperbola(Q_(x * 100, "cm"), Q_(t * 1e9, "ns"))
    assert q.velocity == pytest.approx(si.velocity, rel=1e-9)
    assert q.depth == pytest.approx(si.depth, rel=1e-9)


def test_wrong_dimensionality_is_one_clear_error():
    """A length given where a frequency is expected names the parameter and the unit."""
    with pytest.raises(InputError, match=r"freq_hz must be a frequency \(Hz\)"):
        soil.water_permittivity(Q_(3, "m"))


def test_plain_numbers_pass_through_unchanged():
    """Without Quantities the decorated function is the plain function (same value, same type)."""
    assert isinstance(soil.topp_permittivity(0.2), float | np.floating | np.ndarray)
    assert soil.topp_permittivity(0.2) == pytest.approx(3.03 + 9.3 * 0.2 + 146.0 * 0.2**2 - 76.7 * 0.2**3)  # Topp et al. (1980) eq. 1


def test_wave_properties_with_a_frequency_quantity():
    """wave_properties(9, 0.01 S/m, 250 MHz) has v ≈ c/3 (low loss), not the 5e5 m/s stripped units gave."""
    from subsurf import propagation

    got = propagation.wave_properties(9.0, Q_(10, "mS/m"), Q_(250, "MHz"))
    ref = propagation.wave_properties(9.0, 0.01, 250e6)
    assert float(np.asarray(got.velocity)) == pytest.approx(float(np.asarray(ref.velocity)), rel=1e-12)
    assert float(np.asarray(got.velocity)) == pytest.approx(2.998e8 / 3, rel=0.02)  # lossless limit c/√ε'


def test_target_depth_in_centimetres():
    """make_target(depth_m=120 cm) is a target at 1.2 m, not 120 m."""
    from subsurf.planning.antennas import make_target

    assert make_target("planar", depth_m=Q_(120, "cm"), material="water_table").depth_m == pytest.approx(1.2)
