"""The depth and velocity subcommands as a user meets them (a fork of one warm interpreter per run, tests/cli/warm_runner.py: a real process without the start-up)."""

import json
import subprocess
import sys
from pathlib import Path

import pytest
from warm_runner import run_warm

EXAMPLES = Path(__file__).resolve().parents[2] / "surveys" / "picks"


def _run(*args, cwd=None):
    return run_warm(args, cwd=cwd, timeout=600)


def test_depth_single_value_json():
    """A single time converts to √((vt/2)² − (x/2)²) and the JSON carries the caution."""
    r = _run("depth", "--twt", "20 ns", "--velocity", "0.1 m/ns", "--offset", "0.2 m", "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert out["picks"][0]["depth_m"] == pytest.approx(((0.1 * 20 / 2) ** 2 - 0.1**2) ** 0.5)
    assert "excavation" in out["caution"]


def test_depth_table_writes_csv_and_geojson(tmp_path):
    """Pick table → CSV and GeoJSON in the survey CRS with target elevation and caution."""
    r = _run("depth", "--picks", str(EXAMPLES / "fictional_utility_picks.csv"), "--velocity", "0.095",
             "--velocity-se", "0.003", "--time-zero", "2", "--offset", "0.14",
             "--out-csv", "d.csv", "--out-geojson", "d.geojson", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    gj = json.loads((tmp_path / "d.geojson").read_text())
    f0 = gj["features"][0]
    assert f0["geometry"]["coordinates"] == [512340.0, 5403210.0]
    p = f0["properties"]
    assert p["target_elev_m"] == pytest.approx(p["surface_elev_m"] - p["depth_m"])
    assert "excavation" in gj["caution"]
    import pandas as pd

    from subsurf.safety import CAUTION

    df = pd.read_csv(tmp_path / "d.csv")  # no options: no comment line above the header
    assert "depth_sd_m" in df.columns and (df["caution"] == CAUTION).all()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["d.csv", "d.csv-metadata.json", "d.csvt", "d.geojson",
                                                          "d.prj"]


def test_depth_csv_opens_in_pandas_csvw_and_ogr(tmp_path):
    """depths.csv: pandas reads numbers with no options and they match √((v·τ/2)² − (x/2)²) for the example's
    times; the CSVW metadata names every column with its unit; OGR reads points in the picks' CRS."""
    import csv

    import pandas as pd
    from pyproj import CRS

    from subsurf.safety import CAUTION

    r = _run("depth", "--picks", str(EXAMPLES / "fictional_utility_picks.csv"), "--velocity", "0.095",
             "--time-zero", "2", "--offset", "0.14", "--out-csv", "depths.csv", "--json", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    assert json.loads(r.stdout)["written"] == ["depths.csv", "depths.csv-metadata.json", "depths.csvt",
                                               "depths.prj"]
    df = pd.read_csv(tmp_path / "depths.csv")
    for c in ("twt_ns", "depth_m", "depth_sd_m", "easting_m", "northing_m"):
        assert df[c].dtype.kind == "f", c
    assert df["row"].dtype.kind == "i"
    with open(EXAMPLES / "fictional_utility_picks.csv", encoding="utf-8") as fh:
        twt = [float(row["twt_ns"]) for row in csv.DictReader(ln for ln in fh if not ln.startswith("#"))]
    # common-midpoint geometry: d = sqrt((v·(t − t0)/2)² − (x/2)²), v in m/ns, t in ns (textbook two-way time)
    expected = [((0.095 * (t - 2) / 2) ** 2 - 0.07**2) ** 0.5 for t in twt]
    assert df["depth_m"].tolist() == pytest.approx(expected, abs=5e-5)  # written to 4 decimals
    meta = json.loads((tmp_path / "depths.csv-metadata.json").read_text(encoding="utf-8"))
    assert meta["url"] == "depths.csv" and CAUTION in meta["dc:description"]
    cols = {c["name"]: c for c in meta["tableSchema"]["columns"]}
    assert list(cols) == list(df.columns)
    assert cols["depth_m"]["schema:unitText"] == "m" and cols["twt_ns"]["schema:unitText"] == "ns"
    assert any("velocity: 0.095" in n for n in meta["rdfs:comment"])
    try:
        from pyogrio.raw import read
    except ImportError:
        print("pyogrio not installed: OGR read of depths.csv skipped")
        return
    info, _, geometry, _ = read(tmp_path / "depths.csv")
    assert CRS.from_user_input(info["crs"]).to_epsg() == 32633  # the '# crs:' of the picks, now in depths.prj
    assert len(geometry) == len(df)


def test_depth_geojson_rounded_and_caution_per_feature(tmp_path):
    """GeoJSON coordinates carry at most 6 decimals in degrees / 3 in metres (RFC 7946 §11.2) and every
    feature's properties carry the caution."""
    from subsurf.safety import CAUTION

    for crs, decimals in (("EPSG:4326", 6), ("EPSG:32633", 3)):
        name = f"p{decimals}.geojson"
        r = _run("depth", "--picks", str(EXAMPLES / "fictional_lonlat_picks.csv"), "--velocity", "0.1",
                 "--crs", crs, "--out-geojson", name, cwd=tmp_path)
        assert r.returncode == 0, r.stderr
        doc = json.loads((tmp_path / name).read_text(encoding="utf-8"))
        assert doc["features"]
        for f in doc["features"]:
            assert f["properties"]["caution"] == CAUTION
            for k, v in f["properties"].items():  # no float noise such as 21.840000000000003 from ns conversions
                assert not isinstance(v, float) or float(f"{v:.12g}") == v, (k, v)
            for v in f["geometry"]["coordinates"]:
                assert round(v, decimals) == v
                text = repr(v)
                assert "e" not in text and len(text.split(".")[1]) <= decimals, text


def test_depth_geojson_passes_an_rfc7946_validator(tmp_path):
    """In WGS 84 the file is strict RFC 7946 by geojson-validator: no structure problems (the crs member
    included), no invalid or problematic geometries (excessive coordinate precision included)."""
    gv = pytest.importorskip("geojson_validator", reason="geojson-validator (test extra) not installed")
    r = _run("depth", "--picks", str(EXAMPLES / "fictional_lonlat_picks.csv"), "--velocity", "0.1",
             "--crs", "EPSG:4326", "--out-geojson", "p.geojson", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    doc = json.loads((tmp_path / "p.geojson").read_text(encoding="utf-8"))
    assert gv.validate_structure(doc, check_crs=True) == {}
    res = gv.validate_geometries(doc)
    assert res["invalid"] == {} and res["problematic"] == {} and res["count_geometry_types"] == {"Point": 4}


def test_depth_rerun_without_coordinates_removes_earlier_prj(tmp_path):
    """--force over an earlier depths.csv with coordinates: the new table has none, so its stale .prj goes."""
    picks = EXAMPLES / "fictional_utility_picks.csv"
    r = _run("depth", "--picks", str(picks), "--velocity", "0.1", "--out-csv", "d.csv", cwd=tmp_path)
    assert r.returncode == 0 and (tmp_path / "d.prj").exists()
    r = _run("depth", "--picks", str(picks), "--velocity", "0.1", "--out-csv", "d.csv", cwd=tmp_path)
    assert r.returncode == 3  # the sidecars are outputs too: not overwritten without --force
    r = _run("depth", "--twt", "20 ns", "--velocity", "0.1", "--out-csv", "d.csv", "--force", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["d.csv", "d.csv-metadata.json", "d.csvt"]


def test_depth_reprojects_to_survey_crs(tmp_path):
    """Lon/lat picks written in EPSG:32633 land in UTM metres."""
    r = _run("depth", "--picks", str(EXAMPLES / "fictional_lonlat_picks.csv"), "--velocity", "0.1",
             "--crs", "EPSG:32633", "--json")
    assert r.returncode == 0, r.stderr
    row = json.loads(r.stdout)["picks"][0]
    assert 400_000 < row["easting_m"] < 600_000 and 5_000_000 < row["northing_m"] < 6_000_000


def test_depth_refuses_overwrite(tmp_path):
    """An existing output gives exit 3 and stays unchanged."""
    (tmp_path / "d.csv").write_text("keep")
    r = _run("depth", "--picks", str(EXAMPLES / "fictional_utility_picks.csv"), "--velocity", "0.1",
             "--out-csv", "d.csv", cwd=tmp_path)
    assert r.returncode == 3
    assert (tmp_path / "d.csv").read_text() == "keep"


def test_depth_bad_file_names_rows_and_writes_nothing(tmp_path):
    """A bad table gives exit 1, one stderr line naming the rows, and no output file."""
    r = _run("depth", "--picks", str(EXAMPLES / "fictional_bad_picks.csv"), "--velocity", "0.1",
             "--out-csv", "d.csv", cwd=tmp_path)
    assert r.returncode == 1
    assert "row 5, column 'twt_ns'" in r.stderr and len(r.stderr.strip().splitlines()) == 1
    assert list(tmp_path.iterdir()) == []


def test_depth_before_time_zero_named_per_row():
    """Picks before time zero are refused row by row."""
    r = _run("depth", "--picks", str(EXAMPLES / "fictional_lonlat_picks.csv"), "--velocity", "0.1",
             "--time-zero", "22 ns")
    assert r.returncode == 1
    assert "row 4, column 'twt_ns'" in r.stderr and "before time zero" in r.stderr


def test_depth_separation_too_large():
    """A time too short for the separation is refused."""
    r = _run("depth", "--twt", "5", "--velocity", "0.1", "--offset", "1.0")
    assert r.returncode == 1 and "no real depth" in r.stderr


def test_depth_layered_reports_monte_carlo():
    """A layered run reports MC draws and seed next to the first-order spread."""
    r = _run("depth", "--twt", "30", "--layer", "0.6 m, 0.11 m/ns, 0.004 m/ns", "--layer", "-, 0.08, 0.004",
             "--draws", "500", "--seed", "2", "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert "500 draws, seed 2" in out["inputs"]["uncertainty"]
    assert out["picks"][0]["depth_mc_sd_m"] == pytest.approx(out["picks"][0]["depth_sd_m"], rel=0.15)


def test_velocity_hyperbola_example(tmp_path):
    """The hyperbola example fits both targets near the invented 0.095 m/ns and writes the figure."""
    r = _run("velocity", "--picks", str(EXAMPLES / "fictional_hyperbolas.csv"), "--offset", "0.14",
             "--figure", "f.png", "--out-json", "f.json", "--json", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    fits = json.loads(r.stdout)["fits"]
    assert [f["target"] for f in fits] == ["P1", "P2"]
    p2 = fits[1]
    assert abs(p2["velocity_m_per_ns"] - 0.095) < 3 * p2["velocity_se_m_per_ns"]
    assert abs(p2["depth_m"] - 1.30) < 3 * p2["depth_se_m"]
    assert any(d["row"] == 7 for d in fits[0]["downweighted"])  # the deliberate mis-pick
    assert (tmp_path / "f.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert json.loads((tmp_path / "f.json").read_text())["fits"][0]["target"] == "P1"


def test_velocity_csv_opens_in_pandas_with_units_beside_it(tmp_path):
    """velocity --out-csv: pandas reads the fits with no options (same numbers as the JSON), the CSVW
    metadata gives m/ns for the velocity columns; no .prj (no coordinates)."""
    import pandas as pd

    r = _run("velocity", "--picks", str(EXAMPLES / "fictional_hyperbolas.csv"), "--offset", "0.14",
             "--out-csv", "v.csv", "--json", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    fits = json.loads(r.stdout)["fits"]
    df = pd.read_csv(tmp_path / "v.csv")
    assert df["velocity_m_per_ns"].dtype.kind == "f" and df["n_picks"].dtype.kind == "i"
    assert df["velocity_m_per_ns"].tolist() == pytest.approx([f["velocity_m_per_ns"] for f in fits], rel=1e-4)
    meta = json.loads((tmp_path / "v.csv-metadata.json").read_text(encoding="utf-8"))
    units = {c["name"]: c.get("schema:unitText") for c in meta["tableSchema"]["columns"]}
    assert list(units) == list(df.columns) and units["velocity_m_per_ns"] == "m/ns"
    assert not (tmp_path / "v.prj").exists()


def test_velocity_cmp_dix():
    """The CMP example gives interval velocities near the invented 0.11 and 0.08 m/ns."""
    r = _run("velocity", "--picks", str(EXAMPLES / "fictional_cmp.csv"), "--json")
    assert r.returncode == 0, r.stderr
    iv = json.loads(r.stdout)["interval_velocities"]
    assert iv[0]["interval_velocity_m_per_ns"] == pytest.approx(0.11, abs=3 * iv[0]["interval_velocity_se_m_per_ns"])
    assert iv[1]["interval_velocity_m_per_ns"] == pytest.approx(0.08, abs=3 * iv[1]["interval_velocity_se_m_per_ns"])


def test_velocity_calibration():
    """A target at a known depth gives v = 2d/t."""
    r = _run("velocity", "--known-depth", "1.2 m", "--twt", "24 ns", "--json")
    assert r.returncode == 0, r.stderr
    assert json.loads(r.stdout)["fits"][0]["velocity_m_per_ns"] == pytest.approx(0.1)


def test_velocity_too_few_picks(tmp_path):
    """A hyperbola with three picks is refused with exit 1, naming the target."""
    p = tmp_path / "p.csv"
    p.write_text("line,target,distance_m,twt_ns\nA,T,0,10\nA,T,1,9\nA,T,2,10\n")
    r = _run("velocity", "--picks", str(p))
    assert r.returncode == 1 and "target 'T'" in r.stderr and "at least 4" in r.stderr


@pytest.mark.parametrize("flags", [["--velocity", "10"], ["--velocity", "-0.1"],
                                   ["--layer", "0.5 m, 0.5 m/ns", "--layer", "-, 0.1 m/ns"]])
def test_depth_velocity_outside_zero_to_c_names_flag_and_range(flags):
    """A velocity above c (0.2998 m/ns, scipy.constants) or <= 0 is one line naming the flag and the range in m/ns."""
    p = _run("depth", "--twt", "25", *flags)
    assert p.returncode == 1
    lines = p.stderr.strip().splitlines()
    assert len(lines) == 1
    assert flags[0] in lines[0] and "0.2998 m/ns" in lines[0]


def test_velocity_radius_typo_mentions_fit():
    """A mistyped --radius ('fitt') is one line that names the 'fit' choice besides a length."""
    p = _run("velocity", "--picks", str(EXAMPLES / "fictional_hyperbolas.csv"), "--radius", "fitt")
    assert p.returncode == 1
    assert len(p.stderr.strip().splitlines()) == 1
    assert "--radius" in p.stderr and "'fit'" in p.stderr


def _two_layer_cmp_csv(path):
    """A CMP gather over 4.5 m at 0.13 m/ns on 3 m at 0.065 m/ns (invented), times by exact Snell ray tracing."""
    import numpy as np

    sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "interpretation"))
    from snell import snell_twt

    rng = np.random.default_rng(13)
    x = np.linspace(0.5, 10.0, 20)
    lines = ["# invented two-layer CMP gather (exact ray tracing, 0.2 ns scatter)", "line,target,offset_m,twt_ns"]
    for name, v, h in (("top", [0.13e9], [4.5]), ("bedrock", [0.13e9, 0.065e9], [4.5, 3.0])):
        t = snell_twt(x, v, h) + rng.normal(0, 0.2e-9, x.size)
        lines += [f"L1,{name},{xi:.2f},{ti * 1e9:.3f}" for xi, ti in zip(x, t)]
    path.write_text("\n".join(lines) + "\n")
    return 2 * (4.5 / 0.13e9 + 3.0 / 0.065e9)  # zero-offset time of the bedrock, s


def test_cmp_layered_model_feeds_depth(tmp_path):
    """velocity writes the interval model; depth --velocity-from uses it: bedrock within 3 % of 7.5 m, bar covers it."""
    t0 = _two_layer_cmp_csv(tmp_path / "cmp.csv")
    r = _run("velocity", "--picks", "cmp.csv", "--out-json", "fit.json", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    assert "WARNING: bedrock: spread/depth = 1.3" in r.stdout and "Yilmaz 2001" in r.stdout
    fit = json.loads((tmp_path / "fit.json").read_text())
    model = fit["layered_model"]
    assert model["reflectors"] == ["top", "bedrock"] and len(model["covariance"]) == 4
    bed = [f for f in fit["fits"] if f["target"] == "bedrock"][0]
    assert abs(bed["depth_m"] - 7.5) < 0.03 * 7.5 and abs(bed["depth_m"] - 7.5) < 3 * bed["depth_se_m"]
    d = _run("depth", "--velocity-from", "fit.json", "--twt", f"{t0 * 1e9:.4f}", "--json", cwd=tmp_path)
    assert d.returncode == 0, d.stderr
    out = json.loads(d.stdout)
    pick = out["picks"][0]
    assert abs(pick["depth_m"] - 7.5) < 0.03 * 7.5
    assert abs(pick["depth_m"] - 7.5) < 3 * pick["depth_sd_m"]  # one seeded draw: 3-sd bar
    assert "layered model of 2 layers" in out["inputs"]["velocity_source"] and "covariance" in out["inputs"]["uncertainty"]


def test_velocity_from_multi_cmp_without_model_refused(tmp_path):
    """A CMP result with several reflectors but no layered_model is refused in one line (exit 1)."""
    (tmp_path / "old.json").write_text(json.dumps({"method": "cmp", "fits": [
        {"target": "a", "velocity_m_per_ns": 0.1, "velocity_se_m_per_ns": 0.001},
        {"target": "b", "velocity_m_per_ns": 0.09, "velocity_se_m_per_ns": 0.001}]}))
    r = _run("depth", "--velocity-from", "old.json", "--twt", "30", cwd=tmp_path)
    assert r.returncode == 1 and r.stderr.count("\n") == 1
    assert "no 'layered_model'" in r.stderr and "old.json" in r.stderr


def test_fitted_radius_flag_shown(tmp_path):
    """velocity --radius fit on point-like picks prints that the radius is poorly constrained."""
    import numpy as np

    rng = np.random.default_rng(7)
    x = np.linspace(-1.0, 1.0, 21) + 5.0
    t = 2 * np.hypot(x - 5.0, 0.8) / 0.1 + rng.normal(0, 0.2, x.size)  # ns, m/ns
    rows = ["line,target,distance_m,twt_ns"] + [f"L1,P1,{a:.3f},{b:.3f}" for a, b in zip(x, t)]
    (tmp_path / "h.csv").write_text("\n".join(rows) + "\n")
    r = _run("velocity", "--picks", "h.csv", "--radius", "fit", "--json", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    flags = json.loads(r.stdout)["fits"][0]["flags"]
    assert any(f.startswith("radius poorly constrained") for f in flags)


def test_depth_json_gives_velocity_as_numbers():
    """The velocity used is a number and its standard error another (m/ns), not a '0.1 ± 0.003' string."""
    res = subprocess.run([sys.executable, "-m", "subsurf", "depth", "--twt", "20", "--velocity", "0.1 m/ns",
                          "--velocity-se", "3 mm/ns", "--json"], capture_output=True, text=True, timeout=120)
    assert res.returncode == 0, res.stderr
    inputs = json.loads(res.stdout)["inputs"]
    assert inputs["velocity_m_per_ns"] == pytest.approx(0.1, rel=1e-12)
    assert inputs["velocity_se_m_per_ns"] == pytest.approx(0.003, rel=1e-12)  # 3 mm/ns = 0.003 m/ns
    assert inputs["velocity_source"] == "--velocity" and inputs["velocity_model"] == "homogeneous"
