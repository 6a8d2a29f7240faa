"""Staging folders of output transactions: journal, lock, stale detection, rollback of a killed commit,
and holding signals back while a commit moves files.

The helpers behind :mod:`subsurf.io.transaction`; see its docstring for the protocol.
"""

from __future__ import annotations

import contextlib
import ctypes
import errno
import fcntl
import fnmatch
import json
import os
import shutil
import time
from pathlib import Path

from ..errors import OutputBusyError
from .manifest import MANIFEST_NAME
from .preflight import os_error_message

STAGING_PREFIX = ".subsurf-staging-"
JOURNAL, LOCK = "journal.json", "lock"

#: set by :func:`hold_signals`; the command line's signal handler defers a signal while it is > 0
_hold = {"depth": 0, "pending": None}


class Interrupted(KeyboardInterrupt):
    """SIGINT, SIGTERM or SIGHUP arrived; everything staged is rolled back on the way out."""

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum


def defer_signal(signum: int) -> bool:
    """Called by a signal handler: True (and remembered) if a commit is under way and the signal must wait."""
    if _hold["depth"] > 0:
        _hold["pending"] = _hold["pending"] or signum
        return True
    return False


@contextlib.contextmanager
def hold_signals():
    """Hold SIGINT/SIGTERM/SIGHUP (through :func:`defer_signal`) in the block; raise one that came, after it."""
    _hold["depth"] += 1
    try:
        yield
    finally:
        _hold["depth"] -= 1
        pending, _hold["pending"] = _hold["pending"], None
    if pending is not None and _hold["depth"] == 0:
        raise Interrupted(pending)


def fsync_dir(path: Path) -> None:
    """Flush a folder's entries (renames) to disk where the OS allows it."""
    with contextlib.suppress(OSError):
        fd = os.open(path, os.O_RDONLY | os.O_DIRECTORY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def exchange(a: Path, b: Path) -> bool:
    """Swap two paths atomically (Linux renameat2 RENAME_EXCHANGE); False where unsupported."""
    try:
        fn = ctypes.CDLL(None, use_errno=True).renameat2
    except (AttributeError, OSError):  # not glibc >= 2.28 / not Linux
        return False
    at_fdcwd, rename_exchange = -100, 2
    if fn(at_fdcwd, os.fsencode(a), at_fdcwd, os.fsencode(b), rename_exchange) == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP, errno.EOPNOTSUPP):
        return False
    raise OSError(err, os.strerror(err), str(b))


def files_under(folder: Path, *, limit: int = 20000) -> list[str]:
    """Files (and links) under ``folder``, relative and sorted, staging folders left out; at most ``limit``."""
    found: list[str] = []
    for root, dirs, files in os.walk(folder):
        rel_root = Path(root).relative_to(folder)
        dirs[:] = sorted(d for d in dirs if not (rel_root == Path(".") and d.startswith(STAGING_PREFIX))
                         and not os.path.islink(os.path.join(root, d)))
        found += [(rel_root / f).as_posix() for f in files]
        found += [(rel_root / d).as_posix() for d in os.listdir(root)
                  if os.path.islink(os.path.join(root, d)) and os.path.isdir(os.path.join(root, d))]
        if len(found) > limit:
            break
    return sorted(found)


def read_journal(stage: Path) -> dict:
    try:
        return json.loads((stage / JOURNAL).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}


def write_journal(stage: Path, data: dict) -> None:
    tmp = stage / (JOURNAL + ".tmp")
    with open(tmp, "w", encoding="utf-8") as fh:
        json.dump(data, fh)
        fh.flush()
        os.fsync(fh.fileno())
    os.replace(tmp, stage / JOURNAL)


def lock_free(stage: Path) -> int | None:
    """An fd holding the stage's lock if its owner is gone (stale), else None (live or unreadable)."""
    try:
        fd = os.open(stage / LOCK, os.O_RDWR)
    except FileNotFoundError:  # its run died between creating the folder and its lock (both under the folder lock)
        return os.open(stage, os.O_RDONLY)
    except OSError:
        return None
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
    except OSError:
        os.close(fd)
        return None
    return fd


def stale_staging(folder) -> list[Path]:
    """Staging folders in ``folder`` whose run has ended without finishing (their lock is free)."""
    found = []
    for stage in sorted(Path(folder).glob(STAGING_PREFIX + "*")):
        if stage.is_dir() and not stage.is_symlink():
            fd = lock_free(stage)
            if fd is not None:
                os.close(fd)
                found.append(stage)
    return found


def undo(journal: dict, stage: Path) -> int:
    """Roll back the moves an interrupted commit made (from its journal); returns how many."""
    undone = 0
    for m in reversed(journal.get("moves", [])):
        dest, staged = Path(m["dest"]), stage / m["staged"]
        backup = stage / m["backup"] if m.get("backup") else None
        if m["mode"] == "skip":
            continue
        if m["mode"] == "remove":  # an optional file not written this time: its earlier file was removed
            if backup is not None and backup.exists() and not os.path.lexists(dest):
                os.replace(backup, dest)
                undone += 1
            continue
        if m["mode"] == "merge":
            for rel in reversed(m["files"]):
                d, b = dest / rel, backup / rel
                if not (staged / rel).exists() and os.path.lexists(d):
                    os.replace(b, d) if b.exists() else os.unlink(d)
                    undone += 1
            for rel in m.get("stale", []):  # sidecars removed beside replaced files: back
                if os.path.lexists(backup / rel) and not os.path.lexists(dest / rel):
                    os.replace(backup / rel, dest / rel)
                    undone += 1
        elif m["kind"] == "file":
            if staged.exists() or not os.path.lexists(dest):
                continue  # not moved yet
            os.replace(backup, dest) if backup is not None and backup.exists() else os.unlink(dest)
            undone += 1
        elif manifest_id(dest) == journal.get("id"):
            if backup is not None and backup.exists():  # two-rename replace
                os.rename(dest, staged)
                os.rename(backup, dest)
            elif staged.exists():  # exchanged: staged holds the earlier folder
                if not exchange(staged, dest):
                    os.rename(dest, stage / "undone")
                    os.rename(staged, dest)
            else:
                os.rename(dest, staged)
            undone += 1
    return undone


def manifest_id(folder: Path) -> str | None:
    try:
        return json.loads((folder / MANIFEST_NAME).read_text(encoding="utf-8")).get("transaction")
    except (OSError, ValueError, AttributeError):
        return None


def clean_stale(folder: Path, claimed: set[Path], notes: list[str], busy_command: str) -> None:
    """Remove stale staging folders in ``folder`` (rolling back a half-done commit); refuse if a live
    run claims one of ``claimed``."""
    for stage in sorted(folder.glob(STAGING_PREFIX + "*")):
        if not stage.is_dir() or stage.is_symlink():
            continue
        journal = read_journal(stage)
        fd = lock_free(stage)
        if fd is None:
            theirs = {Path(d) for d in journal.get("destinations", [])}
            clash = sorted(theirs & claimed)
            if clash:
                when = time.strftime("%H:%M:%S", time.localtime(journal.get("started", 0)))
                raise OutputBusyError(
                    f"{clash[0]} is being written by another subsurf run (subsurf {journal.get('command', '?')}, "
                    f"pid {journal.get('pid', '?')}, started {when}); wait for it to finish or choose another "
                    f"output for subsurf {busy_command}")
            continue
        try:
            undone = undo(journal, stage) if journal.get("state") == "committing" else 0
            shutil.rmtree(stage)
        except OSError as exc:
            notes.append(f"could not remove {stage} left by an interrupted run ({os_error_message(exc)}); "
                         "remove it by hand")
            continue
        finally:
            os.close(fd)
        what = f"subsurf {journal.get('command', '?')}, pid {journal.get('pid', '?')}"
        notes.append(f"removed {stage.name} in {folder}, the unfinished output of an interrupted run ({what})"
                     + (f"; its half-done commit was rolled back ({undone} moves)" if undone else ""))


def move_file(staged: Path, dest: Path, backup: Path, *, replace: bool, optional: bool, undo: list) -> None:
    """Move one staged file onto ``dest`` (an earlier file kept as a hard link in ``backup``), undoably.

    An ``optional`` file that was not staged removes an earlier ``dest`` when replacing
    (no stale file of an earlier run is left beside the new outputs).
    """
    if optional and not os.path.lexists(staged):
        if replace and os.path.lexists(dest):
            os.link(dest, backup)
            os.unlink(dest)
            undo.append(lambda: os.replace(backup, dest))
    elif replace and os.path.lexists(dest):
        os.link(dest, backup)
        os.replace(staged, dest)
        undo.append(lambda: os.replace(backup, dest))
    else:
        os.replace(staged, dest)
        undo.append(lambda: os.unlink(dest))


def merge_one(staged: Path, dest: Path, rel: str, backup: Path, undo: list) -> None:
    """Move one file of a staged folder into an existing folder (earlier file kept as a hard link in ``backup``)."""
    src, dst, bak = staged / rel, dest / rel, backup / rel
    for d in reversed(dst.parents):
        if d != dest and dest in d.parents and not d.exists():
            d.mkdir()
            undo.append(lambda d=d: d.rmdir())
    if os.path.lexists(dst):
        bak.parent.mkdir(parents=True, exist_ok=True)
        os.link(dst, bak)
        os.replace(src, dst)
        undo.append(lambda: os.replace(bak, dst))
    else:
        os.rename(src, dst)
        undo.append(lambda: os.unlink(dst))


def is_own(rel: str, own, sidecars=()) -> bool:
    """Whether ``rel`` is one of a folder output's own files: it matches an ``own`` glob pattern, or it
    is what other software writes beside one of them (an own file's name + one of the ``sidecars`` suffixes,
    e.g. GDAL's ``max_depth__dry__midband-500.tif.aux.xml``)."""
    if any(fnmatch.fnmatchcase(rel, p) for p in own):
        return True
    return any(rel.endswith(s) and any(fnmatch.fnmatchcase(rel[:-len(s)], p) for p in own) for s in sidecars)


def stale_sidecars(dest: Path, written, sidecars) -> list[str]:
    """Sidecars in ``dest`` of the files ``written`` anew (relative paths) that are not written anew
    themselves: they describe the earlier files (GDAL statistics of old pixels), so they go."""
    new = set(written)
    return sorted(f"{rel}{s}" for rel in new for s in sidecars
                  if f"{rel}{s}" not in new and os.path.lexists(dest / f"{rel}{s}"))


def remove_one(dest: Path, rel: str, backup: Path, undo: list) -> None:
    """Remove ``dest/rel``, kept as a hard link in ``backup`` until the commit ends (undoably)."""
    d, b = dest / rel, backup / rel
    b.parent.mkdir(parents=True, exist_ok=True)
    os.link(d, b, follow_symlinks=False)
    os.unlink(d)
    undo.append(lambda: os.replace(b, d))


def disk_full(parents) -> bool:
    """True if one of the folders' file systems is (nearly) full, e.g. after a library's own write error."""
    for parent in parents:
        with contextlib.suppress(OSError):
            st = os.statvfs(parent)
            if st.f_bavail * st.f_frsize < 256 * 1024:
                return True
    return False


#: Lock descriptors this process holds for its output transactions.  A forked child (a figure
#: process, :mod:`.png_split`) closes its copies at once: a child that outlived this process would
#: otherwise keep the output folder locked.
HELD_LOCKS: set[int] = set()


def hold_lock(fd: int) -> int:
    """Lock ``fd`` exclusively (``flock``, blocking) and keep it from forked children; return it."""
    fcntl.flock(fd, fcntl.LOCK_EX)
    HELD_LOCKS.add(fd)
    return fd


def release_lock(fd: int) -> None:
    """Close a descriptor :func:`hold_lock` locked (which releases the lock)."""
    HELD_LOCKS.discard(fd)
    with contextlib.suppress(OSError):
        os.close(fd)


def _drop_locks_in_child() -> None:
    for fd in HELD_LOCKS:
        with contextlib.suppress(OSError):
            os.close(fd)  # this copy only: the lock stays with the parent's descriptor
    HELD_LOCKS.clear()


if hasattr(os, "register_at_fork"):
    os.register_at_fork(after_in_child=_drop_locks_in_child)
