"""How a ``subsurf`` run ends: every failure as one line (or one JSON object) on stderr, and an exit code.

* Usage errors (argparse) are one line with a hint to ``--help``, exit 2, instead of
  argparse's usage block.
* Errors of our own (:class:`~subsurf.errors.SubsurfError`): exit 1, or 3 for an existing
  or busy output.
* OS errors (permission denied, read-only file system, no space left, is a folder, file not
  found ...) and text that is not UTF-8: exit 1, naming the path (from the exception, or
  the file being read when the error came from inside a reader).
* Running out of memory: exit 1 with a hint to make the run smaller.
* SIGINT, SIGTERM and SIGHUP raise :class:`~subsurf.io.transaction.Interrupted` in the
  main thread, so every output transaction rolls back on the way out; exit 128 + n.  While
  a transaction moves its files into place the signal waits until the moves are done.
* A closed stdout or stderr (``>&-``, ``2>&-``) is replaced by the null device at start, so
  nothing is printed into a file that happens to get descriptor 1 or 2; a reader that goes
  away (``| head``) ends the run quietly with exit 0; a stdout that cannot be written
  (``> /dev/full``) is exit 1.
* Under ``--json`` an error is one JSON object on stderr (stdout stays clean JSON or empty)::

      {"error": "<the one-line message>", "kind": "input", "exit_code": 1,
       "command": "map", "path": "surveys/x/soil.csv"}

  ``kind`` is one of ``usage``, ``input``, ``exists``, ``busy``, ``output``, ``resources``,
  ``file`` (an OS error reading or writing a file), ``memory``, ``interrupted``, ``stdout``,
  ``internal``; ``path`` is null when no file is involved; an interruption adds ``signal``.
"""

from __future__ import annotations

import argparse
import errno
import io
import json
import os
import signal
import sys
from pathlib import Path

__all__ = ["OneLineParser", "UsageError", "run_guarded"]

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_EXISTS, EXIT_INTERNAL = 0, 1, 2, 3, 4
_SIGNALS = tuple(s for s in (getattr(signal, n, None) for n in ("SIGINT", "SIGTERM", "SIGHUP")) if s)


class UsageError(Exception):
    """A command-line usage error, raised by :class:`OneLineParser` instead of printing usage and exiting."""

    def __init__(self, prog: str, message: str):
        super().__init__(message)
        self.prog = prog


class OneLineParser(argparse.ArgumentParser):
    """An ArgumentParser whose errors are one line (raised as :class:`UsageError`), not a usage block."""

    def error(self, message):  # noqa: D102 - argparse API
        raise UsageError(self.prog, message)


def _ensure_std_streams() -> None:
    """Give closed descriptors 0-2 the null device, so no later file takes their number."""
    for fd, mode in ((0, os.O_RDONLY), (1, os.O_WRONLY), (2, os.O_WRONLY)):
        try:
            os.fstat(fd)
        except OSError:
            null = os.open(os.devnull, mode)
            if null != fd:
                os.dup2(null, fd)
                os.close(null)
    for name, mode in (("stdout", "w"), ("stderr", "w")):
        if getattr(sys, name) is None:  # Python found the descriptor closed at start
            setattr(sys, name, open(os.devnull, mode, encoding="utf-8"))  # noqa: SIM115 - lives to exit


def _path_in_traceback(exc: BaseException) -> str | None:
    """The file being read where ``exc`` was raised: an open file or a path-like local, innermost first."""
    frames = []
    tb = exc.__traceback__
    while tb is not None:
        frames.append(tb.tb_frame)
        tb = tb.tb_next
    for frame in reversed(frames):
        for name, value in frame.f_locals.items():
            if isinstance(value, io.IOBase) and isinstance(getattr(value, "name", None), str):
                return value.name
            if name in ("path", "p", "file", "filename", "fname", "self") and isinstance(value, (str, Path)) \
                    and str(value) and os.path.exists(value):
                return str(value)
    return None


def _describe(exc: BaseException, command: str | None) -> tuple[str, str, int, str | None]:
    """(kind, message, exit code, path) of an exception that ends a run."""
    from ..errors import (
        FileInputError,
        OutputBusyError,
        OutputError,
        OutputExistsError,
        ResourceLimitError,
        SubsurfError,
    )
    from ..io.preflight import os_error_message
    from ..io.transaction import Interrupted

    if isinstance(exc, UsageError):
        prog = exc.prog
        if command and prog.split()[-1] != command:  # the top parser's 'unrecognized arguments' after a command
            prog = f"{prog} {command}"
        return "usage", f"{exc} (see '{prog} --help')", EXIT_USAGE, None
    if isinstance(exc, OutputBusyError):
        return "busy", str(exc), EXIT_EXISTS, None
    if isinstance(exc, OutputExistsError):
        return "exists", str(exc), EXIT_EXISTS, None
    if isinstance(exc, SubsurfError):
        kind = ("output" if isinstance(exc, OutputError) else "resources" if isinstance(exc, ResourceLimitError)
                else "input")
        return kind, str(exc), EXIT_INPUT, getattr(exc, "path", None) if isinstance(exc, FileInputError) else None
    if isinstance(exc, Interrupted):
        name = signal.Signals(exc.signum).name
        return "interrupted", f"interrupted by {name}; unfinished outputs were removed", 128 + exc.signum, None
    if isinstance(exc, KeyboardInterrupt):
        return "interrupted", "interrupted; unfinished outputs were removed", 128 + signal.SIGINT, None
    if isinstance(exc, UnicodeError):
        path = _path_in_traceback(exc)
        where = f"{path}: " if path else ""
        detail = ""
        if isinstance(exc, UnicodeDecodeError):
            detail = f" (byte 0x{exc.object[exc.start]:02x} at offset {exc.start})"
        return "file", f"{where}not UTF-8 text{detail}; save the file as UTF-8", EXIT_INPUT, path
    if isinstance(exc, OSError) and exc.errno is not None:
        path = exc.filename if exc.filename is not None else _path_in_traceback(exc)
        msg = os_error_message(exc)
        if exc.errno == errno.EISDIR:
            msg = "is a folder; a file is needed here"
        elif exc.errno == errno.ENOENT:
            msg = "no such file or folder"
        return "file", f"{path}: {msg}" if path else msg, EXIT_INPUT, None if path is None else str(path)
    if isinstance(exc, MemoryError):
        return ("memory", "not enough memory for this run; make it smaller (fewer draws, cells or antennas, a "
                "smaller --chunk)", EXIT_INPUT, None)
    return ("internal", f"internal error: {type(exc).__name__}: {exc} (rerun with --debug for the traceback)",
            EXIT_INTERNAL, None)


def _report(exc: BaseException, command: str | None, *, as_json: bool) -> int:
    from ..io.outputs import MESSAGE_WORDS

    kind, message, code, path = _describe(exc, command)
    message = " ".join(str(message).split())  # one line, whatever the message held
    words = MESSAGE_WORDS.get()
    if words is not None and kind in ("input", "file"):
        message = words(message)
    prefix = f"subsurf {command}" if command else "subsurf"
    try:
        if as_json:
            doc = {"error": message, "kind": kind, "exit_code": code, "command": command, "path": path}
            if kind == "interrupted" and hasattr(exc, "signum"):
                doc["signal"] = signal.Signals(exc.signum).name
            sys.stderr.write(json.dumps(doc, ensure_ascii=False) + "\n")
        else:
            sys.stderr.write(f"{prefix}: {'' if kind == 'interrupted' else 'error: '}{message}\n")
        sys.stderr.flush()
    except (OSError, ValueError):  # stderr itself is gone: the exit code still tells
        pass
    return code


def _on_signal(signum, frame):  # noqa: ARG001 - signal API
    from ..io.transaction import Interrupted, defer_signal

    if defer_signal(signum):
        return
    raise Interrupted(signum)


def _silence_stdout() -> None:
    """Point stdout at the null device so the exit flush cannot fail again."""
    try:
        null = os.open(os.devnull, os.O_WRONLY)
        os.dup2(null, sys.stdout.fileno())
        os.close(null)
    except (OSError, ValueError, AttributeError):
        pass


def _command_of(argv: list[str], commands) -> str | None:
    for a in argv:
        if not a.startswith("-"):
            return a if a in commands else None
    return None


def run_guarded(build_parser, argv: list[str], commands) -> int:
    """Parse ``argv``, run the command, and turn every way it can end into an exit code and one line."""
    _ensure_std_streams()
    as_json, debug = "--json" in argv, "--debug" in argv
    command = _command_of(argv, commands)
    previous = {}
    try:
        for s in _SIGNALS:
            previous[s] = signal.signal(s, _on_signal)
    except ValueError:  # not the main thread (an embedding program): leave its signals alone
        previous = {}
    try:
        try:
            parser = build_parser()
            args = parser.parse_args(argv)
            if not getattr(args, "command", None):
                parser.print_help()
                return EXIT_USAGE
            from ..io.outputs import MESSAGE_WORDS
            from ._names import translator

            words = translator(args, command)
            MESSAGE_WORDS.set(words)  # notes and the error line name the flags / file keys typed
            code = int(args._module.run(args) or 0)
            sys.stdout.flush()
            return code
        except BrokenPipeError:  # the reader went away (`subsurf choose --json | head`): not an error of ours
            _silence_stdout()
            return EXIT_OK
        except SystemExit as exc:  # --help / --version
            try:
                sys.stdout.flush()
            except OSError:
                _silence_stdout()
            return exc.code if isinstance(exc.code, int) else EXIT_OK
        except BaseException as exc:  # noqa: BLE001 - every ending gets one line
            if debug and not isinstance(exc, UsageError):
                raise
            if isinstance(exc, OSError) and _is_stdout_error(exc):
                _silence_stdout()
                return _report_stdout(exc, command, as_json=as_json)
            return _report(exc, command, as_json=as_json)
    finally:
        for s, h in previous.items():
            signal.signal(s, h)


def _is_stdout_error(exc: OSError) -> bool:
    return exc.filename is None and exc.errno in (errno.ENOSPC, errno.EIO, errno.EBADF, errno.EDQUOT) and \
        _path_in_traceback(exc) in (None, "<stdout>")


def _report_stdout(exc: OSError, command: str | None, *, as_json: bool) -> int:
    from ..io.preflight import os_error_message

    err = OSError(exc.errno, exc.strerror)
    msg = f"cannot write to standard output: {os_error_message(err)}"
    prefix = f"subsurf {command}" if command else "subsurf"
    try:
        sys.stderr.write((json.dumps({"error": msg, "kind": "stdout", "exit_code": EXIT_INPUT, "command": command,
                                      "path": None}) if as_json else f"{prefix}: error: {msg}") + "\n")
        sys.stderr.flush()
    except (OSError, ValueError):
        pass
    return EXIT_INPUT
