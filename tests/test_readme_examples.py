"""The README's console blocks are what the commands print now (docs/refresh_readme.py --check).

The script re-runs every ```console example in a scratch folder and compares, line by line,
with the README; a stale block (an output, a key or a figure that changed) fails here with
the difference.  Marked slow: it runs every example (the demo, the map, a 1200 x 800 region),
about 25 s on an idle 2-core machine.  After a change that alters what the examples show, run
``python docs/refresh_readme.py`` (the lead does; never edit the blocks by hand).
"""

import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.slow
def test_readme_console_blocks_match_the_commands():
    """Every README example's output equals a fresh run's (the project's own refresh script, --check)."""
    res = subprocess.run([sys.executable, str(ROOT / "docs" / "refresh_readme.py"), "--check"], cwd=ROOT,
                         capture_output=True, text=True, timeout=1200)
    assert res.returncode == 0, res.stdout[-6000:] + res.stderr[-2000:]
    assert "0 README example block(s) out of date" in res.stdout
