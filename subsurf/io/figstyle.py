"""The one figure style of subsurf: fonts, sizes, colours and the shared figure setup.

Every figure (velocity fits, feasibility maps, the report's charts) is drawn on a
``matplotlib.figure.Figure`` with the Agg canvas attached — never through pyplot's global
state — so drawing needs no display, is re-entrant, and does not change the backend of a
user's own session.  matplotlib is imported only when a figure is made, so importing
subsurf stays light.

The style is a set of rcParams (:func:`rc`) applied while a figure is built and while it
is saved (:func:`styled`, :func:`save_png`, :func:`png_bytes`): tick labels are created at
draw time, so both phases must see the same settings.  Fonts are DejaVu Sans, shipped
with matplotlib, so a figure looks the same on every machine.  Colours are our own plain
palette, chosen to stay distinguishable in greyscale print (figures also vary markers
and line styles).
"""

from __future__ import annotations

import functools
import io
import os
from pathlib import Path

__all__ = [
    "PALETTE",
    "SIZES",
    "DPI",
    "DEPTH_CMAP",
    "PROBABILITY_CMAP",
    "INPUT_CMAP",
    "rc",
    "styled",
    "new_figure",
    "style_axes",
    "preload",
    "png_bytes",
    "save_png",
]

#: Colours: ink, accent (teal), second (rust), third (ochre), muted grey, band fill, site fill.
PALETTE = {
    "ink": "#1d2733",
    "accent": "#0f6b66",
    "second": "#b4532a",
    "third": "#8a6d0b",
    "muted": "#7b8794",
    "band": "#a8d0cc",
    "site": "#e6efe9",
    "grid": "#d5dbe1",
    "grid_minor": "#eef1f4",
    "hatch": "#8a939c",  # mid grey: visible on the darkest and the palest map classes
}

#: Font sizes (points) by role.
SIZES = {"suptitle": 10, "title": 9, "label": 9, "tick": 8, "legend": 7, "note": 7, "map_label": 9, "map_tick": 8}

#: Resolution of every PNG (dots per inch).
DPI = 110

#: Colour maps: depth (sequential, colour-blind safe), probability (diverging at 0.5), soil inputs.
DEPTH_CMAP = "cividis"
PROBABILITY_CMAP = "RdYlBu"
INPUT_CMAP = "viridis"


def rc() -> dict:
    """The rcParams of the subsurf style."""
    from cycler import cycler

    p = PALETTE
    return {
        "font.family": "DejaVu Sans",
        "font.size": SIZES["label"],
        "axes.titlesize": SIZES["title"],
        "axes.labelsize": SIZES["label"],
        "axes.edgecolor": p["muted"],
        "axes.labelcolor": p["ink"],
        "axes.prop_cycle": cycler(color=[p["accent"], p["second"], p["third"], p["ink"], p["muted"]]),
        "text.color": p["ink"],
        "xtick.color": p["ink"],
        "ytick.color": p["ink"],
        "xtick.labelsize": SIZES["tick"],
        "ytick.labelsize": SIZES["tick"],
        "legend.fontsize": SIZES["legend"],
        "figure.titlesize": SIZES["suptitle"],
        "grid.color": p["grid"],
        "grid.linewidth": 0.7,
        "hatch.color": p["hatch"],
        "hatch.linewidth": 0.6,
        "figure.facecolor": "white",
        "savefig.facecolor": "white",
        "savefig.dpi": DPI,
    }


def styled(func):
    """Decorator: build the figure of ``func`` under the subsurf style."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        import matplotlib as mpl

        with mpl.rc_context(rc()):
            return func(*args, **kwargs)

    return wrapper


def new_figure(width_in: float, height_in: float, *, layout: str | None = "constrained"):
    """A Figure of the given size (inches) with the Agg canvas attached (no pyplot, no display)."""
    import matplotlib as mpl
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    with mpl.rc_context(rc()):
        fig = Figure(figsize=(width_in, height_in), dpi=DPI, layout=layout)
        FigureCanvasAgg(fig)
    return fig


def preload() -> None:
    """Import what drawing a map figure needs (a figure process does it while the maps are computed, :mod:`.png_split`)."""
    import importlib

    for name in ("matplotlib.figure", "matplotlib.backends.backend_agg", "matplotlib.colors", "matplotlib.contour",
                 "matplotlib.patches", "matplotlib.patheffects", "matplotlib.textpath", "matplotlib.ticker",
                 "scipy.ndimage", "subsurf.io.figlayout", "subsurf.io.fig_maps"):
        importlib.import_module(name)


def style_axes(ax, *, minor_grid: bool = True) -> None:
    """Light grid, no top/right spines, muted axis lines, ink labels."""
    ax.grid(True, which="major", color=PALETTE["grid"], linewidth=0.7)
    if minor_grid:
        ax.grid(True, which="minor", color=PALETTE["grid_minor"], linewidth=0.5)
    ax.tick_params(colors=PALETTE["ink"], labelsize=SIZES["tick"])
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    for side in ("left", "bottom"):
        ax.spines[side].set_color(PALETTE["muted"])
    for label in (ax.xaxis.label, ax.yaxis.label):
        label.set_color(PALETTE["ink"])
        label.set_size(SIZES["label"])


def _settle_layout(fig, *, passes: int = 4, tol: float = 2e-3) -> None:
    """Decide ``fig``'s layout once, before the one draw that renders it.

    Constrained layout places titles, colour bars and legends from the extents of their text
    (measured with the canvas's renderer); equal-aspect map panels, shared axes and a legend
    outside the panels move one another, so the layout is run until the axes stop moving (at
    most ``passes`` runs of the layout alone: no artist is drawn) and then frozen, and the PNG
    is rendered by a single draw.  Before, each figure was drawn four to six times in full.
    The layout contracts by a factor of about 16 per run on the map figures (the axes moved 0.021,
    0.0013, 0.00008 of the figure on successive runs), so stopping once a run moves them by less than
    ``tol`` = 0.002 (2 pixels at 1000 pixels) leaves them about 0.1 pixel from where further runs go.
    """
    import matplotlib as mpl
    import numpy as np
    from matplotlib.layout_engine import PlaceHolderLayoutEngine

    from .figlayout import PanelGridLayout

    engine = fig.get_layout_engine()
    if engine is None or isinstance(engine, PlaceHolderLayoutEngine):
        return
    before = None
    for _ in range(1 if isinstance(engine, PanelGridLayout) else passes):  # decided in one run
        engine.execute(fig)
        now = np.array([ax.get_position().bounds for ax in fig.axes]) if fig.axes else np.zeros((0, 4))
        if before is not None and before.shape == now.shape and np.allclose(before, now, atol=tol):
            break
        before = now
    # the positions just found stay: no layout engine, so savefig neither runs the layout again nor makes the
    # extra draw it makes for one
    with mpl.rc_context({"figure.autolayout": False, "figure.constrained_layout.use": False}):
        fig.set_layout_engine(None)


def png_bytes(fig) -> bytes:
    """Render ``fig`` to PNG bytes under the subsurf style."""
    import matplotlib as mpl

    buf = io.BytesIO()
    with mpl.rc_context(rc()):
        _settle_layout(fig)
        fig.savefig(buf, format="png", dpi=DPI, facecolor="white")
    return buf.getvalue()


def save_png(fig, path: os.PathLike | str, *, force: bool = False) -> Path:
    """Write ``fig`` as a PNG to ``path`` atomically (temporary name, then rename)."""
    from .outputs import atomic_write_bytes

    return atomic_write_bytes(path, png_bytes(fig), force=force)
