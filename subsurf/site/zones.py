"""Soil zones and soil-survey polygons: polygons with soil properties, from any GDAL vector file.

The file (GeoPackage, Shapefile, KML, GeoJSON ...) is read by :mod:`.vectors` (pyogrio /
GDAL), its own CRS checked against the survey's declaration.  Each feature's attributes
give soil quantities (``moisture``, ``pore_water_ec`` ... each optionally with ``_sd``;
bare numbers in the quantity's bare unit, strings may carry units), an optional ``name``
and an optional ``texture`` (a preset, a USDA class name or abbreviation; its sand, clay
and bulk density fill what the feature does not give).  A feature giving ``sand`` and
``clay`` but no texture is classified on the USDA triangle for the record.  The survey
may map the file's attribute names to ours (``attributes = {moisture = "VWC"}``).
Null values are read as "not given"; attributes that are none of these are listed once
in a note and ignored.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from ..errors import FileInputError, InputError
from ._values import _quantity_table
from .crs import read_crs
from .schema import QUANTITIES, SD_SUFFIX
from .vectors import check_polygon, note, read_polygons

__all__ = ["ZoneSet", "read_zones", "geojson_geometries", "check_polygon", "KML_FORMAT_FIELDS"]

#: Attributes GDAL's KML drivers add to every feature (format machinery, ignored silently).
KML_FORMAT_FIELDS = frozenset({"id", "Description", "timestamp", "begin", "end", "altitudeMode", "tessellate",
                               "extrude", "visibility", "drawOrder", "icon", "snippet"})


@dataclass(frozen=True)
class ZoneSet:
    """Soil zones read from a vector file: one shapely polygon per zone with its properties (SI)."""

    path: Path
    crs: object
    names: list[str]
    geometries: list  # shapely geometries in ``crs``
    values: list[dict[str, float]]
    sd: list[dict[str, float]]
    textures: list[str | None]
    ignored: tuple[str, ...] = ()  # attributes of the file that were not read


def geojson_geometries(path: Path, *, survey_path: Path, field: str, crs=None, layer=None) -> list[tuple]:
    """Polygons of a vector file as (shapely geometry, properties); kept for existing callers.

    ``crs`` is the declared CRS (default WGS 84 longitude/latitude, as RFC 7946).
    """
    from pyproj import CRS

    return read_polygons(path, survey_path=survey_path, field=field,
                         declared_crs=crs if crs is not None else CRS.from_epsg(4326), layer=layer)


def _texture_key(raw, *, path, field: str) -> str:
    from .textures_usda import resolve_texture

    try:
        return resolve_texture(raw)
    except InputError as exc:
        raise FileInputError(path, str(exc), field=field) from None


def read_zones(entry, *, survey_path: Path, where: str) -> ZoneSet:
    """Read the vector file named by ``entry`` (a validated :class:`~subsurf.site.schema.Zones`)."""
    from ..ground.presets import texture_preset
    from .textures_usda import usda_texture_class

    path = (survey_path.parent / entry.file).resolve()
    crs = read_crs(entry.crs, path=survey_path, field=f"{where} crs")
    feats = read_polygons(path, survey_path=survey_path, field=f"{where} file", declared_crs=crs,
                          layer=getattr(entry, "layer", None))
    mapping = dict(getattr(entry, "attributes", {}) or {})
    rename = {file_name: ours for ours, file_name in mapping.items()}
    all_attrs = {k for _, props in feats for k in props}
    missing = [f for f in rename if f not in all_attrs]
    if missing:
        raise FileInputError(survey_path, f"{where} attributes: {path.name} has no attribute {missing[0]!r} "
                             f"(its attributes: {', '.join(sorted(all_attrs)) or 'none'})")
    known = set(QUANTITIES) | {q + SD_SUFFIX for q in QUANTITIES} | {"name", "texture", "description"}
    names, geoms, values, sds, textures, ignored = [], [], [], [], [], []
    for i, (shape, raw_props) in enumerate(feats):
        props = {}
        for k, v in raw_props.items():
            key = rename.get(k, k)
            if key not in known and key.lower() in known and key.lower() not in raw_props:
                key = key.lower()  # KML's "Name", a Shapefile's upper-case "MOISTURE"
            if key in known:
                props[key] = v
            elif not (path.suffix.lower() in (".kml", ".kmz") and k in KML_FORMAT_FIELDS) and k not in ignored:
                ignored.append(k)
        name = str(props.pop("name", f"zone {i + 1}"))
        texture = props.pop("texture", None)
        props.pop("description", None)
        v, s = _quantity_table(props, path=path, where=f"features[{i}].properties")
        key = None
        if texture is not None:
            key = _texture_key(texture, path=path, field=f"features[{i}].properties.texture")
            preset = texture_preset(key)
            for q in ("sand", "clay", "bulk_density"):
                v.setdefault(q, preset[q])
        elif "sand" in v and "clay" in v:
            try:
                key = str(usda_texture_class(v["sand"], v["clay"]))
            except InputError as exc:
                raise FileInputError(path, str(exc), field=f"features[{i}].properties.sand") from None
        names.append(name)
        geoms.append(shape)
        values.append(v)
        sds.append(s)
        textures.append(key)
    if ignored:
        note(f"{path.name}: attributes not used (not soil quantities): {', '.join(ignored)}")
    return ZoneSet(path=path, crs=crs, names=names, geometries=geoms, values=values, sd=sds, textures=textures,
                   ignored=tuple(ignored))
