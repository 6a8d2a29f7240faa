"""Closed, broken and full standard streams end a run without a traceback, never mixing errors into stdout."""

from __future__ import annotations

import json
import os
import subprocess
import sys

MEDIUM = ["medium", "--eps", "9", "--sigma", "5 mS/m", "--freq", "100 MHz"]


def _run(argv, *, close=(), stdout=subprocess.PIPE, cwd=None):
    def closer():
        for fd in close:
            os.close(fd)

    return subprocess.run([sys.executable, "-m", "subsurf", *argv], stdout=stdout, stderr=subprocess.PIPE,
                          preexec_fn=closer if close else None, cwd=cwd, check=False)


def test_closed_stdout_writes_the_files_and_ends_quietly(tmp_path):
    """``>&-``: the outputs are written, nothing fails at exit, and no error appears."""
    p = _run(["depth", "--twt", "25", "--velocity", "0.1", "--out-csv", "d.csv"], close=(1,), stdout=None,
             cwd=tmp_path)
    assert p.returncode == 0 and p.stderr == b""
    head = (tmp_path / "d.csv").read_text().splitlines()
    assert head[0].startswith("twt_ns,depth_m") and head[1].startswith("25.00,1.2500")  # 0.1 m/ns x 25 ns / 2


def test_closed_stderr_keeps_errors_out_of_stdout():
    """``2>&-`` with an error under --json: stdout stays empty, the exit code still tells."""
    p = subprocess.run([sys.executable, "-m", "subsurf", "medium", "--eps", "-3", "--sigma", "1", "--json"],
                       stdout=subprocess.PIPE, preexec_fn=lambda: os.close(2), check=False)
    assert p.returncode == 1 and p.stdout == b""


def test_full_stdout_is_one_line_exit_1():
    """``> /dev/full``: exit 1 with one line saying standard output could not be written."""
    with open("/dev/full", "wb") as full:
        p = _run(MEDIUM, stdout=full)
    err = p.stderr.decode()
    assert p.returncode == 1 and "standard output" in err and len(err.strip().splitlines()) == 1, err


def test_reader_going_away_is_not_an_error():
    """``| head -c 10``: the pipe closes early; exit 0, no traceback."""
    p = subprocess.Popen([sys.executable, "-m", "subsurf", *MEDIUM, "--json"], stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE)
    p.stdout.read(10)
    p.stdout.close()
    err = p.stderr.read().decode()
    p.stderr.close()
    assert p.wait(timeout=60) == 0 and "Traceback" not in err, err


def test_usage_error_under_json_is_a_json_object():
    """A usage error with --json: one JSON object on stderr, kind 'usage', exit 2, stdout empty."""
    p = _run(["depth", "--json", "--draws", "many"])
    doc = json.loads(p.stderr.decode())
    assert p.returncode == 2 and doc["kind"] == "usage" and "--draws" in doc["error"] and p.stdout == b""
