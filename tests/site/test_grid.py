"""Grid, CRS metadata, masks and interpolation (subsurf.grid)."""

from __future__ import annotations

import json

import numpy as np
import pytest
from pyproj import CRS, Transformer

from subsurf.errors import FileInputError
from subsurf.site.grid import build_grid, interpolate_samples, soil_on_grid, transform_points
from subsurf.site.survey import load_survey

E0, N0 = 500_000.0, 5_700_000.0
BASE = """
[site]
name = "test triangle (invented)"
outline = "o.geojson"
crs = "EPSG:32631"
[grid]
crs = "EPSG:32631"
cell_size = "2 m"
[soil]
texture = "loamy_sand"
[soil.defaults]
moisture = "15 %"
[target]
kind = "line"
depth = "1 m"
size = "0.1 m"
material = "metal"
[antennas]
names = ["midband-250"]
"""
TRIANGLE = [[E0, N0], [E0 + 100, N0], [E0, N0 + 80], [E0, N0]]


def write(tmp_path, text=BASE, *, samples=None, outline=TRIANGLE):
    (tmp_path / "o.geojson").write_text(json.dumps({"type": "Polygon", "coordinates": [outline]}))
    if samples is not None:
        (tmp_path / "s.csv").write_text(samples)
        text += '\n[[soil.samples]]\nfile = "s.csv"\ncrs = "EPSG:32631"\n'
    p = tmp_path / "survey.toml"
    p.write_text(text)
    return p


def test_utm_false_origin_on_central_meridian():
    """On zone 31's central meridian (3 E) at the equator UTM gives E = 500000 m, N = 0 (UTM definition)."""
    x, y = transform_points(3.0, 0.0, CRS.from_epsg(4326), CRS.from_epsg(32631))
    assert float(x) == pytest.approx(500_000.0, abs=1e-3) and float(y) == pytest.approx(0.0, abs=1e-3)


def test_utm_northing_at_45n_is_scaled_meridian_arc():
    """At 45 N on the central meridian N = 0.9996 x meridian arc 4 984 944.38 m (WGS 84; from memory)."""
    _, y = transform_points(3.0, 45.0, CRS.from_epsg(4326), CRS.from_epsg(32631))
    assert float(y) == pytest.approx(0.9996 * 4_984_944.38, abs=1.0)


def test_lonlat_round_trip_within_1mm(tmp_path):
    """Grid cell lon/lat transformed back with pyproj land within 1 mm of the cell centres."""
    grid = build_grid(load_survey(write(tmp_path)))
    xx, yy = np.meshgrid(grid["x"].values, grid["y"].values)
    back = Transformer.from_crs("EPSG:4326", "EPSG:32631", always_xy=True)
    bx, by = back.transform(grid["lon"].values, grid["lat"].values)
    assert np.max(np.hypot(bx - xx, by - yy)) < 1e-3


def test_grid_mapping_carries_crs(tmp_path):
    """The crs variable's WKT parses back to the grid's CRS and names a CF grid mapping."""
    grid = build_grid(load_survey(write(tmp_path)))
    attrs = grid["crs"].attrs
    assert CRS.from_wkt(attrs["crs_wkt"]).to_epsg() == 32631
    assert attrs["grid_mapping_name"] == "transverse_mercator"
    assert grid["x"].attrs["standard_name"] == "projection_x_coordinate" and grid["x"].attrs["units"] == "m"


def test_cells_outside_outline_masked(tmp_path):
    """Mask equals an independent point-in-triangle test (x/100 + y/80 < 1) at every cell centre."""
    grid = build_grid(load_survey(write(tmp_path)))
    xx, yy = np.meshgrid(grid["x"].values - E0, grid["y"].values - N0)
    inside = (xx > 0) & (yy > 0) & (xx / 100 + yy / 80 < 1)
    assert np.array_equal(grid["mask"].values.astype(bool), inside)


def test_outside_cells_are_nan_in_soil(tmp_path):
    """Soil layers are NaN outside the outline and finite inside."""
    s = load_survey(write(tmp_path))
    grid = build_grid(s)
    soil = soil_on_grid(s, grid)
    m = grid["mask"].values.astype(bool)
    assert np.all(np.isnan(soil["moisture"].values[~m])) and np.all(np.isfinite(soil["moisture"].values[m]))


def test_grid_too_large_refused(tmp_path):
    """A grid beyond the cell limit says so and suggests a larger cell size."""
    p = write(tmp_path, BASE.replace('cell_size = "2 m"', 'cell_size = "1 cm"'))
    with pytest.raises(FileInputError, match="larger cell size or chunked processing"):
        build_grid(load_survey(p))


def test_interpolation_reproduces_samples():
    """The interpolated surface passes through every sample with zero interpolation sd."""
    rng = np.random.default_rng(3)
    sx, sy = rng.uniform(0, 100, 15), rng.uniform(0, 80, 15)
    v = rng.uniform(0.1, 0.3, 15)
    est, isd, _ = interpolate_samples(sx, sy, v, sx, sy)
    assert np.allclose(est, v, atol=1e-9) and np.allclose(isd, 0.0)


def test_interpolation_exact_for_linear_field():
    """A linear field is reproduced everywhere inside the hull (the spline's polynomial part is linear)."""
    rng = np.random.default_rng(4)
    sx, sy = rng.uniform(0, 100, 20), rng.uniform(0, 100, 20)
    px, py = np.meshgrid(np.linspace(30, 70, 5), np.linspace(30, 70, 5))
    est, _, _ = interpolate_samples(sx, sy, 0.1 + 0.001 * sx + 0.002 * sy, px, py)
    assert np.allclose(est, 0.1 + 0.001 * px + 0.002 * py, atol=1e-9)


def test_interpolation_sd_grows_with_distance():
    """Interpolation sd is non-decreasing with distance from the samples."""
    rng = np.random.default_rng(5)
    sx, sy = rng.uniform(0, 50, 12), rng.uniform(0, 50, 12)
    v = rng.normal(0.2, 0.03, 12)
    px = np.array([60.0, 80.0, 120.0, 300.0])
    _, isd, _ = interpolate_samples(sx, sy, v, px, np.full(4, 25.0))
    assert np.all(np.diff(isd) >= 0) and isd[-1] > 0


def test_samples_in_one_place_refused():
    """Samples on one line cannot be interpolated over an area: clear error."""
    with pytest.raises(FileInputError, match="one point or one line"):
        interpolate_samples([0, 1, 2, 3], [0, 1, 2, 3], [0.1, 0.2, 0.3, 0.4], [5.0], [5.0])


def test_sample_outside_site_names_row(tmp_path):
    """A sample far outside the outline is refused with its row."""
    p = write(tmp_path, samples=f"x,y,moisture\n{E0 + 10},{N0 + 10},0.2\n{E0 + 20},{N0 + 5},0.2\n"
              f"{E0 + 5},{N0 + 30},0.2\n{E0 + 90},{N0 + 70},0.2\n")
    s = load_survey(p)
    with pytest.raises(FileInputError, match=r"row 5.*outside the site"):
        soil_on_grid(s, build_grid(s))


def test_raster_in_other_crs_is_reprojected(tmp_path):
    """A lon/lat raster of a linear function of lon/lat is sampled at each cell's own lon/lat."""
    import xarray as xr

    lon = np.linspace(2.99, 3.02, 31)
    lat = np.linspace(51.45, 51.48, 31)
    f = lambda lo, la: 10.0 + 100.0 * (lo - 3.0) + 50.0 * (la - 51.46)  # noqa: E731
    xr.Dataset({"t": (("lat", "lon"), f(*np.meshgrid(lon, lat)))}, coords={"lon": lon, "lat": lat}).to_netcdf(
        tmp_path / "t.nc")
    text = BASE + '\n[[soil.rasters]]\nfile = "t.nc"\nvariable = "t"\nquantity = "temperature"\ncrs = "EPSG:4326"\n'
    s = load_survey(write(tmp_path, text))
    grid = build_grid(s)
    soil = soil_on_grid(s, grid)
    m = grid["mask"].values.astype(bool)
    want = f(grid["lon"].values, grid["lat"].values)
    assert np.allclose(soil["temperature"].values[m], want[m], atol=1e-6)


def test_repeated_sample_names_both_rows():
    """A sample at the same place as an earlier one names its own row and the earlier row (header = row 1)."""
    with pytest.raises(FileInputError, match=r"row 5: sample repeats the location of row 2"):
        interpolate_samples([0, 10, 0, 0], [0, 0, 10, 0], [0.1, 0.2, 0.3, 0.4], [5.0], [5.0])


def test_four_samples_three_in_a_line_interpolate():
    """Four samples, three of them in a line, interpolate (leave-one-out skips the singular subset)."""
    est, isd, _ = interpolate_samples([0, 10, 20, 5], [0, 0, 0, 8], [0.1, 0.2, 0.3, 0.4], [0.0, 5.0],
                                      [0.0, 4.0])
    assert est[0] == pytest.approx(0.1, abs=1e-9) and isd[0] == 0.0 and isd[1] > 0
