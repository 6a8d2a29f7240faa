"""`subsurf map` as a user runs it: exit codes, stdout, JSON and files written."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from example_site import coarse_copy

EXAMPLE = Path(__file__).resolve().parents[2] / "surveys" / "example-site"


def run(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "subsurf", "map", *map(str, args)], capture_output=True,
                          text=True, cwd=cwd, timeout=300)


@pytest.fixture(scope="module")
def mapped(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("map")
    survey = coarse_copy(tmp)
    out = tmp / "out"
    proc = run(survey, "--out", out, "--json")
    return proc, out, survey


def test_exit_zero_and_json_caution(mapped):
    """The map runs, prints JSON with the caution, the Monte Carlo settings and a row per scenario × antenna."""
    proc, _, _ = mapped
    assert proc.returncode == 0, proc.stderr
    data = json.loads(proc.stdout)
    assert "verify buried services" in data["caution"]
    assert data["monte_carlo"]["draws"] == 40 and data["monte_carlo"]["seed"] == 20240611
    assert len(data["summary"]) == 2 * 4
    assert proc.stderr == ""


def test_all_outputs_written(mapped):
    """NetCDF, a depth map per scenario, two site PNGs and CSV/Markdown/JSON summaries exist; no temporary files."""
    _, out, _ = mapped
    for name in ("feasibility.nc", "map_antennas__dry.png", "map_antennas__wet.png", "map_scenarios.png",
                 "map_soil_inputs.png", "summary.csv", "summary.md", "summary.json"):
        assert (out / name).stat().st_size > 0, name
    assert not list(out.rglob("*.partial"))
    assert (out / "map_antennas__wet.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_summary_csv_opens_cleanly(mapped):
    """summary.csv: pandas reads it with no options, its CSVW metadata names every column with units, and the
    percentages equal the JSON summary's (4 significant digits)."""
    import pandas as pd
    from output_checks import assert_plain_csv

    proc, out, _ = mapped
    assert_plain_csv(out / "summary.csv")
    df = pd.read_csv(out / "summary.csv")
    rows = json.loads(proc.stdout)["summary"]
    assert df["reach_pct"].tolist() == pytest.approx([r["reach_pct"] for r in rows], rel=5e-4, abs=1e-9)
    meta = json.loads((out / "summary.csv-metadata.json").read_text(encoding="utf-8"))
    units = {c["name"]: c.get("schema:unitText") for c in meta["tableSchema"]["columns"]}
    assert units["centre_frequency_mhz"] == "MHz" and units["median_max_depth_m"] == "m"
    assert (out / "summary.csvt").is_file()


def test_every_scenario_has_its_depth_map(mapped):
    """One per-antenna depth map per scenario, named after it, and no unnamed 'first scenario' map."""
    proc, out, _ = mapped
    paths = json.loads(proc.stdout)["paths"]
    depth_maps = sorted(Path(p).name for k, p in paths.items() if k.startswith("png_antennas"))
    assert depth_maps == ["map_antennas__dry.png", "map_antennas__wet.png"]
    assert not (out / "map_antennas.png").exists()


def test_netcdf_cf_attributes(mapped):
    """Read back with xarray: CF conventions, units, grid_mapping with a WKT that pyproj parses as UTM 30N."""
    import xarray as xr
    from pyproj import CRS

    _, out, _ = mapped
    with xr.open_dataset(out / "feasibility.nc") as ds:
        assert ds.attrs["Conventions"].startswith("CF-")
        assert "verify buried services" in ds.attrs["comment"]
        assert ds.attrs["monte_carlo_draws"] == 40
        for v in ("max_depth", "margin_db", "velocity", "attenuation_db_per_m", "reach_probability"):
            assert ds[v].attrs["units"] and ds[v].attrs["long_name"]
            assert ds[v].attrs["grid_mapping"] == "crs"
            assert ds[v].dims == ("scenario", "antenna", "y", "x")
        assert CRS.from_wkt(ds["crs"].attrs["crs_wkt"]).to_epsg() == 32630
        assert ds["lat"].attrs["units"] == "degrees_north" and ds["x"].attrs["units"] == "m"
        inside = ds["mask"].values.astype(bool)
        assert np.all(np.isnan(ds["max_depth"].values[..., ~inside]))
        assert np.all(np.isfinite(ds["max_depth"].values[..., inside]))


def test_netcdf_coordinate_variables_numeric(mapped):
    """Read back with netCDF4: every variable named as its dimension is numeric without _FillValue (CF-1.8
    section 1.3 coordinate-variable definition, section 2.5.1); scenario/antenna names are label variables."""
    import netCDF4

    _, out, _ = mapped
    with netCDF4.Dataset(out / "feasibility.nc") as nc:
        for name in nc.dimensions:
            if name in nc.variables:
                var = nc.variables[name]
                assert np.issubdtype(var.dtype, np.number) and "_FillValue" not in var.ncattrs(), name
        assert "scenario" not in nc.variables and "antenna" not in nc.variables
        assert list(nc.variables["scenario_name"][:]) == ["dry", "wet"]
        assert "scenario_name" in nc.variables["max_depth"].coordinates.split()
        assert "antenna_name" in nc.variables["max_depth"].coordinates.split()


@pytest.mark.filterwarnings("ignore::PendingDeprecationWarning")  # third-party, reading GeoTIFF
def test_geotiff_layers_have_crs(mapped):
    """With the geo extra, GeoTIFF layers carry the grid CRS and the same values as the NetCDF."""
    rioxarray = pytest.importorskip("rioxarray")
    import xarray as xr

    _, out, _ = mapped
    tif = out / "geotiff" / "max_depth__dry__midband-250.tif"
    da = rioxarray.open_rasterio(tif).squeeze()
    assert da.rio.crs.to_epsg() == 32630
    with xr.open_dataset(out / "feasibility.nc") as ds:
        ds = ds.set_xindex("scenario_name").set_xindex("antenna_name")
        ref = ds["max_depth"].sel(scenario_name="dry", antenna_name="midband-250").values
        x_nc, y_nc, long_name = ds["x"].values, ds["y"].values, ds["max_depth"].attrs["long_name"]
    assert np.allclose(da.values, ref, equal_nan=True)
    # cell centres as rioxarray derives them from the GeoTIFF's geotransform = the NetCDF's x, y
    np.testing.assert_allclose(da["x"].values, x_nc, rtol=0, atol=1e-6)
    np.testing.assert_allclose(da["y"].values, y_nc, rtol=0, atol=1e-6)
    assert np.isnan(da.rio.nodata) and da.dtype == np.float32
    assert da.attrs["long_name"] == long_name and da.attrs["units"] == "m"


def test_geotiffs_are_cloud_optimised_with_metadata(mapped):
    """Every layer read with rasterio: DEFLATE, 256-cell tiles, no overviews for a grid within one tile (the
    rule: overviews only above 256 cells), band description and unit, NaN no-data, the grid CRS, a north-up
    transform of the cell size, the caution tag; rio-cogeo's cog_validate accepts the layout."""
    import rasterio

    from subsurf.safety import CAUTION

    proc, out, _ = mapped
    tifs = sorted((out / "geotiff").glob("*.tif"))
    assert len(tifs) == 3 * 2 * 4
    units = {"max_depth": "m", "margin_db": "dB", "reach_probability": "1"}
    for tif in tifs:
        with rasterio.open(tif) as r:
            assert r.compression.name == "deflate"
            assert r.profile["tiled"] and r.block_shapes == [(256, 256)]
            assert r.tags(ns="IMAGE_STRUCTURE").get("LAYOUT") == "COG"
            assert max(r.width, r.height) <= 256 and r.overviews(1) == []
            layer = r.tags()["layer"]
            assert tif.name.startswith(layer + "__")
            assert r.descriptions[0] and r.units[0] == units[layer]
            assert np.isnan(r.nodata)
            assert r.crs.to_epsg() == 32630
            assert r.transform.a == pytest.approx(6.0) and r.transform.e == pytest.approx(-6.0)  # 6 m cells
            assert r.tags()["caution"] == CAUTION and CAUTION in r.tags()["TIFFTAG_IMAGEDESCRIPTION"]
    try:
        from rio_cogeo.cogeo import cog_validate
    except ImportError:
        print("rio-cogeo not installed: COG layout checked with rasterio only")
        return
    for tif in tifs[:3]:
        valid, errors, _ = cog_validate(str(tif))
        assert valid, (tif.name, errors)


def test_existing_outputs_not_overwritten(mapped, tmp_path):
    """A second run into the same folder exits 3 and leaves the files untouched; --force overwrites."""
    _, out, survey = mapped
    before = (out / "summary.csv").stat().st_mtime_ns
    proc = run(survey, "--out", out)
    assert proc.returncode == 3 and "--force" in proc.stderr
    assert (out / "summary.csv").stat().st_mtime_ns == before


def test_bad_survey_one_line_error(tmp_path):
    """A survey with an unknown antenna exits 1 with one line naming the file and field."""
    p = coarse_copy(tmp_path)
    p.write_text(p.read_text().replace('"midband-500"', '"nosuch-123"'))
    proc = run(p, "--out", tmp_path / "o")
    assert proc.returncode == 1
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and "[antennas] names" in lines[0] and "nosuch-123" in lines[0]
    assert not (tmp_path / "o" / "feasibility.nc").exists()


def test_missing_survey_file(tmp_path):
    """A survey path that does not exist is a one-line error, exit 1."""
    proc = run(tmp_path / "none.toml", "--out", tmp_path / "o")
    assert proc.returncode == 1 and "not found" in proc.stderr


@pytest.mark.slow
def test_bundled_example_maps(tmp_path):
    """The README's command maps the bundled example."""
    proc = run(EXAMPLE / "survey.toml", "--out", tmp_path / "maps")
    assert proc.returncode == 0, proc.stderr
    assert "Fernhollow Paddock" in proc.stdout and "Caution" in proc.stdout


def test_survey_own_catalogue_is_mapped(tmp_path):
    """A survey naming its own catalogue maps its own antenna (a user's instrument, not the bundled list)."""
    cat = tmp_path / "mine.toml"
    cat.write_text("""
[antenna.site-rig-450]
centre_frequency_mhz = 450
bandwidth_mhz = 450
system_performance_db = 74.0
separation_m = 0.15
trace_rate_hz = 200
stacks = 4
pulse_length_ns = 3.3
illustrative = false
notes = "a user's own measured instrument (invented for this test)"
""")
    survey = coarse_copy(tmp_path)
    text = survey.read_text()
    text = text.replace('names = ["lowband-100", "midband-250", "midband-500", "highband-1000"]',
                        f'catalogue = "{cat.as_posix()}"\nnames = ["site-rig-450"]')
    survey.write_text(text)
    proc = run(survey, "--out", tmp_path / "out", "--json", "--no-geotiff")
    assert proc.returncode == 0, proc.stderr
    assert {r["antenna"] for r in json.loads(proc.stdout)["summary"]} == {"site-rig-450"}
