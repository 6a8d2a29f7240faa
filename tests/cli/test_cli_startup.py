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


def test_console_entry_runs_exit_handlers_flushes_output_and_keeps_the_exit_code(tmp_path):
    """The console entry ends the process without interpreter teardown (subsurf.cli.entry), so check from
    outside, in a subprocess: a handler registered with atexit still runs, a large piped JSON result arrives
    whole (json.loads of all of it), and the exit codes 0 and 1 reach the shell."""
    import json

    script = ("import atexit, sys\n"
              "import subsurf.cli as cli\n"
              "atexit.register(lambda: print('exit handler ran', file=sys.stderr))\n"
              "sys.argv = ['subsurf', *sys.argv[1:]]\n"
              "cli.entry()\n"
              "raise SystemExit('entry returned')\n")
    args = ["medium", "--eps", "9", "--sigma", "5 mS/m", "--json"]  # default frequencies: a long result
    ok = subprocess.run([sys.executable, "-c", script, *args], capture_output=True, text=True, timeout=120)
    assert ok.returncode == 0, ok.stderr[-2000:]
    assert "exit handler ran" in ok.stderr and "entry returned" not in ok.stderr
    assert len(ok.stdout) > 2000 and json.loads(ok.stdout)  # the whole result, flushed
    bad = subprocess.run([sys.executable, "-m", "subsurf", "medium", "--eps", "900", "--sigma", "0.01"],
                         capture_output=True, text=True, timeout=120)
    assert bad.returncode == 1 and bad.stderr.count("\n") == 1 and "--eps" in bad.stderr


def test_map_console_spares_xarray_probes_and_changes_no_value(tmp_path):
    """The console `subsurf map` (one command per process) holds numpy arrays only, so xarray is told not
    to import dask.array and pint to check for theirs (subsurf.cli._numpy_only): neither is imported, and
    every layer of the NetCDF equals the same map computed in this process, where xarray probes as usual
    (read back with netCDF4, not with subsurf's reader)."""
    import netCDF4
    import numpy as np
    from example_site import coarse_copy

    from subsurf.io.maps import run_map

    survey = coarse_copy(tmp_path)
    out = tmp_path / "console"
    proc = subprocess.run([sys.executable, "-X", "importtime", "-m", "subsurf", "map", str(survey), "--out",
                           str(out), "--quiet", "--no-geotiff"], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr[-2000:]
    names = {m.group(1) for line in proc.stderr.splitlines()
             if (m := re.match(r"import time:\s+\d+ \|\s+\d+ \|\s*(\S+)$", line))}
    assert "xarray" in names and "netCDF4" in names  # the report was read, and the map used xarray
    assert not {"pint", "dask", "dask.array", "uncertainties"} & names
    run_map(survey, tmp_path / "inproc", quiet=True, geotiff=False)
    with netCDF4.Dataset(out / "feasibility.nc") as a, netCDF4.Dataset(tmp_path / "inproc" / "feasibility.nc") as b:
        layers = [v for v in a.variables if a[v].ndim >= 2]
        assert "max_depth" in layers and set(layers) == {v for v in b.variables if b[v].ndim >= 2}
        for v in layers:
            np.testing.assert_array_equal(np.ma.filled(a[v][:], np.nan), np.ma.filled(b[v][:], np.nan), err_msg=v)


def test_numpy_only_declaration_needs_the_console_entry():
    """Called from Python (here: the test process, which goes on to use dask), the declaration changes nothing."""
    from xarray.namedarray import pycompat, utils

    from subsurf.cli._numpy_only import declare_numpy_only

    before, ask = dict(pycompat._cached_duck_array_modules), utils.is_dask_collection
    assert declare_numpy_only() == ()
    assert pycompat._cached_duck_array_modules == before and utils.is_dask_collection is ask


def test_console_guards_leave_dask_answers_and_collect_after_the_imports():
    """In a console process (both switches on, as `subsurf.cli.entry` sets them): xarray's dask question is
    answered without importing dask while dask is absent, and by dask (a real dask array: True) once it is
    imported; the collector is off inside `imports_first` until `imports_done`, which freezes what is alive
    and switches it on again, and on when the block is left.  Without the switches nothing changes."""
    script = """
import gc, sys
import numpy as np
from xarray.namedarray import utils
from subsurf.cli import _collector, _numpy_only
with _collector.imports_first():
    assert gc.isenabled()  # not enabled: the test process's own collector is never touched
_numpy_only.enable(); _collector.enable()
_numpy_only.declare_numpy_only()
assert utils.is_dask_collection(np.ones(3)) is False and "dask" not in sys.modules
import dask.array as da
assert utils.is_dask_collection(da.ones(3)) and not utils.is_dask_collection(np.ones(3))
with _collector.imports_first():
    assert not gc.isenabled()
    _collector.imports_done()
    assert gc.isenabled() and gc.get_freeze_count() > 10000
with _collector.imports_first():
    assert not gc.isenabled()
assert gc.isenabled()
print("ok")
"""
    proc = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0 and proc.stdout.strip() == "ok", proc.stderr[-2000:]


def test_console_map_collects_again_before_computing(tmp_path):
    """The console `subsurf map` reads the survey with the collector off and computes with it on again,
    the imports frozen (subsurf.cli._collector; without the imports_done call the whole computation
    would run uncollected)."""
    from example_site import coarse_copy

    survey = coarse_copy(tmp_path)
    script = """
import gc, sys
import subsurf.site.maps as maps, subsurf.site.survey as survey
def spy(module, name):
    real = getattr(module, name)
    def call(*args, **kwargs):
        print(name, gc.isenabled(), gc.get_freeze_count() > 10000, file=sys.stderr, flush=True)
        return real(*args, **kwargs)
    setattr(module, name, call)
spy(survey, "load_survey"); spy(maps, "compute_maps")
from subsurf import cli
sys.argv = ["subsurf", *sys.argv[1:]]
cli.entry()
"""
    proc = subprocess.run([sys.executable, "-c", script, "map", str(survey), "--out", str(tmp_path / "out"),
                           "--quiet", "--no-geotiff"], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr[-2000:]
    lines = [line for line in proc.stderr.splitlines() if line.startswith(("load_survey", "compute_maps"))]
    assert lines == ["load_survey False False", "compute_maps True True"], proc.stderr[-2000:]
