"""Point soil samples from delimited text (``[[soil.samples]]`` of a survey file), as users have them.

What is accepted, and reported (an :class:`~subsurf.site.vectors.InputNote` each, once):

* **Delimiter and decimal mark**: ``,``, ``;``, tab or ``|`` between fields, detected with
  :class:`csv.Sniffer` (standard library) and confirmed by a consistent field count; a
  decimal comma (``0,21``) when the delimiter is not a comma, as spreadsheets write CSV in
  locales whose decimal mark is a comma (``;`` between fields).  Files in UTF-8 (with or
  without BOM); other encodings are refused (a guessed code page could misread a unit).
* **Units in headers**: in brackets or parentheses, ``moisture [%]``, ``moisture (%)``,
  ``VWC [%]``; a bare header reads bare numbers in the quantity's bare unit.
* **Column names**: ours (``moisture``, ``pore_water_ec`` ... each with ``_sd``), or mapped
  in the survey file (``columns = {moisture = "VWC"}``; the unit may stay in the header).
  Other columns (``date``, ``operator`` ...) are ignored and listed once; ``id``, ``name``,
  ``note`` are expected and read silently.  A ``texture`` column (a preset, USDA class name
  or abbreviation) gives sand and clay where the file does not.
* **Missing values**: a blank cell, ``nan``, ``NA``, ``n/a``, ``null`` or ``-`` is missing
  for that quantity of that sample only (the other quantities of the row are used); each
  such row is listed.  A missing standard deviation is taken as 0 (unknown).  A row
  without a coordinate is skipped and listed.

Errors (one line, file, row and column): an unreadable number or unit, a value outside the
quantity's range, a mapped column the file does not have, no usable quantity column.
"""

from __future__ import annotations

import csv
import difflib
import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .._schema import fail
from ..errors import FileInputError, InputError
from ..units import parse_quantity
from ._values import _check_value, _quantity
from .crs import read_crs
from .schema import QUANTITIES, SD_SUFFIX
from .vectors import check_lonlat_under_projected, note

__all__ = ["SampleSet", "read_samples", "sniff_table", "MISSING"]

_SD_SUFFIX = SD_SUFFIX
#: Cell texts read as a missing value.
MISSING = frozenset({"", "nan", "na", "n/a", "null", "none", "-", "--"})
_SILENT = frozenset({"id", "name", "note", "notes", "comment", "sample", "sample_id"})
_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+(?:[eE][+-]?\d+)?$")


@dataclass(frozen=True)
class SampleSet:
    """Point soil samples read from a CSV file (coordinates in ``crs``, values in SI; NaN where missing)."""

    path: Path
    crs: object  # pyproj.CRS
    x: np.ndarray
    y: np.ndarray
    rows: np.ndarray  # file line number of each sample (header is line 1)
    values: dict[str, np.ndarray]
    sd: dict[str, np.ndarray]
    delimiter: str = ","
    decimal: str = "."
    ignored: tuple[str, ...] = ()


def _parse_header(name: str, *, path) -> tuple[str, str | None]:
    """``'moisture [%]'``/``'moisture (%)'`` -> ('moisture', '%'); ``'x'`` -> ('x', None)."""
    text = name.strip()
    for o, c in (("[", "]"), ("(", ")")):
        if text.endswith(c) and o in text:
            base, unit = text[:-1].rsplit(o, 1)
            if base.strip() and unit.strip():
                return base.strip(), unit.strip()
    if "[" in text or "]" in text:
        raise FileInputError(path, f"column header {name!r}: write the unit in brackets, e.g. 'moisture [%]'",
                             row=1, field=name)
    return text, None


def _read_text(path: Path, *, survey_path: Path, field: str) -> str:
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise fail(survey_path, field, f"sample file not found: {path}") from None
    except IsADirectoryError:
        raise fail(survey_path, field, f"{path} is a folder, not a CSV file") from None
    if b"\x00" in raw[:4096]:
        raise FileInputError(path, "not a text (CSV) file (binary content); export the table as CSV")
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        # guessing a legacy code page could misread a unit or a name silently: refuse, say how to fix
        raise FileInputError(path, f"not UTF-8 text (byte {exc.start}); save the table as UTF-8 "
                             "(spreadsheets: 'CSV UTF-8')") from None


def sniff_table(text: str, *, path) -> tuple[str, str]:
    """Delimiter and decimal mark of a delimited text table.

    :class:`csv.Sniffer` proposes the delimiter among ``, ; TAB |``; it is kept when the
    header and the first rows split into the same number (> 1) of fields, else the
    candidate that does so with the most fields is taken.  The decimal mark is a comma
    when the delimiter is not a comma and some cell looks like ``12,5`` while none looks
    like ``12.5``.
    """
    lines = [ln for ln in text.splitlines() if ln.strip()][:50]
    if not lines:
        raise FileInputError(path, "empty file; expected a header row and sample rows")
    candidates = [",", ";", "\t", "|"]

    def consistent(d):
        counts = {len(r) for r in csv.reader(lines, delimiter=d)}
        return len(counts) == 1 and counts.pop() > 1

    try:
        proposed = csv.Sniffer().sniff("\n".join(lines), delimiters="".join(candidates)).delimiter
    except csv.Error:
        proposed = None
    if proposed is not None and consistent(proposed):
        delim = proposed
    else:
        ok = [d for d in candidates if consistent(d)]
        if not ok:  # a ragged row: take the delimiter that splits the header most; the row check names the row
            width = {d: len(next(csv.reader(lines[:1], delimiter=d))) for d in candidates}
            ok = [d for d in candidates if width[d] > 1 and width[d] == max(width.values())][:1]
        if not ok:
            raise FileInputError(path, "cannot tell the field delimiter: rows have differing numbers of fields "
                                 "for each of , ; tab | (check the file is one table with a header row)")
        delim = max(ok, key=lambda d: len(next(csv.reader(lines[:1], delimiter=d))))
    decimal = "."
    if delim != ",":
        cells = [c.strip() for r in csv.reader(lines[1:], delimiter=delim) for c in r]
        commas = any(_DECIMAL_COMMA.match(c) for c in cells)
        dots = any(re.match(r"^[+-]?\d+\.\d+$", c) for c in cells)
        if commas and dots:
            raise FileInputError(path, "mixes decimal commas (0,21) and decimal points (0.21); use one")
        if commas:
            decimal = ","
    return delim, decimal


def _columns(header, entry, *, path, survey_path, where):
    """(x index, y index, quantity columns [(index, name, base, unit)], texture index, ignored names)."""
    cols = [_parse_header(h, path=path) for h in header]
    rename = {file_name.strip(): ours for ours, file_name in entry.columns.items()}
    for i, h in enumerate(header):
        mapped = rename.get(h.strip(), rename.get(cols[i][0]))
        if mapped is not None:
            cols[i] = (mapped, cols[i][1])
    present = {h.strip() for h in header} | {c[0] for c in (_parse_header(h, path=path) for h in header)}
    missing = [f for f in rename if f not in present]
    if missing:
        raise fail(survey_path, f"{where} columns", f"{path.name} has no column {missing[0]!r} "
                   f"(its columns: {', '.join(h.strip() for h in header)})")
    names = [c[0] for c in cols]
    for need in (entry.x_column, entry.y_column):
        if need not in names:
            raise FileInputError(path, f"missing coordinate column {need!r} (columns: {', '.join(names)})",
                                 row=1, field=need)
    quantity_cols, ignored, texture = [], [], None
    for i, (name, unit) in enumerate(cols):
        if name in (entry.x_column, entry.y_column) or name.lower() in _SILENT:
            continue
        if name.lower() == "texture":
            texture = i
            continue
        base = name[: -len(_SD_SUFFIX)] if name.endswith(_SD_SUFFIX) else name
        if base not in QUANTITIES:
            allowed = list(QUANTITIES) + [q + _SD_SUFFIX for q in QUANTITIES]
            near = next(iter(difflib.get_close_matches(name, allowed, n=1, cutoff=0.8)), None)  # a likely typo
            ignored.append(header[i].strip() + (f" (did you mean '{near}'?)" if near else ""))
            continue
        if unit is not None:
            try:
                parse_quantity(f"1 {unit}", QUANTITIES[base].kind, default_unit=unit, name=name)
            except InputError:
                raise FileInputError(path, f"cannot read unit {unit!r} as a {QUANTITIES[base].kind}",
                                     row=1, field=header[i].strip()) from None
        quantity_cols.append((i, name, base, unit))
    if not any(not n.endswith(_SD_SUFFIX) for _, n, _, _ in quantity_cols) and texture is None:
        raise FileInputError(path, f"no soil quantity columns; give at least one of {', '.join(QUANTITIES)} "
                             "(or map the file's names in the survey file: columns = {moisture = 'VWC'})", row=1)
    return names.index(entry.x_column), names.index(entry.y_column), quantity_cols, texture, ignored


def _number(raw: str, decimal: str) -> float:
    return float(raw.replace(",", ".") if decimal == "," else raw)


def read_samples(entry, *, survey_path: Path, where: str) -> SampleSet:
    """Read the table named by ``entry`` (a validated :class:`~subsurf.site.schema.Samples`).

    ``where`` is the entry's key path in the survey file (``[[soil.samples]] no. 1``).
    """
    from ..ground.presets import texture_preset
    from .textures_usda import resolve_texture

    path = (survey_path.parent / entry.file).resolve()
    crs = read_crs(entry.crs, path=survey_path, field=f"{where} crs")
    text = _read_text(path, survey_path=survey_path, field=f"{where} file")
    delim, decimal = sniff_table(text, path=path)
    table = list(csv.reader(text.splitlines(), delimiter=delim))
    header, body = table[0], table[1:]
    ix, iy, quantity_cols, itex, ignored = _columns(header, entry, path=path, survey_path=survey_path,
                                                    where=where)
    if not body:
        raise FileInputError(path, "no sample rows after the header")
    xs, ys, rows, blanks, skipped = [], [], [], [], []
    vals: dict[str, list] = {n: [] for _, n, _, _ in quantity_cols}
    tex_sand, tex_clay = [], []
    for r, line in enumerate(body, start=2):
        if not any(c.strip() for c in line):
            continue
        if len(line) != len(header):
            raise FileInputError(path, f"expected {len(header)} values, found {len(line)}", row=r)
        coord = []
        for idx, key in ((ix, entry.x_column), (iy, entry.y_column)):
            raw = line[idx].strip()
            if raw.lower() in MISSING:
                coord = None
                break
            try:
                v = _number(raw, decimal)
            except ValueError:
                raise FileInputError(path, f"cannot read coordinate {raw!r} as a number", row=r, field=key) from None
            if not math.isfinite(v):
                raise FileInputError(path, f"coordinate must be finite, got {raw!r}", row=r, field=key)
            coord.append(v)
        if coord is None:
            skipped.append(r)
            continue
        row_blank = []
        for i, name, base, unit in quantity_cols:
            raw = line[i].strip()
            if raw.lower() in MISSING:
                row_blank.append(header[i].strip())
                vals[name].append(0.0 if name.endswith(_SD_SUFFIX) else np.nan)
                continue
            try:
                num = _number(raw, decimal)
            except ValueError:
                raise FileInputError(path, f"cannot read {raw!r} as a number"
                                     + (" (the file uses decimal commas)" if decimal == "," else ""),
                                     row=r, field=header[i].strip()) from None
            if not math.isfinite(num):
                raise FileInputError(path, f"value must be finite, got {raw!r}", row=r, field=header[i].strip())
            shown = repr(num)
            is_sd = name.endswith(_SD_SUFFIX)
            if unit is None:
                v = _quantity(base, num, path=path, field=header[i].strip(), row=r)
            else:
                v = _quantity(base, f"{shown} {unit}", path=path, field=header[i].strip(), row=r)
                if is_sd and QUANTITIES[base].kind == "temperature":  # a temperature spread is a difference
                    v -= _quantity(base, f"0 {unit}", path=path, field=name, row=r)
            _check_value(base, v, path=path, field=header[i].strip(), row=r, sd=is_sd)
            vals[name].append(v)
        if itex is not None:
            raw = line[itex].strip()
            if raw.lower() in MISSING:
                tex_sand.append(np.nan)
                tex_clay.append(np.nan)
            else:
                try:
                    preset = texture_preset(resolve_texture(raw))
                except InputError as exc:
                    raise FileInputError(path, str(exc), row=r, field=header[itex].strip()) from None
                tex_sand.append(preset["sand"])
                tex_clay.append(preset["clay"])
        if row_blank:
            blanks.append(f"row {r} ({', '.join(row_blank)})")
        xs.append(coord[0])
        ys.append(coord[1])
        rows.append(r)
    if not rows:
        raise FileInputError(path, "no sample rows with coordinates")
    values = {n: np.asarray(v, dtype=float) for n, v in vals.items() if not n.endswith(_SD_SUFFIX)}
    sds = {n[: -len(_SD_SUFFIX)]: np.asarray(v, dtype=float) for n, v in vals.items() if n.endswith(_SD_SUFFIX)}
    for base in sds:
        if base not in values:
            raise FileInputError(path, f"column '{base}{_SD_SUFFIX}' has no matching '{base}' column",
                                 row=1, field=f"{base}{_SD_SUFFIX}")
    if itex is not None:
        for q, col in (("sand", tex_sand), ("clay", tex_clay)):
            given = values.get(q)
            col = np.asarray(col, dtype=float)
            values[q] = col if given is None else np.where(np.isfinite(given), given, col)
    for q, v in values.items():
        if not np.any(np.isfinite(v)):
            raise FileInputError(path, f"column {q!r} has no values (every cell is blank)", field=q)
    if xs:
        check_lonlat_under_projected(path, (min(xs), min(ys), max(xs), max(ys)), crs,
                                     where=f"the survey ({where} crs)")
    _report(path, delim=delim, decimal=decimal, ignored=ignored, blanks=blanks, skipped=skipped)
    return SampleSet(path=path, crs=crs, x=np.asarray(xs), y=np.asarray(ys), rows=np.asarray(rows),
                     values=values, sd=sds, delimiter=delim, decimal=decimal,
                     ignored=tuple(i.split(" (")[0] for i in ignored))


def _report(path, *, delim, decimal, ignored, blanks, skipped) -> None:
    if delim != "," or decimal != ".":
        shown = {"\t": "tab", ";": "';'", "|": "'|'", ",": "','"}[delim]
        note(f"{path.name}: fields separated by {shown}" + (", decimal commas" if decimal == "," else ""))
    if ignored:
        note(f"{path.name}: columns not used (not soil quantities): {', '.join(ignored)}")
    if blanks:
        note(f"{path.name}: blank or missing cells read as missing for that quantity of that sample: "
             + "; ".join(blanks))
    if skipped:
        note(f"{path.name}: rows without coordinates skipped: {', '.join(map(str, skipped))}")
