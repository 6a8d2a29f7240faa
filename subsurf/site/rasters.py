"""One soil quantity on a regular raster: GeoTIFF (rioxarray / GDAL) or CF NetCDF (xarray).

``[[soil.rasters]]`` names the file and the quantity; the reader then:

* picks the data: in NetCDF the ``variable`` given, else the quantity's own name, else the
  variable whose CF ``standard_name`` is the quantity's (e.g.
  ``volume_fraction_of_condensed_water_in_soil`` for moisture), else the only 2-D+
  variable; in a GeoTIFF the only band, or the ``band`` given (number, or a band
  description); a multi-band raster without a choice is one line listing the bands;
* reduces a time dimension: ``time = "2024-06-01"`` takes the nearest time step, or
  ``time_aggregate = "mean"`` (``median``, ``min``, ``max``) combines them; with several
  time steps and neither key the mean over time is used, and a note says so;
* converts the stored numbers from ``unit`` to SI and checks the quantity's range;
* takes the CRS from the survey (``crs``), else the file (GeoTIFF CRS, CF grid_mapping
  ``crs_wkt``/``spatial_ref``), else, for lon/lat coordinates in degrees without either,
  WGS 84 (the CF convention for ``degrees_east``/``degrees_north``), with a note.

Where the raster covers only part of the site, :mod:`subsurf.site.grid` reports the
covered fraction and uses zones/defaults elsewhere (``NAME_source`` layer).
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
from .vectors import note

__all__ = ["RasterLayer", "read_raster", "raster_dims", "CF_STANDARD_NAMES"]

#: CF standard names (CF standard name table) that identify a soil quantity in NetCDF.
CF_STANDARD_NAMES = {"moisture": ("volume_fraction_of_condensed_water_in_soil",
                                  "volume_fraction_of_water_in_soil"),
                     "temperature": ("soil_temperature",)}
_TIME_DIMS = ("time", "t", "date", "band_time")


@dataclass(frozen=True)
class RasterLayer:
    """One quantity given as a regular raster (NetCDF or GeoTIFF)."""

    path: Path
    quantity: str
    crs: object
    x: np.ndarray  # 1-D cell-centre coordinates in ``crs``
    y: np.ndarray
    values: np.ndarray  # (ny, nx), SI
    sd: float  # measurement standard deviation (SI), 0 when unknown
    time: str = ""  # how a time dimension was reduced ("" when there was none)


def _unit_factor(entry, quantity, *, survey_path, where):
    unit = entry.unit if entry.unit is not None else QUANTITIES[quantity].default_unit
    try:
        factor = parse_quantity(f"1 {unit}", QUANTITIES[quantity].kind, default_unit=unit, name="unit")
        offset = parse_quantity(f"0 {unit}", QUANTITIES[quantity].kind, default_unit=unit, name="unit")
    except InputError:
        raise fail(survey_path, f"{where} unit", f"cannot read unit {unit!r} as a {QUANTITIES[quantity].kind}") \
            from None
    return factor - offset, offset


def _netcdf_variable(ds, entry, quantity, *, path):
    if entry.variable is not None:
        if entry.variable not in ds:
            raise FileInputError(path, f"no variable {entry.variable!r} (variables: "
                                 f"{', '.join(map(str, ds.data_vars))})", field="variable")
        return entry.variable
    if quantity in ds.data_vars:
        return quantity
    wanted = CF_STANDARD_NAMES.get(quantity, ())
    by_name = [str(v) for v in ds.data_vars if ds[v].attrs.get("standard_name") in wanted]
    if len(by_name) == 1:
        return by_name[0]
    gridded = [str(v) for v in ds.data_vars if ds[v].ndim >= 2]
    if len(gridded) == 1:
        note(f"{path.name}: {quantity} read from its only gridded variable {gridded[0]!r}")
        return gridded[0]
    raise FileInputError(path, f"which variable holds {quantity}? none is named so (variables: "
                         f"{', '.join(map(str, ds.data_vars))}); give variable = \"...\" in the survey file",
                         field="variable")


def _reduce_time(da, entry, *, path) -> tuple[object, str]:
    """Select or aggregate a time dimension; returns the 2-D DataArray and a statement of what was done."""
    tdim = next((d for d in da.dims if str(d).lower() in _TIME_DIMS), None)
    if tdim is None:
        if entry.time is not None or entry.time_aggregate is not None:
            raise FileInputError(path, f"has no time dimension (dims {da.dims}); remove time/time_aggregate")
        return da, ""
    n = da.sizes[tdim]
    if entry.time is not None:
        if entry.time_aggregate is not None:
            raise FileInputError(path, "give either time or time_aggregate, not both")
        import pandas as pd

        try:
            picked = da.sel({tdim: pd.Timestamp(entry.time)}, method="nearest")
        except (ValueError, TypeError, KeyError) as exc:
            raise FileInputError(path, f"cannot select time {entry.time!r}: {exc}", field=str(tdim)) from None
        when = str(picked[tdim].values)[:19]
        return picked.drop_vars(tdim, errors="ignore"), f"time step {when} (nearest to {entry.time})"
    how = entry.time_aggregate or "mean"
    reduced = getattr(da, how)(dim=tdim, skipna=True)
    times = da[tdim].values if tdim in da.coords else np.arange(n)
    span = f"{str(times[0])[:19]} to {str(times[-1])[:19]}" if n > 1 else str(times[0])[:19]
    statement = f"{how} over {n} time steps ({span})"
    if entry.time_aggregate is None and n > 1:
        note(f"{path.name}: {statement}; choose with time = \"YYYY-MM-DD\" or time_aggregate")
    return reduced, statement


def _read_netcdf(path, entry, quantity, *, survey_path, where):
    import xarray as xr

    try:
        ds = xr.open_dataset(path, engine="netcdf4")  # named: guessing loads every backend plugin (rioxarray, dask.array)
    except (OSError, ValueError) as exc:
        raise FileInputError(path, f"cannot read as NetCDF: {' '.join(str(exc).split())[:160]}") from None
    with ds:
        var = _netcdf_variable(ds, entry, quantity, path=path)
        da, statement = _reduce_time(ds[var], entry, path=path)
        da = da.squeeze(drop=True).load()
        crs_text = entry.crs
        if crs_text is None:
            gm = da.attrs.get("grid_mapping") or ds[var].encoding.get("grid_mapping")
            if gm and gm in ds:
                crs_text = ds[gm].attrs.get("crs_wkt") or ds[gm].attrs.get("spatial_ref")
        xdim, ydim = raster_dims(da, path=path)
        if crs_text is None and xdim in ("lon", "longitude"):
            units = str(da[xdim].attrs.get("units", "degrees_east"))
            if units.startswith("degree"):
                note(f"{path.name}: no grid_mapping; lon/lat in degrees read as WGS 84 (EPSG:4326)")
                crs_text = "EPSG:4326"
        crs = read_crs(crs_text, path=survey_path, field=f"{where} crs")
        x = np.asarray(da[xdim].values, dtype=float)
        y = np.asarray(da[ydim].values, dtype=float)
        arr = np.asarray(da.transpose(ydim, xdim).values, dtype=float)
        fill = da.encoding.get("_FillValue")
        if fill is not None:
            arr = np.where(arr == fill, np.nan, arr)
    return crs, x, y, arr, statement


def _read_geotiff(path, entry, *, survey_path, where):
    import rioxarray  # noqa: F401 - registers the .rio accessor
    import xarray as xr

    try:
        da = xr.open_dataarray(path, engine="rasterio", mask_and_scale=True)
    except Exception as exc:  # noqa: BLE001 - rasterio raises RasterioIOError and friends
        raise FileInputError(path, f"cannot read as GeoTIFF: {' '.join(str(exc).split())[:160]}") from None
    with da:
        bands = da.sizes.get("band", 1)
        descriptions = list(da.attrs.get("long_name", ())) if isinstance(da.attrs.get("long_name"), tuple) \
            else [str(da.attrs.get("long_name", ""))] * bands
        if bands > 1:
            if entry.band is None:
                shown = ", ".join(f"{i + 1}" + (f" ({d})" if d else "") for i, d in enumerate(descriptions))
                raise FileInputError(path, f"has {bands} bands ({shown}); choose one with band = N (1-{bands}) "
                                     "or band = \"description\" in the survey file", field="band")
            index = _band_index(entry.band, descriptions, bands, path=path)
            da = da.isel(band=index)
        elif entry.band not in (None, 1, "1") and entry.band not in descriptions:
            raise FileInputError(path, f"has 1 band; band = {entry.band!r} does not exist", field="band")
        da = da.squeeze(drop=True).load()
        crs_text = entry.crs or (da.rio.crs.to_wkt() if da.rio.crs else None)
        crs = read_crs(crs_text, path=survey_path, field=f"{where} crs")
        x = np.asarray(da["x"].values, dtype=float)
        y = np.asarray(da["y"].values, dtype=float)
        arr = np.asarray(da.values, dtype=float)
    return crs, x, y, arr, ""


def _band_index(band, descriptions, bands, *, path) -> int:
    if isinstance(band, int) or (isinstance(band, str) and band.isdigit()):
        i = int(band)
        if not 1 <= i <= bands:
            raise FileInputError(path, f"band = {band} is outside 1-{bands}", field="band")
        return i - 1
    if band in descriptions:
        return descriptions.index(band)
    raise FileInputError(path, f"no band described {band!r} (bands: {', '.join(d or '?' for d in descriptions)})",
                         field="band")


def read_raster(entry, *, survey_path: Path, where: str) -> RasterLayer:
    """Read the raster named by ``entry`` (a validated :class:`~subsurf.site.schema.Raster`)."""
    quantity = entry.quantity
    path = (survey_path.parent / entry.file).resolve()
    if not path.is_file():
        raise fail(survey_path, f"{where} file", f"raster file not found: {path}")
    factor, offset = _unit_factor(entry, quantity, survey_path=survey_path, where=where)
    sd = 0.0
    if entry.sd is not None:
        sd = _difference(quantity, entry.sd, path=survey_path, field=f"{where} sd")
        _check_value(quantity, sd, path=survey_path, field=f"{where} sd", sd=True)
    suffix = path.suffix.lower()
    if suffix in (".nc", ".nc4", ".netcdf", ".cdf"):
        crs, x, y, arr, statement = _read_netcdf(path, entry, quantity, survey_path=survey_path, where=where)
    elif suffix in (".tif", ".tiff", ".gtiff"):
        crs, x, y, arr, statement = _read_geotiff(path, entry, survey_path=survey_path, where=where)
    else:
        raise fail(survey_path, f"{where} file", f"raster format {suffix!r} not supported; use GeoTIFF (.tif) "
                   "or NetCDF (.nc)")
    if arr.ndim != 2 or x.size < 2 or y.size < 2:
        raise FileInputError(path, f"expected a 2-D raster with at least 2x2 cells, got shape {arr.shape}"
                             + (" (reduce its other dimensions)" if arr.ndim > 2 else ""))
    values = arr * factor + offset
    finite = values[np.isfinite(values)]
    if finite.size == 0:
        raise FileInputError(path, "raster holds no finite values", field=entry.variable or quantity)
    q = QUANTITIES[quantity]
    if finite.min() < q.low or finite.max() > q.high:
        raise FileInputError(path, f"{quantity} values {finite.min():.4g} to {finite.max():.4g} (SI) leave the "
                             f"accepted range {q.low:g} to {q.high:g} ({q.si_unit}); check the 'unit' key",
                             field=entry.variable or quantity)
    return RasterLayer(path=path, quantity=quantity, crs=crs, x=x, y=y, values=values, sd=float(sd),
                       time=statement)


def raster_dims(da, *, path) -> tuple[str, str]:
    if da.ndim != 2:
        raise FileInputError(path, f"variable {da.name!r} must be 2-D (y, x), has dims {da.dims}"
                             + ("; reduce the time dimension with time/time_aggregate" if any(
                                 str(d).lower() in _TIME_DIMS for d in da.dims) else ""))
    for xd, yd in (("x", "y"), ("lon", "lat"), ("longitude", "latitude"), ("easting", "northing")):
        if xd in da.dims and yd in da.dims:
            return xd, yd
    raise FileInputError(path, f"cannot tell x and y in dims {da.dims}; name them x/y or lon/lat")
