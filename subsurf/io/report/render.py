"""The planning report as HTML (jinja2 templates, autoescaped), its JSON summary and CSV tables.

Templates live in ``templates/`` (shipped as package data): ``report.html.j2`` frames the
page, ``sections/<id>.html.j2`` lays out each section from the context that
:mod:`.sections` builds, ``macros.html.j2`` holds tables and figures, ``report.css`` the
screen and print styles.  Autoescape is on for every template, so no value from a survey
file can inject markup; figures are embedded as base64 PNG data URIs, and the page has no
scripts, fonts or links to the network.

Library choice: jinja2 (a well-kept template engine, pure Python, already a dependency of
much of the scientific-Python stack) instead of HTML assembled in f-strings.
"""

from __future__ import annotations

import base64
import functools
from pathlib import Path

import numpy as np

from .content import collect
from .sections import SECTION_BUILDERS, Verdict
from .texts import SECTIONS

__all__ = ["render_html", "summary_payload", "report_tables", "report_table_specs", "table_file_names", "write_report",
           "TABLE_NAMES"]

#: CSV tables written beside a report (``tables_dir``)
TABLE_NAMES = ("antenna_ranking.csv", "time_to_depth.csv", "ground_properties.csv")


def _png_data_uri(png: bytes) -> str:
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


@functools.lru_cache(maxsize=1)
def environment():
    """The jinja2 environment of the report templates (autoescape on, undefined names are errors)."""
    import jinja2

    env = jinja2.Environment(loader=jinja2.PackageLoader("subsurf.io.report", "templates"), autoescape=True,
                             undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True,
                             keep_trailing_newline=True)
    env.filters["png_data_uri"] = _png_data_uri
    env.tests["verdict"] = lambda v: isinstance(v, Verdict)
    return env


def render_html(data: dict) -> str:
    """The complete, self-contained HTML page for the content of :func:`.content.collect`."""
    from ... import __version__

    titles = dict(SECTIONS)
    sections = [(sid, titles[sid], ctx) for sid, build in SECTION_BUILDERS.items() if (ctx := build(data)) is not None]
    return environment().get_template("report.html.j2").render(
        title=data["title"], generated=data["generated"], version=__version__,
        survey_file=Path(data["survey"]["survey"]).name, sections=sections,
        toc=[(sid, h) for sid, h, _ in sections[1:]],
        reaches_db=f"{data['reaches_margin_db']:g}")


def summary_payload(data: dict, report_path) -> dict:
    """The JSON-able summary printed by the commands (no arrays, no images)."""
    from ...detection.verdicts import reach_definition
    from ...safety import CAUTION

    rows = [{"antenna": r["name"], "centre_frequency_mhz": r["centre_freq_hz"] / 1e6,
             **{k: r[k] for k in ("performance_db", "max_depth_m", "margin_db", "verdict", "recommended")}}
            for r in data["ranking"]]
    c = data["depth_chart"]
    return {
        "report": str(report_path),
        "survey": data["survey"]["survey"],
        "site": data["survey"]["name"],
        "target": data["target"],
        "catalogue": data["survey"]["catalogue"],
        "recommended": data["recommended"],
        "reason": data["reason"],
        "thresholds": {"reaches_margin_db": data["reaches_margin_db"], "marginal_margin_db": 0.0,
                       "reaches_margin_source": data["reaches_margin_source"]},
        "reach_definition": reach_definition(data["reaches_margin_db"]),
        "decision": data["decision"].as_dict() if data.get("decision") is not None else None,
        "zones": data["zones"],
        "site_median_recommendation": data.get("site_median_recommendation"),
        "ranking": rows,
        "velocity_m_per_ns": c["velocity"] * 1e-9,
        "velocity_p05_m_per_ns": c["velocity_p05"] * 1e-9,
        "velocity_p95_m_per_ns": c["velocity_p95"] * 1e-9,
        "calibration": None if not data.get("calibration") else {
            **data["calibration"]["describe"], "recommended_before": data["calibration"]["recommended_before"],
            "changes": data["calibration"]["changes"], "comparison": data["calibration"]["comparison"]},
        "warnings": data["warnings"],
        "caution": CAUTION,
    }


def report_table_specs(data: dict) -> dict[str, tuple[str, list, list[dict]]]:
    """The report's main tables: file name -> (title, columns, rows), human units in the column names."""
    from ..tables import TableColumn as C

    def rows_of(cols, values):
        return [dict(zip((c.name for c in cols), v)) for v in values]

    text = {"datatype": "string", "fmt": ""}
    c = data["depth_chart"]
    ranking_cols = [C("antenna", "antenna", **text), C("centre_frequency_mhz", "centre frequency", "MHz"),
                    C("performance_db", "system performance", "dB"),
                    C("max_depth_m", "maximum detectable depth", "m"),
                    C("margin_db", "margin at the target depth", "dB"), C("verdict", "verdict", **text),
                    C("vertical_resolution_m", "vertical resolution", "m"),
                    C("horizontal_resolution_m", "horizontal resolution (first Fresnel zone radius)", "m"),
                    C("recommended", "recommended (yes/no)", **text)]
    ranking = rows_of(ranking_cols, [
        [r["name"], r["centre_freq_hz"] / 1e6, r["performance_db"], r["max_depth_m"], r["margin_db"], r["verdict"],
         r["vertical_resolution_m"], r["fresnel_radius_m"], "yes" if r["recommended"] else "no"]
        for r in data["ranking"]])
    depth_cols = [C("two_way_time_ns", "two-way travel time", "ns"), C("depth_m", "depth", "m"),
                  C("depth_p05_m", "depth, 5th percentile", "m"), C("depth_p95_m", "depth, 95th percentile", "m"),
                  C("antenna", "antenna", **text), C("velocity_m_per_ns", "velocity", "m/ns"),
                  C("antenna_separation_m", "antenna separation", "m")]
    depth = rows_of(depth_cols, [[r["twt_ns"], r["depth_m"], r["depth_p05_m"], r["depth_p95_m"], data["chart_antenna"],
                                  c["velocity"] * 1e-9, c["offset_m"]] for r in c["table"]])
    g = data["ground"]
    idx = np.unique(np.searchsorted(g["freq_hz"], [25e6, 50e6, 100e6, 200e6, 250e6, 400e6, 500e6, 1e9, 2e9]))
    ground_cols = [C("frequency_mhz", "frequency", "MHz"), C("eps_real", "relative permittivity, real part", "1"),
                   C("eps_imag", "relative permittivity, imaginary part (dielectric loss)", "1"),
                   C("sigma_eff_ms_per_m", "effective conductivity", "mS/m"), C("loss_tangent", "loss tangent", "1"),
                   C("velocity_m_per_ns", "phase velocity", "m/ns"),
                   C("attenuation_db_per_m", "attenuation", "dB/m"), C("skin_depth_m", "skin depth", "m")]
    ground = rows_of(ground_cols, [
        [g["freq_hz"][i] / 1e6, g["eps_real"][i], g["eps_imag"][i], g["sigma_eff"][i] * 1e3, g["loss_tangent"][i],
         g["velocity"][i] * 1e-9, g["attenuation_db_per_m"][i], g["skin_depth"][i]]
        for i in idx if i < g["freq_hz"].size])
    site = data["survey"]["name"]
    return {"antenna_ranking.csv": (f"subsurf report: antennas ranked for the target ({site})", ranking_cols, ranking),
            "time_to_depth.csv": (f"subsurf report: two-way time to depth with its 5-95 % band ({site})", depth_cols,
                                  depth),
            "ground_properties.csv": (f"subsurf report: the site-median ground's radar properties ({site})",
                                      ground_cols, ground)}


def report_tables(data: dict) -> dict[str, str]:
    """The report's main tables as CSV text: file name -> content (caution column on every row)."""
    from ..tables import csv_text

    return {name: csv_text(rows, cols) for name, (_, cols, rows) in report_table_specs(data).items()}


def table_file_names() -> list[str]:
    """Every file written into ``tables_dir``: each CSV of :data:`TABLE_NAMES` and its sidecars."""
    from ..tables import sidecar_names

    return [n for name in TABLE_NAMES for n in (name, *sidecar_names(name, coordinates=False).values())]


def write_report(survey_path, out_path, *, force: bool = False, map_result: dict | None = None,
                 bar=None, tables_dir=None, calibration=None, catalogue=None, reach_margin_db=None) -> dict:
    """Build the report for ``survey_path`` and write it atomically to ``out_path``.

    Returns the summary of :func:`summary_payload` (with ``tables``: the CSV files
    written to ``tables_dir`` when given).  Raises
    :class:`~subsurf.errors.OutputExistsError` if an output exists and not ``force``
    (checked before any work is done).
    """
    from ..outputs import atomic_write_text, check_outputs_free

    out_path = Path(out_path)
    names = table_file_names()
    check_outputs_free([out_path] + ([Path(tables_dir) / n for n in names] if tables_dir else []), force=force)
    data = collect(survey_path, map_result=map_result, bar=bar, calibration=calibration,
                   catalogue=catalogue, reach_margin_db=reach_margin_db)
    page = render_html(data)
    if bar is not None:
        bar.advance("writing")
    atomic_write_text(out_path, page, force=force)
    summary = summary_payload(data, out_path)
    summary["tables"] = []
    if tables_dir is not None:
        from ..tables import table_files

        for name, (title, cols, rows) in report_table_specs(data).items():
            csv_path = Path(tables_dir) / name
            for path, text in table_files(csv_path, rows, cols, title=title).items():
                atomic_write_text(path, text, force=force)
            summary["tables"].append(str(csv_path))
    return summary
