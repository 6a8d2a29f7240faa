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
* converts the stored numbers from ``unit`` (else the file's own unit: NetCDF ``units``,
  GeoTIFF band unit; else the quantity's bare unit) to SI and checks the quantity's range;
* takes the CRS from the survey (``crs``), else the file (GeoTIFF CRS, CF grid_mapping
  ``crs_wkt``/``spatial_ref``), else, for lon/lat coordinates in degrees without either,
  WGS 84 (the CF convention for ``degrees_east``/``degrees_north``), with a note.

The opening and choosing is :mod:`subsurf.site.raster_sources`, shared with ``subsurf region``.
Where the raster covers only part of the site, :mod:`subsurf.site.grid` reports the
covered fraction and uses zones/defaults elsewhere (``NAME_source`` layer).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .._schema import fail
from ..errors import FileInputError, InputError
from ._values import _check_value, _difference
from .crs import read_crs
from .raster_sources import (
    CF_STANDARD_NAMES,
    GEOTIFF_SUFFIXES,
    NETCDF_SUFFIXES,
    RasterChoice,
    RasterSource,
    raster_dims,
    unit_to_si,
)
from .schema import QUANTITIES
from .vectors import note

__all__ = ["RasterLayer", "read_raster", "raster_dims", "CF_STANDARD_NAMES"]

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
    unit: str = ""  # unit the stored numbers were read in


def _unit(entry, picked, *, survey_path, where) -> tuple[str, float, float]:
    """(unit used, factor, offset): the survey's ``unit`` key, else the file's own unit, else the bare unit."""
    quantity = entry.quantity
    if entry.unit is not None:
        try:
            factor, offset = unit_to_si(entry.unit, quantity)
        except InputError:
            raise fail(survey_path, f"{where} unit", f"cannot read unit {entry.unit!r} as a "
                       f"{QUANTITIES[quantity].kind}") from None
        if picked.unit:
            try:
                stated = unit_to_si(picked.unit, quantity)
            except InputError:
                stated = None
            if stated != (factor, offset):
                note(f"{entry.file}: {picked.label} states units {picked.unit!r}; read in {entry.unit!r} "
                     f"as the survey file's unit key says")
        return entry.unit, factor, offset
    if picked.unit:
        try:
            return (picked.unit, *unit_to_si(picked.unit, quantity))
        except InputError:
            raise FileInputError(picked_path(entry, survey_path), f"{picked.label}: cannot read its units "
                                 f"{picked.unit!r} as a {QUANTITIES[quantity].kind}; give unit = \"...\" in "
                                 "the survey file", field="units") from None
    unit = QUANTITIES[quantity].default_unit
    return (unit, *unit_to_si(unit, quantity))


def picked_path(entry, survey_path: Path) -> Path:
    return (survey_path.parent / entry.file).resolve()


def read_raster(entry, *, survey_path: Path, where: str) -> RasterLayer:
    """Read the raster named by ``entry`` (a validated :class:`~subsurf.site.schema.Raster`)."""
    quantity = entry.quantity
    path = (survey_path.parent / entry.file).resolve()
    if not path.is_file():
        raise fail(survey_path, f"{where} file", f"raster file not found: {path}")
    sd = 0.0
    if entry.sd is not None:
        sd = _difference(quantity, entry.sd, path=survey_path, field=f"{where} sd")
        _check_value(quantity, sd, path=survey_path, field=f"{where} sd", sd=True)
    suffix = path.suffix.lower()
    if suffix not in NETCDF_SUFFIXES + GEOTIFF_SUFFIXES:
        raise fail(survey_path, f"{where} file", f"raster format {suffix!r} not supported; use GeoTIFF (.tif) "
                   "or NetCDF (.nc)")
    choice = RasterChoice(variable=entry.variable, band=entry.band, time=entry.time,
                          time_aggregate=entry.time_aggregate, unit=entry.unit)
    with RasterSource(path) as src:
        picked = src.pick(quantity, choice)
        unit, factor, offset = _unit(entry, picked, survey_path=survey_path, where=where)
        crs = read_crs(entry.crs or src.crs_text(picked), path=survey_path, field=f"{where} crs")
        da = picked.data.load()
        x = np.asarray(da[picked.xdim].values, dtype=float)
        y = np.asarray(da[picked.ydim].values, dtype=float)
        arr = np.asarray(da.transpose(picked.ydim, picked.xdim).values, dtype=float)
        statement = picked.time
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
                       time=statement, unit=unit)

