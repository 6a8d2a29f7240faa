"""Safe output writing: temporary name then rename, no silent overwrite, usual permissions."""

from __future__ import annotations

import os
import stat

import pytest

from subsurf.errors import OutputExistsError
from subsurf.io.outputs import CAUTION, Column, atomic_path, atomic_write_text, format_table


def test_atomic_write_refuses_existing_without_force(tmp_path):
    """An existing output is left untouched unless force is given."""
    target = tmp_path / "out.csv"
    target.write_text("keep")
    with pytest.raises(OutputExistsError, match="--force"):
        atomic_write_text(target, "new")
    assert target.read_text() == "keep"
    atomic_write_text(target, "new", force=True)
    assert target.read_text() == "new"


def test_failed_write_leaves_nothing(tmp_path):
    """If the writer raises, neither the output nor a temporary file remains."""
    target = tmp_path / "out.nc"
    with pytest.raises(RuntimeError):
        with atomic_path(target) as tmp:
            tmp.write_text("half")
            raise RuntimeError("disk full")
    assert list(tmp_path.iterdir()) == []


def test_output_permissions_follow_umask(tmp_path):
    """Outputs get 0666 & ~umask (readable by others' GIS tools), not mkstemp's private 0600."""
    old = os.umask(0o022)
    try:
        p = atomic_write_text(tmp_path / "a.txt", "x")
    finally:
        os.umask(old)
    assert stat.S_IMODE(os.stat(p).st_mode) == 0o644


def test_caution_names_the_essentials():
    """The caution says estimates are not locations, defers to local regulations and licensing."""
    text = CAUTION.lower()
    for phrase in ("not locations", "local regulations", "licens", "local codes"):
        assert phrase in text


def test_format_table_renders_units_and_missing_values():
    """Headers carry units in parentheses; None and NaN render as '-'."""
    out = format_table([{"a": 1.23456, "b": None}, {"a": float("nan"), "b": "x"}],
                       [Column("a", "depth", "m", ".2f"), Column("b", "note")])
    lines = out.splitlines()
    assert "depth (m)" in lines[0]
    assert "1.23" in lines[2] and "-" in lines[2]
