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

from .figstyle import DEPTH_CMAP, INPUT_CMAP, PALETTE, PROBABILITY_CMAP, SIZES, new_figure, styled

__all__ = ["antenna_figure", "scenario_figure", "inputs_figure"]


def _figure(n_panels: int, *, ncols: int | None = None, panel_w: float = 4.2, panel_h: float = 3.6, aspect=None):
    ncols = ncols or min(n_panels, 3)
    nrows = int(np.ceil(n_panels / ncols))
    if aspect is not None:  # height/width of the site: size panels to the map
        # the map itself is narrower than the panel (tick labels, axis label take ~1.1 in)
        panel_h = min(max((panel_w - 1.1) * aspect, 1.6), 6.0) + 0.45
    fig = new_figure(panel_w * ncols + 0.6, panel_h * nrows + 0.9)
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
        ax.contourf(x, y, np.asarray(extrapolated, float), levels=[0.5, 1.5], colors="none", hatches=["////"])
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
    from matplotlib.ticker import MaxNLocator

    ax.xaxis.set_major_locator(MaxNLocator(4))
    ax.yaxis.set_major_locator(MaxNLocator(5))
    ax.ticklabel_format(useOffset=False, style="plain")
    ax.tick_params(labelsize=SIZES["map_tick"])
    if last_row:
        ax.set_xlabel(f"easting (m), {crs_name}", fontsize=SIZES["map_label"])
    if first_col:
        ax.set_ylabel(f"northing (m), {crs_name}", fontsize=SIZES["map_label"])


def _mesh(ax, grid, data, *, cmap, vmin, vmax):
    return ax.pcolormesh(grid["x"].values, grid["y"].values, np.ma.masked_invalid(data), cmap=cmap,
                         vmin=vmin, vmax=vmax, shading="nearest")


@styled
def antenna_figure(grid, result, *, scenario: str, target_depth_m: float, outline, samples, crs_name: str,
                   description: str = "", title: str = ""):
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
    da = result["max_depth"].sel(scenario=scenario)
    names = [str(a) for a in result["antenna"].values]
    fig, axes = _figure(len(names), ncols=2 if len(names) == 4 else None, aspect=_aspect(grid))
    vmax = float(np.nanpercentile(da.values, 99)) if np.any(np.isfinite(da.values)) else 1.0
    vmax = max(vmax, 1.5 * target_depth_m)
    ncols = 2 if len(names) == 4 else min(len(names), 3)
    for i, (ax, name) in enumerate(zip(axes, names)):
        data = da.sel(antenna=name).values
        mesh = _mesh(ax, grid, data, cmap=DEPTH_CMAP, vmin=0.0, vmax=vmax)
        if np.nanmin(data) < target_depth_m < np.nanmax(data):
            cs = ax.contour(grid["x"].values, grid["y"].values, data, levels=[target_depth_m], colors=PALETTE["second"],
                            linewidths=1.6)
            ax.clabel(cs, fmt=lambda v: f"target {v:g} m", fontsize=SIZES["note"])
        frac = float(np.nanmean(np.where(np.isfinite(data), data >= target_depth_m, np.nan)))
        ax.set_title(f"{name}: reaches {target_depth_m:g} m over {100 * frac:.0f} % of site", fontsize=SIZES["title"])
        _decorate(ax, grid, outline=outline, samples=samples, extrapolated=result["extrapolated"].values,
                  crs_name=crs_name, first_col=(i % ncols == 0), last_row=(i >= len(names) - ncols))
    fig.colorbar(mesh, ax=list(axes), label="maximum detectable depth (m)", shrink=0.85)
    import textwrap

    lines = [f"Scenario '{scenario}': maximum detectable depth per antenna",
             *textwrap.wrap(description, 100), "(red: target depth; hatched: extrapolated soil)"]
    fig.suptitle(title or "\n".join(lines), fontsize=SIZES["suptitle"])
    return fig


@styled
def scenario_figure(grid, result, *, target_depth_m: float, outline, samples, crs_name: str, title: str = ""):
    """Probability of reaching the target with the recommended antenna, one panel per scenario."""
    scen = [str(s) for s in result["scenario"].values]
    names = [str(a) for a in result["antenna"].values]
    fig, axes = _figure(len(scen), aspect=_aspect(grid))
    ncols = min(len(scen), 3)
    for i, (ax, s) in enumerate(zip(axes, scen)):
        p = result["reach_probability"].sel(scenario=s).values
        rec = result["recommended_antenna"].sel(scenario=s).values
        best = np.nanmax(np.where(np.isfinite(p), p, -1.0), axis=0)
        best = np.where(np.isfinite(p[0]), best, np.nan)
        mesh = _mesh(ax, grid, best, cmap=PROBABILITY_CMAP, vmin=0.0, vmax=1.0)
        inside = np.isfinite(best)
        counts = {names[k]: int(np.count_nonzero((rec == k) & inside)) for k in range(len(names))}
        top = max(counts, key=counts.get) if counts else "-"
        none = int(np.count_nonzero((rec < 0) & inside))
        from ..detection.verdicts import share_word

        share = counts.get(top, 0) / max(int(inside.sum()), 1)
        ax.set_title(f"{s}: {top} best over a {share_word(share)} of cells ({100 * share:.0f} %); no antenna: "
                     f"{100 * none / max(inside.sum(), 1):.0f} %", fontsize=SIZES["title"])
        if np.nanmin(best) < 0.5 < np.nanmax(best):
            ax.contour(grid["x"].values, grid["y"].values, best, levels=[0.5], colors=PALETTE["ink"], linewidths=1.0,
                       linestyles="--")
        _decorate(ax, grid, outline=outline, samples=samples, extrapolated=result["extrapolated"].values,
                  crs_name=crs_name, first_col=(i % ncols == 0), last_row=True)
    fig.colorbar(mesh, ax=list(axes), label=f"probability of reaching {target_depth_m:g} m (best antenna, 1)",
                 shrink=0.85)
    fig.suptitle(title or "Scenarios: probability that the target depth is reachable "
                 "(dashed: p = 0.5; hatched: extrapolated soil)", fontsize=SIZES["suptitle"])
    return fig


@styled
def inputs_figure(grid, soil, *, outline, samples, crs_name: str, quantities=("moisture", "moisture_sd")):
    """Soil inputs on the grid (e.g. moisture and its standard deviation) with the samples."""
    from ..site.survey import QUANTITIES

    qs = [q for q in quantities if q in soil]
    qs.append("distance_to_sample") if "distance_to_sample" in soil and np.any(
        np.isfinite(soil["distance_to_sample"].values)) else None
    fig, axes = _figure(len(qs), aspect=_aspect(grid))
    for i, (ax, q) in enumerate(zip(axes, qs)):
        data = soil[q].values
        base = q[:-3] if q.endswith("_sd") else q
        scale, unit = (100.0, "%") if base in QUANTITIES and QUANTITIES[base].kind == "fraction" else \
            (1.0, soil[q].attrs.get("units", ""))
        finite = data[np.isfinite(data)]
        vmax = float(finite.max() * scale) if finite.size else 1.0
        vmin = float(finite.min() * scale) if finite.size else 0.0
        mesh = _mesh(ax, grid, data * scale, cmap=INPUT_CMAP, vmin=vmin, vmax=vmax if vmax > vmin else vmin + 1)
        fig.colorbar(mesh, ax=ax, label=f"{q} ({unit})", shrink=0.85)
        ax.set_title(soil[q].attrs.get("long_name", q), fontsize=SIZES["title"])
        _decorate(ax, grid, outline=outline, samples=samples, extrapolated=soil["extrapolated"].values,
                  crs_name=crs_name, first_col=(i == 0))
    fig.suptitle("Soil inputs on the grid (hatched: extrapolated)", fontsize=SIZES["suptitle"])
    return fig
