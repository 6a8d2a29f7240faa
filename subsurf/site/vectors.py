"""Polygon vector files of a survey (site outlines, soil zones, soil-survey polygons) through GDAL/OGR.

Any polygon format GDAL's vector drivers read is accepted; the ones a GIS user hands over
and the tests exercise are GeoPackage (``.gpkg``), ESRI Shapefile (``.shp`` with its
``.dbf``/``.prj``), KML (``.kml``) and GeoJSON (``.geojson``/``.json``, RFC 7946).  The
file is read with pyogrio (vectorised bindings to GDAL/OGR, the reader most GIS software
shares), so encodings (a Shapefile's ``.cpg``), layers and each format's own CRS are read
as GDAL reads them.

The file's own CRS is checked against the survey's declaration
-------------------------------------------------------------
* GeoPackage and Shapefile (``.prj``) carry a CRS: it must be the declared one (compared
  with pyproj, axis order ignored, or by their common EPSG code); a mismatch is one line
  naming both.
* KML is always WGS 84 longitude/latitude (OGC 07-147r2, KML 2.2, section 6.2): the
  declaration must be a WGS 84 geographic CRS.
* GeoJSON: RFC 7946 (section 4) fixes WGS 84 longitude/latitude and drops the ``crs``
  member, but files written before it (the 2008 GeoJSON specification) name their CRS in
  a top-level ``crs`` member; when one is present it is honoured and checked like a
  GeoPackage's.  Without one, GDAL would report WGS 84 whatever the numbers are, so the
  survey's declaration is taken (projected GeoJSON without ``crs`` is common practice).

Every problem (missing or unreadable file, no polygon, several layers without a choice,
CRS mismatch) is one :class:`~subsurf.errors.FileInputError` line naming the file.
"""

from __future__ import annotations

import json
import math
import warnings
from pathlib import Path

import numpy as np

from .._schema import fail
from ..errors import FileInputError
from .crs import horizontal_crs_problem

__all__ = ["read_polygons", "check_polygon", "same_crs", "InputNote", "note", "VECTOR_SUFFIXES",
           "check_lonlat_under_projected"]

#: File name endings read as vector files (anything else is still tried through GDAL).
VECTOR_SUFFIXES = (".geojson", ".json", ".gpkg", ".shp", ".kml", ".kmz", ".fgb", ".gml")


class InputNote(UserWarning):
    """Something in an input was accepted but the user should know (ignored columns, defaults used ...)."""


def note(message: str) -> None:
    """Issue an :class:`InputNote` (shown as a ``note:`` line by the command line)."""
    warnings.warn(InputNote(message), stacklevel=3)


def same_crs(a, b) -> bool:
    """Whether two pyproj CRSs are the same (axis order ignored; or the same EPSG code)."""
    if a.equals(b, ignore_axis_order=True):
        return True
    ea, eb = a.to_epsg(min_confidence=70), b.to_epsg(min_confidence=70)
    return ea is not None and ea == eb


def _crs_label(crs) -> str:
    code = crs.to_epsg(min_confidence=70)
    return f"EPSG:{code} ({crs.name})" if code else repr(crs.name)


def check_polygon(shape, *, path, field: str) -> None:
    """Refuse an empty, invalid or zero-area polygon, naming the file and feature."""
    import shapely

    if shape.is_empty:
        raise FileInputError(path, "polygon is empty", field=field)
    if not shape.is_valid:
        reason = shapely.is_valid_reason(shape)
        raise FileInputError(path, f"polygon is not valid ({reason}); fix self-intersections "
                             "or ring order in a GIS", field=field)
    if shape.area <= 0:
        raise FileInputError(path, "polygon has zero area", field=field)


def _geojson_crs_member(path: Path):
    """The legacy top-level ``crs`` member of a GeoJSON file (None when absent), as pyproj input."""
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except UnicodeDecodeError:
        raise FileInputError(path, "not a UTF-8 text (GeoJSON) file") from None
    except json.JSONDecodeError as exc:
        raise FileInputError(path, f"not valid JSON: {exc.msg} (line {exc.lineno}); expected a GeoJSON "
                             "FeatureCollection") from None
    if not isinstance(data, dict) or "type" not in data:
        raise FileInputError(path, "not a GeoJSON object (no 'type')")
    member = data.get("crs")
    if member is None:
        return None
    props = member.get("properties", {}) if isinstance(member, dict) else {}
    name = props.get("name") or props.get("code") if isinstance(props, dict) else None
    if not name:
        raise FileInputError(path, f"GeoJSON 'crs' member {member!r} is not a named CRS; expected "
                             "{'type': 'name', 'properties': {'name': 'EPSG:27700'}} or no 'crs' member",
                             field="crs")
    return str(name)


def _file_crs(path: Path, meta_crs, suffix: str):
    """The CRS a vector file states about itself (None: it states none), as a pyproj CRS."""
    from pyproj import CRS
    from pyproj.exceptions import CRSError

    if suffix in (".geojson", ".json"):
        text = _geojson_crs_member(path)
        if text is None:
            return None
        given = text
        try:
            crs = CRS.from_user_input(text)
        except CRSError:
            raise FileInputError(path, f"GeoJSON 'crs' member names an unknown CRS {text!r}", field="crs") from None
    elif suffix in (".kml", ".kmz"):
        return CRS.from_epsg(4326)
    elif not meta_crs:
        return None
    else:
        given = None  # GDAL's WKT: the name says enough
        try:
            crs = CRS.from_user_input(meta_crs)
        except CRSError:  # pragma: no cover - GDAL reported a CRS PROJ cannot read
            return None
    problem = horizontal_crs_problem(crs, given)
    if problem:
        raise FileInputError(path, problem, field="crs")
    return crs


def _projected_bounds(crs):
    """(west, south, east, north) of ``crs``'s area of use in its own coordinates (pyproj), or None if unknown."""
    from pyproj import Transformer

    area = crs.area_of_use
    if area is None:
        return None
    try:
        t = Transformer.from_crs("EPSG:4326", crs, always_xy=True)
        b = t.transform_bounds(area.west, area.south, area.east, area.north, densify_pts=21)
    except Exception:  # noqa: BLE001 - PROJ cannot always project a whole area of use
        return None
    return b if all(math.isfinite(v) for v in b) else None


def check_lonlat_under_projected(path, bounds, declared_crs, *, where: str) -> None:
    """Refuse (or note, when both readings are plausible) lon/lat numbers under a projected declaration.

    ``bounds`` = (xmin, ymin, xmax, ymax) of the file's coordinates as written.  When the
    numbers fit longitude/latitude (|x| <= 180, |y| <= 90) but the declared CRS is projected,
    the two readings are compared with the CRS's area of use (pyproj ``area_of_use``, in
    lon/lat, and projected to the CRS's own coordinates): outside it as declared is one line
    naming the file and both readings (whether or not the lon/lat reading falls inside it);
    inside it both ways (a CRS whose valid area reaches its false origin) is a note; where
    PROJ knows no area of use, a whole extent under one declared unit (a survey area under a
    metre across is not a survey area) is taken as lon/lat.
    """
    if not getattr(declared_crs, "is_projected", False):
        return
    x0, y0, x1, y1 = (float(v) for v in bounds)
    if not all(math.isfinite(v) for v in (x0, y0, x1, y1)):
        return
    if not (-180 <= x0 <= x1 <= 180 and -90 <= y0 <= y1 <= 90):
        return
    area = declared_crs.area_of_use
    proj = _projected_bounds(declared_crs)
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
    label = _crs_label(declared_crs)
    if area is None or proj is None:
        as_lonlat = max(x1 - x0, y1 - y0) < 1.0
        as_projected = not as_lonlat
    else:
        as_lonlat = area.west <= cx <= area.east and area.south <= cy <= area.north
        as_projected = proj[0] <= x0 and x1 <= proj[2] and proj[1] <= y0 and y1 <= proj[3]
    read_as = (f"read as {label} they lie {'inside' if as_projected else 'outside'} its valid area"
               + (f" (x {proj[0]:.0f} to {proj[2]:.0f}, y {proj[1]:.0f} to {proj[3]:.0f})" if proj else "")
               + f"; read as longitude/latitude (WGS 84, EPSG:4326) ({cx:.5f}, {cy:.5f}) lies "
               + ("inside" if as_lonlat else "outside") + " it")
    if not as_projected:  # impossible as declared, plausible as lon/lat (here or elsewhere): both readings named
        raise FileInputError(path, f"the coordinates look like longitude/latitude but {where} declares {label}: "
                             f"{read_as}; declare crs = \"EPSG:4326\" or reproject the file")
    if as_lonlat and as_projected:
        note(f"{Path(path).name}: the coordinates could be longitude/latitude or {label} ({read_as}); "
             f"taken as {label}, as declared")


def _refuse_lonlat_under_projected(path: Path, geoms, declared_crs, field: str) -> None:
    """:func:`check_lonlat_under_projected` on the bounds of a vector file's geometries."""
    import shapely

    valid = [g for g in geoms if g is not None and not g.is_empty]
    if not valid:
        return
    bounds = shapely.total_bounds(np.asarray(valid, dtype=object))
    check_lonlat_under_projected(path, bounds, declared_crs, where=f"the survey ({field.replace(' file', '')} crs)")


def _choose_layer(path: Path, layer: str | None, *, survey_path: Path, field: str) -> str | None:
    import pyogrio

    try:
        layers = pyogrio.list_layers(path)
    except Exception as exc:  # noqa: BLE001 - GDAL raises DataSourceError and friends
        raise FileInputError(path, f"cannot read as a vector file (GeoPackage, Shapefile, KML or GeoJSON): "
                             f"{_gdal_message(exc)}") from None
    names = [str(n) for n, _ in layers]
    if layer is not None:
        if layer not in names:
            raise fail(survey_path, field.replace(" file", " layer"),
                       f"{path.name} has no layer {layer!r} (layers: {', '.join(names)})")
        return layer
    if len(names) > 1:
        polys = [str(n) for n, g in layers if g is None or "Polygon" in str(g)]
        if len(polys) == 1:
            return polys[0]
        raise FileInputError(path, f"holds {len(names)} layers ({', '.join(names)}); name one with "
                             f"layer = \"...\" in the survey file ({field.replace(' file', '')})")
    return names[0] if names else None


def _gdal_message(exc) -> str:
    text = " ".join(str(exc).split())
    return text if len(text) < 200 else text[:197] + "..."


def _clean(value):
    """A field value as a plain Python value, None for null/NaN."""
    if value is None:
        return None
    if isinstance(value, (np.generic,)):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, str) and not value.strip():
        return None
    return value


def read_polygons(path, *, survey_path: Path, field: str, declared_crs, layer: str | None = None
                  ) -> list[tuple[object, dict]]:
    """Read every polygon feature of a vector file as (shapely geometry, properties).

    Parameters
    ----------
    path : Path
        The vector file (resolved).
    survey_path : Path
        The survey file (named in errors about its keys).
    field : str
        Key path of the file in the survey (``"[site] outline"``, ``"[[soil.zones]] no. 1 file"``).
    declared_crs : pyproj.CRS
        The CRS the survey declares for the file; the file's own CRS must agree.
    layer : str, optional
        Layer to read from a multi-layer file (GeoPackage, KML with folders).

    Returns
    -------
    list of (shapely geometry, dict)
        Polygons/MultiPolygons (coordinates in ``declared_crs``) and their attributes with
        nulls dropped.  Points and lines are refused.
    """
    import shapely
    from pyogrio import raw

    path = Path(path)
    if not path.exists():
        raise fail(survey_path, field, f"file not found: {path}")
    if path.is_dir() and path.suffix.lower() not in (".gdb",):
        raise fail(survey_path, field, f"{path} is a folder, not a vector file")
    suffix = path.suffix.lower()
    if suffix in (".geojson", ".json"):
        _geojson_crs_member(path)  # readable JSON first: its error is clearer than GDAL's
    chosen = _choose_layer(path, layer, survey_path=survey_path, field=field)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)  # GDAL's notes about e.g. measured geometries
            meta, _, wkb, field_data = raw.read(path, layer=chosen, force_2d=True)
    except Exception as exc:  # noqa: BLE001 - GDAL raises several kinds
        raise FileInputError(path, f"cannot read as a vector file (GeoPackage, Shapefile, KML or GeoJSON): "
                             f"{_gdal_message(exc)}") from None
    own = _file_crs(path, meta.get("crs"), suffix)
    if own is not None and not same_crs(own, declared_crs):
        raise FileInputError(path, f"the file's own CRS is {_crs_label(own)} but the survey declares "
                             f"{_crs_label(declared_crs)} ({field.replace(' file', '')} crs); correct the "
                             "declaration or reproject the file")
    names = [str(n) for n in meta.get("fields", [])]
    if wkb is None or len(wkb) == 0:
        raise FileInputError(path, "no polygon features")
    geoms = shapely.from_wkb(np.asarray(wkb, dtype=object))
    if own is None:  # GeoJSON without a 'crs' member, a Shapefile without .prj: only the declaration speaks
        _refuse_lonlat_under_projected(path, geoms, declared_crs, field)
    out = []
    for i, geom in enumerate(geoms):
        fld = f"features[{i}].geometry"
        if geom is None:
            raise FileInputError(path, "feature has no geometry", field=fld)
        if geom.geom_type == "GeometryCollection":
            parts = [g for g in geom.geoms if g.geom_type in ("Polygon", "MultiPolygon")]
            if parts and len(parts) == len(geom.geoms):
                geom = shapely.union_all(parts)
        if geom.geom_type not in ("Polygon", "MultiPolygon"):
            raise FileInputError(path, f"geometry type {geom.geom_type!r} is not a Polygon or MultiPolygon",
                                 field=fld)
        check_polygon(geom, path=path, field=fld)
        props = {n: v for n, col in zip(names, field_data) if (v := _clean(col[i])) is not None}
        out.append((geom, props))
    return out
