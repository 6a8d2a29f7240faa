"""`subsurf region --soil` with GeoTIFF and NetCDF soil rasters written by independent writers (rasterio/GDAL,
netCDF4): the same data give the same map cell for cell, read lazily; bands, variables, time, units, CRS, gaps."""

import json
import subprocess
import sys
from pathlib import Path

import netCDF4
import numpy as np
import pytest
import xarray as xr
from pyproj import CRS

from subsurf.errors import FileInputError, InputError
from subsurf.planning.antennas import load_catalogue, make_target
from subsurf.site import feasibility
from subsurf.site import regional as scale

pytest.importorskip("dask")
rasterio = pytest.importorskip("rasterio")
from rasterio.transform import from_origin  # noqa: E402

NX, NY, CELL, X0, Y0 = 70, 45, 25.0, 500_000.0, 5_800_000.0
NODATA = -9999.0
DEPTH = 1.5


@pytest.fixture(scope="module")
def soil():
    """Invented fields (seeded): moisture in %, pore-water EC in mS/m, clay fraction; gaps in moisture and clay."""
    rng = np.random.default_rng(42)
    m = (12 + 15 * rng.random((NY, NX))).astype(np.float32)
    ec = (20 + 60 * rng.random((NY, NX))).astype(np.float32)
    clay = (0.05 + 0.3 * rng.random((NY, NX))).astype(np.float32)
    m[:4, :] = np.nan  # open water: no moisture
    clay[20:25, 10:30] = np.nan  # a survey gap in clay only
    return {"moisture": m, "pore_water_ec": ec, "clay": clay}


@pytest.fixture(scope="module")
def antennas():
    return list(load_catalogue().values())[1:4]


@pytest.fixture(scope="module")
def target():
    return make_target("planar", depth_m=DEPTH, material="water_table")


def _x():
    return X0 + CELL * (np.arange(NX) + 0.5)


def _y():
    return Y0 - CELL * (np.arange(NY) + 0.5)


def write_geotiff(path, bands, *, descriptions=None, units=None, crs="EPSG:32633"):
    """A multi-band GeoTIFF through rasterio (GDAL's GTiff driver), nodata -9999, north-up."""
    with rasterio.open(path, "w", driver="GTiff", width=NX, height=NY, count=len(bands), dtype="float32",
                       crs=crs, transform=from_origin(X0, Y0, CELL, CELL), nodata=NODATA,
                       tiled=True, blockxsize=16, blockysize=16) as dst:
        for i, a in enumerate(bands, 1):
            dst.write(np.where(np.isfinite(a), a, NODATA).astype(np.float32), i)
            if descriptions:
                dst.set_band_description(i, descriptions[i - 1])
        if units:
            dst.units = tuple(units)


def write_netcdf(path, fields, *, units, names=None, crs="EPSG:32633", times=None):
    """A CF NetCDF through netCDF4 (not our encoder): dims (time,) y, x, grid mapping, units attributes."""
    names = names or {q: q for q in fields}
    with netCDF4.Dataset(path, "w") as nc:
        dims = ("y", "x")
        if times is not None:
            nc.createDimension("time", len(times))
            t = nc.createVariable("time", "f8", ("time",))
            t.units, t.calendar = "days since 2024-01-01", "standard"
            t[:] = times
            dims = ("time", "y", "x")
        nc.createDimension("y", NY)
        nc.createDimension("x", NX)
        for c, v in (("x", _x()), ("y", _y())):
            var = nc.createVariable(c, "f8", (c,))
            var.standard_name, var.units = f"projection_{c}_coordinate", "m"
            var[:] = v
        if crs is not None:
            gm = nc.createVariable("crs", "i4", ())
            gm.setncatts({**CRS.from_user_input(crs).to_cf(), "crs_wkt": CRS.from_user_input(crs).to_wkt()})
        for q, a in fields.items():
            var = nc.createVariable(names[q], "f4", dims, fill_value=np.float32(NODATA))
            var.units = units[q]
            if crs is not None:
                var.grid_mapping = "crs"
            var[:] = np.where(np.isfinite(a), a, NODATA)


def _chain(ds, antennas, target, *, fill=None):
    return scale.feasibility_region(ds, antennas, target=target, target_depth_m=DEPTH, texture="loam",
                                    fill_gaps=fill).compute()


def test_geotiff_and_netcdf_give_the_same_map_cell_for_cell(soil, antennas, target, tmp_path):
    """The same fields as a rasterio GeoTIFF (bands by description) and a netCDF4 NetCDF give identical layers,
    equal to the in-memory chain on the original numbers converted by hand (% / 100, mS/m / 1000)."""
    tif, nc = tmp_path / "soil.tif", tmp_path / "soil.nc"
    write_geotiff(tif, list(soil.values()), descriptions=["moisture", "EC", "clay"], units=["%", "mS/m", "1"])
    write_netcdf(nc, soil, units={"moisture": "%", "pore_water_ec": "mS m-1", "clay": "1"},
                 names={"moisture": "vwc", "pore_water_ec": "ec", "clay": "clay"})
    with pytest.warns(UserWarning, match="not used"):  # EC names no quantity until mapped: a note first
        scale.open_region(tif, chunk=16)
    a = scale.open_region(tif, chunk=16, variables={"pore_water_ec": "EC"})
    b = scale.open_region(nc, chunk=16, variables={"moisture": "vwc", "pore_water_ec": "ec"})
    assert a["moisture"].chunks[0][0] == 16 and b["moisture"].chunks[1][0] == 16  # lazy: dask chunks
    got_a, got_b = _chain(a, antennas, target), _chain(b, antennas, target)
    # hand conversion of the stored numbers (float32 as written) to SI
    values = {"moisture": soil["moisture"].astype(float) / 100, "pore_water_ec": soil["pore_water_ec"].astype(float)
              / 1000, "clay": soil["clay"].astype(float)}
    ref = feasibility.evaluate(values, scale.chain_antennas(antennas, band_resolution=False), target=target,
                               target_depth_m=DEPTH, texture="loam")
    for name in ("max_depth", "margin_db", "velocity"):
        np.testing.assert_array_equal(got_a[name].values, got_b[name].values)
        # 1e-9: the depth solver's iterations stop near 1e-12 relative and tile-wise evaluation
        # orders the sums differently (one cell in 9450 differed by 1.3e-12); a unit slip is >= 1e-3
        np.testing.assert_allclose(got_a[name].values, ref[name], rtol=1e-9, equal_nan=True)
    np.testing.assert_array_equal(got_a["x"].values, _x())  # cell centres from the GeoTIFF geotransform
    np.testing.assert_array_equal(got_a["y"].values, _y())
    assert CRS.from_wkt(a["crs"].attrs["crs_wkt"]).to_epsg() == 32633 == CRS.from_wkt(b["crs"].attrs["crs_wkt"]).to_epsg()
    assert [r["read_from"] for r in a.attrs["inputs"]] == ["band 1 (moisture)", "band 2 (EC)", "band 3 (clay)"]


def test_gaps_filled_with_the_texture_default_and_flagged(soil, antennas, target, tmp_path):
    """Cells lacking clay take loam's clay (configs/textures.toml) and are flagged in soil_default_used;
    cells lacking moisture stay empty; with no fill the clay gap is empty too."""
    from subsurf.ground.presets import texture_preset

    tif = tmp_path / "soil.tif"
    write_geotiff(tif, [soil["moisture"], soil["clay"]], descriptions=["moisture", "clay"], units=["%", ""])
    ds = scale.open_region(tif, chunk=16)
    fill = scale.gap_fill_values("loam", ["moisture", "clay"])
    assert fill == {"clay": texture_preset("loam")["clay"]}
    got = _chain(ds, antennas, target, fill=fill)
    clay = soil["clay"].astype(float)
    gap = np.isnan(clay) & np.isfinite(soil["moisture"])
    filled = np.where(gap, fill["clay"], clay)
    ref = feasibility.evaluate({"moisture": soil["moisture"].astype(float) / 100, "clay": filled},
                               scale.chain_antennas(antennas, band_resolution=False), target=target,
                               target_depth_m=DEPTH, texture="loam")
    np.testing.assert_allclose(got["max_depth"].values, ref["max_depth"], rtol=1e-12, equal_nan=True)
    used = got["soil_default_used"].values
    np.testing.assert_array_equal(used == 1, gap)
    assert np.all(used[np.isnan(soil["moisture"])] == -1)
    empty = _chain(ds, antennas, target)
    assert np.all(np.isnan(empty["max_depth"].values[:, gap])) and "soil_default_used" not in empty


def test_multiband_geotiff_without_choice_is_one_line_listing_the_bands(soil, tmp_path):
    """Undescribed bands: refused naming the file and bands; a band number chooses; a wrong one is refused."""
    tif = tmp_path / "plain.tif"
    write_geotiff(tif, [soil["moisture"] / 100, soil["clay"], soil["clay"]])
    with pytest.raises(FileInputError, match=r"plain\.tif.*has 3 bands \(1, 2, 3\); choose with --soil-var moisture=N"):
        scale.open_region(tif, chunk=16)
    with pytest.warns(UserWarning, match=r"band\(s\) 3 name no soil quantity"):
        ds = scale.open_region(tif, chunk=16, variables={"moisture": "1", "clay": "2"})
    np.testing.assert_allclose(ds["moisture"].values, soil["moisture"] / 100, rtol=1e-6)
    with pytest.raises(FileInputError, match=r"band 7 is outside 1-3"):
        scale.open_region(tif, chunk=16, variables={"moisture": "7"})
    with pytest.raises(InputError, match="wetness"):
        scale.open_region(tif, chunk=16, variables={"wetness": "1"})


@pytest.mark.filterwarnings("ignore::UserWarning")
def test_time_dimension_chosen_or_aggregated_and_stated(soil, tmp_path):
    """Nearest step equals that step written alone; the mean equals numpy's nanmean of the steps."""
    steps = np.stack([soil["moisture"] * f for f in (0.8, 1.0, 1.2)])
    nc = tmp_path / "monthly.nc"
    write_netcdf(nc, {"moisture": steps}, units={"moisture": "%"}, times=[0.0, 31.0, 60.0])
    near = scale.open_region(nc, chunk=16, time="2024-02-03")
    np.testing.assert_allclose(near["moisture"].values, steps[1] / 100, rtol=1e-6)
    assert near.attrs["inputs"][0]["time"].startswith("time step 2024-02-01")
    mean = scale.open_region(nc, chunk=16, time_aggregate="mean")
    got = mean["moisture"].values  # no warning from the library where a cell has no step at all
    with np.errstate(invalid="ignore"), pytest.warns(RuntimeWarning, match="Mean of empty slice"):
        expect = np.nanmean(steps.astype(float), axis=0) / 100  # numpy's own reduction, the reference
    np.testing.assert_allclose(got, expect, rtol=1e-6)
    assert mean.attrs["inputs"][0]["time"].startswith("mean over 3 time steps")
    with pytest.warns(UserWarning, match="mean over 3 time steps.*--soil-time"):
        scale.open_region(nc, chunk=16)
    tif = tmp_path / "one.tif"
    write_geotiff(tif, [soil["moisture"]], units=["%"])
    with pytest.raises(FileInputError, match="no time dimension"):
        scale.open_region(tif, chunk=16, time="2024-01-01")


def test_lonlat_netcdf_without_grid_mapping_gets_wgs84_in_the_output(tmp_path, antennas, target):
    """lon/lat degrees, no grid_mapping: read as EPSG:4326 (noted) and the written map carries that CRS,
    read back by pyproj and by GDAL (rasterio's netCDF driver)."""
    from subsurf.io.regional import write_region

    nc = tmp_path / "ll.nc"
    lon, lat = 12.0 + 0.01 * np.arange(30), 48.0 + 0.01 * np.arange(20)
    with netCDF4.Dataset(nc, "w") as f:
        f.createDimension("lat", lat.size)
        f.createDimension("lon", lon.size)
        for n, v, u in (("lon", lon, "degrees_east"), ("lat", lat, "degrees_north")):
            var = f.createVariable(n, "f8", (n,))
            var.units = u
            var[:] = v
        m = f.createVariable("moisture", "f4", ("lat", "lon"))
        m.units = "1"
        m[:] = np.full((lat.size, lon.size), 0.2)
    with pytest.warns(UserWarning, match="read as WGS 84"):
        ds = scale.open_region(nc, chunk=16)
    out = tmp_path / "map.nc"
    write_region(scale.feasibility_region(ds, antennas, target=target, target_depth_m=DEPTH, texture="loam"), out)
    with xr.open_dataset(out) as back:
        assert CRS.from_wkt(back["crs"].attrs["crs_wkt"]).to_epsg() == 4326
        assert back["x"].attrs["units"] == "degrees_east" and back["y"].attrs["standard_name"] == "latitude"
    with rasterio.open(f"netcdf:{out}:max_depth") as r:
        assert r.crs.to_epsg() == 4326
        np.testing.assert_allclose(r.bounds.left, lon[0] - 0.005, atol=1e-9)


def test_projected_raster_without_crs_is_refused_or_given(soil, tmp_path):
    """x/y in metres and no grid mapping: refused naming --soil-crs; accepted with crs given."""
    nc = tmp_path / "nocrs.nc"
    write_netcdf(nc, {"moisture": soil["moisture"]}, units={"moisture": "%"}, crs=None)
    with pytest.raises(FileInputError, match=r"nocrs\.nc.*states no CRS.*--soil-crs"):
        scale.open_region(nc, chunk=16)
    ds = scale.open_region(nc, chunk=16, crs="EPSG:25833")
    assert CRS.from_wkt(ds["crs"].attrs["crs_wkt"]).to_epsg() == 25833


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "subsurf", "region", *args], capture_output=True, text=True,
                          cwd=cwd, timeout=180)


def test_cli_geotiff_json_states_inputs_and_coverage(soil, tmp_path):
    """`region --soil x.tif --json` names what each quantity was read from, the CRS, the coverage and the
    defaults used, valid against docs/schemas/region.schema.json (jsonschema)."""
    jsonschema = pytest.importorskip("jsonschema")
    write_geotiff(tmp_path / "soil.tif", list(soil.values()), descriptions=["moisture", "EC", "clay"],
                  units=["%", "mS/m", "1"])
    r = _cli("--soil", "soil.tif", "--soil-var", "pore_water_ec=EC", "--target", "planar", "--depth", "1.5",
             "--antenna", "midband-250", "--out", "m.nc", "--chunk", "32", "--json", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    doc = json.loads(r.stdout)
    schema = json.loads((Path(__file__).parents[2] / "docs" / "schemas" / "region.schema.json").read_text())
    jsonschema.validate(doc, schema)
    info = doc["soil_inputs"]
    assert info["format"] == "geotiff" and info["crs"].startswith("EPSG:32633")
    assert {q["quantity"]: q["units"] for q in info["quantities"]} == {"moisture": "%", "pore_water_ec": "mS/m",
                                                                        "clay": "1"}
    valid = np.isfinite(soil["moisture"])
    assert doc["coverage"]["cells_with_data_pct"] == pytest.approx(100 * valid.mean())
    gap = np.isnan(soil["clay"]) & valid
    assert doc["coverage"]["default_used_pct"]["clay"] == pytest.approx(100 * gap.sum() / valid.sum())
    r = _cli("--soil", "soil.tif", "--soil-var", "pore_water_ec=EC", "--target", "planar", "--depth", "1.5",
             "--antenna", "midband-250", "--out", "m2.nc", "--chunk", "32", cwd=tmp_path)
    assert "moisture: band 1 (moisture), units %" in r.stdout and "Coverage: " in r.stdout
    assert "soil_default_used" in r.stdout


def test_geotiff_is_read_tile_by_tile(soil, antennas, target, tmp_path, monkeypatch):
    """Opening reads no cells; the chain then sees one tile at a time and each rasterio read is one tile
    window, so memory follows the chunk, not the raster (a 20000 x 20000 region is read the same way)."""
    import dask
    from rasterio.io import DatasetReader

    tif = tmp_path / "soil.tif"
    write_geotiff(tif, [soil["moisture"], soil["clay"]], descriptions=["moisture", "clay"], units=["%", "1"])
    windows = []
    original_read = DatasetReader.read

    def spy_read(self, *args, **kwargs):
        windows.append(kwargs.get("window"))
        return original_read(self, *args, **kwargs)

    monkeypatch.setattr(DatasetReader, "read", spy_read)
    ds = scale.open_region(tif, chunk=16)
    assert windows == []  # nothing read at open
    shapes = []
    original = feasibility.evaluate

    def spy(values, *args, **kwargs):
        shapes.append(np.shape(values["moisture"]))
        return original(values, *args, **kwargs)

    monkeypatch.setattr(feasibility, "evaluate", spy)
    lazy = scale.feasibility_region(ds, antennas, target=target, target_depth_m=DEPTH, texture="loam")
    with dask.config.set(scheduler="synchronous"):
        lazy["max_depth"].compute()
    tiles = int(np.ceil(NY / 16) * np.ceil(NX / 16))
    assert len(shapes) == tiles and max(max(s) for s in shapes) <= 16
    from rasterio.windows import Window

    sizes = [Window.from_slices(*w, height=NY, width=NX) if not isinstance(w, Window) else w for w in windows]
    assert sizes and all(w.height <= 16 and w.width <= 16 for w in sizes), windows[:3]
