"""Per soil zone: which cells of the map belong to it, and what the map's statistics say there.

A zone's cells are the grid cells inside the site whose centre lies in its polygon — the cells
whose soil inputs the zone sets (:mod:`subsurf.site.grid` samples zones at cell centres).  Where
zones overlap, the later one (file order, then feature order) takes the cell, as it does for the
soil inputs.  Cells in no zone form one more entry, "rest of the site".

The statistics are those of the site, restricted to a zone's cells: the same area fractions
(:func:`subsurf.site.areas.area_fractions`, computed in :func:`subsurf.site.maps.compute_maps`
from the same arrays as the site's) and the same decision rule
(:func:`subsurf.site.decision.decide`), so a zone table and the site headline cannot disagree.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["ZoneCells", "REST_OF_SITE", "zone_cells", "zone_summaries"]

#: Name of the entry for the cells of the site that lie in no zone.
REST_OF_SITE = "rest of the site (no zone)"


@dataclass(frozen=True)
class ZoneCells:
    """One zone's cells on the survey grid (bool, y × x, inside the site only)."""

    name: str
    file: str | None  # the zone file (None: the rest of the site)
    texture: str | None  # the zone's texture preset or USDA class, else the survey's
    cells: np.ndarray

    @property
    def count(self) -> int:
        return int(np.count_nonzero(self.cells))


def zone_cells(survey, grid) -> list[ZoneCells]:
    """Every zone of ``survey`` with its cells on ``grid``, and the rest of the site when any cell is in no zone.

    Empty list for a survey without zones.  Zone names repeated across files are prefixed with
    their file name so that every entry has a name of its own.
    """
    import shapely

    from .grid import _transform_geometry, densify_length

    if not survey.zones:
        return []
    inside = grid["mask"].values.astype(bool)
    xx, yy = np.meshgrid(grid["x"].values, grid["y"].values)
    names = [n for zs in survey.zones for n in zs.names]
    owner = np.full(inside.shape, -1)
    entries = []
    for zs in survey.zones:
        for name, geom, texture in zip(zs.names, zs.geometries, zs.textures):
            g = _transform_geometry(geom, zs.crs, survey.grid_crs,
                                    max_segment=densify_length(zs.crs, survey.cell_size_m))
            owner = np.where(shapely.contains_xy(g, xx, yy) & inside, len(entries), owner)
            label = name if names.count(name) == 1 else f"{zs.path.name}: {name}"
            entries.append((label, str(zs.path), texture or survey.texture))
    out = [ZoneCells(label, file, texture, owner == i) for i, (label, file, texture) in enumerate(entries)]
    rest = inside & (owner < 0)
    if rest.any():
        out.append(ZoneCells(REST_OF_SITE, None, survey.texture, rest))
    return out


def _median(ds, name, cells):
    if name not in ds:
        return None
    v = ds[name].values[cells]
    v = v[np.isfinite(v)]
    return float(np.median(v)) if v.size else None


def zone_summaries(maps) -> list[dict]:
    """One summary per zone of the maps (:attr:`FeasibilityMaps.zones`): soil, area share, decision.

    Keys: ``zone``, ``file``, ``texture``, ``cells``, ``area_pct`` (share of the site's cells),
    ``moisture_pct``, ``pore_water_ec_ms_per_m``, ``clay_pct`` (medians of the soil inputs on its
    cells, before scenarios; None where not mapped), ``recommended`` (the antenna to bring for this
    zone by the site's rule, or None), ``also`` (scenario -> further antenna), ``worst_scenario``,
    ``recommended_reach_pct`` (share of the zone's cells the recommended antenna reaches in the worst
    scenario), ``headline`` and ``antennas`` (per antenna: ``reach_pct`` per scenario and
    ``worst_reach_pct``, the smallest over the scenarios).  Percentages of the zone's cells unless
    said otherwise.
    """
    from .decision import decide
    from .maps import area_rows

    ds = maps.dataset
    n_site = max(int(ds["mask"].values.astype(bool).sum()), 1)
    scenarios = [s.name for s in maps.survey.scenarios]
    out = []
    for z, fr in zip(maps.zones, maps.zone_fractions):
        entry = {"zone": z.name, "file": z.file, "texture": z.texture, "cells": z.count,
                 "area_pct": 100.0 * z.count / n_site,
                 "moisture_pct": None, "pore_water_ec_ms_per_m": None, "clay_pct": None,
                 "recommended": None, "also": {}, "worst_scenario": None, "recommended_reach_pct": None,
                 "headline": "no grid cell centre lies in this zone", "antennas": []}
        if z.count:
            m, ec, clay = (_median(ds, f"soil_{q}", z.cells) for q in ("moisture", "pore_water_ec", "clay"))
            entry.update(moisture_pct=None if m is None else 100 * m,
                         pore_water_ec_ms_per_m=None if ec is None else 1e3 * ec,
                         clay_pct=None if clay is None else 100 * clay)
            rows = area_rows(maps, z.cells, fr)
            d = decide(rows, scenarios=scenarios, reaches_db=maps.reaches_margin_db, area="zone")
            by = {(r["scenario"], r["antenna"]): r for r in rows}
            entry.update(recommended=d.bring, also=dict(d.also), worst_scenario=d.worst_scenario,
                         headline=d.headline,
                         recommended_reach_pct=None if d.bring is None else by[(d.worst_scenario, d.bring)]["reach_pct"])
            for a in maps.antennas:
                per = {s: by[(s, a.name)]["reach_pct"] for s in scenarios}
                entry["antennas"].append({"antenna": a.name, "reach_pct": per, "worst_reach_pct": min(per.values())})
        out.append(entry)
    return out
