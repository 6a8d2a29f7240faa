"""Layout checks of a drawn matplotlib figure: text inside the canvas, no text on text, no curve through a label.

matplotlib knows where it drew every text: after a draw, ``Text.get_window_extent(renderer)``
is the text's box in display pixels (``fig.bbox`` is the canvas).  The checks use only that
and the display-space paths of the lines (``Artist.get_transform()``), so they see what a
reader sees, not what the code meant: a colour-bar label cut at the edge, two panel titles
running into each other, an annotation a curve passes through.  Only visible texts that
are drawn count; tick labels only for ticks inside the view limits (matplotlib draws no
others).  A text with its own background box (``bbox=``) may sit on a line: the box keeps
it readable.
"""

from __future__ import annotations

import itertools

#: pixels a text may overlap another or pass the canvas edge (anti-aliasing, rounding)
TOLERANCE_PX = 1.0


def _tick_label_ids(fig) -> tuple[set[int], set[int]]:
    """ids of all tick-label texts and of those matplotlib draws (tick inside the view interval)."""
    every, drawn = set(), set()
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            lo, hi = sorted(axis.get_view_interval())
            span = (hi - lo) or 1.0
            for tick in axis.get_major_ticks() + axis.get_minor_ticks():
                labels = (tick.label1, tick.label2)
                every |= {id(t) for t in labels}
                loc = tick.get_loc()
                if loc is not None and lo - 1e-9 * span <= loc <= hi + 1e-9 * span:
                    drawn |= {id(t) for t in labels if t.get_visible()}
    return every, drawn


def draw_as_saved(fig) -> None:
    """Draw ``fig`` once exactly as :func:`subsurf.io.figstyle.save_png` does (style, dpi, layout).

    Constrained layout runs again on every draw and need not land in the same place, so the
    checks measure the figure after this one draw, the state its PNG shows.
    """
    from subsurf.io.figstyle import png_bytes

    png_bytes(fig)


def drawn_texts(fig):
    """(text artist, window extent) of every non-empty text of the drawn figure."""
    from matplotlib.text import Text

    renderer = fig.canvas.get_renderer()
    every_tick, drawn_tick = _tick_label_ids(fig)
    out = []
    for t in fig.findobj(Text):
        if not t.get_text().strip() or not t.get_visible():
            continue
        if id(t) in every_tick and id(t) not in drawn_tick:
            continue
        if t.axes is not None and not t.axes.get_visible():
            continue
        ext = t.get_window_extent(renderer)
        if ext.width <= 0 or ext.height <= 0:
            continue
        out.append((t, ext))
    return out


def _name(t) -> str:
    return repr(t.get_text()[:70])


def texts_outside(fig) -> list[str]:
    """Texts whose box reaches past the canvas edge."""
    fb = fig.bbox
    bad = []
    for t, e in drawn_texts(fig):
        if (e.x0 < fb.x0 - TOLERANCE_PX or e.y0 < fb.y0 - TOLERANCE_PX or e.x1 > fb.x1 + TOLERANCE_PX
                or e.y1 > fb.y1 + TOLERANCE_PX):
            bad.append(f"{_name(t)} at x {e.x0:.0f}..{e.x1:.0f}, y {e.y0:.0f}..{e.y1:.0f} outside the "
                       f"{fb.width:.0f}×{fb.height:.0f} px figure")
    return bad


def _overlap(a, b) -> float:
    w = min(a.x1, b.x1) - max(a.x0, b.x0)
    h = min(a.y1, b.y1) - max(a.y0, b.y0)
    return min(w, h) if w > 0 and h > 0 else 0.0


def overlapping_texts(fig) -> list[str]:
    """Pairs of texts whose boxes overlap by more than the tolerance in both directions."""
    texts = drawn_texts(fig)
    bad = []
    for (t1, e1), (t2, e2) in itertools.combinations(texts, 2):
        if _overlap(e1, e2) > TOLERANCE_PX:
            bad.append(f"{_name(t1)} overlaps {_name(t2)}")
    return bad


def _line_paths(ax):
    """Display-space paths of the data lines, contour lines and outlined shapes drawn in ``ax``."""
    from matplotlib.colors import to_rgba
    from matplotlib.contour import ContourSet
    from matplotlib.lines import Line2D

    paths = [(p, p.get_transform().transform_path(p.get_path())) for p in ax.patches
             if p.get_visible() and p.get_linewidth() > 0 and to_rgba(p.get_edgecolor())[3] > 0]
    for art in ax.get_children():
        if not art.get_visible():
            continue
        if isinstance(art, Line2D) and len(art.get_xdata()) > 1 and art.get_linestyle() not in ("None", " ", ""):
            paths.append((art, art.get_transform().transform_path(art.get_path())))
        elif isinstance(art, ContourSet):
            tr = art.get_transform()
            paths.extend((art, tr.transform_path(p)) for p in art.get_paths() if len(p.vertices) > 1)
    return paths


def lines_through_labels(fig, *, boxed_ok: bool = True) -> list[str]:
    """Annotations and in-axes texts outside legends that a line crosses (a boxed text passes if ``boxed_ok``)."""
    from matplotlib.legend import Legend

    legend_texts = {id(t) for leg in fig.findobj(Legend) for t in leg.get_texts()}
    bad = []
    for t, e in drawn_texts(fig):
        ax = t.axes
        if ax is None or id(t) in legend_texts or (boxed_ok and t.get_bbox_patch() is not None):
            continue
        if t in (ax.title, ax._left_title, ax._right_title, ax.xaxis.label, ax.yaxis.label):
            continue
        if not ax.bbox.overlaps(e):  # tick labels, offsets and the like lie outside the axes
            continue
        shrunk = e.padded(-TOLERANCE_PX)
        for art, path in _line_paths(ax):
            if path.intersects_bbox(shrunk, filled=False):
                bad.append(f"{_name(t)} is crossed by {type(art).__name__} {art.get_label()!r}")
                break
    return bad


def layout_problems(fig, *, drawn: bool = False) -> list[str]:
    """Every layout problem the checks find in ``fig`` (empty when it reads cleanly); draws it unless ``drawn``."""
    if not drawn:
        draw_as_saved(fig)
    return texts_outside(fig) + overlapping_texts(fig) + lines_through_labels(fig)

