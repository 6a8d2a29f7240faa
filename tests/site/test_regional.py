"""Regional (chunked, dask) feasibility maps: identical to the in-memory chain, bounded tiles, CF output."""

import json
import subprocess
import sys

import netCDF4
import numpy as np
import pytest
import xarray as xr

from subsurf.errors import FileInputError, OutputExistsError
from subsurf.io.regional import write_region
from subsurf.planning.antennas import load_catalogue, make_target
from subsurf.site import feasibility
from subsurf.site import regional as scale
from subsurf.site.synthetic import synthetic_region

pytest.importorskip("dask")

DEPTH = 1.5
QUANTITIES = ("moisture", "pore_water_ec", "clay")


@pytest.fixture(scope="module")
def antennas():
    return list(load_catalogue().values())


@pytest.fixture(scope="module")
def target():
    return make_target("planar", depth_m=DEPTH, material="water_table")


@pytest.fixture(scope="module")
def soil_numpy():
    """A small synthetic region held in memory, with some no-data cells."""
    return synthetic_region(70, 45, seed=21, chunk=1000, nodata_fraction=0.15).compute()


def _in_memory(soil, antennas, target):
    values = {q: soil[q].values for q in QUANTITIES}
    ants = scale.chain_antennas(antennas, band_resolution=False)
    return feasibility.evaluate(values, ants, target=target, target_depth_m=DEPTH, texture="loam")


@pytest.mark.parametrize("chunk", [16, 32, 1000])
def test_chunked_chain_equals_in_memory_chain(soil_numpy, antennas, target, chunk):
    """Chunked (dask, threads) and in-memory chains give bit-identical layers whatever the chunk size."""
    ref = _in_memory(soil_numpy, antennas, target)
    lazy = scale.feasibility_region(soil_numpy.chunk({"y": chunk, "x": chunk}), antennas, target=target,
                                    target_depth_m=DEPTH, texture="loam",
                                    layers=("velocity", "attenuation_db_per_m", "eps_real"))
    assert lazy["max_depth"].chunks is not None
    got = lazy.compute()
    for name in ("max_depth", "margin_db", "velocity", "attenuation_db_per_m", "eps_real"):
        np.testing.assert_array_equal(got[name].values, ref[name])
    rec = feasibility.recommend_antenna(ref["margin_db"], [a.centre_freq_hz for a in antennas])
    have = np.isfinite(ref["margin_db"][0])
    np.testing.assert_array_equal(got["recommended_antenna"].values[have], rec[have])


def test_each_chain_call_sees_one_tile_only(soil_numpy, antennas, target, monkeypatch):
    """The chain is called once per tile with tile-sized arrays: memory follows the chunk, not the raster."""
    import dask

    shapes = []
    original = feasibility.evaluate

    def spy(values, *args, **kwargs):
        shapes.append(np.shape(values["moisture"]))
        return original(values, *args, **kwargs)

    monkeypatch.setattr(feasibility, "evaluate", spy)
    lazy = scale.feasibility_region(soil_numpy.chunk({"y": 20, "x": 25}), antennas, target=target,
                                    target_depth_m=DEPTH, texture="loam")
    with dask.config.set(scheduler="synchronous"):
        lazy.compute()
    assert len(shapes) == 3 * 3
    assert max(s[0] for s in shapes) <= 20 and max(s[1] for s in shapes) <= 25


def test_written_file_equals_in_memory_chain_in_float32(soil_numpy, antennas, target, tmp_path):
    """The NetCDF written tile by tile holds the in-memory values rounded to float32."""
    ref = _in_memory(soil_numpy, antennas, target)
    lazy = scale.feasibility_region(soil_numpy.chunk({"y": 16, "x": 16}), antennas, target=target,
                                    target_depth_m=DEPTH, texture="loam")
    out = tmp_path / "map.nc"
    with scale.scheduler("threads", workers=2):
        write_region(lazy, out, batch=3)
    with xr.open_dataset(out) as ds:
        for name in ("max_depth", "margin_db", "velocity"):
            assert ds[name].dtype == np.float32
            np.testing.assert_array_equal(ds[name].values, ref[name].astype(np.float32))


def test_summary_matches_area_fractions_of_the_in_memory_map(soil_numpy, antennas, target, tmp_path):
    """Reach fractions accumulated per tile equal feasibility.area_fractions over the whole map."""
    ref = _in_memory(soil_numpy, antennas, target)
    mask = np.isfinite(soil_numpy["moisture"].values)
    expect = feasibility.area_fractions(ref["margin_db"], mask, too_shallow=ref["too_shallow"])
    lazy = scale.feasibility_region(soil_numpy.chunk({"y": 16, "x": 16}), antennas, target=target,
                                    target_depth_m=DEPTH, texture="loam")
    summary = write_region(lazy, tmp_path / "m.nc")
    rows = summary.rows()
    # the region's reach_with_headroom is the one "reaches" (margin >= 6 dB below the blind zone); its
    # reach_fraction counts margin >= 0 below the blind zone
    np.testing.assert_allclose([r["reach_fraction"] for r in rows], expect["marginal_or_better"], rtol=1e-12)
    np.testing.assert_allclose([r["reach_with_headroom_fraction"] for r in rows], expect["reach"], rtol=1e-12)
    assert summary.cells_with_data == int(mask.sum())


def test_output_is_cf_annotated(soil_numpy, antennas, target, tmp_path):
    """Layers carry units and grid_mapping; the crs variable carries WKT; the caution is stored."""
    lazy = scale.feasibility_region(soil_numpy.chunk({"y": 32, "x": 32}), antennas, target=target,
                                    target_depth_m=DEPTH, texture="loam")
    out = tmp_path / "cf.nc"
    write_region(lazy, out, caution="verify services")
    with xr.open_dataset(out, decode_coords="all") as ds:
        assert ds.attrs["Conventions"].startswith("CF-")
        assert ds.attrs["caution"] == "verify services"
        assert ds["max_depth"].attrs["units"] == "m"
        assert ds["margin_db"].attrs["units"] == "dB"
        assert "crs" in ds.coords and "crs_wkt" in ds["crs"].attrs
        assert list(ds["antenna_name"].values) == [a.name for a in antennas]
        assert ds["x"].attrs["standard_name"] == "projection_x_coordinate"
    # the same encoding rules as the survey map (tests/cli/test_cli_map.py): CF-1.8 section 1.3
    # (coordinate variables numeric), 2.5.1 (no fill values on coordinates), 6.1 (label variables)
    with netCDF4.Dataset(out) as nc:
        assert "antenna" not in nc.variables and nc["antenna_name"].dtype == np.dtype("S1")
        assert "antenna_name" in nc["max_depth"].coordinates.split()
        for c in ("x", "y", "centre_frequency", "performance"):
            assert "_FillValue" not in nc[c].ncattrs(), c
        assert nc["recommended_antenna"]._FillValue == scale.REC_FILL


def test_existing_output_is_kept_without_force(soil_numpy, antennas, target, tmp_path):
    """An existing map is not overwritten unless force=True, and no partial file is left."""
    out = tmp_path / "keep.nc"
    out.write_text("precious")
    lazy = scale.feasibility_region(soil_numpy.chunk({"y": 32, "x": 32}), antennas, target=target,
                                    target_depth_m=DEPTH, texture="loam")
    with pytest.raises(OutputExistsError):
        write_region(lazy, out)
    assert out.read_text() == "precious"
    write_region(lazy, out, force=True)
    assert [p.name for p in tmp_path.iterdir()] == ["keep.nc"]


def _write_raster(soil, path):
    """The soil as a NetCDF raster with non-SI units (% and mS/m), as a regional provider might ship it."""
    ds = soil[list(QUANTITIES) + ["crs"]].copy()
    ds["moisture"] = ds["moisture"] * 100.0
    ds["moisture"].attrs = {"units": "%", "grid_mapping": "crs"}
    ds["pore_water_ec"] = ds["pore_water_ec"] * 1e3
    ds["pore_water_ec"].attrs = {"units": "mS m-1", "grid_mapping": "crs"}
    ds["clay"].attrs = {"units": "1", "grid_mapping": "crs"}
    ds.to_netcdf(path)


def test_open_region_reads_lazily_and_converts_units(soil_numpy, tmp_path):
    """open_region gives dask-backed SI values equal to the original (% and mS m-1 converted)."""
    path = tmp_path / "soil.nc"
    _write_raster(soil_numpy, path)
    ds = scale.open_region(path, chunk=20)
    assert ds["moisture"].chunks[0][0] == 20
    np.testing.assert_allclose(ds["moisture"].values, soil_numpy["moisture"].values, rtol=1e-12)
    np.testing.assert_allclose(ds["pore_water_ec"].values, soil_numpy["pore_water_ec"].values, rtol=1e-12)
    assert "crs_wkt" in ds["crs"].attrs


@pytest.fixture
def restore_chunk_cache():
    before = netCDF4.get_chunk_cache()
    yield before
    netCDF4.set_chunk_cache(*before)


def _chunked_raster(path, n, chunk, dtype):
    with netCDF4.Dataset(path, "w") as nc:
        nc.createDimension("y", n)
        nc.createDimension("x", n)
        v = nc.createVariable("moisture", dtype, ("y", "x"), chunksizes=(chunk, chunk), zlib=True)
        v.units = "1"
        v[:] = np.full((n, n), 0.2, dtype)


@pytest.mark.parametrize("n, file_chunk, dtype, tile, expected", [
    (256, 32, "f4", 64, 1 << 20),  # 2 x 2 chunks of 4 KiB: the 1 MiB floor
    (1024, 1024, "f8", 512, 4 * 1024 * 1024 * 8),  # a misaligned window touches 2 x 2 chunks of 8 MiB
])
def test_open_region_lowers_the_read_chunk_cache(tmp_path, restore_chunk_cache, n, file_chunk, dtype, tile,
                                                 expected):
    """netCDF-C's default read cache (64 MiB per variable, grows with the region read tile by tile) is
    lowered to the chunks one tile window touches (sizes from the chunking written here), never raised;
    the values read are unchanged."""
    path = tmp_path / "soil.nc"
    _chunked_raster(path, n, file_chunk, dtype)
    ds = scale.open_region(path, chunk=tile, crs="EPSG:32633")  # the file states no CRS
    size, slots, _ = netCDF4.get_chunk_cache()
    assert size == min(expected, restore_chunk_cache[0])
    assert size <= restore_chunk_cache[0] and slots >= 100
    np.testing.assert_array_equal(ds["moisture"].values, np.full((n, n), np.float64(np.float32(0.2))
                                                                 if dtype == "f4" else 0.2))


def test_out_of_range_raster_values_name_file_and_variable(soil_numpy, antennas, target, tmp_path):
    """A moisture of 90 % (outside 0–0.7) stops the run with a FileInputError naming the variable."""
    path = tmp_path / "bad.nc"
    bad = soil_numpy.copy()
    m = bad["moisture"].values.copy()
    m[5, 7] = 0.9
    bad["moisture"] = (("y", "x"), m, bad["moisture"].attrs)
    _write_raster(bad, path)
    lazy = scale.feasibility_region(scale.open_region(path, chunk=16), antennas, target=target,
                                    target_depth_m=DEPTH, texture="loam")
    with pytest.raises(FileInputError, match=r"bad\.nc.*moisture"):
        lazy["max_depth"].compute()


@pytest.mark.filterwarnings("ignore:Port .* is already in use:UserWarning")
def test_local_distributed_cluster_gives_identical_map(soil_numpy, antennas, target, tmp_path):
    """Through a loopback dask.distributed cluster (worker process) the written map equals the in-memory chain."""
    from distributed import Client, LocalCluster

    path = tmp_path / "soil.nc"
    _write_raster(soil_numpy, path)
    ref = _in_memory(scale.open_region(path, chunk=1000).compute(), antennas, target)
    lazy = scale.feasibility_region(scale.open_region(path, chunk=24), antennas, target=target,
                                    target_depth_m=DEPTH, texture="loam")
    out = tmp_path / "dist.nc"
    with LocalCluster(n_workers=1, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=None) as cluster, Client(cluster):
        write_region(lazy, out, batch=2)
    with xr.open_dataset(out) as ds:
        np.testing.assert_array_equal(ds["max_depth"].values, ref["max_depth"].astype(np.float32))
        np.testing.assert_array_equal(ds["margin_db"].values, ref["margin_db"].astype(np.float32))


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "subsurf", "region", *args], capture_output=True, text=True,
                          cwd=cwd, timeout=120)


def test_cli_synthetic_map_json_and_file(tmp_path):
    """`subsurf region --synthetic` writes the map and prints per-antenna fractions as JSON with the caution."""
    r = _cli("--synthetic", "90x60", "--seed", "3", "--target", "planar", "--depth", "1.5", "--out", "m.nc",
             "--chunk", "32", "--json", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    payload = json.loads(r.stdout)
    assert payload["cells"] == 90 * 60 and payload["tiles"] == 3 * 2
    assert len(payload["rows"]) == 7 and "excavation" in payload["caution"]
    for row in payload["rows"]:
        assert 0.0 <= row["reach_pct"] <= 100.0
    with xr.open_dataset(tmp_path / "m.nc") as ds:
        assert ds["max_depth"].shape == (7, 60, 90)


def test_cli_write_soil_then_map_from_file(tmp_path):
    """--write-soil writes a synthetic raster that --soil then reads; the table names the file."""
    r = _cli("--synthetic", "64x40", "--write-soil", "soil.nc", "--quiet", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    r = _cli("--soil", "soil.nc", "--target", "line", "--depth", "1", "--size", "20 cm", "--out", "m.nc",
             "--antenna", "midband-250", "--chunk", "16", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    assert "midband-250" in r.stdout and "Wrote m.nc" in r.stdout and "Caution" in r.stdout


def test_cli_refuses_to_overwrite(tmp_path):
    """An existing output gives exit code 3 and a one-line error mentioning --force."""
    (tmp_path / "m.nc").write_text("x")
    r = _cli("--synthetic", "20x20", "--target", "planar", "--depth", "1", "--out", "m.nc", cwd=tmp_path)
    assert r.returncode == 3 and "--force" in r.stderr and len(r.stderr.strip().splitlines()) == 1


def test_cli_unreachable_scheduler_is_an_input_error(tmp_path):
    """A scheduler address with nothing listening is a one-line input error (exit 1)."""
    r = _cli("--synthetic", "20x20", "--target", "planar", "--depth", "1", "--out", "m.nc",
             "--scheduler", "tcp://127.0.0.1:9", cwd=tmp_path)
    assert r.returncode == 1 and "--scheduler" in r.stderr
    assert not (tmp_path / "m.nc").exists()


def test_cli_needs_exactly_one_soil_source(tmp_path):
    """Neither or both of --soil and --synthetic is an input error."""
    r = _cli("--target", "planar", "--depth", "1", "--out", "m.nc", cwd=tmp_path)
    assert r.returncode == 1 and "--soil" in r.stderr
