"""The manifest of a folder output: what a complete output holds, written last.

A folder written by a subsurf command (``map --out``, ``demo --out``, ``report --maps-out``)
is complete when it holds :data:`MANIFEST_NAME` and every file the manifest lists, with
the listed size and SHA-256 digest; a file flagged ``rewritable`` need only be present.  The manifest is the last file written into the
staged folder before the folder is moved into place, so a folder without one (or with
files missing or changed) is incomplete: :func:`check_output_folder` says which.

Layout (JSON, UTF-8)::

    {"format": "subsurf-output-manifest", "version": 1,
     "command": "map", "subsurf_version": "0.1.0", "transaction": "<run id>",
     "created_utc": "2026-12-02T04:31:02Z",
     "files": [{"path": "feasibility.nc", "bytes": 1234567, "sha256": "…"},
               {"path": "feasibility.nc.aux.xml", "bytes": 10759, "sha256": "…", "rewritable": true}, …]}

``path`` is relative to the folder, '/'-separated; the manifest does not list itself.
``rewritable`` (only on such files, always ``true``): other software may rewrite the file
after subsurf wrote it, so ``bytes`` and ``sha256`` describe it as subsurf wrote it and a
later difference does not make the folder incomplete.  These are GDAL's PAM sidecars
(:data:`REWRITABLE`, ``*.aux.xml``): GDAL, and QGIS through it, rewrites them whenever it
computes statistics or histograms of the raster (``gdalinfo -stats``, opening the layer),
see https://gdal.org/en/stable/user/raster_data_model.html ("PAM").
"""

from __future__ import annotations

import fnmatch
import hashlib
import json
import os
import time
from pathlib import Path

__all__ = ["MANIFEST_NAME", "MANIFEST_FORMAT", "REWRITABLE", "write_manifest", "read_manifest",
           "check_output_folder"]

MANIFEST_NAME = "subsurf-manifest.json"
MANIFEST_FORMAT = "subsurf-output-manifest"
#: file-name patterns of outputs other software rewrites in place (GDAL PAM sidecars)
REWRITABLE = ("*.aux.xml",)


def _digest(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def write_manifest(folder, *, command: str, transaction: str) -> Path:
    """Flush every file under ``folder`` to disk, then write its manifest (last) and flush that too."""
    from .. import __version__

    folder = Path(folder)
    entries = []
    for p in sorted(folder.rglob("*")):
        rel = p.relative_to(folder).as_posix()
        if p.is_dir() or rel == MANIFEST_NAME:
            continue
        with open(p, "rb+") as fh:
            os.fsync(fh.fileno())
        entry = {"path": rel, "bytes": p.stat().st_size, "sha256": _digest(p)}
        if any(fnmatch.fnmatchcase(p.name, pat) for pat in REWRITABLE):
            entry["rewritable"] = True
        entries.append(entry)
    doc = {"format": MANIFEST_FORMAT, "version": 1, "command": command, "transaction": transaction,
           "subsurf_version": __version__, "created_utc": time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime()),
           "files": entries}
    path = folder / MANIFEST_NAME
    with open(path, "w", encoding="utf-8") as fh:
        json.dump(doc, fh, indent=1)
        fh.write("\n")
        fh.flush()
        os.fsync(fh.fileno())
    return path


def read_manifest(folder) -> dict | None:
    """The manifest of ``folder`` as a dict, or None if it has none (or an unreadable one)."""
    try:
        doc = json.loads((Path(folder) / MANIFEST_NAME).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    return doc if isinstance(doc, dict) and doc.get("format") == MANIFEST_FORMAT else None


def check_output_folder(folder, *, digests: bool = True) -> tuple[bool, str]:
    """Whether ``folder`` is a complete subsurf output: (True, "") or (False, the reason).

    Checks that the manifest exists and that every file it lists is present with its size
    (and, with ``digests``, its SHA-256); a file flagged ``rewritable`` only for its presence.
    """
    folder = Path(folder)
    doc = read_manifest(folder)
    if doc is None:
        return False, f"{folder} has no readable {MANIFEST_NAME}: the output is incomplete"
    for e in doc.get("files", []):
        p = folder / e["path"]
        if not p.is_file():
            return False, f"{p} is listed in the manifest but missing"
        if e.get("rewritable") is True:  # e.g. GDAL added statistics to a PAM sidecar
            continue
        if p.stat().st_size != e["bytes"]:
            return False, f"{p} has {p.stat().st_size} bytes, the manifest says {e['bytes']}"
        if digests and _digest(p) != e["sha256"]:
            return False, f"{p} differs from the manifest (SHA-256)"
    return True, ""
