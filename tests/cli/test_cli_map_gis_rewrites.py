"""A map folder after GIS software has read it: GDAL's own files beside ours.

GDAL (and QGIS, which reads rasters through it) keeps statistics, histograms and metadata it
computes in Persistent Auxiliary Metadata sidecars, ``<raster>.aux.xml``
(https://gdal.org/en/stable/user/raster_data_model.html, "PAM"): it rewrites the band-name
sidecar ``feasibility.nc.aux.xml`` subsurf wrote, and creates ``geotiff/<layer>.tif.aux.xml``.
Here real GDAL (through rasterio: ``DatasetReader.stats``, what ``gdalinfo -stats`` does,
GDALComputeRasterStatistics) computes statistics on the outputs of a real ``subsurf map``.
"""

from __future__ import annotations

import subprocess
import sys

import pytest
from example_site import coarse_copy

from subsurf.io.manifest import check_output_folder, read_manifest

rasterio = pytest.importorskip("rasterio")


def _map(survey, out, *extra):
    proc = subprocess.run([sys.executable, "-m", "subsurf", "map", str(survey), "--out", str(out), "--quiet", *extra],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    return proc


def _gdal_stats(path):
    """Statistics of every band, computed by GDAL, which stores them in the PAM sidecar when the dataset closes."""
    with rasterio.open(path) as src:
        for band in range(1, src.count + 1):
            src.stats(indexes=band, approx=False)


@pytest.fixture(scope="module")
def survey(tmp_path_factory):
    return coarse_copy(tmp_path_factory.mktemp("gis_rewrites"))


def test_folder_stays_complete_after_gdal_rewrites_the_band_name_sidecar(survey, tmp_path):
    """GDAL rewrites feasibility.nc.aux.xml (statistics added): the folder still reads as complete."""
    out = tmp_path / "maps"
    _map(survey, out, "--no-geotiff")
    sidecar = out / "feasibility.nc.aux.xml"
    entry = next(e for e in read_manifest(out)["files"] if e["path"] == sidecar.name)
    assert entry["rewritable"] is True
    before = sidecar.read_bytes()
    _gdal_stats(f"netcdf:{out / 'feasibility.nc'}:max_depth")
    assert sidecar.read_bytes() != before and b"STATISTICS_MEAN" in sidecar.read_bytes()  # GDAL did rewrite it
    ok, why = check_output_folder(out)
    assert ok, why
    sidecar.unlink()  # still listed: its absence is noticed
    ok, why = check_output_folder(out)
    assert not ok and "missing" in why


def test_a_changed_netcdf_is_still_caught(survey, tmp_path):
    """Only the sidecar is rewritable: one byte changed in feasibility.nc (same size) makes the folder incomplete."""
    out = tmp_path / "maps"
    _map(survey, out, "--no-geotiff")
    _gdal_stats(f"netcdf:{out / 'feasibility.nc'}:margin_db")
    assert check_output_folder(out)[0]
    nc = out / "feasibility.nc"
    data = bytearray(nc.read_bytes())
    data[len(data) // 2] ^= 0xFF
    nc.write_bytes(bytes(data))
    ok, why = check_output_folder(out)
    assert not ok and "feasibility.nc differs" in why
    assert not any(e.get("rewritable") for e in read_manifest(out)["files"] if e["path"] != "feasibility.nc.aux.xml")
