"""The report's sections as template contexts: formatted cells, sentences with numbers, figures.

Each ``<name>(data)`` takes the content of :func:`.content.collect` and returns the plain
values its template (``templates/sections/<name>.html.j2``) lays out: strings already in
the report's human units, tables as :class:`Table`, figures as :class:`Figure` (PNG bytes,
drawn by :mod:`subsurf.io.fig_report`).  No HTML is written here; the templates escape
every value (jinja2 autoescape).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ...detection.verdicts import range_definition
from .content import REPORT_FREQS_HZ, ground_table, site_geometry
from .texts import (
    ASSUMPTIONS,
    HUMAN,
    MODEL_VALIDITY,
    REFERENCES,
    REFERENCES_SKIPPED,
    SAFETY,
    SPREAD_NAMES,
    map_columns,
)
from .texts import depth_span as _depth_span

__all__ = ["Table", "Figure", "Verdict", "fmt", "SECTION_BUILDERS"]


@dataclass(frozen=True)
class Verdict:
    """A verdict word in a table cell, shown with its colour class."""

    word: str

    @property
    def css(self) -> str:
        return {"reaches": "verdict-reaches", "marginal": "verdict-marginal",
                "partly blind": "verdict-marginal"}.get(self.word, "verdict-no")


@dataclass(frozen=True)
class Table:
    """Headers, rows of cells (str or :class:`Verdict`), numeric column indices, optional row classes."""

    headers: list
    rows: list
    numeric: tuple = ()
    row_classes: list = field(default_factory=list)


@dataclass(frozen=True)
class Figure:
    """A PNG figure with its alternative text and caption."""

    png: bytes
    alt: str
    caption: str = ""


def fmt(v, spec=".3g") -> str:
    """A number as the report shows it: ``–`` for missing/NaN, ``∞`` for infinity."""
    if v is None:
        return "–"
    if isinstance(v, float):
        if math.isnan(v):
            return "–"
        if math.isinf(v):
            return "∞"
    try:
        return format(v, spec)
    except (TypeError, ValueError):
        return str(v)


def summary(data) -> dict:
    rows, rec, t, chart = data["ranking"], data["recommended"], data["target"], data["depth_chart"]
    decision = data.get("decision")
    cards = []
    if decision is not None:
        cards += _decision_cards(decision, rows, (data.get("maps") or {}).get("summary", []),
                                 data["reaches_margin_db"])
    else:
        rec_row = next((r for r in rows if r["name"] == rec), None)
        if rec_row:
            cards.append(("recommended antenna", rec, f"{rec_row['centre_freq_hz'] / 1e6:.0f} MHz (site-median soil)",
                          False))
            cards.append(("max depth, this target", f"{rec_row['max_depth_m']:.2f} m",
                          f"target at {_depth_span(t)} · margin {rec_row['margin_db']:.0f} dB"
                          + (f" at {t['depth_m']:.2f} m" if "depth_top_m" in t else ""),
                          rec_row["verdict"] != "reaches"))
        else:
            cards.append(("recommended antenna", "none", "no listed antenna reaches the target", True))
            best = max(rows, key=lambda r: r["margin_db"])
            cards.append(("closest antenna", best["name"], f"max depth {best['max_depth_m']:.2f} m", True))
        reaching = [r["name"] for r in rows if r["verdict"] == "reaches"]
        cards.append(("antennas that reach", f"{len(reaching)} of {len(rows)}",
                      ", ".join(reaching) if reaching else "none with margin", not reaching))
    cards.append(("ground velocity" + (" (measured)" if data.get("calibration") else ""),
                  f"{chart['velocity'] * 1e-9:.3f} m/ns",
                  f"site median; 5–95 %: {chart['velocity_p05'] * 1e-9:.3f}–{chart['velocity_p95'] * 1e-9:.3f} m/ns",
                  False))
    size = f", {t['size_m']:.2g} m across" if t["kind"] != "planar" else ""
    across = ""
    if decision is not None:
        across = "; ".join(f"{c.scenario}: {c.antenna or 'none'} — {c.reason} (reaches {c.reach_pct:.0f} % of the "
                           f"site, mean probability of reaching {c.expected_reach_pct:.0f} %)"
                           for c in decision.per_scenario)
    return {"description": data["survey"].get("description") or "",
            "cards": [{"k": k, "v": v, "s": s, "bad": bad} for k, v, s, bad in cards],
            "target_text": f"{t['kind']} target of {t['material'].replace('_', ' ')}{size}, " + (
                f"top at {t['depth_m']:.2f} m" if "depth_top_m" not in t else
                f"tops at depths of interest {_depth_span(t)}: reach judged at the deepest ({t['depth_bottom_m']:.2f} "
                f"m), blind zone and resolution at the shallowest ({t['depth_top_m']:.2f} m)"),
            "reason": data["reason"], "across": across, "caution": " ".join(data["caution"]),
            "calibrated": (data.get("calibration") or {}).get("note", ""),
            "from_maps": decision is not None, "reaches_db": f"{data['reaches_margin_db']:g}",
            "illustrative": bool(data.get("antennas_illustrative"))}


def calibration(data) -> dict | None:
    """Predicted (soil model, catalogue) beside observed (site calibration), and the plan before/after."""
    cal = data.get("calibration")
    if not cal:
        return None

    def pm(v, se, spec):
        return "–" if v is None else fmt(v, spec) + ("" if not se else f" ± {fmt(se, spec)}")

    spec = {"m/ns": ".4f", "dB/m": ".3g", "": ".3g", "m": ".3g", "dB": ".1f"}
    rows = []
    for c in cal["comparison"]:
        f = spec.get(c["unit"], ".3g")
        rng = c["model_range"]
        rows.append([c["quantity"], fmt(c["model"], f), "–" if not rng else f"{fmt(rng[0], f)}–{fmt(rng[1], f)}",
                     pm(c["observed"], c["observed_se"], f), c["unit"], c["how"]])
    comparison = Table(["quantity", "predicted (site-median soil)", "predicted 5–95 %", "observed ± se", "unit",
                        "how"], rows, numeric=(1, 3))
    ch = []
    for r in cal["changes"]:
        ch.append([r["antenna"] + (" ★" if r["antenna"] == data["recommended"] else ""),
                   fmt(r["max_depth_before_m"]), fmt(r["max_depth_after_m"]),
                   fmt(r["max_depth_after_m"] - r["max_depth_before_m"], "+.3g"),
                   fmt(r["margin_before_db"], ".1f"), fmt(r["margin_after_db"], ".1f"),
                   Verdict(r["verdict_before"]), Verdict(r["verdict_after"])])
    changes = Table(["antenna", "max depth, model (m)", "max depth, calibrated (m)", "change (m)",
                     "margin, model (dB)", "margin, calibrated (dB)", "verdict, model", "verdict, calibrated"],
                    ch, numeric=(1, 2, 3, 4, 5))
    before, after = cal["recommended_before"], data["recommended"]
    verdict = (f"The recommendation stays {after}." if before == after else
               f"The recommendation changes from {before or 'none'} (soil model, catalogue) to {after or 'none'} "
               "(site calibration).")
    return {"note": cal["note"], "file": cal["file"], "comparison": comparison, "changes": changes,
            "recommendation": verdict, "draws": cal["model_draws"], "seed": cal["seed"]}


def _decision_cards(decision, rows, map_rows, reaches_db) -> list:
    """The headline cards from the maps' decision: what to bring, its worst-scenario area, antennas reaching."""
    freq = {r["name"]: r["centre_freq_hz"] for r in rows}
    if decision.bring is None:
        return [("bring", "none", f"no antenna reaches the target with {reaches_db:g} dB anywhere", True)]
    also = "; ".join(f"{s}: also {a}" for s, a in decision.also.items())
    cards = [("bring", decision.bring, f"{freq.get(decision.bring, 0) / 1e6:.0f} MHz" + (f" · {also}" if also else ""),
              False)]
    w = next(r for r in map_rows if r["scenario"] == decision.worst_scenario and r["antenna"] == decision.bring)
    cards.append((f"area reached, worst scenario ({decision.worst_scenario})", f"{w['reach_pct']:.0f} %",
                  f"{decision.bring}, margin ≥ {reaches_db:g} dB · mean probability {w['expected_reach_pct']:.0f} %",
                  w["reach_pct"] < 99.5))
    whole = [a for a in dict.fromkeys(r["antenna"] for r in map_rows)
             if all(r["reach_pct"] >= 100.0 - 1e-9 for r in map_rows if r["antenna"] == a)]
    cards.append(("antennas that reach the whole site", f"{len(whole)} of {len(rows)}",
                  (", ".join(whole) if whole else "none") + " (every scenario)", not whole))
    return cards


def site(data) -> dict:
    from ...site.survey import QUANTITIES
    from ..fig_report import site_map_png

    survey, d = data["survey_obj"], data["survey"]
    rings, zones, samples = site_geometry(survey)
    png = site_map_png(rings, samples, crs_name=f"{survey.grid_crs.name} ({d['grid_crs_source']})", zones=zones)
    info = [["survey file", Path(d["survey"]).name], ["outline CRS", d["outline_crs"]],
            ["grid CRS", f"{d['grid_crs_name']} ({d['grid_crs']}, {d['grid_crs_source']})"],
            ["grid cell size", f"{d['cell_size_m']:g} m"], ["soil model", d["soil_model"]],
            ["texture", d["texture"] or "not given"], ["antennas considered", ", ".join(d["antennas"])],
            ["antenna catalogue", d["catalogue"]["text"]]]
    rows = []
    for f in data["site_soil"].facts:
        label, unit, k, spec = HUMAN[f["quantity"]]
        rng = "" if f["min"] == f["max"] else f"{fmt(f['min'] * k, spec)}–{fmt(f['max'] * k, spec)}"
        rows.append([label, fmt(f["value"] * k, spec), fmt(f["sd"] * k, ".2g") if f["sd"] else "–", rng, unit,
                     f["source"]])
    return {"figure": Figure(png, "site outline with soil sample positions",
                             "Site outline and soil sample positions in the grid's projected coordinates."),
            "info": Table(["item", "value"], info),
            "facts": Table(["quantity", "value", "± (1 s.d.)", "range on site", "unit", "source"], rows,
                           numeric=(1, 2, 3)),
            "quantities": ", ".join(QUANTITIES)}


def ground(data) -> dict:
    from scipy import constants

    from ..fig_report import ground_properties_png

    g = data["ground"]
    eps_eff = g["sigma_eff"] / (2 * np.pi * g["freq_hz"] * constants.epsilon_0)
    png = ground_properties_png(g["freq_hz"], g["eps_real"], g["eps_imag"], g["velocity"],
                                g["attenuation_db_per_m"], antenna_freqs_hz=data["ground_table_freqs_hz"],
                                eps_effective=eps_eff)
    f, w = ground_table(data["site_soil"].soil, data["ground_table_freqs_hz"])
    rows = [[fmt(f[i] / 1e6, ".4g"), fmt(float(w.eps_real[i])), fmt(float(w.eps_imag[i])),
             fmt(float(w.effective_conductivity[i]) * 1e3), fmt(float(w.loss_tangent[i])),
             fmt(float(w.velocity[i]) * 1e-9, ".4f"), fmt(float(w.wavelength[i])),
             fmt(float(w.attenuation_db_per_m[i])), fmt(float(w.skin_depth[i]))] for i in range(f.size)]
    return {"figure": Figure(png, "relative permittivity, loss, velocity and attenuation against frequency",
                             "The site-median ground against frequency. Loss panel: the dielectric ε'' of the soil "
                             "model and the effective ε''_eff = σ_eff/(ωε₀) that includes DC conduction. Vertical "
                             "lines mark the centre frequencies of the antennas considered."),
            "table": Table(["f (MHz)", "ε'", "ε''", "σ_eff (mS/m)", "tan δ", "v (m/ns)", "λ (m)", "α (dB/m)",
                            "skin depth (m)"], rows, numeric=tuple(range(9))),
            "conduction_in_eps": bool(getattr(data["site_soil"].soil, "conduction_in_eps", False))}


def reach(data) -> dict:
    from ..fig_report import max_depth_png

    t = data["target"]
    pts = [{"name": r["name"], "freq_hz": r["centre_freq_hz"], "max_depth_m": r["max_depth_m"],
            "recommended": r["recommended"]} for r in data["ranking"]]
    png = max_depth_png(REPORT_FREQS_HZ, data["max_depth_curves"], t["depth_m"], pts,
                        target_label=f"{t['kind']} target" + (f", bottom of {_depth_span(t)}" if "depth_top_m" in t
                                                              else ""))
    text = ("Curves: the deepest the target could be detected by a system of the stated performance and "
            "gain at each frequency. Points: each antenna with its own performance (stacking included) and "
            "gain; a point above the dashed target line does not reach it.")
    return {"figure": Figure(png, "maximum detectable depth against frequency", text)}


def antennas(data) -> dict:
    rows, classes = [], []
    for r in sorted(data["ranking"], key=lambda r: -r["margin_db"]):
        rows.append([r["name"] + (" ★" if r["recommended"] else ""), fmt(r["centre_freq_hz"] / 1e6, ".4g"),
                     fmt(r["performance_db"], ".1f"), fmt(r["max_depth_m"]), fmt(r["margin_db"], ".1f"),
                     Verdict(r["verdict"]), fmt(r["vertical_resolution_m"], ".2g"),
                     fmt(r["fresnel_radius_m"], ".2g"), fmt(r["received_freq_hz"] / 1e6, ".3g")])
        classes.append("rec" if r["recommended"] else "")
    t = data["target"]
    bottom, top = ("", "") if "depth_top_m" not in t else (f" at {t['depth_bottom_m']:.2f} m",
                                                          f" at {t['depth_top_m']:.2f} m")
    out = {"table": Table(["antenna", "f_c (MHz)", "performance (dB)", "max depth (m)",
                           f"margin at target{bottom} (dB)", "verdict", f"vertical resolution{top} (m)",
                           f"horizontal resolution{top} (m)", f"received f{top} (MHz)"],
                          rows, numeric=(1, 2, 3, 4, 6, 7, 8), row_classes=classes),
           "reason": data["reason"], "decision": None,
           "median": data.get("site_median_recommendation") or {}}
    decision = data.get("decision")
    if decision is not None:  # the choice per scenario, from the maps' area statistics
        out["decision"] = Table(
            ["scenario", "antenna chosen", f"area reached, margin ≥ {data['reaches_margin_db']:g} dB (%)",
             "mean probability of reaching (%)", "why"],
            [[c.scenario, c.antenna or "none", fmt(c.reach_pct, ".0f"), fmt(c.expected_reach_pct, ".0f"), c.reason]
             for c in decision.per_scenario], numeric=(2, 3))
    out["zones"] = zone_table(data)
    return out


def zone_table(data) -> Table | None:
    """One row per soil zone: its soil, area share, the antenna for it and the share of its cells each reaches.

    From the maps' per-zone statistics (:func:`subsurf.site.zone_stats.zone_summaries`: the site's
    area fractions and decision rule restricted to the zone's cells); None without zones or maps.
    """
    zones = data.get("zones") or []
    if not zones:
        return None
    t = f"{data['reaches_margin_db']:g}"
    names = next(([a["antenna"] for a in z["antennas"]] for z in zones if z["antennas"]), [])
    headers = ["zone", "texture", "moisture θ (%)", "pore-water EC (mS/m)", "area (% of site)", "antenna for the zone",
               f"its cells reached, margin ≥ {t} dB, worst scenario (%)", "worst scenario",
               *[f"{n}: cells reached, worst scenario (%)" for n in names]]
    rows = []
    for z in zones:
        worst = {a["antenna"]: a["worst_reach_pct"] for a in z["antennas"]}
        rec = z["recommended"] or "none"
        if z["also"]:
            rec += "; " + "; ".join(f"{s}: also {a}" for s, a in z["also"].items())
        rows.append([z["zone"], (z["texture"] or "–").replace("_", " "), fmt(z["moisture_pct"], ".3g"),
                     fmt(z["pore_water_ec_ms_per_m"], ".3g"), fmt(z["area_pct"], ".0f"), rec,
                     fmt(z["recommended_reach_pct"], ".0f"), z["worst_scenario"] or "–",
                     *[fmt(worst.get(n), ".0f") for n in names]])
    numeric = (2, 3, 4, 6, *range(8, 8 + len(names)))
    return Table(headers, rows, numeric=numeric)


def settings(data) -> dict:
    acq = data["acquisition"]
    return {"antenna": data["chart_antenna"],
            "which": "the recommended antenna" if data["recommended"] else "the antenna that comes closest",
            "depth": f"{data['target']['depth_m']:.2f}", "area": f"{acq['area_m2']:,.0f}",
            "range_note": "" if "depth_top_m" not in data["target"] else (
                f" (the bottom of {_depth_span(data['target'])}; blind zone and 2D line spacing from its top)"),
            "table": Table(["setting", "value", "unit", "rule"],
                           [[r["label"], fmt(r["value"], r["fmt"]), r["unit"], r["rule"]] for r in acq["rows"]],
                           numeric=(1,)),
            "survey": _survey_table(acq.get("survey")),
            "notes": list(acq["notes"])}


def _survey_table(survey) -> Table | None:
    """Lines, km of line and hours over the site for each grid (None when no survey is planned)."""
    if not survey:
        return None
    return Table(["grid", "line spacing (m)", "lines", "line (km)", "survey time (h)",
                  "steepest dip imaged without aliasing (°)"],
                 [[g["label"], fmt(g["line_spacing_m"], ".3g"), str(g["lines"]), fmt(g["total_line_km"], ".3g"),
                   fmt(g["survey_time_h"], ".3g"),
                   "—" if g["unaliased_dip_deg"] is None else fmt(g["unaliased_dip_deg"], ".0f")]
                  for g in survey["grids"]], numeric=(1, 2, 3, 4, 5))


def _describe_files(files) -> str:
    """Short description of a list of output file names, grouped by kind."""
    kinds = {".nc": "CF NetCDF", ".tif": "GeoTIFF layers", ".png": "PNG maps", ".csv": "CSV", ".md": "Markdown",
             ".json": "JSON"}
    counts: dict = {}
    for f in files:
        k = kinds.get(Path(f).suffix.lower(), "other")
        counts[k] = counts.get(k, 0) + 1
    return ", ".join(f"{n} {k}" if n > 1 else f"{k}" if k != "other" else "1 other" for k, n in counts.items()) + \
        f" ({len(files)} files)"


def maps(data) -> dict:
    m = data["maps"]
    if not m:
        return {"present": False}
    scen = data["survey"]["scenarios"]
    out = {"present": True, "scenarios": scen if len(scen) > 1 or (scen and scen[0]["name"] != "base") else [],
           "table": None, "monte_carlo": m.get("monte_carlo") or {},
           "figures": [Figure(f["png"], f["caption"], f["caption"]) for f in m["figures"]],
           "files": _describe_files(m["files"]) if m["files"] else ""}
    if m["summary"]:
        cols = map_columns(data["reaches_margin_db"])
        rows = [[fmt(r.get(k), f) if f != "s" else str(r.get(k, "")) for k, _, f in cols] for r in m["summary"]]
        out["table"] = Table([h for _, h, _ in cols], rows, numeric=tuple(range(2, len(cols))))
        mc = out["monte_carlo"]
        err = mc.get("max_estimated_error", mc.get("max_standard_error", 0.0))
        out["mc_error"] = f"{err:.3f}" if mc else ""
        out["mc_sampled"] = ", ".join(f"{name} {100 * f:.1f} %" for name, f in mc.get("sampled_fraction", {}).items())
    return out


def depth(data) -> dict:
    from ..fig_report import time_depth_png

    c = data["depth_chart"]
    vtxt = (f"{data['chart_antenna']}: v = {c['velocity'] * 1e-9:.3f} m/ns "
            f"(5–95 %: {c['velocity_p05'] * 1e-9:.3f}–{c['velocity_p95'] * 1e-9:.3f} m/ns), "
            f"antenna separation {c['offset_m']:g} m")
    png = time_depth_png(c["twt_s"], c["depth_m"], c["depth_p05_m"], c["depth_p95_m"], velocity_text=vtxt,
                         target_depth_m=data["target"]["depth_m"])
    rows = [[fmt(r["twt_ns"], ".4g"), fmt(r["depth_m"], ".2f"), fmt(r["depth_p05_m"], ".2f"),
             fmt(r["depth_p95_m"], ".2f")] for r in c["table"]]
    return {"figure": Figure(png, "two-way travel time to depth chart with uncertainty band",
                             "Depth below the surface for a two-way travel time measured from time zero."),
            "table": Table(["two-way time (ns)", "depth (m)", "5 % (m)", "95 % (m)"], rows, numeric=(0, 1, 2, 3)),
            "freq_mhz": f"{c['freq_hz'] / 1e6:.0f}", "draws": c["draws"], "seed": c["seed"],
            "varied": ", ".join(SPREAD_NAMES.get(v, v) for v in c["varied"]) or "none (no spread given)"}


def assumptions(data) -> dict:
    model = data["survey"]["soil_model"]
    t = data["target"]
    rng = [] if "depth_top_m" not in t else [
        f"Target depth range: {range_definition(t['depth_top_m'], t['depth_bottom_m'])}. A map cell, or an antenna, "
        "counts as reaching only where the whole range is seen."]
    return {"entries": [f"Soil model: {MODEL_VALIDITY.get(model, model)}", *ASSUMPTIONS, *rng],
            "warnings": list(data["warnings"])}


def references(data) -> dict:
    skip = REFERENCES_SKIPPED.get(data["survey"]["soil_model"], set())
    return {"entries": [{"text": text, "use": use} for key, (text, use) in REFERENCES.items() if key not in skip]}


def safety(data) -> dict:
    return {"entries": list(SAFETY)}


#: section id -> context builder, in page order (titles in :data:`.texts.SECTIONS`)
SECTION_BUILDERS = {"summary": summary, "calibration": calibration, "site": site, "ground": ground, "reach": reach, "antennas": antennas,
                    "settings": settings, "maps": maps, "depth": depth, "assumptions": assumptions,
                    "references": references, "safety": safety}
