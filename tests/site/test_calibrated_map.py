"""Maps with a site calibration (subsurf.site.calibrated): one answer with `choose --calibration`, and the
radar range equation written out by hand with the measured attenuation and performance."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import constants
from scipy.integrate import quad
from scipy.optimize import brentq

from subsurf.errors import FileInputError

E0, N0 = 500_000.0, 5_700_000.0

# an invented antenna with a measured (fixed) gain and no separation: the budget's coupling and
# bistatic terms drop out, leaving the radar range equation
CATALOGUE = """
[antenna.probe-250]
centre_frequency_mhz = 250
bandwidth_mhz = 250
system_performance_db = 95
separation_m = 0.0
trace_rate_hz = 100
stacks = 1
gain_dbi = 3.0
illustrative = true
notes = "invented for a test"
"""

ALPHA_DB, V_M_PER_NS, SINGLE_DB = 6.0, 0.1, 88.0


def _record(**over):
    """A hand-written calibration file (schema of subsurf.io.calibration_file; invented numbers)."""
    rec = {"schema": "subsurf-site-calibration", "schema_version": 1,
           "antenna": {"name": "probe-250", "centre_freq_mhz": 250.0, "bandwidth_mhz": 250.0},
           "velocity": {"m_per_ns": V_M_PER_NS, "se_m_per_ns": 0.003},
           "attenuation": {"db_per_m": ALPHA_DB, "se_db_per_m": 0.4, "reference_freq_mhz": 250.0},
           "penetration": {"depth_m": 3.0, "se_m": 0.1},
           "q_star": {"value": None, "se": None},
           "band_mhz": [1.0, 3000.0],
           "effective_performance": {"db": SINGLE_DB, "se_db": 1.5, "single_trace_db": SINGLE_DB, "stacks": 1,
                                     "reference_reflection": 0.1}}
    for k, v in over.items():
        rec[k] = v
    return rec


def _survey(tmp_path, *, scenario="", calibration="cal.json", target="planar", material="metal"):
    (tmp_path / "cat.toml").write_text(CATALOGUE)
    (tmp_path / "cal.json").write_text(json.dumps(_record()))
    text = f"""
[site]
name = "uniform box (invented)"
bbox = [{E0}, {N0}, {E0 + 40}, {N0 + 30}]
crs = "EPSG:32631"
[grid]
cell_size = "10 m"
[soil]
texture = "loam"
[soil.defaults]
moisture = "20 %"
pore_water_ec = "30 mS/m"
[target]
kind = "{target}"
depth = "1 m"
size = "0.1 m"
material = "{material}"
[antennas]
names = ["probe-250"]
catalogue = "cat.toml"
{scenario}
"""
    if calibration:
        text += f'[calibration]\nfile = "{calibration}"\n'
    p = tmp_path / "survey.toml"
    p.write_text(text)
    return p


def _maps(path, **kw):
    from subsurf.site.maps import compute_maps
    from subsurf.site.survey import load_survey

    return compute_maps(load_survey(path), **kw)


def _choose_depth(tmp_path, target):
    """max depth of `choose --calibration` (its compute(), as the command runs it)."""
    from subsurf.cli._calibration import replan_inputs
    from subsurf.cli.choose import compute
    from subsurf.planning.antennas import load_catalogue

    class Args:
        calibration = str(tmp_path / "cal.json")

    cat = load_catalogue(tmp_path / "cat.toml")
    ground, used, _ = replan_inputs(Args, None, list(cat.values()), cat)
    return compute(ground, target, used)["rows"][0]["max_depth_m"]


def _inside(maps, layer):
    ds = maps.dataset
    v = ds[layer].values[0, 0][ds["mask"].values.astype(bool)]
    return v


def test_uniform_map_equals_choose_calibration(tmp_path):
    """A uniform site mapped with a calibration file gives, in every cell, the max depth of choose --calibration."""
    from subsurf.planning.antennas import make_target

    maps = _maps(_survey(tmp_path))
    depth = _inside(maps, "max_depth")
    want = _choose_depth(tmp_path, make_target("planar", depth_m=1.0, material="metal"))
    np.testing.assert_allclose(depth, want, rtol=1e-5)  # float32 layer
    assert maps.calibration is not None and "CALIBRATED" in maps.dataset.attrs["calibration"]
    # the calibrated ground is the measured one at the anchor (uniform site: every cell)
    np.testing.assert_allclose(_inside(maps, "attenuation_db_per_m"), ALPHA_DB, rtol=1e-5)
    np.testing.assert_allclose(_inside(maps, "velocity"), V_M_PER_NS * 1e9, rtol=1e-5)


def test_calibrated_depth_follows_hand_radar_range_equation(tmp_path):
    """The calibrated max depth solves the planar radar range equation with the measured α, v and performance."""
    maps = _maps(_survey(tmp_path))
    got = float(np.median(_inside(maps, "max_depth")))
    # Planar reflector (image source at 2d), Annan & Davis (1977), GSC Paper 77-1B; Daniels (2004) ch. 4:
    #   E_r/E_t = G² λ² |R|² e^(-4αd) / ((4π)² (2d)²),  P = -10 log10(E_r/E_t) at the maximum depth.
    # Summed over the pulse: the spectrum S(f) a system records from a planar reflector holds the
    # apertures' λ², so the energy weights are S(f)·(f/f_c)² (subsurf.detection.band notes), written out
    # here with scipy's quad.  No Q* in the file: the ground is the constant-(ε', σ) medium that has the
    # measured α and v at 250 MHz, ε' = (β²-α²)/(ω²μ₀ε₀), σ = 2αβ/(ωμ₀) (Balanis 2012, §4.3), and its
    # α(f), β(f) the lossy-medium closed form (Balanis 2012, eq. 4-17).
    from subsurf.detection.band import power_spectrum

    v, fc = V_M_PER_NS * 1e9, 250e6
    w0 = 2 * math.pi * fc
    a0, b0 = ALPHA_DB * math.log(10) / 20, w0 / v
    eps = (b0**2 - a0**2) / (w0**2 * constants.mu_0 * constants.epsilon_0)
    sig = 2 * a0 * b0 / (w0 * constants.mu_0)

    def alpha_beta(f):
        w = 2 * math.pi * f
        tand = sig / (w * constants.epsilon_0 * eps)
        b = w * math.sqrt(constants.mu_0 * constants.epsilon_0 * eps * (math.sqrt(1 + tand**2) + 1) / 2)
        return w * constants.mu_0 * sig / (2 * b), b

    g = 10 ** (3.0 / 10)  # gain_dbi of the invented antenna
    r_pec = 1.0  # metal: a perfect conductor, |R| = 1
    perf = SINGLE_DB  # one stack: no stacking gain
    s = lambda f: float(power_spectrum(f, fc, 250e6))  # noqa: E731
    total = quad(s, 1e5, 5e9, points=[fc], limit=500)[0]

    def loss(d):
        def integrand(f):
            a, b = alpha_beta(f)
            return s(f) * (f / fc) ** 2 * (2 * math.pi / b) ** 2 * math.exp(-4 * a * d)
        energy = g**2 * r_pec**2 * quad(integrand, 1e5, 5e9, points=[fc], limit=500)[0] / total
        return -10 * math.log10(energy / ((4 * math.pi) ** 2 * (2 * d) ** 2))

    want = brentq(lambda d: loss(d) - perf, 0.1, 50)
    # the budget integrates the band with 14 Gauss nodes between its -60/-40 dB edges (0.1 dB class)
    assert got == pytest.approx(want, rel=3e-3)


def test_scenario_scales_the_calibrated_ground(tmp_path):
    """A wetter scenario raises the calibrated attenuation by the soil model's own ratio (anchored at the base)."""
    from subsurf.ground import Soil
    from subsurf.waves.propagation import wave_properties

    scen = '[[scenarios]]\nname = "base"\n[[scenarios]]\nname = "wet"\noffset = { moisture = "8 %" }\n'
    maps = _maps(_survey(tmp_path, scenario=scen))
    ds, inside = maps.dataset, maps.dataset["mask"].values.astype(bool)
    a_base = ds["attenuation_db_per_m"].values[0, 0][inside]
    a_wet = ds["attenuation_db_per_m"].values[1, 0][inside]
    # the model ratio at 250 MHz, from the soil model directly (physical invariant: wetter loam is lossier)
    kw = {"texture": "loam", "pore_water_ec25": 0.03}
    w0 = wave_properties(*Soil(moisture=0.20, **kw).electrical(250e6), 250e6)
    w1 = wave_properties(*Soil(moisture=0.28, **kw).electrical(250e6), 250e6)
    ratio = float(w1.attenuation_db_per_m / w0.attenuation_db_per_m)
    assert ratio > 1.05
    np.testing.assert_allclose(a_base, ALPHA_DB, rtol=1e-5)
    np.testing.assert_allclose(a_wet, ALPHA_DB * ratio, rtol=1e-3)  # loam preset: no stones, no scattering term
    assert np.all(ds["max_depth"].values[1, 0][inside] < ds["max_depth"].values[0, 0][inside])


def test_without_calibration_map_is_the_model(tmp_path):
    """Without a calibration the map's attenuation is the soil model's (not 6 dB/m)."""
    maps = _maps(_survey(tmp_path, calibration=""))
    assert maps.calibration is None and "calibration" not in maps.dataset.attrs
    assert abs(float(np.median(_inside(maps, "attenuation_db_per_m"))) - ALPHA_DB) > 1.0


@pytest.mark.parametrize("edit, key", [
    ({"antenna": {"name": "probe-250", "centre_freq_mhz": 500.0}}, "antenna.centre_freq_mhz"),
    ({"antenna": {"name": "nosuch-100"}}, "antenna.name"),
    ({"schema_version": 7}, "schema_version"),
    ({"velocity": {}}, "velocity.m_per_ns"),
])
def test_bad_calibration_file_names_file_and_key(tmp_path, edit, key):
    """A calibration for another antenna or frequency, a wrong version or a missing key: one error naming both."""
    from subsurf.site.maps import compute_maps
    from subsurf.site.survey import load_survey

    p = _survey(tmp_path)
    (tmp_path / "cal.json").write_text(json.dumps(_record(**edit)))
    with pytest.raises(FileInputError) as err:
        compute_maps(load_survey(p))
    assert str(tmp_path / "cal.json") in str(err.value) and key in str(err.value)


def test_missing_calibration_file_names_survey_key(tmp_path):
    """[calibration] file that does not exist: the survey file and the key are named."""
    from subsurf.site.survey import load_survey

    p = _survey(tmp_path, calibration="nowhere.json")
    with pytest.raises(FileInputError, match=r"\[calibration\] file"):
        load_survey(p)

