"""Regional feasibility maps on chunked, dask-backed xarray objects.

A regional soil raster (tens of thousands of cells on a side) does not fit in memory.
Here it is read lazily (:func:`open_region`), the unchanged per-cell chain
:func:`subsurf.feasibility.evaluate` is applied chunk by chunk with
``xarray.apply_ufunc(dask="parallelized")`` (:func:`feasibility_region`), and the result
is written to CF NetCDF tile by tile (:func:`subsurf.io.regional.write_region`, through
the one CF encoder :func:`subsurf.io.netcdf.write_netcdf`), accumulating the whole-region
statistics of :class:`RegionSummary` on the way.  Memory is bounded by the chunk size
times the number of tiles in flight, never by the raster size.

Library choice: dask (the ``scale`` extra) does the scheduling — the local threaded
scheduler by default, a local or remote ``dask.distributed`` cluster on request
(:func:`scheduler`); subsurf keeps no parallel engine of its own.

Writing (in :mod:`subsurf.io`): tiles are computed a batch at a time by whichever
scheduler is active and written by this process into their place, so workers of a
remote cluster never need access to the output path (only to the input raster, if it is
a file), and at most ``batch`` tiles are held at once.

No physics is re-derived here: every number comes from :mod:`subsurf.feasibility`.
"""

from __future__ import annotations

import contextlib
import os

import numpy as np

from ..errors import FileInputError, InputError
from .region_stats import REC_FILL, SHALLOW_FILL, RegionSummary  # re-exported: the statistics live there
from .regional_input import gap_fill_values, open_region  # the input side; re-exported (public here)

__all__ = [
    "ALWAYS_LAYERS",
    "OPTIONAL_LAYERS",
    "open_region",
    "gap_fill_values",
    "feasibility_region",
    "RegionSummary",
    "REC_FILL",
    "SHALLOW_FILL",
    "DEFAULT_USED_FILL",
    "scheduler",
    "chain_antennas",
]

#: Layers every regional map carries (per antenna).
ALWAYS_LAYERS = ("max_depth", "margin_db")
#: Further per-antenna layers that may be asked for (``sigma`` is per cell only).
OPTIONAL_LAYERS = ("velocity", "attenuation_db_per_m", "eps_real", "eps_imag", "sigma", "vertical_resolution")

#: ``soil_default_used`` where a cell has no moisture (no soil data)
DEFAULT_USED_FILL = np.int8(-1)


# --- the chain on chunks ----------------------------------------------------------------

def chain_antennas(antennas, *, band_resolution: bool):
    """Antenna records for :func:`subsurf.feasibility.evaluate` (stacking gain folded in).

    Without ``band_resolution`` the bandwidth is dropped, so the vertical resolution is
    a quarter of the centre-frequency wavelength — the received-spectrum version costs
    about three times the rest of the chain and is asked for only with that layer.
    """
    from .feasibility import AntennaParameters  # the chain's own picklable antenna record

    out = []
    for a in antennas:
        perf = getattr(a, "effective_performance_db", a.performance_db)
        out.append(AntennaParameters(name=a.name, centre_freq_hz=float(a.centre_freq_hz), performance_db=float(perf),
                                     gain=float(getattr(a, "gain", 1.0) or 1.0),
                                     bandwidth_hz=getattr(a, "bandwidth_hz", None) if band_resolution else None))
    return out


def _check_block_ranges(values: dict, source: str):
    from .survey import QUANTITIES

    for q, v in values.items():
        lo, hi = QUANTITIES[q].low, QUANTITIES[q].high
        bad = np.isfinite(v) & ((v < lo) | (v > hi))
        if np.any(bad):
            raise FileInputError(source, f"{q} value {v[bad].ravel()[0]:.6g} (SI) leaves the accepted range "
                                 f"{lo:g} to {hi:g} {QUANTITIES[q].si_unit}; check the variable's units", field=q)


def _fill_block(values: dict, fill: dict):
    """Fill the gaps of the quantities in ``fill`` where moisture is known; the bitmask of what was filled.

    Bit k (value 2**k) is set where the k-th quantity of ``fill`` was missing; -1 where moisture is.
    """
    known = np.isfinite(values["moisture"])
    used = np.zeros(known.shape, np.int8)
    out = dict(values)
    for k, (q, v) in enumerate(fill.items()):
        gap = known & ~np.isfinite(values[q])
        if np.any(gap):
            out[q] = np.where(gap, v, values[q])
            used |= (gap.astype(np.int8) << k)
    return out, np.where(known, used, np.int8(DEFAULT_USED_FILL)).astype(np.int8)


def _chain_block(*arrays, names, antennas, target, target_depth_m, texture, model, layers, source, reaches_db,
                 fill=None):
    """The feasibility chain on one tile; outputs with the antenna axis last (apply_ufunc's core dim)."""
    from .feasibility import evaluate, recommend_antenna

    values = dict(zip(names, arrays))
    _check_block_ranges(values, source)
    used = None
    if fill:
        values, used = _fill_block(values, fill)
    res = evaluate(values, antennas, target=target, target_depth_m=target_depth_m, texture=texture, model=model)
    shallow = np.asarray(res["too_shallow"], bool)
    rec = recommend_antenna(res["margin_db"], [a.centre_freq_hz for a in antennas], too_shallow=shallow,
                            reaches_db=reaches_db)
    valid = np.isfinite(res["margin_db"][0])
    rec = np.where(valid, rec, REC_FILL).astype(np.int16)
    outs = []
    for name in layers:
        v = res[name]
        outs.append(v[0] if name == "sigma" else np.moveaxis(v, 0, -1))
    outs.append(np.moveaxis(np.where(valid, shallow, SHALLOW_FILL).astype(np.int8), 0, -1))
    return (*outs, rec) if used is None else (*outs, rec, used)


def feasibility_region(soil, antennas, *, target, target_depth_m: float, texture: str | None = None,
                       model: str = "crim", layers=("velocity", "attenuation_db_per_m"), fill_gaps: dict | None = None,
                       reaches_db: float | None = None):
    """The feasibility chain over a (dask-backed) soil Dataset, lazily.

    Parameters
    ----------
    soil : xarray.Dataset
        Soil quantities (survey names, SI) on dims (y, x), e.g. from :func:`open_region`
        or :func:`subsurf.synthetic.synthetic_region`; numpy-backed datasets work too
        (computed at once).
    antennas : sequence of antennas (catalogue entries or objects with the same fields)
    target : subsurf.detection.Target
    target_depth_m : float
    texture, model :
        As for :func:`subsurf.feasibility.evaluate`.
    layers : sequence of str
        Layers besides :data:`ALWAYS_LAYERS`, from :data:`OPTIONAL_LAYERS`.
    fill_gaps : dict, optional
        ``{quantity: SI value}`` (e.g. :func:`gap_fill_values`) filling the cells where that
        quantity is missing but moisture is known; without it such cells have no data.
        With it the output has a ``soil_default_used`` layer (CF flag_masks, one bit per
        quantity; -1 where there is no moisture).
    reaches_db : float, optional
        The reach threshold (default :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`).

    Returns
    -------
    xarray.Dataset
        ``max_depth``, ``margin_db`` and the requested layers with dims (antenna, y, x)
        (``sigma``: (y, x)), ``too_shallow`` (antenna, y, x; 1 where the target lies in the
        antenna's blind zone, −1 without soil data), ``recommended_antenna`` (y, x; index into ``antenna``, −1
        where no antenna reaches the target, fill value where there is no soil data),
        CF attributes and the grid mapping.  Values are exactly those of
        :func:`subsurf.feasibility.evaluate` on the same cells.
    """
    import xarray as xr

    from ..detection.verdicts import REACHES_MARGIN_DB, reach_definition
    from .feasibility import LAYER_ATTRS
    from .survey import QUANTITIES

    reaches_db = REACHES_MARGIN_DB if reaches_db is None else float(reaches_db)

    layers = list(ALWAYS_LAYERS) + [name for name in layers if name not in ALWAYS_LAYERS]
    bad = [name for name in layers if name not in ALWAYS_LAYERS + OPTIONAL_LAYERS]
    if bad:
        raise InputError(f"unknown layer {bad[0]!r}; allowed: {', '.join(ALWAYS_LAYERS + OPTIONAL_LAYERS)}")
    if not antennas:
        raise InputError("give at least one antenna")
    names = [q for q in QUANTITIES if q in soil.data_vars]
    if "moisture" not in names:
        raise InputError("the soil dataset needs a 'moisture' variable")
    chain_ants = chain_antennas(antennas, band_resolution="vertical_resolution" in layers)
    n_ant = len(chain_ants)
    fill = {q: float(v) for q, v in (fill_gaps or {}).items() if q in names and q != "moisture"}
    core = [[] if name == "sigma" else ["antenna"] for name in layers] + [["antenna"], []] + ([[]] if fill else [])
    dtypes = [float] * len(layers) + [np.int8, np.int16] + ([np.int8] if fill else [])
    results = xr.apply_ufunc(
        _chain_block, *(soil[q] for q in names),
        kwargs={"names": names, "antennas": chain_ants, "target": target, "target_depth_m": float(target_depth_m),
                "texture": texture, "model": model, "layers": layers,
                "source": str(soil.attrs.get("source", "soil raster")), "fill": fill,
                "reaches_db": reaches_db},
        output_core_dims=core, dask="parallelized", output_dtypes=dtypes, keep_attrs=False,
        dask_gufunc_kwargs={"output_sizes": {"antenna": n_ant}},
    )
    out = xr.Dataset()
    if fill:
        *results, used = results
        out["soil_default_used"] = used.assign_attrs({
            "long_name": "soil quantities missing from the raster here, filled with the default",
            "flag_masks": np.array([1 << k for k in range(len(fill))], np.int8),
            "flag_meanings": " ".join(f"{q}_default" for q in fill),
            "grid_mapping": "crs",
            "comment": "defaults: " + "; ".join(f"{q} {v:g} {QUANTITIES[q].si_unit}" for q, v in fill.items())
                       + f" (texture preset {texture or 'none'}, ground-model defaults); 0 where the raster gave "
                       "every quantity",
        })
        out["soil_default_used"].encoding["_FillValue"] = DEFAULT_USED_FILL
    for name, da in zip(layers, results[:-2]):
        if "antenna" in da.dims:
            da = da.transpose("antenna", "y", "x")
        out[name] = da.assign_attrs({**LAYER_ATTRS[name], "grid_mapping": "crs"})
    out["too_shallow"] = results[-2].transpose("antenna", "y", "x").assign_attrs({
        "long_name": "target inside the antenna's blind zone (its echo arrives within the direct wave; not "
                     "reached whatever the margin)", "flag_values": np.array([0, 1], np.int8),
        "flag_meanings": "below_blind_zone in_blind_zone", "grid_mapping": "crs"})
    rec = results[-1]
    out["recommended_antenna"] = rec.assign_attrs({
        "long_name": "recommended antenna (index into the antenna coordinate)",
        "flag_values": np.arange(-1, n_ant, dtype=np.int16),
        "flag_meanings": " ".join(["none_reaches"] + [a.name.replace(" ", "_") for a in chain_ants]),
        "grid_mapping": "crs",
        "comment": f"highest centre frequency with a margin of at least {reaches_db:g} dB below its blind zone; "
                   "else the largest non-negative margin; -1 where every margin is negative",
    })
    out = out.assign_coords(
        antenna=("antenna", [a.name for a in chain_ants], {"long_name": "antenna name"}),
        centre_frequency=("antenna", np.array([a.centre_freq_hz for a in chain_ants]),
                          {"long_name": "antenna centre frequency", "units": "Hz"}),
        performance=("antenna", np.array([a.performance_db for a in chain_ants]),
                     {"long_name": "system performance including stacking gain", "units": "dB"}),
    )
    for c in ("x", "y"):
        if c in soil.coords:
            out = out.assign_coords({c: soil[c]})
    if "crs" in soil:
        out["crs"] = soil["crs"]
    out.attrs = {"target_kind": target.kind, "target_depth_m": float(target_depth_m),
                 "target_material": target.material or "", "soil_model": model, "texture": texture or "",
                 "reaches_margin_db": reaches_db, "reach_definition": reach_definition(reaches_db)}
    return out


# --- scheduler ---------------------------------------------------------------------------

def _probe(address: str, *, timeout_s: float = 5.0) -> None:
    """Fail fast (OSError) when nothing listens at a tcp:// address, instead of waiting for dask's timeout."""
    import socket
    from urllib.parse import urlsplit

    if "://" not in address:
        address = "tcp://" + address
    parts = urlsplit(address)
    if parts.scheme != "tcp" or parts.hostname is None:
        return
    with socket.create_connection((parts.hostname, parts.port or 8786), timeout=timeout_s):
        pass


@contextlib.contextmanager
def scheduler(address: str | None = None, *, workers: int | None = None):
    """Run the dask computations of the block on the chosen scheduler.

    Parameters
    ----------
    address : str or None
        ``None`` or ``"threads"``: dask's local threaded scheduler (the default; the chain
        spends its time in numpy, which releases the GIL).  ``"synchronous"``: one thread,
        for debugging.  ``"local"``: a ``dask.distributed`` cluster of worker processes
        started on this machine (loopback only) and closed at the end.  Anything else is
        the address of an existing ``dask.distributed`` scheduler, e.g.
        ``tcp://scheduler.example.org:8786``.
    workers : int, optional
        Threads (threaded scheduler) or worker processes (``"local"``); default: the CPU count.

    Yields
    ------
    dict
        ``{"scheduler": description, "slots": parallel task slots}``.
    """
    import dask

    n = int(workers) if workers else (os.cpu_count() or 1)
    if address in (None, "", "threads"):
        with dask.config.set(scheduler="threads", num_workers=n):
            yield {"scheduler": f"threads ({n})", "slots": n}
        return
    if address == "synchronous":
        with dask.config.set(scheduler="synchronous"):
            yield {"scheduler": "synchronous", "slots": 1}
        return
    from distributed import Client, LocalCluster

    if address == "local":
        with LocalCluster(n_workers=n, threads_per_worker=1, processes=True, host="127.0.0.1",
                          dashboard_address=None) as cluster, Client(cluster) as client:
            yield {"scheduler": f"local distributed cluster ({n} worker processes)", "slots": n,
                   "client": client}
        return
    try:
        _probe(address)
        client = Client(address, timeout="30s", set_as_default=True)
    except (OSError, TimeoutError, ValueError) as exc:
        raise InputError(f"--scheduler: cannot reach a dask scheduler at {address!r} ({exc}); give an address "
                         "such as tcp://HOST:8786, or 'threads' / 'local'") from None
    with client:
        slots = sum(client.nthreads().values()) or 1
        yield {"scheduler": f"dask.distributed at {address} ({slots} threads)", "slots": slots, "client": client}
