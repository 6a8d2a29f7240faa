"""`subsurf choose` and `subsurf setup` as a user runs them (a fork of one warm interpreter per run, tests/cli/warm_runner.py: a real process without the start-up)."""

import json

import pytest
from warm_runner import run_warm

from subsurf.io.outputs import CAUTION


def run(*args):
    return run_warm(args)


def test_choose_direct_ground_table():
    """choose on direct ε'/σ prints one row per antenna, a recommendation and the caution."""
    p = run("choose", "--eps", "9", "--sigma", "5 mS/m", "--target", "line", "--depth", "1.2",
            "--size", "20 cm", "--material", "metal")
    assert p.returncode == 0, p.stderr
    assert "midband-250" in p.stdout and "Recommendation:" in p.stdout and "Caution:" in p.stdout


def test_choose_soil_json():
    """choose on a soil texture preset gives JSON with rows, a verdict each, recommendation and caution."""
    p = run("choose", "--texture", "loam", "--moisture", "15 %", "--target", "point", "--depth", "1",
            "--size", "0.6", "--material", "void", "--json")
    assert p.returncode == 0, p.stderr
    out = json.loads(p.stdout)
    assert len(out["rows"]) == 7 and out["caution"] == CAUTION
    assert {r["verdict"] for r in out["rows"]} <= {"reaches", "marginal", "does not reach", "too shallow"}
    assert "6 dB" in out["reach_definition"] and out["thresholds"]["reaches_margin_db"] == 6.0
    assert "reason" in out["recommendation"]


def test_choose_unknown_antenna_one_line_error():
    """An unknown antenna: exit 1, one line on stderr listing the available ones."""
    p = run("choose", "--eps", "9", "--target", "planar", "--depth", "2", "--antenna", "nope")
    assert p.returncode == 1 and "available: lowband-50" in p.stderr and len(p.stderr.strip().splitlines()) == 1


@pytest.mark.parametrize("flag,value", [("--depth", "-1"), ("--size", "0")])
def test_choose_nonpositive_inputs(flag, value):
    """Non-positive depth or size: exit 1 naming the flag."""
    args = {"--depth": "1", "--size": "0.2"}
    args[flag] = value
    p = run("choose", "--eps", "9", "--target", "line", "--depth", args["--depth"], "--size", args["--size"])
    assert p.returncode == 1 and flag in p.stderr


def test_choose_target_wider_than_footprint_notes():
    """A target wider than the footprint is reported as a note on stderr (warning, not failure)."""
    p = run("choose", "--eps", "9", "--target", "point", "--depth", "0.3", "--size", "5", "--material", "void")
    assert p.returncode == 0 and "footprint" in p.stderr


def test_setup_table_and_caution():
    """setup prints the settings with their rules and the caution."""
    p = run("setup", "--antenna", "midband-250", "--eps", "9", "--sigma", "10 mS/m", "--target", "line",
            "--depth", "1.5", "--size", "0.1", "--material", "metal", "--area", "2000 m^2")
    assert p.returncode == 0, p.stderr
    assert "time window" in p.stdout and "Survey time over 2,000 m²" in p.stdout and "Caution:" in p.stdout


def test_setup_json_window_rule():
    """setup --json: window = 1.3 × 2d/v with v from the ground (ε' = 16, σ small: v ≈ c/4)."""
    p = run("setup", "--antenna", "lowband-100", "--eps", "16", "--sigma", "0.1 mS/m", "--depth", "6", "--json")
    assert p.returncode == 0, p.stderr
    out = json.loads(p.stdout)
    assert out["settings"]["window_ns"] == pytest.approx(1.3 * 2 * 6 / (0.299792458 / 4), rel=1e-3)
    assert out["caution"] == CAUTION


def test_setup_max_depth_from_soil():
    """setup without --depth uses the target's maximum detectable depth on a soil preset."""
    p = run("setup", "--antenna", "lowband-100", "--texture", "loamy_sand", "--moisture", "10 %",
            "--target", "planar", "--material", "water_table", "--json")
    assert p.returncode == 0, p.stderr
    out = json.loads(p.stdout)
    assert out["settings"]["depth_m"] > 0 and out["target"]["kind"] == "planar"


def test_setup_speed_too_high_refused():
    """A towing speed above the trace-rate limit: exit 1 with the reason."""
    p = run("setup", "--antenna", "lowband-50", "--eps", "9", "--depth", "3", "--speed", "20")
    assert p.returncode == 1 and "trace rate" in p.stderr


def test_choose_target_sigma_without_target_eps_refused():
    """--target-sigma alone would be silently ignored (the material's σ is used): exit 1 naming it."""
    p = run("choose", "--eps", "9", "--target", "planar", "--depth", "1", "--target-sigma", "5")
    assert p.returncode == 1 and "--target-sigma goes with --target-eps" in p.stderr
    assert len(p.stderr.strip().splitlines()) == 1


def test_choose_nan_depth_names_flag():
    """--depth nan: one-line error naming --depth (not an internal parameter or a numpy repr)."""
    p = run("choose", "--eps", "9", "--target", "line", "--depth", "nan", "--size", "0.1")
    assert p.returncode == 1 and "--depth" in p.stderr and "np.float64" not in p.stderr


def test_blind_zone_case_no_longer_reaches():
    """A 2 cm pipe at 5 cm in ε' 9: no antenna 'reaches' (inside every blind zone: d_min = ½√(vτ(2x + vτ)))."""
    p = run("choose", "--eps", "9", "--sigma", "5", "--target", "line", "--depth", "0.05", "--size", "0.02", "--json")
    assert p.returncode == 0, p.stderr
    out = json.loads(p.stdout)
    low = next(r for r in out["rows"] if r["antenna"] == "lowband-50")
    # hand calculation: v = c/3 = 0.0999 m/ns, τ = 30 ns, x = 2 m -> d_min = ½√(3.0·(4 + 3.0)) = 2.29 m
    assert low["verdict"] == "too shallow" and low["min_depth_m"] == pytest.approx(2.29, abs=0.02)
    assert all(r["verdict"] != "reaches" for r in out["rows"]) and out["recommendation"]["antenna"] is None


def test_setup_never_exceeds_clutter_limit_and_says_out_of_reach():
    """setup raises stacks only up to the clutter limit (64 at 15 dB) and plans no survey when out of reach."""
    for depth in ("1.0", "1.2", "1.4", "1.6", "2.5"):
        p = run("setup", "--antenna", "midband-250", "--texture", "loam", "--moisture", "20 %", "--target", "line",
                "--depth", depth, "--size", "0.1", "--material", "metal", "--area", "2000 m^2", "--json")
        assert p.returncode == 0, p.stderr
        out = json.loads(p.stdout)
        assert out["settings"]["stacks"] <= 64
        if not out["reachable"]:
            assert out["survey"] is None and "no survey planned" in out["notes"][0]
    p = run("setup", "--antenna", "midband-250", "--texture", "loam", "--moisture", "20 %", "--target", "line",
            "--depth", "2.5", "--size", "0.1", "--material", "metal", "--area", "2000 m^2")
    assert p.returncode == 0 and "no survey planned" in p.stdout and "Survey time" not in p.stdout


def test_setup_given_stacks_beyond_the_clutter_limit_are_noted():
    """A user's --stacks past the clutter limit is planned but noted: a doubling there adds under 1 dB."""
    import math

    # Outside check: the clutter-limited stacking gain G(N) = 10·log10((1 + c)/(1/N + c)),
    # c = 10^(-C/10) (Annan 2009, as in the stacks row's rule); at C = 15 dB going 64 -> 128 adds
    # under 1 dB and 32 -> 64 still more, so 64 is the limit the note must name.
    c = 10 ** (-15 / 10)

    def gain(n):
        return 10 * math.log10((1 + c) / (1 / n + c))

    assert gain(128) - gain(64) < 1.0 <= gain(64) - gain(32)
    p = run("setup", "--antenna", "midband-250", "--texture", "loam", "--moisture", "20 %", "--target", "line",
            "--depth", "1.2", "--size", "0.15", "--material", "metal", "--stacks", "4096", "--json")
    assert p.returncode == 0, p.stderr
    out = json.loads(p.stdout)
    assert out["settings"]["stacks"] == 4096
    assert any("4096 stacks is beyond the 64" in n for n in out["notes"]), out["notes"]


@pytest.mark.parametrize("args,flag", [
    (("--over", "0 m asphalt"), "--over"),
    (("--over", "-0.1 m asphalt"), "--over"),
    (("--over", "0.1 m cheese"), "--over"),
    (("--orientation", "sideways"), "--orientation"),
])
def test_bad_layer_and_orientation_one_line(args, flag):
    """Bad layer thickness/material or orientation word: exit 1, one line naming the flag and what is allowed."""
    p = run("choose", "--eps", "9", "--target", "line", "--depth", "1", "--size", "0.1", *args)
    assert p.returncode == 1 and flag in p.stderr and len(p.stderr.strip().splitlines()) == 1
    assert "allowed" in p.stderr or "must be" in p.stderr


def test_layers_cost_depth_and_are_shown():
    """An asphalt and fill layer over the ground is named in the output and lowers the 400 MHz margin."""
    base = ("choose", "--eps", "9", "--sigma", "5", "--target", "line", "--depth", "1", "--size", "0.1", "--json",
            "--antenna", "midband-400")
    bare = json.loads(run(*base).stdout)["rows"][0]
    out = json.loads(run(*base, "--over", "0.08 m asphalt", "--over", "0.2 m concrete_wet").stdout)
    assert out["layers"][0]["material"] == "asphalt" and out["rows"][0]["margin_db"] < bare["margin_db"]


def test_planar_target_says_its_size_is_not_used():
    """A planar interface is extended: a --size given with it is named as unused, not shown as '0.4 m across'."""
    import subprocess
    import sys

    r = subprocess.run([sys.executable, "-m", "subsurf", "choose", "--texture", "loam", "--moisture", "15 %",
                        "--target", "planar", "--depth", "1", "--size", "0.4 m", "--material", "concrete"],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    target_line = next(line for line in r.stdout.splitlines() if line.startswith("Target:"))
    assert "--size 0.4 m not used" in target_line and "m across" not in target_line
