"""The jobs as plain Python calls from the package root (subsurf.api), as a notebook uses them."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from scipy import constants

import subsurf
from subsurf.errors import InputError

pint = pytest.importorskip("pint")
Q_ = pint.UnitRegistry().Quantity
EXAMPLE = Path(__file__).resolve().parents[1] / "surveys" / "example-site" / "survey.toml"


def test_root_names_are_the_documented_jobs():
    """Every name in subsurf.__all__ resolves (lazily) to a callable or a class."""
    for name in subsurf.__all__:
        if name != "__version__":
            assert callable(getattr(subsurf, name)), name


def test_ground_properties_of_a_lossless_ground_match_the_closed_form():
    """Lossless ε' = 9: v = c/3 and λ = v/f exactly (Maxwell, lossless limit); Quantities accepted."""
    medium = subsurf.medium(eps_r=9.0, sigma=0.0)
    ds = subsurf.ground_properties(medium, Q_(np.array([100.0, 400.0]), "MHz"))
    np.testing.assert_allclose(ds.velocity.values, constants.c / 3, rtol=1e-12)
    np.testing.assert_allclose(ds.wavelength.values, constants.c / 3 / np.array([100e6, 400e6]), rtol=1e-12)
    assert ds.velocity.attrs["units"] == "m/s" and ds.freq.attrs["units"] == "Hz"


def test_low_loss_attenuation_matches_the_classical_formula():
    """α ≈ (σ/2)·√(μ0/(ε0 ε')) in the low-loss limit (e.g. Annan 2009), 8.686 dB/Np."""
    medium = subsurf.medium(eps_r=9.0, sigma=Q_(1.0, "mS/m"))
    ds = subsurf.ground_properties(medium, 1e9)
    alpha = 1e-3 / 2 * np.sqrt(constants.mu_0 / (constants.epsilon_0 * 9.0))
    assert float(ds.attenuation[0]) == pytest.approx(alpha * 20 / np.log(10), rel=1e-3)


def test_choose_takes_antenna_names_and_a_target_in_centimetres():
    """Ranking by catalogue names; a target depth of 120 cm is 1.2 m, not 120 m."""
    medium = subsurf.medium(soil={"texture": "loamy_sand", "moisture": "12 %"})
    pipe = subsurf.target("line", depth_m=Q_(120, "cm"), size_m=Q_(15, "cm"), material="metal")
    assert pipe.depth_m == pytest.approx(1.2)
    names = ["lowband-100", "midband-250"]
    result = subsurf.choose_antenna(medium, pipe, antennas=names)
    assert [r["name"] for r in result["rows"]] == names
    assert all(np.isfinite(r["max_depth_m"]) for r in result["rows"])


def test_unknown_antenna_name_and_mixed_ground_are_one_line_errors():
    """Bad input to the API is a SubsurfError with a one-line message."""
    with pytest.raises(InputError):
        subsurf.medium(eps_r=9.0, sigma=0.01, soil={"texture": "sand", "moisture": 0.1})
    medium = subsurf.medium(eps_r=9.0, sigma=0.01)
    with pytest.raises(subsurf.SubsurfError) as err:
        subsurf.choose_antenna(medium, subsurf.target("planar", depth_m=1.0, material="water_table"),
                               antennas=["no-such-antenna"])
    assert "\n" not in str(err.value)


def test_feasibility_maps_select_by_name_and_carry_the_crs():
    """The example survey's maps: layers selectable by antenna/scenario name, CRS readable by rioxarray."""
    ds = subsurf.feasibility_maps(EXAMPLE)
    first_ant, first_sc = str(ds.antenna.values[0]), str(ds.scenario.values[0])
    layer = ds.max_depth.sel(antenna=first_ant, scenario=first_sc)
    assert layer.dims == ("y", "x") and np.isfinite(layer.values).any()
    assert ds.rio.crs is not None and ds.rio.crs.to_epsg() is not None
