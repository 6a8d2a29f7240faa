"""The soil raster of ``subsurf region``: one GeoTIFF or NetCDF file, read lazily as dask chunks.

:func:`open_region` opens the file through :class:`subsurf.site.raster_sources.RasterSource`
(the reader ``subsurf map`` uses for its rasters, so both choose variables, bands, time
steps, units and the CRS the same way) and gives every soil quantity it finds as a
dask-backed (y, x) DataArray in SI units, ``chunk`` cells on a side: nothing is read until
a tile is computed, so a 20000 x 20000 raster never sits in memory.

* **quantities**: each of :data:`subsurf.site.schema.QUANTITIES` is looked up by the
  user's mapping (``--soil-var moisture=vwc``: a NetCDF variable, or a GeoTIFF band number
  or description), else by its own name or CF standard name (variable name, or band
  description); ``moisture`` is required (for a one-band GeoTIFF or a NetCDF with one
  gridded variable, that band/variable is moisture); variables and bands that name no
  quantity are listed in a note;
* **time**: one choice for the file (``--soil-time`` or ``--soil-time-aggregate``), stated;
* **CRS**: ``--soil-crs``, else the file's, else WGS 84 for lon/lat degrees (noted); a file
  with none of these is refused, since the map could not be placed;
* **gaps**: cells without moisture stay empty (no data) in the map; cells with moisture but
  without another quantity of the file take the texture preset's value (or the ground
  model's default) when ``fill_gaps`` (:func:`gap_fill_values`), and the map's
  ``soil_default_used`` layer says where (CF flag_masks).
"""

from __future__ import annotations

import os

import numpy as np

from ..errors import FileInputError, InputError
from .raster_sources import RasterChoice, RasterSource, unit_to_si
from .schema import QUANTITIES
from .vectors import note

__all__ = ["open_region", "gap_fill_values", "REGION_HINTS"]

#: how the user makes each choice on the ``subsurf region`` command line
REGION_HINTS = {
    "variable": "map it with --soil-var {q}=NAME",
    "band": "choose with --soil-var {q}=N (band number 1-{n} or its description), "
            "e.g. --soil-var moisture=1 --soil-var clay=3",
    "time": "choose with --soil-time YYYY-MM-DD or --soil-time-aggregate mean|median|min|max",
    "time_keys": "--soil-time/--soil-time-aggregate",
}


def gap_fill_values(texture: str | None, quantities) -> dict:
    """SI value that fills a cell's missing ``quantity`` (moisture excepted): what the chain uses without it.

    Sand, clay and bulk density come from the texture preset (``configs/textures.toml``),
    the pore-water EC from the ground model's default (:data:`subsurf.ground.models.DEFAULT_PORE_WATER_EC25`),
    the salinity from that EC, the temperature from :class:`subsurf.ground.Soil`'s default 20 degC.
    A quantity with no such value is left out (its gaps stay empty).
    """
    from ..ground.conductivity import salinity_from_ec25
    from ..ground.models import DEFAULT_PORE_WATER_EC25, Soil
    from ..ground.presets import texture_preset

    preset = texture_preset(texture) if texture else {}
    known = {"sand": preset.get("sand"), "clay": preset.get("clay"), "bulk_density": preset.get("bulk_density"),
             "pore_water_ec": DEFAULT_PORE_WATER_EC25,
             "salinity": float(salinity_from_ec25(DEFAULT_PORE_WATER_EC25)),
             "temperature": Soil.__dataclass_fields__["temp_c"].default}
    return {q: float(known[q]) for q in quantities if q != "moisture" and known.get(q) is not None}


def _parse_choices(variables: dict | None, path) -> dict:
    out = {}
    for q, name in (variables or {}).items():
        if q not in QUANTITIES:
            raise InputError(f"--soil-var {q}={name}: {q!r} is not a soil quantity; allowed: {', '.join(QUANTITIES)}")
        out[q] = name
    return out


def _coord_attrs(crs, axis: str) -> dict:
    if crs.is_geographic:
        return ({"standard_name": "longitude", "long_name": "longitude", "units": "degrees_east", "axis": "X"}
                if axis == "x" else
                {"standard_name": "latitude", "long_name": "latitude", "units": "degrees_north", "axis": "Y"})
    unit = crs.axis_info[0].unit_name if crs.axis_info else "metre"
    units = {"metre": "m", "meter": "m", "US survey foot": "US_survey_foot", "foot": "ft"}.get(unit, unit)
    name = "projection_x_coordinate" if axis == "x" else "projection_y_coordinate"
    return {"standard_name": name, "long_name": "easting" if axis == "x" else "northing", "units": units,
            "axis": axis.upper()}


def open_region(path, *, chunk: int = 512, quantities=None, variables: dict | None = None,
                units: dict | None = None, time: str | None = None, time_aggregate: str | None = None,
                crs=None, hints: dict | None = None):
    """Open a regional soil raster (GeoTIFF or NetCDF) lazily, in ``chunk`` x ``chunk`` cell tiles.

    Parameters
    ----------
    path : path-like
        GeoTIFF (bands) or NetCDF (variables) holding soil quantities on a regular grid.
    chunk : int
        Tile edge in cells.
    quantities : sequence of str, optional
        Quantities to use (default: every quantity found).
    variables : dict, optional
        ``{quantity: NetCDF variable, or GeoTIFF band number/description}`` (``--soil-var``).
    units : dict, optional
        ``{quantity: unit of the stored numbers}``, overriding the file's own (``--soil-unit``).
    time, time_aggregate : str, optional
        Nearest time step to this date, or mean/median/min/max over the steps.
    crs : str or pyproj.CRS, optional
        CRS of the file, when it states none (or states a wrong one).
    hints : dict, optional
        Wording of the choices in messages (default :data:`REGION_HINTS`).

    Returns
    -------
    xarray.Dataset
        Dask-backed quantities (survey names, SI) on dims (y, x) with x/y coordinates, a
        ``crs`` grid-mapping variable; ``attrs["source"]`` is the path and
        ``attrs["inputs"]`` a list of ``{quantity, read_from, units, time}`` saying what
        was read, ``attrs["crs_source"]`` where the CRS came from, ``attrs["unused"]`` the gridded
        variables or bands that named no quantity (also a note).
    """
    import xarray as xr
    from pyproj import CRS
    from pyproj.exceptions import CRSError

    from .crs import horizontal_crs_problem
    from .grid import crs_variable

    path = os.fspath(path)
    if int(chunk) < 16:
        raise InputError(f"chunk must be at least 16 cells, got {chunk}")
    hints = {**REGION_HINTS, **(hints or {})}
    mapping = _parse_choices(variables, path)
    for q in units or {}:
        if q not in QUANTITIES:
            raise InputError(f"--soil-unit {q}=...: {q!r} is not a soil quantity; allowed: {', '.join(QUANTITIES)}")
    with_time = {"time": time, "time_aggregate": time_aggregate}
    src = RasterSource(path, chunk=int(chunk), hints=hints)
    wanted = list(QUANTITIES) if quantities is None else list(quantities)
    found = {}
    for q in wanted:
        if q in mapping:
            key = "band" if src.kind == "geotiff" else "variable"
            found[q] = RasterChoice(**{key: mapping[q]}, **with_time)
        elif src.find(q) is not None or (q == "moisture"):
            found[q] = RasterChoice(**with_time)
        elif quantities is not None:
            raise FileInputError(path, f"no variable or band holds {q} (has {', '.join(src.names())}); "
                                 f"{hints['variable'].format(q=q)}", field=q)
    if "moisture" not in found:
        raise InputError("the region needs moisture")
    out, inputs, keys, crs_text = {}, [], set(), None
    for q, choice in found.items():
        picked = src.pick(q, choice, only_one_ok=(q == "moisture"))
        keys.add(picked.key)
        if q == "moisture":
            crs_text = src.crs_text(picked)
        unit = (units or {}).get(q) or picked.unit
        try:
            factor, offset = unit_to_si(unit, q)
        except InputError as exc:
            raise FileInputError(path, f"{picked.label}: {exc}; give --soil-unit {q}=UNIT", field=q) from None
        da = picked.data.transpose(picked.ydim, picked.xdim).rename({picked.xdim: "x", picked.ydim: "y"})
        da = da.reset_coords(drop=True).chunk({"y": int(chunk), "x": int(chunk)}).astype(float)
        if (factor, offset) != (1.0, 0.0):  # in float64: float32 storage must not round the SI values again
            da = da * factor + offset
        da.attrs = {"long_name": QUANTITIES[q].long_name, "units": QUANTITIES[q].si_unit, "grid_mapping": "crs"}
        out[q] = da
        inputs.append({"quantity": q, "read_from": picked.label, "units": unit or f"none stated, read as "
                       f"{QUANTITIES[q].si_unit}", "time": picked.time})
    unused = src.unused(keys)
    if unused:
        what = "band(s)" if src.kind == "geotiff" else "variable(s)"
        note(f"{os.path.basename(path)}: {what} {', '.join(unused)} name no soil quantity and are not used; "
             f"{hints['variable'].format(q='QUANTITY')}")
    shapes = {q: da.shape for q, da in out.items()}
    if len(set(shapes.values())) != 1:
        raise FileInputError(path, f"the quantities have different grids {shapes}; give them on one grid")
    crs_source = "the file"
    if crs is not None:
        crs_text, crs_source = crs, "--soil-crs"
    elif crs_text == "EPSG:4326" and src.kind == "netcdf":
        crs_source = "lon/lat degrees without a grid mapping: WGS 84"
    if crs_text is None:
        raise FileInputError(path, "states no CRS (no CF grid_mapping, no GeoTIFF CRS, coordinates not lon/lat "
                             "degrees); give it with --soil-crs EPSG:NNNN")
    try:
        the_crs = CRS.from_user_input(crs_text)
    except CRSError:
        raise FileInputError(path, f"unknown CRS {str(crs_text)[:60]!r}; give it with --soil-crs EPSG:NNNN") from None
    problem = horizontal_crs_problem(the_crs)
    if problem:
        raise FileInputError(path, problem)
    ref = next(iter(out.values()))
    x = np.asarray(ref["x"].values, dtype=float)
    y = np.asarray(ref["y"].values, dtype=float)
    if x.size < 2 or y.size < 2:
        raise FileInputError(path, f"expected a raster of at least 2x2 cells, got {y.size}x{x.size}")
    gm_attrs, _ = crs_variable(the_crs)
    result = xr.Dataset(out).assign_coords(x=("x", x, _coord_attrs(the_crs, "x")),
                                           y=("y", y, _coord_attrs(the_crs, "y")))
    result["crs"] = ((), np.int32(0), gm_attrs)
    result.attrs = {"source": path, "inputs": inputs, "crs_source": crs_source, "format": src.kind,
                    "unused": [("band " if src.kind == "geotiff" else "variable ") + u for u in unused]}
    return result
