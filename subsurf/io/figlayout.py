"""A layout for grids of map panels, decided from one measurement of their decorations.

matplotlib's constrained layout places panels from the extents of their titles, tick labels
and axis labels, but on equal-aspect map panels it does not settle in one run: the aspect
shrinks each panel inside its cell after the layout has measured it, so the layout is run
again until the panels stop moving (three to four runs of two passes each on our map
figures, every pass re-measuring every tick label: 60 % of the time to render a map PNG).

The map figures are regular: a grid of panels sharing their axes (so every panel has the
same data aspect and the same tick labels), each perhaps with a colour bar below it, a
title over the whole figure, a legend and a caption below.  On such a figure what each
panel's text needs around the panel hardly depends on where the panel is or how large it is
(the one dependence: an end tick label overhangs the frame by an amount that scales with the
panel's width, ~1 px between the first measurement and the final size on the example), so
:class:`PanelGridLayout` measures it once and solves the rest by arithmetic:

1. each panel's decoration margins (title, tick labels, axis labels; and its colour bar
   with that bar's own labels) are measured once, at the panel's first position;
2. the figure's title is put at the top, its caption (``supxlabel``) at the bottom and
   the legend above the caption, each measured once;
3. every column gets the widest left and right margins of its panels and every row the
   tallest top and bottom margins; what remains is split equally into cells, and each
   panel gets the largest box of its data aspect inside its cell (centred), so drawing
   changes nothing the layout decided.

The result is checked against matplotlib's constrained layout run to convergence
(tests/io/test_figlayout.py): no two elements overlap, nothing leaves the figure, and the
panels are as large as constrained layout's.
"""

from __future__ import annotations

from matplotlib.layout_engine import LayoutEngine

__all__ = ["PanelGridLayout"]

#: Gap (inches) between the figure's edge and what is drawn, and between neighbours (panels with their
#: decorations, the title, the legend, the caption): matplotlib's constrained-layout pad of 3 pt around every
#: element (rcParams ``figure.constrained_layout.h_pad``/``w_pad``), so 3 pt at the edges and 6 pt between.
EDGE_IN = 3 / 72
GAP_IN = 6 / 72
#: Gap (inches) between a panel's own decorations and the colour bar below it.
BAR_GAP_IN = 4 / 72


class PanelGridLayout(LayoutEngine):
    """Layout engine for a grid of map panels (see the module notes).

    Panels are the figure's visible axes created on a grid (``fig.subplots``); colour bars
    made with ``fig.colorbar(mappable, ax=panel)`` must be registered with
    :meth:`add_colorbar` (location "bottom" only).  ``execute`` is idempotent: it measures
    the decorations anew each time it is run, so a figure changed after a first layout
    (e.g. a caption added) is laid out again correctly.
    """

    _adjust_compatible = False
    _colorbar_gridspec = False  # colour bars get their own axes (colorbar.make_axes); placed by execute

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self._bars: dict = {}  # panel axes -> (colour-bar axes, shrink)

    def add_colorbar(self, panel, bar, *, shrink: float = 1.0) -> None:
        """Register ``bar`` (a Colorbar below ``panel``) so the layout places it under its panel."""
        self._bars[panel] = (bar.ax, float(shrink))

    def execute(self, fig) -> None:
        renderer = fig.canvas.get_renderer()
        dpi = fig.dpi
        width_in, height_in = fig.get_size_inches()
        bar_axes = {cax for cax, _ in self._bars.values()}
        panels = [ax for ax in fig.axes if ax.get_visible() and ax not in bar_axes and ax.get_subplotspec()]
        if not panels:
            return

        def box_in(bbox):  # display pixels -> inches (x0, y0, x1, y1)
            return bbox.x0 / dpi, bbox.y0 / dpi, bbox.x1 / dpi, bbox.y1 / dpi

        # 1. decoration margins of each panel, and what its colour bar takes below it, measured once
        margins, bars = {}, {}
        for ax in panels:
            ax.apply_aspect()
            px0, py0, px1, py1 = box_in(ax.get_window_extent(renderer))
            tx0, ty0, tx1, ty1 = box_in(ax.get_tightbbox(renderer, for_layout_only=True))
            margins[ax] = (max(px0 - tx0, 0.0), max(tx1 - px1, 0.0), max(py0 - ty0, 0.0), max(ty1 - py1, 0.0))
            if ax in self._bars:
                cax, shrink = self._bars[ax]
                cax.apply_aspect()  # the bar's box of its own aspect, inside the room colorbar.make_axes gave it
                cx0, cy0, cx1, cy1 = box_in(cax.get_window_extent(renderer))
                dx0, dy0, dx1, dy1 = box_in(cax.get_tightbbox(renderer, for_layout_only=True))
                # gap + labels above and below the bar (fixed) and the bar itself (shrink x width x its box aspect)
                labels = max(cy0 - dy0, 0.0) + max(dy1 - cy1, 0.0)
                bars[ax] = (cax, shrink * (cax.get_box_aspect() or 1.0 / 30.0), BAR_GAP_IN + labels)

        # 2. figure title at the top; caption at the bottom, the legends above it
        top_in = EDGE_IN
        title = getattr(fig, "_suptitle", None)
        if title is not None and title.get_visible() and title.get_text():
            title.set_y(1.0 - EDGE_IN / height_in)
            title.set_verticalalignment("top")
            tb = box_in(title.get_window_extent(renderer))
            top_in = EDGE_IN + (tb[3] - tb[1]) + GAP_IN
        bottom_in = EDGE_IN
        caption = getattr(fig, "_supxlabel", None)
        if caption is not None and caption.get_visible() and caption.get_text():
            caption.set_y(EDGE_IN / height_in)
            caption.set_verticalalignment("bottom")
            cb = box_in(caption.get_window_extent(renderer))
            bottom_in = EDGE_IN + (cb[3] - cb[1]) + GAP_IN
        for legend in fig.legends:
            legend.set_bbox_to_anchor((0.5, bottom_in / height_in), transform=fig.transFigure)
            legend.set_loc("lower center")
            legend.borderaxespad = 0.0
            lb = box_in(legend.get_window_extent(renderer))
            bottom_in = lb[3] + GAP_IN

        # 3. columns and rows: widest margins, equal cells, the largest box of each panel's aspect in its cell
        where = {ax: (ax.get_subplotspec().rowspan.start, ax.get_subplotspec().colspan.start) for ax in panels}
        nrows = max(r for r, _ in where.values()) + 1
        ncols = max(c for _, c in where.values()) + 1
        aspects = {ax: _box_aspect(ax) for ax in panels}

        def cells(panel_w):
            """Cell width and height, and the margins of columns and rows, for panels ``panel_w`` inches wide."""
            left, right, below, above = [0.0] * ncols, [0.0] * ncols, [0.0] * nrows, [0.0] * nrows
            for ax, (r, c) in where.items():
                m = margins[ax]
                bar = bars[ax][2] + bars[ax][1] * panel_w if ax in bars else 0.0
                left[c], right[c] = max(left[c], m[0]), max(right[c], m[1])
                below[r], above[r] = max(below[r], m[2] + bar), max(above[r], m[3])
            cw = (width_in - 2 * EDGE_IN - sum(left) - sum(right) - (ncols - 1) * GAP_IN) / ncols
            ch = (height_in - top_in - bottom_in - sum(below) - sum(above) - (nrows - 1) * GAP_IN) / nrows
            return cw, ch, left, right, below, above

        def panel_size(ax, cw, ch):
            a = aspects[ax]
            if a is None:
                return cw, ch
            w = min(cw, ch / a)
            return w, w * a

        # a colour bar's height follows its panel's width, which follows the rows' heights: a few rounds of
        # arithmetic settle it (the bar is ~1/30 of the width; the second round changes it by under 0.001 in)
        width = max((ax.get_window_extent(renderer).width / dpi for ax in panels), default=1.0)
        for _ in range(4):
            cell_w, cell_h, left, right, below, above = cells(width)
            if cell_w <= 0 or cell_h <= 0:  # more text than figure: matplotlib's own layout does what it can
                from matplotlib.layout_engine import ConstrainedLayoutEngine

                ConstrainedLayoutEngine().execute(fig)
                return
            width = max(panel_size(ax, cell_w, cell_h)[0] for ax in panels)
        x0 = [EDGE_IN + sum(left[:c + 1]) + sum(right[:c]) + c * (cell_w + GAP_IN) for c in range(ncols)]
        y0 = [height_in - top_in - sum(above[:r + 1]) - sum(below[:r]) - r * GAP_IN - (r + 1) * cell_h
              for r in range(nrows)]
        for ax, (r, c) in where.items():
            w, h = panel_size(ax, cell_w, cell_h)
            bx, by = x0[c] + (cell_w - w) / 2.0, y0[r] + (cell_h - h) / 2.0
            ax.set_position([bx / width_in, by / height_in, w / width_in, h / height_in])
            if ax in bars:
                cax, per_width, _ = bars[ax]
                bw = self._bars[ax][1] * w
                bh = per_width * w
                top = by - margins[ax][2] - BAR_GAP_IN
                cax.set_position([(bx + (w - bw) / 2.0) / width_in, (top - bh) / height_in,
                                  bw / width_in, bh / height_in])


def _box_aspect(ax):
    """Height/width of the box an equal-aspect (or fixed box-aspect) panel keeps; None if it fills its cell."""
    if ax.get_box_aspect() is not None:
        return float(ax.get_box_aspect())
    if ax.get_aspect() == "auto" or ax.get_adjustable() != "box":
        return None
    x0, x1 = ax.get_xlim()
    y0, y1 = ax.get_ylim()
    return float(ax.get_aspect()) * abs(y1 - y0) / abs(x1 - x0)
