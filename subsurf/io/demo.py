"""The demo: the whole chain on the bundled fictional example site, written into a new folder.

:func:`run_demo` builds the folder under a temporary name (report, its CSV tables and JSON
summary, the feasibility map files) and renames it into place when complete; ``force``
replaces only an earlier demo folder, never one holding files the demo does not write.
The example is a fictional site with invented data.
"""

from __future__ import annotations

__all__ = ["DEFAULT_OUT", "DESCRIPTIONS", "OWN_FILES", "example_survey_path", "run_demo"]  # noqa: F822 (OWN_FILES: module __getattr__)

#: default output folder
DEFAULT_OUT = "subsurf-demo"
EXAMPLE_SURVEY = ("surveys", "example-site", "survey.toml")

#: what each written file is, for the listing printed at the end
DESCRIPTIONS = {
    "report.html": "the planning report (self-contained; open in any browser, or print)",
    "summary.json": "the report's main results as JSON",
    "antenna_ranking.csv": "antennas ranked for the target",
    "time_to_depth.csv": "two-way time to depth table with its 5-95 % band (field reference)",
    "ground_properties.csv": "the site-median ground's radar properties by frequency",
    "maps/feasibility.nc": "feasibility layers as CF NetCDF (GIS-ready)",
    "maps/feasibility.nc.aux.xml": "band names of that NetCDF for GDAL/QGIS",
    "maps/map_antennas__*.png": "maximum depth map per antenna, one per scenario",
    "maps/map_scenarios.png": "scenario comparison map",
    "maps/map_soil_inputs.png": "soil inputs on the survey grid",
    "maps/summary.csv": "area each antenna reaches, per scenario",
    "maps/summary.md": "the same as Markdown",
    "maps/summary.json": "the same as JSON",
    # beside every CSV (subsurf.io.tables)
    "*.csv-metadata.json": "that CSV's columns, units and caution (W3C CSV on the Web)",
    "*.csvt": "that CSV's field types, for GDAL/OGR",
}


def __getattr__(name):
    """``OWN_FILES``: glob patterns of every file a demo folder holds (the map's GeoTIFFs by their layer names).

    Built on first use, because the map's patterns live in :mod:`subsurf.io.maps`, which imports numpy and
    the physics: ``subsurf --help`` reads this module's ``DEFAULT_OUT`` and must stay light.
    """
    if name == "OWN_FILES":
        from .maps import OWN_FILES as map_files

        return (*DESCRIPTIONS, *(f"maps/{pattern}" for pattern in map_files if pattern.startswith("geotiff/")))
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def example_survey_path():
    """Path of the bundled fictional example survey (beside the configs/ folder)."""
    from pathlib import Path

    from .. import config_dir
    from ..errors import SubsurfError

    path = Path(config_dir()).parent.joinpath(*EXAMPLE_SURVEY)
    if not path.is_file():
        raise SubsurfError(f"the bundled example survey is missing ({path}); reinstall subsurf from its "
                           "source tree (pip install -e .)")
    return path


def _foreign_files(folder) -> list[str]:
    """Files and folders under ``folder`` that a demo run does not write (so --force must not delete them)."""
    from ._staging import is_own
    from .gdal_pam import GDAL_SIDECARS

    own_dirs = {"maps", "maps/geotiff"}
    found = []
    for p in sorted(folder.rglob("*")):
        rel = p.relative_to(folder).as_posix()
        if p.is_dir() and not p.is_symlink():
            if rel not in own_dirs:
                found.append(rel + "/")
        elif not is_own(rel, __getattr__("OWN_FILES"), GDAL_SIDECARS):
            found.append(rel)
    return found


def run_demo(out_dir, *, force: bool = False, quiet: bool = False, public_dir=None, reach_margin_db=None) -> dict:
    """Write the demo into ``out_dir`` (built in a temporary folder, renamed at the end).

    ``public_dir`` is the folder's name as the user will see it, when ``out_dir`` is a staged
    folder of an output transaction (:mod:`subsurf.io.transaction`); paths written into the
    demo's files use it.  ``reach_margin_db``: the reach threshold (``--reach-margin``; default the
    example survey's).
    """
    import json
    import os
    import shutil
    import tempfile
    from pathlib import Path

    from ..errors import OutputExistsError
    from .outputs import to_jsonable
    from .report import make_report

    out = Path(out_dir)
    if out.exists() and not force:
        raise OutputExistsError(f"output folder already exists: {out}; choose another --out or pass --force "
                                "to replace it")
    if out.exists() and not out.is_dir():
        raise OutputExistsError(f"{out} exists and is not a folder; choose another --out")
    if out.exists():
        foreign = _foreign_files(out)
        if foreign:
            raise OutputExistsError(f"{out} holds files subsurf demo did not write (e.g. {foreign[0]}); --force "
                                    "only replaces an earlier demo folder, so choose another --out")
    survey = example_survey_path()
    out.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.", suffix=".partial", dir=out.parent))
    umask = os.umask(0)  # mkdtemp makes a private (0700) folder; give it the usual permissions
    os.umask(umask)
    os.chmod(tmp, 0o777 & ~umask)
    try:
        summary = make_report(survey, tmp / "report.html", quiet=quiet, maps_out=tmp / "maps", tables_dir=tmp,
                              reach_margin_db=reach_margin_db)
        shown = Path(public_dir) if public_dir is not None else out
        summary["report"] = str(shown / "report.html")
        summary["tables"] = [str(shown / Path(p).name) for p in summary["tables"]]
        (tmp / "summary.json").write_text(json.dumps(to_jsonable(summary), indent=2, ensure_ascii=False,
                                                     allow_nan=False) + "\n", encoding="utf-8")
        if out.exists():  # --force: replace the old folder only now that the new one is complete
            old = out.with_name(f".{out.name}.old-{os.getpid()}")
            os.replace(out, old)
            os.replace(tmp, out)
            shutil.rmtree(old, ignore_errors=True)
        else:
            os.replace(tmp, out)
    finally:
        if tmp.exists():
            shutil.rmtree(tmp, ignore_errors=True)
    files = sorted(p.relative_to(out).as_posix() for p in out.rglob("*") if p.is_file())
    return {"out": str(out), "survey": str(survey), "files": files, **summary}
