"""The survey grid: projected cells, CRS metadata, site mask and soil inputs on the grid.

:func:`build_grid` lays a regular grid of square cells over the site in a projected
CRS (metres) and returns an xarray Dataset following the CF conventions: ``x``/``y``
projection coordinates, a ``crs`` grid-mapping variable carrying the CRS as CF
attributes and WKT, longitude/latitude as auxiliary coordinates and a ``mask`` of cells
whose centre lies inside the site outline.  :func:`soil_on_grid` puts every soil input
of a survey onto that grid: defaults and zones (polygons sampled at cell centres),
rasters (bilinear interpolation after reprojecting the cell centres with pyproj) and
point samples (interpolated, with an uncertainty estimate and a distance-to-sample
layer so that maps can show where they extrapolate).

Interpolation of point samples
------------------------------
Samples are interpolated as residuals from the zone/raster/default trend by
:mod:`subsurf.site.interpolation`: ordinary kriging with a fitted variogram
(:mod:`subsurf.site.kriging`, gstools) where a quantity has enough samples, else the
thin-plate spline with its leave-one-out uncertainty (``[soil] interpolation``).

Library choices: pyproj (PROJ) for every coordinate transformation; shapely 2
(``contains_xy``, vectorised GEOS) for point-in-polygon; scipy for interpolation
(``RBFInterpolator``, ``RegularGridInterpolator``) and nearest-neighbour distances
(``cKDTree``).  No per-cell Python loops.
"""

from __future__ import annotations

import numpy as np

from ..errors import FileInputError, InputError
from .interpolation import interpolate_quantity, interpolate_samples

__all__ = [
    "build_grid",
    "soil_on_grid",
    "crs_variable",
    "transform_points",
    "interpolate_samples",
    "densify_length",
    "BYTES_PER_CELL_ESTIMATE",
]

#: Rough working memory per cell per (antenna × scenario × Monte Carlo draw) used by the
#: size check: a handful of float64 temporaries in the feasibility chain.
BYTES_PER_CELL_ESTIMATE = 8 * 12


def transform_points(x, y, crs_from, crs_to):
    """Transform coordinate arrays between CRSs with pyproj (x = easting/longitude first)."""
    from pyproj import Transformer

    if crs_from == crs_to:
        return np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    tr = Transformer.from_crs(crs_from, crs_to, always_xy=True)
    xx, yy = tr.transform(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
    return np.asarray(xx), np.asarray(yy)


def densify_length(crs, cell_size_m: float) -> float:
    """Longest edge (in ``crs`` units) to keep before reprojecting: one grid cell.

    A straight edge in one CRS is a curve in another; densifying to at most one cell
    (converted to degrees with 111 320 m per degree, the length of a degree of latitude
    to 0.3 %, shorter for longitude, so conservative) keeps the reprojected outline
    within a small fraction of a cell of the true curve.
    """
    if crs.is_geographic:
        return cell_size_m / 111_320.0
    unit = crs.axis_info[0].unit_conversion_factor if crs.axis_info else 1.0
    return cell_size_m / (unit or 1.0)


def _transform_geometry(geom, crs_from, crs_to, *, max_segment=None):
    """Reproject a shapely geometry with pyproj, densifying its edges first (``shapely.segmentize``)."""
    import shapely

    if crs_from == crs_to:
        return geom
    if max_segment is not None and max_segment > 0:
        geom = shapely.segmentize(geom, max_segment)

    def fn(coords):
        xx, yy = transform_points(coords[:, 0], coords[:, 1], crs_from, crs_to)
        return np.column_stack([xx, yy])

    return shapely.transform(geom, fn)


def crs_variable(crs) -> tuple[dict, str]:
    """CF grid-mapping attributes of ``crs`` (pyproj ``to_cf``) and the variable name ``"crs"``."""
    attrs = dict(crs.to_cf())
    attrs["crs_wkt"] = crs.to_wkt()
    attrs["spatial_ref"] = attrs["crs_wkt"]  # read by GDAL-based software
    attrs.setdefault("long_name", "coordinate reference system")
    return attrs, "crs"


def build_grid(survey, *, n_layers: int = 1):
    """Regular grid over the survey site in the survey's projected CRS.

    Parameters
    ----------
    survey : subsurf.survey.Survey
        Validated survey (outline, its CRS, grid CRS and cell size).
    n_layers : int
        Number of cell-sized float arrays the caller will hold at once (antennas ×
        scenarios × draws); used to refuse grids that would not fit in memory.

    Returns
    -------
    xarray.Dataset
        Coordinates ``x``, ``y`` (cell centres, m), auxiliary ``lon``, ``lat`` (degrees),
        variables ``crs`` (grid mapping) and ``mask`` (1 inside the outline).  The
        outline in the grid CRS is in ``ds.attrs`` as WKT under ``site_outline_wkt``.
    """
    import shapely
    import xarray as xr

    cell = survey.cell_size_m
    outline = _transform_geometry(survey.outline, survey.outline_crs, survey.grid_crs,
                                  max_segment=densify_length(survey.outline_crs, cell))
    if not outline.is_valid:
        outline = shapely.make_valid(outline)
    minx, miny, maxx, maxy = outline.bounds
    x0, x1 = np.floor(minx / cell) * cell, np.ceil(maxx / cell) * cell
    y0, y1 = np.floor(miny / cell) * cell, np.ceil(maxy / cell) * cell
    nx, ny = int(round((x1 - x0) / cell)), int(round((y1 - y0) / cell))
    ncells = nx * ny
    need = ncells * max(n_layers, 1) * BYTES_PER_CELL_ESTIMATE
    if ncells > survey.max_cells or need > 4 * 1024**3:
        raise FileInputError(
            survey.path,
            f"a {cell:g} m cell size gives {nx} x {ny} = {ncells:,} cells (about {need / 1e9:.1f} GB of working "
            f"memory, limit {survey.max_cells:,} cells / 4 GB); use a larger cell size or chunked "
            "processing (see the 'scale' section of the README)",
            field="grid.cell_size",
        )
    if nx < 2 or ny < 2:
        raise FileInputError(survey.path, f"cell size {cell:g} m leaves fewer than 2 cells across the site "
                             f"({nx} x {ny}); use a smaller cell size", field="grid.cell_size")
    x = x0 + cell * (np.arange(nx) + 0.5)
    y = y1 - cell * (np.arange(ny) + 0.5)  # north-up: first row is the northernmost
    xx, yy = np.meshgrid(x, y)
    mask = shapely.contains_xy(outline, xx, yy)
    lon, lat = transform_points(xx, yy, survey.grid_crs, "EPSG:4326")
    attrs, name = crs_variable(survey.grid_crs)
    ds = xr.Dataset(
        {
            name: ((), np.int32(0), attrs),
            "mask": (("y", "x"), mask.astype(np.int8), {
                "long_name": "cell centre inside the site outline", "flag_values": np.array([0, 1], np.int8),
                "flag_meanings": "outside inside", "grid_mapping": name}),
        },
        coords={
            "x": ("x", x, {"standard_name": "projection_x_coordinate", "long_name": "easting",
                           "units": "m", "axis": "X"}),
            "y": ("y", y, {"standard_name": "projection_y_coordinate", "long_name": "northing",
                           "units": "m", "axis": "Y"}),
            "lon": (("y", "x"), lon, {"standard_name": "longitude", "long_name": "longitude",
                                      "units": "degrees_east"}),
            "lat": (("y", "x"), lat, {"standard_name": "latitude", "long_name": "latitude",
                                      "units": "degrees_north"}),
        },
        attrs={"site_outline_wkt": outline.wkt, "cell_size_m": cell,
               "grid_crs_name": survey.grid_crs.name},
    )
    return ds


def _zone_and_raster_trend(survey, q: str, px, py):
    """Trend value, its sd and its source (0 default, 1 zone, 2 raster) of ``q`` at grid-CRS points."""
    import shapely
    from scipy.interpolate import RegularGridInterpolator

    val = np.full(np.shape(px), survey.defaults.get(q, np.nan))
    sd = np.full(np.shape(px), survey.default_sd.get(q, 0.0))
    src = np.zeros(np.shape(px), np.int8)
    for zs in survey.zones:
        for geom, v, s in zip(zs.geometries, zs.values, zs.sd):
            if q not in v:
                continue
            g = _transform_geometry(geom, zs.crs, survey.grid_crs,
                                    max_segment=densify_length(zs.crs, survey.cell_size_m))
            inside = shapely.contains_xy(g, px, py)
            val = np.where(inside, v[q], val)
            sd = np.where(inside, s.get(q, 0.0), sd)
            src = np.where(inside, np.int8(1), src)
    for r in survey.rasters:
        if r.quantity != q:
            continue
        rx, ry = transform_points(px, py, survey.grid_crs, r.crs)
        xs, ys, arr = r.x, r.y, r.values
        if xs[0] > xs[-1]:
            xs, arr = xs[::-1], arr[:, ::-1]
        if ys[0] > ys[-1]:
            ys, arr = ys[::-1], arr[::-1, :]
        interp = RegularGridInterpolator((ys, xs), arr, method="linear", bounds_error=False, fill_value=np.nan)
        rv = interp(np.stack([np.ravel(ry), np.ravel(rx)], axis=-1)).reshape(np.shape(px))
        have = np.isfinite(rv)
        val = np.where(have, rv, val)
        sd = np.where(have, r.sd, sd)
        src = np.where(have, np.int8(2), src)
    return val, sd, src


def _report_coverage(survey, q: str, source, mask) -> None:
    """A note when the rasters of ``q`` cover only part of the site (fraction, and what fills the rest)."""
    from .vectors import note

    files = [r.path.name for r in survey.rasters if r.quantity == q]
    inside = int(mask.sum())
    if not files or inside == 0:
        return
    covered = int(np.count_nonzero((source == 2) & mask))
    if covered < inside:
        rest = np.unique(source[mask & (source != 2)])
        fill = " and ".join({0: "the default", 1: "zones"}[int(k)] for k in rest)
        note(f"{q}: {', '.join(files)} cover {100 * covered / inside:.1f} % of the site ({covered} of {inside} "
             f"cells); {fill} used elsewhere (layer {q}_trend_source)")


def soil_on_grid(survey, grid):
    """Every soil quantity of ``survey`` on ``grid`` (from :func:`build_grid`), with uncertainties.

    Returns
    -------
    xarray.Dataset
        For each quantity ``q`` given anywhere in the survey: ``q`` (value, SI) and
        ``q_sd`` (total standard deviation: measurement and interpolation in quadrature);
        for quantities from samples also ``q_interp_sd``.  Always ``distance_to_sample``
        (m, infinite without samples) and ``extrapolated`` (1 where a cell lies outside
        the convex hull of the samples or farther than twice the median sample spacing
        from any sample).  Cells outside the outline are NaN.
    """
    import shapely
    import xarray as xr
    from scipy.spatial import cKDTree

    from .survey import QUANTITIES

    xx, yy = np.meshgrid(grid["x"].values, grid["y"].values)
    mask = grid["mask"].values.astype(bool)
    out = xr.Dataset(coords=grid.coords)
    outline = shapely.from_wkt(grid.attrs["site_outline_wkt"])
    tol = survey.cell_size_m

    all_x, all_y = [], []
    sample_pts = {}
    for s in survey.samples:
        gx, gy = transform_points(s.x, s.y, s.crs, survey.grid_crs)
        inside = shapely.contains_xy(outline.buffer(tol), gx, gy)
        if not np.all(inside):
            i = int(np.argmin(inside))
            raise FileInputError(s.path, f"sample at ({s.x[i]:.8g}, {s.y[i]:.8g}) lies outside the site outline; "
                                 "check its coordinates and the samples' crs", row=int(s.rows[i]))
        all_x.append(gx)
        all_y.append(gy)
        sample_pts[id(s)] = (gx, gy)

    quantities = [q for q in QUANTITIES if q in survey.defaults
                  or any(q in v for z in survey.zones for v in z.values)
                  or any(r.quantity == q for r in survey.rasters)
                  or any(q in s.values for s in survey.samples)]
    for q in quantities:
        trend, trend_sd, source = _zone_and_raster_trend(survey, q, xx, yy)
        _report_coverage(survey, q, source, mask)
        sets = [s for s in survey.samples if q in s.values]
        meta = QUANTITIES[q]
        attrs = {"long_name": meta.long_name, "units": meta.si_unit, "grid_mapping": "crs"}
        if sets:
            sx = np.concatenate([sample_pts[id(s)][0] for s in sets])
            sy = np.concatenate([sample_pts[id(s)][1] for s in sets])
            sv = np.concatenate([s.values[q] for s in sets])
            ssd = np.concatenate([s.sd.get(q, np.zeros(s.x.size)) for s in sets])
            rows = np.concatenate([s.rows for s in sets])
            have = np.isfinite(sv)  # a blank cell is missing for this quantity of that sample only
            sx, sy, sv, ssd, rows = sx[have], sy[have], sv[have], ssd[have], rows[have]
            t_at, _, _ = _zone_and_raster_trend(survey, q, sx, sy)
            fill = float(np.mean(sv))
            t_at = np.where(np.isfinite(t_at), t_at, fill)
            trend = np.where(np.isfinite(trend), trend, fill)
            resid_est, isd, total_sd, info = interpolate_quantity(
                q, sx, sy, sv - t_at, xx, yy, sample_sd=ssd, path=sets[0].path, rows=rows,
                method=getattr(survey, "interpolation", "auto"), variogram=getattr(survey, "variogram", "exponential"),
                survey_path=survey.path)
            value = np.clip(trend + resid_est, meta.low, meta.high)
            out[q + "_interp_sd"] = (("y", "x"), np.where(mask, isd, np.nan),
                                     {"long_name": f"interpolation standard deviation of {meta.long_name}",
                                      "units": meta.si_unit, "grid_mapping": "crs", **info})
        else:
            if np.any(mask & ~np.isfinite(trend)):
                raise FileInputError(survey.path, f"{q} is given for part of the site only (zones or rasters); "
                                     f"give soil.defaults.{q} for the rest", field=f"soil.defaults.{q}")
            value, total_sd = trend, trend_sd
        out[q] = (("y", "x"), np.where(mask, value, np.nan), attrs)
        out[q + "_trend_source"] = (("y", "x"), np.where(mask, source, -1).astype(np.int8), {
            "long_name": f"source of the {meta.long_name} trend", "flag_values": np.array([-1, 0, 1, 2], np.int8),
            "flag_meanings": "outside_site default zone raster", "grid_mapping": "crs",
            "comment": "samples, where given, are interpolated as residuals on top of this trend"})
        out[q + "_sd"] = (("y", "x"), np.where(mask, total_sd, np.nan),
                          {"long_name": f"standard deviation of {meta.long_name}", "units": meta.si_unit,
                           "grid_mapping": "crs"})

    if all_x:
        ax, ay = np.concatenate(all_x), np.concatenate(all_y)
        tree = cKDTree(np.column_stack([ax, ay]))
        dist, _ = tree.query(np.column_stack([xx.ravel(), yy.ravel()]))
        dist = dist.reshape(xx.shape)
        spacing = float(np.median(tree.query(np.column_stack([ax, ay]), k=2)[0][:, 1])) if ax.size > 1 else np.inf
        hull = shapely.MultiPoint(np.column_stack([ax, ay])).convex_hull
        in_hull = shapely.contains_xy(hull.buffer(1e-6 + 0.5 * tol), xx, yy)
        extrap = (~in_hull) | (dist > 2.0 * spacing)
    else:
        dist = np.full(xx.shape, np.inf)
        spacing = np.nan
        extrap = np.zeros(xx.shape, bool)
    out["distance_to_sample"] = (("y", "x"), np.where(mask, dist, np.nan),
                                 {"long_name": "distance to the nearest soil sample", "units": "m",
                                  "grid_mapping": "crs"})
    out["extrapolated"] = (("y", "x"), np.where(mask, extrap, False).astype(np.int8),
                           {"long_name": "soil values extrapolated beyond the samples",
                            "flag_values": np.array([0, 1], np.int8), "flag_meanings": "interpolated extrapolated",
                            "grid_mapping": "crs",
                            "comment": "outside the samples' convex hull or farther than twice the median "
                                       "sample spacing from any sample"})
    out.attrs["median_sample_spacing_m"] = spacing
    if not quantities:  # pragma: no cover - load_survey requires moisture
        raise InputError("survey gives no soil quantity")
    return out
