"""A battery of bad inputs and faults, run as a careless or unlucky user would (each in its own process).

Every case must end with its exit code, exactly one line on stderr naming the offending
file, flag or value, no traceback, no new file anywhere in the workspace (or on the
special mounts) and every pre-existing file byte-identical.  The cases run concurrently
(a few processes at once) in a module fixture; each test then checks one case.

The cases in ``REAL`` (at least one per command, the top-level usage errors and the
``--json`` errors) run as genuine ``python -m subsurf`` subprocesses; the others run as
forks of a warm interpreter (tests/cli/warm_runner.py: a real process with its own working
folder, descriptors and exit status, without the interpreter start-up and imports, which
cost ~1.2 s of CPU per case and ~250 s for the battery).  The checks are the same for
both.  ``python -m pytest -m slow`` runs every case as a genuine subprocess as well
(``test_bad_input_as_subprocess``); so does the default test with SUBSURF_BATTERY_REAL=1.
"""

from __future__ import annotations

import json
import os
import queue
import shutil
import tempfile
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest
from battery_support import C, check_failure, fingerprint, make_workspace, run_subsurf, special_mounts
from warm_runner import WarmRunner

HYP = "picks/fictional_hyperbolas.csv"
UTIL = "picks/fictional_utility_picks.csv"
CMP = "picks/fictional_cmp.csv"
S = "site/survey.toml"
MED = ["--texture", "loam", "--moisture", "20 %"]
LINE = ["--target", "line", "--depth", "1.2", "--size", "15 cm", "--material", "metal"]
SYN = ["--synthetic", "64x48"]
PLANAR = ["--target", "planar", "--depth", "1.5"]
V = ["--velocity", "0.095"]
LAYERS = ["--layer", "0.6 m, 0.11 m/ns, 0.004 m/ns", "--layer", "-, 0.08 m/ns, 0.004 m/ns"]

CASES_ALL = [
    # -- the command line itself ---------------------------------------------------------
    C("no-such-command", "nosuch", 2, "nosuch", "--help"),
    C("unknown-global-flag", "--bogus", 2, "--bogus"),
    C("map-missing-survey", "map", 2, "SURVEY.toml", "--help"),
    C("map-missing-survey-json", "map --json", 2, "SURVEY.toml"),
    C("medium-unknown-flag", "medium --bogus-flag 3", 2, "--bogus-flag", "subsurf medium --help"),
    C("medium-bad-choice", "medium --model bogus", 2, "--model", "bogus"),
    C("depth-draws-not-int", "depth --twt 25 --velocity 0.1 --draws 1e12", 2, "--draws", "1e12"),
    C("region-chunk-not-int", "region --synthetic 64x48 --chunk big", 2, "--chunk"),
    # -- medium --------------------------------------------------------------------------
    C("medium-soil-not-utf8", "medium --soil soil_latin1.toml", 1, "soil_latin1.toml", "UTF-8"),
    C("medium-soil-folder", "medium --soil soilfacts", 1, "soilfacts", "folder"),
    C("medium-soil-missing", "medium --soil nowhere.toml", 1, "nowhere.toml"),
    C("medium-soil-unknown-key", "medium --soil soil_badkey.toml", 1, "soil_badkey.toml", "wetness"),
    C("medium-soil-folder-json", "medium --soil soilfacts --json", 1, "soilfacts"),
    C("medium-moisture-150", "medium --texture loam --moisture 150", 1, "moisture"),
    C("medium-moisture-negative", ["medium", "--texture", "loam", "--moisture", "-5 %"], 1, "moisture"),
    C("medium-eps-negative", "medium --eps -3 --sigma 1", 1, "eps"),
    C("medium-texture-unknown", "medium --texture nosuch --moisture 0.2", 1, "nosuch"),
    C("medium-freq-text", ["medium", *MED, "--freq", "abc"], 1, "--freq"),
    C("medium-ec-negative", ["medium", *MED, "--pore-water-ec", "-5 mS/m"], 1, "pore"),
    C("medium-sand-clay-over-one", ["medium", "--moisture", "0.2", "--sand", "0.8", "--clay", "0.5"], 1, "sand"),
    C("medium-moisture-unit", ["medium", "--texture", "loam", "--moisture", "20 kg"], 1, "moisture"),
    C("medium-salinity-negative", ["medium", *MED, "--salinity", "-3"], 1, "salinity"),
    C("medium-temp-400-k", ["medium", *MED, "--temp", "400 K"], 1, "--temp", "74.7 degC"),
    C("medium-temp-373-k-peplinski", ["medium", *MED, "--model", "peplinski", "--temp", "373 K"], 1, "--temp",
      "74.7"),
    C("medium-ec-50-s-per-m", ["medium", *MED, "--pore-water-ec", "50 S/m"], 1, "--pore-water-ec", "10000 mS/m"),
    C("medium-freq-1e30-mhz", ["medium", *MED, "--freq", "1e30 MHz"], 1, "--freq", "100 GHz"),
    C("medium-freq-zero", ["medium", "--eps", "9", "--freq", "0"], 1, "--freq", "1 kHz"),
    C("medium-attenuation-at-freq-huge", ["medium", "--eps", "5", "--attenuation-at", "1e9 GHz=1",
                                         "--attenuation-at", "200=3"], 1, "--attenuation-at", "100 GHz"),
    C("medium-eps-1e30", "medium --eps 1e30 --sigma 1", 1, "--eps", "100"),
    C("medium-sigma-1e30", ["medium", "--eps", "9", "--sigma", "1e30 S/m"], 1, "--sigma", "100 S/m"),
    C("medium-stone-size-20-m", ["medium", *MED, "--stone-size", "20 m"], 1, "--stone-size", "10000 mm"),
    # -- choose / setup ------------------------------------------------------------------
    C("choose-no-depth", ["choose", *MED, "--target", "planar"], 2, "--depth"),
    C("choose-reach-margin-negative", ["choose", *MED, *LINE, "--reach-margin", "-1"], 1, "--reach-margin",
      "between 0 and 40 dB", "'-1'"),
    C("choose-reach-margin-41", ["choose", *MED, *LINE, "--reach-margin", "41 dB"], 1, "--reach-margin", "40 dB"),
    C("choose-reach-margin-unit", ["choose", *MED, *LINE, "--reach-margin", "6 m"], 1, "--reach-margin", "dB"),
    C("setup-reach-margin-text", ["setup", "--antenna", "midband-250", *MED, *LINE, "--reach-margin", "lots"], 1,
      "--reach-margin", "lots"),
    C("choose-negative-depth", ["choose", *MED, "--target", "planar", "--depth", "-1"], 1, "depth"),
    C("choose-catalogue-not-utf8", ["choose", *MED, *LINE, "--catalogue", "catalogue_latin1.toml"], 1,
      "catalogue_latin1.toml"),
    C("choose-catalogue-folder", ["choose", *MED, *LINE, "--catalogue", "soilfacts"], 1, "soilfacts"),
    C("choose-catalogue-missing", ["choose", *MED, *LINE, "--catalogue", "nowhere.toml"], 1, "nowhere.toml"),
    C("choose-catalogue-missing-field", ["choose", *MED, *LINE, "--catalogue", "cat_missing.toml"], 1,
      "cat_missing.toml", "trace_rate_hz"),
    C("choose-antenna-unknown", ["choose", *MED, *LINE, "--antenna", "nosuch-antenna"], 1, "nosuch-antenna"),
    C("choose-material-unknown", ["choose", *MED, "--target", "line", "--depth", "1", "--size", "0.1",
                                  "--material", "unobtainium"], 1, "unobtainium"),
    C("choose-target-choice", ["choose", *MED, "--target", "pipe", "--depth", "1"], 2, "--target"),
    C("choose-size-negative", ["choose", *MED, "--target", "line", "--depth", "1", "--size", "-3 cm"], 1, "size"),
    C("choose-soil-folder", ["choose", "--soil", "soilfacts", *LINE], 1, "soilfacts"),
    C("setup-antenna-unknown", ["setup", *MED, *LINE, "--antenna", "nosuch-antenna"], 1, "nosuch-antenna"),
    C("setup-stacks-zero", ["setup", *MED, *LINE, "--antenna", "midband-250", "--stacks", "0"], 1, "--stacks"),
    C("setup-stacks-1e20", ["setup", *MED, *LINE, "--antenna", "midband-250", "--stacks", "99999999999999999999"], 1,
      "--stacks", "65536"),
    C("setup-area-1e30", ["setup", *MED, *LINE, "--antenna", "midband-250", "--area", "1e30"], 1, "--area", "100 km"),
    C("setup-line-length-1e20", ["setup", *MED, *LINE, "--antenna", "midband-250", "--line-length", "1e20"], 1,
      "--line-length", "100 km"),
    C("choose-depth-1e6", ["choose", *MED, "--target", "planar", "--depth", "1e6"], 1, "--depth", "10 km"),
    # depth ranges and lists: inverted, zero-width, beyond the limit, two dots, mixed units
    C("choose-depth-range-inverted", ["choose", *MED, "--target", "planar", "--depth", "1.5-0.5 m"], 1, "--depth",
      "inverted", "0.5-1.5 m"),
    C("choose-depth-range-zero-width", ["choose", *MED, "--target", "planar", "--depth", "1-1 m"], 1, "--depth",
      "zero width"),
    C("choose-depth-range-beyond-limit", ["choose", *MED, "--target", "planar", "--depth", "0.5-20 km"], 1,
      "--depth", "10 km"),
    C("choose-depth-range-negative", ["choose", *MED, "--target", "planar", "--depth=-0.5-1.5"], 1, "--depth",
      "> 0 m"),
    C("choose-depth-range-two-dots", ["choose", *MED, "--target", "planar", "--depth", "0.5..1.5 m"], 1, "--depth",
      "hyphen"),
    C("choose-depth-list-repeats", ["choose", *MED, "--target", "planar", "--depth", "0.5,0.5 m"], 1, "--depth",
      "repeats"),
    C("choose-depth-list-decimal-comma", ["choose", *MED, "--target", "planar", "--depth", "0,5 m"], 1, "--depth",
      "decimal comma"),
    C("choose-depth-list-mixed-units", ["choose", *MED, "--target", "planar", "--depth", "50 cm,1,1.5 m"], 1,
      "--depth", "mixes units"),
    C("calibrate-stacks-huge", "calibrate site/not_raster.nc --antenna midband-250 --velocity 0.1 --stacks 70000", 1,
      "--stacks", "65536"),
    C("setup-speed-negative", ["setup", *MED, *LINE, "--antenna", "midband-250", "--speed", "-1"], 1, "speed"),
    C("setup-area-text", ["setup", *MED, *LINE, "--antenna", "midband-250", "--area", "big"], 1, "--area"),
    C("setup-line-length-negative", ["setup", *MED, *LINE, "--antenna", "midband-250", "--line-length", "-4"], 1,
      "line"),
    C("setup-soil-not-utf8", ["setup", "--soil", "soil_latin1.toml", *LINE, "--antenna", "midband-250"], 1,
      "soil_latin1.toml"),
    # -- depth ---------------------------------------------------------------------------
    C("depth-out-exists", ["depth", "--twt", "25", *V, "--out-csv", "existing.csv"], 3, "existing.csv"),
    C("depth-csv-ok-geojson-blocked", ["depth", "--picks", UTIL, *V, "--out-csv", "a.csv",
                                       "--out-geojson", "blocker/b.geojson"], 1, "blocker"),
    C("depth-csv-ok-geojson-missing-folder", ["depth", "--picks", UTIL, *V, "--out-csv", "a.csv",
                                              "--out-geojson", "missing/b.geojson"], 1, "missing"),
    C("depth-out-is-folder", ["depth", "--twt", "25", *V, "--out-csv", "existing_dir"], 1, "existing_dir"),
    C("depth-out-under-sys", ["depth", "--twt", "25", *V, "--out-csv", "/sys/subsurf-depth.csv"], 1, "/sys"),
    C("depth-out-dev-null", ["depth", "--twt", "25", *V, "--out-csv", "/dev/null", "--force"], 1, "/dev/null"),
    C("depth-out-dangling-link", ["depth", "--twt", "25", *V, "--out-csv", "dangling.csv"], 3, "dangling.csv"),
    C("depth-out-dangling-link-force", ["depth", "--twt", "25", *V, "--out-csv", "dangling.csv", "--force"], 3,
      "dangling.csv", "link"),
    C("depth-same-output-twice", ["depth", "--picks", UTIL, *V, "--out-csv", "x.out", "--out-geojson", "x.out"], 1,
      "x.out"),
    C("depth-out-read-only", ["depth", "--twt", "25", *V, "--out-csv", "{ro}/d.csv"], 1, "{ro}", needs=["ro"]),
    C("depth-out-full-disk", ["depth", "--picks", UTIL, *V, "--out-csv", "{full}/d.csv"], 1, "{full}", "space",
      needs=["full"]),
    C("depth-picks-folder", ["depth", "--picks", "soilfacts", *V], 1, "soilfacts"),
    C("depth-picks-not-utf8", ["depth", "--picks", "picks_latin1.csv", *V], 1, "picks_latin1.csv"),
    C("depth-picks-missing", ["depth", "--picks", "nowhere.csv", *V], 1, "nowhere.csv"),
    C("depth-velocity-10", ["depth", "--twt", "25", "--velocity", "10"], 1, "--velocity"),
    C("depth-velocity-negative", ["depth", "--twt", "25", "--velocity", "-0.1"], 1, "--velocity"),
    C("depth-velocity-from-nan", ["depth", "--twt", "25", "--velocity-from", "v_nan.json"], 1, "v_nan.json"),
    C("depth-velocity-from-5-m-per-ns", ["depth", "--twt", "25", "--velocity-from", "v_fast.json"], 1, "v_fast.json"),
    C("depth-velocity-from-text", ["depth", "--twt", "25", "--velocity-from", "v_text.json"], 1, "v_text.json"),
    C("depth-velocity-from-folder", ["depth", "--twt", "25", "--velocity-from", "soilfacts"], 1, "soilfacts"),
    C("depth-velocity-from-missing", ["depth", "--twt", "25", "--velocity-from", "nowhere.json"], 1, "nowhere.json"),
    C("depth-layer-negative-se", ["depth", "--twt", "25", "--layer", "0.6 m, 0.11 m/ns, -0.004 m/ns",
                                  "--layer", "-, 0.08 m/ns"], 1, "--layer"),
    C("depth-layer-bad-shape", ["depth", "--twt", "25", "--layer", "0.6 m"], 1, "--layer"),
    C("depth-draws-1e12", ["depth", "--twt", "25", *LAYERS, "--draws", "1000000000000"], 1, "--draws", "memory"),
    C("depth-draws-5", ["depth", "--twt", "25", *LAYERS, "--draws", "5"], 1, "--draws"),
    C("depth-seed-negative", ["depth", "--twt", "25", *LAYERS, "--seed", "-1"], 1, "--seed"),
    C("depth-twt-1e30", ["depth", "--twt", "1e30", *V], 1, "--twt", "100 µs"),
    C("depth-twt-text", ["depth", "--twt", "abc", *V], 1, "--twt"),
    C("depth-no-velocity", "depth --twt 25", 1, "--velocity"),
    C("depth-offset-negative", ["depth", "--twt", "25", *V, "--offset", "-1"], 1, "--offset"),
    C("depth-twt-and-picks", ["depth", "--twt", "25", "--picks", UTIL, *V], 1, "--picks"),
    C("depth-geojson-no-coords", ["depth", "--twt", "25", *V, "--out-geojson", "d.geojson"], 1, "--out-geojson"),
    C("depth-crs-nonsense", ["depth", "--picks", UTIL, *V, "--crs", "EPSG:999999"], 1, "--crs"),
    # a vertical (EPSG:5773 EGM96 height, 5714 MSL height) or geocentric (EPSG:4978) CRS places nothing on a map
    C("depth-crs-vertical", ["depth", "--picks", UTIL, *V, "--crs", "EPSG:5773"], 1, "--crs", "EPSG:5773", "vertical"),
    C("depth-crs-geocentric", ["depth", "--picks", UTIL, *V, "--crs", "EPSG:4978"], 1, "--crs", "geocentric"),
    C("depth-coords-crs-geocentric", ["depth", "--picks", UTIL, *V, "--coords-crs", "EPSG:4978"], 1, "--coords-crs",
      "geocentric"),
    C("depth-picks-comment-crs-vertical", ["depth", "--picks", "picks_vertical_crs.csv", *V], 1,
      "picks_vertical_crs.csv", "EPSG:5714", "vertical"),
    C("depth-error-json", ["depth", "--twt", "25", "--velocity", "10", "--json"], 1, "--velocity"),
    # -- velocity ------------------------------------------------------------------------
    C("velocity-figure-ok-json-blocked", ["velocity", "--picks", HYP, "--figure", "fit.png",
                                          "--out-json", "blocker/fit.json"], 1, "blocker"),
    C("velocity-json-exists", ["velocity", "--picks", HYP, "--out-json", "existing.csv"], 3, "existing.csv"),
    C("velocity-figure-folder", ["velocity", "--picks", HYP, "--figure", "existing_dir"], 1, "existing_dir"),
    C("velocity-figure-under-sys", ["velocity", "--picks", HYP, "--figure", "/sys/fit.png"], 1, "/sys"),
    C("velocity-csv-read-only", ["velocity", "--picks", HYP, "--out-csv", "{ro}/fit.csv"], 1, "{ro}", needs=["ro"]),
    C("velocity-figure-full-disk", ["velocity", "--picks", HYP, "--figure", "{full}/fit.png"], 1, "{full}",
      needs=["full"]),
    C("velocity-picks-folder", ["velocity", "--picks", "soilfacts"], 1, "soilfacts"),
    C("velocity-picks-not-utf8", ["velocity", "--picks", "picks_latin1.csv"], 1, "picks_latin1.csv"),
    C("velocity-picks-missing", ["velocity", "--picks", "nowhere.csv"], 1, "nowhere.csv"),
    C("velocity-offset-negative", ["velocity", "--picks", HYP, "--offset", "-1"], 1, "--offset"),
    C("velocity-radius-typo", ["velocity", "--picks", HYP, "--radius", "fitt"], 1, "--radius"),
    C("velocity-known-depth-no-twt", ["velocity", "--known-depth", "1.2"], 1, "--twt"),
    C("velocity-known-depth-negative", ["velocity", "--known-depth", "-1", "--twt", "20"], 1, "--known-depth"),
    C("velocity-known-depth-offset-negative", ["velocity", "--known-depth", "1", "--twt", "20", "--offset", "-1"], 1,
      "--offset"),
    C("velocity-known-depth-pick-sd-negative", ["velocity", "--known-depth", "1", "--twt", "20", "--pick-sd", "-1"],
      1, "--pick-sd"),
    C("velocity-known-depth-depth-sd-negative", ["velocity", "--known-depth", "1", "--twt", "20", "--depth-sd",
                                                 "-0.1"], 1, "--depth-sd"),
    C("velocity-known-depth-twt-before-zero", ["velocity", "--known-depth", "1", "--twt", "20", "--time-zero", "30"],
      1, "--twt", "--time-zero"),
    C("depth-layer-nan-se", ["depth", "--twt", "25", "--layer", "0.6 m, 0.11 m/ns, nan", "--layer", "-, 0.08 m/ns"],
      1, "--layer", "SE"),
    C("velocity-target-unknown", ["velocity", "--picks", HYP, "--target", "nosuch"], 1, "nosuch"),
    C("velocity-cmp-on-hyperbolas", ["velocity", "--picks", HYP, "--method", "cmp"], 1, HYP),
    C("velocity-nothing", "velocity", 1, "--picks"),
    C("velocity-figure-calibration", ["velocity", "--known-depth", "1", "--twt", "20", "--figure", "f.png"], 1,
      "--figure"),
    C("velocity-bad-picks-rows", ["velocity", "--picks", "picks/fictional_bad_picks.csv"], 1,
      "fictional_bad_picks.csv"),
    C("velocity-time-zero-text", ["velocity", "--picks", HYP, "--time-zero", "soon"], 1, "--time-zero"),
    # -- calibrate -----------------------------------------------------------------------
    C("calibrate-profile-folder", "calibrate soilfacts --antenna midband-250 --velocity 0.1", 1, "soilfacts",
      "is a folder"),
    C("calibrate-velocity-from-folder", "calibrate site/not_raster.nc --antenna midband-250 --velocity-from soilfacts",
      1, "soilfacts", "is a folder"),
    C("calibrate-velocity-from-nan", "calibrate site/not_raster.nc --antenna midband-250 --velocity-from v_nan.json",
      1, "v_nan.json", "velocity_m_per_ns"),
    C("calibrate-velocity-from-5-m-per-ns", "calibrate site/not_raster.nc --antenna midband-250 --velocity-from "
      "v_fast.json", 1, "v_fast.json", "velocity_m_per_ns", "0.2998"),
    C("calibrate-velocity-10", "calibrate site/not_raster.nc --antenna midband-250 --velocity 10", 1, "--velocity",
      "0.2998"),
    C("calibrate-velocity-se-negative", "calibrate site/not_raster.nc --antenna midband-250 --velocity 0.1 "
      "--velocity-se -0.01", 1, "--velocity-se"),
    C("calibrate-profile-missing", "calibrate nowhere.csv --antenna midband-250 --velocity 0.1", 1, "nowhere.csv"),
    C("calibrate-profile-not-utf8", "calibrate picks_latin1.csv --antenna midband-250 --velocity 0.1", 1,
      "picks_latin1.csv"),
    C("calibrate-profile-not-netcdf", "calibrate site/not_raster.nc --antenna midband-250 --velocity 0.1", 1,
      "not_raster.nc"),
    C("calibrate-out-blocked", "calibrate site/not_raster.nc --antenna midband-250 --velocity 0.1 --out blocker/c.json",
      1, "blocker"),
    C("calibrate-figure-exists", "calibrate site/not_raster.nc --antenna midband-250 --velocity 0.1 --figure "
      "existing.csv", 3, "existing.csv"),
    C("calibrate-antenna-unknown", "calibrate site/not_raster.nc --antenna nosuch --velocity 0.1", 1, "nosuch"),
    # -- re-planning with a site calibration ---------------------------------------------
    C("choose-calibration-other-frequency", ["choose", "--calibration", "cal_freq.json", *LINE], 1, "cal_freq.json",
      "antenna.centre_freq_mhz"),
    C("choose-calibration-missing-key", ["choose", "--calibration", "cal_nokey.json", *LINE], 1, "cal_nokey.json",
      "penetration.depth_m"),
    C("setup-calibration-wrong-version", "setup --calibration cal_v9.json --antenna midband-250 --depth 1", 1,
      "cal_v9.json", "schema_version"),
    C("map-calibration-other-frequency", f"map {S} --calibration cal_freq.json --out m", 1, "cal_freq.json",
      "antenna.centre_freq_mhz"),
    C("map-calibration-missing-key", f"map {S} --calibration cal_nokey.json --out m", 1, "cal_nokey.json",
      "penetration.depth_m"),
    C("map-calibration-wrong-version", f"map {S} --calibration cal_v9.json --out m", 1, "cal_v9.json",
      "schema_version"),
    C("report-calibration-other-frequency", f"report {S} --calibration cal_freq.json --no-maps --out r.html", 1,
      "cal_freq.json", "antenna.centre_freq_mhz"),
    C("report-survey-calibration-missing", "report site/survey_calmissing.toml --no-maps --out r.html", 1,
      "survey_calmissing.toml", "[calibration] file"),
    C("map-calibration-flag-missing", f"map {S} --calibration nowhere_cal.json --out m", 1, "nowhere_cal.json"),
    C("map-survey-calibration-missing", "map site/survey_calmissing.toml --out m", 1, "survey_calmissing.toml",
      "[calibration] file"),
    C("map-survey-calibration-other-frequency", "map site/survey_calfreq.toml --out m", 1, "cal_freq.json",
      "antenna.centre_freq_mhz"),
    # -- map -----------------------------------------------------------------------------
    C("map-survey-folder", "map soilfacts", 1, "soilfacts"),
    C("map-survey-missing", "map nowhere.toml", 1, "nowhere.toml"),
    C("map-survey-not-utf8", "map site/survey_latin1.toml --out m", 1, "survey_latin1.toml"),
    C("map-survey-syntax", "map site/survey_syntax.toml --out m", 1, "survey_syntax.toml"),
    C("map-outline-strings", "map site/survey_strings.toml --out m", 1, "features_strings.geojson"),
    C("map-outline-missing", "map site/survey_nooutline.toml --out m", 1, "nowhere.geojson"),
    C("map-raster-not-raster", "map site/survey_badraster.toml --out m", 1, "not_raster.nc"),
    C("map-samples-not-utf8", "map site/survey_samples.toml --out m", 1, "samples_latin1.csv"),
    C("map-zones-folder", "map site/survey_zonesdir.toml --out m", 1, "zonesdir"),
    C("map-draws-1e12", "map site/survey_draws.toml --out m", 1, "draws"),
    C("map-antenna-unknown", "map site/survey_antenna.toml --out m", 1, "nosuch-antenna"),
    C("map-target-depth-negative", "map site/survey_depth.toml --out m", 1, "depth"),
    C("region-depth-range", ["region", *SYN, "--target", "planar", "--depth", "0.5-1.5 m", "--out", "r.nc"], 1,
      "--depth", "one depth"),
    C("map-target-range-inverted", "map site/survey_range_inverted.toml --out m", 1, "survey_range_inverted.toml",
      "[target] depth_bottom", "inverted", "deeper than depth_top"),
    C("report-target-range-inverted", "report site/survey_range_inverted.toml --out r.html", 1,
      "survey_range_inverted.toml", "[target] depth_bottom", "inverted"),
    C("map-target-range-half", "map site/survey_range_half.toml --out m", 1, "survey_range_half.toml", "[target]",
      "depth_bottom"),
    C("map-target-depth-twice", "map site/survey_range_and_depth.toml --out m", 1, "survey_range_and_depth.toml",
      "[target]", "once"),
    C("map-out-is-file", f"map {S} --out blocker", 1, "blocker"),
    C("map-out-existing-file-force", f"map {S} --out existing.csv --force", 1, "existing.csv"),
    C("map-out-under-sys", f"map {S} --out /sys/subsurf-maps", 1, "/sys"),
    C("map-out-missing-parent", f"map {S} --out missing/deeper", 1, "missing"),
    C("map-out-earlier-output", f"map {S} --out earlier_map", 3, "earlier_map"),
    C("map-out-read-only", f"map {S} --out {{ro}}/maps", 1, "{ro}", needs=["ro"]),
    C("map-out-full-disk", f"map {S} --out {{full}}/maps", 1, "{full}", needs=["full"]),
    C("map-zones-crs-geocentric", "map site/survey_crs_geocentric.toml --out m", 1, "survey_crs_geocentric.toml",
      "soil.zones", "geocentric"),
    C("map-grid-crs-vertical", "map site/survey_grid_vertical.toml --out m", 1, "[grid] crs", "vertical"),
    C("map-zones-file-crs-vertical", "map site/survey_zones_vertical.toml --out m", 1, "zones_vertical.geojson",
      "vertical"),
    C("report-grid-crs-vertical", "report site/survey_grid_vertical.toml --out r.html", 1, "[grid] crs", "vertical"),
    C("map-error-json", "map soilfacts --json", 1, "soilfacts"),
    C("map-survey-key-typo", "map site/survey_cellsize.toml --out m", 1, "survey_cellsize.toml", "cellsize",
      "cell_size"),
    C("map-survey-catalogue-key-typo", "map site/survey_catbadkey.toml --out m", 1, "cat_badkey.toml",
      "centre_freq_mhz", "centre_frequency_mhz"),
    C("map-inline-antenna-typo", "map site/survey_inlinetypo.toml --out m", 1, "survey_inlinetypo.toml",
      "[antennas.define.fictional-rig] stack", "stacks"),
    C("map-inline-antenna-also-in-catalogue", "map site/survey_inlinedup.toml --out m", 1, "survey_inlinedup.toml",
      "[antennas.define.midband-250]"),
    C("map-catalogue-missing-field", f"map {S} --catalogue cat_missing.toml --out m", 1, "cat_missing.toml",
      "trace_rate_hz"),
    C("map-catalogue-duplicate-antenna", f"map {S} --catalogue cat_dup.toml --out m", 1, "cat_dup.toml",
      "fictional-rig", "twice"),
    C("map-catalogue-lacks-survey-antenna", f"map {S} --catalogue cat_good.toml --out m", 1, "survey.toml",
      "[antennas] names", "lowband-100", "cat_good.toml"),
    C("map-catalogue-missing", f"map {S} --catalogue nowhere.toml --out m", 1, "--catalogue", "nowhere.toml"),
    C("map-catalogue-folder", f"map {S} --catalogue soilfacts --out m", 1, "soilfacts"),
    C("map-samples-lonlat-declared-utm", "map site/survey_samples_utm.toml --out m", 1, "samples.csv", "EPSG:32630",
      "longitude/latitude"),
    C("map-reach-margin-negative", f"map {S} --reach-margin -3 --out m", 1, "--reach-margin", "between 0 and 40"),
    C("report-reach-margin-nan", f"report {S} --reach-margin nan --out r.html", 1, "--reach-margin", "nan"),
    C("map-survey-reach-margin-negative", "map site/survey_reachneg.toml --out m", 1, "survey_reachneg.toml",
      "reach_margin", "between 0 and 40"),
    C("report-survey-reach-margin-50", "report site/survey_reach50.toml --out r.html", 1, "survey_reach50.toml",
      "reach_margin", "40"),
    C("map-survey-reach-margin-typo", "map site/survey_reachtypo.toml --out m", 1, "survey_reachtypo.toml",
      "reach_margin_db", "reach_margin"),
    C("region-reach-margin-99", ["region", *SYN, *PLANAR, "--out", "r.nc", "--reach-margin", "99"], 1,
      "--reach-margin", "40 dB"),
    C("demo-reach-margin-negative", ["demo", "--out", "d", "--reach-margin", "-0.5 dB"], 1, "--reach-margin",
      "between 0 and 40"),
    # -- region --------------------------------------------------------------------------
    C("region-200000-squared", ["region", "--synthetic", "200000x200000", *PLANAR, "--out", "r.nc"], 1,
      "--allow-large"),
    C("region-1e7-squared", ["region", "--synthetic", "10000000x10000000", *PLANAR, "--out", "r.nc"], 1,
      "--allow-large"),
    C("region-seed-negative", [*"region --seed -1 --write-soil s.nc".split(), *SYN], 1, "--seed"),
    C("region-workers-negative", ["region", *SYN, *PLANAR, "--out", "r.nc", "--workers", "-3"], 1, "--workers"),
    C("region-chunk-20000", ["region", "--synthetic", "40000x40000", *PLANAR, "--out", "r.nc", "--chunk", "20000"], 1,
      "--chunk"),
    C("region-chunk-5", ["region", *SYN, *PLANAR, "--out", "r.nc", "--chunk", "5"], 1, "--chunk"),
    C("region-batch-zero", ["region", *SYN, *PLANAR, "--out", "r.nc", "--batch", "0"], 1, "--batch"),
    C("region-write-soil-bad-depth", ["region", *SYN, "--write-soil", "s.nc", "--out", "r.nc", "--target", "planar",
                                      "--depth", "-1 m"], 1, "depth"),
    C("region-soil-folder", ["region", "--soil", "soilfacts", *PLANAR, "--out", "r.nc"], 1, "soilfacts"),
    C("region-soil-not-raster", ["region", "--soil", "site/not_raster.nc", *PLANAR, "--out", "r.nc"], 1,
      "not_raster.nc"),
    C("region-soil-missing", ["region", "--soil", "nowhere.nc", *PLANAR, "--out", "r.nc"], 1, "nowhere.nc"),
    C("region-soil-toml", ["region", "--soil", "soil_latin1.toml", *PLANAR, "--out", "r.nc"], 1, "soil_latin1.toml"),
    C("region-out-blocked", ["region", *SYN, *PLANAR, "--out", "blocker/r.nc"], 1, "blocker"),
    C("region-out-exists", ["region", *SYN, *PLANAR, "--out", "existing.csv"], 3, "existing.csv"),
    C("region-out-under-sys", ["region", *SYN, *PLANAR, "--out", "/sys/r.nc"], 1, "/sys"),
    C("region-out-read-only", ["region", *SYN, *PLANAR, "--out", "{ro}/r.nc"], 1, "{ro}", needs=["ro"]),
    C("region-out-full-disk", ["region", "--synthetic", "2000x2000", *PLANAR, "--out", "{full}/r.nc"], 1, "{full}",
      needs=["full"]),
    C("region-synthetic-text", ["region", "--synthetic", "big", *PLANAR, "--out", "r.nc"], 1, "--synthetic"),
    C("region-nothing-to-write", ["region", *SYN], 1, "--out"),
    C("region-nodata-fraction", ["region", *SYN, "--nodata-fraction", "2", "--write-soil", "s.nc"], 1,
      "--nodata-fraction"),
    C("region-cell-size-negative", ["region", *SYN, "--cell-size", "-5 m", "--write-soil", "s.nc"], 1, "--cell-size"),
    C("region-antenna-unknown", ["region", *SYN, *PLANAR, "--out", "r.nc", "--antenna", "nosuch-antenna"], 1,
      "nosuch-antenna"),
    C("region-soil-and-synthetic", ["region", *SYN, "--soil", "x.nc", *PLANAR, "--out", "r.nc"], 1, "--soil"),
    C("region-catalogue-key-typo", ["region", *SYN, *PLANAR, "--out", "r.nc", "--catalogue", "cat_badkey.toml"], 1,
      "cat_badkey.toml", "centre_freq_mhz", "centre_frequency_mhz"),
    C("region-layers-unknown", ["region", *SYN, *PLANAR, "--out", "r.nc", "--layers", "colour"], 1, "colour"),
    C("region-soil-multiband-no-choice", ["region", "--soil", "region3.tif", *PLANAR, "--out", "r.nc"], 1,
      "region3.tif", "3 bands", "--soil-var"),
    C("region-soil-band-out-of-range", ["region", "--soil", "region3.tif", "--soil-var", "moisture=9", *PLANAR,
                                        "--out", "r.nc"], 1, "region3.tif", "band 9", "1-3"),
    C("region-soil-tif-unreadable", ["region", "--soil", "broken.tif", *PLANAR, "--out", "r.nc"], 1, "broken.tif",
      "GeoTIFF"),
    C("region-soil-no-crs", ["region", "--soil", "region_nocrs.nc", *PLANAR, "--out", "r.nc"], 1, "region_nocrs.nc",
      "--soil-crs"),
    C("region-soil-crs-vertical", ["region", "--soil", "region_nocrs.nc", "--soil-crs", "EPSG:5773", *PLANAR,
                                   "--out", "r.nc"], 1, "--soil-crs", "vertical"),
    C("region-soil-crs-unknown", ["region", "--soil", "region_nocrs.nc", "--soil-crs", "EPSG:999999", *PLANAR,
                                  "--out", "r.nc"], 1, "--soil-crs"),
    C("region-soil-var-unknown-quantity", ["region", "--soil", "region1.tif", "--soil-var", "wetness=1", *PLANAR,
                                           "--out", "r.nc"], 1, "--soil-var", "wetness"),
    C("region-soil-var-malformed", ["region", "--soil", "region1.tif", "--soil-var", "moisture", *PLANAR,
                                    "--out", "r.nc"], 1, "--soil-var", "QUANTITY=VALUE"),
    C("region-soil-unit-wrong-dimension", ["region", "--soil", "region1.tif", "--soil-unit", "moisture=kg", *PLANAR,
                                           "--out", "r.nc"], 1, "region1.tif", "kg"),
    C("region-soil-time-without-time", ["region", "--soil", "region1.tif", "--soil-time", "2024-06-01", *PLANAR,
                                        "--out", "r.nc"], 1, "region1.tif", "time"),
    C("region-soil-var-with-synthetic", ["region", *SYN, "--soil-var", "moisture=1", *PLANAR, "--out", "r.nc"], 1,
      "--soil-var", "--synthetic"),
    # -- report --------------------------------------------------------------------------
    C("report-survey-folder", "report soilfacts --out r.html", 1, "soilfacts"),
    C("report-survey-missing", "report nowhere.toml --out r.html", 1, "nowhere.toml"),
    C("report-out-blocked", f"report {S} --out blocker/r.html", 1, "blocker"),
    C("report-out-folder", f"report {S} --out existing_dir", 1, "existing_dir"),
    C("report-out-exists", f"report {S} --out existing.csv", 3, "existing.csv"),
    C("report-out-under-sys", f"report {S} --out /sys/r.html", 1, "/sys"),
    C("report-maps-out-blocked", f"report {S} --out r.html --maps-out blocker", 1, "blocker"),
    C("report-maps-ok-out-missing-folder", f"report {S} --maps-out maps --out missing/r.html", 1, "missing"),
    C("report-outline-strings", "report site/survey_strings.toml --out r.html", 1, "features_strings.geojson"),
    C("report-survey-not-utf8", "report site/survey_latin1.toml --out r.html", 1, "survey_latin1.toml"),
    C("report-catalogue-key-typo", f"report {S} --catalogue cat_badkey.toml --out r.html", 1, "cat_badkey.toml",
      "centre_freq_mhz"),
    C("report-catalogue-duplicate-antenna", f"report {S} --catalogue cat_dup.toml --out r.html", 1, "cat_dup.toml",
      "twice"),
    C("report-out-read-only", f"report {S} --out {{ro}}/r.html", 1, "{ro}", needs=["ro"]),
    # -- demo ----------------------------------------------------------------------------
    C("demo-out-is-file", "demo --out blocker", 1, "blocker"),
    C("demo-out-existing-file-force", "demo --out existing.csv --force", 1, "existing.csv"),
    C("demo-out-foreign-folder", "demo --out existing_dir", 3, "existing_dir"),
    C("demo-out-foreign-folder-force", "demo --out existing_dir --force", 3, "keep.txt"),
    C("demo-out-under-sys", "demo --out /sys/subsurf-demo", 1, "/sys"),
    C("demo-out-missing-parent", "demo --out missing/demo", 1, "missing"),
    C("demo-out-read-only", "demo --out {ro}/demo", 1, "{ro}", needs=["ro"]),
    C("demo-out-full-disk", "demo --out {full}/demo", 1, "{full}", needs=["full"]),
]


#: cases run as genuine ``python -m subsurf`` subprocesses (the rest as forks of a warm interpreter): the
#: top-level usage errors, the --json errors and, per command, a case where the file system refuses or protects
REAL = {
    "no-such-command", "unknown-global-flag",
    "map-missing-survey-json", "medium-soil-folder-json", "depth-error-json", "map-error-json",
    "medium-soil-not-utf8", "choose-catalogue-not-utf8", "setup-stacks-1e20", "depth-out-dangling-link-force",
    "depth-out-read-only", "velocity-figure-ok-json-blocked", "calibrate-profile-not-netcdf",
    "map-out-earlier-output", "map-out-full-disk", "region-out-exists", "report-out-exists",
    "demo-out-foreign-folder-force",
}

#: the cases to run (all; SUBSURF_BATTERY_ONLY=text narrows them to ids containing it, while debugging)
CASES = [c for c in CASES_ALL if os.environ.get("SUBSURF_BATTERY_ONLY", "") in c.id]


def _run_battery(*, all_real: bool) -> dict:
    """Run every case (three at a time), each in its own fresh workspace; results by case id."""
    results = {}
    runners: queue.Queue = queue.Queue()
    made: list[WarmRunner] = []
    warm_cases = 0 if all_real else sum(c.id not in REAL for c in CASES)
    for _ in range(min(2, warm_cases)):  # two warm interpreters: one per core
        made.append(WarmRunner())
        runners.put(made[-1])
    with special_mounts() as (mounts, reasons):
        base = Path(tempfile.mkdtemp(prefix="subsurf-battery-"))
        try:
            template = base / "template"
            template.mkdir()
            make_workspace(template)

            def one(case):
                missing = [n for n in case.needs if n not in mounts]
                if missing:
                    return case.id, ("skip", "; ".join(reasons.get(n, n) for n in missing))
                ws = base / case.id
                shutil.copytree(template, ws, symlinks=True)
                sub = {f"{{{k}}}": str(v) for k, v in mounts.items()}
                argv = [_fill(a, sub) for a in case.argv]
                watched = [ws, *mounts.values()]
                before = fingerprint(*watched)
                if all_real or case.id in REAL:
                    proc = run_subsurf(argv, ws)
                else:
                    runner = runners.get()
                    try:
                        proc = runner.run(argv, ws)
                    finally:
                        runners.put(runner)
                after = fingerprint(*watched)
                case_filled = type(case)(case.id, argv, case.code, tuple(_fill(n, sub) for n in case.names))
                return case.id, ("ran", (check_failure(case_filled, proc, before, after), proc))

            with ThreadPoolExecutor(max_workers=3) as pool:
                results = dict(pool.map(one, CASES))
        finally:
            shutil.rmtree(base, ignore_errors=True)
            for r in made:
                r.close()
    return results


@pytest.fixture(scope="module")
def battery():
    """Every case once: the REAL ones as subprocesses, the rest as warm forks (all subprocesses with
    SUBSURF_BATTERY_REAL=1)."""
    return _run_battery(all_real=os.environ.get("SUBSURF_BATTERY_REAL") == "1")


@pytest.fixture(scope="module")
def battery_real():
    """Every case once as a genuine ``python -m subsurf`` subprocess."""
    return _run_battery(all_real=True)


def _fill(text: str, sub: dict) -> str:
    for k, v in sub.items():
        text = text.replace(k, v)
    return text


def test_battery_is_large_enough():
    """At least 100 cases, covering every subcommand that exists."""
    from subsurf.cli import COMMANDS

    assert len(CASES_ALL) >= 100
    assert len({c.id for c in CASES_ALL}) == len(CASES_ALL)
    covered = {c.argv[0] for c in CASES_ALL}
    assert set(COMMANDS) <= covered, set(COMMANDS) - covered
    ids = {c.id for c in CASES_ALL}
    assert REAL <= ids, REAL - ids
    real = {c.argv[0] for c in CASES_ALL if c.id in REAL and not c.needs}  # a real subprocess per command, root or not
    assert set(COMMANDS) <= real, set(COMMANDS) - real


@pytest.mark.parametrize("case", CASES, ids=[c.id for c in CASES])
def test_bad_input(battery, case):
    """Exit code, one line, no traceback, the offending thing named, nothing new, nothing changed."""
    _check(battery, case)


@pytest.mark.slow
@pytest.mark.parametrize("case", CASES, ids=[c.id for c in CASES])
def test_bad_input_as_subprocess(battery_real, case):
    """The same checks, every case as a genuine ``python -m subsurf`` subprocess (interpreter start-up included)."""
    _check(battery_real, case)


def _check(results, case):
    status, detail = results[case.id]
    if status == "skip":
        pytest.skip(detail)
    problems, proc = detail
    assert not problems, f"{case.argv}: {'; '.join(problems)}\nstderr: {proc.stderr[-2000:]}"


def test_json_errors_are_one_object_on_stderr(battery):
    """Under --json an error is one JSON object on stderr with our fields; stdout stays empty."""
    if "map-error-json" not in battery:
        pytest.skip("narrowed by SUBSURF_BATTERY_ONLY")
    for cid in ("map-missing-survey-json", "medium-soil-folder-json", "depth-error-json", "map-error-json"):
        _, (_, proc) = battery[cid]
        doc = json.loads(proc.stderr.strip())
        assert set(doc) >= {"error", "kind", "exit_code", "command", "path"}, doc
        assert doc["exit_code"] == proc.returncode and proc.stdout == ""
    _, (_, proc) = battery["medium-soil-folder-json"]
    doc = json.loads(proc.stderr)
    assert doc["kind"] in ("file", "input") and "soilfacts" in doc["error"] and doc["command"] == "medium"
    _, (_, proc) = battery["map-missing-survey-json"]
    assert json.loads(proc.stderr)["kind"] == "usage"
