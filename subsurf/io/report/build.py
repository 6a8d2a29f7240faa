"""One call that makes a planning report: the feasibility maps (unless given or skipped), then the page."""

from __future__ import annotations

__all__ = ["make_report"]


def make_report(survey_path, out_path, *, force: bool = False, quiet: bool = False, maps: bool = True,
                maps_out=None, map_result: dict | None = None, tables_dir=None, calibration=None, catalogue=None,
                reach_margin_db=None) -> dict:
    """Run the maps (unless given or skipped) and write the report; return the summary.

    Existing outputs are checked before any work starts.  ``calibration``: a site
    calibration file used instead of the survey's ``[calibration] file`` (maps and page).
    ``catalogue``: an antenna catalogue file replacing the survey's (``--catalogue``), maps and
    page alike.  ``reach_margin_db``: the reach threshold replacing the survey's ``[target] reach_margin``
    (``--reach-margin``), maps and page alike.  Map files go to ``maps_out`` when given (kept), else to a temporary folder that is removed afterwards.

    Returns
    -------
    dict
        :func:`.render.summary_payload` of the report, with ``tables`` (CSV files written
        to ``tables_dir``).
    """
    import tempfile
    from pathlib import Path

    from ..maps import run_map
    from ..outputs import check_outputs_free
    from ..progress import steps
    from .render import write_report

    out_path = Path(out_path)
    check_outputs_free([out_path], force=force)
    if maps_out is not None and map_result is None and maps:
        check_outputs_free([maps_out], force=force)
    n_steps = 6 if maps and map_result is None else 5
    with steps(n_steps, desc="subsurf report", quiet=quiet) as bar:
        tmp = None
        try:
            if maps and map_result is None:
                bar.start("feasibility maps")
                if maps_out is None:
                    tmp = tempfile.TemporaryDirectory(prefix="subsurf-maps-")
                folder = maps_out if tmp is None else tmp.name
                # GeoTIFF layers only when the map files are kept (they are not embedded)
                map_result = {**run_map(survey_path, folder, force=force or tmp is not None, quiet=True,
                                        geotiff=tmp is None, calibration=calibration, catalogue=catalogue,
                                        reach_margin_db=reach_margin_db),
                              "kept": tmp is None, "out_dir": str(folder)}
                bar.advance("site and soil")
            else:
                bar.start("site and soil")
            return write_report(survey_path, out_path, force=force, map_result=map_result, bar=bar,
                                tables_dir=tables_dir, calibration=calibration, catalogue=catalogue,
                                reach_margin_db=reach_margin_db)
        finally:
            if tmp is not None:
                tmp.cleanup()
