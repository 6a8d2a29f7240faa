"""A map folder after GIS software has read it: GDAL's own files beside ours.

GDAL (and QGIS, which reads rasters through it) keeps statistics, histograms and metadata it
computes in Persistent Auxiliary Metadata sidecars, ``<raster>.aux.xml``
(https://gdal.org/en/stable/user/raster_data_model.html, "PAM"): it rewrites the band-name
sidecar ``feasibility.nc.aux.xml`` subsurf wrote, and creates ``geotiff/<layer>.tif.aux.xml``.
Here real GDAL (through rasterio: ``DatasetReader.stats``, what ``gdalinfo -stats`` does,
GDALComputeRasterStatistics) computes statistics on the outputs of a real ``subsurf map``.
A later ``subsurf map --force`` must not leave GDAL's statistics of the old pixels beside the
new GeoTIFFs, and must not delete anything of the user's.
"""

from __future__ import annotations

import shutil
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


def _tif_sidecars(folder):
    return sorted(p.name for p in (folder / "geotiff").glob("*.tif.aux.xml"))


def test_force_leaves_no_stale_geotiff_statistics(survey, tmp_path):
    """GDAL statistics of the old GeoTIFFs (geotiff/*.tif.aux.xml) go with them on --force; the folder is complete."""
    out = tmp_path / "maps"
    _map(survey, out)
    tifs = sorted((out / "geotiff").glob("max_depth__*.tif"))[:2]
    for tif in tifs:
        _gdal_stats(tif)
    assert _tif_sidecars(out) == sorted(f"{t.name}.aux.xml" for t in tifs)  # GDAL wrote them
    _map(survey, out, "--force")
    assert _tif_sidecars(out) == []
    ok, why = check_output_folder(out)
    assert ok, why
    with rasterio.open(tifs[0]) as src:  # GDAL now computes from the new pixels, no stored statistics
        assert "STATISTICS_MEAN" not in src.tags(1)


def test_force_keeps_the_users_files_beside_the_map(survey, tmp_path):
    """With the user's files in the folder (notes, a GeoTIFF of their own and its statistics), --force
    removes only the statistics of our GeoTIFFs."""
    out = tmp_path / "maps"
    _map(survey, out)
    ours = sorted((out / "geotiff").glob("margin_db__*.tif"))[0]
    _gdal_stats(ours)
    (out / "notes.txt").write_text("site visit 3 May")
    mine = out / "geotiff" / "drone_orthophoto.tif"
    shutil.copyfile(ours, mine)
    _gdal_stats(mine)
    users = {p: p.read_bytes() for p in (out / "notes.txt", mine, out / "geotiff" / "drone_orthophoto.tif.aux.xml")}
    _map(survey, out, "--force")
    assert _tif_sidecars(out) == ["drone_orthophoto.tif.aux.xml"]
    assert {p: p.read_bytes() for p in users} == users
    ok, why = check_output_folder(out)
    assert ok, why
