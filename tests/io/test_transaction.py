"""Output transactions: staged, claimed, committed as one, rolled back, recovered after a kill."""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap

import pytest

from subsurf.errors import OutputBusyError, OutputError, OutputExistsError, ResourceLimitError
from subsurf.io import preflight
from subsurf.io.manifest import MANIFEST_NAME, check_output_folder, read_manifest
from subsurf.io.transaction import STAGING_PREFIX, OutputTransaction, stale_staging


def _listing(folder):
    return sorted(p.relative_to(folder).as_posix() for p in folder.rglob("*"))


def test_files_appear_only_at_commit(tmp_path):
    """Staged files are invisible at their destination until the block ends."""
    txn = OutputTransaction("t")
    a, b = txn.file(tmp_path / "a.csv"), txn.file(tmp_path / "b.json")
    with txn:
        a.write_text("1")
        b.write_text("2")
        top = os.listdir(tmp_path)
        assert len(top) == 1 and top[0].startswith(STAGING_PREFIX)
        assert not (tmp_path / "a.csv").exists()
    assert _listing(tmp_path) == ["a.csv", "b.json"]
    assert (tmp_path / "b.json").read_text() == "2"


def test_failure_inside_leaves_nothing_and_keeps_old_files(tmp_path):
    """An exception in the block removes the staging; an existing file stays byte-identical."""
    (tmp_path / "a.csv").write_bytes(b"old")
    txn = OutputTransaction("t", force=True)
    a, _ = txn.file(tmp_path / "a.csv"), txn.file(tmp_path / "b.csv")
    with pytest.raises(RuntimeError), txn:
        a.write_text("new")
        raise RuntimeError("boom")
    assert _listing(tmp_path) == ["a.csv"]
    assert (tmp_path / "a.csv").read_bytes() == b"old"


def test_existing_file_refused_without_force(tmp_path):
    """An existing output is refused before the block runs."""
    (tmp_path / "a.csv").write_text("x")
    txn = OutputTransaction("t")
    txn.file(tmp_path / "a.csv")
    ran = []
    with pytest.raises(OutputExistsError, match="a.csv"), txn:
        ran.append(1)
    assert not ran and _listing(tmp_path) == ["a.csv"]


@pytest.mark.parametrize("case", ["missing-parent", "parent-is-file", "dest-is-dir", "symlink", "device"])
def test_wrong_kind_of_destination_refused(tmp_path, case):
    """Missing folder, a file where a folder is needed, a folder where a file is, links and devices."""
    (tmp_path / "f").write_text("x")
    (tmp_path / "d").mkdir()
    os.symlink(tmp_path / "nowhere", tmp_path / "link")
    dest = {"missing-parent": tmp_path / "no" / "a.csv", "parent-is-file": tmp_path / "f" / "a.csv",
            "dest-is-dir": tmp_path / "d", "symlink": tmp_path / "link", "device": "/dev/null"}[case]
    before = _listing(tmp_path)
    txn = OutputTransaction("t", force=True)
    txn.file(dest)
    with pytest.raises((OutputError, OutputExistsError), match=str(dest).split("/")[-1]):
        txn.begin()
    assert _listing(tmp_path) == before


def test_folder_output_gets_manifest_and_replaces_earlier_output_whole(tmp_path):
    """A folder is moved in with its manifest; --force replaces an earlier one atomically."""
    out = tmp_path / "maps"
    for content, force in (("first", False), ("second", True)):
        txn = OutputTransaction("map", force=force)
        staged = txn.folder(out, own=["*.txt", "sub/*.txt"])
        with txn:
            (staged / "a.txt").write_text(content)
            (staged / "sub").mkdir()
            (staged / "sub" / "b.txt").write_text(content)
        assert (out / "a.txt").read_text() == content
    ok, why = check_output_folder(out)
    assert ok, why
    doc = read_manifest(out)
    assert [e["path"] for e in doc["files"]] == ["a.txt", "sub/b.txt"] and doc["command"] == "map"
    assert _listing(tmp_path) == ["maps", "maps/a.txt", "maps/sub", "maps/sub/b.txt", f"maps/{MANIFEST_NAME}"]


def test_folder_with_foreign_files_is_merged_into_not_replaced(tmp_path):
    """A folder holding other files keeps them; only the command's own files are written."""
    out = tmp_path / "results"
    out.mkdir()
    (out / "notes.docx").write_bytes(b"mine")
    txn = OutputTransaction("map")
    staged = txn.folder(out, own=["*.txt"])
    with txn:
        (staged / "a.txt").write_text("x")
    assert (out / "notes.docx").read_bytes() == b"mine"
    assert check_output_folder(out)[0]
    txn = OutputTransaction("demo")
    txn.folder(out, own=["*.txt"], foreign_ok=False)
    with pytest.raises(OutputExistsError, match="notes.docx"):
        txn.begin()


def test_incomplete_folder_is_told_apart(tmp_path):
    """A folder without manifest, or with a file changed, reads as incomplete."""
    out = tmp_path / "o"
    txn = OutputTransaction("map")
    staged = txn.folder(out)
    with txn:
        (staged / "a.txt").write_text("x")
    (out / "a.txt").write_text("y")
    assert not check_output_folder(out)[0]
    (out / MANIFEST_NAME).unlink()
    assert "incomplete" in check_output_folder(out)[1]


def test_second_writer_refused_while_first_is_live(tmp_path):
    """Two transactions on one destination: the second refuses at once, naming the first run."""
    first = OutputTransaction("map")
    first.folder(tmp_path / "maps")
    second = OutputTransaction("map", force=True)
    second.folder(tmp_path / "maps")
    with first:
        with pytest.raises(OutputBusyError, match=r"maps is being written by another subsurf run.*pid"):
            second.begin()
        other = OutputTransaction("depth")  # another destination in the same folder is fine
        other.file(tmp_path / "x.csv")
        with other as o:
            o._targets[0].staged.write_text("1")
        (first._targets[0].staged / "a").write_text("1")
    assert sorted(os.listdir(tmp_path)) == ["maps", "x.csv"]


_KILLED = textwrap.dedent("""
    import os, sys
    from subsurf.io.transaction import OutputTransaction
    txn = OutputTransaction("map", force=True)
    st = txn.folder(sys.argv[1])
    f = txn.file(sys.argv[2])
    txn.begin()
    (st / "a.txt").write_text("new")
    f.write_text("new")
    if sys.argv[3] == "commit":  # die in the middle of the moves: after the folder, before the file
        import subsurf.io.transaction as T
        real = T.OutputTransaction._move
        def move(self, t, undo):
            if t.kind == "file":
                os._exit(9)
            real(self, t, undo)
        T.OutputTransaction._move = move
        txn.commit()
    os._exit(9)
""")


@pytest.mark.parametrize("moment", ["staging", "commit"])
def test_killed_run_is_cleaned_and_rolled_back_by_the_next(tmp_path, moment):
    """A run killed while staging or half-way through its moves: the next run restores the old state."""
    out, f = tmp_path / "maps", tmp_path / "summary.txt"
    out.mkdir()
    (out / "a.txt").write_text("old")
    f.write_text("old")
    subprocess.run([sys.executable, "-c", _KILLED, str(out), str(f), moment], check=False)
    assert len(stale_staging(tmp_path)) == 1
    if moment == "commit":
        assert (out / "a.txt").read_text() == "new"  # the folder had moved in before the kill
    txn = OutputTransaction("depth")
    txn.file(tmp_path / "other.csv")
    with txn as t:
        t._targets[0].staged.write_text("1")
    assert any("interrupted run" in n for n in txn.notes)
    assert sorted(os.listdir(tmp_path)) == ["maps", "other.csv", "summary.txt"]
    assert (out / "a.txt").read_text() == "old" and f.read_text() == "old"


def test_free_space_and_resource_limits():
    """Preflight refuses more disk than is free, and memory/time beyond the stated limits unless allowed."""
    with pytest.raises(OutputError, match="free"):
        preflight.check_free_space("/", 1e18)
    est = preflight.layered_depth_estimate(draws=10**12, picks=1, layers=2)
    with pytest.raises(ResourceLimitError, match="--allow-large"):
        preflight.check_estimate(est)
    assert preflight.check_estimate(est, allow=True) is est
    small = preflight.layered_depth_estimate(draws=2000, picks=100, layers=3)
    assert preflight.check_estimate(small).memory_bytes < 1e8


def test_journal_names_the_run(tmp_path):
    """The staging journal names the command, pid and destinations (what a busy refusal quotes)."""
    txn = OutputTransaction("region")
    txn.file(tmp_path / "m.nc")
    with txn as t:
        stage = next(tmp_path.glob(STAGING_PREFIX + "*"))
        j = json.loads((stage / "journal.json").read_text())
        assert j["command"] == "region" and j["pid"] == os.getpid() and j["destinations"] == [str(tmp_path / "m.nc")]
        t._targets[0].staged.write_text("1")


def test_optional_file_left_unwritten(tmp_path):
    """An optional output the command does not write is no error; with force an earlier file of that name
    is removed at commit (no stale sidecar), and kept when the run fails."""
    (tmp_path / "a.prj").write_text("old")
    txn = OutputTransaction("t", force=True)
    a, b = txn.file(tmp_path / "a.csv"), txn.file(tmp_path / "a.prj", optional=True)
    with pytest.raises(RuntimeError), txn:
        a.write_text("1")
        raise RuntimeError("boom")
    assert _listing(tmp_path) == ["a.prj"] and (tmp_path / "a.prj").read_text() == "old"
    txn = OutputTransaction("t", force=True)
    a, b = txn.file(tmp_path / "a.csv"), txn.file(tmp_path / "a.prj", optional=True)
    with txn:
        a.write_text("1")
    assert _listing(tmp_path) == ["a.csv"]
    txn = OutputTransaction("t")
    a, b = txn.file(tmp_path / "b.csv"), txn.file(tmp_path / "b.prj", optional=True)
    with txn:
        a.write_text("2")
        b.write_text("crs")
    assert _listing(tmp_path) == ["a.csv", "b.csv", "b.prj"]


def _gis_folder(out, *, foreign: bool):
    """An earlier output with GDAL's files beside its raster (statistics, overviews) and, if ``foreign``,
    files of the user's own: notes, and a PAM sidecar of a raster that is not ours."""
    out.mkdir()
    (out / "a.tif").write_bytes(b"old pixels")
    (out / "a.tif.aux.xml").write_text("<PAMDataset>old statistics</PAMDataset>")
    (out / "a.tif.ovr").write_bytes(b"old overviews")
    if foreign:
        (out / "notes.docx").write_bytes(b"mine")
        (out / "mine.dat.aux.xml").write_text("<PAMDataset>mine</PAMDataset>")


def test_gis_sidecars_of_own_files_are_own(tmp_path):
    """A folder of own files plus GDAL's sidecars of them is an earlier output: replaced whole, sidecars gone."""
    out = tmp_path / "maps"
    _gis_folder(out, foreign=False)
    txn = OutputTransaction("demo", force=True)
    txn.folder(out, own=["*.tif"], foreign_ok=False)
    with pytest.raises(OutputExistsError, match="a.tif.aux.xml"):  # without sidecars: not ours
        txn.begin()
    txn = OutputTransaction("demo", force=True)
    staged = txn.folder(out, own=["*.tif"], foreign_ok=False, sidecars=(".aux.xml", ".ovr"))
    with txn:
        (staged / "a.tif").write_bytes(b"new pixels")
    assert _listing(out) == ["a.tif", MANIFEST_NAME]


def test_merge_removes_sidecars_of_replaced_files_and_keeps_the_users(tmp_path):
    """Merged into a folder holding the user's files: the replaced raster's sidecars go, the user's stay."""
    out = tmp_path / "maps"
    _gis_folder(out, foreign=True)
    txn = OutputTransaction("map", force=True)
    staged = txn.folder(out, own=["*.tif"], sidecars=(".aux.xml", ".ovr"))
    with txn:
        (staged / "a.tif").write_bytes(b"new pixels")
    assert _listing(out) == ["a.tif", "mine.dat.aux.xml", "notes.docx", MANIFEST_NAME]
    assert (out / "a.tif").read_bytes() == b"new pixels" and (out / "notes.docx").read_bytes() == b"mine"
    assert check_output_folder(out)[0]


def test_failed_merge_puts_removed_sidecars_back(tmp_path, monkeypatch):
    """A commit failing after the sidecars were removed undoes everything: old raster and its sidecars back."""
    import errno

    import subsurf.io.transaction as T

    out = tmp_path / "maps"
    _gis_folder(out, foreign=True)
    before = {p: (out / p).read_bytes() for p in _listing(out)}

    def full(*args):
        raise OSError(errno.EIO, "I/O error", str(out / "a.tif"))

    monkeypatch.setattr(T, "merge_one", full)
    txn = OutputTransaction("map", force=True)
    staged = txn.folder(out, own=["*.tif"], sidecars=(".aux.xml", ".ovr"))
    with pytest.raises(OutputError, match="nothing was changed"), txn:
        (staged / "a.tif").write_bytes(b"new pixels")
    assert {p: (out / p).read_bytes() for p in _listing(out)} == before


_KILLED_MERGE = textwrap.dedent("""
    import os, sys
    import subsurf.io.transaction as T
    txn = T.OutputTransaction("map", force=True)
    st = txn.folder(sys.argv[1], own=["*.tif"], sidecars=(".aux.xml", ".ovr"))
    txn.begin()
    (st / "a.tif").write_bytes(b"new pixels")
    T.merge_one = lambda *a: os._exit(9)  # die after the stale sidecars were removed, before the raster moves
    txn.commit()
""")


def test_killed_merge_has_its_sidecars_restored_by_the_next_run(tmp_path):
    """Killed after removing the sidecars: the next run beside it rolls the journal back, sidecars included."""
    out = tmp_path / "maps"
    _gis_folder(out, foreign=True)
    before = {p: (out / p).read_bytes() for p in _listing(out)}
    subprocess.run([sys.executable, "-c", _KILLED_MERGE, str(out)], check=False)
    assert not (out / "a.tif.aux.xml").exists()  # the kill came after the removal
    txn = OutputTransaction("depth")
    txn.file(tmp_path / "other.csv")
    with txn as t:
        t._targets[0].staged.write_text("1")
    assert any("rolled back" in n for n in txn.notes)
    assert {p: (out / p).read_bytes() for p in _listing(out)} == before
