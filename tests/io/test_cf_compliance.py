"""The map and region NetCDF files checked by readers we did not write: the CF checker (cfchecker, with
UDUNITS-2), cf-units (UDUNITS-2), xarray, and GDAL (rasterio's netCDF driver); names selectable after a
round trip through subsurf.open_map; GDAL band indices naming the bands through the label variables."""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import netCDF4
import numpy as np
import pytest
from example_site import coarse_copy
from pyproj import CRS

import subsurf

TABLES = Path(__file__).parent / "cf_tables"
#: CF accepts two units that UDUNITS-2 lacks, sverdrup and decibel/dB (CF FAQ, "units not in UDUNITS");
#: our margins, performances and attenuations are dB (ratios of powers), so dB is read as a dimensionless 1 here.
CF_EXTRA_UNITS = re.compile(r"\bdB\b")


def _run(*args, cwd):
    return subprocess.run([sys.executable, "-m", "subsurf", *args], capture_output=True, text=True, cwd=cwd,
                          timeout=600)


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    """A survey map (two scenarios, four antennas) and a region map read from a rasterio GeoTIFF with gaps."""
    pytest.importorskip("dask")
    rasterio = pytest.importorskip("rasterio")
    from rasterio.transform import from_origin

    tmp = tmp_path_factory.mktemp("cf")
    survey = coarse_copy(tmp)
    r = _run("map", str(survey), "--out", "maps", "--quiet", cwd=tmp)
    assert r.returncode == 0, r.stderr
    rng = np.random.default_rng(3)
    moist = (15 + 10 * rng.random((30, 40))).astype(np.float32)
    clay = (0.1 + 0.2 * rng.random((30, 40))).astype(np.float32)
    moist[:3] = -9999
    clay[10:12] = -9999
    with rasterio.open(tmp / "soil.tif", "w", driver="GTiff", width=40, height=30, count=2, dtype="float32",
                       crs="EPSG:32633", transform=from_origin(500000, 5800000, 25, 25), nodata=-9999) as dst:
        dst.write(np.stack([moist, clay]))
        dst.set_band_description(1, "moisture")
        dst.set_band_description(2, "clay")
        dst.units = ("%", "1")
    r = _run("region", "--soil", "soil.tif", "--target", "planar", "--depth", "1.5", "--out", "region.nc",
             "--chunk", "16", "--quiet", cwd=tmp)
    assert r.returncode == 0, r.stderr
    return {"map": tmp / "maps" / "feasibility.nc", "region": tmp / "region.nc"}


@pytest.mark.parametrize("which", ["map", "region"])
def test_cf_checker_reports_no_errors_or_warnings(files, which):
    """cfchecker (NCAS CF checker, CF-1.8 rules) finds 0 errors and 0 warnings; offline, with a minimal
    extract of the standard name table (tests/io/cf_tables) holding the names our files use."""
    try:
        import cfchecker.cfchecks  # noqa: F401 - its cfunits raises FileNotFoundError without the udunits2 C library
    except (ImportError, FileNotFoundError, OSError) as exc:
        pytest.skip(f"cfchecker or the udunits2 library it needs (Debian libudunits2-0) is missing: {exc}")
    r = subprocess.run([sys.executable, "-c", "from cfchecker.cfchecks import main; main()",
                        "-v", "1.8", "-s", str(TABLES / "standard-name-table.xml"),
                        "-a", str(TABLES / "area-type-table.xml"), "-r", str(TABLES / "region-names.xml"),
                        str(files[which])], capture_output=True, text=True, timeout=300)
    out = r.stdout
    assert "ERRORS detected: 0" in out and "WARNINGS given: 0" in out, out[-3000:]


@pytest.mark.parametrize("which", ["map", "region"])
def test_every_unit_is_udunits_or_the_cf_decibel(files, which):
    """cf-units (UDUNITS-2) parses every 'units' attribute, dB read as the CF-accepted dimensionless decibel."""
    cf_units = pytest.importorskip("cf_units")
    with netCDF4.Dataset(files[which]) as nc:
        units = {v: nc[v].units for v in nc.variables if "units" in nc[v].ncattrs()}
    assert units and "dB" in units["margin_db"]
    for name, u in units.items():
        cf_units.Unit(CF_EXTRA_UNITS.sub("1", u))  # raises ValueError for anything UDUNITS-2 cannot read
        assert name != "max_depth" or cf_units.Unit(u) == cf_units.Unit("m")


@pytest.mark.parametrize("which", ["map", "region"])
def test_names_selectable_after_a_round_trip(files, which):
    """subsurf.open_map gives antenna (and scenario) names as indexes: .sel by name equals the label lookup
    done by hand with netCDF4, and the CRS is attached for rioxarray."""
    ds = subsurf.open_map(files[which])
    with netCDF4.Dataset(files[which]) as nc:
        names = list(nc["antenna_name"][:])
        raw = nc["max_depth"][:]
        scen = list(nc["scenario_name"][:]) if "scenario_name" in nc.variables else None
        wkt = nc["crs"].crs_wkt
    k = names.index("midband-500")
    if scen:
        got = ds["max_depth"].sel(antenna="midband-500", scenario=scen[-1]).values
        expect = raw[len(scen) - 1, k] if ds["max_depth"].dims[0] == "scenario" else raw[k, len(scen) - 1]
    else:
        got, expect = ds["max_depth"].sel(antenna="midband-500").values, raw[k]
    np.testing.assert_array_equal(got, np.ma.filled(expect.astype(float), np.nan))
    assert CRS.from_wkt(wkt) == CRS.from_user_input(ds.rio.crs.to_wkt())


@pytest.mark.parametrize("which", ["map", "region"])
def test_gdal_reads_crs_units_and_nodata(files, which):
    """GDAL's netCDF driver (rasterio) reads each layer's CRS, units, nodata and the antenna axis as bands."""
    rasterio = pytest.importorskip("rasterio")
    with netCDF4.Dataset(files[which]) as nc:
        epsg = CRS.from_wkt(nc["crs"].crs_wkt).to_epsg()
        n_ant = len(nc.dimensions["antenna"])
    with rasterio.open(f"netcdf:{files[which]}:max_depth") as r:
        assert r.crs.to_epsg() == epsg
        assert set(r.units) == {"m"} and np.isnan(r.nodata)
        assert r.count % n_ant == 0
        assert r.tags(1)["long_name"].startswith("maximum detectable depth")


@pytest.mark.parametrize("which", ["map", "region"])
def test_gdal_band_indices_name_each_band(files, which):
    """GDAL's netCDF driver labels each band with NETCDF_DIM_<dim>, here the 1-based index along the dimension
    (no coordinate variable; GDAL netCDF driver docs, https://gdal.org/en/stable/drivers/raster/netcdf.html,
    and tests/cli/test_cli_map_gdal.py for why no CF-valid encoding gives the names per band in GDAL 3.10):
    the index looked up in the label variable names the band, whose pixels equal that slice read by netCDF4."""
    rasterio = pytest.importorskip("rasterio")
    with netCDF4.Dataset(files[which]) as nc:
        var = nc["max_depth"]
        extra = [d for d in var.dimensions if d not in ("y", "x")]
        labels = {d: [str(s) for s in nc[f"{d}_name"][:]] for d in extra}
        raw = np.ma.filled(var[:].astype(float), np.nan)
        north_up = nc["y"][0] > nc["y"][-1]
    assert "antenna" in extra
    with rasterio.open(f"netcdf:{files[which]}:max_depth") as r:
        assert r.count == int(np.prod([len(v) for v in labels.values()]))
        named = set()
        for b in range(1, r.count + 1):
            idx = tuple(int(r.tags(b)[f"NETCDF_DIM_{d}"]) - 1 for d in extra)
            named.add(tuple(labels[d][i] for d, i in zip(extra, idx)))
            expect = raw[idx] if north_up else raw[idx][::-1]
            np.testing.assert_array_equal(r.read(b).astype(float), expect)
    assert len(named) == r.count  # every (scenario, antenna) named by exactly one band
