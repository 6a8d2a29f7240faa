"""Edge helpers shared by the subcommands: tables, JSON, cautions and safe file writing.

Outputs are written to a temporary name in the destination folder and renamed into
place only when complete; an existing output is never replaced unless ``force`` is set.
"""

from __future__ import annotations

import contextlib
import contextvars
import json
import math
import os
import sys
import tempfile
from collections.abc import Iterable, Sequence
from pathlib import Path

from ..errors import OutputExistsError
from ..safety import CAUTION, CAUTION_LINES  # the one caution text, re-exported for the commands

__all__ = [
    "CAUTION",
    "CAUTION_LINES",
    "format_table",
    "print_result",
    "to_jsonable",
    "check_outputs_free",
    "atomic_path",
    "atomic_write_bytes",
    "atomic_write_text",
    "Column",
]

class Column:
    """A table column: key in the row dicts, header text, unit and number format."""

    def __init__(self, key: str, header: str, unit: str = "", fmt: str = ".3g"):
        self.key, self.header, self.unit, self.fmt = key, header, unit, fmt

    def label(self) -> str:
        return f"{self.header} ({self.unit})" if self.unit else self.header

    def render(self, value) -> str:
        if value is None:
            return "-"
        if isinstance(value, float):
            if math.isnan(value):
                return "-"
            if math.isinf(value):
                return "inf"
            return format(value, self.fmt)
        if hasattr(value, "dtype"):
            return self.render(value.item())
        return str(value)


def format_table(rows: Sequence[dict], columns: Sequence[Column], *, title: str = "") -> str:
    """Plain-text table with a header line and right-aligned numbers."""
    header = [c.label() for c in columns]
    body = [[c.render(r.get(c.key)) for c in columns] for r in rows]
    widths = [max(len(h), *(len(b[i]) for b in body)) if body else len(h) for i, h in enumerate(header)]
    lines = []
    if title:
        lines.append(title)
    lines.append("  ".join(h.rjust(w) for h, w in zip(header, widths)))
    lines.append("  ".join("-" * w for w in widths))
    for b in body:
        lines.append("  ".join(v.rjust(w) for v, w in zip(b, widths)))
    return "\n".join(lines)


def to_jsonable(obj):
    """Convert numpy scalars/arrays, Paths and non-finite floats to JSON-safe values."""
    try:
        import numpy as np
    except ImportError:  # pragma: no cover
        np = None
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, Path):
        return str(obj)
    if np is not None:
        if isinstance(obj, np.ndarray):
            return to_jsonable(obj.tolist())
        if isinstance(obj, np.generic):
            return to_jsonable(obj.item())
    if isinstance(obj, complex):
        return {"real": to_jsonable(obj.real), "imag": to_jsonable(obj.imag)}
    if isinstance(obj, float) and not math.isfinite(obj):
        return None if math.isnan(obj) else ("inf" if obj > 0 else "-inf")
    return obj


def print_result(payload: dict, text: str, *, as_json: bool, stream=None) -> None:
    """Print ``text`` (the readable table) or ``payload`` as JSON."""
    stream = stream or sys.stdout
    if as_json:
        json.dump(to_jsonable(payload), stream, indent=2, allow_nan=False, ensure_ascii=False)
        stream.write("\n")
    else:
        stream.write(text.rstrip("\n") + "\n")


def check_outputs_free(paths: Iterable[os.PathLike | str], *, force: bool) -> None:
    """Raise :class:`OutputExistsError` before anything is written if an output exists."""
    existing = [str(p) for p in paths if Path(p).exists()]
    if existing and not force:
        raise OutputExistsError(
            f"output already exists: {existing[0]}"
            + (f" (and {len(existing) - 1} more)" if len(existing) > 1 else "")
            + "; choose another name or pass --force to overwrite"
        )


@contextlib.contextmanager
def atomic_path(path: os.PathLike | str, *, force: bool = False):
    """Yield a temporary path beside ``path``; rename it onto ``path`` on success.

    The temporary file is removed if the block raises, so a failed run leaves nothing
    half-written.  Raises :class:`OutputExistsError` if ``path`` exists and not ``force``.
    """
    path = Path(path)
    check_outputs_free([path], force=force)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".partial", dir=path.parent)
    os.close(fd)
    tmp_path = Path(tmp)
    try:
        yield tmp_path
        if tmp_path.is_file():
            # mkstemp makes the file private (0600); give the output the usual permissions
            umask = os.umask(0)
            os.umask(umask)
            os.chmod(tmp_path, 0o666 & ~umask)
        os.replace(tmp_path, path)
    finally:
        if tmp_path.exists():
            tmp_path.unlink()


def atomic_write_bytes(path: os.PathLike | str, data: bytes, *, force: bool = False) -> Path:
    """Write ``data`` to ``path`` atomically (temporary name, then rename)."""
    with atomic_path(path, force=force) as tmp:
        Path(tmp).write_bytes(data)
    return Path(path)


def atomic_write_text(path: os.PathLike | str, text: str, *, force: bool = False) -> Path:
    """Write ``text`` to ``path`` atomically (temporary name, then rename)."""
    with atomic_path(path, force=force) as tmp:
        Path(tmp).write_text(text, encoding="utf-8")
    return Path(path)


#: Warning kinds that third-party libraries address to programmers, never shown to a user.
#: For one command run, a function that rewrites a message in the words the user typed (flags,
#: file keys); set by the CLI guard (subsurf.cli._names), None outside a command run.
MESSAGE_WORDS: contextvars.ContextVar = contextvars.ContextVar("subsurf_message_words", default=None)

_LIBRARY_HOUSEKEEPING = (DeprecationWarning, PendingDeprecationWarning, FutureWarning)


@contextlib.contextmanager
def collect_warnings():
    """Collect the project's model warnings raised inside the block as a list of strings.

    The CLI shows them as one-line notes on stderr (unless ``--quiet``) and includes them
    in JSON output under ``"warnings"``; duplicates are dropped, order is kept.
    """
    import warnings

    messages: list[str] = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            yield messages
        finally:
            for w in caught:
                if issubclass(w.category, _LIBRARY_HOUSEKEEPING):
                    continue  # a library's note to its own developers (e.g. rioxarray/affine), not to our user
                text = str(w.message)
                words = MESSAGE_WORDS.get()
                if words is not None:
                    text = words(text)
                if text not in messages:
                    messages.append(text)


def print_notes(messages, *, quiet: bool, prefix: str = "subsurf") -> None:
    """Print collected warnings as ``note:`` lines on stderr unless quiet."""
    if quiet:
        return
    for m in messages:
        print(f"{prefix}: note: {m}", file=sys.stderr)
