"""The ``subsurf medium`` command as a user meets it: a subprocess, its exit code and output."""

from __future__ import annotations

import json
import math
import subprocess
import sys

import pytest
from scipy import constants


def run(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "subsurf", *args], capture_output=True, text=True, timeout=120)


def test_medium_direct_json_matches_low_loss_handbook_values():
    """ε'=9, σ=5 mS/m at 400 MHz: v ≈ c/3 and α ≈ 1.64·5/3 dB/m (Annan 2009 low-loss rule, from memory)."""
    p = run("medium", "--eps", "9", "--sigma", "5 mS/m", "--freq", "400 MHz", "--json")
    assert p.returncode == 0, p.stderr
    data = json.loads(p.stdout)
    row = data["rows"][0]
    assert row["freq_mhz"] == pytest.approx(400)
    assert row["velocity_m_per_ns"] == pytest.approx(constants.c / 3 / 1e9, rel=1e-3)
    # tan δ ≈ 0.025, so the low-loss rule holds to ~0.01 %
    assert row["attenuation_db_per_m"] == pytest.approx(1.6386 * 5 / 3, rel=2e-3)
    assert row["skin_depth_m"] == pytest.approx(20 / math.log(10) / row["attenuation_db_per_m"], rel=1e-9)


def test_medium_default_table_lists_common_frequencies():
    """Without --freq the table runs from 25 MHz to 2.6 GHz with a header naming units."""
    p = run("medium", "--eps", "4", "--sigma", "0")
    assert p.returncode == 0, p.stderr
    assert "v (m/ns)" in p.stdout and "α (dB/m)" in p.stdout
    lines = [ln for ln in p.stdout.splitlines() if ln.strip().startswith(("25 ", "2600"))]
    assert len(lines) == 2


def test_medium_bad_unit_is_one_line_error():
    """A conductivity given in ns is refused in one line naming the flag; exit code 1."""
    p = run("medium", "--eps", "9", "--sigma", "5 ns")
    assert p.returncode == 1
    assert p.stderr.strip().count("\n") == 0
    assert "--sigma" in p.stderr and "Traceback" not in p.stderr


def test_medium_eps_below_one_refused():
    """ε' < 1 names the allowed range."""
    p = run("medium", "--eps", "0.5")
    assert p.returncode == 1
    assert ">= 1" in p.stderr


def test_medium_debug_shows_traceback():
    """--debug turns the one-line error into a traceback."""
    p = run("medium", "--eps", "0.5", "--debug")
    assert p.returncode != 0
    assert "Traceback" in p.stderr


def test_medium_soil_description_json():
    """A loam at 22 % moisture: ε' in the 8–20 range Topp (1980) gives for θ = 0.22 (Ka ≈ 11.9)."""
    p = run("medium", "--texture", "loam", "--moisture", "22 %", "--pore-water-ec", "50 mS/m",
            "--freq", "250", "--json")
    assert p.returncode == 0, p.stderr
    row = json.loads(p.stdout)["rows"][0]
    # Topp et al. (1980): Ka(0.22) = 3.03 + 9.3·0.22 + 146·0.22² − 76.7·0.22³ ≈ 11.9; mixing models
    # for a loam land within a few units of it.
    assert 7 < row["eps_real"] < 20
    assert row["sigma_eff_ms_per_m"] > 0


def test_help_is_quick_and_lists_commands():
    """subsurf --help lists the medium subcommand and an example."""
    p = run("--help")
    assert p.returncode == 0
    assert "medium" in p.stdout and "examples:" in p.stdout


def test_medium_soil_file_with_flag_names_matches_the_flags(tmp_path):
    """A --soil file keyed like the flags (pore_water_ec, temp; flag units) gives the flags' result."""
    f = tmp_path / "soil.toml"
    f.write_text('[soil]\ntexture = "loam"\nmoisture = "20 %"\npore_water_ec = 50\ntemp = 12\n')
    by_file = run("medium", "--soil", str(f), "--freq", "250", "--json")
    by_flags = run("medium", "--texture", "loam", "--moisture", "20 %", "--pore-water-ec", "50", "--temp", "12",
                   "--freq", "250", "--json")
    assert by_file.returncode == 0, by_file.stderr
    assert json.loads(by_file.stdout)["rows"] == json.loads(by_flags.stdout)["rows"]


def test_medium_soil_file_moisture_with_unit_is_labelled(tmp_path):
    """moisture = "20 %" in a --soil file is read (not an internal error) and labelled θ=20 %."""
    f = tmp_path / "soil.toml"
    f.write_text('texture = "loam"\nmoisture = "20 %"\n')
    p = run("medium", "--soil", str(f), "--freq", "250")
    assert p.returncode == 0, p.stderr
    assert p.stdout.splitlines()[0] == "Ground: loam, θ=20 %"


def test_closed_output_pipe_is_not_an_internal_error():
    """Output into a pipe whose reader has gone (as with `| head`) ends quietly, not as an internal error."""
    import os

    r, w = os.pipe()
    os.close(r)  # the reader is gone before anything is written: every write gets EPIPE
    try:
        p = subprocess.run([sys.executable, "-m", "subsurf", "medium", "--eps", "9", "--json"],
                           stdout=w, stderr=subprocess.PIPE, text=True, timeout=120)
    finally:
        os.close(w)
    assert p.returncode == 0
    assert p.stderr == ""


def test_medium_bare_moisture_above_one_suggests_percent():
    """--moisture 20 (a percentage without '%') is one line naming the 0-1 range and suggesting '20 %'."""
    p = run("medium", "--texture", "loam", "--moisture", "20")
    assert p.returncode == 1
    assert len(p.stderr.strip().splitlines()) == 1
    assert "--moisture" in p.stderr and "between 0 and 1" in p.stderr and "'20 %'" in p.stderr
