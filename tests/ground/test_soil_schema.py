"""Soil files (--soil FILE.toml): the declared soil facts, errors and the JSON Schema (subsurf.ground.schema)."""

from __future__ import annotations

import dataclasses
import json
from pathlib import Path

import pytest

from subsurf.errors import FileInputError
from subsurf.ground import Soil
from subsurf.ground.schema import SOIL_FACTS, load_soil_file, soil_json_schema

SCHEMA_FILE = Path(__file__).resolve().parents[2] / "surveys" / "soil.schema.json"


def write(tmp_path, text):
    p = tmp_path / "soil.toml"
    p.write_text(text)
    return p


def test_every_soil_field_is_declared():
    """Every Soil field a file may set has one SOIL_FACTS line (add one when Soil gains a field)."""
    # non-numeric fields are declared on the SoilFacts model itself (choices, a switch)
    fields = {f.name for f in dataclasses.fields(Soil) if f.init} - {"texture", "model", "clay_mineral",
                                                                      "interface_relaxation"}
    declared = {k for k, f in SOIL_FACTS.items() if f.field is None}
    assert fields == declared, f"declare in subsurf/ground/schema.py: {sorted(fields - declared)}"
    assert all(f.field in fields for f in SOIL_FACTS.values() if f.field is not None)


def test_flag_named_keys_read_flag_units(tmp_path):
    """pore_water_ec = 50 is mS/m (as the flag), pore_water_ec25 = 0.05 is S/m: the same 0.05 S/m."""
    a = load_soil_file(write(tmp_path, 'moisture = "20 %"\npore_water_ec = 50\ntemp = 12\n'))
    assert a == {"moisture": pytest.approx(0.20), "pore_water_ec25": pytest.approx(0.05), "temp_c": 12.0}
    b = load_soil_file(write(tmp_path, '[soil]\nmoisture = 0.2\npore_water_ec25 = 0.05\ntemp_c = "53.6 degF"\n'))
    assert b["pore_water_ec25"] == pytest.approx(0.05) and b["temp_c"] == pytest.approx(12.0)  # (53.6-32)/1.8


def test_typo_suggests_closest_key(tmp_path):
    """moisure is refused naming [soil] and suggesting moisture."""
    p = write(tmp_path, '[soil]\ntexture = "loam"\nmoisure = "20 %"\n')
    with pytest.raises(FileInputError, match=r"soil\.toml: \[soil\] moisure: unknown key; did you mean 'moisture'\?"):
        load_soil_file(p)


def test_range_error_names_key_and_range(tmp_path):
    """moisture = '120 %' is one line naming the key and the range 0-1 (0-100 %)."""
    p = write(tmp_path, '[soil]\nmoisture = "120 %"\n')
    with pytest.raises(FileInputError, match=r"\[soil\] moisture: must be between 0 and 1 \(0 to 100 %\), "
                                             r"got '120 %'"):
        load_soil_file(p)


def test_wrong_unit_names_kind(tmp_path):
    """temp = '3 m' is not a temperature: the message names the key and gives an example."""
    p = write(tmp_path, 'moisture = 0.2\ntemp = "3 m"\n')
    with pytest.raises(FileInputError, match=r"temp: cannot read '3 m' as a temperature.*'12 degC'"):
        load_soil_file(p)


def test_key_and_flag_twin_refused(tmp_path):
    """temp and temp_c both given is refused (which one would win is not obvious)."""
    p = write(tmp_path, '[soil]\nmoisture = 0.2\ntemp = 12\ntemp_c = 11\n')
    with pytest.raises(FileInputError, match="'temp_c' and 'temp' both give temp_c"):
        load_soil_file(p)


def test_unknown_texture_named(tmp_path):
    """An unknown texture preset names the key and lists the presets."""
    p = write(tmp_path, '[soil]\ntexture = "lome"\nmoisture = 0.2\n')
    with pytest.raises(FileInputError, match=r"\[soil\] texture: texture 'lome' is not a known preset; allowed: .*loam"):
        load_soil_file(p)


def test_from_mapping_suggests_field():
    """Soil.from_mapping with a typo suggests the field; a flag-named key points to its Soil field."""
    from subsurf.errors import InputError

    with pytest.raises(InputError, match="did you mean 'moisture'"):
        Soil.from_mapping({"moistur": 0.2})
    with pytest.raises(InputError, match="did you mean 'temp_c'"):
        Soil.from_mapping({"moisture": 0.2, "temp": 12})


def test_committed_json_schema_is_generated():
    """surveys/soil.schema.json equals the schema generated from the models (rerun surveys/make_schemas.py)."""
    assert json.loads(SCHEMA_FILE.read_text(encoding="utf-8")) == soil_json_schema()


def test_json_schema_checked_by_independent_validator(tmp_path):
    """jsonschema (draft 2020-12) accepts flat and [soil] files and refuses an unknown key and a bare 1.2 moisture."""
    import jsonschema

    schema = json.loads(SCHEMA_FILE.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    v = jsonschema.Draft202012Validator(schema)
    v.validate({"texture": "loam", "moisture": "20 %", "pore_water_ec": 50})
    v.validate({"soil": {"texture": "loam", "moisture": 0.2}})
    assert not v.is_valid({"soil": {"moisure": 0.2}})
    assert not v.is_valid({"moisture": 1.2})
