"""Survey files: schema, CRS handling and bad input (subsurf.site.survey, subsurf.site.schema)."""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest

from subsurf.errors import FileInputError, InputError
from subsurf.site.survey import auto_utm_crs, load_survey

EXAMPLE = Path(__file__).resolve().parents[2] / "surveys" / "example-site" / "survey.toml"

# a 100 m x 60 m box in UTM 31N (invented)
E0, N0 = 500_000.0, 5_700_000.0
BASE = f"""
[site]
name = "test box (invented)"
bbox = [{E0}, {N0}, {E0 + 100}, {N0 + 60}]
crs = "EPSG:32631"
[grid]
cell_size = "5 m"
[soil]
texture = "loamy_sand"
[soil.defaults]
moisture = "15 %"
pore_water_ec = "20 mS/m"
[target]
kind = "line"
depth = "1 m"
size = "0.1 m"
material = "metal"
[antennas]
names = ["midband-250"]
"""


def write(tmp_path, text=BASE, *, samples=None, outline=None):
    if samples is not None:
        (tmp_path / "s.csv").write_text(samples)
        text += '\n[[soil.samples]]\nfile = "s.csv"\ncrs = "EPSG:32631"\n'
    if outline is not None:
        (tmp_path / "o.geojson").write_text(json.dumps(outline))
        text = text.replace(f"bbox = [{E0}, {N0}, {E0 + 100}, {N0 + 60}]", 'outline = "o.geojson"')
    p = tmp_path / "survey.toml"
    p.write_text(text)
    return p


def utm_epsg_by_formula(lon, lat):
    """UTM zone by its definition: 6-degree zones from 180 W; 326xx north, 327xx south."""
    zone = int(math.floor((lon + 180.0) / 6.0)) + 1
    return (32600 if lat >= 0 else 32700) + zone


@pytest.mark.parametrize("lon,lat", [(-1.6, 52.2), (2.35, 48.85), (151.2, -33.9), (-70.6, -33.4), (139.7, 35.7)])
def test_auto_utm_zone_matches_definition(lon, lat):
    """The automatic UTM zone (pyproj database) equals the zone from the UTM definition."""
    assert auto_utm_crs(lon, lat).to_epsg() == utm_epsg_by_formula(lon, lat)


def test_auto_utm_refuses_polar_site():
    """Latitudes outside the UTM band are refused with the allowed range named."""
    with pytest.raises(InputError, match="-80 to 84"):
        auto_utm_crs(10.0, 86.0)


def test_example_survey_loads_with_auto_utm():
    """The bundled example picks WGS 84 / UTM 30N and reads all its inputs."""
    s = load_survey(EXAMPLE)
    assert s.grid_crs.to_epsg() == 32630 and s.grid_crs_source == "auto-utm"
    assert len(s.samples[0].x) == 16 and len(s.zones[0].names) == 2 and s.rasters[0].quantity == "temperature"
    assert [sc.name for sc in s.scenarios] == ["dry", "wet"]


def test_sample_units_converted_to_si(tmp_path):
    """'moisture [%]' and 'pore_water_ec [mS/m]' columns become fractions and S/m."""
    p = write(tmp_path, samples="x,y,moisture [%],pore_water_ec [mS/m]\n"
              f"{E0 + 10},{N0 + 10},20,30\n{E0 + 50},{N0 + 20},25,40\n{E0 + 80},{N0 + 50},30,50\n")
    s = load_survey(p)
    assert s.samples[0].values["moisture"].tolist() == pytest.approx([0.20, 0.25, 0.30])
    assert s.samples[0].values["pore_water_ec"].tolist() == pytest.approx([0.030, 0.040, 0.050])


def test_missing_crs_named(tmp_path):
    """A site without a CRS is a one-line error naming the key [site] crs and what it takes."""
    p = write(tmp_path, BASE.replace('crs = "EPSG:32631"\n', "", 1))
    with pytest.raises(FileInputError, match=r"survey\.toml: \[site\] crs: missing required key \(an EPSG code"):
        load_survey(p)


def test_unknown_crs_named(tmp_path):
    """An unknown EPSG code is refused with the field named."""
    p = write(tmp_path, BASE.replace('crs = "EPSG:32631"', 'crs = "EPSG:999999"', 1))
    with pytest.raises(FileInputError, match=r"\[site\] crs: unknown CRS"):
        load_survey(p)


def test_geographic_grid_crs_refused(tmp_path):
    """A grid CRS in degrees is refused: the grid needs metres."""
    p = write(tmp_path, BASE.replace('cell_size = "5 m"', 'crs = "EPSG:4326"\ncell_size = "5 m"'))
    with pytest.raises(FileInputError, match="not projected"):
        load_survey(p)


def test_self_intersecting_outline_refused(tmp_path):
    """A bow-tie outline is not a valid polygon: error names the file and the reason."""
    bow = {"type": "Polygon", "coordinates": [[[E0, N0], [E0 + 100, N0 + 60], [E0 + 100, N0], [E0, N0 + 60],
                                                [E0, N0]]]}
    p = write(tmp_path, outline=bow)
    with pytest.raises(FileInputError, match=r"o\.geojson.*not valid.*Self-intersection"):
        load_survey(p)


def test_empty_outline_refused(tmp_path):
    """An outline with no polygon features is refused."""
    p = write(tmp_path, outline={"type": "FeatureCollection", "features": []})
    with pytest.raises(FileInputError, match="no polygon features"):
        load_survey(p)


def test_nan_in_samples_is_missing_and_named_by_row(tmp_path):
    """A NaN value is read as missing for that sample; the note names the file and its line number."""
    from subsurf.site.vectors import InputNote

    p = write(tmp_path, samples=f"x,y,moisture\n{E0 + 1},{N0 + 1},0.2\n{E0 + 2},{N0 + 9},nan\n")
    with pytest.warns(InputNote, match=r"s\.csv: blank or missing cells .*: row 3 \(moisture\)"):
        s = load_survey(p)
    assert math.isnan(s.samples[0].values["moisture"][1])


def test_missing_coordinate_column(tmp_path):
    """A sample file without its y column names the missing column."""
    p = write(tmp_path, samples=f"x,moisture\n{E0 + 1},0.2\n")
    with pytest.raises(FileInputError, match=r"missing coordinate column 'y'"):
        load_survey(p)


def test_unparseable_unit(tmp_path):
    """A header unit that is not a conductivity is refused, naming the column."""
    p = write(tmp_path, samples=f"x,y,pore_water_ec [kg]\n{E0 + 1},{N0 + 1},20\n")
    with pytest.raises(FileInputError, match=r"field 'pore_water_ec \[kg\]'.*unit"):
        load_survey(p)


def test_value_out_of_range_names_row(tmp_path):
    """A moisture of 95 % is outside the accepted range; the row is named."""
    p = write(tmp_path, samples=f"x,y,moisture [%]\n{E0 + 1},{N0 + 1},95\n")
    with pytest.raises(FileInputError, match=r"row 2.*outside the accepted range"):
        load_survey(p)


def test_unknown_antenna_kind_of_target(tmp_path):
    """An unknown target kind lists the allowed kinds."""
    p = write(tmp_path, BASE.replace('kind = "line"', 'kind = "sphere"'))
    with pytest.raises(FileInputError, match=r"\[target\] kind: 'sphere' is not one of planar, point, line"):
        load_survey(p)


@pytest.mark.parametrize("lon,lat,epsg", [
    (5.32, 60.39, 32632),   # Bergen: south-western Norway is mapped in UTM zone 32 (from memory)
    (15.63, 78.22, 32633),  # Longyearbyen, Svalbard: UTM zone 33X (from memory)
    (10.0, 80.0, 32633),    # Svalbard zones 31X/33X/35X/37X replace 32X, 34X, 36X (from memory)
])
def test_auto_utm_norway_svalbard_exceptions(lon, lat, epsg):
    """The UTM grid's Norway and Svalbard exceptions pick the zones used there, not the plain 6-degree zone."""
    assert auto_utm_crs(lon, lat).to_epsg() == epsg


@pytest.mark.parametrize("code, kind", [("EPSG:5703", "vertical"), ("EPSG:4978", "geocentric")])
def test_vertical_or_geocentric_crs_refused(tmp_path, code, kind):
    """A vertical (EPSG:5703, NAVD88 height) or geocentric (EPSG:4978) CRS cannot place an outline: one line."""
    # The kinds are pyproj's (CRS.is_vertical / is_geocentric), read from the EPSG database.
    from pyproj import CRS

    assert getattr(CRS.from_user_input(code), f"is_{kind}")
    p = write(tmp_path, BASE.replace('crs = "EPSG:32631"', f'crs = "{code}"', 1))
    with pytest.raises(FileInputError, match=rf"\[site\] crs: CRS '{code}' .* is a {kind} .*projected .*geographic"):
        load_survey(p)


def test_temperature_offset_in_kelvin_is_a_difference(tmp_path):
    """A scenario offset of '3 K' (and an sd of '1.8 degF') are differences: 3 and 1 degC (SI definitions)."""
    p = write(tmp_path, BASE.replace('pore_water_ec = "20 mS/m"', 'pore_water_ec = "20 mS/m"\ntemperature = '
                                     '"10 degC"\ntemperature_sd = "1.8 degF"')
              + '\n[[scenarios]]\nname = "warm"\noffset = { temperature = "3 K" }\n')
    s = load_survey(p)
    assert s.scenarios[0].offset["temperature"] == pytest.approx(3.0, abs=1e-9)
    assert s.default_sd["temperature"] == pytest.approx(1.0, abs=1e-9)


def test_monte_carlo_draws_not_a_number(tmp_path):
    """draws = "many" is a one-line error naming [monte_carlo] draws, not an internal error."""
    p = write(tmp_path, BASE + '\n[monte_carlo]\ndraws = "many"\n')
    with pytest.raises(FileInputError, match=r"\[monte_carlo\] draws: expected a whole number"):
        load_survey(p)


def test_single_bracket_samples_table(tmp_path):
    """[soil.samples] written with single brackets is explained (an array of tables is needed)."""
    p = write(tmp_path, BASE + '\n[soil.samples]\nfile = "s.csv"\ncrs = "EPSG:32631"\n')
    with pytest.raises(FileInputError, match=r"\[soil\.samples\]: expected an array of tables.*double brackets"):
        load_survey(p)


# --- the declared schema (subsurf.site.schema) ------------------------------------------------

SCHEMA_FILE = EXAMPLE.parents[1] / "survey.schema.json"


def test_cellsize_typo_refused_with_suggestion(tmp_path):
    """An unknown key (cellsize) is refused, naming [grid] and suggesting cell_size (difflib)."""
    p = write(tmp_path, BASE.replace("cell_size", "cellsize"))
    with pytest.raises(FileInputError, match=r"\[grid\] cellsize: unknown key; did you mean 'cell_size'\?"):
        load_survey(p)


def test_unknown_top_level_key_refused(tmp_path):
    """A key outside every table (a stray 'catalog') is refused, listing the allowed tables."""
    p = write(tmp_path, 'catalog = "x.toml"\n' + BASE)
    with pytest.raises(FileInputError, match=r"catalog: unknown key.*site, grid, soil, target, antennas"):
        load_survey(p)


def test_scenario_offset_range_names_key_path_and_range(tmp_path):
    """An offset of +90 % moisture leaves the accepted span (+-70 %): file, scenario, key and range in one line."""
    p = write(tmp_path, BASE + '\n[[scenarios]]\nname = "wet"\noffset = { moisture = "90 %" }\n')
    with pytest.raises(FileInputError) as err:
        load_survey(p)
    msg = str(err.value)
    assert msg.count("\n") == 0
    assert 'survey.toml: [[scenarios]] "wet" offset.moisture: must be between -0.7 and 0.7 (-70 to 70 %)' in msg


def test_default_range_error_names_table_and_range(tmp_path):
    """[soil.defaults] moisture = '85 %' names the table, the key and the range 0-70 %."""
    p = write(tmp_path, BASE.replace('moisture = "15 %"', 'moisture = "85 %"'))
    with pytest.raises(FileInputError, match=r"\[soil\.defaults\] moisture: must be between 0 and 0\.7 "
                                             r"\(0 to 70 %\), got '85 %'"):
        load_survey(p)


def test_units_strings_read_at_the_edge(tmp_path):
    """'20 mS/m', '5 m' and '15 %' are converted to SI by pint (0.02 S/m, 5 m, 0.15)."""
    s = load_survey(write(tmp_path))
    assert s.defaults["pore_water_ec"] == pytest.approx(0.020, rel=1e-12)
    assert s.defaults["moisture"] == pytest.approx(0.15, rel=1e-12) and s.cell_size_m == 5.0


CATALOGUE = """
[antenna.site-600]
centre_frequency_mhz = 600
bandwidth_mhz = 600
system_performance_db = 120
separation_m = 0.1
trace_rate_hz = 100
"""


def test_catalogue_key_resolved_relative_to_survey(tmp_path):
    """[antennas] catalogue names a TOML beside the survey; the Survey carries its absolute path."""
    (tmp_path / "cat").mkdir()
    (tmp_path / "cat" / "mine.toml").write_text(CATALOGUE)
    p = write(tmp_path, BASE.replace('names = ["midband-250"]', 'names = ["site-600"]\ncatalogue = "cat/mine.toml"'))
    s = load_survey(p)
    assert s.catalogue_path == (tmp_path / "cat" / "mine.toml").resolve()
    d = s.describe()["catalogue"]
    assert d["file"] == str(s.catalogue_path) and d["source"] == "survey" and d["inline"] == []
    assert str(s.catalogue_path) in d["text"]


def test_antenna_not_in_own_catalogue_suggests_name(tmp_path):
    """An antenna missing from the survey's catalogue is refused, suggesting the nearest name in it."""
    (tmp_path / "mine.toml").write_text(CATALOGUE)
    p = write(tmp_path, BASE.replace('names = ["midband-250"]', 'names = ["site-60"]\ncatalogue = "mine.toml"'))
    with pytest.raises(FileInputError, match=r"\[antennas\] names: antenna 'site-60' is not in the survey's "
                                             r"catalogue \S*mine\.toml; did you mean 'site-600'\?"):
        load_survey(p)


def test_missing_catalogue_file_named(tmp_path):
    """A catalogue path that does not exist is one line naming [antennas] catalogue."""
    p = write(tmp_path, BASE.replace('names = ["midband-250"]', 'names = ["midband-250"]\ncatalogue = "no.toml"'))
    with pytest.raises(FileInputError, match=r"\[antennas\] catalogue: antenna catalogue not found"):
        load_survey(p)


INLINE = """
[antennas.define.site-600]
centre_frequency_mhz = 600
bandwidth_mhz = 600
system_performance_db = 120
separation_m = 0.1
trace_rate_hz = 100
"""


def test_inline_antenna_defined_in_survey(tmp_path):
    """[antennas.define.NAME] adds an antenna of the survey's own; without names it is the one mapped."""
    text = BASE.replace('[antennas]\nnames = ["midband-250"]\n', "") + INLINE
    s = load_survey(write(tmp_path, text))
    assert s.antennas == ["site-600"]
    (a,) = s.antenna_list()
    assert a.centre_freq_hz == 600e6 and a.performance_db == 120 and not a.illustrative
    d = s.describe()["catalogue"]
    assert d["source"] == "bundled" and d["inline"] == ["site-600"] and "defined in the survey (site-600)" in d["text"]


def test_inline_antennas_extend_the_catalogue(tmp_path):
    """names may mix bundled antennas and inline ones; the bundled one is flagged illustrative."""
    text = BASE.replace('names = ["midband-250"]', 'names = ["midband-250", "site-600"]') + INLINE
    s = load_survey(write(tmp_path, text))
    assert [a.name for a in s.antenna_list()] == ["midband-250", "site-600"]
    assert s.describe()["catalogue"]["illustrative"] == ["midband-250"]


def test_override_catalogue_replaces_the_survey_key(tmp_path):
    """load_survey(catalogue=FILE) (the commands' --catalogue) replaces [antennas] catalogue, inline kept."""
    (tmp_path / "mine.toml").write_text(CATALOGUE)
    (tmp_path / "other.toml").write_text(CATALOGUE.replace("site-600", "other-300").replace("= 600", "= 300"))
    text = BASE.replace('names = ["midband-250"]', 'names = ["other-300"]\ncatalogue = "mine.toml"')
    s = load_survey(write(tmp_path, text), catalogue=tmp_path / "other.toml")
    assert s.antenna_list()[0].centre_freq_hz == 300e6
    assert s.describe()["catalogue"]["source"] == "--catalogue"
    with pytest.raises(FileInputError, match=r"\[antennas\] names: antenna 'other-300' is not in the survey's"):
        load_survey(write(tmp_path, text))


def test_inline_name_also_in_catalogue_refused(tmp_path):
    """An inline antenna with the name of a catalogue antenna is refused naming its table."""
    (tmp_path / "mine.toml").write_text(CATALOGUE)
    text = BASE.replace('names = ["midband-250"]', 'names = ["site-600"]\ncatalogue = "mine.toml"') + INLINE
    with pytest.raises(FileInputError, match=r"survey\.toml: \[antennas\.define\.site-600\]: antenna 'site-600' "
                                             r"is also in the catalogue"):
        load_survey(write(tmp_path, text))


@pytest.mark.parametrize("edit,where,near", [
    (("centre_frequency_mhz", "centre_freq_mhz"), r"\[antennas\.define\.site-600\] centre_freq_mhz: unknown key",
     "centre_frequency_mhz"),
    (("system_performance_db = 120\n", ""), r"\[antennas\.define\.site-600\] system_performance_db: missing", None),
])
def test_inline_antenna_bad_keys(tmp_path, edit, where, near):
    """An inline antenna's typo is refused with the closest field; a missing field names it."""
    text = BASE.replace('names = ["midband-250"]', 'names = ["site-600"]') + INLINE.replace(*edit)
    with pytest.raises(FileInputError, match=where) as err:
        load_survey(write(tmp_path, text))
    assert str(err.value).count("\n") == 0
    if near:
        assert f"did you mean '{near}'" in str(err.value)


def test_antennas_table_needs_names_or_definitions(tmp_path):
    """[antennas] with neither names nor inline antennas says what to give."""
    text = BASE.replace('names = ["midband-250"]', 'catalogue = "x.toml"')
    with pytest.raises(FileInputError, match=r"\[antennas\]: .*give names"):
        load_survey(write(tmp_path, text))


def test_sample_column_mapping(tmp_path):
    """columns = {moisture = 'VWC [%]'} reads a file whose header names moisture otherwise."""
    (tmp_path / "s.csv").write_text(f"x,y,VWC [%]\n{E0 + 10},{N0 + 10},20\n{E0 + 50},{N0 + 20},25\n"
                                    f"{E0 + 80},{N0 + 50},30\n")
    text = BASE + '\n[[soil.samples]]\nfile = "s.csv"\ncrs = "EPSG:32631"\ncolumns = { moisture = "VWC [%]" }\n'
    s = load_survey(write(tmp_path, text))
    assert s.samples[0].values["moisture"].tolist() == pytest.approx([0.20, 0.25, 0.30])


def test_committed_json_schema_is_generated():
    """surveys/survey.schema.json equals the schema generated from the models (rerun surveys/make_schemas.py)."""
    from subsurf.site.schema import survey_json_schema

    assert json.loads(SCHEMA_FILE.read_text(encoding="utf-8")) == survey_json_schema()


def test_json_schema_accepts_example_and_refuses_typo():
    """An independent validator (jsonschema, draft 2020-12) accepts the bundled example and refuses a typo."""
    import tomllib

    import jsonschema

    schema = json.loads(SCHEMA_FILE.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    data = tomllib.loads(EXAMPLE.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(schema).validate(data)
    data["grid"]["cellsize"] = data["grid"].pop("cell_size")
    with pytest.raises(jsonschema.ValidationError, match="cellsize"):
        jsonschema.Draft202012Validator(schema).validate(data)


def test_readme_documents_every_schema_key():
    """Every key the schema declares appears in surveys/README.md (the prose cannot drift from the models)."""
    from subsurf.planning.catalogue import AntennaEntry
    from subsurf.site import schema as sch

    readme = (EXAMPLE.parents[1] / "README.md").read_text(encoding="utf-8")
    for model in (sch.Site, sch.Grid, sch.SoilTable, sch.Samples, sch.Zones, sch.Raster, sch.Target,
                  sch.Antennas, sch.Scenario, sch.MonteCarlo, sch.SurveyFile, AntennaEntry):
        for key in model.model_fields:
            documented = f"`{key}`" in readme or re.search(rf"\[\[?([a-z_]+\.)?{key}\]", readme)
            assert documented, (model.__name__, key)
    for q in sch.QUANTITIES:
        assert f"`{q}`" in readme, q


@pytest.mark.parametrize("code", ["EPSG:4326", "EPSG:4979", "EPSG:32633", "EPSG:5972", "EPSG:9518"])
def test_horizontal_crs_kinds_accepted_the_same_everywhere(code):
    """Geographic 2D/3D, projected and compound CRSs with such a horizontal part pass every CRS reader."""
    # pyproj's own kind flags: each of these has is_projected or is_geographic and is not geocentric
    # (EPSG:5972 = ETRS89 / UTM 32N + NN2000 height, EPSG:9518 = WGS 84 + EGM2008 height).
    from pyproj import CRS

    from subsurf.io.picks import parse_crs
    from subsurf.site.crs import horizontal_crs_problem, read_crs

    crs = CRS.from_user_input(code)
    assert (crs.is_projected or crs.is_geographic) and not crs.is_geocentric
    assert horizontal_crs_problem(crs) is None
    assert parse_crs(code) == crs and read_crs(code, path="x.toml", field="crs") == crs
