"""Matplotlib figures of feasibility maps (``subsurf map``, the report's map section).

Every map panel shows coordinates in metres with the grid CRS named on the axes, a
colour bar with units, the site outline, the soil sample points, the target-depth
contour where a depth layer is shown, and hatching where the soil values are
extrapolated beyond the samples.  Functions return a ``matplotlib.figure.Figure`` drawn
in the subsurf style (:mod:`subsurf.io.figstyle`, Agg canvas, no pyplot); the caller
saves it with :func:`subsurf.io.figstyle.save_png`.
"""

from __future__ import annotations

import numpy as np

from .figstyle import INPUT_CMAP, PALETTE, SIZES, new_figure, styled

__all__ = ["antenna_figure", "scenario_figure", "inputs_figure", "DEPTH_CLASS_COLOURS", "PROBABILITY_CLASSES",
           "depth_classes"]

#: Colours of the depth classes, worst first: short of the target, marginal, reaches, reaches with depth to spare.
DEPTH_CLASS_COLOURS = ("#8c2f1b", "#e8c77a", "#7fbfb6", "#0f6b66")
#: A depth map's top class: the maximum detectable depth at least this multiple of the target depth.
DEPTH_TO_SPARE_FACTOR = 1.5
#: Classes of the reach probability: lower edges and colours.  Narrow where a planner's decision turns
#: (a coin toss at 0.5, the 0.9 the summary table counts, near certainty at 0.95), wide elsewhere.
PROBABILITY_CLASSES = ((0.0, "#8c2f1b"), (0.5, "#d9825b"), (0.8, "#f1dca0"), (0.9, "#8cc5bd"), (0.95, "#0f6b66"))
#: Colour of cells where no antenna is recommended.
NO_ANTENNA_COLOUR = "#c9ced4"


def _figure(n_panels: int, *, ncols: int | None = None, panel_w: float = 4.2, panel_h: float = 3.6, aspect=None,
            extra_h: float = 0.9):
    ncols = ncols or min(n_panels, 3)
    nrows = int(np.ceil(n_panels / ncols))
    if aspect is not None:  # height/width of the site: size panels to the map
        # the map itself is narrower than the panel (tick labels, axis label take ~1.1 in)
        panel_h = min(max((panel_w - 1.1) * aspect, 1.6), 6.0) + 0.45
    from .figlayout import PanelGridLayout

    fig = new_figure(panel_w * ncols + 0.6, panel_h * nrows + extra_h, layout=PanelGridLayout())
    axes = fig.subplots(nrows, ncols, squeeze=False, sharex=True, sharey=True)
    for ax in axes.ravel()[n_panels:]:
        ax.set_visible(False)
    return fig, axes.ravel()[:n_panels]


def _aspect(grid) -> float:
    x, y = grid["x"].values, grid["y"].values
    return float((np.ptp(y) + 1e-9) / (np.ptp(x) + 1e-9))


def _decorate(ax, grid, *, outline=None, samples=None, extrapolated=None, crs_name="", first_col=True,
              last_row=True):
    x, y = grid["x"].values, grid["y"].values
    if extrapolated is not None and np.any(extrapolated):
        hatch = ax.contourf(x, y, _filled(np.where(np.isfinite(extrapolated), extrapolated, np.nan)),
                            levels=[0.5, 1.5], colors="none", hatches=["////"])
        _clip(hatch, ax, outline)
    if outline is not None:
        geoms = getattr(outline, "geoms", [outline])
        for g in geoms:
            ox, oy = g.exterior.xy
            ax.plot(ox, oy, color=PALETTE["ink"], lw=1.2)
            for ring in g.interiors:
                ix, iy = ring.xy
                ax.plot(ix, iy, color=PALETTE["ink"], lw=0.8)
    if samples is not None and len(samples[0]):
        ax.scatter(samples[0], samples[1], s=14, marker="o", facecolor="white", edgecolor=PALETTE["ink"], lw=0.7,
                   zorder=5, label="soil samples")
    ax.set_aspect("equal")
    if outline is not None:  # the whole outline in view, with a little room, so its line is not cut by the frame
        x0, y0, x1, y1 = outline.bounds
        pad = 0.02 * max(x1 - x0, y1 - y0)
        ax.set_xlim(min(x0, x.min()) - pad, max(x1, x.max()) + pad)
        ax.set_ylim(min(y0, y.min()) - pad, max(y1, y.max()) + pad)
    from matplotlib.ticker import MaxNLocator

    ax.xaxis.set_major_locator(MaxNLocator(4))
    ax.yaxis.set_major_locator(MaxNLocator(5))
    ax.ticklabel_format(useOffset=False, style="plain")
    ax.tick_params(labelsize=SIZES["map_tick"])
    if last_row:
        ax.set_xlabel(f"easting (m), {crs_name}", fontsize=SIZES["map_label"])
    if first_col:
        ax.set_ylabel("northing (m)", fontsize=SIZES["map_label"])  # the CRS is named on the easting label


def _filled(data):
    """``data`` with each NaN cell given its nearest valid cell's value (for drawing only).

    The grid's cells are whole squares, the site outline is not: a cell whose centre lies outside
    the outline has no value, yet part of it is inside.  Drawing the nearest valid value there
    and clipping the drawing to the outline (:func:`_clip`) fills the site to its edge, with no
    white notches along the outline; the values written to the NetCDF and GeoTIFF are untouched.
    """
    from scipy import ndimage

    data = np.asarray(data, dtype=float)
    bad = ~np.isfinite(data)
    if not bad.any() or bad.all():
        return data
    idx = ndimage.distance_transform_edt(bad, return_distances=False, return_indices=True)
    return data[tuple(idx)]


def _outline_path(outline):
    from matplotlib.path import Path as MplPath

    verts, codes = [], []
    for g in getattr(outline, "geoms", [outline]):
        for ring in (g.exterior, *g.interiors):
            xy = np.asarray(ring.coords, dtype=float)
            verts.append(xy)
            codes.append([MplPath.MOVETO] + [MplPath.LINETO] * (len(xy) - 2) + [MplPath.CLOSEPOLY])
    return MplPath(np.concatenate(verts), np.concatenate(codes))


def _clip(artist, ax, outline):
    """Clip ``artist`` to the site outline (nothing drawn outside the site)."""
    if outline is None:
        return
    from matplotlib.patches import PathPatch

    patch = PathPatch(_outline_path(outline), transform=ax.transData, facecolor="none", edgecolor="none")
    artist.set_clip_path(patch)


def _mesh(ax, grid, data, *, cmap, vmin=None, vmax=None, norm=None, outline=None):
    data = np.asarray(data, dtype=float)
    shown = _filled(data) if outline is not None else np.ma.masked_invalid(data)
    mesh = ax.pcolormesh(grid["x"].values, grid["y"].values, shown, cmap=cmap, norm=norm,
                         vmin=None if norm is not None else vmin, vmax=None if norm is not None else vmax,
                         shading="nearest")
    _clip(mesh, ax, outline)
    return mesh


def _class_legend(fig, entries, *, title: str, ncols: int):
    """A legend of colour classes (and the map marks) below the panels."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    handles = [Patch(facecolor=c, edgecolor=PALETTE["muted"], linewidth=0.5, label=lab) for lab, c in entries]
    handles.append(Patch(facecolor="white", edgecolor=PALETTE["hatch"], hatch="////", linewidth=0.5,
                         label="extrapolated soil (beyond the samples)"))
    handles.append(Line2D([], [], marker="o", linestyle="none", markerfacecolor="white",
                          markeredgecolor=PALETTE["ink"], markersize=4.5, label="soil sample"))
    import textwrap

    from matplotlib.font_manager import FontProperties
    from matplotlib.textpath import text_to_path

    # as many columns as the figure's width holds: text widths measured in the style's font (points), as the
    # font's advance widths (how the legend lays its text out; ~1 pt wider than the ink, and 20x cheaper than
    # the Bezier extents of the glyph outlines)
    fs = SIZES["map_label"]
    font = FontProperties(family="DejaVu Sans", size=fs)

    def width_pt(text):
        return text_to_path.get_text_width_height_descent(text, font, ismath=False)[0]

    width_pt_fig = fig.get_figwidth() * 72.0 * 0.95
    col_pt = max(width_pt(h.get_label()) for h in handles) + 3.4 * fs  # the key and the gaps beside it
    ncols = max(1, min(ncols, int(width_pt_fig // col_pt)))
    if width_pt(title) > width_pt_fig:
        title = "\n".join(textwrap.wrap(title, int(len(title) * width_pt_fig / width_pt(title))))
    rows = -(-len(handles) // ncols) + title.count("\n") + 1
    if rows > 4:  # room for a taller legend, so the maps keep their size
        fig.set_figheight(fig.get_figheight() + (rows - 4) * 1.45 * fs / 72.0)
    return fig.legend(handles=handles, loc="outside lower center", ncols=ncols, title=title,
                      fontsize=fs, title_fontsize=fs, frameon=False)


def _threshold(result) -> float:
    """The reach threshold (dB) the maps were computed with (their ``reaches_margin_db`` attribute)."""
    from ..detection.verdicts import REACHES_MARGIN_DB

    return float(result.attrs.get("reaches_margin_db", REACHES_MARGIN_DB))


def depth_classes(max_depth_m, margin_db, target_depth_m: float, *, too_shallow=None, reaches_db=None):
    """Class of each cell of a depth map: 0 short of the target, 1 marginal, 2 reaches, 3 reaches with depth to spare.

    The classes follow the one definition of "reaches" (:mod:`subsurf.detection.verdicts`):
    *does not reach* (margin < 0 dB) is class 0, *marginal* (0 dB up to the reach threshold)
    class 1, *reaches* class 2, split off as class 3 where the maximum detectable depth is at
    least :data:`DEPTH_TO_SPARE_FACTOR` times the target depth.  A cell inside the blind zone
    (``too_shallow``) is class 0 (it cannot be seen however strong the echo).  NaN where
    ``margin_db`` is NaN.  ``reaches_db``: the reach threshold (default
    :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`).
    """
    from ..detection.verdicts import DOES_NOT_REACH, MARGINAL, REACHES_MARGIN_DB, TOO_SHALLOW, verdict

    margin = np.asarray(margin_db, dtype=float)
    v = verdict(margin, too_shallow=False if too_shallow is None else too_shallow,
                reaches_db=REACHES_MARGIN_DB if reaches_db is None else reaches_db)
    deep = np.asarray(max_depth_m, dtype=float) >= DEPTH_TO_SPARE_FACTOR * target_depth_m
    cls = np.where((v == DOES_NOT_REACH) | (v == TOO_SHALLOW), 0.0,
                   np.where(v == MARGINAL, 1.0, np.where(deep, 3.0, 2.0)))
    return np.where(np.isfinite(margin), cls, np.nan)


@styled
def _depths(target_depth_m, depth_top_m):
    """'1.5 m', or '0.5-1.5 m' for a range of depths of interest."""
    return f"{target_depth_m:g} m" if depth_top_m is None else f"{depth_top_m:g}-{target_depth_m:g} m"


def antenna_figure(grid, result, *, scenario: str, target_depth_m: float, outline, samples, crs_name: str,
                   description: str = "", title: str = "", depth_top_m: float | None = None):
    """Maximum detectable depth per antenna for one scenario, with the target-depth contour.

    One figure per scenario (``subsurf map`` writes one for each); the title names the scenario
    and its description.

    Parameters
    ----------
    grid : xarray.Dataset
        The grid (coordinates ``x``, ``y``).
    result : xarray.Dataset
        Output of the map with ``max_depth`` (scenario, antenna, y, x) and ``extrapolated``.
    """
    from matplotlib.colors import BoundaryNorm, ListedColormap

    reaches_db = _threshold(result)
    da = result["max_depth"].sel(scenario=scenario)
    names = [str(a) for a in result["antenna"].values]
    fig, axes = _figure(len(names), ncols=2 if len(names) == 4 else None, aspect=_aspect(grid), extra_h=1.5)
    ncols = 2 if len(names) == 4 else min(len(names), 3)
    cmap = ListedColormap(DEPTH_CLASS_COLOURS)
    norm = BoundaryNorm([-0.5, 0.5, 1.5, 2.5, 3.5], cmap.N)
    shallow = result["too_shallow"].sel(scenario=scenario) if "too_shallow" in result else None
    for i, (ax, name) in enumerate(zip(axes, names)):
        data = da.sel(antenna=name).values
        classes = depth_classes(data, result["margin_db"].sel(scenario=scenario, antenna=name).values,
                                target_depth_m,
                                too_shallow=None if shallow is None else shallow.sel(antenna=name).values,
                                reaches_db=reaches_db)
        _mesh(ax, grid, classes, cmap=cmap, norm=norm, outline=outline)
        # the share the summary table counts: cells that reach (classes 2 and 3, margin >= the threshold
        # below the blind zone) among the cells with values
        frac = float(np.count_nonzero(classes >= 2) / max(np.count_nonzero(np.isfinite(classes)), 1))
        ax.set_title(f"{name}: reaches {_depths(target_depth_m, depth_top_m)} (>= {reaches_db:g} dB) over "
                     f"{100 * frac:.0f} % of site", fontsize=SIZES["title"])
        _decorate(ax, grid, outline=outline, samples=samples, extrapolated=result["extrapolated"].values,
                  crs_name=crs_name, first_col=(i % ncols == 0), last_row=(i >= len(names) - ncols))
    t, m = target_depth_m, reaches_db
    blind = "" if depth_top_m is None else f", or blind at {depth_top_m:g} m"
    entries = [(f"does not reach {t:g} m{blind}", DEPTH_CLASS_COLOURS[0]),
               (f"marginal: under {m:g} dB to spare at {t:g} m", DEPTH_CLASS_COLOURS[1]),
               (f"reaches {_depths(t, depth_top_m)} ({m:g} dB or more to spare"
                + (")" if depth_top_m is None else f" at {t:g} m)"), DEPTH_CLASS_COLOURS[2]),
               (f"reaches, and could see down to {DEPTH_TO_SPARE_FACTOR * t:.3g} m or deeper", DEPTH_CLASS_COLOURS[3])]
    deep = f"{t:g} m deep" if depth_top_m is None else (
        f"{depth_top_m:g}-{t:g} m deep (reach judged at {t:g} m, blind zone at {depth_top_m:g} m)")
    _class_legend(fig, entries, ncols=2, title=f"Target {deep}: what each antenna achieves "
                  "(the depths themselves are in feasibility.nc and the GeoTIFFs)")
    import textwrap

    lines = [f"Scenario '{scenario}': maximum detectable depth per antenna",
             *textwrap.wrap(description, 100)]
    fig.suptitle(title or "\n".join(lines), fontsize=SIZES["suptitle"])
    return fig


@styled
def scenario_figure(grid, result, *, target_depth_m: float, outline, samples, crs_name: str, title: str = "",
                    depth_top_m: float | None = None):
    """Probability of reaching the target with the recommended antenna, one panel per scenario.

    Each cell shows the chance that the antenna recommended for that cell reaches the target,
    in classes (:data:`PROBABILITY_CLASSES`) narrow where the decision turns; cells with no
    recommended antenna are grey, and a dashed line marks where the recommended antenna changes.
    """
    from matplotlib.colors import BoundaryNorm, ListedColormap

    from ..detection.verdicts import reaches, share_word

    reaches_db = _threshold(result)
    scen = [str(s) for s in result["scenario"].values]
    names = [str(a) for a in result["antenna"].values]
    fig, axes = _figure(len(scen), aspect=_aspect(grid), extra_h=1.6)
    ncols = min(len(scen), 3)
    edges = [lo for lo, _ in PROBABILITY_CLASSES]
    cmap = ListedColormap([NO_ANTENNA_COLOUR] + [c for _, c in PROBABILITY_CLASSES])
    norm = BoundaryNorm([-1.5, -0.5, *edges[1:], 1.0 + 1e-9], cmap.N)  # -1: no antenna recommended
    for i, (ax, s) in enumerate(zip(axes, scen)):
        p = result["reach_probability"].sel(scenario=s).values
        rec = result["recommended_antenna"].sel(scenario=s).values.astype(int)
        inside = np.isfinite(p[0])
        p_rec = np.take_along_axis(p, np.clip(rec, 0, None)[None], axis=0)[0]
        shown = np.where(inside, np.where(rec >= 0, np.clip(p_rec, 0.0, 1.0), -1.0), np.nan)
        _mesh(ax, grid, shown, cmap=cmap, norm=norm, outline=outline)
        counts = {names[k]: int(np.count_nonzero((rec == k) & inside)) for k in range(len(names))}
        top = max(counts, key=counts.get) if counts else "-"
        # "none reaches": no antenna has margin >= the threshold below the blind zone (detection.verdicts)
        shallow = result["too_shallow"].sel(scenario=s).values.astype(bool) if "too_shallow" in result else False
        ok = reaches(result["margin_db"].sel(scenario=s).values, too_shallow=shallow, reaches_db=reaches_db)
        none = int(np.count_nonzero(~np.any(ok, axis=0) & inside))
        n_site = max(int(inside.sum()), 1)
        share = counts.get(top, 0) / n_site
        ax.set_title(_wrap_title(f"{s}: {top} recommended on a {share_word(share)} of cells ({100 * share:.0f} %); "
                                 f"none reaches (>= {reaches_db:g} dB): {100 * none / n_site:.0f} %", ax),
                     fontsize=SIZES["title"])
        used = np.unique(rec[inside])
        if used.size > 1:  # boundaries between the cells of different recommended antennas
            from matplotlib import patheffects

            ax.contour(grid["x"].values, grid["y"].values, np.where(inside, rec, np.nan).astype(float),
                       levels=(used[:-1] + used[1:]) / 2.0, colors=PALETTE["ink"], linewidths=1.0,
                       linestyles="--", path_effects=[patheffects.withStroke(linewidth=2.4, foreground="white")])
        _decorate(ax, grid, outline=outline, samples=samples, extrapolated=result["extrapolated"].values,
                  crs_name=crs_name, first_col=(i % ncols == 0), last_row=True)
    pct = [f"{100 * e:g} %" for e in edges[1:]]
    entries = [("no antenna recommended", NO_ANTENNA_COLOUR), (f"under {pct[0]}", PROBABILITY_CLASSES[0][1])]
    entries += [(f"{lo} to {hi}", c) for lo, hi, (_, c) in zip(pct[:-1], pct[1:], PROBABILITY_CLASSES[1:])]
    entries.append((f"{pct[-1]} or more", PROBABILITY_CLASSES[-1][1]))
    _class_legend(fig, entries, ncols=4, title=f"Chance that the antenna recommended for the cell reaches "
                        f"{_depths(target_depth_m, depth_top_m)} (dashed line: where the recommended antenna changes)")
    fig.suptitle(title or f"Scenarios: probability of reaching (margin >= {reaches_db:g} dB)",
                 fontsize=SIZES["suptitle"])
    return fig


def _wrap_title(text: str, ax) -> str:
    """``text`` broken into lines that fit the width of the panel ``ax`` (at the title font size)."""
    import textwrap

    width_in = ax.get_position().width * ax.figure.get_figwidth()
    chars = max(int(width_in * 72.0 / (0.62 * SIZES["title"])), 20)  # DejaVu Sans: ~0.6 em per character
    return "\n".join(textwrap.wrap(text, chars))


@styled
def inputs_figure(grid, soil, *, outline, samples, crs_name: str, quantities=("moisture", "moisture_sd")):
    """Soil inputs on the grid (e.g. moisture and its standard deviation) with the samples."""
    from ..site.survey import QUANTITIES

    qs = [q for q in quantities if q in soil]
    qs.append("distance_to_sample") if "distance_to_sample" in soil and np.any(
        np.isfinite(soil["distance_to_sample"].values)) else None
    fig, axes = _figure(len(qs), aspect=_aspect(grid), panel_w=3.6, extra_h=1.7)
    for i, (ax, q) in enumerate(zip(axes, qs)):
        data = soil[q].values
        base = q[:-3] if q.endswith("_sd") else q
        scale, unit = (100.0, "%") if base in QUANTITIES and QUANTITIES[base].kind == "fraction" else \
            (1.0, soil[q].attrs.get("units", ""))
        finite = data[np.isfinite(data)]
        vmax = float(finite.max() * scale) if finite.size else 1.0
        vmin = float(finite.min() * scale) if finite.size else 0.0
        mesh = _mesh(ax, grid, data * scale, cmap=INPUT_CMAP, vmin=vmin, vmax=vmax if vmax > vmin else vmin + 1,
                     outline=outline)
        long_name = soil[q].attrs.get("long_name", q.replace("_", " "))
        bar = fig.colorbar(mesh, ax=ax, location="bottom", shrink=0.9, aspect=30, pad=0.02)
        fig.get_layout_engine().add_colorbar(ax, bar, shrink=0.9)
        bar.set_label(_input_label(q, long_name, unit), fontsize=SIZES["map_label"])
        bar.ax.tick_params(labelsize=SIZES["map_tick"])
        ax.set_title(_wrap_title(long_name, ax), fontsize=SIZES["title"])
        _decorate(ax, grid, outline=outline, samples=samples, extrapolated=soil["extrapolated"].values,
                  crs_name=crs_name, first_col=(i == 0), last_row=False)
        ax.set_xlabel(f"easting (m), {crs_name}", fontsize=SIZES["map_label"])
    fig.suptitle("Soil inputs on the grid (hatched: extrapolated beyond the samples)",
                 fontsize=SIZES["suptitle"])
    return fig


#: Colour-bar labels of the soil inputs a reader sees most; others are named by their long name.
_INPUT_LABELS = {"moisture": "water content", "moisture_sd": "its standard deviation",
                 "distance_to_sample": "distance to the nearest sample"}


def _input_label(name: str, long_name: str, unit: str) -> str:
    """A reader's label with its unit for the colour bar of one soil input."""
    unit = {"%": "% by volume"}.get(unit, unit) if name.startswith("moisture") else unit
    text = _INPUT_LABELS.get(name, long_name)
    return f"{text} ({unit})" if unit and unit != "1" else text
