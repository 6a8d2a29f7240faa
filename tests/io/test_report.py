"""The planning report: site summary, depth chart, self-contained HTML and the command."""

from __future__ import annotations

import base64
import csv
import json
import re
import subprocess
import sys

import numpy as np
import pytest
from report_support import write_test_survey


@pytest.fixture(scope="module")
def survey_path(tmp_path_factory):
    return write_test_survey(tmp_path_factory.mktemp("survey"))


@pytest.fixture(scope="module")
def data(survey_path):
    from subsurf.io.report import collect

    return collect(survey_path)


@pytest.fixture(scope="module")
def page(data):
    from subsurf.io.report import render_html

    return render_html(data)


def test_site_soil_takes_sample_median(survey_path, data):
    """The site-wide moisture is the median of the sample file, read here with the csv module."""
    with open(survey_path.parent / "samples.csv", newline="") as fh:
        values = [float(r["moisture [%]"]) / 100 for r in csv.DictReader(fh)]
    assert data["site_soil"].mapping["moisture"] == pytest.approx(float(np.median(values)), rel=1e-12)


def test_site_soil_spread_combines_site_and_measurement(survey_path, data):
    """Moisture spread = sample standard deviation ⊕ stated measurement sd (quadrature)."""
    with open(survey_path.parent / "samples.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    vals = np.array([float(r["moisture [%]"]) for r in rows]) / 100
    meas = max(float(r["moisture_sd [%]"]) for r in rows) / 100
    expected = np.sqrt(np.var(vals, ddof=1) + meas**2)
    assert data["site_soil"].sd["moisture"] == pytest.approx(expected, rel=1e-12)


def test_site_soil_falls_back_to_defaults(data):
    """Pore-water EC, given only as a survey default, comes through in S/m with its source named."""
    fact = next(f for f in data["site_soil"].facts if f["quantity"] == "pore_water_ec")
    assert fact["value"] == pytest.approx(0.040)  # 40 mS/m in the invented survey
    assert fact["source"] == "survey default"


def test_depth_chart_central_curve_is_closed_form(data):
    """Central depth = √((v·t/2)² − (x/2)²) with v = ω/β of the site soil (scikit-rf-checked propagation)."""
    from subsurf.waves.propagation import wave_properties

    c = data["depth_chart"]
    soil = data["site_soil"].soil
    eps, sig = soil.electrical(c["freq_hz"])
    v = float(np.asarray(wave_properties(eps, sig, c["freq_hz"]).velocity))
    t = c["twt_s"]
    expected = np.sqrt(np.maximum((v * t / 2) ** 2 - (c["offset_m"] / 2) ** 2, 0.0))
    assert c["velocity"] == pytest.approx(v, rel=1e-12)
    np.testing.assert_allclose(c["depth_m"], expected, rtol=1e-10, atol=1e-12)


def test_depth_band_brackets_central_depth(data):
    """The 5–95 % band contains the central depth everywhere."""
    c = data["depth_chart"]
    assert np.all(c["depth_p05_m"] <= c["depth_m"] + 1e-12)
    assert np.all(c["depth_p95_m"] >= c["depth_m"] - 1e-12)
    assert c["depth_p95_m"][-1] > c["depth_p05_m"][-1]


def test_depth_band_matches_velocity_band_at_late_time(data):
    """Where depth ≫ separation, d ≈ v·t/2, so the band's relative width is the velocity band's.

    Tolerance 5 %: the separation term (x/2)² changes the ratio by about (x/2d)² (≈ 1 % here).
    """
    c = data["depth_chart"]
    rel_depth = (c["depth_p95_m"][-1] - c["depth_p05_m"][-1]) / c["depth_m"][-1]
    rel_v = (c["velocity_p95"] - c["velocity_p05"]) / c["velocity"]
    assert rel_depth == pytest.approx(rel_v, rel=0.05)


def test_velocity_draws_fall_with_moisture(data):
    """Physical invariant: across Monte Carlo draws, wetter soil is slower (negative rank correlation)."""
    from scipy import stats

    from subsurf.io.report.content import velocity_draws

    soil = data["site_soil"].soil
    m, hi = float(soil.moisture), 0.995 * float(soil.porosity_value)
    # the same seed inside velocity_draws draws moisture first, from the normal truncated to
    # [0, 0.995 porosity]; scipy.stats.truncnorm with that generator gives the same draws
    rng_moist = stats.truncnorm.rvs(-m / 0.03, (hi - m) / 0.03, loc=m, scale=0.03, size=300,
                                    random_state=np.random.default_rng(11))
    _, v, varied = velocity_draws(soil, {"moisture": 0.03}, 250e6, draws=300, seed=11)
    assert varied == ["moisture"]
    rho = stats.spearmanr(rng_moist, v).statistic
    assert rho < -0.99


def test_velocity_draws_without_spread_are_nominal(data):
    """With no input spread every draw equals the nominal velocity."""
    from subsurf.io.report.content import velocity_draws

    v0, v, varied = velocity_draws(data["site_soil"].soil, {}, 250e6, draws=50, seed=1)
    assert varied == []
    np.testing.assert_array_equal(v, np.full(50, v0))


def test_html_has_no_external_resources(page):
    """No scripts, stylesheets, fonts or URLs to fetch: the page works offline."""
    assert "<script" not in page.lower()
    assert "<link" not in page.lower()
    assert not re.search(r"""(src|href)\s*=\s*["'](https?:)?//""", page)
    assert "@import" not in page and "url(" not in page


def test_html_images_are_embedded_pngs(page):
    """Every <img> is a base64 PNG data URI that decodes to a PNG."""
    srcs = re.findall(r'<img [^>]*src="([^"]+)"', page)
    assert len(srcs) >= 4
    for src in srcs:
        assert src.startswith("data:image/png;base64,")
        assert base64.b64decode(src.split(",", 1)[1])[:8] == b"\x89PNG\r\n\x1a\n"


def test_html_is_printable(page):
    """A print stylesheet is present and keeps figures and tables whole."""
    assert "@media print" in page
    assert "break-inside: avoid" in page


def _print_rules(page) -> dict[str, str]:
    """Selector -> declarations of the @media print block (the page's one inline stylesheet)."""
    start = page.index("@media print")
    body, depth = [], 0
    for ch in page[page.index("{", start):]:
        depth += {"{": 1, "}": -1}.get(ch, 0)
        body.append(ch)
        if depth == 0:
            break
    inner = re.sub(r"/\*.*?\*/", "", "".join(body)[1:-1], flags=re.S)
    rules = {}
    for sel, decl in re.findall(r"([^{}]+)\{([^{}]*)\}", inner):
        for one in sel.split(","):
            rules[one.strip()] = rules.get(one.strip(), "") + decl
    return rules


def test_printed_headings_stay_with_their_content(page):
    """Printed (A4), a heading is never left alone at a page bottom: no break after it or before its next block.

    CSS Fragmentation Level 3 (W3C), 'break-after: avoid' / 'break-before: avoid', with the CSS 2.1
    'page-break-*' spellings for older engines; every heading is followed by content in its section.
    """
    rules = _print_rules(page)
    for h in ("h2", "h3"):
        assert "break-after: avoid" in rules[h] and "page-break-after: avoid" in rules[h]
        assert "break-before: avoid" in rules[f"{h} + *"]
    assert "break-inside: avoid" in rules["figure"]
    assert "max-height" in rules["figure img"]  # a figure fits one page, so it can be kept whole
    assert not re.search(r"</h[23]>\s*</section>", page)


def test_html_carries_the_cautions(page):
    """The safety section names every caution the issue asks for."""
    for phrase in ("not locations of buried objects", "verify buried services", "licens",
                   "Defer to local codes and licensed"):
        assert phrase in page


def test_html_lists_every_antenna_and_the_target_depth(data, page):
    """The ranking table names each antenna with its maximum depth; the target depth is shown."""
    for r in data["ranking"]:
        assert r["name"] in page
        assert f"{r['max_depth_m']:.3g}" in page
    assert f"{data['target']['depth_m']:.2f} m" in page


def test_tables_carry_caution(data):
    """The CSV tables written beside a report carry the safety caution."""
    from subsurf.io.outputs import CAUTION
    from subsurf.io.report import report_tables

    for name, text in report_tables(data).items():
        rows = list(csv.DictReader(text.splitlines()))
        assert rows, name
        assert rows[0]["caution"] == CAUTION


def test_write_report_refuses_existing_file(survey_path, tmp_path):
    """An existing report is left untouched without force (OutputExistsError)."""
    from subsurf.errors import OutputExistsError
    from subsurf.io.report import write_report

    out = tmp_path / "r.html"
    out.write_text("keep me")
    with pytest.raises(OutputExistsError):
        write_report(survey_path, out)
    assert out.read_text() == "keep me"


def _run(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "subsurf", *args], capture_output=True, text=True, cwd=cwd,
                          timeout=300)


def test_cli_report_json_and_exit_codes(survey_path, tmp_path):
    """`subsurf report --no-maps --json` writes the file and JSON; a second run exits 3."""
    from subsurf.io.outputs import CAUTION

    out = tmp_path / "plan.html"
    res = _run("report", str(survey_path), "--out", str(out), "--no-maps", "--json")
    assert res.returncode == 0, res.stderr
    payload = json.loads(res.stdout)
    assert payload["report"] == str(out)
    assert payload["caution"] == CAUTION
    assert {r["antenna"] for r in payload["ranking"]} == {"lowband-100", "midband-250", "midband-500"}
    assert out.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    again = _run("report", str(survey_path), "--out", str(out), "--no-maps")
    assert again.returncode == 3
    assert again.stderr.count("\n") == 1 and "--force" in again.stderr


def test_cli_report_missing_survey_is_one_line(tmp_path):
    """A missing survey file is one error line and exit code 1."""
    res = _run("report", str(tmp_path / "nope.toml"), "--out", str(tmp_path / "x.html"), "--no-maps")
    assert res.returncode == 1
    assert res.stderr.strip().count("\n") == 0
    assert "not found" in res.stderr


def test_survey_text_is_escaped(tmp_path):
    """Markup typed into a survey file is shown as text, never run (jinja2 autoescape, HTML 5 §13.1.2)."""
    from subsurf.io.report import collect, render_html

    path = write_test_survey(tmp_path)
    text = path.read_text(encoding="utf-8").replace(
        'description = "An invented site', 'description = "<script>alert(1)</script> & <b>bold</b> An invented site')
    path.write_text(text, encoding="utf-8")
    page = render_html(collect(path))
    assert "<script" not in page and "<b>bold" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt; &amp; &lt;b&gt;bold&lt;/b&gt;" in page


def test_templates_ship_with_the_package():
    """The report templates are package data (found through importlib.resources, as an installed wheel would)."""
    from importlib.resources import files

    root = files("subsurf.io.report") / "templates"
    names = {p.name for p in root.iterdir()} | {p.name for p in (root / "sections").iterdir()}
    for name in ("report.html.j2", "macros.html.j2", "report.css", "summary.html.j2", "safety.html.j2"):
        assert name in names, name


def test_settings_show_survey_time_for_2d_and_both_3d_spacings(data, page):
    """The report's acquisition section: lines, km and hours for 2D lines, 3D common practice and the λ/4 limit."""
    import math

    survey = data["acquisition"]["survey"]
    assert survey is not None  # the test survey's pipe is within reach of the chart antenna
    grids = {g["grid"]: g for g in survey["grids"]}
    assert set(grids) == {"2d_detection", "3d_practice", "3d_limit"}
    assert all(g["planned"] for g in grids.values())
    width = survey["area_m2"] / survey["line_length_m"]
    for g in grids.values():  # hand count: ⌈W/s⌉ + 1 parallel lines (both edges covered)
        assert g["lines"] == math.ceil(width / g["line_spacing_m"] - 1e-9) + 1
        assert g["label"] in page
    assert grids["3d_limit"]["line_spacing_m"] <= grids["3d_practice"]["line_spacing_m"]
    assert "Survey time over the site" in page
    assert any("alias" in n for n in data["acquisition"]["notes"]) == (
        grids["3d_practice"]["line_spacing_m"] > grids["3d_limit"]["line_spacing_m"])
