"""Sourced loss defaults of soils: clay CEC table, counter-ion temperature correction, published data."""

import numpy as np
import pytest

from subsurf.errors import InputError
from subsurf.ground import Soil
from subsurf.ground.conductivity import (
    CLAY_CEC,
    CLAY_MINERAL_CEC,
    clay_cec_of_mineral,
    waxman_smits_conductivity,
)
from subsurf.ground.presets import load_textures
from subsurf.propagation import max_detectable_depth
from subsurf.waves.propagation import wave_properties


def test_clay_cec_table_matches_brady_weil():
    """CEC ranges equal Brady & Weil (2002) Table 8.1, cmol(+)/kg typed here, converted to eq/kg."""
    # Outside source: Brady, N. C., & Weil, R. R. (2002), The Nature and Properties of Soils,
    # 13th ed., Table 8.1 (as reproduced in a public copy of the table): smectite 80-150,
    # vermiculite 100-200, fine mica 10-40, chlorite 10-40, kaolinite 1-15 cmol(+)/kg.
    published = {"smectite": (80, 150), "vermiculite": (100, 200), "illite": (10, 40),
                 "chlorite": (10, 40), "kaolinite": (1, 15)}
    for mineral, (lo, hi) in published.items():
        assert CLAY_MINERAL_CEC[mineral] == pytest.approx((lo / 100, hi / 100), rel=1e-12), mineral


def test_clay_cec_table_orders_minerals():
    """Kaolinite < illite ≈ chlorite < smectite ≤ vermiculite, in eq/kg (Brady & Weil 2002, Table 8.1)."""
    c = {k: clay_cec_of_mineral(k) for k in CLAY_MINERAL_CEC}
    assert c["kaolinite"] < c["illite"] == c["chlorite"] < c["smectite"] <= c["vermiculite"]
    assert CLAY_CEC == c["illite"] == pytest.approx(0.25)
    assert clay_cec_of_mineral("montmorillonite") == c["smectite"]


def test_soil_clay_mineral_sets_surface_conduction():
    """More exchange capacity, more conduction: smectite > illite > kaolinite; clay_cec overrides."""
    # clay_loam, not clay: an all-smectite 'clay' preset (60 % clay at its Saxton & Rawls density)
    # has Q_v ~1650 eq/m³, past the Waxman & Smits range, and warns.
    s = {m: float(Soil(moisture=0.25, texture="clay_loam", clay_mineral=m).conductivity())
         for m in ("kaolinite", "illite", "smectite")}
    assert s["kaolinite"] < s["illite"] < s["smectite"]
    assert float(Soil(moisture=0.25, texture="clay_loam", clay_cec=0.25).conductivity()) == pytest.approx(s["illite"])
    with pytest.raises(InputError, match="clay_cec or clay_mineral"):
        Soil(moisture=0.25, texture="clay_loam", clay_cec=0.3, clay_mineral="illite")


def test_counter_ion_conductance_follows_temperature():
    """The clay term scales by 1 + 0.02(T − 25) (Revil et al. 1998, from memory) as the pore water does."""
    kw = dict(porosity=0.4, saturation=1.0, qv=300.0, m=1.5)
    sw25 = 0.05
    c25 = waxman_smits_conductivity(sw25, **kw, temp_c=25.0)
    c5 = waxman_smits_conductivity(sw25 * 0.6, **kw, temp_c=5.0)  # water EC at 5 °C by the same 2 %/°C
    assert c5 == pytest.approx(0.6 * c25, rel=1e-12)


def test_every_texture_has_sourced_loss_facts():
    """Each texture preset names its loss facts and their source; no stones in fine-earth classes (USDA)."""
    for name, t in load_textures().items():
        assert 0 < t["interface_n"] < 1 and t["interface_chi_per_bound_water"] >= 0, name
        assert t["stone_fraction"] == 0.0 and "USDA" in t["loss_source"], name


@pytest.mark.xfail(strict=True, reason="known: saturated at the Saxton & Rawls porosity (0.47, their Table 3 "
                   "sand 0.46) the free-water Debye loss gives 0.32 dB/m, above the 0.3 of the Davis & Annan "
                   "attenuation column (from memory; a conduction-only figure, see configs/materials.toml water rows)")
def test_saturated_sand_attenuation_in_davis_annan_range():
    """Davis & Annan (1989) table (configs/materials.toml, from memory): saturated sand with σ 0.1–1 mS/m
    attenuates 0.03–0.3 dB/m at 100 MHz; the default interface term must not push it out.  Clean sand
    (clay 0, as the table's class) with very fresh pore water (0.5 mS/m) gives σ at the table's low end;
    at its high end (1 mS/m) conduction alone is σZ₀/(2√ε')·8.686 = 0.34 dB/m, above the table's 0.3, so
    only the low end is a usable check."""
    # Saturated: moisture = the preset's porosity (was 0.39, the porosity of the former 1.6 g/cm³).
    phi = float(Soil(moisture=0.1, texture="sand", clay=0.0).porosity_value)
    soil = Soil(moisture=phi, texture="sand", clay=0.0, pore_water_ec25=0.0005)
    eps, sig = soil.electrical(100e6)
    assert 1e-4 <= sig <= 2e-4
    a = wave_properties(eps, sig, 100e6).attenuation_db_per_m
    assert 0.03 <= a <= 0.3


@pytest.mark.parametrize("texture, moisture", [
    # sand at 5 %: Peplinski's σ_eff regression rises with bulk density (0.2204 ρ_b); at the former
    # 1.6 g/cm³ it was 3x our loss at 0.5 GHz (an xfail), at the Saxton & Rawls 1.40 g/cm³ within 2x.
    ("loam", 0.20), ("clay", 0.35), ("sand", 0.05),
])
def test_attenuation_within_factor_two_of_peplinski_measured_fit(texture, moisture):
    """Published fit to measured soils, Peplinski et al. (1995) 0.3–1.3 GHz: CRIM + interface α within 2x."""
    f = np.array([0.5e9, 1.0e9])
    crim = Soil(moisture=moisture, texture=texture)
    pep = Soil(moisture=moisture, texture=texture, model="peplinski")
    a = wave_properties(*crim.electrical(f), f).attenuation_db_per_m
    b = wave_properties(*pep.electrical(f), f).attenuation_db_per_m
    assert np.all((a / b > 0.5) & (a / b < 2.0))


def test_field_trend_smith_and_jol_1995():
    """Smith & Jol (1995), J. Appl. Geophys. 33:93–100, gravel pit, one 1000 V transmitter: maximum depths
    52, 47, 37, 28 m at 25, 50, 100, 200 MHz.  Performance set once at 25 MHz (52 m); the predicted depth
    ratios at 50–200 MHz follow the measured ratios within ±0.1.  Ground: the 'sand' texture at 5 %
    moisture (quartzose, above the water table; moisture not given by the paper, an assumption), planar
    reflector |R| = 0.1.  Uses subsurf.propagation.max_detectable_depth (the plain range equation)."""
    f = np.array([25e6, 50e6, 100e6, 200e6])
    measured = np.array([52.0, 47.0, 37.0, 28.0])
    eps, sig = Soil(moisture=0.05, texture="sand").electrical(f)
    w = wave_properties(eps[0], sig[0], f[0])  # DESIGN.md planar range equation, evaluated here at 52 m
    perf = float(-10 * np.log10(w.wavelength**2 * 0.1**2 / ((4 * np.pi) ** 2 * (2 * 52.0) ** 2))
                 + 2 * w.attenuation_db_per_m * 52.0)
    d = np.array([max_detectable_depth(eps[i], sig[i], f[i], perf, target="planar", reflection=0.1)
                  for i in range(4)])
    np.testing.assert_allclose(d / d[0], measured / measured[0], atol=0.1)
