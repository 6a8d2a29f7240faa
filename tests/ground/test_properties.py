"""Property tests (hypothesis): invalid input raises, valid input is finite, ε rises with moisture."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from subsurf.errors import SubsurfError
from subsurf.ground import Soil, crim_permittivity, peplinski_permittivity, water_permittivity

fraction = st.floats(0.0, 1.0)
settings.register_profile("soil", max_examples=60, deadline=None, derandomize=True)
settings.load_profile("soil")


@given(theta=fraction, phi=st.floats(0.05, 0.6), eps_s=st.floats(2.0, 10.0),
       temp=st.floats(0.0, 40.0), f=st.floats(1e6, 5e9))
def test_crim_finite_and_lossy_sign(theta, phi, eps_s, temp, f):
    """Valid CRIM input gives a finite ε with ε'' >= 0 between the phase values."""
    theta = min(theta, phi)
    eps = crim_permittivity(theta, phi, eps_s, water_permittivity(f, temp), 1.0)
    assert np.isfinite(eps) and eps.imag <= 0 and 1.0 <= eps.real <= 90.0


@given(m1=st.floats(0.01, 0.43), m2=st.floats(0.01, 0.43), sand=st.floats(0.05, 0.6),
       clay=st.floats(0.02, 0.39), f=st.floats(3e8, 1.3e9))
def test_peplinski_rises_with_moisture(m1, m2, sand, clay, f):
    """ε' of Peplinski (1995) is non-decreasing in moisture inside its range."""
    lo, hi = sorted((m1, m2))
    e = peplinski_permittivity(f, np.array([lo, hi]), sand, clay, 1500.0)
    assert np.all(np.isfinite(e)) and e[1].real >= e[0].real - 1e-12


@given(m1=fraction, m2=fraction, model=st.sampled_from(["crim", "topp"]))
def test_soil_permittivity_rises_with_moisture(m1, m2, model):
    """Soil ε' rises with moisture for CRIM and Topp (inside the porosity 0.4)."""
    lo, hi = sorted((0.4 * m1, 0.4 * m2))
    eps = Soil(np.array([lo, hi]), porosity=0.4, model=model).permittivity(2e8)
    assert np.all(np.isfinite(eps)) and eps[1].real >= eps[0].real


@given(moisture=st.floats(-1.0, 2.0), porosity=st.floats(-0.5, 1.5), temp=st.floats(-20.0, 30.0),
       clay=st.floats(-0.5, 1.5))
def test_invalid_soil_always_raises(moisture, porosity, temp, clay):
    """Any soil breaking a physical bound raises a SubsurfError (never a wrong number)."""
    invalid = (moisture < 0 or moisture > 1 or porosity <= 0 or porosity >= 1 or temp < 0
               or clay < 0 or clay > 1 or moisture > porosity)
    try:
        soil = Soil(moisture, porosity=porosity, temp_c=temp, clay=clay, sand=0.0)
    except SubsurfError:
        assert invalid
        return
    assert not invalid
    assert np.isfinite(soil.conductivity()) and soil.conductivity() >= 0


def test_soil_functions_refuse_shape_mismatch():
    """Mismatched shapes raise InputError (a SubsurfError), not numpy's bare ValueError."""
    import numpy as np
    import pytest

    from subsurf.errors import InputError
    from subsurf.ground import Soil, crim_permittivity, peplinski_permittivity, water_conductivity

    with pytest.raises(InputError, match="broadcast"):
        water_conductivity(np.ones(3), np.ones(2) * 10.0)
    with pytest.raises(InputError, match="broadcast"):
        crim_permittivity(np.ones(3) * 0.1, np.ones(2) * 0.4, 4.7, 80.0)
    with pytest.raises(InputError, match="broadcast"):
        peplinski_permittivity(5e8, np.ones(3) * 0.2, np.ones(2) * 0.5, 0.2)
    with pytest.raises(InputError, match="broadcast"):
        Soil(np.ones(3) * 0.2, texture="loam").electrical(np.ones(2) * 1e8)
