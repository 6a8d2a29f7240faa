"""The one-measurement panel layout of the map figures, against matplotlib's constrained layout.

matplotlib's constrained layout (run until the panels stop moving) is the reference: the
map figures laid out by :class:`subsurf.io.figlayout.PanelGridLayout` must give panels at
least as large as it does, keep every panel's decorations (title, tick labels, axis labels,
colour bar) clear of every other panel's and of the figure's title, legend and caption,
stay inside the canvas, and be exactly what is drawn (drawing moves nothing).
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from example_site import coarse_copy
from figure_layout import layout_problems


@pytest.fixture(scope="module")
def maps(tmp_path_factory):
    from subsurf.site.maps import compute_maps
    from subsurf.site.survey import load_survey

    return compute_maps(load_survey(coarse_copy(tmp_path_factory.mktemp("figlayout"))))


def _figures(maps):
    from subsurf.io.map_figures import figures

    return {name: make() for name, make in figures(maps).items()}


def _boxes(fig, renderer, engine):
    """Display boxes of everything laid out: each panel with its decorations (and its colour bar), the
    figure title, the caption and the legends."""
    bars = {cax for cax, _ in engine._bars.values()}
    out = []
    for ax in (ax for ax in fig.axes if ax.get_visible() and ax not in bars):
        bb = ax.get_tightbbox(renderer, for_layout_only=True)
        if ax in engine._bars:
            from matplotlib.transforms import Bbox

            bb = Bbox.union([bb, engine._bars[ax][0].get_tightbbox(renderer, for_layout_only=True)])
        out.append((f"panel {ax.get_title()[:30]!r}", bb))
    for name in ("_suptitle", "_supxlabel"):
        t = getattr(fig, name, None)
        if t is not None and t.get_text():
            out.append((name, t.get_window_extent(renderer)))
    out += [(f"legend {i}", leg.get_window_extent(renderer)) for i, leg in enumerate(fig.legends)]
    return out


def _overlaps(a, b, tol=1.0):
    return min(a.x1, b.x1) - max(a.x0, b.x0) > tol and min(a.y1, b.y1) - max(a.y0, b.y0) > tol


def _constrained_positions(fig):
    """Panel boxes (figure fractions) that matplotlib's constrained layout gives ``fig``, run to convergence."""
    import matplotlib as mpl

    from subsurf.io.figstyle import rc

    with mpl.rc_context(rc()):
        fig.set_layout_engine("constrained")
        before = None
        for _ in range(12):
            fig.get_layout_engine().execute(fig)
            for ax in fig.axes:
                ax.apply_aspect()
            now = np.array([ax.get_position().bounds for ax in fig.axes])
            if before is not None and np.allclose(now, before, atol=1e-5):
                break
            before = now
    return now


def _laid_out(fig):
    """Lay ``fig`` out as saving it does (:func:`subsurf.io.figstyle._settle_layout`: one run of the engine)."""
    import matplotlib as mpl

    from subsurf.io.figstyle import _settle_layout, rc

    engine = fig.get_layout_engine()
    with mpl.rc_context(rc()):
        _settle_layout(fig)
        return fig.canvas.get_renderer(), np.array([ax.get_position().bounds for ax in fig.axes]), engine


def test_map_panels_as_large_as_constrained_layout_gives(maps):
    """Every panel of every map figure is as large as under matplotlib's constrained layout (the reference;
    its boxes equal-aspect like ours), within 3 % of its area: the only difference measured is the gap
    above a figure legend (6 pt here, 4.5 pt there; 1-2 px of a 200 px panel)."""
    mine = {name: _laid_out(fig)[1] for name, fig in _figures(maps).items()}
    for name, fig in _figures(maps).items():
        ref = _constrained_positions(fig)
        panels = [i for i, ax in enumerate(fig.axes) if ax.get_visible() and ax.get_label() != "<colorbar>"]
        area_mine = mine[name][panels, 2] * mine[name][panels, 3]
        area_ref = ref[panels, 2] * ref[panels, 3]
        assert np.all(area_mine >= 0.97 * area_ref), (name, area_mine / area_ref)


def test_map_figures_laid_out_without_overlap_inside_the_canvas(maps):
    """No panel's decorations touch another panel's, the figure title, the legend or the caption; all inside."""
    for name, fig in _figures(maps).items():
        renderer, _, engine = _laid_out(fig)
        boxes = _boxes(fig, renderer, engine)
        canvas = fig.bbox
        for label, bb in boxes:
            assert bb.x0 >= canvas.x0 - 1 and bb.y0 >= canvas.y0 - 1 and bb.x1 <= canvas.x1 + 1 \
                and bb.y1 <= canvas.y1 + 1, (name, label, bb, canvas)
        for (la, a), (lb, b) in itertools.combinations(boxes, 2):
            assert not _overlaps(a, b), (name, la, lb)


def test_drawing_moves_nothing_the_layout_decided(maps):
    """The positions found are the ones drawn: the equal-aspect panels already have their aspect's box, and
    saving runs no layout again."""
    import matplotlib as mpl

    from subsurf.io.figstyle import rc

    for name, fig in _figures(maps).items():
        _, decided, _ = _laid_out(fig)
        with mpl.rc_context(rc()):
            fig.canvas.draw()
        drawn = np.array([ax.get_position().bounds for ax in fig.axes])
        px = np.array([*fig.get_size_inches(), *fig.get_size_inches()]) * fig.dpi
        assert fig.get_layout_engine() is None and np.max(np.abs((drawn - decided) * px)) < 0.5, name


def test_caption_added_after_building_gets_its_room(maps):
    """A calibrated map's caption (added after the figure is built, as ``subsurf map --calibration`` does) sits
    below the legend, clear of it, and every text still reads cleanly."""
    import textwrap

    from subsurf.io.figstyle import SIZES

    fig = _figures(maps)["png_scenarios"]
    fig.supxlabel(textwrap.fill("calibrated against a fictional CMP gather: velocity 0.101 m/ns, "
                                "attenuation 1.9 dB/m at 250 MHz; " * 3, width=150), fontsize=SIZES["note"])
    renderer, _, _ = _laid_out(fig)
    caption = fig._supxlabel.get_window_extent(renderer)
    legend = fig.legends[0].get_window_extent(renderer)
    assert caption.y1 <= legend.y0 + 1.0 and caption.y0 >= -1.0
    assert layout_problems(fig) == []


def test_more_text_than_figure_falls_back_to_constrained_layout():
    """A figure whose text leaves no room for panels is laid out by matplotlib's own engine, not refused."""
    from subsurf.io.figlayout import PanelGridLayout
    from subsurf.io.figstyle import new_figure

    fig = new_figure(2.0, 1.2, layout=PanelGridLayout())
    ax = fig.subplots(1, 1, squeeze=False)[0, 0]
    ax.set_aspect("equal")
    fig.suptitle("\n".join(["a very tall title"] * 12))
    with pytest.warns(UserWarning, match="constrained_layout not applied"):  # matplotlib says it cannot either
        fig.get_layout_engine().execute(fig)
    assert np.all(np.isfinite(ax.get_position().bounds))
