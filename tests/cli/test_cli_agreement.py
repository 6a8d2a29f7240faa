"""One answer everywhere: `choose`, `map` and `report` agree on a uniform and on a two-zone site.

The outputs are computed by different code paths — `choose` evaluates one soil with the
antenna ranking, `map` evaluates the chain on every grid cell and counts areas, the report
decides from the map's area statistics — so these checks compare them as a user meets
them: three subprocesses, their JSON.  `choose`'s own figures are checked against the radar
range equation elsewhere (tests/detection); here the check is their agreement, plus an area
fraction computed by hand from the zone geometry.  Sites and numbers are invented.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

ANTENNAS = ["lowband-100", "midband-250", "midband-500", "highband-1000"]
TARGET = ["--target", "line", "--depth", "1.2", "--size", "0.15", "--material", "metal"]

SURVEY = """\
# An invented plot for the agreement tests; every value is made up.
[site]
name = "Agreement test plot (fictional)"
crs = "EPSG:32630"
bbox = [500000, 5700000, 500060, 5700040]

[grid]
crs = "EPSG:32630"
cell_size = "10 m"

[soil]
model = "crim"
texture = "loamy_sand"
defaults = {{ moisture = "{moisture} %", pore_water_ec = "30 mS/m", temperature = "12 degC" }}
{zones}
[target]
kind = "line"
depth = "1.2 m"
size = "0.15 m"
material = "metal"

[antennas]
names = {antennas}

[monte_carlo]
draws = 20
seed = 1
"""

#: two zones split at easting 500020: cells of 10 m with centres at 500005, 500015 (zone "dry
#: sand", 2 of 6 columns) and 500025 ... 500055 (zone "damp sand", 4 of 6 columns)
ZONES = {"type": "FeatureCollection", "features": [
    {"type": "Feature", "properties": {"name": "dry sand", "moisture": "4 %"},
     "geometry": {"type": "Polygon", "coordinates": [[[499990, 5699990], [500020, 5699990], [500020, 5700050],
                                                      [499990, 5700050], [499990, 5699990]]]}},
    {"type": "Feature", "properties": {"name": "damp sand", "moisture": "16 %"},
     "geometry": {"type": "Polygon", "coordinates": [[[500020, 5699990], [500070, 5699990], [500070, 5700050],
                                                      [500020, 5700050], [500020, 5699990]]]}},
]}
#: hand-computed from the geometry above: 8 of the 24 cells lie in "dry sand"
DRY_SHARE, DAMP_SHARE = 8 / 24, 16 / 24


def _run(*args, cwd):
    proc = subprocess.run([sys.executable, "-m", "subsurf", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, timeout=600)
    assert proc.returncode == 0, proc.stderr
    return json.loads(proc.stdout)


def _choose(moisture_pct: float, cwd) -> dict:
    """`subsurf choose` for one soil (the soil of the survey's defaults or of one zone)."""
    ants = [a for name in ANTENNAS for a in ("--antenna", name)]
    return _run("choose", *TARGET, "--texture", "loamy_sand", "--moisture", moisture_pct / 100,
                "--pore-water-ec", 30, "--temp", 12, *ants, "--json", cwd=cwd)


def _survey(folder, *, moisture: float, zones: bool):
    zone_block = ""
    if zones:
        (folder / "zones.geojson").write_text(json.dumps(ZONES), encoding="utf-8")
        zone_block = '\n[[soil.zones]]\nfile = "zones.geojson"\ncrs = "EPSG:32630"\n'
    path = folder / "survey.toml"
    path.write_text(SURVEY.format(moisture=moisture, zones=zone_block, antennas=json.dumps(ANTENNAS)),
                    encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def uniform(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("uniform")
    survey = _survey(tmp, moisture=12, zones=False)
    mapped = _run("map", survey, "--out", tmp / "maps", "--no-geotiff", "--json", cwd=tmp)
    report = _run("report", survey, "--out", tmp / "r.html", "--json", cwd=tmp)
    return _choose(12, tmp), mapped, report


@pytest.fixture(scope="module")
def two_zones(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("zones")
    survey = _survey(tmp, moisture=16, zones=True)
    mapped = _run("map", survey, "--out", tmp / "maps", "--no-geotiff", "--json", cwd=tmp)
    report = _run("report", survey, "--out", tmp / "r.html", "--json", cwd=tmp)
    return {"dry": _choose(4, tmp), "damp": _choose(16, tmp)}, mapped, report


def test_uniform_site_map_reach_is_choose_verdict(uniform):
    """Uniform soil: each antenna reaches 100 % of the site where `choose` says 'reaches', else 0 %."""
    chosen, mapped, _ = uniform
    verdicts = {r["antenna"]: r["verdict"] for r in chosen["rows"]}
    assert set(verdicts.values()) >= {"reaches"} and set(verdicts.values()) - {"reaches"}  # both kinds occur
    for row in mapped["summary"]:
        assert row["reach_pct"] == (100.0 if verdicts[row["antenna"]] == "reaches" else 0.0), row["antenna"]


def test_uniform_site_map_depth_is_choose_depth(uniform):
    """Uniform soil: the map's maximum depth equals `choose`'s in every cell, within 1 % (the map stores float32)."""
    chosen, mapped, _ = uniform
    depth = {r["antenna"]: r["max_depth_m"] for r in chosen["rows"]}
    for row in mapped["summary"]:
        for key in ("max_depth_min_m", "max_depth_max_m"):
            assert row[key] == pytest.approx(depth[row["antenna"]], rel=0.01), (row["antenna"], key)


def test_uniform_site_report_recommends_what_choose_does(uniform):
    """Uniform soil: the report's recommendation, from the maps, is `choose`'s recommendation."""
    chosen, _, report = uniform
    assert chosen["recommendation"]["antenna"] is not None
    assert report["recommended"] == chosen["recommendation"]["antenna"]
    assert report["decision"]["also"] == {}


def test_every_output_states_the_same_threshold(uniform):
    """`choose`, `map` and the report name one reach threshold, 6 dB, and the same definition."""
    chosen, mapped, report = uniform
    assert chosen["thresholds"]["reaches_margin_db"] == mapped["thresholds"]["reaches_margin_db"] == 6.0
    assert report["decision"]["reaches_margin_db"] == report["thresholds"]["reaches_margin_db"] == 6.0
    assert chosen["reach_definition"] == mapped["reach_definition"]


def test_two_zone_site_area_is_the_hand_computed_zone_share(two_zones):
    """Two uniform zones: each antenna's reached area is the share of the zones where `choose` says it reaches,
    with the shares counted by hand from the zone geometry (8 and 16 of 24 cells)."""
    chosen, mapped, _ = two_zones
    reach = {z: {r["antenna"]: r["verdict"] == "reaches" for r in c["rows"]} for z, c in chosen.items()}
    # the zones differ for the chosen soils: a high-frequency antenna reaches only in the dry zone
    assert reach["dry"] != reach["damp"]
    for row in mapped["summary"]:
        a = row["antenna"]
        expect = 100 * (DRY_SHARE * reach["dry"][a] + DAMP_SHARE * reach["damp"][a])
        assert row["reach_pct"] == pytest.approx(expect, abs=1e-9), a


def test_two_zone_report_follows_the_map_not_the_median_soil(two_zones):
    """Two zones: the report recommends, among the antennas the map shows reaching every cell, the one with the
    finest resolution in the larger zone (the site median); the site-median soil (10 %) would say otherwise."""
    chosen, mapped, report = two_zones
    whole = [r["antenna"] for r in mapped["summary"] if r["reach_pct"] == 100.0]
    res = {r["antenna"]: r["vertical_resolution_m"] for r in chosen["damp"]["rows"]}  # 16 of 24 cells: the median
    assert whole and report["recommended"] == min(whole, key=res.get)
    median = report["site_median_recommendation"]["antenna"]
    assert median != report["recommended"]  # the median soil recommends an antenna that misses two thirds
    assert next(r["reach_pct"] for r in mapped["summary"] if r["antenna"] == median) < 100.0


def test_two_zone_report_zone_table_is_choose_per_zone(two_zones):
    """Two uniform zones: the report's zone table gives each zone the hand-counted share of the site (8 and 16 of
    24 cells), `choose`'s recommendation for that zone's soil, and 100 %/0 % reached exactly where `choose` says
    'reaches' / not."""
    chosen, _, report = two_zones
    zones = {z["zone"]: z for z in report["zones"]}
    assert set(zones) == {"dry sand", "damp sand"}  # every cell lies in a zone: no 'rest of the site' row
    for name, key, share in (("dry sand", "dry", DRY_SHARE), ("damp sand", "damp", DAMP_SHARE)):
        z, c = zones[name], chosen[key]
        assert z["area_pct"] == pytest.approx(100 * share, abs=1e-9)
        assert z["recommended"] == c["recommendation"]["antenna"] and z["also"] == {}
        verdicts = {r["antenna"]: r["verdict"] for r in c["rows"]}
        for a in z["antennas"]:
            assert a["worst_reach_pct"] == (100.0 if verdicts[a["antenna"]] == "reaches" else 0.0), (name, a)


def test_two_zone_too_shallow_area_is_the_zone_share_where_choose_says_too_shallow(two_zones):
    """Two uniform zones: the map's 'too shallow' area is the hand-counted share of the zones where `choose` says
    'too shallow' (the target inside the blind zone), and 'margin >= 0 dB' never counts those cells."""
    chosen, mapped, _ = two_zones
    shallow = {z: {r["antenna"]: r["verdict"] == "too shallow" for r in c["rows"]} for z, c in chosen.items()}
    assert any(any(v.values()) for v in shallow.values())  # the blind zone matters somewhere on this site
    for row in mapped["summary"]:
        a = row["antenna"]
        expect = 100 * (DRY_SHARE * shallow["dry"][a] + DAMP_SHARE * shallow["damp"][a])
        assert row["too_shallow_pct"] == pytest.approx(expect, abs=1e-9), a
        assert row["marginal_or_better_pct"] <= 100 - row["too_shallow_pct"] + 1e-9, a
