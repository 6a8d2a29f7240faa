"""Every figure subsurf draws reads cleanly: no text cut at the canvas edge, no text on text, no curve through a label.

The figures are the three maps of ``subsurf map`` (the bundled example survey on 6 m cells)
and the four charts of the planning report, drawn exactly as the commands draw them; the
checks (``figure_layout.py``) ask matplotlib where it put each text
(``Text.get_window_extent``) and each line, so they judge the drawn figure, not the code.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from example_site import coarse_copy
from figure_layout import layout_problems

EXAMPLE = Path(__file__).resolve().parents[2] / "surveys" / "example-site"


@pytest.fixture(scope="module")
def survey_path(tmp_path_factory):
    return coarse_copy(tmp_path_factory.mktemp("layout"))


@pytest.fixture(scope="module")
def map_figures(survey_path):
    from subsurf.io.map_figures import figures as _figures
    from subsurf.site.maps import compute_maps
    from subsurf.site.survey import load_survey

    maps = compute_maps(load_survey(survey_path))
    return {name: make() for name, make in _figures(maps).items()}


@pytest.fixture(scope="module")
def report_figures(survey_path, tmp_path_factory):
    """The report's charts, caught as figures on their way to PNG (drawn once, as saved)."""
    from subsurf.io import fig_report
    from subsurf.io.report.build import make_report

    caught = []
    real = fig_report.figure_png

    def catch(fig):
        caught.append(fig)
        return real(fig)

    mp = pytest.MonkeyPatch()
    mp.setattr(fig_report, "figure_png", catch)
    try:
        make_report(survey_path, tmp_path_factory.mktemp("report") / "report.html", maps=False, quiet=True)
    finally:
        mp.undo()
    return caught


def test_map_figures_layout(map_figures):
    """Each map figure (depth per antenna for every scenario, scenarios, soil inputs): every text inside the
    canvas, no two texts overlapping, no line through a label."""
    assert any(k.startswith("png_antennas") for k in map_figures) and "png_scenarios" in map_figures
    problems = {name: layout_problems(fig) for name, fig in map_figures.items()}
    assert {k: p for k, p in problems.items() if p} == {}


def test_single_scenario_map_figures_layout(tmp_path):
    """A one-scenario, three-antenna survey (narrow scenario figure, long class legend) lays out cleanly too."""
    from report_support import write_test_survey

    from subsurf.io.map_figures import figures as _figures
    from subsurf.site.maps import compute_maps
    from subsurf.site.survey import load_survey

    maps = compute_maps(load_survey(write_test_survey(tmp_path)))
    problems = {name: layout_problems(make()) for name, make in _figures(maps).items()}
    assert {k: p for k, p in problems.items() if p} == {}


def test_report_figures_layout(report_figures):
    """Each chart of the report: every text inside the canvas, no two texts overlapping, no curve through a label."""
    assert len(report_figures) >= 4  # site map, ground properties, depth against frequency, time to depth
    problems = {i: layout_problems(fig, drawn=True) for i, fig in enumerate(report_figures)}
    assert {i: p for i, p in problems.items() if p} == {}


def test_depth_chart_labels_beside_the_curves(report_figures):
    """The antenna labels of the depth-against-frequency chart sit clear of every curve, not only boxed over one."""
    from figure_layout import lines_through_labels

    chart = next(f for f in report_figures if f.axes[0].get_xlabel().startswith("antenna centre frequency"))
    assert lines_through_labels(chart, boxed_ok=False) == []


def test_checks_catch_what_they_claim():
    """The checks flag a title cut at the edge, two titles on each other and a line through an annotation."""
    from subsurf.io.figstyle import new_figure

    fig = new_figure(3.0, 2.0, layout=None)
    ax1, ax2 = fig.subplots(1, 2)
    ax1.set_title("a rather long title that runs on")
    ax2.set_title("and another one")
    ax1.plot([0, 1], [0, 1], label="curve")
    ax1.annotate("on the line", (0.5, 0.5), ha="center", va="center")
    fig.text(0.98, 0.5, "cut at the right edge")
    problems = layout_problems(fig)
    assert any("overlaps" in p for p in problems)
    assert any("outside the" in p for p in problems)
    assert any("crossed by" in p for p in problems)

    clean = new_figure(4.0, 3.0)
    ax = clean.add_subplot()
    ax.plot([0, 1], [0, 1])
    ax.annotate("clear of it", (0.8, 0.1), ha="center")
    ax.set_title("short")
    assert layout_problems(clean) == []
