"""Soil rasters opened lazily: GeoTIFF (rioxarray / GDAL) and CF NetCDF (xarray), one reader for map and region.

``subsurf map`` ([[soil.rasters]], one quantity per entry, loaded whole: a survey site is
small) and ``subsurf region`` (``--soil``, every quantity of one file, read tile by tile
as dask chunks: a region can be 20000 x 20000 cells) open their rasters here, so both
make the same choices in the same words:

* **which data**: in NetCDF the variable named by the user, else the quantity's own
  name, else the variable whose CF ``standard_name`` is the quantity's (e.g.
  ``volume_fraction_of_condensed_water_in_soil`` for moisture), else (when allowed) the
  only gridded variable; in a GeoTIFF the band given (1-based number or its description),
  else the band described by the quantity's name, else the only band; a multi-band file
  without a choice is one line naming the file and listing its bands;
* **time**: a time dimension is reduced by choosing the nearest step to a date, or by an
  aggregate (mean, median, min, max) over the steps; with several steps and no choice, the
  mean, with a note; the statement of what was done is returned to be shown;
* **units**: the unit the user gives, else the file's own (NetCDF ``units``, GeoTIFF band
  unit; UDUNITS products such as ``S m-1`` are read), else a fallback the caller names;
* **CRS**: the one the user declares, else the file's (GeoTIFF CRS, CF grid_mapping
  ``crs_wkt``/``spatial_ref``), else, for lon/lat coordinates in degrees, WGS 84 (the CF
  reading of ``degrees_east``/``degrees_north``), with a note; else none (the caller refuses).

Library choice: rioxarray (rasterio/GDAL) for GeoTIFF, because it gives the bands as one
dask-chunked xarray object with the file's nodata masked, and rasterio itself for the band
descriptions and units; xarray with netCDF4 for NetCDF.
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import FileInputError, InputError
from .schema import QUANTITIES
from .vectors import note

__all__ = ["RasterChoice", "RasterSource", "Picked", "raster_dims", "unit_to_si", "udunits_to_pint",
           "CF_STANDARD_NAMES", "NETCDF_SUFFIXES", "GEOTIFF_SUFFIXES", "TIME_AGGREGATES"]

#: CF standard names (CF standard name table) that identify a soil quantity in NetCDF.
CF_STANDARD_NAMES = {"moisture": ("volume_fraction_of_condensed_water_in_soil",
                                  "volume_fraction_of_water_in_soil"),
                     "temperature": ("soil_temperature",)}
NETCDF_SUFFIXES = (".nc", ".nc4", ".netcdf", ".cdf")
GEOTIFF_SUFFIXES = (".tif", ".tiff", ".gtiff")
TIME_AGGREGATES = ("mean", "median", "min", "max")
_TIME_DIMS = ("time", "t", "date", "band_time")
#: GDAL block cache (MB) while a GeoTIFF is read tile by tile
_GDAL_CACHE_MB = 8

#: how the user makes each choice, worded for a survey file (the map) by default
SURVEY_HINTS = {
    "variable": 'give variable = "..." in the survey file',
    "band": 'choose one with band = N (1-{n}) or band = "description" in the survey file',
    "time": 'choose with time = "YYYY-MM-DD" or time_aggregate',
    "time_keys": "time/time_aggregate",
}


@dataclass(frozen=True)
class RasterChoice:
    """What the user chose for one quantity of a raster (every field optional)."""

    variable: str | None = None  # NetCDF variable
    band: int | str | None = None  # GeoTIFF band: 1-based number or description
    time: str | None = None  # nearest time step to this date/time
    time_aggregate: str | None = None  # or combine the steps: mean, median, min, max
    unit: str | None = None  # unit of the stored numbers (overrides the file's)


@dataclass
class Picked:
    """One quantity's data from a raster: lazy (y, x) DataArray in the file's units, and what was chosen."""

    data: object  # xarray.DataArray, dims (y, x) as named in the file
    xdim: str
    ydim: str
    label: str  # "variable 'vwc'" or "band 2 (EC)"
    key: str | int  # the variable name, or the 1-based band number
    unit: str  # unit stated by the file ("" when none)
    time: str  # how a time dimension was reduced ("" when there was none)


def udunits_to_pint(unit: str) -> str:
    """CF/UDUNITS products with signed exponents ("S m-1", "kg m-3") as pint text ("S/m", "kg/m**3")."""
    num, den = [], []
    for tok in unit.split():
        m = re.fullmatch(r"([A-Za-z%]+)(-?\d+)?", tok)
        if not m:
            return unit
        base, exp = m.group(1), int(m.group(2) or 1)
        (den if exp < 0 else num).append(base if abs(exp) == 1 else f"{base}**{abs(exp)}")
    if not den:
        return unit
    return "*".join(num or ["1"]) + "/" + "/".join(den)


def unit_to_si(unit: str, quantity: str) -> tuple[float, float]:
    """(factor, offset) taking numbers stored in ``unit`` to SI for ``quantity``; InputError if unreadable."""
    from ..units import parse_quantity

    q = QUANTITIES[quantity]
    text = udunits_to_pint(str(unit).strip())
    if text in ("", "1", udunits_to_pint(q.si_unit)) or (
            q.si_unit == "1" and text in ("m3/m3", "m**3/m**3", "fraction", "dimensionless")):
        return 1.0, 0.0
    try:
        one = parse_quantity(f"1 {text}", q.kind, default_unit=text, name="units")
        zero = parse_quantity(f"0 {text}", q.kind, default_unit=text, name="units")
    except InputError:
        raise InputError(f"cannot read unit {unit!r} as a {q.kind} ({quantity})") from None
    return one - zero, zero


def raster_dims(da, *, path) -> tuple[str, str]:
    """(x dim, y dim) of a 2-D raster variable: x/y, lon/lat, longitude/latitude or easting/northing."""
    if da.ndim != 2:
        raise FileInputError(path, f"variable {da.name!r} must be 2-D (y, x), has dims {da.dims}"
                             + ("; reduce the time dimension with time/time_aggregate" if any(
                                 str(d).lower() in _TIME_DIMS for d in da.dims) else ""))
    return _xy_dims(da, path=path)


def _xy_dims(da, *, path) -> tuple[str, str]:
    for xd, yd in (("x", "y"), ("lon", "lat"), ("longitude", "latitude"), ("easting", "northing")):
        if xd in da.dims and yd in da.dims:
            return xd, yd
    raise FileInputError(path, f"cannot tell x and y in dims {da.dims}; name them x/y or lon/lat")


def _short(exc) -> str:
    return " ".join(str(exc).split())[:160]


class RasterSource:
    """A GeoTIFF or NetCDF soil raster, opened lazily (dask chunks of ``chunk`` cells, or whole when None).

    Use as a context manager; :meth:`pick` gives one quantity, :meth:`crs` the CRS.
    """

    def __init__(self, path, *, chunk: int | None = None, hints: dict | None = None):
        self.path = Path(path)
        self.chunk = chunk
        self.hints = {**SURVEY_HINTS, **(hints or {})}
        suffix = self.path.suffix.lower()
        if not self.path.exists():
            raise FileInputError(self.path, "raster file not found")
        if self.path.is_dir():
            raise FileInputError(self.path, "is a folder, not a raster file (GeoTIFF .tif or NetCDF .nc)")
        if suffix in NETCDF_SUFFIXES:
            self.kind = "netcdf"
            self._open_netcdf()
        elif suffix in GEOTIFF_SUFFIXES:
            self.kind = "geotiff"
            self._open_geotiff()
        else:
            raise FileInputError(self.path, f"raster format {suffix!r} not supported; use GeoTIFF (.tif) "
                                 "or NetCDF (.nc)")

    # -- opening -------------------------------------------------------------------------
    def _open_netcdf(self):
        import xarray as xr

        try:
            if self.chunk is not None:  # netCDF-C's default per-variable cache would grow with the region
                from ..io.netcdf import limit_read_chunk_cache

                limit_read_chunk_cache(self.path, int(self.chunk))
            # engine named: guessing loads every backend plugin (rioxarray, dask.array)
            self.ds = xr.open_dataset(self.path, engine="netcdf4", chunks={} if self.chunk else None)
        except (OSError, ValueError, RuntimeError) as exc:
            raise FileInputError(self.path, f"cannot read as NetCDF: {_short(exc)}") from None

    def _open_geotiff(self):
        if self.chunk is not None:
            # GDAL's block cache (default 5 % of the machine's memory) would fill with the region read tile by
            # tile; each tile reads its own blocks once, so a small cache loses nothing (benchmarks/bench_scale.py
            # --from-geotiff, 2048x2048: peak 564 MiB with 64 MB, 514-517 MiB with 8 MB, the same CPU time).
            # Read by GDAL when it first allocates the cache; a value the user set in the environment is kept.
            os.environ.setdefault("GDAL_CACHEMAX", str(_GDAL_CACHE_MB))
        import rasterio
        import rioxarray

        try:
            with rasterio.open(self.path) as src:
                self.descriptions = [d or "" for d in src.descriptions]
                self.band_units = [u or "" for u in src.units]
                self.file_crs = src.crs.to_wkt() if src.crs else None
                self.nodata = src.nodata
            chunks = {"band": 1, "y": int(self.chunk), "x": int(self.chunk)} if self.chunk else None
            self.da = rioxarray.open_rasterio(self.path, mask_and_scale=True, chunks=chunks)  # nodata, scale, offset
        except Exception as exc:  # noqa: BLE001 - rasterio raises RasterioIOError and friends
            raise FileInputError(self.path, f"cannot read as GeoTIFF: {_short(exc)}") from None

    def close(self):
        (self.ds if self.kind == "netcdf" else self.da).close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    # -- what is in the file -------------------------------------------------------------
    def bands_text(self) -> str:
        return ", ".join(f"{i + 1}" + (f" ({d})" if d else "") for i, d in enumerate(self.descriptions))

    def unused(self, keys) -> list[str]:
        """Gridded variables or bands (as labels) not among ``keys`` (variable names, band numbers)."""
        if self.kind == "netcdf":
            return [repr(str(v)) for v in self.ds.data_vars if self.ds[v].ndim >= 2 and v not in keys]
        return [f"{i + 1}" + (f" ({d})" if d else "") for i, d in enumerate(self.descriptions) if i + 1 not in keys]

    def names(self) -> list[str]:
        """NetCDF data variables, or GeoTIFF band descriptions (numbers where undescribed)."""
        if self.kind == "netcdf":
            return [str(v) for v in self.ds.data_vars]
        return [d or str(i + 1) for i, d in enumerate(self.descriptions)]

    def find(self, quantity: str) -> str | int | None:
        """The variable (NetCDF) or 1-based band (GeoTIFF) that names ``quantity`` itself, if any."""
        wanted = {quantity, *CF_STANDARD_NAMES.get(quantity, ())}
        if self.kind == "netcdf":
            if quantity in self.ds.data_vars:
                return quantity
            by_name = [str(v) for v in self.ds.data_vars if self.ds[v].attrs.get("standard_name") in wanted]
            return by_name[0] if len(by_name) == 1 else None
        hits = [i + 1 for i, d in enumerate(self.descriptions) if d.strip().lower() in wanted]
        return hits[0] if len(hits) == 1 else None

    # -- one quantity --------------------------------------------------------------------
    def pick(self, quantity: str, choice: RasterChoice, *, only_one_ok: bool = True) -> Picked:
        """The data of ``quantity`` as chosen (time reduced), lazy when the source is chunked."""
        if self.kind == "netcdf":
            name = self._netcdf_variable(quantity, choice, only_one_ok=only_one_ok)
            da, label, unit = self.ds[name], f"variable {name!r}", str(self.ds[name].attrs.get("units", "")).strip()
            if choice.band is not None:
                raise FileInputError(self.path, "is NetCDF: choose a variable, not a band", field="band")
        else:
            index = self._band(quantity, choice, only_one_ok=only_one_ok)
            da = self.da.isel(band=index, drop=True)
            d = self.descriptions[index]
            label, unit = f"band {index + 1}" + (f" ({d})" if d else ""), self.band_units[index]
            if choice.variable is not None:
                raise FileInputError(self.path, "is a GeoTIFF: choose a band, not a variable", field="variable")
        da, statement = self._reduce_time(da, choice)
        extra = [d for d in da.dims if d not in _xy_dims(da, path=self.path)]
        for d in extra:  # length-1 leading dims (a single level, a single band_time) are dropped
            if da.sizes[d] != 1:
                raise FileInputError(self.path, f"{label} has dims {da.dims}, expected 2-D (y, x)"
                                     + ("; reduce the time dimension with " + self.hints["time_keys"]
                                        if str(d).lower() in _TIME_DIMS else ""), field=quantity)
            da = da.isel({d: 0}, drop=True)
        xdim, ydim = raster_dims(da, path=self.path)
        key = name if self.kind == "netcdf" else index + 1
        return Picked(data=da, xdim=xdim, ydim=ydim, label=label, key=key, unit=unit, time=statement)

    def _netcdf_variable(self, quantity, choice, *, only_one_ok):
        ds = self.ds
        if choice.variable is not None:
            if choice.variable not in ds:
                raise FileInputError(self.path, f"no variable {choice.variable!r} (variables: "
                                     f"{', '.join(map(str, ds.data_vars))})", field="variable")
            return choice.variable
        found = self.find(quantity)
        if found is not None:
            return found
        gridded = [str(v) for v in ds.data_vars if ds[v].ndim >= 2]
        if only_one_ok and len(gridded) == 1:
            note(f"{self.path.name}: {quantity} read from its only gridded variable {gridded[0]!r}")
            return gridded[0]
        raise FileInputError(self.path, f"which variable holds {quantity}? none is named so (variables: "
                             f"{', '.join(map(str, ds.data_vars))}); {self.hints['variable'].format(q=quantity)}",
                             field="variable")

    def _band(self, quantity, choice, *, only_one_ok) -> int:
        bands = len(self.descriptions)
        band = choice.band
        if band is not None:
            if isinstance(band, int) or (isinstance(band, str) and band.strip().isdigit()):
                i = int(band)
                if not 1 <= i <= bands:
                    raise FileInputError(self.path, f"band {band} is outside 1-{bands} (bands: {self.bands_text()})",
                                         field="band")
                return i - 1
            if band in self.descriptions:
                return self.descriptions.index(band)
            raise FileInputError(self.path, f"no band described {band!r} (bands: {self.bands_text()})", field="band")
        found = self.find(quantity)
        if found is not None:
            return int(found) - 1
        if bands == 1 and only_one_ok:
            return 0
        raise FileInputError(self.path, f"has {bands} bands ({self.bands_text()}); "
                             f"{self.hints['band'].format(n=bands, q=quantity)}", field="band")

    def _reduce_time(self, da, choice) -> tuple[object, str]:
        """Select or aggregate a time dimension; returns the DataArray and a statement of what was done."""
        path = self.path
        tdim = next((d for d in da.dims if str(d).lower() in _TIME_DIMS), None)
        if tdim is None:
            if choice.time is not None or choice.time_aggregate is not None:
                raise FileInputError(path, f"has no time dimension (dims {da.dims}); remove {self.hints['time_keys']}")
            return da, ""
        n = da.sizes[tdim]
        if choice.time is not None:
            if choice.time_aggregate is not None:
                raise FileInputError(path, f"give either {self.hints['time_keys'].replace('/', ' or ')}, not both")
            import pandas as pd

            try:
                picked = da.sel({tdim: pd.Timestamp(choice.time)}, method="nearest")
            except (ValueError, TypeError, KeyError) as exc:
                raise FileInputError(path, f"cannot select time {choice.time!r}: {_short(exc)}",
                                     field=str(tdim)) from None
            when = str(picked[tdim].values)[:19]
            return picked.drop_vars(tdim, errors="ignore"), f"time step {when} (nearest to {choice.time})"
        how = choice.time_aggregate or "mean"
        if how not in TIME_AGGREGATES:
            raise InputError(f"time aggregate {how!r} is not one of {', '.join(TIME_AGGREGATES)}")
        if getattr(da, "chunks", None):
            da = da.chunk({tdim: -1})  # median needs every step of a cell in one chunk
        reduced = getattr(da, how)(dim=tdim, skipna=True)
        times = da[tdim].values if tdim in da.coords else np.arange(n)
        span = f"{str(times[0])[:19]} to {str(times[-1])[:19]}" if n > 1 else str(times[0])[:19]
        statement = f"{how} over {n} time steps ({span})"
        if choice.time_aggregate is None and n > 1:
            note(f"{path.name}: {statement}; {self.hints['time']}")
        return reduced, statement

    # -- CRS -----------------------------------------------------------------------------
    def crs_text(self, picked: Picked) -> str | None:
        """The file's own CRS (WKT or EPSG text), or EPSG:4326 for lon/lat degrees without one (noted), or None."""
        if self.kind == "geotiff":
            return self.file_crs
        da = picked.data
        gm = da.attrs.get("grid_mapping") or da.encoding.get("grid_mapping")
        if gm and gm in self.ds:
            text = self.ds[gm].attrs.get("crs_wkt") or self.ds[gm].attrs.get("spatial_ref")
            if text:
                return text
            try:
                from pyproj import CRS

                return CRS.from_cf(dict(self.ds[gm].attrs)).to_wkt()
            except Exception:  # noqa: BLE001 - pyproj raises CRSError and KeyError for incomplete mappings
                pass
        if picked.xdim in ("lon", "longitude"):
            units = str(self.ds[picked.xdim].attrs.get("units", "degrees_east")) if picked.xdim in self.ds else ""
            if units.startswith("degree"):
                note(f"{self.path.name}: no grid_mapping; lon/lat in degrees read as WGS 84 (EPSG:4326)")
                return "EPSG:4326"
        return None

