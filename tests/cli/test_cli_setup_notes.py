"""`subsurf setup` / `choose`: each note only where its situation holds (both ways), and the survey effort of 3D grids."""

import json
import math
import subprocess
import sys

import pytest


def run(*args):
    return subprocess.run([sys.executable, "-m", "subsurf", *args], capture_output=True, text=True, timeout=120)


def setup_json(*args):
    p = run("setup", *args, "--json")
    assert p.returncode == 0, p.stderr
    return json.loads(p.stdout)


def notes_with(out, words):
    return [n for n in out["notes"] if words in n]


ARCH = ("--antenna", "midband-500", "--texture", "silt_loam", "--moisture", "20 %", "--depth", "0.6",
        "--area", "1200 m^2", "--line-length", "40")


def test_pipe_lines_run_across_the_pipe_only_for_line_targets():
    """'across the expected pipe direction' for a pipe; a planar target gets 'any direction … down the dip'."""
    pipe = setup_json("--antenna", "midband-400", "--eps", "9", "--sigma", "5 mS/m", "--target", "line", "--depth",
                      "1.5", "--size", "0.1", "--material", "metal", "--area", "500 m^2")
    layer = setup_json("--antenna", "midband-400", "--eps", "9", "--sigma", "5 mS/m", "--target", "planar",
                       "--depth", "1.5", "--area", "500 m^2")
    assert notes_with(pipe, "across the expected pipe direction")
    assert not notes_with(layer, "pipe")
    assert notes_with(layer, "any direction over a level interface") and notes_with(layer, "down the dip")
    assert not notes_with(pipe, "level interface")


def test_point_targets_and_unknown_pipe_direction():
    """A point target: any direction, the target still inside a footprint; a pipe of unknown direction: two sets."""
    point = setup_json(*ARCH, "--target", "point", "--size", "0.3", "--material", "void")
    assert notes_with(point, "any direction; a 0.3 m target midway")
    unknown = setup_json("--antenna", "midband-400", "--eps", "9", "--target", "line", "--depth", "1", "--size",
                         "0.1", "--orientation", "unknown")
    assert notes_with(unknown, "second set at right angles") and not notes_with(unknown, "run them across")
    depth_only = setup_json("--antenna", "midband-400", "--eps", "9", "--depth", "1")
    assert not notes_with(depth_only, "2D lines")  # no target: no direction to give


def test_fixed_separation_note_only_for_fixed_antennas():
    """Shielded midband-500 (fixed in its housing) vs lowband-50 (separation adjustable in the catalogue)."""
    fixed = setup_json("--antenna", "midband-500", "--eps", "9", "--depth", "1.5")
    adjustable = setup_json("--antenna", "lowband-50", "--eps", "9", "--depth", "8")
    assert notes_with(fixed, "fixed separation") and not notes_with(fixed, "adjustable")
    assert not notes_with(adjustable, "fixed separation")
    # Annan & Cosway (1992): S = 2d/√(ε'−1) = 16/√8 = 5.66 m
    assert notes_with(adjustable, f"set it near {16 / math.sqrt(8):.3g} m")
    assert adjustable["rules"]["antenna_separation_m"].endswith("adjustable")
    assert fixed["rules"]["antenna_separation_m"].endswith("fixed in the housing")
    # within ×2 of the optimum (2 m at d = √8 ≈ 2.83 m) there is nothing to say, adjustable or not
    near = setup_json("--antenna", "lowband-50", "--eps", "9", "--depth", "2.83")
    assert not notes_with(near, "separation")


def test_no_plan_notes_when_the_target_is_out_of_reach():
    """Out of reach: the verdict note, and no separation or line-direction advice for a survey not planned."""
    out = setup_json("--antenna", "midband-250", "--texture", "loam", "--moisture", "20 %", "--target", "line",
                     "--depth", "2.5", "--size", "0.1", "--material", "metal", "--area", "2000 m^2")
    assert not out["reachable"] and out["survey"] is None
    assert not notes_with(out, "separation") and not notes_with(out, "2D lines")


def test_3d_grid_survey_time_at_both_spacings_and_the_aliasing_note():
    """--grid-3d: both 3D spacings with lines, km and hours, and what the coarser one loses; without it neither."""
    grid = setup_json(*ARCH, "--target", "planar", "--grid-3d")
    plain = setup_json(*ARCH, "--target", "planar")
    rows = {g["grid"]: g for g in grid["survey"]["grids"]}
    assert set(rows) == {"2d_detection", "3d_practice", "3d_limit"}
    assert [g for g, r in rows.items() if r["planned"]] == ["3d_practice", "3d_limit"]
    s = grid["settings"]
    assert rows["3d_limit"]["line_spacing_m"] == s["line_spacing_3d_m"] == pytest.approx(s["trace_spacing_m"])
    assert rows["3d_practice"]["line_spacing_m"] == s["line_spacing_3d_practice_m"]
    for r in rows.values():  # hand count: 30 m across, n = ⌈30/s⌉ + 1 lines of 40 m, 1 m/s, 10 s turns
        n = math.ceil(30.0 / r["line_spacing_m"] - 1e-9) + 1
        assert r["lines"] == n and r["total_line_km"] == pytest.approx(n * 40 / 1e3)
        assert r["survey_time_h"] == pytest.approx((n * 40 / grid["survey"]["speed_m_per_s"] + (n - 1) * 10) / 3600)
    assert rows["3d_limit"]["unaliased_dip_deg"] == pytest.approx(90.0)
    alias = notes_with(grid, "alias")
    assert alias and f"more than {rows['3d_practice']['unaliased_dip_deg']:.0f}°" in alias[0]
    assert not notes_with(plain, "alias") and [g["grid"] for g in plain["survey"]["grids"] if g["planned"]] == [
        "2d_detection"]
    text = run("setup", *ARCH, "--target", "planar", "--grid-3d").stdout
    assert "3D grid, common practice" in text and "3D grid, λ/4 imaging limit" in text
    assert "2D detection lines " not in text


def test_low_contrast_note_in_setup_and_choose_only_where_low():
    """Granite under dry sand (|R| ≈ 0.06) is flagged in setup and choose; a metal pipe in the same ground is not."""
    args = ("--eps", "4", "--sigma", "0.5 mS/m", "--depth", "2")
    low = setup_json("--antenna", "midband-250", *args, "--target", "planar", "--material", "bedrock")
    metal = setup_json("--antenna", "midband-250", *args, "--target", "line", "--size", "0.1", "--material", "metal")
    assert low["contrast"]["low_contrast"] and notes_with(low, "low contrast: |R| = 0.0")
    # lossless Fresnel (Annan 2009): (√5 − 2)/(√5 + 2) = 0.056 (granite ε' 5 from configs/materials.toml)
    assert low["contrast"]["reflection_magnitude"] == pytest.approx((5**0.5 - 2) / (5**0.5 + 2), rel=0.02)
    assert not metal["contrast"]["low_contrast"] and not notes_with(metal, "contrast")
    p = run("choose", *args, "--target", "planar", "--material", "bedrock")
    assert p.returncode == 0 and "Low contrast: |R| = 0.0" in p.stdout
    p = run("choose", *args, "--target", "line", "--size", "0.1", "--material", "metal")
    assert p.returncode == 0 and "contrast" not in p.stdout.lower()


def test_rectangle_area_sets_the_line_length():
    """--area '40 m x 30 m' is 1200 m² with 40 m lines: the same survey as --area 1200 --line-length 40."""
    base = ("--antenna", "midband-500", "--eps", "9", "--depth", "0.6", "--grid-3d")
    rect = setup_json(*base, "--area", "40 m x 30 m")["survey"]
    plain = setup_json(*base, "--area", "1200", "--line-length", "40")["survey"]
    assert rect == plain and rect["line_length_m"] == 40.0 and rect["area_m2"] == pytest.approx(1200.0)
    p = run("setup", *base, "--area", "40 m x 3e9")
    assert p.returncode == 1 and "--area" in p.stderr and len(p.stderr.strip().splitlines()) == 1


def test_choose_orientation_note_says_weaker_or_stronger_and_only_where_it_changes_the_return():
    """Metal pipe: across the pipe is weaker; an air-filled plastic pipe: across is stronger (no 'use unknown')."""
    common = ("choose", "--eps", "16", "--sigma", "1 mS/m", "--target", "line", "--depth", "1.5", "--size", "10 cm")
    plastic = run(*common, "--material", "plastic_pipe")
    metal = run(*common, "--material", "metal")
    assert plastic.returncode == 0 and metal.returncode == 0, plastic.stderr + metal.stderr
    line = [s for s in plastic.stdout.splitlines() if s.startswith("Orientation:")]
    assert len(line) == 1 and "stronger (lowband-50)" in line[0] and "weaker" not in line[0]
    assert "--orientation unknown" not in line[0]
    # Thin dielectric cylinder (ka << 1) in the ground, relative contrast εr = 1/16 (air in ε' 16): the TE/TM
    # echo-width ratio tends to |2(εr−1)/(εr+1)|² / |εr−1|² (Balanis, Advanced Engineering Electromagnetics,
    # low-frequency cylinder scattering; from memory) = 5.49 dB stronger across the pipe.
    er = 1 / 16
    limit = 10 * math.log10(abs(2 * (er - 1) / (er + 1)) ** 2 / abs(er - 1) ** 2)
    assert f"up to {limit:.1f} dB stronger" in line[0]
    mline = [s for s in metal.stdout.splitlines() if s.startswith("Orientation:")]
    assert len(mline) == 1 and "dB weaker" in mline[0] and "--orientation unknown" in mline[0]
    # At 500 MHz the 10 cm pipe is not thin (ka ≈ 2): both polarisations give the same echo width, so no note.
    only = run(*common, "--material", "plastic_pipe", "--antenna", "midband-500")
    assert only.returncode == 0, only.stderr
    assert "Orientation:" not in only.stdout
