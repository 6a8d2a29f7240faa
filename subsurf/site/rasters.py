"""One soil quantity on a regular raster: CF NetCDF (xarray), or GeoTIFF with the geo extra (rioxarray).

The stored numbers are converted from the survey's ``unit`` to SI and checked against
the quantity's accepted range; the CRS comes from the survey file or the raster itself.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .._schema import fail
from ..errors import FileInputError, InputError
from ..units import parse_quantity
from ._values import _check_value, _difference
from .crs import read_crs
from .schema import QUANTITIES

__all__ = ["RasterLayer", "read_raster", "raster_dims"]


@dataclass(frozen=True)
class RasterLayer:
    """One quantity given as a regular raster (NetCDF, or GeoTIFF with the geo extra)."""

    path: Path
    quantity: str
    crs: object
    x: np.ndarray  # 1-D cell-centre coordinates in ``crs``
    y: np.ndarray
    values: np.ndarray  # (ny, nx), SI
    sd: float  # measurement standard deviation (SI), 0 when unknown


def read_raster(entry, *, survey_path: Path, where: str) -> RasterLayer:
    """Read the raster named by ``entry`` (a validated :class:`~subsurf.site.schema.Raster`)."""
    quantity = entry.quantity
    path = (survey_path.parent / entry.file).resolve()
    if not path.is_file():
        raise fail(survey_path, f"{where} file", f"raster file not found: {path}")
    unit = entry.unit if entry.unit is not None else QUANTITIES[quantity].default_unit
    try:
        factor = parse_quantity(f"1 {unit}", QUANTITIES[quantity].kind, default_unit=unit, name="unit")
        offset = parse_quantity(f"0 {unit}", QUANTITIES[quantity].kind, default_unit=unit, name="unit")
    except InputError:
        raise fail(survey_path, f"{where} unit", f"cannot read unit {unit!r} as a {QUANTITIES[quantity].kind}") \
            from None
    factor -= offset
    sd = 0.0
    if entry.sd is not None:
        sd = _difference(quantity, entry.sd, path=survey_path, field=f"{where} sd")
        _check_value(quantity, sd, path=survey_path, field=f"{where} sd", sd=True)
    suffix = path.suffix.lower()
    if suffix in (".nc", ".nc4", ".netcdf"):
        import xarray as xr

        try:  # engine named: guessing loads every backend plugin (rioxarray, dask.array)
            opened = xr.open_dataset(path, engine="netcdf4")
        except (ValueError, OSError) as exc:
            if isinstance(exc, (FileNotFoundError, IsADirectoryError, PermissionError)):
                raise
            raise FileInputError(path, "not a NetCDF raster that can be read (not NetCDF/HDF5, or damaged)") \
                from None
        with opened as ds:
            var = entry.variable or quantity
            if var not in ds:
                raise FileInputError(path, f"no variable {var!r} (variables: {', '.join(map(str, ds.data_vars))})",
                                     field="variable")
            da = ds[var].load()
            crs_text = entry.crs
            if crs_text is None:
                gm = da.attrs.get("grid_mapping")
                if gm and gm in ds:
                    crs_text = ds[gm].attrs.get("crs_wkt") or ds[gm].attrs.get("spatial_ref")
            crs = read_crs(crs_text, path=survey_path, field=f"{where} crs")
            xdim, ydim = raster_dims(da, path=path)
            x = np.asarray(da[xdim].values, dtype=float)
            y = np.asarray(da[ydim].values, dtype=float)
            arr = np.asarray(da.transpose(ydim, xdim).values, dtype=float)
    elif suffix in (".tif", ".tiff"):
        try:
            import rioxarray  # noqa: F401 - registers the .rio accessor
        except ImportError:
            raise FileInputError(path, "reading GeoTIFF needs rasterio and rioxarray (part of the base install; reinstall with pip install -e .)") \
                from None
        import xarray as xr

        da = xr.open_dataarray(path, engine="rasterio").squeeze(drop=True).load()
        crs_text = entry.crs or (da.rio.crs.to_wkt() if da.rio.crs else None)
        crs = read_crs(crs_text, path=survey_path, field=f"{where} crs")
        x = np.asarray(da["x"].values, dtype=float)
        y = np.asarray(da["y"].values, dtype=float)
        arr = np.asarray(da.values, dtype=float)
        nod = da.rio.nodata
        if nod is not None:
            arr = np.where(arr == nod, np.nan, arr)
    else:
        raise fail(survey_path, f"{where} file", f"raster format {suffix!r} not supported; use NetCDF (.nc) or "
                   "GeoTIFF (.tif, with the geo extra)")
    if arr.ndim != 2 or x.size < 2 or y.size < 2:
        raise FileInputError(path, f"expected a 2-D raster with at least 2x2 cells, got shape {arr.shape}")
    values = arr * factor + offset
    finite = values[np.isfinite(values)]
    if finite.size == 0:
        raise FileInputError(path, "raster holds no finite values", field=entry.variable or quantity)
    q = QUANTITIES[quantity]
    if finite.min() < q.low or finite.max() > q.high:
        raise FileInputError(path, f"{quantity} values {finite.min():.4g} to {finite.max():.4g} (SI) leave the "
                             f"accepted range {q.low:g} to {q.high:g} ({q.si_unit}); check the 'unit' key",
                             field=entry.variable or quantity)
    return RasterLayer(path=path, quantity=quantity, crs=crs, x=x, y=y, values=values, sd=float(sd))


def raster_dims(da, *, path) -> tuple[str, str]:
    if da.ndim != 2:
        raise FileInputError(path, f"variable {da.name!r} must be 2-D (y, x), has dims {da.dims}")
    for xd, yd in (("x", "y"), ("lon", "lat"), ("longitude", "latitude"), ("easting", "northing")):
        if xd in da.dims and yd in da.dims:
            return xd, yd
    raise FileInputError(path, f"cannot tell x and y in dims {da.dims}; name them x/y or lon/lat")
