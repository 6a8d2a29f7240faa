"""Progress bars for the steps of a command that take more than a moment.

A thin layer over tqdm (a well-kept, dependency-free progress-bar library already used
across scientific Python): bars go to stderr, and are silent when the user asked for
``--quiet`` or when stderr is not a terminal (pipes, CI logs, tests), so that captured
output never fills with carriage-return noise.
"""

from __future__ import annotations

import sys
from contextlib import contextmanager

__all__ = ["progress_enabled", "Steps", "steps"]


def progress_enabled(*, quiet: bool = False, stream=None) -> bool:
    """True when a progress bar should be drawn: not quiet and ``stream`` is a terminal."""
    if quiet:
        return False
    stream = sys.stderr if stream is None else stream
    isatty = getattr(stream, "isatty", None)
    try:
        return bool(isatty and isatty())
    except (ValueError, OSError):  # closed or odd stream
        return False


class Steps:
    """A named sequence of steps shown as one bar; ``advance(label)`` moves it on.

    When disabled every method is a no-op, so callers never branch on ``quiet``.
    """

    def __init__(self, total: int, *, desc: str, enabled: bool, stream=None):
        self.total = int(total)
        self.done = 0
        self._bar = None
        if enabled:
            from tqdm import tqdm

            self._bar = tqdm(total=self.total, desc=desc, file=stream or sys.stderr, leave=False,
                             bar_format="{desc}: {n_fmt}/{total_fmt} {bar} {postfix}", dynamic_ncols=True)

    @property
    def enabled(self) -> bool:
        return self._bar is not None

    def start(self, label: str) -> None:
        """Show which step is running now."""
        if self._bar is not None:
            self._bar.set_postfix_str(label, refresh=True)

    def advance(self, label: str | None = None) -> None:
        """Mark one step done (``label``: the next step's name, if any)."""
        self.done += 1
        if self._bar is not None:
            if label:
                self._bar.set_postfix_str(label, refresh=False)
            self._bar.update(1)

    def close(self) -> None:
        if self._bar is not None:
            self._bar.close()
            self._bar = None


@contextmanager
def steps(total: int, *, desc: str, quiet: bool = False, stream=None):
    """Context manager yielding a :class:`Steps` bar that is closed on exit."""
    bar = Steps(total, desc=desc, enabled=progress_enabled(quiet=quiet, stream=stream), stream=stream)
    try:
        yield bar
    finally:
        bar.close()
