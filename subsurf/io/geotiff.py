"""Single-band GeoTIFF layers as Cloud-Optimised GeoTIFF (COG), written with rasterio.

Layout of every file :func:`write_layer` writes:

* float32, one band, DEFLATE compression with the floating-point predictor
  (``PREDICTOR=3``), 256 × 256 tiles, NaN as the declared no-data value;
* COG layout (image file directory first, tiles ordered, overviews after the full
  resolution; COG specification, OGC 21-026): written by GDAL's COG driver (GDAL >= 3.1),
  else as a tiled GTiff with overviews copied with ``COPY_SRC_OVERVIEWS=YES``, which gives
  the same layout;
* overviews by cell averaging (a coarser cell shows the mean of the cells it covers,
  no-data cells left out), halving until the smallest overview fits in one tile:
  a layer wider or taller than :data:`TILE` cells gets overviews, a smaller one needs none
  (GDAL COG driver, ``OVERVIEWS=AUTO``);
* the band's description (the layer's long name) and unit, the caution
  (:data:`subsurf.safety.CAUTION`) as the dataset's ``caution`` tag and TIFF
  ImageDescription (which most TIFF viewers show), plus any further tags given.
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["TILE", "write_layer", "cog_driver_available"]

#: tile size (cells) of the written GeoTIFFs; also the size above which overviews are made
TILE = 256
_CREATION = {"COMPRESS": "DEFLATE", "PREDICTOR": "3", "BLOCKSIZE": str(TILE)}


def cog_driver_available() -> bool:
    """True when the GDAL under rasterio has the COG driver (GDAL >= 3.1)."""
    import rasterio
    from rasterio.env import GDALVersion

    if not GDALVersion.runtime().at_least("3.1"):
        return False
    with rasterio.Env() as env:
        return "COG" in env.drivers()


def _overview_factors(width: int, height: int) -> list[int]:
    """Factors 2, 4, 8 ... until the overview fits in one tile (the COG driver's OVERVIEWS=AUTO rule)."""
    factors, f = [], 2
    while max(width, height) / (f // 2) > TILE:
        factors.append(f)
        f *= 2
    return factors


def write_layer(path, band, *, transform, crs, description: str, unit: str, tags: dict | None = None,
                force: bool = False, cog_driver: bool | None = None) -> Path:
    """Write one 2-D float layer (rows north first) as a Cloud-Optimised GeoTIFF at ``path``, atomically.

    Parameters
    ----------
    band : array (rows, columns)
        Values; NaN marks no data.
    transform : affine.Affine
        Geotransform of the upper-left corner.
    crs : rasterio.crs.CRS or anything rasterio accepts
    description, unit : str
        Band description (the layer's long name) and unit (e.g. ``m``, ``dB``, ``1``).
    tags : dict, optional
        Further dataset tags.
    cog_driver : bool, optional
        Use GDAL's COG driver (default: when available); False writes the same layout
        through a tiled GTiff and a copy.
    """
    import numpy as np
    import rasterio
    from rasterio.enums import Resampling
    from rasterio.shutil import copy as rio_copy

    from ..safety import CAUTION
    from .outputs import atomic_path

    band = np.ascontiguousarray(band, dtype=np.float32)
    if band.ndim != 2:
        raise ValueError(f"write_layer needs a 2-D band, got shape {band.shape}")
    height, width = band.shape
    all_tags = {**(tags or {}), "caution": CAUTION, "TIFFTAG_IMAGEDESCRIPTION": "CAUTION: " + CAUTION}
    profile = {"width": width, "height": height, "count": 1, "dtype": "float32", "crs": crs,
               "transform": transform, "nodata": np.nan}

    def fill(dst):
        dst.update_tags(**all_tags)
        dst.set_band_description(1, description)
        if unit:
            dst.set_band_unit(1, unit)
        dst.write(band, 1)

    if cog_driver is None:
        cog_driver = cog_driver_available()
    with atomic_path(path, force=force) as tmp:
        if cog_driver:
            with rasterio.open(tmp, "w", driver="COG", OVERVIEWS="AUTO", RESAMPLING="AVERAGE", **_CREATION,
                               **profile) as dst:
                fill(dst)
        else:  # GDAL < 3.1: tiled GTiff with internal overviews, then a copy that puts them in COG order
            work = Path(tmp).with_name(Path(tmp).name + ".work.tif")
            try:
                with rasterio.open(work, "w", driver="GTiff", TILED="YES", BLOCKXSIZE=TILE, BLOCKYSIZE=TILE,
                                   COMPRESS="DEFLATE", PREDICTOR="3", **profile) as dst:
                    fill(dst)
                    factors = _overview_factors(width, height)
                    if factors:
                        dst.build_overviews(factors, Resampling.average)
                rio_copy(work, tmp, driver="GTiff", TILED="YES", BLOCKXSIZE=TILE, BLOCKYSIZE=TILE,
                         COMPRESS="DEFLATE", PREDICTOR="3", COPY_SRC_OVERVIEWS="YES")
            finally:
                work.unlink(missing_ok=True)
    return Path(path)
