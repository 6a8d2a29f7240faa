"""A user's own antenna, mapped and reported end to end (`map --catalogue`, `[antennas.define]`, `report`).

The antenna is FICTIONAL: invented figures describing no real instrument.  On a uniform
site the map's maximum depth must equal `choose --catalogue` for the same ground (two code
paths, one answer), and that depth must follow from the antenna's performance figure by
the radar range equation written out here by hand.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import numpy as np
import pytest

NAME = "fictional-rig-300"
# FICTIONAL antenna (invented figures); a fixed gain so the hand-written budget needs no coupling model
ENTRY = """centre_frequency_mhz = 300
bandwidth_mhz = 250
system_performance_db = 70.0
separation_m = 0.0
trace_rate_hz = 100
stacks = 16
gain_dbi = 3.0
illustrative = false
notes = "FICTIONAL antenna invented for a test"
"""
CATALOGUE = f"# FICTIONAL antenna, invented figures\n[antenna.{NAME}]\n{ENTRY}"
SURVEY = """[site]
name = "uniform test box (invented)"
bbox = [500000.0, 5700000.0, 500040.0, 5700030.0]
crs = "EPSG:32631"
[grid]
cell_size = "5 m"
[soil]
texture = "loamy_sand"
[soil.defaults]
moisture = "12 %"
pore_water_ec = "20 mS/m"
temperature = "15 degC"
[target]
kind = "planar"
depth = "1 m"
material = "metal"
[monte_carlo]
draws = 10
"""
GROUND = ["--texture", "loamy_sand", "--moisture", "12 %", "--pore-water-ec", "20 mS/m", "--temp", "15"]


def subsurf(*args, cwd):
    return subprocess.run([sys.executable, "-m", "subsurf", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, timeout=300)


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """map --catalogue FILE, report of a survey defining the antenna inline, choose --catalogue FILE."""
    tmp = tmp_path_factory.mktemp("usercat")
    (tmp / "rig.toml").write_text(CATALOGUE)
    (tmp / "by_file.toml").write_text(SURVEY + f'[antennas]\nnames = ["{NAME}"]\n')
    (tmp / "inline.toml").write_text(SURVEY + f"[antennas.define.{NAME}]\n{ENTRY}")
    out = {
        "map": subsurf("map", "by_file.toml", "--catalogue", "rig.toml", "--out", "maps", "--no-geotiff", "--json",
                       "--quiet", cwd=tmp),
        "report": subsurf("report", "inline.toml", "--out", "r.html", "--json", "--quiet", cwd=tmp),
        "choose": subsurf("choose", *GROUND, "--target", "planar", "--depth", "1", "--material", "metal",
                          "--catalogue", "rig.toml", "--json", cwd=tmp),
    }
    for k, proc in out.items():
        assert proc.returncode == 0, (k, proc.stderr)
    return tmp, {k: json.loads(p.stdout) for k, p in out.items()}


def _map_depth(tmp):
    import xarray as xr

    with xr.open_dataset(tmp / "maps" / "feasibility.nc") as ds:
        assert list(ds["antenna_name"].values) == [NAME]
        md = ds["max_depth"].values[:, 0][:, ds["mask"].values.astype(bool)]
        return md, ds.attrs["antenna_catalogue"]


def test_map_and_report_state_the_catalogue(runs):
    """The map JSON, the NetCDF and the report name the catalogue used and the inline antenna."""
    tmp, out = runs
    cat = out["map"]["inputs"]["catalogue"]
    assert cat["source"] == "--catalogue" and cat["file"].endswith("rig.toml") and cat["illustrative"] == []
    assert "rig.toml" in _map_depth(tmp)[1]
    rcat = out["report"]["catalogue"]
    assert rcat["source"] == "bundled" and rcat["inline"] == [NAME]
    html = (tmp / "r.html").read_text(encoding="utf-8")
    assert f"defined in the survey ({NAME})" in html
    assert [r["antenna"] for r in out["report"]["ranking"]] == [NAME]


def test_uniform_site_map_equals_choose_and_report(runs):
    """Every cell's max depth equals choose's for the same ground (1e-4), and the report's ranking too."""
    tmp, out = runs
    md, _ = _map_depth(tmp)
    (row,) = [r for r in out["choose"]["rows"] if r["antenna"] == NAME]
    want = row["max_depth_m"]
    # float32 storage in the NetCDF: 1e-4 relative is far below the 1 % the issue asks for
    assert np.allclose(md, want, rtol=1e-4), (md.min(), md.max(), want)
    (rep,) = out["report"]["ranking"]
    assert rep["max_depth_m"] == pytest.approx(want, rel=1e-6)


def test_max_depth_follows_from_the_performance_figure(runs):
    """The mapped depth solves the planar radar range equation, written here by hand, for the catalogue figures.

    Planar reflector (Annan & Davis 1977; Daniels 2004, ch. 4; DESIGN.md):
        E_r/E_t = ∫ S(f)·(f/f_c)²·G²·λ(f)²·|R|²·F(f) / ((4π)²·(2d)²) · exp(−4·α(f)·d) df / ∫ S(f) df
    with |R| = 1 (metal), the fixed gain G = 10^(3/10) of the catalogue, and the system
    performance with the clutter-limited stacking gain 10·log10((1 + c)/(1/N + c)),
    c = 10^(−15/10), N = 16 (stacking reduces random noise only: Annan 2009, ch. 1).  α and
    λ = 2π/β from the lossy-medium plane-wave solution written out below (e.g. Balanis 2012,
    Advanced Engineering Electromagnetics, §4.3).  Taken from the package as inputs, each
    tested on its own elsewhere: the soil's ε(f) and σ, its volume-scattering attenuation and
    rough-surface factor F, and the stated antenna spectrum S(f).  The integral is scipy's
    quad and the root brentq, not the package's 14-node quadrature and Lambert-W solver.
    """
    from scipy.constants import epsilon_0, mu_0
    from scipy.integrate import quad
    from scipy.optimize import brentq

    from subsurf.detection.band import power_spectrum
    from subsurf.detection.evaluate import soil_loss_terms
    from subsurf.soil import Soil

    tmp, _ = runs
    soil = Soil(moisture=0.12, pore_water_ec25=0.02, texture="loamy_sand", temp_c=15.0)
    fc, bw, perf, stacks, clutter, gain = 300e6, 250e6, 70.0, 16, 15.0, 10 ** (3.0 / 10)
    c = 10 ** (-clutter / 10)
    perf_eff = perf + 10 * math.log10((1 + c) / (1 / stacks + c))

    def medium(f):
        eps, sig = soil.electrical(np.array([f]))
        eps, sig = complex(eps[0]), float(sig[0])
        w = 2 * math.pi * f
        tan_d = (-eps.imag + sig / (w * epsilon_0)) / eps.real
        k = w * math.sqrt(mu_0 * epsilon_0 * eps.real / 2)
        alpha = k * math.sqrt(math.sqrt(1 + tan_d**2) - 1)
        beta = k * math.sqrt(math.sqrt(1 + tan_d**2) + 1)
        extra, surface = soil_loss_terms(soil, np.array([f]), np.array([eps]))
        return alpha + float(np.ravel(extra)[0]), beta, float(np.ravel(surface)[0])

    total = quad(lambda f: power_spectrum(f, fc, bw), 0, 20 * fc, limit=400)[0]

    def received(d):
        def integrand(f):
            alpha, beta, surface = medium(f)
            lam = 2 * math.pi / beta
            return (power_spectrum(f, fc, bw) * (f / fc) ** 2 * gain**2 * lam**2 * surface
                    / ((4 * math.pi) ** 2 * (2 * d) ** 2) * math.exp(-4 * alpha * d))
        return quad(integrand, 0.02 * fc, 6 * fc, limit=200, points=[fc])[0] / total

    depth = brentq(lambda d: -10 * math.log10(received(d)) - perf_eff, 0.1, 50.0, xtol=1e-7)
    md, _ = _map_depth(tmp)
    # the package's 14-node band quadrature is within 0.1 dB of the full integral (detection/band.py):
    # at ~1.3 dB/m of two-way loss slope here that is well under 1 % of depth
    assert np.allclose(md, depth, rtol=0.01), (md.min(), depth)


def test_choose_states_its_catalogue(runs):
    """choose --catalogue names the file it read, in the JSON and the printed table; no illustrative figures."""
    tmp, out = runs
    cat = out["choose"]["catalogue"]
    assert cat["source"] == "--catalogue" and cat["file"].endswith("rig.toml") and cat["illustrative"] == []
    proc = subsurf("choose", *GROUND, "--target", "planar", "--depth", "1", "--material", "metal", cwd=tmp)
    assert proc.returncode == 0 and "Antennas: the bundled illustrative catalogue" in proc.stdout
