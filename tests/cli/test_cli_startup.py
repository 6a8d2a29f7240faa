"""Start-up cost as a list of modules (never a timing): what `subsurf --help` and a direct
`subsurf medium` must not import, read from `python -X importtime` in a subprocess."""

from __future__ import annotations

import re
import subprocess
import sys

import pytest

#: heavy libraries that none of these commands needs (import times on this project's machine:
#: pint + registry ~0.5 s CPU, scipy.constants ~0.1 s through numpy.f2py, xarray ~0.4 s, ...)
HEAVY = ("xarray", "matplotlib", "dask", "distributed", "rioxarray", "pandas", "pint", "uncertainties",
         "scipy", "numpy.f2py", "netCDF4", "pyproj", "shapely", "tqdm", "pydantic", "jinja2")


def _imported(*args: str) -> set[str]:
    proc = subprocess.run([sys.executable, "-X", "importtime", "-m", "subsurf", *args],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr[-2000:]
    names = set()
    for line in proc.stderr.splitlines():
        m = re.match(r"import time:\s+\d+ \|\s+\d+ \|\s*(\S+)$", line)
        if m:
            names.add(m.group(1))
    assert "subsurf" in names  # the importtime report was read
    return names


def test_help_imports_neither_numpy_nor_any_heavy_library():
    """`subsurf --help` builds the parser from light command modules only: no numpy at all."""
    names = _imported("--help")
    assert not {n for n in names if n.split(".")[0] in ("numpy",) + HEAVY}


@pytest.mark.parametrize("args", [("medium", "--eps", "9", "--sigma", "0.01"),
                                  ("medium", "--eps", "9", "--sigma", "5 mS/m", "--freq", "250 MHz", "--json")])
def test_direct_medium_imports_numpy_but_no_heavy_library(args):
    """`subsurf medium --eps ... --sigma ...` needs numpy and the physics, nothing heavy."""
    names = _imported(*args)
    assert "numpy" in names
    heavy = {n for n in names if n in HEAVY or n.split(".")[0] in HEAVY}
    assert not heavy, sorted(heavy)
