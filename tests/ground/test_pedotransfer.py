"""Saxton & Rawls (2006) pedotransfer: saturation and normal density against the paper's Table 3."""

import numpy as np
import pytest

from subsurf.errors import InputError, ModelRangeWarning
from subsurf.ground.pedotransfer import saxton_rawls_normal_density, saxton_rawls_saturation
from subsurf.ground.presets import load_textures

# Outside source: Saxton, K. E., & Rawls, W. J. (2006), Soil Sci. Soc. Am. J. 70:1569-1578,
# doi:10.2136/sssaj2005.0117, Table 3 (texture classes at 2.5 % organic matter): sand and clay
# in % by weight, saturation theta_S in % by volume, printed rounded to whole percent.
TABLE3 = [  # class, sand %, clay %, theta_S %
    ("sand", 88, 5, 46), ("loamy sand", 80, 5, 46), ("sandy loam", 65, 10, 45),
    ("loam", 40, 20, 46), ("silt loam", 20, 15, 48), ("silt", 10, 5, 48),
    ("sandy clay loam", 60, 25, 43), ("clay loam", 30, 35, 48), ("silty clay loam", 10, 35, 51),
    ("silty clay", 10, 45, 52), ("sandy clay", 50, 40, 44), ("clay", 25, 50, 50),
]


@pytest.mark.parametrize(("name", "sand", "clay", "theta_s"), TABLE3)
def test_saturation_reproduces_table3(name, sand, clay, theta_s):
    """theta_S of each Table 3 class within the table's rounding (0.5 vol%)."""
    got = float(saxton_rawls_saturation(sand / 100, clay / 100, 2.5)) * 100
    assert abs(got - theta_s) <= 0.5, name


def test_normal_density_is_matric_density_of_saturation():
    """rho_N = (1 - theta_S) 2.65 g/cm3 (their Table 1); loam of Table 3 is 1.43 g/cm3 within rounding."""
    rho = float(saxton_rawls_normal_density(0.40, 0.20))
    assert rho == pytest.approx((1 - float(saxton_rawls_saturation(0.40, 0.20))) * 2650.0, rel=1e-12)
    assert abs(rho - (1 - 0.46) * 2650.0) <= 0.005 * 2650.0


def test_organic_matter_loosens_soil():
    """More organic matter, lower normal density (sign of the OM terms in their Table 1)."""
    rho = saxton_rawls_normal_density(0.4, 0.2, np.array([0.5, 2.5, 5.0]))
    assert np.all(np.diff(rho) < 0)


def test_texture_presets_use_the_normal_density():
    """Every bundled texture's bulk density is the Saxton & Rawls normal density at its sand/clay (10 kg/m3)."""
    for name, t in load_textures().items():
        want = float(saxton_rawls_normal_density(t["sand"], t["clay"], 2.5))
        assert abs(t["bulk_density"] - want) <= 5.0 + 1e-9, name
        assert "Saxton & Rawls" in t["source"], name


def test_bad_inputs_and_range():
    """Fractions outside 0-1 or summing over 1 are refused; clay above 60 % warns."""
    with pytest.raises(InputError, match="sand must be between 0 and 1"):
        saxton_rawls_saturation(1.2, 0.1)
    with pytest.raises(InputError, match="sand \\+ clay"):
        saxton_rawls_saturation(0.6, 0.5)
    with pytest.warns(ModelRangeWarning, match="clay"):
        saxton_rawls_saturation(0.1, 0.7)
