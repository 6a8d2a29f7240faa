"""Sample tables as users have them (subsurf.site.samples): delimiters, decimal commas, units, blanks, extras."""

from __future__ import annotations

import csv
import io
import subprocess
import sys

import numpy as np
import pytest

from subsurf.errors import FileInputError
from subsurf.site.survey import load_survey
from subsurf.site.vectors import InputNote

E0, N0 = 500_000.0, 5_700_000.0
BASE = f"""
[site]
name = "test box (invented)"
bbox = [{E0}, {N0}, {E0 + 100}, {N0 + 60}]
crs = "EPSG:32631"
[grid]
cell_size = "5 m"
[soil]
texture = "loamy_sand"
[soil.defaults]
moisture = "15 %"
pore_water_ec = "20 mS/m"
[target]
kind = "line"
depth = "1 m"
size = "0.1 m"
material = "metal"
[antennas]
names = ["midband-250"]
"""
PTS = [(E0 + 10, N0 + 10, 20.0, 40.0), (E0 + 50, N0 + 20, 25.0, 45.0), (E0 + 80, N0 + 50, 30.0, 50.0),
       (E0 + 30, N0 + 45, 22.5, 42.0)]


def _survey(tmp_path, csv_text: str, extra: str = "", *, encoding="utf-8") -> object:
    (tmp_path / "s.csv").write_bytes(csv_text.encode(encoding))
    text = BASE + f'\n[[soil.samples]]\nfile = "s.csv"\ncrs = "EPSG:32631"\n{extra}\n'
    (tmp_path / "survey.toml").write_text(text, encoding="utf-8")
    return tmp_path / "survey.toml"


def _table(header, rows, *, delimiter=",", decimal="."):
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=delimiter, lineterminator="\n")
    w.writerow(header)
    for r in rows:
        w.writerow([str(v).replace(".", decimal) if isinstance(v, float) else v for v in r])
    return buf.getvalue()


def _load(path):
    with pytest.warns(InputNote) as caught:
        s = load_survey(path)
    return s, [str(w.message) for w in caught if issubclass(w.category, InputNote)]


def test_semicolon_and_decimal_comma_read_like_the_plain_file(tmp_path):
    """';' + decimal commas (as a comma-decimal-locale spreadsheet saves CSV) give the same samples."""
    header = ["x", "y", "moisture [%]", "pore_water_ec [mS/m]"]
    plain = load_survey(_survey(tmp_path, _table(header, PTS))).samples[0]
    (tmp_path / "b").mkdir()
    s, notes = _load(_survey(tmp_path / "b", _table(header, PTS, delimiter=";", decimal=",")))
    got = s.samples[0]
    np.testing.assert_array_equal(got.x, plain.x)
    np.testing.assert_array_equal(got.values["moisture"], plain.values["moisture"])
    assert (got.delimiter, got.decimal) == (";", ",")
    assert notes == ["s.csv: fields separated by ';', decimal commas"]


def test_tab_separated_detected(tmp_path):
    """Tab-separated text is read (csv.Sniffer), with a note."""
    s, notes = _load(_survey(tmp_path, _table(["x", "y", "moisture"], [p[:2] + (p[2] / 100,) for p in PTS],
                                              delimiter="\t")))
    assert s.samples[0].values["moisture"].tolist() == pytest.approx([0.20, 0.25, 0.30, 0.225])
    assert "tab" in notes[0]


@pytest.mark.parametrize("head,extra", [("moisture (%)", ""), ("VWC [%]", 'columns = { moisture = "VWC" }'),
                                        ("VWC [%]", 'columns = { moisture = "VWC [%]" }'),
                                        ("VWC (%)", 'columns = { moisture = "VWC" }')])
def test_percent_units_in_headers_and_mapping(tmp_path, head, extra):
    """'moisture (%)', 'VWC [%]' (mapped by name with or without its unit) read as percent."""
    text = _table(["x", "y", head], [p[:3] for p in PTS])
    s = load_survey(_survey(tmp_path, text, extra))
    assert s.samples[0].values["moisture"].tolist() == pytest.approx([0.20, 0.25, 0.30, 0.225])


def test_extra_columns_ignored_and_listed_once(tmp_path):
    """A 'date' and an 'operator' column are ignored and named once in one note."""
    rows = [p[:3] + ("2024-05-01", "AB") for p in PTS]
    s, notes = _load(_survey(tmp_path, _table(["x", "y", "moisture [%]", "date", "operator"], rows)))
    assert sorted(s.samples[0].values) == ["moisture"]
    assert notes == ["s.csv: columns not used (not soil quantities): date, operator"]


def test_blank_cells_missing_per_quantity_reported_per_row(tmp_path):
    """A blank moisture cell drops that sample from moisture only; the row is named in the note."""
    rows = [list(p) for p in PTS]
    rows[1][2] = ""
    rows[3][3] = "NA"
    s, notes = _load(_survey(tmp_path, _table(["x", "y", "moisture [%]", "pore_water_ec [mS/m]"], rows)))
    m = s.samples[0].values["moisture"]
    assert np.isnan(m[1]) and np.isfinite(m[[0, 2, 3]]).all()
    assert notes == ["s.csv: blank or missing cells read as missing for that quantity of that sample: "
                     "row 3 (moisture [%]); row 5 (pore_water_ec [mS/m])"]
    # the grid uses the three moisture samples and all four conductivity samples
    from subsurf.site.grid import build_grid, soil_on_grid

    grid = build_grid(s)
    soil = soil_on_grid(s, grid)
    inside = grid["mask"].values == 1
    assert np.isfinite(soil["moisture"].values[inside]).all()  # a NaN sample would poison the spline
    assert np.isfinite(soil["pore_water_ec"].values[inside]).all()


def test_texture_column_with_usda_names(tmp_path):
    """A texture column (USDA names/abbreviations) gives sand and clay per sample."""
    from subsurf.ground.presets import texture_preset

    rows = [p[:3] + (t,) for p, t in zip(PTS, ["SiCL", "sandy loam", "Loam", "LS"])]
    s = load_survey(_survey(tmp_path, _table(["x", "y", "moisture [%]", "texture"], rows)))
    assert s.samples[0].values["clay"].tolist() == [texture_preset(k)["clay"] for k in
                                                    ("silty_clay_loam", "sandy_loam", "loam", "loamy_sand")]


def test_non_utf8_file_refused_naming_the_fix(tmp_path):
    """A Windows-1252 file (a degree sign in a header) is one line asking for UTF-8, not a guess."""
    text = _table(["x", "y", "moisture [%]", "temperature [°C]"], [p[:3] + (11.5,) for p in PTS])
    with pytest.raises(FileInputError, match=r"s\.csv: not UTF-8 text.*CSV UTF-8"):
        load_survey(_survey(tmp_path, text, encoding="cp1252"))


def test_mixed_decimal_marks_refused(tmp_path):
    """A ';' file mixing 0,21 and 0.21 is one line naming the problem."""
    text = "x;y;moisture\n500010;5700010;0,2\n500050;5700020;0.25\n500080;5700050;0,3\n"
    with pytest.raises(FileInputError, match="mixes decimal commas"):
        load_survey(_survey(tmp_path, text))


def test_non_number_still_names_row_and_column(tmp_path):
    """A cell that is not a number (nor a missing marker) names its row and column."""
    rows = [list(p) for p in PTS]
    rows[2][2] = "wet"
    with pytest.raises(FileInputError, match=r"s\.csv, row 4, field 'moisture \[%\]'"):
        load_survey(_survey(tmp_path, _table(["x", "y", "moisture [%]", "pore_water_ec [mS/m]"], rows)))


def test_cli_map_semicolon_file_exit_0_notes_on_stderr(tmp_path):
    """subsurf map on a ';' decimal-comma sample file runs; the note is one stderr line."""
    path = _survey(tmp_path, _table(["x", "y", "moisture [%]", "date"], [p[:3] + ("1.5.24",) for p in PTS],
                                    delimiter=";", decimal=","))
    proc = subprocess.run([sys.executable, "-m", "subsurf", "map", str(path), "--out", str(tmp_path / "out"),
                           "--no-geotiff"], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    assert "note: s.csv: fields separated by ';', decimal commas" in proc.stderr
    assert "note: s.csv: columns not used (not soil quantities): date" in proc.stderr


def test_ragged_row_named(tmp_path):
    """A row with a missing field is named by its line number (the delimiter is still found)."""
    text = "x,y,moisture\n500010,5700010,0.2\n500050,5700020\n500080,5700050,0.3\n500030,5700045,0.25\n"
    with pytest.raises(FileInputError, match=r"s\.csv, row 3: expected 3 values, found 2"):
        load_survey(_survey(tmp_path, text))
