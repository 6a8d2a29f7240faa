"""Soil rasters for the map (subsurf.site.rasters): GeoTIFF and NetCDF, bands, variables, time, partial coverage.

The rasters are written by the tests with rioxarray (GDAL GeoTIFF) and xarray (netCDF4),
so the reference is what those libraries put in the files.
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest

from subsurf.errors import FileInputError
from subsurf.site.vectors import InputNote

E0, N0 = 500_000.0, 5_700_000.0
CELL = 5.0


def _temperature(nx=24, ny=16, *, x0=E0 - 10, y1=N0 + 70):
    """A smooth invented temperature field (degC) on a north-up grid with 5 m cells, covering the site."""
    x = x0 + CELL * (np.arange(nx) + 0.5)
    y = y1 - CELL * (np.arange(ny) + 0.5)
    xx, yy = np.meshgrid(x, y)
    return x, y, 10.0 + 0.02 * (xx - E0) + 0.01 * (yy - N0)


def _dataarray(x, y, values, *, name="temperature", extra=None):
    import rioxarray  # noqa: F401
    import xarray as xr

    dims, coords = ("y", "x"), {"y": y, "x": x}
    if extra is not None:
        dims = (extra[0], *dims)
        coords[extra[0]] = extra[1]
    da = xr.DataArray(values, dims=dims, coords=coords, name=name)
    return da.rio.write_crs("EPSG:32631")


def _survey(tmp_path, raster_block: str):
    text = f"""
[site]
bbox = [{E0}, {N0}, {E0 + 100}, {N0 + 60}]
crs = "EPSG:32631"
[grid]
cell_size = "{CELL} m"
[soil]
texture = "loam"
[soil.defaults]
moisture = "15 %"
pore_water_ec = "20 mS/m"
temperature = "8 degC"
[[soil.rasters]]
quantity = "temperature"
unit = "degC"
{raster_block}
[target]
kind = "line"
depth = "1 m"
size = "0.1 m"
material = "metal"
[antennas]
names = ["midband-250"]
"""
    (tmp_path / "survey.toml").write_text(text)
    return tmp_path / "survey.toml"


def _soil(path):
    from subsurf.site.grid import build_grid, soil_on_grid
    from subsurf.site.survey import load_survey

    s = load_survey(path)
    grid = build_grid(s)
    return grid, soil_on_grid(s, grid)


def test_geotiff_and_netcdf_give_the_same_soil(tmp_path):
    """The same field as GeoTIFF (rioxarray) and as CF NetCDF gives identical temperature on the grid."""
    x, y, t = _temperature()
    da = _dataarray(x, y, t)
    da.rio.to_raster(tmp_path / "t.tif")
    da.to_dataset().to_netcdf(tmp_path / "t.nc")
    _, a = _soil(_survey(tmp_path, 'file = "t.tif"'))
    _, b = _soil(_survey(tmp_path, 'file = "t.nc"'))
    np.testing.assert_allclose(a["temperature"].values, b["temperature"].values, rtol=1e-12, equal_nan=True)
    # bilinear interpolation of a plane is exact: compare with the plane at the cell centres
    xx, yy = np.meshgrid(a["x"].values, a["y"].values)
    inside = np.isfinite(a["temperature"].values)
    np.testing.assert_allclose(a["temperature"].values[inside],
                               (10.0 + 0.02 * (xx - E0) + 0.01 * (yy - N0))[inside], rtol=1e-9)


def test_multiband_geotiff_needs_a_band_and_takes_number_or_description(tmp_path):
    """Three bands: no band is one line listing them; band = 2 and band = 'summer' pick the band."""
    import rasterio

    x, y, t = _temperature()
    stack = np.stack([t, t + 5.0, t - 3.0])
    _dataarray(x, y, stack, extra=("band", [1, 2, 3])).rio.to_raster(tmp_path / "t3.tif")
    with rasterio.open(tmp_path / "t3.tif", "r+") as dst:
        for i, d in enumerate(["spring", "summer", "winter"], start=1):
            dst.set_band_description(i, d)
    with pytest.raises(FileInputError, match=r"t3\.tif.*has 3 bands \(1 \(spring\), 2 \(summer\), 3 \(winter\)\)"):
        _soil(_survey(tmp_path, 'file = "t3.tif"'))
    _, by_number = _soil(_survey(tmp_path, 'file = "t3.tif"\nband = 2'))
    _, by_name = _soil(_survey(tmp_path, 'file = "t3.tif"\nband = "summer"'))
    _, single = _soil(_survey(tmp_path, 'file = "t3.tif"\nband = 1'))
    np.testing.assert_allclose(by_number["temperature"].values, by_name["temperature"].values, equal_nan=True)
    np.testing.assert_allclose(by_number["temperature"].values - single["temperature"].values, 5.0, atol=1e-9)


def _time_netcdf(path):
    import pandas as pd

    x, y, t = _temperature()
    times = pd.to_datetime(["2024-03-01", "2024-06-01", "2024-09-01"])
    cube = np.stack([t, t + 6.0, t + 3.0])
    da = _dataarray(x, y, cube, extra=("time", times))
    da.to_dataset().to_netcdf(path)
    return t


def test_time_dimension_nearest_step_or_aggregate(tmp_path):
    """time = nearest step; time_aggregate = max; neither = mean over time with a note saying so."""
    _time_netcdf(tmp_path / "tt.nc")
    _, base = _soil(_survey(tmp_path, 'file = "tt.nc"\ntime = "2024-03-05"'))
    _, june = _soil(_survey(tmp_path, 'file = "tt.nc"\ntime = "2024-05-20"'))
    _, mx = _soil(_survey(tmp_path, 'file = "tt.nc"\ntime_aggregate = "max"'))
    with pytest.warns(InputNote, match=r"tt\.nc: mean over 3 time steps \(2024-03-01.* to 2024-09-01"):
        _, mean = _soil(_survey(tmp_path, 'file = "tt.nc"'))
    b = base["temperature"].values
    np.testing.assert_allclose(june["temperature"].values - b, 6.0, atol=1e-9)
    np.testing.assert_allclose(mx["temperature"].values - b, 6.0, atol=1e-9)
    np.testing.assert_allclose(mean["temperature"].values - b, 3.0, atol=1e-9)


def test_variable_found_by_cf_standard_name(tmp_path):
    """A variable named 'tsoil' with standard_name soil_temperature is used for temperature."""
    x, y, t = _temperature()
    ds = _dataarray(x, y, t, name="tsoil").to_dataset()
    ds["tsoil"].attrs["standard_name"] = "soil_temperature"
    ds["other"] = (("y", "x"), np.ones_like(t))  # a second gridded variable, no standard_name
    ds.to_netcdf(tmp_path / "v.nc")
    _, soil = _soil(_survey(tmp_path, 'file = "v.nc"'))
    assert np.nanmax(soil["temperature"].values) > 10.0


def test_partial_coverage_reported_with_fraction_and_source_layer(tmp_path):
    """A raster over the western part: the note gives the covered fraction, defaults fill the rest."""
    x, y, t = _temperature(nx=10)  # x cell centres E0-7.5 ... E0+37.5: bilinear values up to E0+37.5
    _dataarray(x, y, t).rio.to_raster(tmp_path / "west.tif")
    with pytest.warns(InputNote, match=r"temperature: west\.tif cover (\d+\.\d) % of the site") as caught:
        grid, soil = _soil(_survey(tmp_path, 'file = "west.tif"'))
    inside = grid["mask"].values == 1
    xx = np.meshgrid(grid["x"].values, grid["y"].values)[0]
    expected = 100 * np.count_nonzero(inside & (xx <= x.max())) / inside.sum()  # by the raster's extent
    shown = float([w for w in caught if "west.tif" in str(w.message)][0].message.args[0].split(" cover ")[1]
                  .split(" %")[0])
    assert shown == pytest.approx(expected, abs=0.05)
    src = soil["temperature_trend_source"].values
    assert set(np.unique(src[inside])) == {0, 2}
    np.testing.assert_allclose(soil["temperature"].values[inside & (src == 0)], 8.0)


def test_lonlat_netcdf_without_grid_mapping_read_as_wgs84(tmp_path):
    """A lon/lat NetCDF with no grid_mapping and no crs key is read as WGS 84, with a note."""
    import xarray as xr
    from pyproj import Transformer

    tr = Transformer.from_crs("EPSG:32631", "EPSG:4326", always_xy=True)
    lon0, lat0 = tr.transform(E0 - 20, N0 - 20)
    lon1, lat1 = tr.transform(E0 + 120, N0 + 80)
    lon, lat = np.linspace(lon0, lon1, 30), np.linspace(lat1, lat0, 20)
    ds = xr.Dataset({"temperature": (("lat", "lon"), np.full((20, 30), 11.0))},
                    coords={"lon": ("lon", lon, {"units": "degrees_east"}),
                            "lat": ("lat", lat, {"units": "degrees_north"})})
    ds.to_netcdf(tmp_path / "ll.nc")
    with pytest.warns(InputNote, match="read as WGS 84"):
        grid, soil = _soil(_survey(tmp_path, 'file = "ll.nc"'))
    np.testing.assert_allclose(soil["temperature"].values[grid["mask"].values == 1], 11.0)


@pytest.mark.parametrize("name,content,block", [
    ("bad.tif", b"II*\x00garbage" * 10, 'file = "bad.tif"'),
    ("bad.nc", b"CDF\x01 not really netcdf" * 5, 'file = "bad.nc"'),
    ("t3.tif", None, 'file = "t3.tif"'),
])
def test_bad_rasters_are_one_line_exit_1(tmp_path, name, content, block):
    """Unreadable GeoTIFF/NetCDF and a multi-band GeoTIFF without band: CLI exit 1, one line naming the file."""
    if content is None:
        x, y, t = _temperature()
        _dataarray(x, y, np.stack([t, t]), extra=("band", [1, 2])).rio.to_raster(tmp_path / name)
    else:
        (tmp_path / name).write_bytes(content)
    path = _survey(tmp_path, block)
    proc = subprocess.run([sys.executable, "-m", "subsurf", "map", str(path), "--out", str(tmp_path / "out")],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 1, proc.stderr
    lines = [ln for ln in proc.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and name in lines[0], proc.stderr
    if content is None:
        assert "band = N" in lines[0]
