"""The map NetCDF read by an independent reader, GDAL's netCDF driver (through rasterio).

What GDAL 3.10 shows for the extra dimensions (scenario, antenna) of a layer such as
``netcdf:feasibility.nc:max_depth``, as documented in the GDAL netCDF driver page
(https://gdal.org/en/stable/drivers/raster/netcdf.html, "Dimension" / NETCDF_DIM_ metadata)
and measured here: each band carries ``NETCDF_DIM_scenario`` and ``NETCDF_DIM_antenna``.
With no coordinate variable for a dimension GDAL writes the 1-based band index along it;
it takes values from a 1-D variable along the dimension when there is one.  The names
cannot be shown per band with a CF-valid encoding (measured with GDAL 3.10.3):

- char-array labels ``antenna_name(antenna, strlen)`` (what subsurf writes, CF-1.8 6.1):
  GDAL ignores them, bands show the indices 1..n;
- a netCDF-4 string (NC_STRING) label or coordinate variable: GDAL lists the names once,
  in band order, in the dataset metadata ``NETCDF_DIM_antenna_VALUES={midband-500,...}``,
  but every band's ``NETCDF_DIM_antenna`` is the empty string (the index is lost too);
- an integer coordinate variable with ``flag_values``/``flag_meanings``: the integers only.

Band descriptions stay empty in every case from the NetCDF alone.  So the file keeps its
char-array labels and GDAL's per-band indices, and the names reach GDAL (and QGIS) through
GDAL's own PAM sidecar ``feasibility.nc.aux.xml`` (subsurf.io.gdal_pam), read for each
sub-dataset.  These tests check that GDAL's per-band indices, looked up in the file's own
label variables, give the band GDAL reads for each (scenario, antenna) and the description
GDAL shows for it; and that every layer is georeferenced like the GeoTIFFs (which carry the
names in their file names and dataset tags ``scenario``, ``antenna``).
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from example_site import coarse_copy

rasterio = pytest.importorskip("rasterio")


@pytest.fixture(scope="module")
def mapped(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("map_gdal")
    out = tmp / "out"
    proc = subprocess.run([sys.executable, "-m", "subsurf", "map", str(coarse_copy(tmp)), "--out", str(out)],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    return out


def _labels(path, dim):
    """Names of ``dim`` read from the label variable with netCDF4 (not subsurf's reader)."""
    import netCDF4

    with netCDF4.Dataset(path) as nc:
        return [str(s) for s in nc[f"{dim}_name"][:]]  # char array -> strings (its _Encoding attribute)


@pytest.mark.parametrize("layer", ["max_depth", "margin_db", "reach_probability"])
def test_gdal_bands_map_to_names_and_geotiffs(mapped, layer):
    nc_path = mapped / "feasibility.nc"
    scenarios, antennas = _labels(nc_path, "scenario"), _labels(nc_path, "antenna")
    with rasterio.open(f"netcdf:{nc_path}:{layer}") as src:
        assert src.count == len(scenarios) * len(antennas)
        seen = set()
        for b in range(1, src.count + 1):
            tags = src.tags(b)
            # GDAL netCDF driver: 1-based index along a dimension without a coordinate variable
            s = scenarios[int(tags["NETCDF_DIM_scenario"]) - 1]
            a = antennas[int(tags["NETCDF_DIM_antenna"]) - 1]
            seen.add((s, a))
            assert src.descriptions[b - 1] == f"{s} / {a}"  # from the PAM sidecar, as GDAL reads it
            tif = mapped / "geotiff" / f"{layer}__{s}__{a}.tif"
            with rasterio.open(tif) as t:
                assert t.tags()["scenario"] == s and t.tags()["antenna"] == a
                assert t.crs == src.crs and t.transform.almost_equals(src.transform)
                np.testing.assert_array_equal(t.read(1), src.read(b))
        assert seen == {(s, a) for s in scenarios for a in antennas}


def test_every_gdal_subdataset_is_georeferenced(mapped):
    """Opening the container has no geotransform (GDAL lists sub-datasets there); each (y, x) layer has one."""
    import netCDF4

    nc_path = mapped / "feasibility.nc"
    with netCDF4.Dataset(nc_path) as nc:
        layers = {n for n, v in nc.variables.items() if v.dimensions[-2:] == ("y", "x") and "grid_mapping" in v.ncattrs()}
    with rasterio.open(mapped / "geotiff" / "max_depth__dry__midband-250.tif") as t:
        crs, transform = t.crs, t.transform
    with rasterio.Env(), pytest.warns(rasterio.errors.NotGeoreferencedWarning):
        with rasterio.open(nc_path) as container:
            subs = container.subdatasets
    listed = {sub.rsplit(":", 1)[-1] for sub in subs}
    assert layers and layers <= listed, layers - listed
    for name in sorted(layers):
        sub = f"netcdf:{nc_path}:{name}"
        with rasterio.open(sub) as src:
            assert src.crs == crs, sub
            assert src.transform.almost_equals(transform), sub


def test_region_bands_named_in_gdal_also_for_one_antenna(tmp_path):
    """The region map names its antenna bands through the same sidecar; a one-antenna map's one band too."""
    out = tmp_path / "r.nc"
    proc = subprocess.run([sys.executable, "-m", "subsurf", "region", "--synthetic", "30x20", "--target", "planar",
                           "--depth", "1.5", "--out", str(out), "--antenna", "midband-500", "--antenna", "lowband-100"],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    assert (tmp_path / "r.nc.aux.xml").is_file()
    antennas = _labels(out, "antenna")
    with rasterio.open(f"netcdf:{out}:max_depth") as src:
        assert sorted(antennas) == ["lowband-100", "midband-500"]
        for b in range(1, src.count + 1):
            assert src.descriptions[b - 1] == antennas[int(src.tags(b)["NETCDF_DIM_antenna"]) - 1]
    one = tmp_path / "one.nc"
    proc = subprocess.run([sys.executable, "-m", "subsurf", "region", "--synthetic", "30x20", "--target", "planar",
                           "--depth", "1.5", "--out", str(one), "--antenna", "midband-500"],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    with rasterio.open(f"netcdf:{one}:max_depth") as src:
        assert src.count == 1 and src.descriptions == ("midband-500",)
