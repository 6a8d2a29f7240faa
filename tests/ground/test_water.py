"""Free/saline water: checks against IAPWS (static permittivity) and TEOS-10 (conductivity)."""

import gsw
import numpy as np
import pytest
from iapws import IAPWS95
from iapws._iapws import _Dielectric

from subsurf.errors import InputError, ModelRangeWarning, SubsurfError
from subsurf.ground import (
    Soil,
    salinity_from_conductivity,
    water_conductivity,
    water_permittivity,
    water_relaxation_time,
    water_static_permittivity,
)
from subsurf.ground import water as water_module


@pytest.mark.parametrize("temp_c", [0.01, 5.0, 10.0, 20.0, 25.0, 30.0, 40.0])
def test_static_permittivity_matches_iapws(temp_c):
    """ε' at 1 kHz within 0.5 of the IAPWS (1997) static dielectric constant at 0.101325 MPa."""
    # Outside source: IAPWS Release on the Static Dielectric Constant of Ordinary Water
    # (1997) via iapws._iapws._Dielectric, density from IAPWS-95.
    t_k = temp_c + 273.15
    rho = IAPWS95(T=t_k, P=0.101325).rho
    reference = _Dielectric(rho, t_k)
    eps = water_permittivity(1e3, temp_c, 0.0)
    assert abs(eps.real - reference) < 0.5
    assert abs(water_static_permittivity(temp_c) - reference) < 0.5


def test_debye_sign_and_loss_peak():
    """ε'' >= 0 (ε = ε' − jε'') and the loss peaks near the relaxation frequency (~17 GHz at 20 °C)."""
    # Physical invariant of a Debye relaxation: ε'' maximal at 2πfτ = 1; water's relaxation
    # frequency at 20 °C is about 17 GHz (Kaatze 1989, J. Chem. Eng. Data 34:371).
    f = np.logspace(8, 11, 301)
    eps = water_permittivity(f, 20.0)
    assert np.all(eps.imag <= 0)
    f_peak = f[np.argmax(-eps.imag)]
    assert 14e9 < f_peak < 20e9


def test_salinity_lowers_static_permittivity_and_shortens_relaxation():
    """Saline water: lower ε_s and a higher relaxation frequency than fresh water (Klein & Swift 1977)."""
    fresh = water_static_permittivity(20.0, 0.0)
    sea = water_static_permittivity(20.0, 35.0)
    assert sea < fresh - 5
    f = np.logspace(9.5, 10.7, 400)
    peak = [f[np.argmax(-water_permittivity(f, 20.0, s).imag)] for s in (0.0, 35.0)]
    assert peak[1] > peak[0]


def test_water_refuses_ice_and_warns_when_hot():
    """Liquid-water model: error below 0 °C naming the parameter; warning above 40 °C."""
    with pytest.raises(InputError, match="temp_c.*-1"):
        water_permittivity(1e8, -1.0)
    with pytest.warns(ModelRangeWarning, match="temp_c"):
        water_permittivity(1e8, 60.0)


def test_water_refuses_temperatures_where_the_relaxation_fit_turns_negative():
    """Above the refusal limit Klein & Swift's τ would be negative (ε'' > 0): refused, named, with the range."""
    # Outside source: the published coefficients of Klein & Swift (1977) eq. (14), typed here
    # from the paper, 2πτ(T) = 1.1109e-10 - 3.824e-12 T + 6.938e-14 T² - 5.096e-16 T³ s; its
    # one real root by numpy.roots is where τ = 0 (~74.78 °C).
    roots = np.roots([-5.096e-16, 6.938e-14, -3.824e-12, 1.1109e-10])
    zero = float(roots[np.isreal(roots)].real[0])
    limit = water_module.WATER_RELAXATION_T_LIMIT
    assert limit < zero < limit + 0.1
    with pytest.warns(ModelRangeWarning):  # still allowed just below the limit, extrapolated
        assert water_permittivity(250e6, limit).imag <= 0
    for call in (lambda: water_permittivity(250e6, zero + 0.5), lambda: water_relaxation_time(126.85),
                 lambda: Soil(moisture=0.2, texture="loam", temp_c=90.0)):
        with pytest.raises(InputError, match=r"temp_c must be between 0 and 74\.7 °C"):
            call()


@pytest.mark.parametrize("temp_c", [0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0])
def test_water_conductivity_matches_teos10(temp_c):
    """Within 3 % of TEOS-10 gsw.C_from_SP for SP 1-35."""
    # Outside source: TEOS-10 Gibbs SeaWater toolbox, gsw.C_from_SP(SP, t, p=0) in mS/cm.
    sp = np.array([1.0, 2.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0])
    reference = gsw.C_from_SP(sp, temp_c, 0.0) * 0.1  # mS/cm -> S/m
    np.testing.assert_allclose(water_conductivity(sp, temp_c), reference, rtol=0.03)


def test_salinity_from_conductivity_inverts_teos10_values():
    """SP recovered from TEOS-10 conductivities within 0.05 (outside source gsw.C_from_SP)."""
    sp = np.array([1.0, 5.0, 20.0, 35.0])[:, None]
    t = np.array([2.0, 12.0, 28.0])[None, :]
    cond = gsw.C_from_SP(sp, t, 0.0) * 0.1
    np.testing.assert_allclose(salinity_from_conductivity(cond, t), np.broadcast_to(sp, cond.shape), atol=0.05)


def test_water_conductivity_errors():
    """Negative salinity and frozen water are refused with the parameter named."""
    with pytest.raises(SubsurfError, match="salinity_psu"):
        water_conductivity(-1.0)
    with pytest.raises(SubsurfError, match="temp_c"):
        water_conductivity(10.0, -0.5)
