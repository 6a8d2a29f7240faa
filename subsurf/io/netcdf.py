"""The one CF NetCDF encoder: an xarray Dataset to a CF-1.8 file, in memory or tile by tile.

``subsurf map`` (a survey grid held in memory), ``subsurf region`` (a dask-backed map
of a whole region) and the synthetic soil raster all go through :func:`write_netcdf`,
so the three files follow the same encoding rules:

- string-valued dimension coordinates (scenario, antenna names) become *label
  variables* ``<dim>_name`` stored as char arrays (CF-1.8 sections 2.2 and 6.1), because
  a CF coordinate variable — one named as its dimension — must be numeric (section 1.3);
- coordinate and auxiliary coordinate variables carry no ``_FillValue`` (section 2.5.1:
  no missing values in coordinate variables);
- every data variable lists its auxiliary coordinates and label variables in its
  ``coordinates`` attribute (section 5) and keeps its ``grid_mapping`` (section 5.6);
  floating layers use NaN as ``_FillValue``; integer layers use the ``_FillValue`` set
  in their ``encoding``, if any (flag variables with ``flag_values``, section 3.5);
- spatial variables are chunked and zlib-compressed (with the shuffle filter).

Values held in numpy are written at once.  Dask-backed data variables are computed a
batch of (y, x) tiles at a time by whichever dask scheduler is active and written here,
into their place: memory is bounded by ``batch`` tiles, the workers of a remote cluster
never need access to the output path, and the chain behind the layers runs once per tile
however many layers share it (the graph is not optimised apart per layer).  The file is
written under a temporary name and renamed when complete
(:func:`subsurf.io.outputs.atomic_path`).

Chunk cache: every tile write covers whole chunks once, so each variable's HDF5 chunk
cache is set to hold exactly the chunks one tile touches (one chunk per leading index,
e.g. per antenna), with a prime number of hash slots about 100 times the chunk count
and preemption 1 (fully written chunks are evicted first).  This bounds the cache
memory to one tile per variable instead of netCDF-C's default per-variable cache,
and a chunk is compressed and flushed as soon as the next tile needs the room.
After each batch of tiles the C heap's free pages are returned to the operating system
(glibc ``malloc_trim``): the threads' many-megabyte temporaries otherwise leave freed but
resident pages that grew with the number of tiles (peak at 64x the base region 1.09-1.13x
that of 1x without, 1.06-1.07x with, at the same CPU time; benchmarks/bench_scale.py).
Reading is bounded too: :func:`limit_read_chunk_cache` lowers netCDF-C's default
per-variable read cache before a raster is opened for tile-by-tile reading.

References
----------
Eaton, B., Gregory, J., Drach, B., et al. (2020). NetCDF Climate and Forecast (CF)
Metadata Conventions, version 1.8. https://cfconventions.org/
The HDF Group. H5Pset_chunk_cache (rdcc_nslots, rdcc_nbytes, rdcc_w0), HDF5 reference manual.
"""

from __future__ import annotations

import os

import numpy as np

__all__ = ["write_netcdf", "read_netcdf", "label_name", "CONVENTIONS", "limit_read_chunk_cache"]

CONVENTIONS = "CF-1.8"
#: default edge (cells) of the y/x chunks of variables held in memory
_MEMORY_TILE = 512
#: names never treated as auxiliary coordinates of a data variable
_GRID_MAPPING = "crs"


def label_name(dim: str) -> str:
    """Name of the label variable holding the string values of dimension ``dim``."""
    return f"{dim}_name"


def _is_text(values) -> bool:
    return np.asarray(values).dtype.kind in ("U", "S", "O")


def _lazy(da) -> bool:
    return hasattr(da.data, "to_delayed")


def _next_prime(n: int) -> int:
    n = max(int(n), 2)
    while any(n % k == 0 for k in range(2, int(n ** 0.5) + 1)):
        n += 1
    return n


def _attr_value(v):
    if isinstance(v, (bool, np.bool_)):
        return int(v)
    if isinstance(v, (list, tuple)):
        return np.asarray(v)
    return v


def _coordinates_attr(name, da, ds, labels) -> str | None:
    """The CF ``coordinates`` attribute of data variable ``name``: given ones, auxiliary coordinates, labels."""
    tokens = str(da.attrs.get("coordinates", "")).split()
    for c, cda in ds.coords.items():
        if c in ds.dims or c == _GRID_MAPPING or not cda.dims:
            continue
        if set(cda.dims) <= set(da.dims):
            tokens.append(str(c))
    tokens += [labels[d] for d in da.dims if d in labels]
    seen = list(dict.fromkeys(t for t in tokens if t != name))
    return " ".join(seen) or None


def _storage_dtype(da, dtype):
    kind = da.dtype.kind
    if kind == "b":
        return np.dtype("i1")
    if kind == "f" and dtype is not None and da.ndim >= 2:
        return np.dtype(dtype)
    return da.dtype


def _chunks(da, tile) -> tuple[int, ...] | None:
    """Chunk shape: 1 along leading dims, the tile (or the dask chunk) along y and x."""
    if da.ndim < 2:
        return None
    out = []
    for k, d in enumerate(da.dims):
        size = da.sizes[d]
        if d in ("y", "x"):
            edge = tile[0] if d == "y" else tile[1]
            if _lazy(da):
                edge = max(da.chunks[k])
            out.append(max(min(int(edge), size), 1))
        else:
            out.append(1)
    return tuple(out)


def _set_cache(var, chunks, itemsize: int, *, leading: int) -> dict:
    """Per-variable chunk cache holding the chunks of one tile write (see the module notes)."""
    n_chunks = max(int(leading), 1)
    size = int(np.prod(chunks)) * int(itemsize) * n_chunks
    slots = _next_prime(100 * n_chunks)
    var.set_var_chunk_cache(size=size, nelems=slots, preemption=1.0)
    return {"bytes": size, "slots": slots}


#: smallest read cache per variable set by :func:`limit_read_chunk_cache` (bytes)
_READ_CACHE_MIN = 1 << 20


def limit_read_chunk_cache(path, tile: int) -> dict:
    """Lower netCDF-C's default per-variable chunk cache to what reading ``path`` in ``tile``² windows needs.

    netCDF-C gives every variable of every file opened afterwards a chunk cache of its
    default size (64 MiB in netCDF-C 4.9-4.10), filled as chunks are read: a raster read
    tile by tile grows by up to that much per variable with the size of the region, though
    each tile reads its own chunks.  The cache is set (process-wide, for files opened from
    now on: it applies when a variable is first read) to hold the chunks one tile window
    touches in the most demanding 2-D variable of ``path`` — at least 1 MiB, and never
    more than the current default, which is only ever lowered.

    Returns the cache settings before and after (``before``, ``after``: size, slots, preemption).
    """
    import netCDF4

    before = netCDF4.get_chunk_cache()
    need, n_chunks = 0, 1
    with netCDF4.Dataset(os.fspath(path)) as nc:
        for v in nc.variables.values():
            if v.ndim != 2:
                continue
            chunking = v.chunking()
            if chunking == "contiguous":
                continue
            touched = [int(np.ceil(int(tile) / int(c))) + (1 if int(tile) % int(c) else 0) for c in chunking]
            count = int(np.prod(touched))
            nbytes = count * int(np.prod(chunking)) * v.dtype.itemsize
            if nbytes > need:
                need, n_chunks = nbytes, count
    size = int(min(before[0], max(need, _READ_CACHE_MIN)))
    slots = _next_prime(100 * n_chunks)
    netCDF4.set_chunk_cache(size, slots, before[2])
    return {"before": before, "after": netCDF4.get_chunk_cache()}


def _define(nc, ds, *, dtype, complevel: int, tile):
    """Create dimensions and variables of ``ds`` in the open netCDF4 Dataset ``nc``; write what is in memory."""

    labels = {d: label_name(d) for d in ds.dims if d in ds.coords and _is_text(ds[d].values)}
    for d, n in ds.sizes.items():
        nc.createDimension(d, n)
    comp = {"zlib": True, "complevel": int(complevel), "shuffle": True} if complevel > 0 else {}
    # coordinate variables (numeric), auxiliary coordinates, labels: no fill value (CF 2.5.1)
    for c, cda in ds.coords.items():
        if c == _GRID_MAPPING:
            continue
        if c in labels:
            text = [str(v).encode("utf-8") for v in cda.values]
            width = max([len(t) for t in text] + [1])
            strlen = f"{labels[c]}_strlen"
            nc.createDimension(strlen, width)
            v = nc.createVariable(labels[c], "S1", (c, strlen))
            v.set_auto_chartostring(False)
            # the UTF-8 bytes, NUL-padded to the longest, one byte per char (CF 1.8 2.2: char holds UTF-8
            # text); netCDF4.stringtochar decodes its input as ASCII and refuses 'wét'
            v[:] = np.array(text, dtype=f"S{width}")[:, None].view("S1")
            v.setncatts({**{k: _attr_value(a) for k, a in cda.attrs.items()}, "_Encoding": "utf-8"})
            continue
        v = nc.createVariable(c, _storage_dtype(cda, None), cda.dims, fill_value=False)
        v.setncatts({k: _attr_value(a) for k, a in cda.attrs.items()})
        v[...] = np.asarray(cda.values).astype(v.dtype)
    if _GRID_MAPPING in ds.variables:
        gm = ds[_GRID_MAPPING]
        v = nc.createVariable(_GRID_MAPPING, "i4", (), fill_value=False)
        v.setncatts({k: _attr_value(a) for k, a in gm.attrs.items()})
        v.assignValue(0)
    lazy, caches = [], {}
    for name, da in ds.data_vars.items():
        if name == _GRID_MAPPING:
            continue
        store = _storage_dtype(da, dtype)
        if store.kind == "f":
            fill = np.array(np.nan, store)
        else:
            fill = da.encoding.get("_FillValue")
            fill = False if fill is None else np.array(fill, store)
        chunks = _chunks(da, tile)
        extra = {"chunksizes": chunks, **comp} if chunks else {}
        v = nc.createVariable(name, store, da.dims, fill_value=fill, **extra)
        attrs = {k: _attr_value(a) for k, a in da.attrs.items() if k not in ("coordinates", "_FillValue")}
        coords = _coordinates_attr(name, da, ds, labels)
        if coords:
            attrs["coordinates"] = coords
        v.setncatts(attrs)
        if chunks:
            leading = int(np.prod([da.sizes[d] for d in da.dims if d not in ("y", "x")] or [1]))
            caches[name] = _set_cache(v, chunks, store.itemsize, leading=leading)
        if _lazy(da):
            lazy.append(name)
        else:
            v[...] = np.asarray(da.values).astype(store)
    return lazy, caches


def _release_freed_memory() -> None:
    """Return the C heap's free pages to the operating system (glibc ``malloc_trim``); no-op elsewhere."""
    global _MALLOC_TRIM
    if _MALLOC_TRIM is None:
        import ctypes
        import ctypes.util

        try:
            _MALLOC_TRIM = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6").malloc_trim
        except (OSError, AttributeError):
            _MALLOC_TRIM = False
    if _MALLOC_TRIM:
        _MALLOC_TRIM(0)


_MALLOC_TRIM = None


def _write_tiles(nc, ds, names, *, dtype, batch: int, progress, on_tile):
    """Compute the dask-backed variables ``names`` a batch of (y, x) tiles at a time and write them."""
    import dask

    from ..errors import InputError

    for n in names:
        if ds[n].dims[-2:] != ("y", "x"):
            raise InputError(f"variable {n!r} has dims {ds[n].dims}; a tiled NetCDF layer ends with (y, x)")
    lead_chunks = [c for n in names for c in ds[n].chunks[:-2]]
    if any(len(c) != 1 for c in lead_chunks):
        ds = ds.chunk({d: -1 for n in names for d in ds[n].dims[:-2]})
    ychunks, xchunks = ds[names[0]].chunks[-2:]
    # unoptimised: the layers keep the keys of the one task per tile they share
    delayed = {n: ds[n].data.to_delayed(optimize_graph=False) for n in names}
    y_edges = np.concatenate([[0], np.cumsum(ychunks)]).astype(int)
    x_edges = np.concatenate([[0], np.cumsum(xchunks)]).astype(int)
    tiles = [(i, j) for i in range(len(ychunks)) for j in range(len(xchunks))]
    batch = max(int(batch), 1)
    for start in range(0, len(tiles), batch):
        group = tiles[start:start + batch]
        wanted = [delayed[n][(0,) * (delayed[n].ndim - 2) + (i, j)] for i, j in group for n in names]
        computed = iter(dask.compute(*wanted))
        for i, j in group:
            ys, xs = slice(y_edges[i], y_edges[i + 1]), slice(x_edges[j], x_edges[j + 1])
            blocks = {n: next(computed) for n in names}
            for n, b in blocks.items():
                var = nc[n]
                var[(Ellipsis, ys, xs)] = np.asarray(b).astype(var.dtype)
            if on_tile is not None:
                on_tile(blocks)
            del blocks
        del computed
        _release_freed_memory()
        if progress is not None:
            progress(min(start + batch, len(tiles)), len(tiles))
    return len(tiles)


def write_netcdf(ds, path, *, force: bool = False, attrs: dict | None = None, dtype: str | None = None,
                 complevel: int = 4, tile: tuple[int, int] = (_MEMORY_TILE, _MEMORY_TILE), batch: int = 4,
                 progress=None, on_tile=None) -> dict:
    """Write ``ds`` to a CF-1.8 NetCDF-4 file at ``path`` (atomically), tile by tile where it is lazy.

    Parameters
    ----------
    ds : xarray.Dataset
        Layers with CF attributes (``long_name``, ``units``, ``grid_mapping="crs"``), a
        grid-mapping variable ``crs`` and coordinates ``x``, ``y``; string-valued
        dimension coordinates become label variables (module notes).  Spatial layers end
        with dims (y, x).  Numpy- or dask-backed.
    path : path-like
        Output file; written under a temporary name and renamed when complete.
    force : bool
        Overwrite an existing file.
    attrs : dict, optional
        Global attributes added to (and overriding) ``ds.attrs``; ``Conventions`` is
        ``CF-1.8`` unless given.
    dtype : {None, "float32", "float64"}
        Storage type of the floating layers with two or more dims (default: their own).
    complevel : int
        zlib level, 0 for no compression.
    tile : (int, int)
        Chunk edge (y, x) of numpy-backed layers; dask-backed layers use their chunks.
    batch : int
        Tiles of dask-backed layers computed at once (memory ≈ batch × tile working set).
    progress : callable, optional
        Called with (tiles done, tiles total) after each batch.
    on_tile : callable, optional
        Called with ``{name: block}`` for every tile computed (e.g. to accumulate statistics).

    Returns
    -------
    dict
        ``path``, ``tiles`` (dask tiles computed, 0 when all in memory) and ``chunk_cache``
        (bytes and slots set per variable).
    """
    import netCDF4

    from ..errors import InputError
    from .outputs import atomic_path

    if dtype not in (None, "float32", "float64"):
        raise InputError(f"dtype must be float32 or float64, got {dtype!r}")
    if int(complevel) not in range(10):
        raise InputError(f"complevel must be 0 to 9, got {complevel!r}")
    ds = ds.unify_chunks() if any(_lazy(ds[n]) for n in ds.data_vars) else ds
    glob = {"Conventions": CONVENTIONS, **dict(ds.attrs), **(attrs or {})}
    glob = {k: _attr_value(v) for k, v in glob.items() if v is not None}
    with atomic_path(path, force=force) as tmp:
        nc = netCDF4.Dataset(os.fspath(tmp), "w", format="NETCDF4")
        try:
            nc.setncatts(glob)
            lazy, caches = _define(nc, ds, dtype=dtype, complevel=int(complevel), tile=tile)
            tiles = _write_tiles(nc, ds, lazy, dtype=dtype, batch=batch, progress=progress,
                                 on_tile=on_tile) if lazy else 0
        finally:
            nc.close()
    return {"path": str(path), "tiles": tiles, "chunk_cache": caches}


def read_netcdf(path, *, chunks=None):
    """Open a file written by :func:`write_netcdf` with its names back as selectable coordinates.

    xarray reads a label variable ``<dim>_name`` (CF-1.8 section 6.1) as a plain auxiliary
    coordinate, so ``ds.sel(antenna="midband-500")`` would fail on the file alone; here each
    becomes the string index of its dimension again (the ``<dim>_name`` variable is kept), the
    grid mapping is decoded as the ``crs`` coordinate and, with rioxarray, attached
    (``ds.rio.crs``).  ``chunks`` is passed to :func:`xarray.open_dataset` (e.g. ``{}`` for a
    regional map too large for memory).
    """
    import xarray as xr

    from ..errors import FileInputError

    try:
        ds = xr.open_dataset(os.fspath(path), engine="netcdf4", decode_coords="all", chunks=chunks)
    except (OSError, ValueError) as exc:
        raise FileInputError(path, f"cannot read as NetCDF: {' '.join(str(exc).split())[:160]}") from None
    names = {}
    for dim in ds.dims:
        lab = label_name(str(dim))
        if lab in ds.variables and ds[lab].dims == (dim,):
            names[dim] = [str(v) for v in ds[lab].values]
    ds = ds.assign_coords({dim: (dim, values) for dim, values in names.items()})
    if _GRID_MAPPING in ds.variables and "crs_wkt" in ds[_GRID_MAPPING].attrs:
        try:
            import rioxarray  # noqa: F401 - registers the .rio accessor
        except ImportError:  # pragma: no cover - rioxarray is a base dependency
            return ds
        ds = ds.rio.write_crs(ds[_GRID_MAPPING].attrs["crs_wkt"], grid_mapping_name=_GRID_MAPPING)
    return ds
