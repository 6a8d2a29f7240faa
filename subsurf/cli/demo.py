"""``subsurf demo``: the whole chain on the bundled fictional example, into a new folder."""

from __future__ import annotations

HELP = "run the whole chain on the bundled fictional example site and write the planning report"
EXAMPLE = """subsurf demo
subsurf demo --out my-demo --force"""

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
    "maps/map_antennas.png": "maximum depth map per antenna",
    "maps/map_scenarios.png": "scenario comparison map",
    "maps/map_soil_inputs.png": "soil inputs on the survey grid",
    "maps/summary.csv": "area each antenna reaches, per scenario",
    "maps/summary.md": "the same as Markdown",
    "maps/summary.json": "the same as JSON",
}


def add_arguments(parser) -> None:
    parser.add_argument("--out", metavar="DIR", default=DEFAULT_OUT,
                        help=f"new output folder (default: ./{DEFAULT_OUT}); an existing one is never "
                             "overwritten without --force")
    parser.add_argument("--force", action="store_true", help="replace an earlier demo output folder (one "
                        "holding other files is never deleted)")


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
    import fnmatch

    own = set(DESCRIPTIONS) | {"maps/geotiff/*.tif"}
    own_dirs = {"maps", "maps/geotiff"}
    found = []
    for p in sorted(folder.rglob("*")):
        rel = p.relative_to(folder).as_posix()
        if p.is_dir() and not p.is_symlink():
            if rel not in own_dirs:
                found.append(rel + "/")
        elif not any(fnmatch.fnmatchcase(rel, pat) for pat in own):
            found.append(rel)
    return found


def run_demo(out_dir, *, force: bool = False, quiet: bool = False) -> dict:
    """Write the demo into ``out_dir`` (built in a temporary folder, renamed at the end)."""
    import json
    import os
    import shutil
    import tempfile
    from pathlib import Path

    from ..errors import OutputExistsError
    from ..io.outputs import to_jsonable
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
        summary = make_report(survey, tmp / "report.html", quiet=quiet, maps_out=tmp / "maps", tables_dir=tmp)
        summary["report"] = str(out / "report.html")
        summary["tables"] = [str(out / Path(p).name) for p in summary["tables"]]
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


def run(args) -> int:
    from pathlib import Path

    from ..io.outputs import print_notes, print_result
    from .report import summary_text

    result = run_demo(args.out, force=args.force, quiet=args.quiet or args.json)
    out = Path(result["out"])
    listing, tifs = [], [f for f in result["files"] if f.endswith(".tif")]
    for f in result["files"]:
        if f.endswith(".tif"):
            if f == tifs[0]:
                folder = f.rsplit("/", 1)[0] + "/"
                listing.append((folder, f"{len(tifs)} GeoTIFF layers (max depth, margin, reach probability "
                                        "per scenario and antenna)"))
            continue
        listing.append((f, DESCRIPTIONS.get(f, "")))
    width = max(len(f) for f, _ in listing)
    lines = [f"subsurf demo: the bundled fictional example site ({Path(result['survey']).name} in "
             f"{Path(result['survey']).parent.name}/; invented data, no real place).",
             f"Wrote {len(result['files'])} files to {out}/:"]
    lines += [f"  {f.ljust(width)}  {d}".rstrip() for f, d in listing]
    lines += ["", summary_text(result), "",
              f"Open the report: {(out / 'report.html').resolve().as_uri()}"]
    print_result(result, "\n".join(lines), as_json=args.json)
    print_notes(result["warnings"], quiet=args.quiet or args.json)
    return 0
