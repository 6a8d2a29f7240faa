"""Reading and validating survey files (TOML) and the inputs they refer to.

A survey file names the site outline, the coordinate reference system (CRS) of every
input, the working grid, the soil information (point samples in CSV, zones in GeoJSON,
rasters in NetCDF or GeoTIFF), the target, the antennas and optional scenarios.  The
schema is documented in ``surveys/README.md``.  Everything read here is converted to SI
and checked; every problem raises :class:`~subsurf.errors.FileInputError` naming the
file, row and field.  Nothing here computes physics: :mod:`subsurf.grid` puts the inputs
on a grid and :mod:`subsurf.feasibility` evaluates the chain.

Library choices: ``tomllib`` (standard library) for TOML; ``csv`` (standard library) so
that errors can name the exact row; shapely for polygon validity (it wraps GEOS, the
geometry engine most GIS software uses); pyproj for CRS parsing and the automatic UTM
zone (it wraps PROJ and the EPSG database); pint (via :mod:`subsurf.units`) for units.
"""

from __future__ import annotations

import csv
import json
import math
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import FileInputError, InputError
from ..units import parse_quantity

__all__ = [
    "QUANTITIES",
    "Quantity",
    "SampleSet",
    "ZoneSet",
    "RasterLayer",
    "TargetSpec",
    "Scenario",
    "Survey",
    "load_survey",
    "read_crs",
    "auto_utm_crs",
]


@dataclass(frozen=True)
class Quantity:
    """A soil quantity accepted in survey inputs: its Soil field, unit kind and range."""

    soil_field: str
    kind: str
    default_unit: str
    low: float
    high: float
    long_name: str
    si_unit: str


#: Soil quantities that samples, zones, rasters, defaults and scenarios may give.
#: A bare number is read in ``default_unit``; ranges are in SI.
QUANTITIES: dict[str, Quantity] = {
    "moisture": Quantity("moisture", "fraction", "dimensionless", 0.0, 0.7,
                         "volumetric water content", "1"),
    "pore_water_ec": Quantity("pore_water_ec25", "conductivity", "mS/m", 0.0, 25.0,
                              "pore-water electrical conductivity at 25 degC", "S m-1"),
    "salinity": Quantity("pore_water_salinity_psu", "salinity", "dimensionless", 0.0, 45.0,
                         "pore-water practical salinity", "1"),
    "clay": Quantity("clay", "fraction", "dimensionless", 0.0, 1.0, "clay mass fraction", "1"),
    "sand": Quantity("sand", "fraction", "dimensionless", 0.0, 1.0, "sand mass fraction", "1"),
    "temperature": Quantity("temp_c", "temperature", "degC", -5.0, 50.0, "ground temperature", "degC"),
    "bulk_density": Quantity("bulk_density", "density", "g/cm**3", 800.0, 2300.0,
                             "dry bulk density", "kg m-3"),
}

_SD_SUFFIX = "_sd"
_TARGET_KINDS = ("planar", "point", "line")


@dataclass(frozen=True)
class SampleSet:
    """Point soil samples read from a CSV file (coordinates in ``crs``, values in SI)."""

    path: Path
    crs: object  # pyproj.CRS
    x: np.ndarray
    y: np.ndarray
    rows: np.ndarray  # file line number of each sample (header is line 1)
    values: dict[str, np.ndarray]
    sd: dict[str, np.ndarray]


@dataclass(frozen=True)
class ZoneSet:
    """Soil zones read from GeoJSON: one shapely polygon per zone with its properties (SI)."""

    path: Path
    crs: object
    names: list[str]
    geometries: list  # shapely geometries in ``crs``
    values: list[dict[str, float]]
    sd: list[dict[str, float]]
    textures: list[str | None]


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


@dataclass(frozen=True)
class TargetSpec:
    """What is sought: kind, depth to its top, size and material."""

    kind: str
    depth_m: float
    size_m: float
    material: str


@dataclass(frozen=True)
class Scenario:
    """A named modification of the soil inputs: ``set`` replaces, ``scale`` multiplies, ``offset`` adds."""

    name: str
    description: str = ""
    set: dict[str, float] = field(default_factory=dict)
    scale: dict[str, float] = field(default_factory=dict)
    offset: dict[str, float] = field(default_factory=dict)


@dataclass(frozen=True)
class Survey:
    """A validated survey: everything :func:`subsurf.grid.build_grid` and the map need."""

    path: Path
    name: str
    description: str
    outline: object  # shapely Polygon/MultiPolygon in outline_crs
    outline_crs: object
    grid_crs: object
    grid_crs_source: str  # "given" or "auto-utm"
    cell_size_m: float
    soil_model: str
    texture: str | None
    defaults: dict[str, float]
    default_sd: dict[str, float]
    samples: list[SampleSet]
    zones: list[ZoneSet]
    rasters: list[RasterLayer]
    target: TargetSpec
    antennas: list[str]
    scenarios: list[Scenario]
    draws: int
    seed: int
    max_cells: int

    def describe(self) -> dict:
        """Plain summary of the inputs for reports and JSON (no arrays)."""
        return {
            "survey": str(self.path),
            "name": self.name,
            "description": self.description,
            "outline_crs": self.outline_crs.to_string(),
            "grid_crs": self.grid_crs.to_string(),
            "grid_crs_name": self.grid_crs.name,
            "grid_crs_source": self.grid_crs_source,
            "cell_size_m": self.cell_size_m,
            "soil_model": self.soil_model,
            "texture": self.texture,
            "defaults": dict(self.defaults),
            "samples": [{"file": str(s.path), "count": int(s.x.size), "quantities": sorted(s.values)}
                        for s in self.samples],
            "zones": [{"file": str(z.path), "names": list(z.names)} for z in self.zones],
            "rasters": [{"file": str(r.path), "quantity": r.quantity} for r in self.rasters],
            "target": {"kind": self.target.kind, "depth_m": self.target.depth_m,
                       "size_m": self.target.size_m, "material": self.target.material},
            "antennas": list(self.antennas),
            "scenarios": [{"name": s.name, "description": s.description} for s in self.scenarios],
            "monte_carlo_draws": self.draws,
            "monte_carlo_seed": self.seed,
        }


# --- small readers ---------------------------------------------------------------------

def read_crs(value, *, path, field: str):
    """Parse an EPSG code (``"EPSG:4326"`` or ``4326``) or WKT into a ``pyproj.CRS``."""
    from pyproj import CRS
    from pyproj.exceptions import CRSError

    if value is None or (isinstance(value, str) and not value.strip()):
        raise FileInputError(path, "a CRS is required (an EPSG code such as 'EPSG:4326', or WKT)",
                             field=field)
    try:
        crs = CRS.from_user_input(value)
    except CRSError:
        shown = str(value) if len(str(value)) < 60 else str(value)[:57] + "..."
        raise FileInputError(path, f"unknown CRS {shown!r}; give an EPSG code such as 'EPSG:4326' "
                             "or a WKT string", field=field) from None
    if not (crs.is_geographic or crs.is_projected):
        raise FileInputError(path, f"CRS {crs.name!r} is not a horizontal (geographic or projected) CRS; "
                             "give one whose axes are longitude/latitude or easting/northing", field=field)
    return crs


def auto_utm_crs(lon: float, lat: float):
    """The WGS 84 / UTM zone CRS holding (lon, lat).

    The zone follows the UTM grid definition: 6-degree zones numbered eastward from
    180 W, with the exceptions of the UTM/MGRS grid (zone 32 widened to 3-12 E between
    56 and 64 N for south-western Norway; zones 31, 33, 35 and 37 only, 9 or 12 degrees
    wide, between 72 and 84 N over Svalbard).  North of the equator (latitude >= 0) the
    northern-hemisphere code 326zz is used, south of it 327zz; the CRS itself comes from
    pyproj's EPSG database.  A site straddling a zone boundary uses the zone of the
    point given (the site centre); UTM stays usable a few degrees beyond its zone.

    References
    ----------
    NIMA (2001). *Datums, Ellipsoids, Grids, and Grid Reference Systems*, Technical
    Manual 8358.1 (UTM zones and their exceptions; cited from memory).
    """
    from pyproj import CRS

    if not (math.isfinite(lon) and math.isfinite(lat) and -180.0 <= lon <= 180.0 and -80.0 <= lat <= 84.0):
        raise InputError(f"site centre lon={lon:.6g}, lat={lat:.6g} is outside the UTM zones "
                         "(latitude -80 to 84 degrees); give the grid CRS explicitly")
    zone = min(int(math.floor((lon + 180.0) / 6.0)) + 1, 60)
    if 56.0 <= lat < 64.0 and 3.0 <= lon < 12.0:
        zone = 32  # south-western Norway
    elif lat >= 72.0 and 0.0 <= lon < 42.0:
        zone = 31 if lon < 9.0 else 33 if lon < 21.0 else 35 if lon < 33.0 else 37  # Svalbard
    return CRS.from_epsg((32600 if lat >= 0 else 32700) + zone)


def _quantity(name: str, value, *, path, field: str, row: int | None = None) -> float:
    q = QUANTITIES[name]
    if isinstance(value, bool):
        raise FileInputError(path, f"expected a number for {name}, got {value!r}", row=row, field=field)
    try:
        v = parse_quantity(value, q.kind, default_unit=q.default_unit, name=field)
    except InputError as exc:
        raise FileInputError(path, str(exc), row=row, field=field) from None
    if not math.isfinite(v):
        raise FileInputError(path, f"{name} must be a finite number, got {value!r}", row=row, field=field)
    return v


def _difference(name: str, value, *, path, field: str, row: int | None = None) -> float:
    """A spread or shift of quantity ``name`` in SI: like :func:`_quantity`, but a temperature
    difference carries no offset ("1 K" and "1.8 degF" are both 1 degC of difference)."""
    if QUANTITIES[name].kind != "temperature" or not isinstance(value, str):
        return _quantity(name, value, path=path, field=field, row=row)
    m = re.fullmatch(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*", value)
    if m is None or not m.group(2):
        return _quantity(name, value, path=path, field=field, row=row)
    unit = m.group(2)
    return (_quantity(name, f"{m.group(1)} {unit}", path=path, field=field, row=row)
            - _quantity(name, f"0 {unit}", path=path, field=field, row=row))


def _check_value(name: str, v: float, *, path, field: str, row: int | None = None, sd: bool = False):
    q = QUANTITIES[name]
    if sd:
        if v < 0:
            raise FileInputError(path, f"a standard deviation must be >= 0, got {v:g}", row=row, field=field)
        return
    if not (q.low <= v <= q.high):
        raise FileInputError(path, f"{name} = {v:.6g} (SI) is outside the accepted range "
                             f"{q.low:g} to {q.high:g} ({q.si_unit})", row=row, field=field)


def _texture(name, *, path, field: str) -> dict:
    from ..ground.presets import texture_preset

    try:
        return texture_preset(str(name))
    except InputError as exc:
        raise FileInputError(path, str(exc), field=field) from None


def _quantity_table(table: dict, *, path, where: str) -> tuple[dict, dict]:
    values, sds = {}, {}
    for key, raw in table.items():
        base = key[: -len(_SD_SUFFIX)] if key.endswith(_SD_SUFFIX) else key
        if base not in QUANTITIES:
            raise FileInputError(path, f"unknown soil quantity {key!r}; allowed: "
                                 f"{', '.join(QUANTITIES)} (and each with '{_SD_SUFFIX}')",
                                 field=f"{where}.{key}")
        is_sd = key.endswith(_SD_SUFFIX)
        v = (_difference if is_sd else _quantity)(base, raw, path=path, field=f"{where}.{key}")
        _check_value(base, v, path=path, field=f"{where}.{key}", sd=is_sd)
        (sds if is_sd else values)[base] = v
    return values, sds


def _parse_header(name: str, *, path) -> tuple[str, str | None]:
    """``'moisture [%]'`` -> ('moisture', '%'); ``'x'`` -> ('x', None)."""
    text = name.strip()
    if "[" in text:
        if not text.endswith("]"):
            raise FileInputError(path, f"column header {name!r}: write the unit in brackets, "
                                 "e.g. 'moisture [%]'", row=1, field=name)
        base, unit = text[:-1].split("[", 1)
        return base.strip(), unit.strip()
    return text, None


def _read_samples(entry: dict, *, survey_path: Path, index: int) -> SampleSet:
    where = f"soil.samples[{index}]"
    if "file" not in entry:
        raise FileInputError(survey_path, "missing 'file' (CSV of soil samples)", field=f"{where}.file")
    path = (survey_path.parent / entry["file"]).resolve()
    crs = read_crs(entry.get("crs"), path=survey_path, field=f"{where}.crs")
    xcol = entry.get("x_column", "x")
    ycol = entry.get("y_column", "y")
    try:
        with path.open(newline="", encoding="utf-8-sig") as fh:
            reader = csv.reader(fh)
            header = next(reader, None)
            body = list(reader)
    except FileNotFoundError:
        raise FileInputError(survey_path, f"sample file not found: {path}", field=f"{where}.file") from None
    if not header:
        raise FileInputError(path, "empty file; expected a header row and sample rows")
    cols = [_parse_header(h, path=path) for h in header]
    names = [c[0] for c in cols]
    for need in (xcol, ycol):
        if need not in names:
            raise FileInputError(path, f"missing coordinate column {need!r} (columns: {', '.join(names)})",
                                 row=1, field=need)
    quantity_cols = []
    for i, (name, unit) in enumerate(cols):
        if name in (xcol, ycol, "id", "name", "note"):
            continue
        base = name[: -len(_SD_SUFFIX)] if name.endswith(_SD_SUFFIX) else name
        if base not in QUANTITIES:
            raise FileInputError(path, f"unknown column {name!r}; allowed: {', '.join(QUANTITIES)} "
                                 f"(each optionally with '{_SD_SUFFIX}'), id, name, note", row=1, field=name)
        if unit is not None:
            try:
                parse_quantity(f"1 {unit}", QUANTITIES[base].kind, default_unit=unit, name=name)
            except InputError:
                raise FileInputError(path, f"cannot read unit {unit!r} as a {QUANTITIES[base].kind}",
                                     row=1, field=header[i].strip()) from None
        quantity_cols.append((i, name, base, unit))
    if not any(not n.endswith(_SD_SUFFIX) for _, n, _, _ in quantity_cols):
        raise FileInputError(path, f"no soil quantity columns; give at least one of {', '.join(QUANTITIES)}",
                             row=1)
    if not body:
        raise FileInputError(path, "no sample rows after the header")
    xs, ys, rows = [], [], []
    vals: dict[str, list] = {n: [] for _, n, _, _ in quantity_cols}
    ix, iy = names.index(xcol), names.index(ycol)
    for r, line in enumerate(body, start=2):
        if not any(c.strip() for c in line):
            continue
        if len(line) != len(header):
            raise FileInputError(path, f"expected {len(header)} values, found {len(line)}", row=r)
        for idx, key in ((ix, xcol), (iy, ycol)):
            try:
                v = float(line[idx])
            except ValueError:
                raise FileInputError(path, f"cannot read coordinate {line[idx]!r} as a number",
                                     row=r, field=key) from None
            if not math.isfinite(v):
                raise FileInputError(path, f"coordinate must be finite, got {line[idx]!r}", row=r, field=key)
            (xs if key == xcol else ys).append(v)
        for i, name, base, unit in quantity_cols:
            raw = line[i].strip()
            if not raw or raw.lower() in ("nan", "na", "n/a", "null"):
                raise FileInputError(path, f"missing value ({raw or 'empty'}); every sample needs every "
                                     "column of its file (put partial samples in a separate file)",
                                     row=r, field=header[i].strip())
            text = raw if unit is None else f"{raw} {unit}"
            try:
                num = float(raw)
            except ValueError:
                raise FileInputError(path, f"cannot read {raw!r} as a number", row=r,
                                     field=header[i].strip()) from None
            if not math.isfinite(num):
                raise FileInputError(path, f"value must be finite, got {raw!r}", row=r, field=header[i].strip())
            v = _quantity(base, text, path=path, field=header[i].strip(), row=r)
            if unit is not None and QUANTITIES[base].kind == "temperature" and name.endswith(_SD_SUFFIX):
                # a temperature spread is a difference: no offset
                v = _quantity(base, f"{raw} {unit}", path=path, field=name, row=r) - _quantity(
                    base, f"0 {unit}", path=path, field=name, row=r)
            _check_value(base, v, path=path, field=header[i].strip(), row=r, sd=name.endswith(_SD_SUFFIX))
            vals[name].append(v)
        rows.append(r)
    values = {n: np.asarray(v, dtype=float) for n, v in vals.items() if not n.endswith(_SD_SUFFIX)}
    sds = {n[: -len(_SD_SUFFIX)]: np.asarray(v, dtype=float) for n, v in vals.items() if n.endswith(_SD_SUFFIX)}
    for base in sds:
        if base not in values:
            raise FileInputError(path, f"column '{base}{_SD_SUFFIX}' has no matching '{base}' column",
                                 row=1, field=f"{base}{_SD_SUFFIX}")
    return SampleSet(path=path, crs=crs, x=np.asarray(xs), y=np.asarray(ys), rows=np.asarray(rows),
                     values=values, sd=sds)


def _geojson_geometries(path: Path, *, survey_path: Path, field: str) -> list[tuple[object, dict]]:
    """Read GeoJSON (FeatureCollection, Feature or bare geometry) into (shapely geometry, properties)."""
    import shapely.geometry

    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise FileInputError(survey_path, f"file not found: {path}", field=field) from None
    except json.JSONDecodeError as exc:
        raise FileInputError(path, f"not valid JSON: {exc.msg} (line {exc.lineno})") from None
    if not isinstance(data, dict) or "type" not in data:
        raise FileInputError(path, "not a GeoJSON object (no 'type')")
    if data["type"] == "FeatureCollection":
        feats = data.get("features") or []
    elif data["type"] == "Feature":
        feats = [data]
    else:
        feats = [{"type": "Feature", "geometry": data, "properties": {}}]
    out = []
    for i, feat in enumerate(feats):
        geom = feat.get("geometry")
        fld = f"features[{i}].geometry"
        if not geom:
            raise FileInputError(path, "feature has no geometry", field=fld)
        if geom.get("type") not in ("Polygon", "MultiPolygon"):
            raise FileInputError(path, f"geometry type {geom.get('type')!r} is not a Polygon or MultiPolygon",
                                 field=fld)
        try:
            shape = shapely.geometry.shape(geom)
        except Exception as exc:  # noqa: BLE001 - shapely raises several kinds
            raise FileInputError(path, f"cannot read polygon: {exc}", field=fld) from None
        _check_polygon(shape, path=path, field=fld)
        out.append((shape, feat.get("properties") or {}))
    if not out:
        raise FileInputError(path, "no polygon features")
    return out


def _check_polygon(shape, *, path, field: str) -> None:
    import shapely

    if shape.is_empty:
        raise FileInputError(path, "polygon is empty", field=field)
    if not shape.is_valid:
        reason = shapely.is_valid_reason(shape)
        raise FileInputError(path, f"polygon is not valid ({reason}); fix self-intersections "
                             "or ring order in a GIS", field=field)
    if shape.area <= 0:
        raise FileInputError(path, "polygon has zero area", field=field)


def _read_zones(entry: dict, *, survey_path: Path, index: int) -> ZoneSet:
    where = f"soil.zones[{index}]"
    if "file" not in entry:
        raise FileInputError(survey_path, "missing 'file' (GeoJSON of soil zones)", field=f"{where}.file")
    path = (survey_path.parent / entry["file"]).resolve()
    crs = read_crs(entry.get("crs"), path=survey_path, field=f"{where}.crs")
    feats = _geojson_geometries(path, survey_path=survey_path, field=f"{where}.file")
    names, geoms, values, sds, textures = [], [], [], [], []
    for i, (shape, props) in enumerate(feats):
        props = dict(props)
        name = str(props.pop("name", f"zone {i + 1}"))
        texture = props.pop("texture", None)
        props.pop("description", None)
        try:
            v, s = _quantity_table(props, path=path, where=f"features[{i}].properties")
        except FileInputError:
            raise
        if texture is not None:
            preset = _texture(texture, path=path, field=f"features[{i}].properties.texture")
            for q in ("sand", "clay", "bulk_density"):
                v.setdefault(q, preset[q])
        names.append(name)
        geoms.append(shape)
        values.append(v)
        sds.append(s)
        textures.append(None if texture is None else str(texture))
    return ZoneSet(path=path, crs=crs, names=names, geometries=geoms, values=values, sd=sds, textures=textures)


def _read_raster(entry: dict, *, survey_path: Path, index: int) -> RasterLayer:
    where = f"soil.rasters[{index}]"
    for key in ("file", "quantity"):
        if key not in entry:
            raise FileInputError(survey_path, f"missing '{key}'", field=f"{where}.{key}")
    quantity = entry["quantity"]
    if quantity not in QUANTITIES:
        raise FileInputError(survey_path, f"unknown quantity {quantity!r}; allowed: {', '.join(QUANTITIES)}",
                             field=f"{where}.quantity")
    path = (survey_path.parent / entry["file"]).resolve()
    if not path.exists():
        raise FileInputError(survey_path, f"raster file not found: {path}", field=f"{where}.file")
    unit = entry.get("unit", QUANTITIES[quantity].default_unit)
    try:
        factor = parse_quantity(f"1 {unit}", QUANTITIES[quantity].kind, default_unit=unit, name="unit")
        offset = parse_quantity(f"0 {unit}", QUANTITIES[quantity].kind, default_unit=unit, name="unit")
    except InputError:
        raise FileInputError(survey_path, f"cannot read unit {unit!r} as a {QUANTITIES[quantity].kind}",
                             field=f"{where}.unit") from None
    factor -= offset
    sd = 0.0
    if "sd" in entry:
        sd = _difference(quantity, entry["sd"], path=survey_path, field=f"{where}.sd")
        _check_value(quantity, sd, path=survey_path, field=f"{where}.sd", sd=True)
    suffix = path.suffix.lower()
    if suffix in (".nc", ".nc4", ".netcdf"):
        import xarray as xr

        with xr.open_dataset(path) as ds:
            var = entry.get("variable", quantity)
            if var not in ds:
                raise FileInputError(path, f"no variable {var!r} (variables: {', '.join(map(str, ds.data_vars))})",
                                     field="variable")
            da = ds[var].load()
            crs_text = entry.get("crs")
            if crs_text is None:
                gm = da.attrs.get("grid_mapping")
                if gm and gm in ds:
                    crs_text = ds[gm].attrs.get("crs_wkt") or ds[gm].attrs.get("spatial_ref")
            crs = read_crs(crs_text, path=survey_path, field=f"{where}.crs")
            xdim, ydim = _raster_dims(da, path=path)
            x = np.asarray(da[xdim].values, dtype=float)
            y = np.asarray(da[ydim].values, dtype=float)
            arr = np.asarray(da.transpose(ydim, xdim).values, dtype=float)
    elif suffix in (".tif", ".tiff"):
        try:
            import rioxarray  # noqa: F401 - registers the .rio accessor
        except ImportError:
            raise FileInputError(path, "reading GeoTIFF needs the optional geo extra: pip install 'subsurf[geo]'") \
                from None
        import xarray as xr

        da = xr.open_dataarray(path, engine="rasterio").squeeze(drop=True).load()
        crs_text = entry.get("crs") or (da.rio.crs.to_wkt() if da.rio.crs else None)
        crs = read_crs(crs_text, path=survey_path, field=f"{where}.crs")
        x = np.asarray(da["x"].values, dtype=float)
        y = np.asarray(da["y"].values, dtype=float)
        arr = np.asarray(da.values, dtype=float)
        nod = da.rio.nodata
        if nod is not None:
            arr = np.where(arr == nod, np.nan, arr)
    else:
        raise FileInputError(survey_path, f"raster format {suffix!r} not supported; use NetCDF (.nc) or "
                             "GeoTIFF (.tif, with the geo extra)", field=f"{where}.file")
    if arr.ndim != 2 or x.size < 2 or y.size < 2:
        raise FileInputError(path, f"expected a 2-D raster with at least 2x2 cells, got shape {arr.shape}")
    values = arr * factor + offset
    finite = values[np.isfinite(values)]
    if finite.size == 0:
        raise FileInputError(path, "raster holds no finite values", field=entry.get("variable", quantity))
    q = QUANTITIES[quantity]
    if finite.min() < q.low or finite.max() > q.high:
        raise FileInputError(path, f"{quantity} values {finite.min():.4g} to {finite.max():.4g} (SI) leave the "
                             f"accepted range {q.low:g} to {q.high:g} ({q.si_unit}); check the 'unit' key",
                             field=entry.get("variable", quantity))
    return RasterLayer(path=path, quantity=quantity, crs=crs, x=x, y=y, values=values, sd=float(sd))


def _raster_dims(da, *, path) -> tuple[str, str]:
    if da.ndim != 2:
        raise FileInputError(path, f"variable {da.name!r} must be 2-D (y, x), has dims {da.dims}")
    for xd, yd in (("x", "y"), ("lon", "lat"), ("longitude", "latitude"), ("easting", "northing")):
        if xd in da.dims and yd in da.dims:
            return xd, yd
    raise FileInputError(path, f"cannot tell x and y in dims {da.dims}; name them x/y or lon/lat")


# --- the survey file -------------------------------------------------------------------

def _bbox_polygon(bbox, *, path, field: str):
    import shapely.geometry

    if not (isinstance(bbox, list) and len(bbox) == 4):
        raise FileInputError(path, "bbox must be [xmin, ymin, xmax, ymax]", field=field)
    try:
        xmin, ymin, xmax, ymax = (float(v) for v in bbox)
    except (TypeError, ValueError):
        raise FileInputError(path, f"bbox values must be numbers, got {bbox!r}", field=field) from None
    if not (xmax > xmin and ymax > ymin):
        raise FileInputError(path, f"bbox must have xmax > xmin and ymax > ymin, got {bbox!r}", field=field)
    return shapely.geometry.box(xmin, ymin, xmax, ymax)


def _length(value, *, path, field: str) -> float:
    try:
        v = parse_quantity(value, "length", default_unit="m", name=field)
    except InputError as exc:
        raise FileInputError(path, str(exc), field=field) from None
    if not (v > 0 and math.isfinite(v)):
        raise FileInputError(path, f"must be > 0 m, got {value!r}", field=field)
    return v


def _integer(value, *, path, field: str, low: int, high: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int):
        raise FileInputError(path, f"expected a whole number from {low} to {high}, got {value!r}", field=field)
    if not low <= value <= high:
        raise FileInputError(path, f"must be between {low} and {high}, got {value}", field=field)
    return value


def _table(data: dict, key: str, *, path, where: str) -> dict:
    value = data.get(key, {})
    if not isinstance(value, dict):
        raise FileInputError(path, f"expected a table [{where}], got {value!r}", field=where)
    return value


def _table_list(data: dict, key: str, *, path, where: str) -> list:
    value = data.get(key, [])
    if not (isinstance(value, list) and all(isinstance(v, dict) for v in value)):
        raise FileInputError(path, f"expected an array of tables [[{where}]] (double brackets)", field=where)
    return value


def load_survey(path) -> Survey:
    """Read and validate a survey file and every input it names.

    Parameters
    ----------
    path : str or Path
        The survey TOML file (schema in ``surveys/README.md``).

    Returns
    -------
    Survey
        Validated inputs in SI units with their CRSs.

    Raises
    ------
    FileInputError
        With the file, row and field of the first problem found.
    """
    import shapely

    path = Path(path).resolve()
    try:
        with path.open("rb") as fh:
            data = tomllib.load(fh)
    except FileNotFoundError:
        raise InputError(f"survey file not found: {path}") from None
    except tomllib.TOMLDecodeError as exc:
        raise FileInputError(path, f"not valid TOML: {exc}") from None

    site = data.get("site")
    if not isinstance(site, dict):
        raise FileInputError(path, "missing [site] table (name, outline or bbox, crs)", field="site")
    outline_crs = read_crs(site.get("crs"), path=path, field="site.crs")
    if "outline" in site and "bbox" in site:
        raise FileInputError(path, "give either site.outline or site.bbox, not both", field="site")
    if "outline" in site:
        opath = (path.parent / site["outline"]).resolve()
        feats = _geojson_geometries(opath, survey_path=path, field="site.outline")
        outline = shapely.union_all([g for g, _ in feats])
        _check_polygon(outline, path=opath, field="geometry")
    elif "bbox" in site:
        outline = _bbox_polygon(site["bbox"], path=path, field="site.bbox")
    else:
        raise FileInputError(path, "site needs an outline (GeoJSON file) or a bbox", field="site")
    if outline_crs.is_geographic:
        minx, miny, maxx, maxy = outline.bounds
        if minx < -180 or maxx > 180 or miny < -90 or maxy > 90:
            raise FileInputError(path, f"outline bounds {outline.bounds} are not longitude/latitude although "
                                 f"site.crs is geographic ({outline_crs.name}); check the CRS", field="site.crs")

    grid = _table(data, "grid", path=path, where="grid")
    crs_value = grid.get("crs", "auto-utm")
    if crs_value == "auto-utm":
        from pyproj import Transformer

        cx, cy = outline.centroid.x, outline.centroid.y
        lon, lat = Transformer.from_crs(outline_crs, "EPSG:4326", always_xy=True).transform(cx, cy)
        try:
            grid_crs = auto_utm_crs(lon, lat)
        except InputError as exc:
            raise FileInputError(path, str(exc), field="grid.crs") from None
        source = "auto-utm"
    else:
        grid_crs = read_crs(crs_value, path=path, field="grid.crs")
        source = "given"
    if not grid_crs.is_projected:
        raise FileInputError(path, f"grid CRS {grid_crs.name!r} is not projected; the grid needs metres "
                             "(give a projected EPSG code or 'auto-utm')", field="grid.crs")
    unit = grid_crs.axis_info[0].unit_name if grid_crs.axis_info else "metre"
    if unit not in ("metre", "meter"):
        raise FileInputError(path, f"grid CRS axis unit is {unit!r}; use a CRS in metres", field="grid.crs")
    if "cell_size" not in grid:
        raise FileInputError(path, "missing grid.cell_size (e.g. '2 m')", field="grid.cell_size")
    cell = _length(grid["cell_size"], path=path, field="grid.cell_size")
    max_cells = _integer(grid.get("max_cells", 4_000_000), path=path, field="grid.max_cells", low=4,
                         high=10**12)

    soil = _table(data, "soil", path=path, where="soil")
    model = soil.get("model", "crim")
    if model not in ("crim", "peplinski", "topp"):
        raise FileInputError(path, f"unknown soil model {model!r}; allowed: crim, peplinski, topp",
                             field="soil.model")
    texture = soil.get("texture")
    defaults, default_sd = _quantity_table(_table(soil, "defaults", path=path, where="soil.defaults"), path=path,
                                           where="soil.defaults")
    if texture is not None:
        preset = _texture(texture, path=path, field="soil.texture")
        for q in ("sand", "clay", "bulk_density"):
            defaults.setdefault(q, preset[q])
    samples = [_read_samples(e, survey_path=path, index=i) for i, e in
               enumerate(_table_list(soil, "samples", path=path, where="soil.samples"))]
    zones = [_read_zones(e, survey_path=path, index=i) for i, e in
             enumerate(_table_list(soil, "zones", path=path, where="soil.zones"))]
    rasters = [_read_raster(e, survey_path=path, index=i) for i, e in
               enumerate(_table_list(soil, "rasters", path=path, where="soil.rasters"))]
    given = set(defaults) | {k for s in samples for k in s.values} | {k for z in zones for v in z.values
                                                                     for k in v} | {r.quantity for r in rasters}
    if "moisture" not in given:
        raise FileInputError(path, "no moisture anywhere: give it in soil.defaults, samples, zones or rasters",
                             field="soil")

    tgt = data.get("target")
    if not isinstance(tgt, dict):
        raise FileInputError(path, "missing [target] table (kind, depth, size, material)", field="target")
    kind = tgt.get("kind")
    if kind not in _TARGET_KINDS:
        raise FileInputError(path, f"target kind {kind!r} not one of {', '.join(_TARGET_KINDS)}",
                             field="target.kind")
    for key in ("depth", "material"):
        if key not in tgt:
            raise FileInputError(path, f"missing target.{key}", field=f"target.{key}")
    depth = _length(tgt["depth"], path=path, field="target.depth")
    size = _length(tgt.get("size", "0.1 m"), path=path, field="target.size") if kind != "planar" else \
        (_length(tgt["size"], path=path, field="target.size") if "size" in tgt else 1.0)
    target = TargetSpec(kind=kind, depth_m=depth, size_m=size, material=str(tgt["material"]))

    ant = data.get("antennas", {})
    names = ant.get("names") if isinstance(ant, dict) else ant
    if not names or not isinstance(names, list) or not all(isinstance(n, str) for n in names):
        raise FileInputError(path, "antennas.names must be a list of catalogue names", field="antennas.names")
    if len(set(names)) != len(names):
        raise FileInputError(path, "antenna names repeat", field="antennas.names")

    scenarios = []
    for i, sc in enumerate(_table_list(data, "scenarios", path=path, where="scenarios")):
        where = f"scenarios[{i}]"
        if "name" not in sc:
            raise FileInputError(path, "scenario needs a name", field=f"{where}.name")
        parts = {}
        for op in ("set", "scale", "offset"):
            tab = _table(sc, op, path=path, where=f"{where}.{op}")
            vals = {}
            for key, raw in tab.items():
                if key not in QUANTITIES:
                    raise FileInputError(path, f"unknown soil quantity {key!r}; allowed: {', '.join(QUANTITIES)}",
                                         field=f"{where}.{op}.{key}")
                if op == "scale":
                    try:
                        vals[key] = float(raw)
                    except (TypeError, ValueError):
                        raise FileInputError(path, f"scale factor must be a number, got {raw!r}",
                                             field=f"{where}.{op}.{key}") from None
                    if not (vals[key] >= 0 and math.isfinite(vals[key])):
                        raise FileInputError(path, f"scale factor must be >= 0, got {raw!r}",
                                             field=f"{where}.{op}.{key}")
                else:
                    v = (_difference if op == "offset" else _quantity)(key, raw, path=path,
                                                                       field=f"{where}.{op}.{key}")
                    if op == "set":
                        _check_value(key, v, path=path, field=f"{where}.{op}.{key}")
                    vals[key] = v
            parts[op] = vals
        scenarios.append(Scenario(name=str(sc["name"]), description=str(sc.get("description", "")), **parts))
    if not scenarios:
        scenarios = [Scenario(name="base", description="inputs as given")]
    if len({s.name for s in scenarios}) != len(scenarios):
        raise FileInputError(path, "scenario names repeat", field="scenarios")

    mc = _table(data, "monte_carlo", path=path, where="monte_carlo")
    draws = _integer(mc.get("draws", 400), path=path, field="monte_carlo.draws", low=10, high=100_000)
    seed = _integer(mc.get("seed", 20240601), path=path, field="monte_carlo.seed", low=0, high=2**63 - 1)

    return Survey(path=path, name=str(site.get("name", path.stem)), description=str(site.get("description", "")),
                  outline=outline, outline_crs=outline_crs, grid_crs=grid_crs, grid_crs_source=source,
                  cell_size_m=cell, soil_model=model, texture=texture, defaults=defaults, default_sd=default_sd,
                  samples=samples, zones=zones, rasters=rasters, target=target, antennas=list(names),
                  scenarios=scenarios, draws=draws, seed=seed, max_cells=max_cells)
