"""The figures of ``subsurf map`` as jobs a figure process can draw (:mod:`subsurf.io.png_split`).

:func:`figure_jobs` lists every PNG of a computed map as ``(output kind, draw_map_figure, data,
relative cost)``; :func:`draw_map_figure` is module level, so a figure process receives a job by
name and its data pickled.  :func:`figures` gives the same figures as callables drawn here.
"""

from __future__ import annotations

__all__ = ["draw_map_figure", "figure_jobs", "figures"]


def draw_map_figure(kind: str, caption: str | None = None, **kwargs):
    """One figure of ``subsurf map``: ``kind`` names the :mod:`.fig_maps` function; ``caption`` goes below.

    Module level, so a figure process receives the job by name (:mod:`.png_split`).
    """
    from . import fig_maps
    from .figstyle import SIZES

    fig = getattr(fig_maps, kind)(**kwargs)
    if caption:
        fig.supxlabel(caption, fontsize=SIZES["note"])
    return fig


def figures(maps) -> dict:
    """Output kind -> a callable that draws that figure of the map here (the jobs of :func:`figure_jobs`)."""
    import functools

    return {key: functools.partial(func, **kwargs) for key, func, kwargs, _ in figure_jobs(maps)}


def figure_jobs(maps) -> list:
    """(key, draw_map_figure, kwargs, cost) of every figure of the map.

    The cost is the drawing time relative to one antenna panel, measured on the example (one process,
    after the imports): 0.055 s per antenna panel, 0.072 s per scenario panel and 0.107 s per
    soil-input panel (each has its own colour bar), so the two figure processes get equal shares.
    """
    import shapely

    from ..site.maps import sample_points
    from .maps import antenna_figure_key, calibration_caption

    survey, ds, grid = maps.survey, maps.dataset, maps.grid
    outline = shapely.from_wkt(grid.attrs["site_outline_wkt"])
    common = {"grid": grid, "outline": outline, "samples": sample_points(survey), "crs_name": survey.grid_crs.name}
    target = {"target_depth_m": survey.target.depth_m, "depth_top_m": survey.target.depth_top_m}
    # the soil inputs are the survey's own: no calibration caption there
    caption = None if maps.calibration is None else calibration_caption(maps.calibration)
    jobs = [(antenna_figure_key(sc.name),
             {"kind": "antenna_figure", "caption": caption, "result": ds, "scenario": sc.name,
              "description": sc.description, **target, **common}, 1.0 * len(maps.antennas))
            for sc in survey.scenarios]
    jobs.append(("png_scenarios", {"kind": "scenario_figure", "caption": caption, "result": ds, **target, **common},
                 1.3 * len(survey.scenarios)))
    jobs.append(("png_inputs", {"kind": "inputs_figure", "soil": maps.soil, **common}, 2.0 * 3))
    return [(key, draw_map_figure, kwargs, cost) for key, kwargs, cost in jobs]
