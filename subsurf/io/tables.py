"""CSV tables that open cleanly in any reader, with their units and the caution beside them.

Every CSV a command writes is plain RFC 4180 CSV: one header row of column names, then
data; no comment lines (a leading ``#`` line breaks ``pandas.read_csv`` and makes OGR
take the comment for the header).  What a comment line used to carry goes into standard
sidecar files written with the CSV, in the same output transaction:

``<name>.csv-metadata.json``
    W3C *Metadata Vocabulary for Tabular Data* (CSV on the Web, W3C Recommendation
    2015-12-17): ``@context`` ``http://www.w3.org/ns/csvw``, ``url`` of the CSV, a
    ``tableSchema`` naming every column with its ``titles``, ``datatype``, the unit
    (``schema:unitText`` and in ``dc:description``) and the caution as the table's
    ``dc:description`` / ``rdfs:comment``.  The file name is the one the CSVW
    "locating metadata" rule finds by default (``{+url}-metadata.json``), so CSVW tools
    pick it up without being told.
``<name>.csvt``
    GDAL/OGR's field-type file (GeoCSV): without it OGR reads every column as text.
    Coordinate columns are typed ``CoordX``/``CoordY``, so OGR makes point features.
``<name>.prj``
    The coordinates' CRS as ESRI WKT, read by OGR's CSV driver (GeoCSV); only written
    when the table has coordinates.

The caution (:data:`subsurf.safety.CAUTION`) is *also* a ``caution`` column filled on
every row.  Decision: a sidecar is lost the moment a CSV is mailed, filtered, pasted into
a spreadsheet or joined in a GIS, while a column travels with every row a user keeps; a
row-1-only column is dropped by any filter.  The column costs a few hundred bytes per row
in tables of at most a few thousand rows, and it is what a spreadsheet user actually
sees.  The CSVW file is where tools (and careful users) find units and provenance.
"""

from __future__ import annotations

import csv
import io
import json
import math
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from ..safety import CAUTION, CAUTION_LINES

__all__ = ["TableColumn", "CAUTION_COLUMN", "csv_text", "csvw_metadata", "csvt_text", "sidecar_names",
           "write_table_files", "table_files", "declare_table", "sidecar_listing"]

#: CSVW datatype -> GDAL .csvt type
_CSVT = {"string": "String", "integer": "Integer", "number": "Real", "double": "Real", "boolean": "String"}


@dataclass(frozen=True)
class TableColumn:
    """One CSV column: header ``name`` (snake_case, unit suffix), readable ``title``, unit, CSVW datatype.

    ``fmt`` is the Python number format of the cells (``""``: ``str``); ``axis`` marks a
    coordinate column (``"x"`` or ``"y"``) for OGR.
    """

    name: str
    title: str = ""
    unit: str = ""
    datatype: str = "number"
    fmt: str = ".6g"
    description: str = ""
    axis: str = ""

    def cell(self, value) -> str:
        if value is None:
            return ""
        if self.datatype == "boolean":
            return "true" if value else "false"
        if self.datatype in ("number", "double", "integer"):
            if hasattr(value, "item"):
                value = value.item()
            if isinstance(value, bool):
                value = int(value)
            if isinstance(value, float):
                if math.isnan(value):
                    return ""  # missing: the CSVW "null" value, an empty cell for pandas and OGR
                if math.isinf(value):
                    return "INF" if value > 0 else "-INF"  # XSD lexical forms (CSVW numbers are XSD doubles)
            if self.datatype == "integer":
                return str(int(value))
            return format(float(value), self.fmt) if self.fmt else repr(float(value))
        return str(value)


#: The caution column every table ends with (see the module docstring for why a column).
CAUTION_COLUMN = TableColumn("caution", "caution", datatype="string", fmt="",
                             description="safety caution, the same on every row")


def _with_caution(columns: Sequence[TableColumn]) -> list[TableColumn]:
    cols = list(columns)
    return cols if any(c.name == CAUTION_COLUMN.name for c in cols) else cols + [CAUTION_COLUMN]


def csv_text(rows: Sequence[dict], columns: Sequence[TableColumn]) -> str:
    """The CSV (header + rows, ``\\n`` line ends) with the caution column on every row."""
    cols = _with_caution(columns)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow([c.name for c in cols])
    for r in rows:
        w.writerow([CAUTION if c is CAUTION_COLUMN else c.cell(r.get(c.name)) for c in cols])
    return buf.getvalue()


def csvw_metadata(csv_name: str, columns: Sequence[TableColumn], *, title: str, crs=None,
                  notes: Sequence[str] = ()) -> dict:
    """The CSVW table description of a CSV named ``csv_name`` (relative URL, the file beside it).

    ``crs`` (a ``pyproj.CRS``) is named in the coordinate columns' descriptions and in the
    table's ``dc:spatial``; ``notes`` (e.g. the velocity used) go into ``rdfs:comment``.
    """
    from .. import __version__

    where = f"{crs.name} ({crs.to_string()})" if crs is not None else ""
    out = []
    for c in _with_caution(columns):
        desc = c.description or c.title or c.name
        if c.axis and where:
            desc += f"; coordinates in {where}"
        if c.unit:
            desc += f"; unit: {c.unit}"
        col = {"name": c.name, "titles": c.title or c.name, "datatype": c.datatype, "dc:description": desc}
        if c.unit:
            col["schema:unitText"] = c.unit
        out.append(col)
    doc = {"@context": ["http://www.w3.org/ns/csvw", {"@language": "en"}],
           "url": csv_name,
           "dc:title": title,
           "dc:creator": f"subsurf {__version__}",
           "dc:description": "CAUTION: " + CAUTION,
           "rdfs:comment": ["CAUTION: " + line for line in CAUTION_LINES] + list(notes),
           "dialect": {"header": True, "delimiter": ",", "doubleQuote": True, "encoding": "utf-8"},
           "tableSchema": {"columns": out, "null": ""}}
    if crs is not None:
        doc["dc:spatial"] = where
    return doc


def csvt_text(columns: Sequence[TableColumn]) -> str:
    """GDAL's ``.csvt`` line: one quoted OGR field type per column (coordinates as CoordX/CoordY)."""
    types = []
    for c in _with_caution(columns):
        types.append({"x": "CoordX", "y": "CoordY"}.get(c.axis) or _CSVT[c.datatype])
    return ",".join(f'"{t}"' for t in types) + "\n"


def sidecar_names(csv_name: str, *, coordinates: bool) -> dict[str, str]:
    """Sidecar kind -> file name for a CSV named ``csv_name`` (``prj`` only with coordinates)."""
    stem = csv_name[:-4] if csv_name.lower().endswith(".csv") else csv_name
    names = {"csvw": f"{csv_name}-metadata.json", "csvt": f"{stem}.csvt"}
    if coordinates:
        names["prj"] = f"{stem}.prj"
    return names


def table_files(csv_path, rows, columns, *, title: str, crs=None, notes=()) -> dict[Path, str]:
    """Path -> text of the CSV and its sidecars for a CSV at ``csv_path`` (nothing written)."""
    csv_path = Path(csv_path)
    coordinates = crs is not None and any(c.axis for c in columns)
    names = sidecar_names(csv_path.name, coordinates=coordinates)
    files = {csv_path: csv_text(rows, columns),
             csv_path.with_name(names["csvw"]): json.dumps(
                 csvw_metadata(csv_path.name, columns, title=title, crs=crs if coordinates else None, notes=notes),
                 indent=1, ensure_ascii=False) + "\n",
             csv_path.with_name(names["csvt"]): csvt_text(columns)}
    if coordinates:
        files[csv_path.with_name(names["prj"])] = crs.to_wkt("WKT1_ESRI") + "\n"
    return files


def write_table_files(csv_path, rows, columns, *, title: str, crs=None, notes=(), force: bool = False,
                      targets: dict | None = None) -> list[Path]:
    """Write the CSV and its sidecars, each atomically; return the paths written.

    ``targets`` maps the *public* file name of each file (as from :func:`sidecar_names`)
    to the path to write instead (the staged paths of an output transaction); without it
    the files are written beside ``csv_path``.
    """
    from .outputs import atomic_write_text

    written = []
    for path, text in table_files(csv_path, rows, columns, title=title, crs=crs, notes=notes).items():
        dest = Path(targets[path.name]) if targets is not None else path
        written.append(atomic_write_text(dest, text, force=force))
    return written


def declare_table(txn, csv_path, *, coordinates: bool | None = False) -> dict[str, Path]:
    """Declare a CSV and its sidecars as outputs of ``txn``; return public file name -> staged path.

    ``coordinates``: True when the table has coordinates (a ``.prj`` is written), False when
    it never has, None when only the inputs will tell (the ``.prj`` is an optional output).
    """
    csv_path = Path(csv_path)
    names = sidecar_names(csv_path.name, coordinates=coordinates is not False)
    targets = {csv_path.name: txn.file(csv_path)}
    for kind, name in names.items():
        targets[name] = txn.file(csv_path.with_name(name), optional=kind == "prj" and coordinates is None)
    return targets


def sidecar_listing(csv_path, targets: dict[str, Path]) -> list[str]:
    """The CSV and the sidecars actually written, as the user named them (for ``written`` lists)."""
    import os

    csv_path = Path(csv_path)
    out = [os.fspath(csv_path)]
    for name, staged in targets.items():
        if name != csv_path.name and Path(staged).exists():
            out.append(os.fspath(csv_path.with_name(name)))
    return out
