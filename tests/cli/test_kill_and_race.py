"""Kills, races, a full disk and a read-only destination: outputs are absent, the previous ones, or complete.

Runs ``subsurf map``, ``demo`` and ``region`` as subprocesses and stops them with SIGKILL,
SIGTERM or SIGHUP at moments told by the staging folder (the transaction's own hidden
folder beside the destination): while computing (staging exists), while writing (a staged
file exists), and at the commit (the staged manifest exists).  Whatever the moment, the
destination must hold nothing, exactly what it held before, or a complete output whose
manifest checks (sizes and SHA-256); the next run beside it removes the stale staging.
"""

from __future__ import annotations

import contextlib
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import pytest
from battery_support import fingerprint, run_subsurf
from example_site import coarse_copy

from subsurf.io.manifest import check_output_folder
from subsurf.io.transaction import MANIFEST_NAME, STAGING_PREFIX

MAP = ["map", "{survey}", "--quiet", "--no-geotiff"]
REGION = ["region", "--synthetic", "600x400", "--target", "planar", "--depth", "1.5", "--chunk", "128", "--quiet"]


def _start(argv, cwd):
    return subprocess.Popen([sys.executable, "-m", "subsurf", *argv], cwd=cwd, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True)


def _staging(folder: Path):
    return [p for p in folder.glob(STAGING_PREFIX + "*") if p.is_dir()]


def _wait_for(proc, folder: Path, moment: str, timeout: float = 120.0) -> bool:
    """Poll until ``moment`` (staging / writing / commit) is seen in ``folder``; False if the run ended first."""
    end = time.monotonic() + timeout
    while time.monotonic() < end and proc.poll() is None:
        for stage in _staging(folder):
            staged = [p for p in stage.iterdir() if p.name[:1].isdigit()]
            if moment == "staging":
                return True
            if moment == "writing" and any(p.is_file() or (p.is_dir() and any(p.iterdir())) for p in staged):
                return True
            if moment == "commit" and any((p / MANIFEST_NAME).exists() for p in staged if p.is_dir()):
                return True
        time.sleep(0.003)
    return False


@pytest.fixture(scope="module", autouse=True)
def _survey(tmp_path_factory):
    """The example site at 3 m cells and 100 draws for every map run here (MAP's {survey}).

    A map still spends seconds computing and then writing (the moments the tests stop it at, and the window
    the race needs), at ~60 % of the CPU of the full-size example (measured: 9.9 s against 17 s per run).
    """
    survey = str(coarse_copy(tmp_path_factory.mktemp("kill-survey"), cell_size="3 m", draws=100))
    MAP[1] = survey
    yield survey
    MAP[1] = "{survey}"


@pytest.fixture(scope="module")
def previous(tmp_path_factory, _survey):
    """Complete earlier outputs of map (a folder) and region (a file), made once."""
    base = tmp_path_factory.mktemp("previous")
    p = run_subsurf([*MAP, "--out", "maps"], base, timeout=400)
    assert p.returncode == 0, p.stderr
    p = run_subsurf([*REGION, "--out", "r.nc"], base, timeout=400)
    assert p.returncode == 0, p.stderr
    return base


def _setup(tmp_path, previous, name, state):
    if state == "previous":
        src = previous / name
        shutil.copytree(src, tmp_path / name) if src.is_dir() else shutil.copy2(src, tmp_path / name)
    return fingerprint(tmp_path)


def _assert_consistent(tmp_path, name, before, *, kind="folder"):
    dest = tmp_path / name
    after = {k: v for k, v in fingerprint(tmp_path).items() if STAGING_PREFIX not in k}
    if after == {k: v for k, v in before.items() if STAGING_PREFIX not in k}:
        return "unchanged"
    if kind == "folder":
        ok, why = check_output_folder(dest)
        assert ok, f"{dest} is neither absent, the previous content, nor complete: {why}"
    else:
        import xarray as xr

        with xr.open_dataset(dest) as ds:
            assert "max_depth" in ds and ds.attrs.get("caution")
    return "complete"


def _next_run_cleans(tmp_path):
    """A later run writing beside a stale staging folder removes it and says so."""
    p = run_subsurf(["depth", "--twt", "25", "--velocity", "0.1", "--out-csv", "later.csv"], tmp_path)
    assert p.returncode == 0, p.stderr
    assert "interrupted run" in p.stderr and not _staging(tmp_path)
    (tmp_path / "later.csv").unlink()


SLOW = pytest.mark.slow  # each case is a full map or region run; a few run by default, the rest with -m slow


@pytest.mark.parametrize(("command", "state", "sig", "moment"), [
    pytest.param("map", "absent", signal.SIGKILL, "staging", marks=SLOW),
    ("map", "absent", signal.SIGTERM, "writing"),
    pytest.param("map", "previous", signal.SIGKILL, "writing", marks=SLOW),
    pytest.param("map", "previous", signal.SIGTERM, "commit", marks=SLOW),
    ("map", "previous", signal.SIGKILL, "commit"),
    pytest.param("map", "absent", signal.SIGHUP, "staging", marks=SLOW),
    ("region", "absent", signal.SIGKILL, "writing"),
    pytest.param("region", "previous", signal.SIGTERM, "writing", marks=SLOW),
])
def test_killed_run_leaves_absent_previous_or_complete(tmp_path, previous, command, state, sig, moment):
    """Whenever the run is stopped, the destination is absent, the previous content, or complete."""
    name = "maps" if command == "map" else "r.nc"
    argv = ([*MAP, "--out", name] if command == "map" else [*REGION, "--out", name]) + ["--force"]
    before = _setup(tmp_path, previous, name, state)
    proc = _start(argv, tmp_path)
    seen = _wait_for(proc, tmp_path, moment)
    with contextlib.suppress(ProcessLookupError):
        proc.send_signal(sig)
    out, err = proc.communicate(timeout=120)
    if seen and proc.returncode not in (0, None) and sig != signal.SIGKILL:
        assert proc.returncode == 128 + sig, err
        assert len(err.strip().splitlines()) == 1 and "interrupted" in err and "Traceback" not in err, err
        assert not _staging(tmp_path), "a caught signal must remove the staging folder"
    _assert_consistent(tmp_path, name, before, kind="folder" if command == "map" else "file")
    if _staging(tmp_path):
        _next_run_cleans(tmp_path)


@pytest.mark.slow
def test_killed_demo_is_absent_or_complete(tmp_path):
    """SIGTERM while the demo writes, then SIGKILL at its commit: never a half-made demo folder."""
    before = fingerprint(tmp_path)
    for sig, moment in ((signal.SIGTERM, "writing"), (signal.SIGKILL, "commit")):
        proc = _start(["demo", "--out", "demo", "--quiet", "--force"], tmp_path)
        _wait_for(proc, tmp_path, moment, timeout=300)
        with contextlib.suppress(ProcessLookupError):
            proc.send_signal(sig)
        proc.communicate(timeout=120)
        state = _assert_consistent(tmp_path, "demo", before)
        if _staging(tmp_path):
            _next_run_cleans(tmp_path)
        before = fingerprint(tmp_path) if state == "complete" else before


def test_two_maps_into_one_folder_do_not_interleave(tmp_path):
    """A second map into a folder being written refuses at once (exit 3, one line); the first completes."""
    first = _start([*MAP, "--out", "maps"], tmp_path)
    assert _wait_for(first, tmp_path, "staging")
    second = run_subsurf([*MAP, "--out", "maps", "--force"], tmp_path)
    assert second.returncode == 3, second.stderr
    assert "being written by another subsurf run" in second.stderr and len(second.stderr.strip().splitlines()) == 1
    _, err = first.communicate(timeout=300)
    assert first.returncode == 0, err
    assert check_output_folder(tmp_path / "maps") == (True, "")
    # both at once: whichever order the claims take, the folder ends consistent
    procs = [_start([*MAP, "--out", "maps", "--force"], tmp_path) for _ in range(2)]
    codes = [p.communicate(timeout=300) and p.returncode for p in procs]
    assert sorted(codes) in ([0, 0], [0, 3]), codes
    assert check_output_folder(tmp_path / "maps") == (True, "") and not _staging(tmp_path)


@contextlib.contextmanager
def _tmpfs(size: str, *, read_only: bool = False):
    if os.geteuid() != 0 or not shutil.which("mount"):
        pytest.skip("the full-disk and read-only tests mount a small tmpfs, which needs root")
    where = Path(tempfile.mkdtemp(prefix="subsurf-tmpfs-"))
    r = subprocess.run(["mount", "-t", "tmpfs", "-o", f"size={size}", "tmpfs", str(where)], capture_output=True,
                       text=True)
    if r.returncode:
        shutil.rmtree(where, ignore_errors=True)
        pytest.skip(f"cannot mount a tmpfs here: {r.stderr.strip()}")
    try:
        yield where
    finally:
        subprocess.run(["umount", str(where)], check=False)
        shutil.rmtree(where, ignore_errors=True)


def test_disk_filling_up_while_writing(tmp_path):
    """The disk fills while map writes: exit 1 naming the folder and the lack of space; nothing is left."""
    with _tmpfs("16m") as disk:
        proc = _start([*MAP, "--out", str(disk / "maps")], tmp_path)
        assert _wait_for(proc, disk, "writing")  # after the preflight's free-space check
        fd = os.open(disk / "filler", os.O_WRONLY | os.O_CREAT, 0o644)
        with contextlib.suppress(OSError):
            while True:
                os.write(fd, b"\0" * 65536)
        os.close(fd)
        _, err = proc.communicate(timeout=300)
        assert proc.returncode == 1, err
        assert len(err.strip().splitlines()) == 1 and "Traceback" not in err, err
        assert str(disk / "maps") in err and "space" in err, err
        assert sorted(os.listdir(disk)) == ["filler"]


def test_read_only_destination_keeps_previous_output(tmp_path, previous):
    """An earlier map on a file system remounted read-only: refused up front, nothing changes."""
    with _tmpfs("8m") as disk:
        shutil.copytree(previous / "maps", disk / "maps")
        subprocess.run(["mount", "-o", "remount,ro", str(disk)], check=True)
        before = fingerprint(disk)
        p = run_subsurf([*MAP, "--out", str(disk / "maps"), "--force"], tmp_path)
        assert p.returncode == 1 and "read-only" in p.stderr and str(disk) in p.stderr, p.stderr
        assert len(p.stderr.strip().splitlines()) == 1
        assert fingerprint(disk) == before
