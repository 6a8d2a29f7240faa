"""`subsurf demo` as a user meets it: a subprocess writing a new folder."""

from __future__ import annotations

import html
import json
import subprocess
import sys

import pytest


def _run(*args, cwd):
    return subprocess.run([sys.executable, "-m", "subsurf", *args], capture_output=True, text=True, cwd=cwd,
                          timeout=600)


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """Run the demo once with the default folder name in a fresh working folder."""
    cwd = tmp_path_factory.mktemp("demo-cwd")
    res = _run("demo", cwd=cwd)
    return cwd, res


def test_demo_exits_zero_and_names_the_report(demo):
    """Exit 0; stdout lists what was written and where to open the report."""
    cwd, res = demo
    assert res.returncode == 0, res.stderr
    report = cwd / "subsurf-demo" / "report.html"
    assert report.is_file()
    assert report.resolve().as_uri() in res.stdout
    for name in ("report.html", "summary.json", "time_to_depth.csv", "maps/feasibility.nc",
                 "maps/map_antennas__dry.png", "maps/map_antennas__wet.png"):
        assert name in res.stdout
        assert (cwd / "subsurf-demo" / name).is_file()
    assert "fictional" in res.stdout


def test_demo_csv_tables_open_cleanly(demo):
    """Every CSV of the demo (report tables and the map summary) opens in pandas with no options, with its CSVW
    metadata beside it naming each column and the caution on every row."""
    from output_checks import assert_plain_csv

    cwd, res = demo
    assert res.returncode == 0, res.stderr
    found = sorted((cwd / "subsurf-demo").rglob("*.csv"))
    assert sorted(p.name for p in found) == ["antenna_ranking.csv", "ground_properties.csv", "summary.csv",
                                             "time_to_depth.csv"]
    for p in found:
        assert_plain_csv(p)
        assert p.with_suffix(".csvt").is_file()


def test_demo_leaves_no_temporary_folder(demo):
    """Only the finished folder remains in the working folder (temporary build renamed)."""
    cwd, _ = demo
    assert sorted(p.name for p in cwd.iterdir()) == ["subsurf-demo"]


def test_demo_summary_json_has_caution_and_ranking(demo):
    """summary.json carries the caution, the recommendation and every example antenna."""
    from subsurf.io.outputs import CAUTION

    cwd, _ = demo
    data = json.loads((cwd / "subsurf-demo" / "summary.json").read_text(encoding="utf-8"))
    assert data["caution"] == CAUTION
    assert "reason" in data and data["reason"]
    assert {r["antenna"] for r in data["ranking"]} == {"lowband-100", "midband-250", "midband-500", "highband-1000"}


def test_demo_report_embeds_the_maps(demo):
    """The report embeds the map figures and the scenario comparison of the example (dry, wet)."""
    cwd, _ = demo
    page = (cwd / "subsurf-demo" / "report.html").read_text(encoding="utf-8")
    assert page.count('src="data:image/png;base64,') >= 8
    for scenario in ("'dry' (late summer", "'wet' (winter"):  # a depth map per scenario, captioned with it
        assert f"for each antenna, scenario {scenario}" in html.unescape(page)
    assert "Scenario and antenna comparison" in page
    assert ">dry<" in page and ">wet<" in page


def test_demo_refuses_existing_folder(demo):
    """A second run without --force exits 3 with one line and changes nothing."""
    cwd, _ = demo
    marker = cwd / "subsurf-demo" / "mine.txt"
    marker.write_text("user file")
    res = _run("demo", cwd=cwd)
    assert res.returncode == 3
    assert res.stderr.strip().count("\n") == 0 and "--force" in res.stderr
    assert marker.read_text() == "user file"
    marker.unlink()


@pytest.mark.slow
def test_demo_force_replaces_folder(tmp_path):
    """With --force an earlier demo folder is replaced by a complete new one."""
    out = tmp_path / "d"
    (out / "maps").mkdir(parents=True)
    (out / "report.html").write_text("old")
    (out / "maps" / "summary.csv").write_text("old")
    res = _run("demo", "--out", str(out), "--force", "--quiet", cwd=tmp_path)
    assert res.returncode == 0, res.stderr
    assert (out / "report.html").read_text() != "old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["d"]


def test_demo_force_keeps_folder_with_other_files(tmp_path):
    """--force never deletes a folder holding files the demo did not write: exit 3, one line, file kept."""
    out = tmp_path / "d"
    out.mkdir()
    (out / "notes.txt").write_text("user file")
    res = _run("demo", "--out", str(out), "--force", "--quiet", cwd=tmp_path)
    assert res.returncode == 3 and res.stderr.strip().count("\n") == 0 and "notes.txt" in res.stderr
    assert (out / "notes.txt").read_text() == "user file"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["d"]


def test_demo_counts_gdal_statistics_of_its_geotiffs_as_its_own(tmp_path):
    """GDAL's statistics beside the demo's GeoTIFFs (<tif>.aux.xml) are the demo's; a user's file is not (named)."""
    out = tmp_path / "d"
    (out / "maps" / "geotiff").mkdir(parents=True)
    (out / "maps" / "geotiff" / "max_depth__dry__midband-500.tif.aux.xml").write_text("<PAMDataset/>")
    (out / "notes.txt").write_text("user file")
    res = _run("demo", "--out", str(out), "--force", "--quiet", cwd=tmp_path)
    assert res.returncode == 3 and "notes.txt" in res.stderr and ".aux.xml" not in res.stderr
    assert (out / "notes.txt").read_text() == "user file"


def test_demo_json_output(demo_json):
    """--json prints the same result as JSON (files list, report path, caution); --quiet leaves stderr empty."""
    res, out = demo_json  # one shared run (tests/cli/conftest.py), also validated against its schema
    assert res.returncode == 0, res.stderr
    assert res.stderr == ""
    payload = json.loads(res.stdout)
    assert payload["report"].endswith("report.html") and (out / "report.html").is_file()
    assert "report.html" in payload["files"]
    assert payload["caution"]


def test_demo_report_headline_comes_from_the_map(demo):
    """The report's recommendation and per-scenario sentences quote the map's own summary.json: per scenario the
    chosen antenna reaches (margin >= 6 dB) the area the map counts; the wet season needs a second antenna."""
    import re

    cwd, _ = demo
    rows = json.loads((cwd / "subsurf-demo" / "maps" / "summary.json").read_text(encoding="utf-8"))["summary"]
    summary = json.loads((cwd / "subsurf-demo" / "summary.json").read_text(encoding="utf-8"))
    page = html.unescape((cwd / "subsurf-demo" / "report.html").read_text(encoding="utf-8"))
    for c in summary["decision"]["per_scenario"]:
        area = next(r["reach_pct"] for r in rows if r["scenario"] == c["scenario"] and r["antenna"] == c["antenna"])
        m = re.search(rf"{c['scenario']}: {c['antenna']} — [^;]*?\(reaches (\d+) % of the site", page)
        assert m and int(m.group(1)) == round(area), c["scenario"]
    # the example's wet scenario: the antenna brought reaches under half the site there, so another is named
    bring = summary["recommended"]
    wet = next(r for r in rows if r["scenario"] == "wet" and r["antenna"] == bring)
    assert wet["reach_pct"] < 50 and summary["decision"]["worst_scenario"] == "wet"
    assert f"for the wet scenario also {summary['decision']['also']['wet']}" in summary["reason"]


def test_demo_report_quotes_the_maps_probability_method(demo):
    """The map section states how reach probabilities were estimated, as the map's own summary.json records."""
    cwd, _ = demo
    page = (cwd / "subsurf-demo" / "report.html").read_text(encoding="utf-8")
    mc = json.loads((cwd / "subsurf-demo" / "maps" / "summary.json").read_text(encoding="utf-8"))["monte_carlo"]
    assert f"({mc['draws']} draws, seed {mc['seed']}" in page
    assert f"estimated error at most {mc['max_estimated_error']:.3f}" in page
    for name, f in mc["sampled_fraction"].items():
        assert f"{name} {100 * f:.1f} %" in page
