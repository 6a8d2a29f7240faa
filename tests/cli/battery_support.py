"""Workspace, mounts and runner for the bad-input battery (tests/cli/test_bad_input_battery.py).

Every case runs ``subsurf`` as a subprocess in a fresh workspace holding a copy of the
fictional example site, the example picks and a set of deliberately broken files; the
workspace (and the special mounts) are fingerprinted before and after, so a case proves
that nothing new was left and nothing existing changed.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import shutil
import subprocess
import sys
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
SITE = ROOT / "surveys" / "example-site"
PICKS = ROOT / "surveys" / "picks"


@dataclass
class Case:
    """One bad input: the arguments, the exit code, and what the one error line must name."""

    id: str
    argv: list[str]
    code: int
    names: tuple[str, ...] = ()
    needs: tuple[str, ...] = field(default=())  # "ro", "full": special mounts the case uses


def C(id, argv, code, *names, needs=()):  # noqa: N802 - short constructor for the case table
    """A case; ``argv`` is a string split on spaces or a list (for arguments with spaces)."""
    return Case(id, argv.split() if isinstance(argv, str) else list(argv), code, names, tuple(needs))


def _variant(text: str, old: str, new: str) -> str:
    assert old in text, old
    return text.replace(old, new)


def _calibration_files(ws: Path) -> None:
    """Site calibration files (invented numbers) that are wrong in one way each."""
    import copy
    import json

    good = {"schema": "subsurf-site-calibration", "schema_version": 1,
            "antenna": {"name": "midband-250", "centre_freq_mhz": 250.0, "bandwidth_mhz": 250.0},
            "velocity": {"m_per_ns": 0.1, "se_m_per_ns": 0.003},
            "attenuation": {"db_per_m": 4.0, "se_db_per_m": 0.3, "reference_freq_mhz": 250.0},
            "penetration": {"depth_m": 2.5, "se_m": 0.1}, "q_star": {"value": 25.0, "se": 3.0},
            "band_mhz": [120.0, 320.0],
            "effective_performance": {"db": 70.0, "se_db": 1.5, "single_trace_db": 64.0, "stacks": 4,
                                      "reference_reflection": 0.1}}
    freq = copy.deepcopy(good)
    freq["antenna"]["centre_freq_mhz"] = 400.0  # made with another antenna under the same name
    nokey = copy.deepcopy(good)
    del nokey["penetration"]["depth_m"]
    version = dict(good, schema_version=9)
    for name, rec in (("freq", freq), ("nokey", nokey), ("v9", version)):
        (ws / f"cal_{name}.json").write_text(json.dumps(rec), encoding="utf-8")


#: a FICTIONAL antenna (invented figures) for the catalogue cases
_RIG = ("centre_frequency_mhz = 300\nbandwidth_mhz = 250\nsystem_performance_db = 70\nseparation_m = 0.2\n"
        "trace_rate_hz = 100\n")


def make_workspace(ws: Path) -> None:
    """Fill ``ws`` with the good inputs, the broken ones and a few pre-existing outputs to protect."""
    shutil.copytree(SITE, ws / "site", ignore=shutil.ignore_patterns("make_example.py"))
    shutil.copytree(PICKS, ws / "picks", ignore=shutil.ignore_patterns("make_examples.py", "README.md"))
    survey = (SITE / "survey.toml").read_text(encoding="utf-8")
    variants = {
        "strings": _variant(survey, 'outline = "outline.geojson"', 'outline = "features_strings.geojson"'),
        "badraster": _variant(survey, 'file = "ground_temperature.nc"', 'file = "not_raster.nc"'),
        "draws": _variant(survey, "draws = 200", "draws = 1000000000000"),
        "antenna": _variant(survey, '"lowband-100", "midband-250"', '"nosuch-antenna", "midband-250"'),
        "depth": _variant(survey, 'depth = "1.2 m"', 'depth = "-1 m"'),
        "range_inverted": _variant(survey, 'depth = "1.2 m"', 'depth_top = "1.5 m"\ndepth_bottom = "0.5 m"'),
        "range_half": _variant(survey, 'depth = "1.2 m"', 'depth_top = "0.5 m"'),
        "range_and_depth": _variant(survey, 'depth = "1.2 m"', 'depth = "1.2 m"\ndepths = ["0.5 m", "1.5 m"]'),
        "samples": _variant(survey, 'file = "samples.csv"', 'file = "samples_latin1.csv"'),
        "samples_utm": _variant(survey, 'file = "samples.csv"\ncrs = "EPSG:4326"', 'file = "samples.csv"\ncrs = "EPSG:32630"'),
        "nooutline": _variant(survey, 'outline = "outline.geojson"', 'outline = "nowhere.geojson"'),
        "syntax": survey.replace("[target]", "[target\n"),
        "zonesdir": _variant(survey, 'file = "zones.geojson"', 'file = "zonesdir"'),
        "crs_geocentric": _variant(survey, 'crs = "EPSG:32630"', 'crs = "EPSG:4978"'),
        "grid_vertical": _variant(survey, 'crs = "auto-utm"', 'crs = "EPSG:5773"'),
        "zones_vertical": _variant(survey, 'file = "zones.geojson"', 'file = "zones_vertical.geojson"'),
        "cellsize": _variant(survey, 'cell_size = "2 m"', 'cellsize = "2 m"'),
        "catbadkey": _variant(survey, 'names = ["lowband-100", "midband-250", "midband-500", "highband-1000"]',
                              'names = ["fictional-rig"]\ncatalogue = "../cat_badkey.toml"'),
        "inlinetypo": _variant(survey, 'names = ["lowband-100", "midband-250", "midband-500", "highband-1000"]',
                               'names = ["fictional-rig"]\n[antennas.define.fictional-rig]\n' + _RIG
                               + "stack = 2\n"),
        "inlinedup": _variant(survey, 'names = ["lowband-100", "midband-250", "midband-500", "highband-1000"]',
                              'names = ["midband-250"]\n[antennas.define.midband-250]\n' + _RIG),
        "reachneg": _variant(survey, 'material = "metal"', 'material = "metal"\nreach_margin = "-2 dB"'),
        "reach50": _variant(survey, 'material = "metal"', 'material = "metal"\nreach_margin = 50'),
        "reachtypo": _variant(survey, 'material = "metal"', 'material = "metal"\nreach_margin_db = 10'),
    }
    variants["calmissing"] = survey + '\n[calibration]\nfile = "nowhere_cal.json"\n'
    variants["calfreq"] = survey + '\n[calibration]\nfile = "../cal_freq.json"\n'
    for name, text in variants.items():
        (ws / "site" / f"survey_{name}.toml").write_text(text, encoding="utf-8")
    _calibration_files(ws)
    (ws / "site" / "survey_latin1.toml").write_bytes(survey.replace("INVENTED site", "INVENTED caf\xe9").encode("latin-1"))
    (ws / "site" / "features_strings.geojson").write_text('{"type": "FeatureCollection", "features": ["a", "b"]}')
    (ws / "site" / "not_raster.nc").write_text("this is not a raster\n")
    (ws / "site" / "zonesdir").mkdir()
    zones = json.loads((SITE / "zones.geojson").read_text(encoding="utf-8"))
    zones["crs"] = {"type": "name", "properties": {"name": "urn:ogc:def:crs:EPSG::5773"}}  # EGM96 height: vertical
    (ws / "site" / "zones_vertical.geojson").write_text(json.dumps(zones), encoding="utf-8")
    samples = (SITE / "samples.csv").read_text(encoding="utf-8")
    (ws / "site" / "samples_latin1.csv").write_bytes(samples.replace("S01", "S\xe91").encode("latin-1"))
    (ws / "soil_latin1.toml").write_bytes('moisture = "20 %"\ntexture = "loam"\n# r\xe9sum\xe9\n'.encode("latin-1"))
    (ws / "soil_badkey.toml").write_text('moisture = "20 %"\nwetness = 3\n')
    (ws / "soilfacts").mkdir()
    (ws / "catalogue_latin1.toml").write_bytes(b"# \xff\xfe\n[antennas]\n")
    utility = (PICKS / "fictional_utility_picks.csv").read_text(encoding="utf-8")
    (ws / "picks_vertical_crs.csv").write_text(_variant(utility, "# crs: EPSG:32633", "# crs: EPSG:5714"),
                                               encoding="utf-8")  # MSL height: a vertical CRS
    (ws / "cat_good.toml").write_text("[antenna.fictional-rig]\n" + _RIG)
    (ws / "cat_badkey.toml").write_text("[antenna.fictional-rig]\n" + _RIG.replace("centre_frequency", "centre_freq"))
    (ws / "cat_missing.toml").write_text("[antenna.fictional-rig]\n" + _RIG.replace("trace_rate_hz = 100\n", ""))
    (ws / "cat_dup.toml").write_text(("[antenna.fictional-rig]\n" + _RIG) * 2)
    picks = (PICKS / "fictional_hyperbolas.csv").read_text(encoding="utf-8")
    (ws / "picks_latin1.csv").write_bytes(picks.replace("Invented", "Inv\xe9nted").encode("latin-1"))
    (ws / "v_nan.json").write_text('{"velocity_m_per_ns": NaN, "velocity_se_m_per_ns": 0.003}')
    (ws / "v_fast.json").write_text('{"velocity_m_per_ns": 5.0, "velocity_se_m_per_ns": 0.003}')
    (ws / "v_text.json").write_text("not json at all")
    (ws / "blocker").write_text("a file where a folder is needed\n")
    (ws / "existing.csv").write_text("keep me\n")
    (ws / "existing_dir").mkdir()
    (ws / "existing_dir" / "keep.txt").write_text("keep me too\n")
    (ws / "earlier_map").mkdir()
    (ws / "earlier_map" / "feasibility.nc").write_bytes(b"an earlier map (stand-in)\n")
    os.symlink("nowhere.csv", ws / "dangling.csv")
    _region_rasters(ws)


def _region_rasters(ws: Path) -> None:
    """Soil rasters for `region --soil` written by rasterio and netCDF4 (independent writers), good and bad."""
    import netCDF4
    import numpy as np
    import rasterio
    from rasterio.transform import from_origin

    a = np.full((3, 24, 32), 0.2, np.float32)
    profile = {"driver": "GTiff", "width": 32, "height": 24, "dtype": "float32", "crs": "EPSG:32633",
               "transform": from_origin(500000, 5800000, 25, 25)}
    with rasterio.open(ws / "region3.tif", "w", count=3, **profile) as dst:  # three undescribed bands
        dst.write(a)
    with rasterio.open(ws / "region1.tif", "w", count=1, **profile) as dst:  # one band: moisture
        dst.write(a[:1])
    (ws / "broken.tif").write_text("not a GeoTIFF\n")
    with netCDF4.Dataset(ws / "region_nocrs.nc", "w") as nc:  # x/y in metres, no grid mapping
        for d, n in (("y", 24), ("x", 32)):
            nc.createDimension(d, n)
            nc.createVariable(d, "f8", (d,))[:] = 25.0 * np.arange(n)
        nc.createVariable("moisture", "f4", ("y", "x"))[:] = a[0]


def _in_flight(path: Path) -> bool:
    """True inside another run's staging folder whose process is still alive.

    The cases run concurrently and share the special mounts, so one case may see another's
    staging come and go; a staging folder left by a run that has ended is still reported.
    """
    for part in path.parts:
        if part.startswith(".subsurf-staging-"):
            fields = part.split("-")
            pid = next((int(f) for f in fields if f.isdigit()), None)
            if pid is None:
                return False
            try:
                os.kill(pid, 0)
            except ProcessLookupError:
                return False
            except PermissionError:
                return True
            return True
    return False


def fingerprint(*folders: Path) -> dict:
    """Every entry under the folders: kind and content digest (files), target (links)."""
    out = {}
    for folder in folders:
        for p in sorted(folder.rglob("*")):
            if _in_flight(p):
                continue
            key = str(p)
            if p.is_symlink():
                out[key] = ("link", os.readlink(p))
            elif p.is_dir():
                out[key] = ("dir",)
            else:
                try:
                    out[key] = ("file", hashlib.sha256(p.read_bytes()).hexdigest())
                except FileNotFoundError:  # another concurrent case's file, gone while we walked
                    continue
    return out


@contextlib.contextmanager
def special_mounts():
    """A read-only file system and a full one (small tmpfs mounts; root only), else empty."""
    found, base = {}, Path(tempfile.mkdtemp(prefix="subsurf-battery-mounts-"))
    reasons = {}
    ro, full = base / "ro", base / "full"
    ro.mkdir()
    full.mkdir()
    mounted = []
    try:
        if os.geteuid() != 0 or not shutil.which("mount"):
            reasons["ro"] = reasons["full"] = "needs root and mount(8) for small tmpfs mounts"
        else:
            r = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=1m,ro", "tmpfs", str(ro)], capture_output=True,
                               text=True)
            if r.returncode == 0:
                mounted.append(ro)
                found["ro"] = ro
            else:
                reasons["ro"] = f"mount failed: {r.stderr.strip()}"
            r = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=64k", "tmpfs", str(full)], capture_output=True,
                               text=True)
            if r.returncode == 0:
                mounted.append(full)
                fd = os.open(full / "filler", os.O_WRONLY | os.O_CREAT, 0o644)  # fill it up
                with contextlib.suppress(OSError):
                    while True:
                        os.write(fd, b"\0" * 4096)
                os.close(fd)
                found["full"] = full
            else:
                reasons["full"] = f"mount failed: {r.stderr.strip()}"
        yield found, reasons
    finally:
        for m in mounted:
            subprocess.run(["umount", str(m)], check=False)
        shutil.rmtree(base, ignore_errors=True)


def run_subsurf(argv, cwd, *, timeout=90, env_extra=None):
    """``python -m subsurf <argv>`` in ``cwd``; the CompletedProcess (text), exit code -999 on a timeout."""
    env = {**os.environ, **(env_extra or {})}
    env.pop("PYTEST_CURRENT_TEST", None)
    try:
        return subprocess.run([sys.executable, "-m", "subsurf", *argv], cwd=cwd, capture_output=True, text=True,
                              timeout=timeout, env=env)
    except subprocess.TimeoutExpired as exc:
        return subprocess.CompletedProcess(exc.cmd, -999, stdout="", stderr=f"timed out after {timeout} s")


def check_failure(case: Case, proc, before: dict, after: dict) -> list[str]:
    """What is wrong with how ``proc`` failed (empty when everything is as promised)."""
    problems = []
    lines = proc.stderr.strip().splitlines()
    if proc.returncode != case.code:
        problems.append(f"exit code {proc.returncode}, expected {case.code}")
    if "Traceback" in proc.stderr:
        problems.append("a traceback on stderr")
    if len(lines) != 1:
        problems.append(f"{len(lines)} lines on stderr, expected one")
    text = proc.stderr
    if "--json" in case.argv:
        try:
            text = json.loads(lines[-1])["error"] if lines else ""
        except (ValueError, KeyError):
            problems.append("stderr is not a JSON error object under --json")
        if proc.stdout.strip():
            problems.append("stdout is not empty after an error under --json")
    for name in case.names:
        if name.lower() not in text.lower():
            problems.append(f"the error does not name {name!r}")
    if before != after:
        new = sorted(set(after) - set(before))
        gone = sorted(set(before) - set(after))
        changed = sorted(k for k in set(before) & set(after) if before[k] != after[k])
        problems.append(f"files changed: new {new[:3]}, removed {gone[:3]}, modified {changed[:3]}")
    return problems
