"""Pick tables: reading and validating travel-time pick CSV files, coordinate handling
(pyproj) and writing results as GeoJSON (CSV tables: :mod:`subsurf.io.tables`).  An edge module (files in, files out).

Pick CSV schema (our own; units in the column names; one header row; lines starting
with ``#`` are comments; ``# crs: EPSG:32633`` in a comment names the coordinates' CRS):

=================  =========  =====================================================
column             required   meaning
=================  =========  =====================================================
``line``           yes        survey line id (text)
``twt_ns``         yes        picked two-way travel time, ns (as on the record)
``distance_m``     one of     position along the line, m
``easting_m`` +    one of     projected coordinates, m, in the named CRS
``northing_m``
``lon_deg`` +      one of     geographic coordinates, degrees, in the named CRS
``lat_deg``
``surface_elev_m`` no         ground-surface elevation at the pick, m
``pick_sd_ns``     no         standard deviation of the pick, ns
``target``         no         target id (groups picks of one hyperbola)
``offset_m``       CMP only   antenna separation of a CMP/WARR pick, m
=================  =========  =====================================================

Row numbers in messages are the file's line numbers (the header is line 1 when there
are no comments), as a text editor shows them.
"""

from __future__ import annotations

import csv
import json
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import FileInputError, InputError
from .outputs import atomic_path

__all__ = [
    "PickTable",
    "read_picks",
    "parse_crs",
    "transform_xy",
    "raise_row_problems",
    "write_geojson",
    "COORDINATE_DECIMALS",
    "MAX_LISTED",
]

#: How many offending rows an error message lists before summarising the rest.
MAX_LISTED = 8
_POSITION_SETS = (("distance_m",), ("easting_m", "northing_m"), ("lon_deg", "lat_deg"))
_NUMERIC = ("twt_ns", "distance_m", "easting_m", "northing_m", "lon_deg", "lat_deg", "surface_elev_m",
            "pick_sd_ns", "offset_m")


@dataclass
class PickTable:
    """Validated picks from one CSV file (SI units: times in s)."""

    path: str
    rows: np.ndarray  # file line number of each pick
    line: list
    twt_s: np.ndarray
    position_kind: str  # "distance", "projected", "geographic" or "none"
    distance_m: np.ndarray | None = None
    x: np.ndarray | None = None  # easting or longitude, in `crs`
    y: np.ndarray | None = None
    crs: object | None = None  # pyproj.CRS of x, y
    surface_elev_m: np.ndarray | None = None
    pick_sd_s: np.ndarray | None = None
    target: list | None = None
    offset_m: np.ndarray | None = None
    columns: list = field(default_factory=list)

    def __len__(self) -> int:
        return int(self.twt_s.size)


def parse_crs(text, *, name: str = "--crs"):
    """Return a ``pyproj.CRS`` for an EPSG code, WKT or PROJ string; raise on unknown, vertical, geocentric..."""
    from pyproj import CRS
    from pyproj.exceptions import CRSError

    from ..site.crs import horizontal_crs_problem

    try:
        crs = CRS.from_user_input(str(text).strip())
    except CRSError:
        raise InputError(f"{name}: unknown CRS {text!r}; give an EPSG code such as 'EPSG:32633' or a WKT string") \
            from None
    problem = horizontal_crs_problem(crs, text)
    if problem:
        raise InputError(f"{name}: {problem}")
    return crs


def transform_xy(x, y, src, dst):
    """Transform coordinates between two CRSs (axis order: easting/longitude first)."""
    from pyproj import Transformer

    if src == dst:
        return np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    tr = Transformer.from_crs(src, dst, always_xy=True)
    xo, yo = tr.transform(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
    xo, yo = np.asarray(xo, dtype=float), np.asarray(yo, dtype=float)
    if not (np.all(np.isfinite(xo)) and np.all(np.isfinite(yo))):
        raise InputError(f"coordinates cannot be transformed from {src.to_string()} to {dst.to_string()} "
                         "(outside the area of use?)")
    return xo, yo


def raise_row_problems(path, problems: list[tuple[int, str, str]]) -> None:
    """Raise one :class:`FileInputError` listing every (row, column, message) problem."""
    if not problems:
        return
    parts = [f"row {r}, column '{c}': {m}" for r, c, m in problems[:MAX_LISTED]]
    more = len(problems) - MAX_LISTED
    text = f"{len(problems)} problem{'s' if len(problems) > 1 else ''}: " + "; ".join(parts)
    if more > 0:
        text += f"; and {more} more"
    err = FileInputError(path, text)
    err.problems = problems
    raise err


def _read_rows(path: Path):
    try:
        raw = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise InputError(f"pick file not found: {path}") from None
    except UnicodeDecodeError:
        raise FileInputError(path, "not a UTF-8 text CSV file") from None
    crs_text = None
    lines = raw.splitlines()
    data = []
    for i, ln in enumerate(lines, start=1):
        s = ln.strip()
        if not s:
            continue
        if s.startswith("#"):
            body = s.lstrip("#").strip()
            if body.lower().startswith("crs:") or body.lower().startswith("crs ="):
                crs_text = body.split(":", 1)[1].strip() if ":" in body[:5] else body.split("=", 1)[1].strip()
            continue
        data.append((i, ln))
    if not data:
        raise FileInputError(path, "no header row; the first non-comment line must name the columns")
    reader = csv.reader([d[1] for d in data])
    rows = list(reader)
    header = [h.strip() for h in rows[0]]
    return crs_text, header, [(data[k][0], r) for k, r in enumerate(rows[1:], start=1)], data[0][0]


def read_picks(path, *, coords_crs=None, kind: str = "depth") -> PickTable:
    """Read and validate a pick CSV (schema in the module docstring).

    Parameters
    ----------
    path : path-like
    coords_crs : str, optional
        CRS of the easting/northing or lon/lat columns (EPSG code or WKT); overrides a
        ``# crs:`` comment in the file.
    kind : {"depth", "hyperbola", "cmp"}
        ``depth`` needs a position only when coordinates are to be written; ``hyperbola``
        needs ``distance_m``; ``cmp`` needs ``offset_m``.

    Raises
    ------
    FileInputError
        Missing columns, or rows with non-numeric, non-finite, negative or out-of-range
        cells; every offending row is named with its column.
    """
    path = Path(path)
    crs_text, header, rows, header_row = _read_rows(path)
    dupes = {h for h in header if header.count(h) > 1}
    if dupes:
        raise FileInputError(path, f"column {sorted(dupes)[0]!r} appears twice", row=header_row)
    required = ["line", "twt_ns"]
    if kind == "hyperbola":
        required.append("distance_m")
    if kind == "cmp":
        required = ["twt_ns", "offset_m"]
    missing = [c for c in required if c not in header]
    if missing:
        raise FileInputError(path, f"missing column(s) {', '.join(missing)}; the header has "
                             f"{', '.join(header)}", row=header_row)
    present = [ps for ps in _POSITION_SETS if all(c in header for c in ps)]
    partial = [c for ps in _POSITION_SETS for c in ps if c in header and ps not in present]
    if partial:
        raise FileInputError(path, f"column {partial[0]!r} needs its partner "
                             f"({' and '.join(next(ps for ps in _POSITION_SETS if partial[0] in ps))})",
                             row=header_row)
    coord_sets = [ps for ps in present if ps != ("distance_m",)]
    if len(coord_sets) > 1:
        raise FileInputError(path, "give coordinates either as easting_m/northing_m or lon_deg/lat_deg, not both",
                             row=header_row)
    idx = {h: i for i, h in enumerate(header)}
    problems: list[tuple[int, str, str]] = []
    values: dict[str, list] = {c: [] for c in _NUMERIC if c in idx}
    texts: dict[str, list] = {c: [] for c in ("line", "target") if c in idx}
    rownums = []
    for rownum, r in rows:
        if len(r) != len(header):
            problems.append((rownum, header[min(len(r), len(header) - 1)],
                             f"has {len(r)} cells, the header has {len(header)} columns"))
            continue
        rownums.append(rownum)
        for c in texts:
            val = r[idx[c]].strip()
            if c == "line" and not val:
                problems.append((rownum, c, "empty; give the survey line id"))
            texts[c].append(val)
        for c in values:
            cell = r[idx[c]].strip()
            optional = c in ("surface_elev_m", "pick_sd_ns", "distance_m") and c not in required
            if cell == "" and optional and c != "distance_m":
                values[c].append(math.nan)
                continue
            try:
                v = float(cell)
            except ValueError:
                problems.append((rownum, c, f"not a number ({cell!r})"))
                values[c].append(math.nan)
                continue
            if not math.isfinite(v):
                problems.append((rownum, c, f"must be finite, got {cell!r}"))
            elif c in ("twt_ns",) and v < 0:
                problems.append((rownum, c, f"negative two-way time {v:g} ns; times are counted from the "
                                 "record start and must be >= 0"))
            elif c in ("pick_sd_ns", "offset_m") and v < 0:
                problems.append((rownum, c, f"must be >= 0, got {v:g}"))
            elif c == "lon_deg" and not -180 <= v <= 360:
                problems.append((rownum, c, f"longitude {v:g} outside -180 to 360 degrees"))
            elif c == "lat_deg" and not -90 <= v <= 90:
                problems.append((rownum, c, f"latitude {v:g} outside -90 to 90 degrees"))
            values[c].append(v)
    if not rows:
        raise FileInputError(path, "no picks below the header")
    raise_row_problems(path, problems)
    arr = {c: np.asarray(v, dtype=float) for c, v in values.items()}
    table = PickTable(path=str(path), rows=np.asarray(rownums), line=texts.get("line", [""] * len(rownums)),
                      twt_s=arr["twt_ns"] * 1e-9, position_kind="none", columns=header,
                      surface_elev_m=arr.get("surface_elev_m"),
                      pick_sd_s=arr["pick_sd_ns"] * 1e-9 if "pick_sd_ns" in arr else None,
                      target=texts.get("target"), offset_m=arr.get("offset_m"))
    if "distance_m" in arr:
        table.distance_m = arr["distance_m"]
        table.position_kind = "distance"
    if coord_sets:
        cx, cy = coord_sets[0]
        given = coords_crs if coords_crs is not None else crs_text
        if given is None:
            raise FileInputError(path, f"columns {cx}/{cy} need their CRS: add a '# crs: EPSG:xxxx' comment "
                                 "line to the file or pass --coords-crs", row=header_row)
        table.crs = parse_crs(given, name="--coords-crs" if coords_crs is not None else f"{path}: '# crs:' comment")
        if cx == "lon_deg" and not table.crs.is_geographic:
            raise FileInputError(path, f"lon_deg/lat_deg given but the CRS {table.crs.name!r} is projected; "
                                 "use easting_m/northing_m columns or a geographic CRS", row=header_row)
        if cx == "easting_m" and table.crs.is_geographic:
            raise FileInputError(path, f"easting_m/northing_m given but the CRS {table.crs.name!r} is geographic; "
                                 "use lon_deg/lat_deg columns or a projected CRS", row=header_row)
        table.x, table.y = arr[cx], arr[cy]
        table.position_kind = "geographic" if cx == "lon_deg" else "projected"
    return table


#: Decimal places of written coordinates.  RFC 7946 §11.2: precision beyond what is
#: meaningful only adds size; 6 decimals of a degree are about 0.11 m at the equator
#: (the RFC's own example), and a millimetre is far finer than a GPR pick is placed
#: (common practice: decimetre positioning from GNSS/total station).
COORDINATE_DECIMALS = {"geographic": 6, "projected": 3}


def _tidy(value):
    """A float property without binary-conversion noise (12 significant digits: 21.840000000000003 -> 21.84)."""
    return float(f"{value:.12g}") if isinstance(value, float) else value


def write_geojson(path, x, y, properties: list[dict], crs, *, force: bool = False,
                  collection_properties: dict | None = None) -> Path:
    """Write points as a GeoJSON FeatureCollection in ``crs``, atomically.

    Coordinates are written in ``crs`` (easting, northing or longitude, latitude), rounded
    to :data:`COORDINATE_DECIMALS` (6 decimals of a degree, 3 of a metre).  When ``crs`` is
    not WGS 84 the collection carries a named ``crs`` member (as GDAL/QGIS read it);
    RFC 7946 readers expect WGS 84, so choose EPSG:4326 for strict RFC 7946.  Every
    feature's properties carry the safety caution (a GIS user sees feature attributes,
    not collection members).
    """
    from ..safety import CAUTION
    from .outputs import to_jsonable

    decimals = COORDINATE_DECIMALS["geographic" if crs.is_geographic else "projected"]
    feats = []
    for xi, yi, props in zip(np.asarray(x, dtype=float), np.asarray(y, dtype=float), properties):
        feats.append({"type": "Feature",
                      "geometry": {"type": "Point", "coordinates": [round(float(xi), decimals),
                                                                    round(float(yi), decimals)]},
                      "properties": {**{k: _tidy(v) for k, v in to_jsonable(props).items()}, "caution": CAUTION}})
    doc: dict = {"type": "FeatureCollection"}
    epsg = crs.to_epsg()
    if epsg != 4326:
        name = f"urn:ogc:def:crs:EPSG::{epsg}" if epsg else crs.to_wkt()
        doc["crs"] = {"type": "name", "properties": {"name": name}}
    if collection_properties:
        doc.update(to_jsonable(collection_properties))
    doc["features"] = feats
    with atomic_path(path, force=force) as tmp:
        Path(tmp).write_text(json.dumps(doc, indent=1, allow_nan=False) + "\n", encoding="utf-8")
    return Path(path)
