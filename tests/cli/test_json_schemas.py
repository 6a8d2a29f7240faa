"""Every command's --json output, from a real run, validates against its stored JSON Schema.

The schemas live in docs/schemas/ (draft 2020-12, written by docs/schemas/make_schemas.py);
they refuse undeclared keys, so a renamed or added key fails here until the schema says
so.  Validation is by the ``jsonschema`` package (an outside reference implementation of
the JSON Schema specification), not by our own code.  Each command runs once per case
(module-scoped), on the bundled fictional inputs.
"""

from __future__ import annotations

import importlib.util
import json
import re
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest
from example_site import coarse_copy

ROOT = Path(__file__).resolve().parents[2]
SCHEMAS = ROOT / "docs" / "schemas"
EXAMPLE = ROOT / "surveys" / "example-site"
PICKS = ROOT / "surveys" / "picks"
GROUND = ("--texture", "loamy_sand", "--moisture", "12 %", "--pore-water-ec", "30 mS/m")
PIPE = ("--target", "line", "--depth", "1.2", "--size", "15 cm", "--material", "metal")


def run(*args, cwd):
    return subprocess.run([sys.executable, "-m", "subsurf", *map(str, args), "--json", "--quiet"],
                          capture_output=True, text=True, cwd=cwd, timeout=300)


#: case -> (command, arguments); {tmp} and {survey} are filled in per run
CASES = {
    "medium-soil": ("medium", ("medium", *GROUND, "--freq", "100", "--freq", "400")),
    "medium-peplinski": ("medium", ("medium", "--model", "peplinski", "--texture", "loam", "--moisture", "20 %",
                                    "--freq", "500")),
    "medium-direct": ("medium", ("medium", "--eps", "9", "--sigma", "5 mS/m", "--q-star", "30", "--freq", "100")),
    "choose": ("choose", ("choose", *GROUND, *PIPE)),
    "choose-layer": ("choose", ("choose", *GROUND, *PIPE, "--antenna", "midband-250", "--over", "0.08 m asphalt")),
    "choose-depth-range": ("choose", ("choose", *GROUND, "--target", "planar", "--depth", "0.5-1.5 m",
                                      "--material", "concrete")),
    "choose-depth-list": ("choose", ("choose", *GROUND, "--target", "line", "--depth", "0.5,1,1.5 m", "--size",
                                     "0.1", "--material", "metal")),
    "choose-calibrated": ("choose", ("choose", "--calibration", "{tmp}/cal/cal.json", *PIPE)),
    "setup": ("setup", ("setup", "--antenna", "midband-500", *GROUND, *PIPE, "--area", "2000 m^2")),
    "setup-depth-range": ("setup", ("setup", "--antenna", "lowband-100", *GROUND, "--target", "planar", "--depth",
                                    "0.5-1.5 m", "--material", "concrete")),
    "depth-picks": ("depth", ("depth", "--picks", PICKS / "fictional_utility_picks.csv", "--velocity", "0.095 m/ns",
                              "--velocity-se", "0.003 m/ns", "--time-zero", "2 ns", "--offset", "0.14 m")),
    "depth-layered": ("depth", ("depth", "--twt", "25", "--twt", "40", "--layer", "0.6 m, 0.11 m/ns, 0.004 m/ns",
                                "--layer", "-, 0.08 m/ns, 0.004 m/ns", "--pick-sd", "0.3 ns", "--draws", "200",
                                "--seed", "1")),
    "velocity-hyperbola": ("velocity", ("velocity", "--picks", PICKS / "fictional_hyperbolas.csv", "--offset",
                                        "0.14 m")),
    "velocity-cmp": ("velocity", ("velocity", "--picks", PICKS / "fictional_cmp.csv")),
    "velocity-known": ("velocity", ("velocity", "--known-depth", "1.20 m", "--twt", "25.1 ns", "--pick-sd", "0.3 ns")),
    "region": ("region", ("region", "--synthetic", "40x30", "--seed", "7", "--target", "planar", "--depth", "1.5",
                          "--out", "{tmp}/region.nc")),
    "map": ("map", ("map", "{survey}", "--out", "{tmp}/maps", "--no-geotiff")),
    "map-calibrated": ("map", ("map", "{survey}", "--out", "{tmp}/maps-cal", "--no-geotiff", "--calibration",
                               "{tmp}/cal/cal.json")),
    "report": ("report", ("report", "{survey}", "--out", "{tmp}/plan.html", "--no-maps")),
    "report-calibrated": ("report", ("report", "{survey}", "--out", "{tmp}/plan-cal.html", "--no-maps",
                                      "--calibration", "{tmp}/cal/cal.json")),
    "demo": ("demo", ("demo", "--out", "{tmp}/demo")),  # run once for the session: conftest.py's demo_json
    "calibrate": ("calibrate", ("calibrate", "{tmp}/cal/fictional_test_line.nc", "--antenna", "midband-250",
                                "--velocity", "0.1", "--out", "{tmp}/cal/cal.json")),
}
#: schemas of files that are not a command's --json output (make_schemas.py FILE_SCHEMAS)
FILES = {"manifest"}
NEEDS = {"region": "dask", "calibrate": "segyio", "choose-calibrated": "segyio", "map-calibrated": "segyio",
         "report-calibrated": "segyio"}  # optional extras: the case is skipped without them


def schema(command: str) -> dict:
    return json.loads((SCHEMAS / f"{command}.schema.json").read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def workdir(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("json-schemas")
    return tmp, coarse_copy(tmp)


@pytest.fixture(scope="module")
def outputs(workdir, request):
    """Each case's parsed --json output, run once (lazily) and shared by the tests of this module."""
    tmp, survey = workdir
    done: dict[str, dict] = {}

    def get(case: str) -> dict:
        if case not in done:
            command, args = CASES[case]
            if case in ("choose-calibrated", "map-calibrated", "report-calibrated"):
                get("calibrate")  # writes the calibration file it reads
            if case == "calibrate":
                (tmp / "cal").mkdir(exist_ok=True)
                subprocess.run([sys.executable, str(ROOT / "surveys/calibration/make_example.py"), str(tmp / "cal")],
                               check=True, capture_output=True)
            argv = [str(a).format(tmp=tmp, survey=survey) for a in args]
            # the demo: one run shared with test_cli_demo (conftest.py), made only when this case runs
            res = request.getfixturevalue("demo_json")[0] if case == "demo" else run(*argv, cwd=tmp)
            assert res.returncode == 0, res.stderr
            assert res.stderr == ""  # --json --quiet: the JSON is the whole answer
            done[case] = json.loads(res.stdout)
        return done[case]

    return get


@pytest.mark.parametrize("case", sorted(CASES))
def test_output_validates_against_its_schema(case, outputs):
    """The real --json output of the command validates (jsonschema, draft 2020-12), unknown keys refused."""
    if case in NEEDS and importlib.util.find_spec(NEEDS[case]) is None:
        pytest.skip(f"needs the optional package {NEEDS[case]}")
    command = CASES[case][0]
    validator = jsonschema.Draft202012Validator(schema(command), format_checker=jsonschema.FormatChecker())
    errors = sorted(validator.iter_errors(outputs(case)), key=lambda e: list(e.absolute_path))
    assert not errors, "\n".join(f"{'/'.join(map(str, e.absolute_path))}: {e.message}" for e in errors[:10])


@pytest.mark.parametrize("case", ["map", "demo"])
def test_folder_manifest_validates_against_its_schema(case, outputs, workdir, request):
    """The manifest of a real map and demo folder validates; the GDAL PAM sidecar is the one rewritable file."""
    from subsurf.io.manifest import MANIFEST_NAME

    outputs(case)
    folder = request.getfixturevalue("demo_json")[1] if case == "demo" else workdir[0] / "maps"
    doc = json.loads((folder / MANIFEST_NAME).read_text(encoding="utf-8"))
    validator = jsonschema.Draft202012Validator(schema("manifest"), format_checker=jsonschema.FormatChecker())
    errors = sorted(validator.iter_errors(doc), key=lambda e: list(e.absolute_path))
    assert not errors, "\n".join(f"{'/'.join(map(str, e.absolute_path))}: {e.message}" for e in errors[:10])
    assert [e["path"] for e in doc["files"] if e.get("rewritable")] == [
        "maps/feasibility.nc.aux.xml" if case == "demo" else "feasibility.nc.aux.xml"]


def test_schema_refuses_a_key_it_does_not_declare(outputs):
    """additionalProperties false works: an extra or renamed key in a real output fails validation."""
    out = dict(outputs("medium-soil"))
    out["rows"] = [dict(out["rows"][0], velocity_m_per_s=1e8)]  # the old unit, under a key not declared
    assert not jsonschema.Draft202012Validator(schema("medium")).is_valid(out)


def test_every_command_has_a_valid_schema_and_a_case():
    """One schema per subcommand (and per file format), each a valid draft 2020-12 schema, each exercised."""
    from subsurf.cli import COMMANDS

    assert {p.name.removesuffix(".schema.json") for p in SCHEMAS.glob("*.schema.json")} == set(COMMANDS) | FILES
    assert {c for c, _ in CASES.values()} == set(COMMANDS)
    for name in [*COMMANDS, *FILES]:
        s = schema(name)
        assert s["$schema"] == "https://json-schema.org/draft/2020-12/schema"
        jsonschema.Draft202012Validator.check_schema(s)


def test_stored_schemas_match_their_generator():
    """docs/schemas/*.schema.json are what make_schemas.py writes (rerun it after changing an output)."""
    res = subprocess.run([sys.executable, str(SCHEMAS / "make_schemas.py"), "--check"], capture_output=True,
                         text=True, timeout=120)
    assert res.returncode == 0, res.stdout + res.stderr


#: unit suffixes of numeric keys (the JSON style: the unit is in the name)
UNIT_SUFFIX = re.compile(r"_(m|m2|km|ns|s|h|db|dbi|db_per_m|db_per_m_per_mhz|m_per_ns|m_per_s|ms_per_m|mhz|pct|c|psu|"
                         r"kg_per_m3|mg_per_l|cmol_per_kg|bytes|deg|wavelengths)$")
#: numeric keys that are counts, ratios or dimensionless by nature (their descriptions say so)
DIMENSIONLESS = {"eps_real", "eps_imag", "loss_tangent", "permittivity", "stacks", "samples", "samples_power_of_two",
                 "n_picks", "row", "rows", "weight", "studentized", "spread_to_depth", "q_star", "value", "se",
                 "lower_bound", "windows", "effective_samples", "reference_reflection", "traces", "schema_version",
                 "cells", "chunk", "tiles", "batch", "cells_with_data", "cells_per_second", "x", "y", "count",
                 "draws", "seed", "monte_carlo_draws", "monte_carlo_seed", "max_standard_error",
                 "max_estimated_error", "archie_a", "archie_m", "archie_n", "eps_solid", "stone_eps", "interface_n",
                 "interface_chi_per_bound_water", "stone_size_sd_log", "covariance", "ns", "db", "m_per_ns",
                 "se_ns", "se_m", "se_db", "se_m_per_ns", "se_db_per_m", "sampled_fraction", "dropped_traces", "q_star_se",
                 "reflection_magnitude", "host_eps_real", "target_eps_real", "low_contrast_limit", "lines",
                 "bytes"}  # the manifest's file size: the unit is the whole name


#: the report's calibration comparison: a table of different quantities, each row's unit in its "unit" key
UNIT_IN_ROW = {"model", "model_range", "observed", "observed_se"}


def _numeric_keys(s, key=None):
    if isinstance(s, dict):
        t = s.get("type")
        types = t if isinstance(t, list) else [t]
        if key is not None and ("number" in types or "integer" in types):
            yield key
        for k, v in s.get("properties", {}).items():
            yield from _numeric_keys(v, k)
        for sub in ("items", "additionalProperties"):
            if isinstance(s.get(sub), dict):
                yield from _numeric_keys(s[sub], key)


@pytest.mark.parametrize("command", sorted(p.name.removesuffix(".schema.json") for p in SCHEMAS.glob("*.schema.json")))
def test_numeric_keys_name_their_unit(command):
    """Every number's key ends in its unit (_m, _m_per_ns, _ms_per_m, _db, _pct ...) or is dimensionless by nature."""
    bad = sorted({k for k in _numeric_keys(schema(command)) if not UNIT_SUFFIX.search(k) and k not in DIMENSIONLESS | UNIT_IN_ROW})
    assert not bad, f"numeric keys without a unit in their name: {bad}"
