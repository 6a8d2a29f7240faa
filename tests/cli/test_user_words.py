"""Errors and notes name what the user typed (a flag or a file key), never an internal parameter name.

Each case runs the command (a fork of one warm interpreter per run, tests/cli/warm_runner.py: a real process without the start-up) and checks the one error line (exit 1) or the
JSON warnings: the flag appears, the Soil field name behind it does not.
"""

from __future__ import annotations

import json

import pytest
from warm_runner import run_warm

GROUND = ("--texture", "loam", "--moisture", "20 %")


def run(*args):
    return run_warm(args)


@pytest.mark.parametrize("extra, typed, internal", [
    (("--salinity", "80"), "--salinity", "pore_water_salinity_psu"),
    (("--pore-water-ec", "20 S/m"), "--pore-water-ec", "pore_water_ec25"),
    (("--tds", "90000"), "--tds", "pore_water_tds"),
    (("--bulk-density", "3"), "--bulk-density", "bulk_density"),
    (("--bulk-density", "0.005"), "--bulk-density", "bulk_density"),
    (("--archie-m", "7"), "--archie-m", "archie_m"),
    (("--stone-fraction", "0.8"), "--stone-fraction", "stone_fraction"),
    (("--stone-size", "20000"), "--stone-size", "stone_size"),
])
def test_soil_flag_errors_name_the_flag(extra, typed, internal):
    """A soil flag out of range: one line naming the flag, not the Soil field; exit 1."""
    res = run("medium", *GROUND, *extra, "--freq", "500")
    assert res.returncode == 1, res.stderr
    line = res.stderr.strip()
    assert len(line.splitlines()) == 1 and typed in line and internal not in line, line


def test_range_is_stated_in_the_flag_unit():
    """--bulk-density reads g/cm³, so its range and the value are given in g/cm³ too (1 g/cm³ = 1000 kg/m³)."""
    low = run("medium", *GROUND, "--bulk-density", "0.005").stderr
    assert "between 0.01 and 3 g/cm" in low, low
    high = run("medium", *GROUND, "--bulk-density", "3").stderr
    assert "(= 3 g/cm³)" in high and "particle density" in high and "particle_density" not in high, high


def test_pore_space_error_names_the_flags():
    """A crim soil without texture, porosity or bulk density: the flags that fix it, not 'bulk_density (kg/m³)'."""
    res = run("medium", "--moisture", "0.2", "--freq", "500")
    assert res.returncode == 1
    assert "--texture" in res.stderr and "--porosity" in res.stderr and "--bulk-density" in res.stderr
    assert "bulk_density" not in res.stderr and "kg/m³" not in res.stderr


def test_error_under_json_names_the_flag():
    """Under --json the error object carries the same user-facing wording."""
    res = run("medium", *GROUND, "--salinity", "80", "--json")
    doc = json.loads(res.stderr)
    assert res.returncode == 1 and "--salinity" in doc["error"] and "pore_water_salinity_psu" not in doc["error"]


def test_model_range_notes_use_the_typed_frequency_and_flag():
    """Peplinski's validity notes: the frequency in MHz as typed and --temp, not freq_hz in Hz or temp_c."""
    res = run("medium", "--model", "peplinski", *GROUND, "--temp", "45", "--freq", "250", "--json")
    assert res.returncode == 0, res.stderr
    warnings = " | ".join(json.loads(res.stdout)["warnings"])
    assert "frequency 250 MHz (valid 300 to 1300 MHz)" in warnings, warnings  # Peplinski et al. 1995: 0.3-1.3 GHz
    assert "--temp = 45" in warnings and "freq_hz" not in warnings and "temp_c" not in warnings, warnings


def test_survey_commands_use_the_survey_file_keys():
    """In map/report/demo/region the words are the survey file's keys (surveys/README.md), not Soil fields."""
    from subsurf.cli._names import names_for, translate

    table = names_for(None, "map")
    assert translate("temp_c = 45 °C (valid 0 to 40 °C)", table) == "temperature = 45 °C (valid 0 to 40 °C)"
    assert translate("give at most one of pore_water_salinity_psu, pore_water_ec25", table) == \
        "give at most one of salinity, pore_water_ec"
    # a key the survey file itself uses stays as it is
    assert translate("bulk_density must be > 0", table) == "bulk_density must be > 0"
