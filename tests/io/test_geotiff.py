"""Cloud-Optimised GeoTIFF layers read back with rasterio and checked with rio-cogeo's validator."""

from __future__ import annotations

import numpy as np
import pytest
from affine import Affine

from subsurf.io.geotiff import TILE, cog_driver_available, write_layer
from subsurf.safety import CAUTION

rasterio = pytest.importorskip("rasterio")

PATHS = [pytest.param(True, id="COG-driver"), pytest.param(False, id="tiled-GTiff-copy")]


def _band(height, width):
    rng = np.random.default_rng(7)
    band = rng.uniform(0.5, 3.0, size=(height, width)).astype(np.float32)
    band[:5, -7:] = np.nan  # a no-data corner
    return band


@pytest.mark.parametrize("cog_driver", PATHS)
def test_large_layer_has_overviews_and_valid_layout(tmp_path, cog_driver):
    """600 x 300 cells: overviews at 2 and 4 (halving until one 256-cell tile holds the overview), DEFLATE,
    tiles, values, CRS, transform, band description/unit, no-data and caution as written."""
    if cog_driver and not cog_driver_available():
        pytest.skip("GDAL under rasterio has no COG driver (GDAL < 3.1)")
    band = _band(300, 600)
    transform = Affine(2.0, 0.0, 500_000.0, 0.0, -2.0, 5_400_000.0)
    path = write_layer(tmp_path / "m.tif", band, transform=transform, crs="EPSG:32630",
                       description="maximum detectable depth", unit="m", tags={"layer": "max_depth"},
                       cog_driver=cog_driver)
    with rasterio.open(path) as r:
        assert r.compression.name == "deflate"
        assert r.profile["tiled"] and r.block_shapes == [(TILE, TILE)]
        assert r.overviews(1) == [2, 4]
        assert r.crs.to_epsg() == 32630 and r.transform == transform
        assert r.descriptions == ("maximum detectable depth",) and r.units == ("m",)
        assert np.isnan(r.nodata)
        assert r.tags()["caution"] == CAUTION and r.tags()["layer"] == "max_depth"
        np.testing.assert_array_equal(r.read(1), band)
        # overview cells are means of the 2 x 2 cells they cover (numpy, away from the no-data corner)
        ov = r.read(1, out_shape=(150, 300))
        ref = band.reshape(150, 2, 300, 2).mean(axis=(1, 3))
        np.testing.assert_allclose(ov[10:, :290], ref[10:, :290], rtol=1e-5)
    cogeo = pytest.importorskip("rio_cogeo.cogeo", reason="rio-cogeo (test extra) not installed")
    valid, errors, warnings = cogeo.cog_validate(str(path))
    assert valid and not errors, errors
    assert not warnings, warnings


@pytest.mark.parametrize("cog_driver", PATHS)
def test_small_layer_needs_no_overviews(tmp_path, cog_driver):
    """A layer within one tile (120 x 80 cells) gets no overviews and is still a valid COG."""
    if cog_driver and not cog_driver_available():
        pytest.skip("GDAL under rasterio has no COG driver (GDAL < 3.1)")
    path = write_layer(tmp_path / "s.tif", _band(80, 120), transform=Affine(5, 0, 0, 0, -5, 400),
                       crs="EPSG:27700", description="margin", unit="dB", cog_driver=cog_driver)
    with rasterio.open(path) as r:
        assert r.overviews(1) == [] and r.units == ("dB",) and r.compression.name == "deflate"
    cogeo = pytest.importorskip("rio_cogeo.cogeo", reason="rio-cogeo (test extra) not installed")
    assert cogeo.cog_validate(str(path))[0]


def test_refuses_overwrite_and_leaves_nothing_half_written(tmp_path):
    """An existing file is kept without force; a failed write leaves no temporary file."""
    from subsurf.errors import OutputExistsError

    p = tmp_path / "x.tif"
    p.write_bytes(b"keep")
    with pytest.raises(OutputExistsError):
        write_layer(p, _band(4, 4), transform=Affine(1, 0, 0, 0, -1, 4), crs="EPSG:32630", description="d",
                    unit="m")
    assert p.read_bytes() == b"keep"
    with pytest.raises(ValueError):
        write_layer(tmp_path / "y.tif", np.zeros(3), transform=Affine(1, 0, 0, 0, -1, 4), crs="EPSG:32630",
                    description="d", unit="m")
    assert sorted(q.name for q in tmp_path.iterdir()) == ["x.tif"]
