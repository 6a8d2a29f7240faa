"""The one CF NetCDF encoder: files read back with netCDF4 and xarray (CF-1.8 rules named per check)."""

from __future__ import annotations

import netCDF4
import numpy as np
import pytest
import xarray as xr
from pyproj import CRS

from subsurf.errors import OutputExistsError
from subsurf.io.netcdf import write_netcdf

NAMES = ["lowband-100", "midband-250", "highband-1000"]


def _dataset(lazy: bool):
    """A small projected map (invented values) with a string antenna coordinate and a grid mapping."""
    rng = np.random.default_rng(5)
    ny, nx = 37, 53
    depth = rng.uniform(0.2, 3.0, (len(NAMES), ny, nx))
    depth[:, 0, 0] = np.nan
    crs = CRS.from_epsg(32630)
    ds = xr.Dataset(
        {"max_depth": (("antenna", "y", "x"), depth, {"long_name": "maximum detectable depth", "units": "m",
                                                       "grid_mapping": "crs"}),
         "flag": (("y", "x"), (depth[0] > 1).astype(np.int16), {"long_name": "deep", "grid_mapping": "crs",
                                                                 "flag_values": np.array([0, 1], np.int16),
                                                                 "flag_meanings": "shallow deep"}),
         "crs": ((), np.int32(0), crs.to_cf())},
        coords={"x": ("x", 500_000 + 2.0 * np.arange(nx), {"standard_name": "projection_x_coordinate", "units": "m"}),
                "y": ("y", 5_780_000 + 2.0 * np.arange(ny), {"standard_name": "projection_y_coordinate", "units": "m"}),
                "antenna": ("antenna", NAMES, {"long_name": "antenna"}),
                "centre_frequency": ("antenna", [100e6, 250e6, 1e9], {"long_name": "centre frequency",
                                                                     "units": "Hz"})})
    ds["flag"].encoding["_FillValue"] = np.int16(-9)
    return ds.chunk({"y": 16, "x": 20}) if lazy else ds


@pytest.mark.parametrize("lazy", [False, True])
def test_labels_are_char_arrays_listed_in_coordinates(tmp_path, lazy):
    """String names become a char-array label variable (CF-1.8 §2.2, §6.1) named in `coordinates` (§5)."""
    out = tmp_path / "m.nc"
    write_netcdf(_dataset(lazy), out)
    with netCDF4.Dataset(out) as nc:
        assert "antenna" not in nc.variables  # a coordinate variable must be numeric (§1.3)
        lab = nc["antenna_name"]
        assert lab.dtype == np.dtype("S1") and lab.dimensions[0] == "antenna"
        assert list(lab[:]) == NAMES  # decoded by netCDF4 via _Encoding
        assert nc["max_depth"].coordinates.split() == ["centre_frequency", "antenna_name"]
        assert "coordinates" not in nc["flag"].ncattrs()


@pytest.mark.parametrize("lazy", [False, True])
def test_coordinates_have_no_fill_and_layers_keep_units_and_grid_mapping(tmp_path, lazy):
    """No _FillValue on coordinates (CF §2.5.1); units, grid_mapping and an EPSG-parsable WKT kept (§5.6)."""
    out = tmp_path / "m.nc"
    write_netcdf(_dataset(lazy), out, attrs={"title": "test"})
    with netCDF4.Dataset(out) as nc:
        assert nc.Conventions == "CF-1.8" and nc.title == "test"
        for c in ("x", "y", "centre_frequency", "antenna_name"):
            assert "_FillValue" not in nc[c].ncattrs(), c
        assert nc["max_depth"].units == "m" and nc["max_depth"].grid_mapping == "crs"
        assert CRS.from_wkt(nc["crs"].crs_wkt).to_epsg() == 32630  # pyproj reads the grid mapping back
        assert np.isnan(nc["max_depth"]._FillValue)
        assert nc["flag"]._FillValue == -9


@pytest.mark.parametrize("lazy", [False, True])
def test_values_round_trip_through_xarray(tmp_path, lazy):
    """xarray reads the same values back (NaN kept), with the labels as a coordinate."""
    ds = _dataset(False)
    out = tmp_path / "m.nc"
    write_netcdf(_dataset(lazy), out)
    with xr.open_dataset(out) as back:
        np.testing.assert_array_equal(back["max_depth"].values, ds["max_depth"].values)
        np.testing.assert_array_equal(back["flag"].values, ds["flag"].values)
        assert list(back["antenna_name"].values) == NAMES
        assert "antenna_name" in back.coords


def test_float32_storage_rounds_like_numpy(tmp_path):
    """dtype='float32' stores the layers as numpy's float32 rounding of the float64 values."""
    ds = _dataset(True)
    out = tmp_path / "m.nc"
    write_netcdf(ds, out, dtype="float32")
    with xr.open_dataset(out) as back:
        assert back["max_depth"].dtype == np.float32
        np.testing.assert_array_equal(back["max_depth"].values, ds["max_depth"].values.astype(np.float32))


def test_lazy_layers_are_written_tile_by_tile(tmp_path):
    """A dask-backed layer is computed in (y, x) tiles of its chunks; the file chunks follow the tiles."""
    tiles, progress = [], []
    out = tmp_path / "m.nc"
    info = write_netcdf(_dataset(True), out, batch=2, on_tile=lambda b: tiles.append(b["max_depth"].shape),
                        progress=lambda done, total: progress.append((done, total)))
    n_tiles = 3 * 3  # ceil(37/16) x ceil(53/20)
    assert info["tiles"] == len(tiles) == n_tiles
    assert max(s[1] for s in tiles) <= 16 and max(s[2] for s in tiles) <= 20
    assert progress[-1] == (n_tiles, n_tiles) and len(progress) == 5  # ceil(9 / 2) batches
    with netCDF4.Dataset(out) as nc:
        assert nc["max_depth"].chunking() == [1, 16, 20]


def test_chunk_cache_holds_one_tile_of_chunks(tmp_path):
    """The per-variable chunk cache is sized to the chunks one tile write touches (file chunking read back)."""
    out = tmp_path / "m.nc"
    info = write_netcdf(_dataset(True), out, dtype="float32")
    with netCDF4.Dataset(out) as nc:
        chunk = nc["max_depth"].chunking()
    cache = info["chunk_cache"]["max_depth"]
    assert cache["bytes"] == int(np.prod(chunk)) * 4 * len(NAMES)
    slots = cache["slots"]
    assert slots >= 100 * len(NAMES) and all(slots % k for k in range(2, int(slots ** 0.5) + 1))  # prime


def test_existing_file_is_kept_without_force(tmp_path):
    """An existing output is not replaced without force, and no partial file is left."""
    out = tmp_path / "m.nc"
    out.write_text("precious")
    with pytest.raises(OutputExistsError):
        write_netcdf(_dataset(False), out)
    assert out.read_text() == "precious" and [p.name for p in tmp_path.iterdir()] == ["m.nc"]


def test_failure_while_writing_leaves_nothing(tmp_path):
    """An error raised by a tile computation leaves no output and no temporary file."""
    out = tmp_path / "m.nc"

    def boom(_blocks):
        raise RuntimeError("stop")

    with pytest.raises(RuntimeError):
        write_netcdf(_dataset(True), out, on_tile=boom)
    assert list(tmp_path.iterdir()) == []
