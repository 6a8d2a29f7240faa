"""File names of ``subsurf map``: one depth map per scenario, each scenario's own name in it."""

from __future__ import annotations

from types import SimpleNamespace

from subsurf.io.maps import output_paths, scenario_tags


def test_tags_keep_plain_names():
    """Names made of letters, digits, '-', '_' are used as they are."""
    assert scenario_tags(["dry", "wet-2024", "base_case"]) == {"dry": "dry", "wet-2024": "wet-2024",
                                                              "base_case": "base_case"}


def test_tags_are_file_safe_and_unique():
    """Spaces and slashes become '_'; two names that would share a tag each keep a file of their own."""
    tags = scenario_tags(["late summer/dry", "late summer dry", "wet"])
    assert all("/" not in t and " " not in t for t in tags.values())
    assert len(set(tags.values())) == 3
    assert tags["wet"] == "wet"


def test_one_depth_map_per_scenario(tmp_path):
    """output_paths lists a per-antenna depth map for every scenario, in the survey's order."""
    survey = SimpleNamespace(scenarios=[SimpleNamespace(name=n) for n in ("spring", "summer", "winter")],
                             antennas=["a"])
    paths = output_paths(tmp_path, survey, geotiff=False)
    names = [p.name for k, p in paths.items() if k.startswith("png_antennas")]
    assert names == ["map_antennas__spring.png", "map_antennas__summer.png", "map_antennas__winter.png"]


def test_tags_fold_accents_to_ascii():
    """Accented names give ASCII file names ('wét' -> 'wet'); 'wet' beside 'wét' still gets a file of its own."""
    assert scenario_tags(["dry", "wét"]) == {"dry": "dry", "wét": "wet"}
    tags = scenario_tags(["wet", "wét", "über/nass"])
    assert len(set(tags.values())) == 3 and all(t.isascii() for t in tags.values())
    assert tags["über/nass"] == "uber_nass"


def test_tags_stay_unique_when_an_appended_tag_is_taken():
    """'wet' and 'wét' share 'wet'; the position appended ('wet_2') is another scenario's name: still unique.
    Tags differing only in letter case count as shared (one file on case-insensitive file systems)."""
    tags = scenario_tags(["wet_2", "wet", "wét"])
    assert tags["wet_2"] == "wet_2" and len({t.lower() for t in tags.values()}) == 3
    tags = scenario_tags(["Wet", "wet"])
    assert len({t.lower() for t in tags.values()}) == 2
