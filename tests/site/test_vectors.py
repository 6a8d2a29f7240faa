"""Vector inputs through GDAL (pyogrio): GeoPackage, Shapefile, KML and GeoJSON outlines and zones.

The GPKG/SHP/KML files are written by the tests with pyogrio (GDAL's own writers) from the
example's GeoJSON, so the reference is GDAL's reading of a file GDAL wrote; the map from
each must equal the map from the GeoJSON.
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

from subsurf.errors import FileInputError
from subsurf.site.vectors import InputNote

pyogrio = pytest.importorskip("pyogrio")

EXAMPLE = Path(__file__).resolve().parents[2] / "surveys" / "example-site"
# Shapefile field names are at most 10 characters (dBase III); GDAL truncates them like this
SHP_ATTRIBUTES = 'attributes = { moisture_sd = "moisture_s", pore_water_ec = "pore_water", ' \
                 'pore_water_ec_sd = "pore_wat_1" }'


def _write(src: Path, dst: Path, *, driver: str, crs_from: str, crs_to: str | None = None) -> None:
    """Write the polygons of GeoJSON ``src`` to ``dst`` with GDAL's ``driver`` (reprojected with pyproj)."""
    import shapely
    from pyogrio import raw
    from pyproj import Transformer

    meta, _, wkb, fields = raw.read(src)
    geoms = shapely.from_wkb(np.asarray(wkb, dtype=object))
    crs = crs_from
    if crs_to is not None and crs_to != crs_from:
        tr = Transformer.from_crs(crs_from, crs_to, always_xy=True)
        geoms = np.array([shapely.transform(g, lambda c: np.column_stack(tr.transform(c[:, 0], c[:, 1])))
                          for g in geoms], dtype=object)
        crs = crs_to
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # GDAL's notes on laundered Shapefile field names
        raw.write(dst, shapely.to_wkb(geoms), fields, meta["fields"], driver=driver,
                  geometry_type="Polygon", crs=crs)


def _site(tmp_path: Path, fmt: str) -> Path:
    """A copy of the example site whose outline and zones are in format ``fmt``; returns the survey file."""
    site = tmp_path / fmt
    shutil.copytree(EXAMPLE, site)
    text = (site / "survey.toml").read_text(encoding="utf-8")
    if fmt == "geojson":
        return site / "survey.toml"
    ext, driver = {"gpkg": ("gpkg", "GPKG"), "shp": ("shp", "ESRI Shapefile"), "kml": ("kml", "KML")}[fmt]
    _write(site / "outline.geojson", site / f"outline.{ext}", driver=driver, crs_from="EPSG:4326")
    zones_crs = "EPSG:4326" if fmt == "kml" else "EPSG:32630"
    _write(site / "zones.geojson", site / f"zones.{ext}", driver=driver, crs_from="EPSG:32630", crs_to=zones_crs)
    text = text.replace('outline = "outline.geojson"', f'outline = "outline.{ext}"')
    zone_block = f'file = "zones.{ext}"\ncrs = "{zones_crs}"'
    if fmt == "shp":
        zone_block += "\n" + SHP_ATTRIBUTES
    text = text.replace('file = "zones.geojson"\ncrs = "EPSG:32630"', zone_block)
    (site / "survey.toml").write_text(text, encoding="utf-8")
    (site / "outline.geojson").unlink()
    (site / "zones.geojson").unlink()
    return site / "survey.toml"


@pytest.fixture(scope="module")
def reference_maps(tmp_path_factory):
    from subsurf.site.maps import compute_maps
    from subsurf.site.survey import load_survey

    return compute_maps(load_survey(_site(tmp_path_factory.mktemp("ref"), "geojson")))


@pytest.mark.parametrize("fmt", ["gpkg", "shp", "kml"])
def test_each_vector_format_gives_the_geojson_map(tmp_path, fmt, reference_maps):
    """GPKG, SHP and KML outlines and zones (written by GDAL) give the GeoJSON's map cell for cell."""
    import shapely

    from subsurf.site.maps import compute_maps
    from subsurf.site.survey import load_survey

    maps = compute_maps(load_survey(_site(tmp_path, fmt)))
    ref = reference_maps.dataset
    assert np.array_equal(maps.dataset["mask"].values, ref["mask"].values)
    keep = np.ones(ref["mask"].shape, bool)
    if fmt == "kml":
        # KML is lon/lat: the zones went UTM -> lon/lat -> UTM (edges densified on the way back). The
        # example's diagonal zone edge passes exactly through 10 cell centres; those may fall either side.
        xx, yy = np.meshgrid(ref["x"].values, ref["y"].values)
        edges = shapely.union_all([g.boundary for g in reference_maps.survey.zones[0].geometries])
        keep = shapely.distance(edges, shapely.points(xx, yy)) > 1e-3
        assert (~keep & ref["mask"].values.astype(bool)).sum() <= 12
    for var in ("soil_moisture", "soil_pore_water_ec", "soil_sand", "max_depth", "reach_probability"):
        a, b = maps.dataset[var].values, ref[var].values
        np.testing.assert_allclose(a[..., keep], b[..., keep], rtol=1e-9, atol=1e-12,
                                   equal_nan=True, err_msg=f"{fmt}: {var}")


def test_gpkg_crs_mismatch_names_both(tmp_path):
    """A GeoPackage in EPSG:27700 declared as EPSG:32630: one line naming both CRSs."""
    from subsurf.site.survey import load_survey

    survey = _site(tmp_path, "gpkg")
    _write(EXAMPLE / "zones.geojson", survey.parent / "zones.gpkg", driver="GPKG", crs_from="EPSG:32630",
           crs_to="EPSG:27700")
    with pytest.raises(FileInputError) as err:
        load_survey(survey)
    msg = str(err.value)
    assert "zones.gpkg" in msg and "EPSG:27700" in msg and "EPSG:32630" in msg and "\n" not in msg


def test_geojson_legacy_crs_member_honoured(tmp_path):
    """A GeoJSON whose own (2008-style) 'crs' member says EPSG:27700 under a survey saying EPSG:32630 is refused."""
    from subsurf.site.survey import load_survey

    survey = _site(tmp_path, "geojson")
    data = json.loads((survey.parent / "zones.geojson").read_text())
    data["crs"] = {"type": "name", "properties": {"name": "urn:ogc:def:crs:EPSG::27700"}}
    (survey.parent / "zones.geojson").write_text(json.dumps(data))
    with pytest.raises(FileInputError, match=r"EPSG:27700.*EPSG:32630"):
        load_survey(survey)
    # the same member naming the declared CRS is accepted
    data["crs"]["properties"]["name"] = "urn:ogc:def:crs:EPSG::32630"
    (survey.parent / "zones.geojson").write_text(json.dumps(data))
    assert load_survey(survey).zones[0].names == ["upper terrace", "lower hollow"]


def test_geojson_lonlat_under_projected_declaration_refused(tmp_path):
    """Zones reprojected to lon/lat (RFC 7946 GeoJSON, no 'crs' member) under a survey still saying EPSG:32630.

    The reprojection is pyproj's (the reference); before this check the file was accepted and
    the zones sat a fraction of a metre from UTM 30N's false origin.
    """
    from subsurf.site.survey import load_survey

    survey = _site(tmp_path, "geojson")
    _write(EXAMPLE / "zones.geojson", survey.parent / "zones_ll.geojson", driver="GeoJSON",
           crs_from="EPSG:32630", crs_to="EPSG:4326")
    data = json.loads((survey.parent / "zones_ll.geojson").read_text())
    data.pop("crs", None)  # RFC 7946 drops the member
    (survey.parent / "zones.geojson").write_text(json.dumps(data))
    with pytest.raises(FileInputError) as err:
        load_survey(survey)
    msg = str(err.value)
    assert "zones.geojson" in msg and "EPSG:4326" in msg and "EPSG:32630" in msg and "\n" not in msg
    # the same lon/lat file under a lon/lat declaration is accepted
    text = survey.read_text()
    assert 'file = "zones.geojson"\ncrs = "EPSG:32630"' in text
    survey.write_text(text.replace('file = "zones.geojson"\ncrs = "EPSG:32630"',
                                   'file = "zones.geojson"\ncrs = "EPSG:4326"'))
    assert load_survey(survey).zones[0].names == ["upper terrace", "lower hollow"]


def test_kml_needs_wgs84_declaration(tmp_path):
    """KML is WGS 84 lon/lat by definition (OGC KML 2.2); declaring a UTM CRS for it is refused."""
    from subsurf.site.survey import load_survey

    survey = _site(tmp_path, "kml")
    text = survey.read_text().replace('file = "zones.kml"\ncrs = "EPSG:4326"', 'file = "zones.kml"\ncrs = "EPSG:32630"')
    survey.write_text(text)
    with pytest.raises(FileInputError, match=r"EPSG:4326.*EPSG:32630"):
        load_survey(survey)


def test_zone_attributes_extra_and_null_accepted_with_one_note(tmp_path):
    """Soil-survey polygons with extra attributes and nulls load; extras are listed once in a note."""
    from subsurf.site.survey import load_survey

    survey = _site(tmp_path, "geojson")
    data = json.loads((survey.parent / "zones.geojson").read_text())
    for i, feat in enumerate(data["features"]):
        feat["properties"].update({"MUSYM": f"Lo{i}", "AREA_HA": 1.5 + i, "pore_water_ec_sd": None})
    data["features"][1]["properties"]["texture"] = "SiCL"  # a soil survey's abbreviation
    (survey.parent / "zones.geojson").write_text(json.dumps(data))
    with pytest.warns(InputNote) as caught:
        s = load_survey(survey)
    notes = [str(w.message) for w in caught if issubclass(w.category, InputNote)]
    assert notes == ["zones.geojson: attributes not used (not soil quantities): MUSYM, AREA_HA"]
    z = s.zones[0]
    assert z.textures == ["loamy_sand", "silty_clay_loam"]
    assert "pore_water_ec" not in z.sd[0]  # null read as not given
    from subsurf.ground.presets import texture_preset

    assert z.values[1]["clay"] == texture_preset("silty_clay_loam")["clay"]


def test_densified_outline_follows_the_reprojected_edge():
    """A long lon/lat edge reprojected to UTM: its true curve (pyproj on points along it) is followed."""
    import shapely
    from pyproj import CRS, Transformer

    from subsurf.site.grid import _transform_geometry, densify_length

    wgs, utm = CRS.from_epsg(4326), CRS.from_epsg(32631)
    box = shapely.box(1.0, 50.0, 5.0, 51.0)  # a 4-degree-wide box: its edges bow in UTM
    cell = 100.0
    dense = _transform_geometry(box, wgs, utm, max_segment=densify_length(wgs, cell))
    coarse = _transform_geometry(box, wgs, utm)
    tr = Transformer.from_crs(wgs, utm, always_xy=True)
    lon = np.linspace(1.0, 5.0, 401)
    ex, ey = tr.transform(lon, np.full_like(lon, 51.0))  # the northern edge, point by point (pyproj)
    pts = shapely.points(ex, ey)
    d_dense = shapely.distance(dense.boundary, pts).max()
    d_coarse = shapely.distance(coarse.boundary, pts).max()
    assert d_dense < 0.01 * cell  # within 1 % of a cell of the true edge
    assert d_coarse > 10 * cell  # the straight chord misses it by km (sanity of the check)


@pytest.mark.parametrize("content,suffix", [(b"\x00\x01 not a database \xff" * 20, ".gpkg"),
                                            (b"<kml><Document><Placemark>", ".kml"),
                                            (b"\xff\xfe\x00garbage", ".shp")])
def test_unreadable_vector_file_is_one_line_exit_1(tmp_path, content, suffix):
    """An unreadable outline file: CLI exit 1 (not 4), one stderr line naming the file."""
    survey = _site(tmp_path, "geojson")
    bad = survey.parent / f"broken{suffix}"
    bad.write_bytes(content)
    survey.write_text(survey.read_text().replace('outline = "outline.geojson"', f'outline = "broken{suffix}"'))
    proc = subprocess.run([sys.executable, "-m", "subsurf", "map", str(survey), "--out", str(tmp_path / "out")],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 1, proc.stderr
    lines = [ln for ln in proc.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and f"broken{suffix}" in lines[0], proc.stderr
    assert not (tmp_path / "out").exists() or not any((tmp_path / "out").iterdir())


def test_cli_map_from_geopackage_and_crs_mismatch_exit_1(tmp_path):
    """subsurf map on a GeoPackage survey succeeds; a CRS mismatch exits 1 with one line naming both."""
    survey = _site(tmp_path, "gpkg")
    ok = subprocess.run([sys.executable, "-m", "subsurf", "map", str(survey), "--out", str(tmp_path / "o1"),
                         "--json", "--no-geotiff"], capture_output=True, text=True, timeout=300)
    assert ok.returncode == 0, ok.stderr
    assert json.loads(ok.stdout)["summary"]
    _write(EXAMPLE / "zones.geojson", survey.parent / "zones.gpkg", driver="GPKG", crs_from="EPSG:32630",
           crs_to="EPSG:27700")
    bad = subprocess.run([sys.executable, "-m", "subsurf", "map", str(survey), "--out", str(tmp_path / "o2")],
                         capture_output=True, text=True, timeout=300)
    assert bad.returncode == 1
    lines = [ln for ln in bad.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and "EPSG:27700" in lines[0] and "EPSG:32630" in lines[0]


def test_lonlat_outside_the_declared_area_names_both_readings(tmp_path):
    """Zones in lon/lat far from UTM 30N (central Europe, 10-11 degE) under EPSG:32630: as metres they are
    outside the zone's valid area (pyproj area_of_use projected to the zone), so refused naming both."""
    from subsurf.site.survey import load_survey

    survey = _site(tmp_path, "geojson")
    ring = [[10.0, 50.0], [10.001, 50.0], [10.001, 50.001], [10.0, 50.001], [10.0, 50.0]]
    data = {"type": "FeatureCollection", "features": [{"type": "Feature", "properties": {"texture": "loam"},
                                                        "geometry": {"type": "Polygon", "coordinates": [ring]}}]}
    (survey.parent / "zones.geojson").write_text(json.dumps(data))
    with pytest.raises(FileInputError) as err:
        load_survey(survey)
    msg = str(err.value)
    assert "zones.geojson" in msg and "EPSG:32630" in msg and "outside its valid area" in msg
    assert "longitude/latitude" in msg and "(10.00050, 50.00050) lies outside it" in msg and "\n" not in msg


def test_lonlat_check_both_ways_against_pyproj_area_of_use():
    """The same numbers: refused under UTM 30N (outside its projected valid area), noted as ambiguous under
    Web Mercator (whose valid area, per pyproj, holds them both as metres and as lon/lat), and metre-sized
    coordinates of a real UTM site pass without a word."""
    from pyproj import CRS

    from subsurf.site.vectors import check_lonlat_under_projected

    box = (-3.2, 54.1, -3.19, 54.11)
    assert CRS("EPSG:32630").area_of_use.west <= -3.2  # pyproj: the lon/lat reading is inside UTM 30N's area
    with pytest.raises(FileInputError, match=r"inside it; declare crs"):
        check_lonlat_under_projected("z.geojson", box, CRS("EPSG:32630"), where="the survey")
    with pytest.warns(InputNote, match="could be longitude/latitude or EPSG:3857"):
        check_lonlat_under_projected("z.geojson", box, CRS("EPSG:3857"), where="the survey")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        check_lonlat_under_projected("z.geojson", (597_000, 5_780_000, 597_300, 5_780_200), CRS("EPSG:32630"),
                                     where="the survey")


def test_sample_csv_in_lonlat_under_projected_declaration_refused(tmp_path):
    """The example's lon/lat samples declared as EPSG:32630 are refused naming the CSV (not mapped near 0, 0)."""
    from subsurf.site.survey import load_survey

    survey = _site(tmp_path, "geojson")
    text = survey.read_text()
    old = 'file = "samples.csv"\ncrs = "EPSG:4326"'
    assert old in text
    survey.write_text(text.replace(old, 'file = "samples.csv"\ncrs = "EPSG:32630"'))
    with pytest.raises(FileInputError, match=r"samples\.csv.*look like longitude/latitude.*EPSG:32630"):
        load_survey(survey)
