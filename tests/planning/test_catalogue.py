"""Antenna catalogue files: the declared layout, refusals and the catalogue a survey uses (subsurf.planning.catalogue)."""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import pytest

from subsurf.errors import FileInputError
from subsurf.planning.catalogue import bundled_catalogue_path, catalogue_json_schema, read_catalogue

ROOT = Path(__file__).resolve().parents[2]
SCHEMA_FILE = ROOT / "surveys" / "catalogue.schema.json"

# one invented antenna (fictional figures, no real instrument)
ONE = """
[antenna.rig-350]
centre_frequency_mhz = 350
bandwidth_mhz = 300
system_performance_db = 71.5
separation_m = 0.2
trace_rate_hz = 120
stacks = 8
illustrative = false
"""


def write(tmp_path, text):
    p = tmp_path / "mine.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_entry_read_in_si(tmp_path):
    """Human units of the file become SI on the Antenna (MHz -> Hz); optional fields take their defaults."""
    (a,) = read_catalogue(write(tmp_path, ONE)).values()
    assert (a.name, a.centre_freq_hz, a.bandwidth_hz, a.performance_db, a.stacks) == ("rig-350", 350e6, 300e6, 71.5, 8)
    assert a.gain is None and a.pulse_length_s is None and a.clutter_limit_db == 15.0 and not a.illustrative


@pytest.mark.parametrize("edit,where,what", [
    (("centre_frequency_mhz", "centre_freq_mhz"), "[antenna.rig-350] centre_freq_mhz",
     "unknown key; did you mean 'centre_frequency_mhz'?"),
    (("stacks = 8", "stacks = 8\nstack = 2"), "[antenna.rig-350] stack", "did you mean 'stacks'?"),
    (("trace_rate_hz = 120\n", ""), "[antenna.rig-350] trace_rate_hz", "missing required key"),
    (("system_performance_db = 71.5", 'system_performance_db = "71.5 dB"'), "[antenna.rig-350] system_performance_db",
     "expected a number"),
    (("separation_m = 0.2", "separation_m = true"), "[antenna.rig-350] separation_m", "expected a number"),
    (("bandwidth_mhz = 300", "bandwidth_mhz = 2000"), "[antenna.rig-350]", "0.25 and 2 x centre_frequency_mhz"),
    (("stacks = 8", "stacks = 0"), "[antenna.rig-350] stacks", ">= 1"),
    (("[antenna.rig-350]", "[antenna.'rig 350']"), "[antenna]", "may use only letters"),
    (("[antenna.rig-350]", "[antennas.rig-350]"), "antennas", "did you mean 'antenna'?"),
    ((ONE, ONE + ONE.replace("350", "450", 1).replace("rig-450", "rig-350")), "[antenna.rig-350]",
     "defined twice"),
])
def test_bad_catalogue_is_one_line_naming_file_table_and_key(tmp_path, edit, where, what):
    """Each problem is one FileInputError line: the file, the [antenna.NAME] table and key, what is allowed."""
    text = ONE.replace(*edit) if edit[0] != ONE else edit[1]
    with pytest.raises(FileInputError) as err:
        read_catalogue(write(tmp_path, text))
    msg = str(err.value)
    assert msg.count("\n") == 0 and "mine.toml" in msg and where in msg and what in msg, msg


def test_empty_catalogue_refused(tmp_path):
    """A file without [antenna.NAME] tables is refused naming the missing table."""
    with pytest.raises(FileInputError, match=r"mine\.toml: antenna: missing required key \(one table per antenna"):
        read_catalogue(write(tmp_path, "# nothing\n"))


def test_committed_catalogue_schema_is_generated():
    """surveys/catalogue.schema.json equals the schema generated from the model (rerun surveys/make_schemas.py)."""
    assert json.loads(SCHEMA_FILE.read_text(encoding="utf-8")) == catalogue_json_schema()


def test_catalogue_schema_checks_bundled_file_and_refuses_typo():
    """An independent validator (jsonschema, draft 2020-12) accepts configs/antennas.toml and refuses a typo."""
    import jsonschema

    schema = json.loads(SCHEMA_FILE.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    data = tomllib.loads(bundled_catalogue_path().read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(schema).validate(data)
    entry = next(iter(data["antenna"].values()))
    entry["centre_freq_mhz"] = entry.pop("centre_frequency_mhz")
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.Draft202012Validator(schema).validate(data)


def test_separation_adjustable_is_read_and_defaults_to_fixed(tmp_path):
    """separation_adjustable: the bundled unshielded lowband-50 is adjustable, shielded ones fixed; default false."""
    bundled = read_catalogue()
    assert bundled["lowband-50"].separation_adjustable
    assert not bundled["midband-500"].separation_adjustable
    assert not read_catalogue(write(tmp_path, ONE))["rig-350"].separation_adjustable
    with pytest.raises(FileInputError, match="separation_adjustable"):
        read_catalogue(write(tmp_path, ONE.replace("stacks = 8", "stacks = 8\nseparation_adjustable = \"maybe\"")))
