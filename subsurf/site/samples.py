"""Point soil samples from CSV (``[[soil.samples]]`` of a survey file).

``csv`` (standard library) so that every error names the exact row; the unit of each
column is in brackets in its header (``moisture [%]``).  Row-level checks: every sample
needs every column of its file; empty cells, ``nan`` and non-numbers are errors.
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .._schema import closest, fail
from ..errors import FileInputError, InputError
from ..units import parse_quantity
from ._values import _check_value, _quantity
from .crs import read_crs
from .schema import QUANTITIES, SD_SUFFIX

__all__ = ["SampleSet", "read_samples"]

_SD_SUFFIX = SD_SUFFIX


@dataclass(frozen=True)
class SampleSet:
    """Point soil samples read from a CSV file (coordinates in ``crs``, values in SI)."""

    path: Path
    crs: object  # pyproj.CRS
    x: np.ndarray
    y: np.ndarray
    rows: np.ndarray  # file line number of each sample (header is line 1)
    values: dict[str, np.ndarray]
    sd: dict[str, np.ndarray]


def _parse_header(name: str, *, path) -> tuple[str, str | None]:
    """``'moisture [%]'`` -> ('moisture', '%'); ``'x'`` -> ('x', None)."""
    text = name.strip()
    if "[" in text:
        if not text.endswith("]"):
            raise FileInputError(path, f"column header {name!r}: write the unit in brackets, "
                                 "e.g. 'moisture [%]'", row=1, field=name)
        base, unit = text[:-1].split("[", 1)
        return base.strip(), unit.strip()
    return text, None


def read_samples(entry, *, survey_path: Path, where: str) -> SampleSet:
    """Read the CSV named by ``entry`` (a validated :class:`~subsurf.site.schema.Samples`).

    ``where`` is the entry's key path in the survey file (``[[soil.samples]] no. 1``).
    """
    path = (survey_path.parent / entry.file).resolve()
    crs = read_crs(entry.crs, path=survey_path, field=f"{where} crs")
    xcol, ycol = entry.x_column, entry.y_column
    try:
        with path.open(newline="", encoding="utf-8-sig") as fh:
            reader = csv.reader(fh)
            header = next(reader, None)
            body = list(reader)
    except FileNotFoundError:
        raise fail(survey_path, f"{where} file", f"sample file not found: {path}") from None
    except IsADirectoryError:
        raise fail(survey_path, f"{where} file", f"{path} is a folder, not a CSV file") from None
    except UnicodeDecodeError:
        raise FileInputError(path, "not a UTF-8 text (CSV) file") from None
    if not header:
        raise FileInputError(path, "empty file; expected a header row and sample rows")
    cols = [_parse_header(h, path=path) for h in header]
    rename = {file_name: ours for ours, file_name in entry.columns.items()}
    for i, h in enumerate(header):
        mapped = rename.get(h.strip(), rename.get(cols[i][0]))
        if mapped is not None:
            cols[i] = (mapped, cols[i][1])
    present = {h.strip() for h in header} | {_parse_header(h, path=path)[0] for h in header}
    missing = [f for f in rename if f not in present]
    if missing:
        raise fail(survey_path, f"{where} columns", f"{path.name} has no column {missing[0]!r} "
                   f"(its columns: {', '.join(h.strip() for h in header)})")
    names = [c[0] for c in cols]
    for need in (xcol, ycol):
        if need not in names:
            raise FileInputError(path, f"missing coordinate column {need!r} (columns: {', '.join(names)})",
                                 row=1, field=need)
    quantity_cols = []
    for i, (name, unit) in enumerate(cols):
        if name in (xcol, ycol, "id", "name", "note"):
            continue
        base = name[: -len(_SD_SUFFIX)] if name.endswith(_SD_SUFFIX) else name
        if base not in QUANTITIES:
            allowed = list(QUANTITIES) + [q + _SD_SUFFIX for q in QUANTITIES] + ["id", "name", "note"]
            near = closest(name, allowed)
            raise FileInputError(path, f"unknown column {name!r}" + (f"; did you mean '{near}'?" if near else "")
                                 + f" (allowed: {', '.join(QUANTITIES)}, each optionally with '{_SD_SUFFIX}', "
                                 "id, name, note; or map it in the survey file: columns = {moisture = "
                                 f"'{name}'}})", row=1, field=name)
        if unit is not None:
            try:
                parse_quantity(f"1 {unit}", QUANTITIES[base].kind, default_unit=unit, name=name)
            except InputError:
                raise FileInputError(path, f"cannot read unit {unit!r} as a {QUANTITIES[base].kind}",
                                     row=1, field=header[i].strip()) from None
        quantity_cols.append((i, name, base, unit))
    if not any(not n.endswith(_SD_SUFFIX) for _, n, _, _ in quantity_cols):
        raise FileInputError(path, f"no soil quantity columns; give at least one of {', '.join(QUANTITIES)}",
                             row=1)
    if not body:
        raise FileInputError(path, "no sample rows after the header")
    xs, ys, rows = [], [], []
    vals: dict[str, list] = {n: [] for _, n, _, _ in quantity_cols}
    ix, iy = names.index(xcol), names.index(ycol)
    for r, line in enumerate(body, start=2):
        if not any(c.strip() for c in line):
            continue
        if len(line) != len(header):
            raise FileInputError(path, f"expected {len(header)} values, found {len(line)}", row=r)
        for idx, key in ((ix, xcol), (iy, ycol)):
            try:
                v = float(line[idx])
            except ValueError:
                raise FileInputError(path, f"cannot read coordinate {line[idx]!r} as a number",
                                     row=r, field=key) from None
            if not math.isfinite(v):
                raise FileInputError(path, f"coordinate must be finite, got {line[idx]!r}", row=r, field=key)
            (xs if key == xcol else ys).append(v)
        for i, name, base, unit in quantity_cols:
            raw = line[i].strip()
            if not raw or raw.lower() in ("nan", "na", "n/a", "null"):
                raise FileInputError(path, f"missing value ({raw or 'empty'}); every sample needs every "
                                     "column of its file (put partial samples in a separate file)",
                                     row=r, field=header[i].strip())
            text = raw if unit is None else f"{raw} {unit}"
            try:
                num = float(raw)
            except ValueError:
                raise FileInputError(path, f"cannot read {raw!r} as a number", row=r,
                                     field=header[i].strip()) from None
            if not math.isfinite(num):
                raise FileInputError(path, f"value must be finite, got {raw!r}", row=r, field=header[i].strip())
            v = _quantity(base, text, path=path, field=header[i].strip(), row=r)
            if unit is not None and QUANTITIES[base].kind == "temperature" and name.endswith(_SD_SUFFIX):
                # a temperature spread is a difference: no offset
                v = _quantity(base, f"{raw} {unit}", path=path, field=name, row=r) - _quantity(
                    base, f"0 {unit}", path=path, field=name, row=r)
            _check_value(base, v, path=path, field=header[i].strip(), row=r, sd=name.endswith(_SD_SUFFIX))
            vals[name].append(v)
        rows.append(r)
    values = {n: np.asarray(v, dtype=float) for n, v in vals.items() if not n.endswith(_SD_SUFFIX)}
    sds = {n[: -len(_SD_SUFFIX)]: np.asarray(v, dtype=float) for n, v in vals.items() if n.endswith(_SD_SUFFIX)}
    for base in sds:
        if base not in values:
            raise FileInputError(path, f"column '{base}{_SD_SUFFIX}' has no matching '{base}' column",
                                 row=1, field=f"{base}{_SD_SUFFIX}")
    return SampleSet(path=path, crs=crs, x=np.asarray(xs), y=np.asarray(ys), rows=np.asarray(rows),
                     values=values, sd=sds)
