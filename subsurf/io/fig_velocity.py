"""Figure of velocity fits (``subsurf velocity --plot``): picks, fitted curve and residuals.

Drawn in the subsurf style (:mod:`subsurf.io.figstyle`: Agg canvas, no pyplot, matplotlib
imported only when a figure is made).
"""

from __future__ import annotations

from pathlib import Path

from .figstyle import PALETTE, SIZES, new_figure, png_bytes, style_axes, styled

__all__ = ["velocity_fit_figure"]

_PICK_COLOUR = PALETTE["accent"]
_CURVE_COLOUR = PALETTE["second"]
_DOWN_COLOUR = PALETTE["third"]


@styled
def velocity_fit_figure(panels: list[dict], path, *, title: str = "") -> Path:
    """Write a PNG: for each fit, picks with the fitted curve (time downward) above
    their residuals.

    Parameters
    ----------
    panels : list of dict
        One per fit, with keys ``x`` (m), ``t_ns`` (picks), ``curve_x`` (m),
        ``curve_t_ns``, ``residual_ns``, ``weight`` (robust weights, or all ones),
        ``label`` (legend text), ``xlabel``.
    path : path-like
        PNG file to write (the caller handles atomic writing).
    """
    import numpy as np

    n = len(panels)
    fig = new_figure(4.6 * n, 6.0, layout="tight")
    axes = fig.subplots(2, n, squeeze=False, gridspec_kw={"height_ratios": [3, 1.3]}, sharex="col")
    for k, p in enumerate(panels):
        top, bot = axes[0, k], axes[1, k]
        w = np.asarray(p["weight"], dtype=float)
        down = w < 1.0
        top.plot(p["curve_x"], p["curve_t_ns"], color=_CURVE_COLOUR, lw=1.6, label="fitted curve")
        top.plot(np.asarray(p["x"])[~down], np.asarray(p["t_ns"])[~down], "o", ms=4, color=_PICK_COLOUR,
                 label="picks")
        if np.any(down):
            top.plot(np.asarray(p["x"])[down], np.asarray(p["t_ns"])[down], "s", ms=5, mfc="none",
                     color=_DOWN_COLOUR, label="down-weighted picks")
        top.invert_yaxis()
        top.set_ylabel("two-way time (ns)")
        top.set_title(p["label"], fontsize=SIZES["title"])
        style_axes(top, minor_grid=False)
        top.legend(fontsize=SIZES["legend"], loc="lower center")
        bot.axhline(0.0, color=PALETTE["muted"], lw=0.8)
        bot.plot(np.asarray(p["x"])[~down], np.asarray(p["residual_ns"])[~down], "o", ms=3.5, color=_PICK_COLOUR)
        if np.any(down):
            bot.plot(np.asarray(p["x"])[down], np.asarray(p["residual_ns"])[down], "s", ms=4.5, mfc="none",
                     color=_DOWN_COLOUR)
        bot.set_ylabel("residual (ns)")
        bot.set_xlabel(p.get("xlabel", "distance along line (m)"))
        style_axes(bot, minor_grid=False)
    if title:
        fig.suptitle(title, fontsize=SIZES["suptitle"])
    Path(path).write_bytes(png_bytes(fig))
    return Path(path)
