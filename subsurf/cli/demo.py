"""``subsurf demo``: the whole chain on the bundled fictional example, into a new folder.

Parses the arguments, calls :func:`subsurf.io.demo.run_demo` and prints the files written.
"""

from __future__ import annotations

HELP = "run the whole chain on the bundled fictional example site and write the planning report"
EXAMPLE = """subsurf demo
subsurf demo --out my-demo --force"""


def add_arguments(parser) -> None:
    from ..io.demo import DEFAULT_OUT

    parser.add_argument("--out", metavar="DIR", default=DEFAULT_OUT,
                        help=f"new output folder (default: ./{DEFAULT_OUT}); an existing one is never "
                             "overwritten without --force")
    parser.add_argument("--force", action="store_true", help="replace an earlier demo output folder (one "
                        "holding other files is never deleted)")
    from ._reach import add_reach_margin_argument

    add_reach_margin_argument(parser)


def run(args) -> int:
    import fnmatch
    from pathlib import Path

    from ..io.demo import DESCRIPTIONS, OWN_FILES, run_demo
    from ..io.gdal_pam import GDAL_SIDECARS
    from ..io.outputs import print_notes, print_result
    from ..io.transaction import OutputTransaction
    from ._numpy_only import declare_numpy_only
    from ._reach import reach_margin_from_args
    from .report import summary_text

    declare_numpy_only()  # numpy arrays only: xarray need not import dask and pint to check (console only)
    reach_margin = reach_margin_from_args(args)
    # the folder is staged and moved into place whole, with its manifest; an existing folder holding
    # files the demo does not write is never replaced, not even with --force
    txn = OutputTransaction("demo", force=args.force, expected_bytes=5e6)
    staged = txn.folder(args.out, own=OWN_FILES, foreign_ok=False, sidecars=GDAL_SIDECARS)
    with txn:
        result = run_demo(staged, force=True, quiet=args.quiet or args.json, public_dir=args.out,
                          reach_margin_db=reach_margin)
    result = txn.public(result)
    print_notes(txn.notes, quiet=args.quiet or args.json)
    out = Path(result["out"])
    listing, tifs = [], [f for f in result["files"] if f.endswith(".tif")]
    for f in result["files"]:
        if f.endswith(".tif"):
            if f == tifs[0]:
                folder = f.rsplit("/", 1)[0] + "/"
                listing.append((folder, f"{len(tifs)} GeoTIFF layers (max depth, margin, reach probability "
                                        "per scenario and antenna)"))
            continue
        listing.append((f, next((d for pat, d in DESCRIPTIONS.items() if fnmatch.fnmatchcase(f, pat)), "")))
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
