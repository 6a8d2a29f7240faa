"""Read a test profile (traces × samples) from SEG-Y, NetCDF or CSV into a TraceProfile.

SEG-Y (SEG Technical Standards Committee, SEG-Y rev 1, 2002; rev 2.0, 2017) is read
with segyio; the NetCDF and CSV layouts are subsurf's own (documented in
surveys/README.md, "Test profiles for calibration").  Every problem is one
:class:`subsurf.errors.FileInputError` naming the file (and trace, row or field).
"""

from __future__ import annotations

import csv
from pathlib import Path
from typing import Literal

import numpy as np

from ..errors import FileInputError, InputError
from ..interpretation.trace_profile import TraceProfile

__all__ = ["read_profile", "read_segy", "read_netcdf_profile", "read_csv_profile", "SEGY_TIME_UNITS"]

#: Unit of the SEG-Y sample-interval field.  The standard says microseconds; radar records
#: sampled finer than 1 µs store a smaller unit in the same integer field, and then every
#: time field of the headers (the delay, in milliseconds by the standard) is scaled alike.
SEGY_TIME_UNITS = {"us": 1e-6, "ns": 1e-9, "ps": 1e-12}

#: Largest plausible radar sample interval; above it the interval unit is surely misread.
_MAX_RADAR_INTERVAL_S = 100e-9


def read_profile(path, *, fmt: Literal["auto", "segy", "netcdf", "csv"] = "auto",
                 segy_time_unit: Literal["us", "ns", "ps"] = "us") -> TraceProfile:
    """Read a test profile; ``fmt="auto"`` goes by the suffix (.sgy/.segy, .nc, .csv)."""
    p = Path(path)
    if p.is_dir():
        raise FileInputError(p, "is a folder; a file is needed here")
    if not p.is_file():
        raise FileInputError(p, "file not found")
    if fmt == "auto":
        suffix = p.suffix.lower()
        fmt = {".sgy": "segy", ".segy": "segy", ".nc": "netcdf", ".nc4": "netcdf", ".csv": "csv"}.get(suffix)
        if fmt is None:
            raise FileInputError(p, f"cannot tell the format from the suffix {suffix!r}; use .sgy/.segy, .nc or "
                                 ".csv, or name the format")
    try:
        if fmt == "segy":
            return read_segy(p, time_unit=segy_time_unit)
        if fmt == "netcdf":
            return read_netcdf_profile(p)
        if fmt == "csv":
            return read_csv_profile(p)
    except FileInputError:
        raise
    except InputError as exc:  # a TraceProfile check: name the file once
        msg = str(exc)
        prefix = f"{p}: "
        raise FileInputError(p, msg[len(prefix):] if msg.startswith(prefix) else msg) from None
    raise InputError(f"profile format must be auto, segy, netcdf or csv, got {fmt!r}")


def _scaled(values, scalars):
    """SEG-Y scalar rule: positive multiplies, negative divides, zero means 1."""
    s = np.asarray(scalars, dtype=float)
    s = np.where(s == 0, 1.0, s)
    return np.where(s > 0, values * s, values / np.abs(s))


def read_segy(path, *, time_unit: Literal["us", "ns", "ps"] = "us") -> TraceProfile:
    """Read a SEG-Y file (any trace order; no geometry needed) with segyio.

    Honoured: the binary-header sample interval and sample count, each trace header's
    sample interval and count (must agree with the binary header), the delay recording
    time (bytes 109–110, scaled by bytes 215–216) as the time of the first sample, the trace
    identification code (code 2, dead traces, left out), the vertically summed traces
    (bytes 31–32) as the stack count, and the source/receiver coordinates (scaled by bytes
    71–72) as the distance along the line.  Big- and little-endian files are accepted.
    """
    import segyio

    p = Path(path)
    if time_unit not in SEGY_TIME_UNITS:
        raise InputError(f"SEG-Y time unit must be one of {', '.join(SEGY_TIME_UNITS)}, got {time_unit!r}")
    unit = SEGY_TIME_UNITS[time_unit]
    last = None
    for endian in ("big", "little"):
        try:
            with segyio.open(str(p), "r", ignore_geometry=True, endian=endian) as f:
                return _segy_profile(p, f, segyio, unit, time_unit)
        except (FileInputError, InputError):  # the file was read; its content is refused
            raise
        except (RuntimeError, OSError, ValueError) as exc:
            last = exc
    msg = str(last).strip() or type(last).__name__
    if "inconsistent with file size" in msg or "corrupted" in msg:
        msg = f"truncated or corrupt SEG-Y ({msg})"
    raise FileInputError(p, f"cannot read as SEG-Y: {msg}")


def _segy_profile(p, f, segyio, unit, time_unit) -> TraceProfile:
    tf = segyio.TraceField
    n = f.tracecount
    if n < 1:
        raise FileInputError(p, "the file holds no traces")
    fmt_code = int(f.bin[segyio.BinField.Format])
    if fmt_code not in (1, 2, 3, 5, 6, 8, 9, 10, 11, 12, 16):
        raise ValueError(f"unknown sample format code {fmt_code}")
    ns_bin = int(f.bin[segyio.BinField.Samples])
    dt_bin = int(f.bin[segyio.BinField.Interval])
    dt_tr = np.asarray(f.attributes(int(tf.TRACE_SAMPLE_INTERVAL))[:], dtype=np.int64)
    ns_tr = np.asarray(f.attributes(int(tf.TRACE_SAMPLE_COUNT))[:], dtype=np.int64)
    if dt_bin <= 0 and np.all(dt_tr <= 0):
        raise FileInputError(p, "missing sample interval (binary header bytes 3217–3218 and every trace header's "
                             "bytes 117–118 are 0)")
    dt_field = dt_bin if dt_bin > 0 else int(dt_tr[dt_tr > 0][0])
    bad = np.flatnonzero((dt_tr > 0) & (dt_tr != dt_field))
    if bad.size:
        raise FileInputError(p, f"trace {bad[0] + 1} has sample interval {dt_tr[bad[0]]}, the file header says "
                             f"{dt_field} ({time_unit}); traces must share one interval")
    bad = np.flatnonzero((ns_tr > 0) & (ns_tr != len(f.samples)))
    if bad.size:
        raise FileInputError(p, f"trace {bad[0] + 1} has {ns_tr[bad[0]]} samples, the file has {len(f.samples)}; "
                             "traces must be of one length")
    if ns_bin > 0 and ns_bin != len(f.samples):
        raise FileInputError(p, f"binary header says {ns_bin} samples per trace, the traces hold {len(f.samples)}")
    dt = dt_field * unit
    if dt > _MAX_RADAR_INTERVAL_S:
        raise FileInputError(p, f"sample interval {dt_field} read as {time_unit} is {dt * 1e9:g} ns, implausible for "
                             "radar; if the file stores the interval in a finer unit, say so (ns or ps)")
    data = np.asarray(f.trace.raw[:], dtype=np.float64)
    code = np.asarray(f.attributes(int(tf.TraceIdentificationCode))[:])
    live = code != 2
    dropped = {}
    if not np.any(live):
        raise FileInputError(p, "every trace is flagged dead (trace identification code 2)")
    if np.any(~live):
        dropped["dead (trace identification code 2)"] = int(np.count_nonzero(~live))
    delay = np.asarray(f.attributes(int(tf.DelayRecordingTime))[:], dtype=float)
    tscale = np.asarray(f.attributes(int(tf.ScalarTraceHeader))[:], dtype=float)
    delay_s = _scaled(delay, tscale)[live] * unit * 1e3
    if np.ptp(delay_s) > 0:
        k = int(np.flatnonzero(delay_s != delay_s[0])[0])
        raise FileInputError(p, f"trace {k + 1} starts at a different delay recording time from trace 1; "
                             "a calibration needs one time axis")
    summed = np.asarray(f.attributes(int(tf.NSummedTraces))[:])[live]
    stacks = int(summed[0]) if summed[0] > 0 and np.all(summed == summed[0]) else None
    sc = np.asarray(f.attributes(int(tf.SourceGroupScalar))[:], dtype=float)
    units = np.asarray(f.attributes(int(tf.CoordinateUnits))[:])
    xy = [_scaled(np.asarray(f.attributes(int(k))[:], dtype=float), sc)
          for k in (tf.SourceX, tf.SourceY, tf.GroupX, tf.GroupY)]
    distance = None
    mx, my = 0.5 * (xy[0] + xy[2])[live], 0.5 * (xy[1] + xy[3])[live]
    if np.any(np.hypot(np.diff(mx), np.diff(my)) > 0) and not np.any(units[live] == 2):
        distance = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(mx), np.diff(my)))])
    return TraceProfile(data[live], dt, float(delay_s[0]), distance, str(p), stacks, dropped)


def read_netcdf_profile(path) -> TraceProfile:
    """Read subsurf's NetCDF profile: ``amplitude(trace, sample)``, ``twt(sample)`` with units, optional
    ``distance(trace)`` in m and a global attribute ``stacks``."""
    import xarray as xr

    from ..units import parse_quantity

    p = Path(path)
    try:
        ds = xr.open_dataset(p, decode_times=False, decode_timedelta=False)
    except Exception as exc:  # noqa: BLE001 - netCDF4/HDF5 raise many kinds
        raise FileInputError(p, f"cannot read as NetCDF: {exc}") from None
    with ds:
        if "amplitude" not in ds:
            raise FileInputError(p, "no variable 'amplitude' (dimensions trace, sample)", field="amplitude")
        amp = ds["amplitude"]
        if set(amp.dims) != {"trace", "sample"}:
            raise FileInputError(p, f"'amplitude' must have dimensions (trace, sample), got {amp.dims}",
                                 field="amplitude")
        amp = amp.transpose("trace", "sample")
        if "twt" not in ds or ds["twt"].dims != ("sample",):
            raise FileInputError(p, "missing sample interval: no variable 'twt(sample)'", field="twt")
        units = ds["twt"].attrs.get("units")
        if not units:
            raise FileInputError(p, "'twt' has no units attribute (e.g. 'ns')", field="twt")
        scale = parse_quantity(f"1 {units}", "time", default_unit="s", name=f"{p}: twt units")
        twt = np.asarray(ds["twt"].values, dtype=float) * scale
        dist = None
        if "distance" in ds:
            du = ds["distance"].attrs.get("units", "m")
            dist = np.asarray(ds["distance"].values, dtype=float) * parse_quantity(
                f"1 {du}", "length", default_unit="m", name=f"{p}: distance units")
        stacks = ds.attrs.get("stacks")
        data = np.asarray(amp.values, dtype=float)
    dt = _uniform_interval(p, twt, "twt")
    return TraceProfile(data, dt, float(twt[0]), dist, str(p), int(stacks) if stacks is not None else None)


def _uniform_interval(p, twt, name, row0=None) -> float:
    if twt.size < 2 or not np.all(np.isfinite(twt)):
        raise FileInputError(p, "missing sample interval: fewer than two finite times", field=name)
    d = np.diff(twt)
    dt = float(np.median(d))
    if dt <= 0:
        raise FileInputError(p, "times must increase", field=name)
    bad = np.flatnonzero(np.abs(d - dt) > 1e-4 * dt)
    if bad.size:
        row = None if row0 is None else row0 + int(bad[0]) + 1
        raise FileInputError(p, f"sample times are not evenly spaced (step {d[bad[0]]:.6g} vs {dt:.6g})",
                             row=row, field=name)
    return dt


def read_csv_profile(path) -> TraceProfile:
    """Read subsurf's CSV trace matrix: one row per sample, ``twt [ns]`` then one column per trace.

    Lines starting with ``#`` are comments; a comment ``# stacks: N`` gives the stack
    count.  Trace column headers that are all numbers are the distances along the line
    (m); otherwise they are names.
    """
    from ..units import parse_quantity

    p = Path(path)
    stacks = None
    rows, header, header_row = [], None, 0
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            for lineno, line in enumerate(csv.reader(fh), start=1):
                if not line or not "".join(line).strip():
                    continue
                if line[0].lstrip().startswith("#"):
                    text = ",".join(line).lstrip("# ").strip()
                    if text.lower().startswith("stacks:"):
                        try:
                            stacks = int(text.split(":", 1)[1])
                        except ValueError:
                            raise FileInputError(p, f"cannot read {text!r} as '# stacks: N'", row=lineno) from None
                    continue
                if header is None:
                    header, header_row = [c.strip() for c in line], lineno
                    continue
                if len(line) != len(header):
                    raise FileInputError(p, f"{len(line)} values, the header has {len(header)} columns "
                                         "(a truncated file?)", row=lineno)
                try:
                    rows.append([float(c) for c in line])
                except ValueError:
                    bad = next(c for c in line if not _is_number(c))
                    raise FileInputError(p, f"cannot read {bad.strip()!r} as a number", row=lineno) from None
    except UnicodeDecodeError:
        raise FileInputError(p, "not a text CSV file") from None
    if header is None or not rows:
        raise FileInputError(p, "no data rows (header 'twt [ns]' then one column per trace)")
    name = header[0].replace(" ", "").lower()
    if not (name.startswith("twt[") and name.endswith("]")):
        raise FileInputError(p, f"first column must be the two-way time with its unit, e.g. 'twt [ns]', got "
                             f"{header[0]!r}", row=header_row, field=header[0])
    scale = parse_quantity(f"1 {name[4:-1]}", "time", default_unit="s", name=f"{p}: {header[0]}")
    if len(header) < 2:
        raise FileInputError(p, "no trace columns after the time column", row=header_row)
    m = np.asarray(rows, dtype=float)
    twt = m[:, 0] * scale
    dt = _uniform_interval(p, twt, header[0], row0=header_row)
    dist = None
    if all(_is_number(h) for h in header[1:]):
        dist = np.asarray([float(h) for h in header[1:]])
    return TraceProfile(np.ascontiguousarray(m[:, 1:].T), dt, float(twt[0]), dist, str(p), stacks)


def _is_number(text) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True
