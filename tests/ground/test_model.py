"""The Soil type: presets, broadcasting, conduction bookkeeping, mapping input."""

import numpy as np
import pytest

from subsurf.errors import FileInputError, InputError, ModelRangeWarning
from subsurf.ground import Soil, load_materials, load_textures


def test_texture_preset_fills_fields():
    """texture='loam' fills sand, clay and densities from configs/textures.toml."""
    tex = load_textures()["loam"]
    soil = Soil(0.2, texture="loam")
    assert soil.porosity_value == pytest.approx(1 - tex["bulk_density"] / tex["particle_density"])


def test_grid_fields_broadcast_with_frequency():
    """Fields of shape (n,) with freq[:, None] give (nf, n) arrays of ε and σ."""
    soil = Soil(np.array([0.05, 0.15, 0.3]), texture="silt_loam", temp_c=np.array([5.0, 15.0, 25.0]))
    eps, sigma = soil.electrical(np.array([1e8, 2e8, 4e8, 8e8])[:, None])
    assert eps.shape == sigma.shape == (4, 3)
    assert np.all(np.diff(eps.real, axis=1) > 0)


def test_peplinski_never_counts_conduction_twice():
    """Peplinski's ε'' holds conduction, so electrical() returns σ = 0 and says so."""
    soil = Soil(0.2, texture="loam", model="peplinski")
    assert soil.conduction_in_eps
    eps, sigma = soil.electrical(5e8)
    assert sigma == 0.0 and -eps.imag > 0
    crim = Soil(0.2, texture="loam")
    assert not crim.conduction_in_eps and crim.electrical(5e8)[1] > 0


def test_topp_model_has_no_dielectric_loss():
    """model='topp': ε' = Ka(θ) (Topp 1980: 10.1164 at θ = 0.2), ε'' = 0."""
    eps = Soil(0.2, texture="loam", model="topp").permittivity(1e8)
    assert eps == pytest.approx(10.1164 + 0j, abs=1e-3)


def test_conductivity_without_clay_is_archie():
    """Clay-free soil: σ = σw φ^m S^n with σw from 2 %/°C corrected EC25 (hand-computed)."""
    soil = Soil(0.2, sand=1.0, clay=0.0, porosity=0.4, pore_water_ec25=0.1, temp_c=25.0,
                archie_m=2.0, archie_n=2.0)
    assert soil.conductivity() == pytest.approx(0.1 * 0.4**2 * 0.5**2)


def test_clay_raises_conductivity():
    """Surface conduction: more clay, higher σ at equal pore water (Waxman & Smits 1968 trend)."""
    low = Soil(0.2, sand=0.6, clay=0.05, porosity=0.45).conductivity()
    high = Soil(0.2, sand=0.3, clay=0.4, porosity=0.45).conductivity()
    assert high > low


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"moisture": 0.5, "porosity": 0.4}, "moisture must be <= porosity"),
        ({"moisture": 0.2, "sand": 0.8, "clay": 0.3, "porosity": 0.4}, "sand \\+ clay"),
        ({"moisture": 0.2, "porosity": 0.4, "temp_c": -3.0}, "temp_c"),
        ({"moisture": 0.2, "bulk_density": 2800.0}, "bulk_density must be < particle_density"),
        ({"moisture": 0.2, "bulk_density": -1.0}, "bulk_density"),
        ({"moisture": 0.2, "porosity": 0.4, "pore_water_ec25": 0.1, "pore_water_tds": 1.0}, "at most one"),
        ({"moisture": 0.2, "texture": "gravel"}, "texture"),
        ({"moisture": 0.2}, "porosity"),
    ],
)
def test_impossible_soil_refused(kwargs, match):
    """Impossible soils raise InputError naming the parameter and range."""
    with pytest.raises(InputError, match=match):
        Soil(**kwargs)


def test_from_mapping_parses_units():
    """'25 %', '1.6 g/cm3', '12 mS/m', '20 degC' become SI values."""
    soil = Soil.from_mapping({"moisture": "25 %", "bulk_density": "1.6 g/cm3",
                              "pore_water_ec25": "12 mS/m", "temp_c": "20 degC", "texture": "loam"})
    assert soil.bulk_density_value == pytest.approx(1600.0)
    assert soil.pore_water_conductivity(25.0) == pytest.approx(0.012)
    assert float(soil.moisture) == pytest.approx(0.25)


def test_from_mapping_bad_field_names_source_field_and_range():
    """A bad value gives an error naming the source, field, value and allowed range."""
    with pytest.raises(InputError, match=r"site\.toml.*clay must be between 0 and 1.*1\.2"):
        Soil.from_mapping({"moisture": 0.2, "texture": "loam", "clay": "120 %"}, source="site.toml")
    with pytest.raises(InputError, match=r"site\.toml.*unknown soil field 'wetness'"):
        Soil.from_mapping({"wetness": 0.2}, source="site.toml")
    with pytest.raises(InputError, match=r"site\.toml.*field 'temp_c'"):
        Soil.from_mapping({"moisture": 0.2, "texture": "loam", "temp_c": "3 m"}, source="site.toml")


def test_crim_soil_with_saline_pore_water_warns_above_fit():
    """Very saline pore water leaves the Klein & Swift fit: warning, not silence."""
    soil = Soil(0.3, texture="sand", pore_water_salinity_psu=45.0)
    with pytest.warns(ModelRangeWarning, match="salinity"):
        soil.permittivity(2e8)


def test_tables_load_with_sources():
    """Every texture and material entry has a source; required GPR materials are present."""
    tex, mat = load_textures(), load_materials()
    assert {"sand", "loamy_sand", "loam", "silt_loam", "clay_loam", "clay"} <= set(tex)
    for name in ("air", "distilled_water", "fresh_water", "sea_water", "dry_sand", "saturated_sand",
                 "limestone", "shale", "silt", "clay", "granite", "dry_salt", "ice", "metal", "pvc"):
        assert mat[name]["source"]
    assert mat["metal"]["perfect_conductor"]


def test_sea_water_row_matches_teos10_and_lossy_medium_closed_form():
    """The sea-water row: conductivity from TEOS-10, velocity and attenuation from Maxwell's equations.

    Outside sources: TEOS-10 via gsw.C_from_SP (SP 35, 10 and 25 degC, 0 dbar, mS/cm); the
    propagation constant gamma = j*omega*sqrt(mu0*eps0*(eps' - j*sigma/(omega*eps0))) of a
    plane wave in a lossy medium, written out here with scipy.constants.
    """
    import gsw
    from scipy.constants import epsilon_0, mu_0

    row = load_materials()["sea_water"]
    lo, hi = row["conductivity"]
    assert lo == pytest.approx(gsw.C_from_SP(35.0, 10.0, 0.0) * 0.1, rel=0.002)
    assert hi == pytest.approx(gsw.C_from_SP(35.0, 25.0, 0.0) * 0.1, rel=0.002)
    omega = 2 * np.pi * 100e6
    eps_hi, eps_lo = row["relative_permittivity"][1], row["relative_permittivity"][0]
    alphas, vels = [], []
    for eps, sig in ((eps_hi, lo), (eps_lo, hi)):   # 10 degC: higher eps, lower sigma
        gamma = 1j * omega * np.sqrt(mu_0 * epsilon_0 * (eps - 1j * sig / (omega * epsilon_0)))
        alphas.append(gamma.real * 20 / np.log(10))
        vels.append(omega / gamma.imag)
    np.testing.assert_allclose(row["attenuation_db_per_m"], alphas, rtol=0.01)
    assert min(vels) <= row["velocity"] <= max(vels)


def _iapws_static_permittivity(temp_c):
    from iapws import IAPWS95
    from iapws._iapws import _Dielectric

    t_k = temp_c + 273.15
    return _Dielectric(IAPWS95(T=t_k, P=0.101325).rho, t_k)


def _water_attenuation_db_per_m(temp_c, sigma, freq_hz=100e6):
    """Exact plane-wave attenuation of water: IAPWS static eps, Klein & Swift (1977) eq. (14) tau."""
    from scipy.constants import epsilon_0, mu_0

    # Outside sources: IAPWS (1997) static dielectric constant (iapws), the published Klein &
    # Swift (1977) eq. (14) relaxation time and eps_inf 4.9 typed from the paper, a single
    # Debye relaxation, and the lossy-medium propagation constant with scipy.constants.
    two_pi_tau = 1.1109e-10 - 3.824e-12 * temp_c + 6.938e-14 * temp_c**2 - 5.096e-16 * temp_c**3
    eps = 4.9 + (_iapws_static_permittivity(temp_c) - 4.9) / (1 + 1j * freq_hz * two_pi_tau)
    omega = 2 * np.pi * freq_hz
    gamma = 1j * omega * np.sqrt(mu_0 * epsilon_0 * (eps - 1j * sigma / (omega * epsilon_0)))
    return gamma.real * 20 / np.log(10)


def test_distilled_water_row_matches_iapws_and_debye_loss():
    """Distilled water: eps' the IAPWS static constant at 25 and 10 degC; attenuation from the Debye loss."""
    row = load_materials()["distilled_water"]
    eps_lo, eps_hi = row["relative_permittivity"]
    assert eps_lo == pytest.approx(_iapws_static_permittivity(25.0), abs=0.5)
    assert eps_hi == pytest.approx(_iapws_static_permittivity(10.0), abs=0.5)
    # Light et al. (2005), doi:10.1149/1.1836121: 0.055 uS/cm at 25 degC; Light, Kingman &
    # Bevilacqua (1995): up to 1.5 uS/cm in air.  1 uS/cm = 1e-4 S/m.
    assert row["conductivity"] == pytest.approx((0.055e-4, 1.5e-4), rel=1e-9)
    want = (_water_attenuation_db_per_m(25.0, 0.055e-4), _water_attenuation_db_per_m(10.0, 1.5e-4))
    np.testing.assert_allclose(row["attenuation_db_per_m"], want, rtol=0.03)


def test_fresh_water_attenuation_includes_debye_loss():
    """Fresh water (0.5 mS/m) attenuates 0.48-0.71 dB/m at 100 MHz over 25-10 degC, not conduction's 0.09."""
    row = load_materials()["fresh_water"]
    sigma = row["conductivity"][0]
    want = (_water_attenuation_db_per_m(25.0, sigma), _water_attenuation_db_per_m(10.0, sigma))
    np.testing.assert_allclose(row["attenuation_db_per_m"], want, rtol=0.03)


def test_dry_salt_row_from_unterberger_radar_speeds():
    """Dry rock salt: eps and v from the radar speeds of Unterberger (1976), typed here in ft/us."""
    from scipy.constants import c, foot

    # Outside source: Unterberger, R. R. (1976), Geophysics 41(1):123-132, doi:10.1190/1.1440595,
    # abstract: radar speed 203 ft/us in pure salt, 188 ft/us measured at Cote Blanche; a range
    # rate, so the wave velocity is twice it.
    v_pure, v_mine = (2 * s * foot / 1e-6 for s in (203.0, 188.0))
    row = load_materials()["dry_salt"]
    np.testing.assert_allclose(row["relative_permittivity"], [(c / v_pure) ** 2, (c / v_mine) ** 2], atol=0.01)
    assert v_mine <= row["velocity"] <= v_pure


def test_bad_table_names_file_and_key(tmp_path, monkeypatch):
    """A broken table raises FileInputError naming the file and entry."""
    import subsurf.ground.presets as presets

    (tmp_path / "textures.toml").write_text('[loam]\nsand = "lots"\n')
    monkeypatch.setenv("SUBSURF_CONFIG_DIR", str(tmp_path))
    presets._textures.cache_clear()
    try:
        with pytest.raises(FileInputError, match=r"textures\.toml.*\[loam\]"):
            presets.load_textures()
    finally:
        monkeypatch.delenv("SUBSURF_CONFIG_DIR")
        presets._textures.cache_clear()
