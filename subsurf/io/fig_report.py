"""Figures of the planning report, returned as PNG bytes for embedding.

Each function takes plain numbers (already computed by the physics modules; nothing is
computed here but axis limits) in SI units and draws in the human units of the report
(MHz, m/ns, dB/m, ns, m).  Figures are drawn on ``matplotlib.figure.Figure`` with the
Agg canvas, never through pyplot's global state, so that report building is re-entrant
and needs no display; fonts, sizes and colours are the shared subsurf style
(:mod:`subsurf.io.figstyle`).
"""

from __future__ import annotations

import numpy as np

from .figstyle import PALETTE, SIZES, new_figure, styled
from .figstyle import png_bytes as figure_png
from .figstyle import style_axes as _style

__all__ = [
    "PALETTE",
    "figure_png",
    "site_map_png",
    "ground_properties_png",
    "max_depth_png",
    "time_depth_png",
]

_new_figure = new_figure

#: Background of a label that sits among curves or outlines: a line passing under it stays behind it.
_LABEL_BOX = {"boxstyle": "round,pad=0.2", "facecolor": "white", "edgecolor": "none", "alpha": 0.9}


def _mark_antennas(ax, antenna_freqs_hz):
    for f in antenna_freqs_hz or ():
        ax.axvline(f / 1e6, color=PALETTE["third"], linewidth=0.9, linestyle=":", zorder=1)


def _plain_log_ticks(axis, subs=(1.0, 2.0, 5.0)):
    from matplotlib.ticker import FuncFormatter, LogLocator

    axis.set_major_locator(LogLocator(base=10, subs=subs))
    axis.set_major_formatter(FuncFormatter(lambda v, _: f"{v:g}"))
    axis.set_minor_formatter(FuncFormatter(lambda v, _: ""))


@styled
def site_map_png(outline_rings, samples=(), *, crs_name: str = "", scale_m: float | None = None,
                 zones=()) -> bytes:
    """Outline of the site with the soil sample positions, in the grid CRS (metres).

    Parameters
    ----------
    outline_rings : sequence of (N, 2) arrays
        Exterior rings of the site polygon(s), easting/northing in metres.
    samples : sequence of (label, x_array, y_array)
        Sample sets to plot, one marker style each.
    crs_name : str
        Name of the projected CRS, shown on the axes.
    zones : sequence of (name, (N, 2) array)
        Soil zone outlines (optional).
    """
    fig = _new_figure(6.4, 4.6)
    ax = fig.add_subplot()
    rings = [np.asarray(r, dtype=float) for r in outline_rings]
    allx = np.concatenate([r[:, 0] for r in rings])
    ally = np.concatenate([r[:, 1] for r in rings])
    x0, y0 = float(np.floor(allx.min())), float(np.floor(ally.min()))
    for i, r in enumerate(rings):
        ax.fill(r[:, 0] - x0, r[:, 1] - y0, facecolor=PALETTE["site"], edgecolor=PALETTE["accent"],
                linewidth=1.6, label="site outline" if i == 0 else None)
    for j, (name, ring) in enumerate(zones):
        ring = np.asarray(ring, dtype=float)
        ax.plot(ring[:, 0] - x0, ring[:, 1] - y0, color=PALETTE["third"], linewidth=1.0,
                linestyle="--", label="soil zones" if j == 0 else None)
        c = ring[:-1].mean(axis=0) if len(ring) > 1 else ring[0]
        ax.annotate(name, (c[0] - x0, c[1] - y0), fontsize=SIZES["legend"], color=PALETTE["third"], ha="center",
                    bbox=_LABEL_BOX, zorder=6)
    markers = ["o", "s", "^", "D"]
    colours = [PALETTE["second"], PALETTE["ink"], PALETTE["third"], PALETTE["muted"]]
    for k, (label, sx, sy) in enumerate(samples):
        sx = np.asarray(sx, dtype=float)
        sy = np.asarray(sy, dtype=float)
        ax.scatter(sx - x0, sy - y0, marker=markers[k % 4], s=26, color=colours[k % 4],
                   edgecolor="white", linewidth=0.6, zorder=3, label=f"{label} ({sx.size})")
    ax.set_aspect("equal")
    ax.set_xlabel(f"easting − {x0:,.0f} m")
    ax.set_ylabel(f"northing − {y0:,.0f} m")
    if crs_name:
        ax.set_title(crs_name, fontsize=SIZES["tick"], color=PALETTE["muted"], loc="left")
    _style(ax)
    ax.legend(fontsize=SIZES["legend"], loc="best", frameon=True, framealpha=0.9)
    return figure_png(fig)


@styled
def ground_properties_png(freq_hz, eps_real, eps_imag, velocity_m_per_s, attenuation_db_per_m, *,
                          antenna_freqs_hz=(), eps_effective=None) -> bytes:
    """Four panels against frequency: ε', ε'' (and σ_eff/(ωε₀)), velocity and attenuation.

    Parameters
    ----------
    freq_hz : (n,) array
    eps_real, eps_imag : (n,) arrays
        Relative permittivity ε' and the dielectric loss ε''.
    velocity_m_per_s, attenuation_db_per_m : (n,) arrays
    antenna_freqs_hz : sequence of float
        Centre frequencies of the catalogue antennas, drawn as dotted guides.
    eps_effective : (n,) array, optional
        Effective loss σ_eff/(ωε₀) including DC conduction, drawn beside ε''.
    """
    f_mhz = np.asarray(freq_hz, dtype=float) / 1e6
    fig = _new_figure(7.2, 5.0)
    axes = fig.subplots(2, 2, sharex=True)
    panels = [
        (axes[0, 0], eps_real, "ε' (relative permittivity)", "linear", PALETTE["accent"]),
        (axes[0, 1], eps_imag, "ε'' (loss part)", "log", PALETTE["second"]),
        (axes[1, 0], np.asarray(velocity_m_per_s, dtype=float) * 1e-9, "velocity (m/ns)", "linear",
         PALETTE["accent"]),
        (axes[1, 1], attenuation_db_per_m, "attenuation (dB/m, one way)", "log", PALETTE["second"]),
    ]
    for k, (ax, y, label, yscale, colour) in enumerate(panels):
        y = np.asarray(y, dtype=float)
        ax.plot(f_mhz, y, color=colour, linewidth=1.8, label="ε'' dielectric" if k == 1 else None)
        if k == 1 and eps_effective is not None:
            ax.plot(f_mhz, eps_effective, color=PALETTE["ink"], linewidth=1.4, linestyle="--",
                    label="ε''_eff with conduction")
            ax.legend(fontsize=SIZES["legend"], loc="best")
        ax.set_xscale("log")
        _plain_log_ticks(ax.xaxis, subs=(1.0,))
        if yscale == "log" and np.all(y[np.isfinite(y)] > 0):
            ax.set_yscale("log")
            if np.nanmax(y) / np.nanmin(y) < 1e3 and (k != 1 or eps_effective is None):
                _plain_log_ticks(ax.yaxis)
        ax.set_ylabel(label)
        _mark_antennas(ax, antenna_freqs_hz)
        _style(ax)
    for ax in axes[1]:
        ax.set_xlabel("frequency (MHz)")
    return figure_png(fig)


@styled
def max_depth_png(freq_hz, depth_curves, target_depth_m: float, antennas, *, target_label: str = "target") -> bytes:
    """Maximum detectable depth against frequency, the target depth and the antennas.

    Parameters
    ----------
    freq_hz : (n,) array
    depth_curves : sequence of (label, (n,) array of m)
        One or more curves (e.g. for the lowest and highest system performance).
    target_depth_m : float
        Depth of the target top, drawn as a horizontal line.
    antennas : sequence of dict
        ``name``, ``freq_hz``, ``max_depth_m``, ``recommended`` (bool).
    """
    f_mhz = np.asarray(freq_hz, dtype=float) / 1e6
    fig = _new_figure(7.2, 4.4)
    ax = fig.add_subplot()
    styles = ["-", "--", "-.", ":"]
    top = target_depth_m * 1.6
    for k, (label, d) in enumerate(depth_curves):
        d = np.asarray(d, dtype=float)
        ax.plot(f_mhz, d, color=PALETTE["accent"] if k == 0 else PALETTE["muted"],
                linestyle=styles[k % 4], linewidth=1.7, label=label)
        finite = d[np.isfinite(d)]
        if finite.size:
            top = max(top, min(float(finite.max()), 4.0 * max(target_depth_m, 0.1)))
    ax.axhline(target_depth_m, color=PALETTE["second"], linewidth=1.4, linestyle="--")
    ax.annotate(f"{target_label}: {target_depth_m:.2g} m", (f_mhz.min(), target_depth_m),
                xytext=(4, -11), textcoords="offset points", fontsize=SIZES["tick"], color=PALETTE["second"])
    labels = []
    for a in antennas:
        rec = bool(a.get("recommended"))
        d = float(a["max_depth_m"])
        reach = d >= target_depth_m
        ax.scatter([a["freq_hz"] / 1e6], [min(d, top * 1.05)], s=70 if rec else 36,
                   marker="*" if rec else ("o" if reach else "x"),
                   color=PALETTE["second"] if rec else (PALETTE["accent"] if reach else PALETTE["ink"]),
                   zorder=4, edgecolor="white" if reach or rec else None, linewidth=0.6)
        labels.append(ax.annotate(a["name"] + (" (recommended)" if rec else ""),
                                  (a["freq_hz"] / 1e6, min(d, top * 1.05)), xytext=(5, 4),
                                  textcoords="offset points", fontsize=SIZES["legend"],
                                  color=PALETTE["second"] if rec else PALETTE["ink"],
                                  fontweight="bold" if rec else "normal", bbox=_LABEL_BOX, zorder=6))
    ax.set_xscale("log")
    _plain_log_ticks(ax.xaxis, subs=(1.0, 2.0, 5.0))
    ax.set_ylim(top * 1.12, 0.0)  # depth increases downward
    ax.set_xlabel("antenna centre frequency (MHz)")
    ax.set_ylabel("maximum detectable depth (m)")
    _style(ax)
    if depth_curves:
        ax.legend(fontsize=SIZES["legend"], loc="lower left")
    _labels_clear_of_lines(fig, ax, labels)
    return figure_png(fig)


#: Where a point's label may go (offset in points, horizontal alignment), tried in this order.
_LABEL_SPOTS = (((5, 4), "left"), ((5, -12), "left"), ((-5, 4), "right"), ((-5, -12), "right"),
                ((8, -4), "left"), ((-8, -4), "right"), ((0, 9), "center"), ((0, -17), "center"))


def _labels_clear_of_lines(fig, ax, labels) -> None:
    """Move each point label to the first spot beside its point that no curve of ``ax`` crosses.

    The curves' display paths come from a layout draw; a label that finds no clear spot keeps
    the first one, where its white box still covers the curve under it.
    """
    lines = [ln for ln in ax.get_lines() if len(ln.get_xdata()) > 1]
    if not labels or not lines:
        return
    fig.draw_without_rendering()
    renderer = fig.canvas.get_renderer()
    paths = [ln.get_transform().transform_path(ln.get_path()) for ln in lines]
    placed = []
    for label in labels:
        for offset, ha in _LABEL_SPOTS:
            label.set_position(offset)
            label.set_horizontalalignment(ha)
            box = label.get_window_extent(renderer).padded(2)
            if not any(p.intersects_bbox(box, filled=False) for p in paths) and \
                    not any(box.overlaps(other) for other in placed) and ax.bbox.contains(box.x0, box.y0) and \
                    ax.bbox.contains(box.x1, box.y1):
                break
        else:
            label.set_position(_LABEL_SPOTS[0][0])
            label.set_horizontalalignment(_LABEL_SPOTS[0][1])
        placed.append(label.get_window_extent(renderer))


@styled
def time_depth_png(twt_s, depth_m, depth_low_m, depth_high_m, *, velocity_text: str = "",
                   target_depth_m: float | None = None) -> bytes:
    """Two-way travel time against depth with the uncertainty band (the field chart).

    Parameters
    ----------
    twt_s : (n,) array
        Two-way travel times after time zero, s.
    depth_m, depth_low_m, depth_high_m : (n,) arrays
        Central depth and the band edges, m.
    """
    t_ns = np.asarray(twt_s, dtype=float) * 1e9
    fig = _new_figure(7.2, 4.2)
    ax = fig.add_subplot()
    ax.fill_between(t_ns, depth_low_m, depth_high_m, color=PALETTE["band"], alpha=0.8, linewidth=0,
                    label="90 % band")
    ax.plot(t_ns, depth_m, color=PALETTE["accent"], linewidth=1.9, label="central depth")
    ax.plot(t_ns, depth_low_m, color=PALETTE["accent"], linewidth=0.6, linestyle="--")
    ax.plot(t_ns, depth_high_m, color=PALETTE["accent"], linewidth=0.6, linestyle="--")
    if target_depth_m is not None:
        ax.axhline(target_depth_m, color=PALETTE["second"], linewidth=1.2, linestyle="--",
                   label=f"target depth {target_depth_m:.2g} m")
    ax.set_xlim(0, t_ns.max())
    ax.set_ylim(float(np.nanmax(depth_high_m)) * 1.02, 0)
    ax.set_xlabel("two-way travel time after time zero (ns)")
    ax.set_ylabel("depth (m)")
    if velocity_text:
        ax.set_title(velocity_text, fontsize=SIZES["tick"], color=PALETTE["muted"], loc="left")
    _style(ax)
    ax.minorticks_on()
    ax.legend(fontsize=SIZES["legend"], loc="upper right")
    return figure_png(fig)
