"""CSV tables with CSVW metadata, OGR field types and .prj: read by pandas, csvw and OGR with no options."""

from __future__ import annotations

import json
import math

import pytest

from subsurf.io.tables import TableColumn, sidecar_names, write_table_files
from subsurf.safety import CAUTION

COLUMNS = [TableColumn("line", "survey line", datatype="string", fmt=""),
           TableColumn("row", "row", datatype="integer"),
           TableColumn("easting_m", "easting", "m", fmt=".3f", axis="x"),
           TableColumn("northing_m", "northing", "m", fmt=".3f", axis="y"),
           TableColumn("depth_m", "depth", "m", fmt=".4f")]
ROWS = [{"line": "A", "row": 2, "easting_m": 512340.0, "northing_m": 5403210.0, "depth_m": 0.8793},
        {"line": "B,2", "row": 3, "easting_m": 512342.5, "northing_m": 5403210.8, "depth_m": math.nan},
        {"line": "C", "row": 4, "easting_m": 512345.0, "northing_m": 5403211.6, "depth_m": math.inf}]


@pytest.fixture
def table(tmp_path):
    from pyproj import CRS

    path = tmp_path / "t.csv"
    write_table_files(path, ROWS, COLUMNS, title="test table", crs=CRS.from_epsg(32633), notes=["a note"])
    return path


def test_pandas_reads_with_no_options(table):
    """pandas.read_csv(path) alone: the named columns, numbers as numbers, a blank cell as NaN, INF as inf."""
    import pandas as pd

    df = pd.read_csv(table)
    assert list(df.columns) == ["line", "row", "easting_m", "northing_m", "depth_m", "caution"]
    assert df["row"].dtype.kind == "i"
    for c in ("easting_m", "northing_m", "depth_m"):
        assert df[c].dtype.kind == "f", c
    assert df["line"].tolist() == ["A", "B,2", "C"]  # the comma is quoted (RFC 4180)
    assert df["depth_m"].iloc[0] == pytest.approx(0.8793)
    assert math.isnan(df["depth_m"].iloc[1]) and df["depth_m"].iloc[2] == math.inf
    assert (df["caution"] == CAUTION).all()  # on every row, not the first only
    assert not table.read_text().startswith("#")


def test_csvw_metadata_names_every_column_with_units_and_caution(table):
    """The sidecar is JSON with the CSVW context, the CSV's url, every column (units) and the caution."""
    names = sidecar_names(table.name, coordinates=True)
    assert names["csvw"] == "t.csv-metadata.json"  # CSVW §5.2 default locating rule: {+url}-metadata.json
    doc = json.loads((table.parent / names["csvw"]).read_text(encoding="utf-8"))
    assert "http://www.w3.org/ns/csvw" in doc["@context"]
    assert doc["url"] == "t.csv"
    cols = doc["tableSchema"]["columns"]
    import pandas as pd

    assert [c["name"] for c in cols] == list(pd.read_csv(table).columns)
    by = {c["name"]: c for c in cols}
    assert by["depth_m"]["schema:unitText"] == "m" and "unit: m" in by["depth_m"]["dc:description"]
    assert by["row"]["datatype"] == "integer" and by["line"]["datatype"] == "string"
    assert "EPSG:32633" in by["easting_m"]["dc:description"]
    assert CAUTION in doc["dc:description"]
    assert "a note" in doc["rdfs:comment"]


def test_csvw_library_validates_and_types_rows(table):
    """The csvw package (an independent CSVW implementation) finds the metadata by itself, validates it and
    converts cells by the declared datatypes."""
    csvw = pytest.importorskip("csvw", reason="csvw (test extra) not installed")

    doc = csvw.CSVW(str(table.resolve()), validate=True)  # given the CSV: locates t.csv-metadata.json
    assert doc.is_valid
    rows = list(doc.tables[0].iterdicts())
    assert rows[0]["row"] == 2 and rows[0]["easting_m"] == pytest.approx(512340.0)
    assert rows[1]["depth_m"] is None  # the empty cell is the declared null
    assert rows[2]["depth_m"] == math.inf  # "INF": the XSD double lexical form


def test_ogr_reads_types_points_and_crs(table):
    """OGR (through pyogrio) with no options: typed fields from the .csvt, points from CoordX/CoordY and the
    CRS from the .prj (GDAL CSV driver documentation, GeoCSV)."""
    try:
        from pyogrio import read_info
        from pyogrio.raw import read
    except ImportError:
        print("pyogrio not installed: OGR check skipped")
        pytest.skip("pyogrio not installed")
    import shapely
    from pyproj import CRS

    meta, _, geometry, fields = read(table)
    info = read_info(table)
    types = dict(zip(info["fields"], info["ogr_types"]))
    assert types == {"line": "OFTString", "row": "OFTInteger", "easting_m": "OFTReal", "northing_m": "OFTReal",
                     "depth_m": "OFTReal", "caution": "OFTString"}
    assert info["geometry_type"] == "Point"
    assert CRS.from_user_input(meta["crs"]).to_epsg() == 32633
    pts = shapely.from_wkb(geometry)
    assert [(p.x, p.y) for p in pts] == [(r["easting_m"], r["northing_m"]) for r in ROWS]
    assert list(fields[list(meta["fields"]).index("caution")]) == [CAUTION] * 3


def test_no_prj_without_coordinates(tmp_path):
    """A table without coordinate columns gets the CSVW and .csvt sidecars but no .prj."""
    written = write_table_files(tmp_path / "v.csv", [{"v": 1.0}], [TableColumn("v", "velocity", "m/ns")],
                                title="t")
    assert sorted(p.name for p in written) == ["v.csv", "v.csv-metadata.json", "v.csvt"]
    assert (tmp_path / "v.csvt").read_text() == '"Real","String"\n'


def test_refuses_overwrite(tmp_path):
    """An existing output is kept unless force is given."""
    from subsurf.errors import OutputExistsError

    p = tmp_path / "out.csv"
    p.write_text("keep")
    with pytest.raises(OutputExistsError):
        write_table_files(p, [{"a": 1.0}], [TableColumn("a", fmt=".2f")], title="t")
    assert p.read_text() == "keep"
    write_table_files(p, [{"a": 1.0}], [TableColumn("a", fmt=".2f")], title="t", force=True)
    assert p.read_text() == f'a,caution\n1.00,"{CAUTION}"\n'
