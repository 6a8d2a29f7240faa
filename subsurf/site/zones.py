"""Soil zones and site outlines from GeoJSON (RFC 7946): polygons with soil properties.

shapely (it wraps GEOS, the geometry engine most GIS software uses) checks polygon
validity; errors name the file and the feature.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

from .._schema import fail
from ..errors import FileInputError
from ._values import _quantity_table, _texture
from .crs import read_crs

__all__ = ["ZoneSet", "read_zones", "geojson_geometries", "check_polygon"]


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


def geojson_geometries(path: Path, *, survey_path: Path, field: str) -> list[tuple[object, dict]]:
    """Read GeoJSON (FeatureCollection, Feature or bare geometry) into (shapely geometry, properties)."""
    import shapely.geometry

    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise fail(survey_path, field, f"file not found: {path}") from None
    except IsADirectoryError:
        raise fail(survey_path, field, f"{path} is a folder, not a GeoJSON file") from None
    except UnicodeDecodeError:
        raise FileInputError(path, "not a UTF-8 text (GeoJSON) file") from None
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
    if not isinstance(feats, list):
        raise FileInputError(path, "'features' must be a list of Feature objects", field="features")
    out = []
    for i, feat in enumerate(feats):
        if not isinstance(feat, dict):
            raise FileInputError(path, f"not a GeoJSON Feature object: {feat!r:.40}", field=f"features[{i}]")
        geom = feat.get("geometry")
        fld = f"features[{i}].geometry"
        if geom and not isinstance(geom, dict):
            raise FileInputError(path, f"not a GeoJSON geometry object: {geom!r:.40}", field=fld)
        if not geom:
            raise FileInputError(path, "feature has no geometry", field=fld)
        if geom.get("type") not in ("Polygon", "MultiPolygon"):
            raise FileInputError(path, f"geometry type {geom.get('type')!r} is not a Polygon or MultiPolygon",
                                 field=fld)
        try:
            shape = shapely.geometry.shape(geom)
        except Exception as exc:  # noqa: BLE001 - shapely raises several kinds
            raise FileInputError(path, f"cannot read polygon: {exc}", field=fld) from None
        check_polygon(shape, path=path, field=fld)
        out.append((shape, feat.get("properties") or {}))
    if not out:
        raise FileInputError(path, "no polygon features")
    return out


def check_polygon(shape, *, path, field: str) -> None:
    import shapely

    if shape.is_empty:
        raise FileInputError(path, "polygon is empty", field=field)
    if not shape.is_valid:
        reason = shapely.is_valid_reason(shape)
        raise FileInputError(path, f"polygon is not valid ({reason}); fix self-intersections "
                             "or ring order in a GIS", field=field)
    if shape.area <= 0:
        raise FileInputError(path, "polygon has zero area", field=field)


def read_zones(entry, *, survey_path: Path, where: str) -> ZoneSet:
    """Read the GeoJSON named by ``entry`` (a validated :class:`~subsurf.site.schema.Zones`)."""
    path = (survey_path.parent / entry.file).resolve()
    crs = read_crs(entry.crs, path=survey_path, field=f"{where} crs")
    feats = geojson_geometries(path, survey_path=survey_path, field=f"{where} file")
    names, geoms, values, sds, textures = [], [], [], [], []
    for i, (shape, props) in enumerate(feats):
        props = dict(props)
        name = str(props.pop("name", f"zone {i + 1}"))
        texture = props.pop("texture", None)
        props.pop("description", None)
        v, s = _quantity_table(props, path=path, where=f"features[{i}].properties")
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
