"""Matplotlib figures (Agg backend; matplotlib is imported inside each function so that
importing subsurf stays light).  Each block below belongs to one job."""

from __future__ import annotations

from pathlib import Path

__all__ = ["velocity_fit_figure"]


def _pyplot():
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    return plt


# ======================================================================================
# Velocity fits (hyperbola and CMP picks): picks, fitted curve and residuals
# ======================================================================================

_PICK_COLOUR = "#1b4f72"
_CURVE_COLOUR = "#c0392b"
_DOWN_COLOUR = "#e67e22"


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

    plt = _pyplot()
    n = len(panels)
    fig, axes = plt.subplots(2, n, figsize=(4.6 * n, 6.0), squeeze=False,
                             gridspec_kw={"height_ratios": [3, 1.3]}, sharex="col")
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
        top.set_title(p["label"], fontsize=9)
        top.grid(alpha=0.3)
        top.legend(fontsize=7, loc="lower center")
        bot.axhline(0.0, color="0.4", lw=0.8)
        bot.plot(np.asarray(p["x"])[~down], np.asarray(p["residual_ns"])[~down], "o", ms=3.5, color=_PICK_COLOUR)
        if np.any(down):
            bot.plot(np.asarray(p["x"])[down], np.asarray(p["residual_ns"])[down], "s", ms=4.5, mfc="none",
                     color=_DOWN_COLOUR)
        bot.set_ylabel("residual (ns)")
        bot.set_xlabel(p.get("xlabel", "distance along line (m)"))
        bot.grid(alpha=0.3)
    if title:
        fig.suptitle(title, fontsize=10)
    fig.tight_layout()
    fig.savefig(path, dpi=120, format="png")
    plt.close(fig)
    return Path(path)
