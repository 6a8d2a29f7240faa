"""Every command's outputs as one transaction: checked first, staged, locked, moved into place last.

A command declares its destinations (files and folders), then works inside the
transaction::

    txn = OutputTransaction("map", force=args.force, expected_bytes=estimate)
    staged = txn.folder(args.out, own=MAP_FILES)
    with txn:                      # preflight + claim, before any computation
        compute_and_write(staged)  # everything goes into the hidden staging folder
    # leaving the block commits; an exception (or SIGINT/SIGTERM/SIGHUP) rolls back

How it keeps the promise "nothing lost, nothing half-done":

* **Preflight** (:meth:`OutputTransaction.begin`): each destination's folder exists and is
  a folder, the destination is of the right kind (a file where a file is needed, a folder
  where a folder is), nothing is overwritten without ``force``, symbolic links and special
  files are never replaced, the folder is writable (the staging folder is created there)
  and its file system has room for ``expected_bytes`` (:func:`check_free_space`).
* **Staging**: all outputs are written into one hidden folder ``.subsurf-staging-<id>``
  beside the destinations (one per destination folder, so that the final moves are
  renames within one file system).
* **Lock**: the staging folder holds a lock file under ``fcntl.flock``; a run that finds a
  live staging folder claiming one of its destinations refuses at once with one line
  (:class:`~subsurf.errors.OutputBusyError`) rather than waiting, because a second writer
  would either overwrite the first's fresh result or fail on it after waiting for an
  unknown time.  The claim is made under a short lock on the destination folder itself,
  so two runs cannot both see it free.  The locks vanish with the process (even SIGKILL),
  so a stale staging folder is recognised by its free lock, never by a guessed pid.
* **Commit**: a folder output gets its manifest (:data:`MANIFEST_NAME`, every file with
  its size and SHA-256) written last, files are flushed to disk, a journal records the
  moves, then each staged output is renamed into place with SIGINT/SIGTERM/SIGHUP held
  back.  A folder replaces an earlier one in one atomic exchange (``renameat2`` with
  ``RENAME_EXCHANGE`` on Linux; two renames elsewhere), so a reader sees the previous
  folder or the complete new one.  Earlier files are kept as hard links until the end,
  so a failed commit is undone.
* **Recovery**: the next run that writes beside a stale staging folder rolls back an
  interrupted commit from its journal, removes the folder and says so in a note.
"""

from __future__ import annotations

import contextlib
import errno
import fcntl
import os
import secrets
import shutil
import socket
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from ..errors import InputError, OutputError, OutputExistsError, SubsurfError
from ._staging import (
    LOCK,
    STAGING_PREFIX,
    Interrupted,
    clean_stale,
    defer_signal,
    disk_full,
    exchange,
    files_under,
    fsync_dir,
    hold_lock,
    hold_signals,
    is_own,
    merge_one,
    move_file,
    release_lock,
    remove_one,
    stale_sidecars,
    stale_staging,
    write_journal,
)
from .manifest import MANIFEST_NAME, write_manifest
from .preflight import check_free_space, os_error_message

__all__ = ["OutputTransaction", "Interrupted", "MANIFEST_NAME", "STAGING_PREFIX", "defer_signal", "hold_signals",
           "stale_staging"]

@dataclass
class _Target:
    dest: Path                       # absolute destination
    kind: Literal["file", "folder"]
    staged: Path                     # inside the staging folder
    own: tuple[str, ...] = ()        # folder: glob patterns of what this command writes
    sidecars: tuple[str, ...] = ()   # folder: suffixes of files others write beside own ones (ours too)
    stale: tuple[str, ...] = ()      # folder, merge: such sidecars of files replaced, removed at commit
    foreign_ok: bool = True          # folder: may it hold files of others (merged into)?
    mode: str = "new"                # new | replace (file or whole folder) | merge (files into a folder)
    shown: str = ""                  # the path as the user gave it, for messages
    optional: bool = False           # file: the command may leave it unwritten (an earlier one is then removed)


class OutputTransaction:
    """The outputs of one command run, written as one transaction (see the module docstring).

    Parameters
    ----------
    command : str
        Subcommand name, for messages, the journal and the manifests.
    force : bool
        Replace existing outputs (never symbolic links, special files, or folders holding
        files the command does not write, unless ``foreign_ok``).
    expected_bytes : int
        Estimated total size of the outputs, checked against free space in preflight.
    """

    def __init__(self, command: str, *, force: bool = False, expected_bytes: int = 0):
        self.command, self.force, self.expected_bytes = command, bool(force), int(expected_bytes)
        self.id = f"{os.getpid()}-{secrets.token_hex(4)}"
        self.notes: list[str] = []
        self._targets: list[_Target] = []
        self._stages: dict[Path, Path] = {}
        self._lock_fds: list[int] = []
        self.state = "declared"

    # -- declaring ---------------------------------------------------------------------
    def _stage_for(self, dest: Path) -> Path:
        return self._stages.setdefault(dest.parent, dest.parent / f"{STAGING_PREFIX}{self.command}-{self.id}")

    def _add(self, path, kind, **kw) -> Path:
        if self.state != "declared":
            raise RuntimeError("declare every output before the transaction begins")
        if path is None or str(path).strip() == "":
            raise InputError(f"subsurf {self.command}: an output path is empty")
        dest = Path(os.path.abspath(os.fspath(path)))
        if any(t.dest == dest for t in self._targets):
            raise InputError(f"{path} is given as two different outputs; give each output its own name")
        staged = self._stage_for(dest) / f"{len(self._targets)}-{dest.name}"
        self._targets.append(_Target(dest, kind, staged, shown=os.fspath(path), **kw))
        return staged

    def file(self, path, *, optional: bool = False) -> Path:
        """Declare an output file; returns the staged path to write instead.

        ``optional``: the inputs tell whether it is written (e.g. a CSV's ``.prj``); left
        unwritten, an earlier file of that name is removed at commit (``force``), not left stale.
        """
        return self._add(path, "file", optional=bool(optional))

    def folder(self, path, *, own=(), foreign_ok: bool = True, sidecars=()) -> Path:
        """Declare an output folder; returns the staged folder to fill instead.

        ``own`` are glob patterns (relative, '/'-separated) of the files this command
        writes there; an existing folder holding only such files (an earlier output) is
        replaced as a whole with ``force``; one holding other files too is merged into
        (only ``own`` files replaced, with ``force``) when ``foreign_ok``, else refused.
        ``sidecars``: suffixes of files others write beside own files (GDAL's ``.aux.xml``): own too; a
        merge removes those of the files it replaces.
        """
        return self._add(path, "folder", own=(*own, MANIFEST_NAME), foreign_ok=foreign_ok, sidecars=tuple(sidecars))

    def destination_of(self, staged) -> str | None:
        """The destination a staged path stands for, as the user named it (for messages), or None."""
        staged = Path(os.path.abspath(os.fspath(staged)))
        for t in self._targets:
            if staged == t.staged:
                return t.shown
            if t.staged in staged.parents:
                return os.path.join(t.shown, staged.relative_to(t.staged).as_posix())
        for stage in self._stages.values():  # a library's own temporary file inside the staging folder
            if staged == stage or stage in staged.parents:
                return ", ".join(t.shown for t in self._targets)
        return None

    def public(self, obj):
        """``obj`` (str, Path, dict, list) with every staged path replaced by its destination as the user named it."""
        if isinstance(obj, dict):
            return {k: self.public(v) for k, v in obj.items()}
        if isinstance(obj, (list, tuple)):
            return type(obj)(self.public(v) for v in obj)
        if isinstance(obj, (str, Path)):
            text = os.fspath(obj)
            for t in sorted(self._targets, key=lambda t: -len(str(t.staged))):
                if str(t.staged) in text:
                    text = text.replace(str(t.staged), t.shown.rstrip("/"))
            return text if isinstance(obj, str) else Path(text)
        return obj

    def require_space(self, needed_bytes: float) -> None:
        """Refuse (before the work) if the destinations' file systems lack ``needed_bytes`` in all."""
        share = needed_bytes / max(len(self._stages), 1)
        for parent in self._stages:
            names = ", ".join(t.shown for t in self._targets if t.dest.parent == parent)
            check_free_space(parent, share, what=f"the subsurf {self.command} outputs", label=names)

    # -- preflight ---------------------------------------------------------------------
    def _check(self, t: _Target) -> None:
        parent, dest, shown = t.dest.parent, t.dest, t.shown
        if not parent.is_dir():
            where = os.path.dirname(shown.rstrip("/")) or "."
            what = f"{where} is not a folder" if os.path.lexists(parent) else \
                f"the folder {where} does not exist; create it first"
            raise OutputError(f"{shown}: {what}")
        if not os.path.lexists(dest):
            return
        if dest.is_symlink():
            raise OutputExistsError(f"{shown} is a symbolic link{'' if dest.exists() else ' (dangling)'}; subsurf "
                                    "never replaces a link, give the real path or another name")
        if t.kind == "file":
            if dest.is_dir():
                raise OutputError(f"{shown} is a folder; give a file name for this output")
            if not dest.is_file():
                raise OutputError(f"{shown} is not a regular file (a device or pipe); give a file name")
            if not self.force:
                raise OutputExistsError(f"output already exists: {shown}; choose another name or pass --force "
                                        "to overwrite")
            t.mode = "replace"
            return
        if not dest.is_dir():
            raise OutputError(f"{shown} exists and is not a folder; give a folder for this output")
        files = files_under(dest)
        own = [f for f in files if is_own(f, t.own, t.sidecars)]
        foreign = [f for f in files if f not in own]
        if foreign and not t.foreign_ok:
            raise OutputExistsError(f"{shown} holds files subsurf {self.command} did not write (e.g. {foreign[0]}); "
                                    f"--force only replaces an earlier {self.command} output, so choose another "
                                    "(new or empty) folder")
        if own and not self.force:
            raise OutputExistsError(f"output already exists: {os.path.join(shown, own[0])}"
                                    + (f" (and {len(own) - 1} more)" if len(own) > 1 else "")
                                    + "; choose another folder or pass --force to overwrite")
        swappable = not foreign and dest != Path.cwd() and not os.path.ismount(dest)
        t.mode = "replace" if swappable else "merge"

    def begin(self) -> OutputTransaction:
        """Preflight every destination, clean stale staging, claim the outputs and create staging."""
        if self.state != "declared":
            return self
        for t in self._targets:
            self._check(t)
        claimed = {t.dest for t in self._targets}
        self.state = "staging"
        try:
            for parent, stage in self._stages.items():
                self._claim(parent, stage, claimed)
            self.require_space(self.expected_bytes)
        except BaseException:
            self.rollback()
            raise
        return self

    def _claim(self, parent: Path, stage: Path, claimed: set[Path]) -> None:
        try:
            dfd = os.open(parent, os.O_RDONLY | os.O_DIRECTORY)
        except OSError as exc:
            raise OutputError(f"cannot use the folder {parent}: {os_error_message(exc)}") from None
        try:
            with contextlib.suppress(OSError):  # a file system without locks (ENOLCK): go on unlocked
                fcntl.flock(dfd, fcntl.LOCK_EX)
            clean_stale(parent, claimed, self.notes, self.command)
            try:
                stage.mkdir()
                fd = os.open(stage / LOCK, os.O_RDWR | os.O_CREAT, 0o644)
            except OSError as exc:
                with contextlib.suppress(OSError):
                    stage.rmdir()
                raise OutputError(f"cannot write in the folder {parent}: {os_error_message(exc)}") from None
            self._lock_fds.append(hold_lock(fd))
            for t in self._targets:
                if t.dest.parent == parent and t.kind == "folder":
                    t.staged.mkdir()
            self._journal(stage, "staging")
        finally:
            os.close(dfd)

    def _journal(self, stage: Path, state: str, moves=()) -> None:
        write_journal(stage, {"id": self.id, "command": self.command, "pid": os.getpid(),
                               "host": socket.gethostname(), "started": time.time(), "state": state,
                               "destinations": [str(t.dest) for t in self._targets], "moves": list(moves)})

    # -- the end -----------------------------------------------------------------------
    def commit(self) -> None:
        """Write the manifests, then move every staged output into place (or undo all and raise)."""
        if self.state != "staging":
            raise RuntimeError(f"cannot commit a transaction in state {self.state!r}")
        undo: list = []
        try:
            self._seal()
            with hold_signals():
                try:
                    for stage in self._stages.values():
                        moves = [self._plan(t) for t in self._targets if self._stages[t.dest.parent] == stage]
                        self._journal(stage, "committing", moves)
                    for t in self._targets:
                        self._move(t, undo)
                    for parent in self._stages:
                        fsync_dir(parent)
                except BaseException:
                    for fn in reversed(undo):
                        with contextlib.suppress(OSError):
                            fn()
                    raise
        except OSError as exc:
            full = disk_full(self._stages)
            self.rollback()
            where = self.destination_of(exc.filename) if exc.filename else None
            raise OutputError(f"{where or self._targets[0].shown}: could not finish the outputs "
                              f"({'no space left on device' if full else os_error_message(exc)}); nothing "
                              "was changed") from None
        except BaseException:  # undone above; an Interrupted raised after a complete commit keeps the output
            self.rollback()
            raise
        finally:
            if self.state == "staging":
                self.state = "committed"
                self._finish()

    def _seal(self) -> None:
        """Flush staged files, write the folders' manifests (last), check nothing appeared meanwhile."""
        for t in self._targets:
            if not os.path.lexists(t.staged) and not t.optional:
                raise SubsurfError(f"subsurf {self.command}: the output {t.shown} was declared but not written")
            if t.kind == "folder":
                write_manifest(t.staged, command=self.command, transaction=self.id)
            elif os.path.lexists(t.staged):  # an optional file may be unwritten
                with open(t.staged, "rb+") as fh:
                    os.fsync(fh.fileno())
        for t in self._targets:  # a writer other than subsurf may have created a destination meanwhile
            if t.optional and not os.path.lexists(t.staged):
                continue
            if t.mode == "new" and os.path.lexists(t.dest) and not (t.kind == "folder" and t.dest.is_dir()
                                                                    and not any(t.dest.iterdir())):
                raise OutputExistsError(f"{t.shown} appeared while subsurf {self.command} was running; nothing "
                                        "was replaced (pass --force to overwrite)")

    def _plan(self, t: _Target) -> dict:
        stage = self._stages[t.dest.parent]
        mode = t.mode if not t.optional or os.path.lexists(t.staged) else "remove" if t.mode == "replace" else "skip"
        m = {"dest": str(t.dest), "kind": t.kind, "mode": mode, "staged": t.staged.name,
             "backup": f"old-{t.staged.name}" if mode not in ("new", "skip") else None}
        if t.mode == "merge":
            m["files"] = files_under(t.staged)
            t.stale = tuple(m.setdefault("stale", stale_sidecars(t.dest, m["files"], t.sidecars)))
            (stage / m["backup"]).mkdir()
        return m

    def _move(self, t: _Target, undo: list) -> None:
        """Move one staged output into place, appending its undo steps to ``undo`` as it goes."""
        stage = self._stages[t.dest.parent]
        backup = stage / f"old-{t.staged.name}"
        if t.kind == "file":
            move_file(t.staged, t.dest, backup, replace=t.mode == "replace", optional=t.optional, undo=undo)
        elif t.mode == "merge":
            old_manifest = t.dest / MANIFEST_NAME
            if os.path.lexists(old_manifest):  # the folder reads as incomplete while files are merged in
                os.replace(old_manifest, backup / MANIFEST_NAME)
                undo.append(lambda: os.replace(backup / MANIFEST_NAME, old_manifest))
            for rel in t.stale:  # e.g. GDAL statistics of the GeoTIFFs about to be replaced
                remove_one(t.dest, rel, backup, undo)
            for rel in [r for r in files_under(t.staged) if r != MANIFEST_NAME] + [MANIFEST_NAME]:
                merge_one(t.staged, t.dest, rel, backup, undo)  # the manifest last
        elif os.path.isdir(t.dest) and exchange(t.staged, t.dest):  # staged now holds the old folder
            undo.append(lambda: exchange(t.staged, t.dest))
        elif os.path.isdir(t.dest):
            os.rename(t.dest, backup)
            undo.append(lambda: os.rename(backup, t.dest))
            os.rename(t.staged, t.dest)
            undo.append(lambda: os.rename(t.dest, t.staged))
        else:
            os.rename(t.staged, t.dest)
            undo.append(lambda: os.rename(t.dest, t.staged))

    def rollback(self) -> None:
        """Remove everything staged; destinations stay as they were."""
        if self.state in ("committed", "rolled back"):
            return
        self.state = "rolled back"
        self._finish()

    def _finish(self) -> None:
        for stage in self._stages.values():
            with contextlib.suppress(FileNotFoundError):
                shutil.rmtree(stage)
        for fd in self._lock_fds:
            release_lock(fd)
        self._lock_fds.clear()

    def __enter__(self) -> OutputTransaction:
        return self.begin()

    def __exit__(self, exc_type, exc, tb) -> bool:
        if exc_type is None:
            self.commit()
            return False
        full = disk_full(self._stages)
        self.rollback()
        if isinstance(exc, SubsurfError) or not isinstance(exc, Exception):
            return False
        where = self.destination_of(exc.filename) if isinstance(exc, OSError) and exc.filename else None
        if where is None and (full or isinstance(exc, OSError) and not exc.filename
                              and exc.errno in (errno.ENOSPC, errno.EDQUOT, errno.EFBIG, errno.EROFS, errno.EIO)):
            where = ", ".join(t.shown for t in self._targets)
        if where is None:
            return False
        why = os_error_message(exc) if isinstance(exc, OSError) and not full else "no space left on device"
        raise OutputError(f"{where}: {why} while writing the subsurf {self.command} outputs; nothing was "
                          "written") from None
