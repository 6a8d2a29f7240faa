"""subsurf: plan and interpret ground-penetrating-radar surveys.

Site facts (moisture, salinity, temperature, texture) become the complex permittivity
and conductivity the radar wave sees; from those follow velocity, attenuation, the
maximum depth at which a target can be detected, antenna choice, acquisition settings,
time-to-depth conversion with uncertainty and feasibility maps over a survey area.

Submodules are imported on first use so that the command line starts quickly.
"""

from __future__ import annotations

import importlib
from pathlib import Path

__version__ = "0.1.0"
__all__ = ["SubsurfError", "InputError", "ModelRangeWarning", "config_dir", "__version__",
           "medium", "ground_properties", "target", "choose_antenna", "plan_survey", "time_to_depth",
           "fit_hyperbola", "fit_cmp", "load_survey", "feasibility_maps", "open_map", "write_report"]

_SUBMODULES = {
    # layers, in the direction of the data flow
    "ground", "waves", "detection", "planning", "interpretation", "site", "io", "cli",
    # public paths named in the design, and shared helpers
    "soil", "propagation", "velocity", "units", "errors",
}


def config_dir() -> Path:
    """Folder holding the bundled configuration tables (``configs/`` at the project root)."""
    import os

    env = os.environ.get("SUBSURF_CONFIG_DIR")
    if env:
        return Path(env)
    here = Path(__file__).resolve().parent.parent / "configs"
    if here.is_dir():
        return here
    from .errors import SubsurfError

    raise SubsurfError(
        "cannot find the configs/ folder; install subsurf from its source tree "
        "(pip install -e .) or set SUBSURF_CONFIG_DIR to a folder holding the tables"
    )


#: names re-exported from subsurf.errors, loaded on first use (errors imports numpy, which
#: ``subsurf --help`` does not need)
_FROM_ERRORS = ("SubsurfError", "InputError", "ModelRangeWarning")


#: the jobs as plain calls (documented in the README): name -> (module, attribute)
_API = {
    **{name: ("subsurf.api", name) for name in (
        "medium", "ground_properties", "target", "choose_antenna", "plan_survey", "load_survey",
        "feasibility_maps", "open_map", "write_report")},
    "time_to_depth": ("subsurf.interpretation.homogeneous", "depth_with_uncertainty"),
    "fit_hyperbola": ("subsurf.interpretation.hyperbola", "fit_hyperbola"),
    "fit_cmp": ("subsurf.interpretation.cmp", "fit_cmp"),
}


def __dir__():
    return sorted(set(globals()) | set(_API) | set(_FROM_ERRORS) | _SUBMODULES)


def __getattr__(name: str):
    if name in _API:
        module, attribute = _API[name]
        return getattr(importlib.import_module(module), attribute)
    if name in _FROM_ERRORS:
        from . import errors

        return getattr(errors, name)
    if name in _SUBMODULES:
        return importlib.import_module(f".{name}", __name__)
    raise AttributeError(f"module 'subsurf' has no attribute {name!r}")
