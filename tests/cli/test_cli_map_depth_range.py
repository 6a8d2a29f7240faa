"""`subsurf map` and `subsurf report` with a range of depths of interest ([target] depth_top/depth_bottom).

The range is judged at its bottom for the margin and at its top for the blind zone: its maps must
equal the single-depth maps at those two depths, cell by cell, and every output must state both.
Files are read back with independent readers (netCDF4, rasterio, jsonschema).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from example_site import coarse_copy

SCHEMAS = Path(__file__).resolve().parents[2] / "docs" / "schemas"
PLANAR = 'kind = "planar"\n{depth}\nsize = "0.15 m"\nmaterial = "concrete"'


def _survey(tmp: Path, name: str, depth_lines: str) -> Path:
    p = coarse_copy(tmp)
    text = p.read_text()
    start, end = text.index("[target]"), text.index("[antennas]")
    p = tmp / f"{name}.toml"
    p.write_text(text[:start] + "[target]\n" + PLANAR.format(depth=depth_lines) + "\n\n" + text[end:])
    return p


def _map(survey, out, *extra):
    proc = subprocess.run([sys.executable, "-m", "subsurf", "map", str(survey), "--out", str(out), "--json",
                           "--quiet", *extra], capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stderr
    return json.loads(proc.stdout)


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("range")
    rng = _survey(tmp, "range", 'depth_top = "0.5 m"\ndepth_bottom = "1.5 m"')
    out = {"range": (_map(rng, tmp / "range"), tmp / "range", rng)}
    for name, d in (("top", "0.5 m"), ("bottom", "1.5 m")):
        s = _survey(tmp, name, f'depth = "{d}"')
        out[name] = (_map(s, tmp / name, "--no-geotiff"), tmp / name, s)
    return out


def _nc(path):
    import netCDF4

    with netCDF4.Dataset(path / "feasibility.nc") as ds:
        return ({k: ds.getncattr(k) for k in ds.ncattrs()}, np.array(ds["margin_db"][:].filled(np.nan)),
                np.array(ds["too_shallow"][:]).astype(bool), np.array(ds["mask"][:]).astype(bool))


def test_range_maps_are_bottom_margin_and_top_blind_zone(runs):
    """margin = the single-depth margin at 1.5 m; blind zone = the single-depth one at 0.5 m; reach % from both."""
    _, m_r, sh_r, mask = _nc(runs["range"][1])
    _, m_b, _, _ = _nc(runs["bottom"][1])
    _, _, sh_t, _ = _nc(runs["top"][1])
    np.testing.assert_allclose(m_r, m_b, rtol=0, atol=1e-4, equal_nan=True)
    np.testing.assert_array_equal(sh_r, sh_t)
    rows = {(r["scenario"], r["antenna"]): r["reach_pct"] for r in runs["range"][0]["summary"]}
    summary = runs["range"][0]["summary"]  # scenario-major, in the file's order of scenarios and antennas
    scen = list(dict.fromkeys(r["scenario"] for r in summary))
    ants = list(dict.fromkeys(r["antenna"] for r in summary))
    for i, s in enumerate(scen):
        for j, a in enumerate(ants):
            ok = (m_b[i, j] >= 6.0) & ~sh_t[i, j] & mask
            assert rows[(s, a)] == pytest.approx(100 * ok.sum() / mask.sum(), abs=1e-6), (s, a)
    assert any(sh_r[:, :, mask].any(axis=-1).ravel())  # some antenna really is blind at 0.5 m here


def test_range_stated_in_netcdf_geotiff_and_json(runs):
    """Both depths in the NetCDF attributes, the GeoTIFF tags and the JSON (valid against its schema)."""
    import jsonschema
    import rasterio

    data, out, _ = runs["range"]
    attrs, *_ = _nc(out)
    assert attrs["target_depth_m"] == 1.5 and attrs["target_depth_bottom_m"] == 1.5
    assert attrs["target_depth_top_m"] == 0.5 and "0.5-1.5 m" in attrs["target"]
    tif = next(out.rglob("*margin_db*.tif"))
    with rasterio.open(tif) as src:
        tags = src.tags()
    assert float(tags["target_depth_top_m"]) == 0.5 and float(tags["target_depth_bottom_m"]) == 1.5
    t = data["inputs"]["target"]
    assert (t["depth_m"], t["depth_top_m"], t["depth_bottom_m"]) == (1.5, 0.5, 1.5)
    jsonschema.validate(data, json.loads((SCHEMAS / "map.schema.json").read_text()))
    assert "0.5-1.5 m" in data["text"] and "blind zone at 0.5 m" in data["text"]


def test_report_states_both_depths(runs, tmp_path):
    """The report's JSON and HTML name the range, where reach and resolution are judged (schema-valid JSON)."""
    import jsonschema

    survey = runs["range"][2]
    proc = subprocess.run([sys.executable, "-m", "subsurf", "report", str(survey), "--out", str(tmp_path / "r.html"),
                           "--no-maps", "--json", "--quiet"], capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stderr
    data = json.loads(proc.stdout)
    jsonschema.validate(data, json.loads((SCHEMAS / "report.schema.json").read_text()))
    assert (data["target"]["depth_top_m"], data["target"]["depth_bottom_m"]) == (0.5, 1.5)
    html = (tmp_path / "r.html").read_text()
    assert "0.50–1.50 m" in html and "blind zone and resolution at the shallowest (0.50 m)" in html
    assert "vertical resolution at 0.50 m" in html
