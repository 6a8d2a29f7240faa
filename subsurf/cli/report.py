"""``subsurf report``: the self-contained HTML planning report of a survey file.

Parses the arguments, calls :func:`subsurf.io.report.make_report` and prints where the
report is and what it recommends.
"""

from __future__ import annotations

HELP = "write the self-contained HTML planning report of a survey (one file, images embedded, printable)"
EXAMPLE = """subsurf report surveys/example-site/survey.toml --out fernhollow-report.html
subsurf report surveys/example-site/survey.toml --out plan.html --maps-out plan-maps --force"""


def add_arguments(parser) -> None:
    from .map import CATALOGUE_HELP

    parser.add_argument("survey", metavar="SURVEY.toml", help="survey file (schema: surveys/README.md)")
    parser.add_argument("--out", metavar="FILE.html", default=None,
                        help="report file to write (default: <survey folder name>-report.html here)")
    parser.add_argument("--maps-out", metavar="DIR", default=None,
                        help="also keep the feasibility map files (NetCDF, PNG, CSV) in DIR; by default "
                             "they are made in a temporary folder and only embedded in the report")
    parser.add_argument("--no-maps", action="store_true",
                        help="skip the feasibility maps (quicker; the report then has no map section)")
    parser.add_argument("--catalogue", metavar="FILE", help=CATALOGUE_HELP)
    parser.add_argument("--force", action="store_true", help="overwrite an existing report (and map files)")
    parser.add_argument("--calibration", metavar="JSON", help="site calibration written by 'subsurf calibrate' "
                        "(instead of the survey's [calibration] file): plan with the measured attenuation, Q*, "
                        "velocity and effective performance; the report sets the model's predictions beside them")
    from ._reach import add_reach_margin_argument

    add_reach_margin_argument(parser, survey=True)


def default_report_name(survey_path) -> str:
    """``<folder>-report.html`` for ``.../<folder>/survey.toml``, else ``<stem>-report.html``."""
    from pathlib import Path

    p = Path(survey_path)
    stem = p.parent.name if p.stem == "survey" and p.parent.name else p.stem
    return f"{stem or 'survey'}-report.html"


def summary_text(summary: dict) -> str:
    """The readable lines printed after a report is written."""
    lines = [f"Report written: {summary['report']}"]
    cal = summary.get("calibration")
    if cal:
        lines.append(cal["note"] + ".")
        if cal["recommended_before"] != summary["recommended"]:
            lines.append(f"Recommendation changed by the calibration: {cal['recommended_before'] or 'none'} -> "
                         f"{summary['recommended'] or 'none'}")
    if summary["recommended"]:
        lines.append(f"Recommended antenna: {summary['recommended']}")
    lines.append(f"Reason: {summary['reason']}")
    th = summary["thresholds"]
    lines.append(f"Reach threshold: {th['reaches_margin_db']:g} dB"
                 + ("" if th["reaches_margin_source"] == "default" else f" ({th['reaches_margin_source']})")
                 + f"; {summary['reach_definition']}")
    t = summary.get("target") or {}
    if "depth_top_m" in t:
        from ..detection.verdicts import range_definition

        lines.append(f"Target: {t['kind']}, {range_definition(t['depth_top_m'], t['depth_bottom_m'])}")
    if summary.get("catalogue"):
        lines.append(f"Antennas: {summary['catalogue']['text']}")
    lines.append(f"Ground velocity ({'measured on site' if cal else 'site median'}): "
                 f"{summary['velocity_m_per_ns']:.3f} m/ns "
                 f"(5-95 %: {summary['velocity_p05_m_per_ns']:.3f}-{summary['velocity_p95_m_per_ns']:.3f})")
    if summary["warnings"]:
        lines.append(f"{len(summary['warnings'])} model warning(s) are listed in the report.")
    lines.append("Caution: " + summary["caution"])
    return "\n".join(lines)


#: expected sizes (bytes) for the free-space preflight: the report with its figures embedded (the
#: example's is about 1 MB), and a map folder (about 2 MB for the example)
REPORT_BYTES, MAPS_BYTES = 2e6, 3e6


def run(args) -> int:
    from pathlib import Path

    from ..io.gdal_pam import GDAL_SIDECARS
    from ..io.maps import OWN_FILES
    from ..io.outputs import print_notes, print_result
    from ..io.report import make_report
    from ..io.transaction import OutputTransaction
    from ._numpy_only import declare_numpy_only
    from ._reach import reach_margin_from_args

    declare_numpy_only()  # numpy arrays only: xarray need not import dask and pint to check (console only)
    reach_margin = reach_margin_from_args(args)
    out = Path(args.out) if args.out else Path(default_report_name(args.survey))
    keep_maps = bool(args.maps_out) and not args.no_maps
    txn = OutputTransaction("report", force=args.force, expected_bytes=REPORT_BYTES + MAPS_BYTES * keep_maps)
    html = txn.file(out)
    maps_dir = txn.folder(args.maps_out, own=OWN_FILES, sidecars=GDAL_SIDECARS) if keep_maps else None
    from ..io.outputs import collect_warnings

    # model warnings of the map run (e.g. a calibration's band extrapolated) become note: lines
    with collect_warnings() as map_notes, txn:  # the report and its map folder appear together, or neither
        summary = make_report(args.survey, html, force=True, quiet=args.quiet or args.json,
                              maps=not args.no_maps, maps_out=maps_dir, calibration=args.calibration,
                              catalogue=args.catalogue, reach_margin_db=reach_margin)
    summary = txn.public(summary)
    print_notes(txn.notes, quiet=args.quiet or args.json)
    if args.maps_out and not args.no_maps:
        summary["maps_out"] = str(args.maps_out)
    print_result(summary, summary_text(summary) + f"\nOpen it in a browser: {out.resolve().as_uri()}",
                 as_json=args.json)
    print_notes(list(summary["warnings"]) + [n for n in map_notes if n not in summary["warnings"]],
                quiet=args.quiet or args.json)
    return 0
