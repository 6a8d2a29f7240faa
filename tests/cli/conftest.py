"""Expensive runs shared by several CLI test modules (session-scoped: each runs once per test session)."""

from __future__ import annotations

import subprocess
import sys

import pytest


@pytest.fixture(scope="session")
def demo_json(tmp_path_factory):
    """``subsurf demo --out <tmp>/demo --json --quiet`` as a subprocess, once: (CompletedProcess, output folder).

    A full demo run (the whole chain on the example site at full size) is the most expensive command of the
    suite; test_cli_demo's --json check and test_json_schemas's demo case read this one run.
    """
    cwd = tmp_path_factory.mktemp("demo-json")
    proc = subprocess.run([sys.executable, "-m", "subsurf", "demo", "--out", str(cwd / "demo"), "--json", "--quiet"],
                          capture_output=True, text=True, cwd=cwd, timeout=600)
    return proc, cwd / "demo"
