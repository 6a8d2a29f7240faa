"""The ``subsurf medium`` command as a user meets it: its exit code and output (a fork of one warm interpreter per run, tests/cli/warm_runner.py: a real process without the start-up)."""

from __future__ import annotations

import json
import math
import subprocess
import sys

import pytest
from scipy import constants
from warm_runner import run_warm


def run(*args: str) -> subprocess.CompletedProcess:
    return run_warm(args)


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
    first_table = p.stdout.split("Loss per mechanism")[0]
    lines = [ln for ln in first_table.splitlines() if ln.strip().startswith(("25 ", "2600"))]
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


def test_medium_json_has_loss_per_mechanism_summing_to_total():
    """Loss budget per mechanism (dB/m): conduction + water + interface + scattering = total = α + scattering."""
    p = run("medium", "--texture", "loam", "--moisture", "20 %", "--stone-fraction", "20 %", "--stone-size", "60",
            "--freq", "100", "--freq", "1000", "--json")
    assert p.returncode == 0, p.stderr
    for row in json.loads(p.stdout)["rows"]:
        loss = {k: row[f"loss_{k}_db_per_m"]
                for k in ("conduction", "water_relaxation", "interface_relaxation", "scattering", "total")}
        parts = loss["conduction"] + loss["water_relaxation"] + loss["interface_relaxation"] + loss["scattering"]
        assert parts == pytest.approx(loss["total"], rel=1e-12)
        assert loss["total"] - loss["scattering"] == pytest.approx(row["attenuation_db_per_m"], rel=1e-12)
        assert min(loss.values()) >= 0 and loss["scattering"] > 0
    assert "Loss per mechanism" in run("medium", "--texture", "loam", "--moisture", "20 %").stdout


def test_direct_ground_without_slope_says_conduction_only():
    """--eps/--sigma without --q-star: one line saying the frequency dependence is conduction only."""
    p = run("medium", "--eps", "5", "--sigma", "0.1", "--freq", "100", "--freq", "1000")
    assert p.returncode == 0, p.stderr
    assert "conduction only" in p.stdout


def test_direct_ground_q_star_raises_loss_with_frequency():
    """--q-star 20 (ε' 5): α ≈ πf/(Q* v) (Turner & Siggins 1994) at 1 GHz, within 3 % (Q → Q* and dispersion)."""
    p = run("medium", "--eps", "5", "--q-star", "20", "--freq", "1000", "--json")
    assert p.returncode == 0, p.stderr
    row = json.loads(p.stdout)["rows"][0]
    want = math.pi * 1e9 / (20 * row["velocity_m_per_ns"] * 1e9) * 20 / math.log(10)
    assert row["attenuation_db_per_m"] == pytest.approx(want, rel=0.03)


def test_direct_ground_two_attenuations_reproduced():
    """Two --attenuation-at values are reproduced by the fitted ground (σ and Q), within 2 %."""
    p = run("medium", "--eps", "6", "--attenuation-at", "100 MHz=1.2", "--attenuation-at", "500=3",
            "--freq", "100", "--freq", "500", "--json")
    assert p.returncode == 0, p.stderr
    rows = json.loads(p.stdout)["rows"]
    assert [r["attenuation_db_per_m"] for r in rows] == pytest.approx([1.2, 3.0], rel=0.02)


def test_clay_and_archie_flags_change_conductivity():
    """--clay-mineral / --clay-cec (cmol(+)/kg) and --archie-m reach the soil's σ_DC."""
    def sigma(*extra):
        p = run("medium", "--texture", "clay", "--moisture", "30 %", "--freq", "100", "--json", *extra)
        assert p.returncode == 0, p.stderr
        return json.loads(p.stdout)["rows"][0]["sigma_dc_ms_per_m"]

    base = sigma()
    assert sigma("--clay-mineral", "smectite") > base > sigma("--clay-mineral", "kaolinite")
    assert sigma("--clay-cec", "25") == pytest.approx(base, rel=1e-9)
    assert sigma("--archie-m", "2.0") < base


@pytest.mark.parametrize("args, flag", [
    (["--texture", "sand", "--moisture", "0.1", "--stone-fraction", "1.5"], "stone-fraction"),
    (["--texture", "sand", "--moisture", "0.1", "--stone-fraction", "0.7"], "1 - porosity"),
    (["--texture", "sand", "--moisture", "0.1", "--stone-size", "-2"], "--stone-size"),
    (["--texture", "sand", "--moisture", "0.1", "--roughness", "-1"], "--roughness"),
    (["--eps", "5", "--q-star", "0"], "--q-star"),
    (["--eps", "5", "--attenuation-at", "100=2", "--attenuation-at", "500=1"], "negative dielectric loss"),
    (["--eps", "5", "--attenuation-at", "100=0.5", "--attenuation-at", "200=3"], "negative conduction loss"),
    (["--eps", "5", "--attenuation-at", "100=0.5"], "exactly twice"),
    (["--texture", "sand", "--moisture", "0.1", "--q-star", "20"], "--q-star"),
    (["--eps", "5", "--clay-cec", "30"], "--clay-cec"),
])
def test_bad_loss_input_is_one_line_exit_1(args, flag):
    """Bad input: one line on stderr naming the flag or field and the allowed range, exit 1, nothing on stdout."""
    p = run("medium", *args)
    assert p.returncode == 1
    assert p.stdout == ""
    lines = p.stderr.strip().splitlines()
    assert len(lines) == 1 and flag in lines[0], p.stderr


def test_medium_json_facts_carry_their_unit_in_the_key():
    """Facts as typed come back in the unit their key names: 1.4 g/cm³ = 1400 kg/m³ (SI definition), 30 mS/m, 12 %."""
    p = run("medium", "--texture", "loam", "--moisture", "12 %", "--pore-water-ec", "30 mS/m", "--bulk-density",
            "1.4", "--temp", "12", "--freq", "250", "--json")
    assert p.returncode == 0, p.stderr
    facts = json.loads(p.stdout)["facts"]
    assert facts["moisture_pct"] == pytest.approx(12.0, rel=1e-12)
    assert facts["pore_water_ec_ms_per_m"] == pytest.approx(30.0, rel=1e-12)
    assert facts["bulk_density_kg_per_m3"] == pytest.approx(1400.0, rel=1e-12)
    assert facts["temperature_c"] == pytest.approx(12.0, rel=1e-12)
    assert not {"moisture", "pore_water_ec25", "bulk_density", "temp_c"} & set(facts)


def test_peplinski_sigma_dc_is_null_not_zero():
    """A model whose ε'' carries conduction reports no separate σ_DC (null), while σ_eff stays a number."""
    p = run("medium", "--model", "peplinski", "--texture", "loam", "--moisture", "20 %", "--freq", "500", "--json")
    assert p.returncode == 0, p.stderr
    row = json.loads(p.stdout)["rows"][0]
    assert row["sigma_dc_ms_per_m"] is None and row["sigma_eff_ms_per_m"] > 0
