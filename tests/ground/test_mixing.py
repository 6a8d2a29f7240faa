"""Topp (1980), CRIM and porosity against their published closed forms."""

import numpy as np
import pytest

from subsurf.errors import InputError, ModelRangeWarning
from subsurf.ground import (
    crim_permittivity,
    lichtenecker_permittivity,
    porosity_from_density,
    topp_moisture,
    topp_permittivity,
)


@pytest.mark.parametrize(("theta", "ka"), [(0.0, 3.03), (0.1, 5.3433), (0.3, 16.8891), (0.5, 34.5925)])
def test_topp_published_polynomial(theta, ka):
    """Ka(θ) equals 3.03 + 9.3θ + 146θ² − 76.7θ³ evaluated by hand at published points."""
    # Topp, Davis & Annan (1980), Water Resour. Res. 16(3):574-582, eq. for Ka(θ);
    # expected values computed by hand from the coefficients.
    assert topp_permittivity(theta) == pytest.approx(ka, abs=1e-3)


def test_topp_inverse_published_point():
    """θ(Ka = 16.8891) = 0.304 from the published inverse polynomial (hand-computed)."""
    # θ = -0.053 + 0.0292·Ka - 5.5e-4·Ka² + 4.3e-6·Ka³ (Topp et al. 1980).
    assert topp_moisture(16.8891) == pytest.approx(0.30402, abs=1e-4)


def test_topp_round_trip_is_approximate():
    """The published inverse is approximate: round trip within 0.025 for θ 0.05-0.5."""
    theta = np.linspace(0.05, 0.5, 46)
    assert np.max(np.abs(topp_moisture(topp_permittivity(theta)) - theta)) < 0.025


def test_topp_warns_outside_calibration():
    """Warning outside θ 0-0.55 and Ka 3-40; error for Ka < 1."""
    with pytest.warns(ModelRangeWarning, match="theta"):
        topp_permittivity(0.7)
    with pytest.warns(ModelRangeWarning, match="ka"):
        topp_moisture(60.0)
    with pytest.raises(InputError, match="ka"):
        topp_moisture(0.5)


def test_crim_dry_and_saturated_limits():
    """CRIM limits: dry ((1−φ)√εs + φ)² and saturated ((1−φ)√εs + φ√εw)², hand-computed."""
    # Birchak et al. (1974): √ε = Σ vᵢ √εᵢ. φ = 0.4, εs = 4, εw = 81:
    # dry (0.6·2 + 0.4·1)² = 2.56; saturated (0.6·2 + 0.4·9)² = 23.04.
    assert crim_permittivity(0.0, 0.4, 4.0, 81.0) == pytest.approx(2.56)
    assert crim_permittivity(0.4, 0.4, 4.0, 81.0) == pytest.approx(23.04)


def test_lichtenecker_exponent_one_is_volume_average():
    """Exponent 1 gives the arithmetic volume average 0.6·4 + 0.2·81 + 0.2·1 = 18.8."""
    assert lichtenecker_permittivity(0.2, 0.4, 4.0, 81.0, exponent=1.0) == pytest.approx(18.8)


def test_crim_complex_water_keeps_sign_convention():
    """A lossy water phase gives ε'' >= 0 in the mixture (ε = ε' − jε'')."""
    eps = crim_permittivity(np.linspace(0, 0.4, 5), 0.4, 4.7, 78.0 - 10.0j)
    assert np.all(eps.imag <= 0)
    assert np.all(np.diff(eps.real) > 0)


def test_crim_refuses_moisture_above_porosity():
    """Water exceeding the pore space is refused with both numbers named."""
    with pytest.raises(InputError, match=r"moisture.*0\.5.*porosity.*0\.4"):
        crim_permittivity(0.5, 0.4, 4.7, 80.0)


def test_porosity_from_density():
    """φ = 1 − ρb/ρs: 1 − 1325/2650 = 0.5; bulk >= particle refused."""
    assert porosity_from_density(1325.0, 2650.0) == pytest.approx(0.5)
    with pytest.raises(InputError, match="bulk_density"):
        porosity_from_density(2700.0, 2650.0)
