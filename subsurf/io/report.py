"""The self-contained HTML planning report for a survey file.

An edge module: it reads the survey (:mod:`subsurf.survey`), calls the physics modules
(soil → propagation → detection → antennas/acquisition, velocity for the depth chart)
and the feasibility maps (:mod:`subsurf.feasibility`), draws the figures
(:mod:`subsurf.reportfigs`) and writes one HTML file with every image embedded as a
base64 PNG data URI, its own CSS, no scripts, fonts or links to the network, and a print
stylesheet.  Nothing here re-derives physics; numbers come from the called modules.

:func:`collect` gathers the report's content as a plain dictionary (SI units), and
:func:`render_html` turns that into the page; :func:`write_report` does both and writes
atomically.
"""

from __future__ import annotations

import base64
import datetime as _dt
import html
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

__all__ = [
    "SiteSoil",
    "site_soil",
    "collect",
    "render_html",
    "write_report",
    "REPORT_FREQS_HZ",
    "REFERENCES",
]

#: Frequencies (Hz) of the ground-property and reach curves: 10 MHz to 3 GHz.
REPORT_FREQS_HZ = np.geomspace(10e6, 3e9, 121)

#: Quantities of the survey schema whose spread feeds the depth chart (Soil field names).
_SPREAD_FIELDS = ("moisture", "pore_water_ec25", "pore_water_salinity_psu", "temp_c")

_HUMAN = {
    # survey quantity -> (label, unit shown, factor from SI, format)
    "moisture": ("volumetric water content θ", "%", 100.0, ".3g"),
    "pore_water_ec": ("pore-water EC at 25 °C", "mS/m", 1e3, ".4g"),
    "salinity": ("pore-water salinity", "PSU", 1.0, ".3g"),
    "clay": ("clay fraction", "%", 100.0, ".3g"),
    "sand": ("sand fraction", "%", 100.0, ".3g"),
    "temperature": ("ground temperature", "°C", 1.0, ".3g"),
    "bulk_density": ("dry bulk density", "g/cm³", 1e-3, ".3g"),
}

#: Published sources the chain relies on; ``used_by`` says where (shown in the report).
REFERENCES = {
    "topp1980": ("Topp, G. C., Davis, J. L. & Annan, A. P. (1980). Electromagnetic determination of soil "
                 "water content: measurements in coaxial transmission lines. Water Resources Research "
                 "16(3), 574–582. doi:10.1029/WR016i003p00574", "Topp soil model"),
    "birchak1974": ("Birchak, J. R., Gardner, C. G., Hipp, J. E. & Victor, J. M. (1974). High dielectric "
                    "constant microwave probes for sensing soil moisture. Proceedings of the IEEE 62(1), "
                    "93–98. doi:10.1109/PROC.1974.9388", "CRIM mixing of solids, water and air"),
    "klein1977": ("Klein, L. A. & Swift, C. T. (1977). An improved model for the dielectric constant of sea "
                  "water at microwave frequencies. IEEE Transactions on Antennas and Propagation 25(1), "
                  "104–111. doi:10.1109/TAP.1977.1141539", "permittivity of (saline) pore water"),
    "archie1942": ("Archie, G. E. (1942). The electrical resistivity log as an aid in determining some "
                   "reservoir characteristics. Transactions of the AIME 146, 54–62. doi:10.2118/942054-G",
                   "bulk conductivity from pore-water conductivity"),
    "waxman1968": ("Waxman, M. H. & Smits, L. J. M. (1968). Electrical conductivities in oil-bearing shaly "
                   "sands. Society of Petroleum Engineers Journal 8(2), 107–122. doi:10.2118/1863-A",
                   "clay surface conduction"),
    "peplinski1995": ("Peplinski, N. R., Ulaby, F. T. & Dobson, M. C. (1995). Dielectric properties of "
                      "soils in the 0.3–1.3-GHz range. IEEE Transactions on Geoscience and Remote Sensing "
                      "33(3), 803–807. doi:10.1109/36.387598", "Peplinski soil model"),
    "annan1977": ("Annan, A. P. & Davis, J. L. (1977). Radar range analysis for geological materials. "
                  "Geological Survey of Canada Paper 77-1B, 117–124.", "two-way loss budget"),
    "daniels2004": ("Daniels, D. J. (ed.) (2004). Ground Penetrating Radar, 2nd ed. IEE, London.",
                    "radar range equation for planar, line and compact targets"),
    "corless1996": ("Corless, R. M., Gonnet, G. H., Hare, D. E. G., Jeffrey, D. J. & Knuth, D. E. (1996). "
                    "On the Lambert W function. Advances in Computational Mathematics 5, 329–359. "
                    "doi:10.1007/BF02124750", "closed-form maximum depth"),
    "davis1989": ("Davis, J. L. & Annan, A. P. (1989). Ground-penetrating radar for high-resolution mapping "
                  "of soil and rock stratigraphy. Geophysical Prospecting 37(5), 531–551. "
                  "doi:10.1111/j.1365-2478.1989.tb02221.x", "velocity, attenuation and typical material values"),
    "annan1992": ("Annan, A. P. & Cosway, S. W. (1992). Ground penetrating radar survey design. Proceedings "
                  "of SAGEEP 1992, 329–351.", "footprint and acquisition settings"),
    "annan2009": ("Annan, A. P. (2009). Electromagnetic principles of ground penetrating radar. In Jol, H. M. "
                  "(ed.), Ground Penetrating Radar: Theory and Applications, Elsevier, ch. 1.",
                  "time window, sampling and trace spacing"),
    "grasmueck2005": ("Grasmueck, M., Weger, R. & Horstmeyer, H. (2005). Full-resolution 3D GPR imaging. "
                      "Geophysics 70(1), K12–K19. doi:10.1190/1.1852780", "line spacing for 3D imaging"),
    "widess1973": ("Widess, M. B. (1973). How thin is a thin bed? Geophysics 38(6), 1176–1180. "
                   "doi:10.1190/1.1440403", "vertical resolution (quarter wavelength)"),
    "gum2008": ("JCGM 100:2008. Evaluation of measurement data — Guide to the expression of uncertainty in "
                "measurement (GUM), and JCGM 101:2008 (Monte Carlo propagation of distributions).",
                "uncertainty of the depth chart"),
}

_MODEL_VALIDITY = {
    "crim": ("CRIM (complex refractive index mixing, exponent ½) of mineral grains, Debye pore water and "
             "air. It assumes a randomly mixed, isotropic soil and no bound-water or interfacial "
             "polarisation; expect it to underestimate losses in clay-rich soils below about 100 MHz."),
    "peplinski": ("Peplinski et al. (1995) semi-empirical model, fitted to measurements between 0.3 and "
                  "1.3 GHz on soils of known texture; below 0.3 GHz it is an extrapolation (a warning "
                  "below says so when it happens)."),
    "topp": ("Topp et al. (1980) empirical relation between water content and apparent permittivity, "
             "measured by time-domain reflectometry on mineral soils; it has no dispersion or dielectric "
             "loss, so losses come from the DC conductivity alone."),
}


# --- site soil ----------------------------------------------------------------------------

@dataclass(frozen=True)
class SiteSoil:
    """The site-wide soil used for the site-level charts, with its spread and sources."""

    soil: object  # subsurf.soil.Soil
    mapping: dict  # Soil field -> SI value (plus texture/model)
    sd: dict  # Soil field -> standard deviation (SI)
    facts: list  # rows for the report: quantity, value, sd, unit, source


def site_soil(survey) -> SiteSoil:
    """Summarise a survey's soil inputs into one site-wide Soil with a spread per input.

    Each quantity is taken from the most local information the survey gives: the median
    of the point samples when there are samples of it, else the median over soil zones,
    else the median of a raster, else the survey default; quantities given nowhere are
    left to the texture preset (or the soil model's documented default).  The spread is
    the standard deviation across the site combined in quadrature with the stated
    measurement standard deviation (the largest one given), or the default's standard
    deviation.  The feasibility maps keep the full spatial detail; this summary feeds the
    site-level charts only.
    """
    from ..ground import Soil, texture_preset
    from ..site.survey import QUANTITIES

    mapping: dict = {"model": survey.soil_model}
    if survey.texture:
        mapping["texture"] = survey.texture
    sd: dict = {}
    facts: list = []
    for q, spec in QUANTITIES.items():
        vals, sds, source = None, [], ""
        pooled = [s.values[q] for s in survey.samples if q in s.values]
        if pooled:
            vals = np.concatenate([np.asarray(v, float) for v in pooled])
            sds = [np.asarray(s.sd[q], float) for s in survey.samples if q in s.sd]
            files = ", ".join(sorted({Path(s.path).name for s in survey.samples if q in s.values}))
            source = f"median of {vals.size} point samples ({files})"
        else:
            zv = [v[q] for z in survey.zones for v in z.values if q in v]
            if zv:
                vals = np.asarray(zv, float)
                sds = [np.asarray([d[q] for z in survey.zones for d in z.sd if q in d], float)]
                source = f"median over {vals.size} soil zones"
            else:
                rv = [r for r in survey.rasters if r.quantity == q]
                if rv:
                    vals = np.concatenate([np.asarray(r.values, float).ravel() for r in rv])
                    vals = vals[np.isfinite(vals)]
                    sds = [np.asarray([r.sd for r in rv], float)]
                    source = f"median of raster {Path(rv[0].path).name}"
                elif q in survey.defaults:
                    vals = np.asarray([survey.defaults[q]], float)
                    if q in survey.default_sd:
                        sds = [np.asarray([survey.default_sd[q]], float)]
                    source = "survey default"
        if vals is None or vals.size == 0:
            continue
        value = float(np.median(vals))
        site_sd = float(np.std(vals, ddof=1)) if vals.size > 1 else 0.0
        meas = max((float(np.max(s)) for s in sds if np.size(s)), default=0.0)
        spread = math.hypot(site_sd, meas)
        mapping[spec.soil_field] = value
        if spread > 0:
            sd[spec.soil_field] = spread
        facts.append({"quantity": q, "value": value, "sd": spread, "source": source,
                      "min": float(vals.min()), "max": float(vals.max())})
    if survey.texture:
        preset = texture_preset(survey.texture)
        for key, q in (("sand", "sand"), ("clay", "clay"), ("bulk_density", "bulk_density")):
            if key not in mapping and key in preset:
                facts.append({"quantity": q, "value": float(preset[key]), "sd": 0.0,
                              "source": f"texture preset '{survey.texture}': {preset.get('source', '')}",
                              "min": float(preset[key]), "max": float(preset[key])})
    soil = Soil.from_mapping(dict(mapping), source=f"{survey.path.name} (site median)")
    return SiteSoil(soil=soil, mapping=mapping, sd=sd, facts=facts)


# --- content --------------------------------------------------------------------------------

def _ground_over_frequency(soil, freqs_hz):
    from ..waves.propagation import wave_properties

    eps, sigma = soil.electrical(freqs_hz)
    w = wave_properties(eps, sigma, freqs_hz)
    return {
        "freq_hz": np.asarray(freqs_hz, float),
        "eps_real": np.asarray(w.eps_real, float),
        "eps_imag": np.asarray(w.eps_imag, float),
        "sigma_eff": np.asarray(w.effective_conductivity, float),
        "velocity": np.asarray(w.velocity, float),
        "attenuation_db_per_m": np.asarray(w.attenuation_db_per_m, float),
        "loss_tangent": np.asarray(w.loss_tangent, float),
        "wavelength": np.asarray(w.wavelength, float),
        "skin_depth": np.asarray(w.skin_depth, float),
    }


def _velocity_draws(soil, sd: dict, freq_hz: float, *, draws: int, seed: int):
    """Nominal phase velocity and seeded Monte Carlo draws from the soil-input spread.

    Each input in ``sd`` (Soil field names among moisture, pore-water EC/salinity and
    temperature) is drawn from a normal distribution, independently; fractions are
    clipped to [0, 1], conductivities to ≥ 0 and moisture to 0.995 × porosity (a soil
    cannot hold more water than its pores), as the feasibility maps do.  Texture
    fractions are not varied: independent draws of sand and clay can be impossible
    (sand + clay > 1), and their effect on velocity is small beside moisture's.
    """
    import dataclasses

    from ..waves.propagation import wave_properties

    rng = np.random.default_rng(seed)
    eps, sig = soil.electrical(freq_hz)
    v_nom = float(np.asarray(wave_properties(eps, sig, freq_hz).velocity).ravel()[0])
    changes = {}
    for name in _SPREAD_FIELDS:
        s = sd.get(name, 0.0)
        base = getattr(soil, name, None)
        if not s or base is None:
            continue
        val = rng.normal(float(base), float(s), int(draws))
        if name == "moisture":
            phi = soil.porosity_value
            upper = 1.0 if phi is None else 0.995 * float(phi)
            val = np.clip(val, 0.0, upper)
        else:  # conductivities, salinity >= 0; temperature >= 0 degC (liquid pore water)
            val = np.clip(val, 0.0, None)
        changes[name] = val
    if not changes:
        return v_nom, np.full(int(draws), v_nom), []
    varied = dataclasses.replace(soil, **changes)
    eps_d, sig_d = varied.electrical(freq_hz)
    v = np.asarray(wave_properties(eps_d, sig_d, freq_hz).velocity, dtype=float).ravel()
    return v_nom, v, sorted(changes)


def _depth_chart(soil, sd: dict, freq_hz: float, offset_m: float, twt_max_s: float, *, draws: int,
                 seed: int) -> dict:
    """Central depth and 5–95 % band against two-way time, from the soil-input spread."""
    from ..waves.propagation import depth_from_time

    n = max(int(draws), 400)
    v_nom, v_draws, varied = _velocity_draws(soil, sd, freq_hz, draws=n, seed=seed)
    # times from the arrival of the direct ground wave of the slowest draw (v·t ≥ x is
    # needed for a real depth with antenna separation x) to the end of the window
    t_start = offset_m / float(v_draws.min()) if offset_m > 0 else 0.0
    t = np.linspace(t_start, twt_max_s, 161)
    d_all = depth_from_time(t[None, :], v_draws[:, None], offset_m=offset_m)
    lo, hi = np.percentile(d_all, [5.0, 95.0], axis=0)
    central = depth_from_time(t, v_nom, offset_m=offset_m)
    step_ns = _nice_step(twt_max_s * 1e9 / 20.0)
    t_tab = np.arange(step_ns, twt_max_s * 1e9 + 1e-9, step_ns) * 1e-9
    t_tab = t_tab[t_tab >= t_start]
    d_tab = depth_from_time(t_tab[None, :], v_draws[:, None], offset_m=offset_m)
    tab_lo, tab_hi = np.percentile(d_tab, [5.0, 95.0], axis=0)
    return {
        "velocity": v_nom, "velocity_sd": float(np.std(v_draws, ddof=1)),
        "velocity_p05": float(np.percentile(v_draws, 5)), "velocity_p95": float(np.percentile(v_draws, 95)),
        "draws": n, "seed": int(seed), "varied": varied,
        "offset_m": offset_m, "freq_hz": freq_hz,
        "twt_s": t, "depth_m": central, "depth_p05_m": lo, "depth_p95_m": hi,
        "table": [{"twt_ns": float(tt * 1e9), "depth_m": float(depth_from_time(tt, v_nom, offset_m=offset_m)),
                   "depth_p05_m": float(a), "depth_p95_m": float(b)}
                  for tt, a, b in zip(t_tab, tab_lo, tab_hi)],
    }


def _nice_step(x: float) -> float:
    """A 1-2-5 rounded step not smaller than ``x``."""
    if x <= 0:
        return 1.0
    mag = 10.0 ** math.floor(math.log10(x))
    for m in (1.0, 2.0, 5.0, 10.0):
        if m * mag >= x:
            return m * mag
    return 10.0 * mag  # pragma: no cover


def _acquisition(antenna, site: SiteSoil, target, *, area_m2: float | None) -> dict:
    """Acquisition settings for ``antenna`` at the target depth, from ``subsurf setup``'s computation."""
    from ..ground.medium import Medium
    from ..planning.plan import ROWS_SPEC, acquisition_for_antenna

    medium = Medium(label="site median soil", facts=dict(site.mapping), soil=site.soil)
    result = acquisition_for_antenna(medium, antenna, target=target, depth_m=target.depth_m, area_m2=area_m2)
    rows = []
    for key, label, unit, fmt, rule in ROWS_SPEC:
        value = result["settings"].get(key)
        if value is None:
            continue
        rows.append({"key": key, "label": label, "value": value, "unit": unit, "fmt": fmt, "rule": rule})
    return {"rows": rows, "notes": result["notes"], "window_s": result["settings"]["window_ns"] * 1e-9,
            "area_m2": area_m2}


def _site_area_m2(survey) -> float:
    """Area of the site outline in the projected grid CRS (m²)."""
    import shapely

    from ..site.grid import transform_points

    def project(geom):
        coords = shapely.get_coordinates(geom)
        x, y = transform_points(coords[:, 0], coords[:, 1], survey.outline_crs, survey.grid_crs)
        return shapely.set_coordinates(geom, np.column_stack([x, y]))

    return float(project(survey.outline).area)


def collect(survey_path, *, map_result: dict | None = None, bar=None) -> dict:
    """Gather everything the report shows, as a dictionary (SI units).

    Parameters
    ----------
    survey_path : str or Path
        The survey TOML file.
    map_result : dict, optional
        What :func:`subsurf.feasibility.run_map` returned for this survey (its figures and
        scenario summary); without it the report has no map section.
    bar : subsurf.progress.Steps, optional
        Progress bar advanced once per stage.
    """
    from ..detection.budget import max_depth
    from ..planning.antennas import get_antenna, load_catalogue, make_target, rank_antennas, recommend
    from ..site.survey import load_survey
    from .outputs import CAUTION_LINES, collect_warnings

    def step(label):
        if bar is not None:
            bar.advance(label)

    with collect_warnings() as notes:
        survey = load_survey(survey_path)
        site = site_soil(survey)
        step("ground properties")
        ground = _ground_over_frequency(site.soil, REPORT_FREQS_HZ)

        catalogue = load_catalogue()
        antennas = [get_antenna(n, catalogue) for n in survey.antennas]
        t = survey.target
        target = make_target(t.kind, depth_m=t.depth_m, size_m=None if t.kind == "planar" else t.size_m,
                             material=t.material)
        rows = rank_antennas(site.soil.electrical, antennas, target)
        rec_name, reason = recommend(rows)
        for r in rows:
            r["recommended"] = r["name"] == rec_name
        step("maximum depth")
        eps_f, sig_f = site.soil.electrical(REPORT_FREQS_HZ)
        perf = sorted({round(a.effective_performance_db, 1) for a in antennas})
        gains = [a.gain for a in antennas]
        g_med = float(np.median(gains))
        levels = [perf[0]] if len(perf) == 1 else [perf[-1], perf[0]]
        curves = [(f"system performance {p:g} dB, gain {10 * math.log10(g_med):.0f} dBi",
                   np.asarray(max_depth(eps_f, sig_f, REPORT_FREQS_HZ, p, target=target, gain=g_med), float))
                  for p in levels]

        rec_ant = next((a for a in antennas if a.name == rec_name), None)
        chart_ant = rec_ant or max(antennas, key=lambda a: next(r["margin_db"] for r in rows if r["name"] == a.name))
        acq = _acquisition(chart_ant, site, target, area_m2=_site_area_m2(survey))
        step("depth chart")
        window_s = acq["window_s"]
        chart = _depth_chart(site.soil, site.sd, chart_ant.centre_freq_hz, chart_ant.separation_m, window_s,
                             draws=survey.draws, seed=survey.seed)
        step("maps")
        maps = _maps_section(map_result)

    return {
        "title": f"GPR planning report — {survey.name}",
        "generated": _dt.datetime.now().astimezone().strftime("%Y-%m-%d %H:%M %Z"),
        "survey": survey.describe(),
        "survey_obj": survey,
        "site_soil": site,
        "ground": ground,
        "ground_table_freqs_hz": sorted({a.centre_freq_hz for a in antennas}),
        "target": {"kind": t.kind, "depth_m": t.depth_m, "size_m": t.size_m, "material": t.material},
        "ranking": rows,
        "recommended": rec_name,
        "reason": reason,
        "chart_antenna": chart_ant.name,
        "antennas_illustrative": any(a.illustrative for a in antennas),
        "max_depth_curves": curves,
        "acquisition": acq,
        "depth_chart": chart,
        "maps": maps,
        "warnings": list(notes),
        "caution": list(CAUTION_LINES),
    }


_MAP_CAPTIONS = {
    "png_antennas": "Maximum detectable depth of the target across the site for each antenna (first scenario).",
    "png_scenarios": "How each scenario changes where the target can be reached.",
    "png_inputs": "The soil inputs on the survey grid, with the sample positions.",
}

#: map summary columns shown in the scenario comparison: key, header, format
_MAP_COLUMNS = (
    ("scenario", "scenario", "s"), ("antenna", "antenna", "s"),
    ("reach_pct", "area reached (%)", ".0f"), ("reach_headroom_pct", "reached with 6 dB to spare (%)", ".0f"),
    ("expected_reach_pct", "mean probability of reaching (%)", ".0f"),
    ("median_max_depth_m", "median max depth (m)", ".2f"), ("recommended_pct", "area where recommended (%)", ".0f"),
)


def _maps_section(map_result: dict | None) -> dict | None:
    """Figures (read from the files ``subsurf map`` wrote) and its scenario × antenna summary."""
    if not map_result:
        return None
    figs = []
    for key, path in map_result.get("paths", {}).items():
        path = Path(path)
        if key.startswith("png_") and path.is_file():
            figs.append({"caption": _MAP_CAPTIONS.get(key, path.stem.replace("_", " ")), "png": path.read_bytes(),
                         "file": path.name})
    return {"figures": figs, "summary": list(map_result.get("summary", [])),
            "files": (sorted(str(Path(p).relative_to(Path(map_result["out_dir"]))) if map_result.get("out_dir")
                             else Path(p).name for p in map_result.get("paths", {}).values())
                      if map_result.get("kept", True) else []),
            "monte_carlo": map_result.get("monte_carlo", {})}


# --- HTML -----------------------------------------------------------------------------------

_CSS = """
:root { --ink:#1d2733; --muted:#5d6b79; --accent:#0f6b66; --second:#b4532a; --line:#d5dbe1;
        --paper:#ffffff; --tint:#f3f6f5; --warn:#fdf3e7; }
* { box-sizing: border-box; }
body { margin:0; background:#eef1f0; color:var(--ink);
       font: 15px/1.5 "DejaVu Sans", "Liberation Sans", Arial, Helvetica, sans-serif; }
main { max-width: 980px; margin: 0 auto; background: var(--paper); padding: 28px 40px 48px; }
header.top { border-bottom: 3px solid var(--accent); padding-bottom: 12px; margin-bottom: 16px; }
header.top h1 { font-size: 26px; margin: 0 0 4px; letter-spacing: .2px; }
header.top p { margin: 2px 0; color: var(--muted); font-size: 13px; }
h2 { font-size: 20px; margin: 34px 0 10px; padding-bottom: 4px; border-bottom: 1px solid var(--line);
     color: var(--accent); }
h3 { font-size: 16px; margin: 20px 0 6px; }
.cards { display: grid; grid-template-columns: repeat(4, 1fr); gap: 10px; margin: 12px 0 14px; }
.card { background: var(--tint); border-left: 4px solid var(--accent); padding: 8px 12px; }
.card .k { font-size: 12px; color: var(--muted); text-transform: uppercase; letter-spacing: .5px; }
.card .v { font-size: 20px; font-weight: bold; }
.card .s { font-size: 12px; color: var(--muted); }
.card.bad { border-left-color: var(--second); }
.caution { background: var(--warn); border: 1px solid #e7c9a5; border-left: 5px solid var(--second);
           padding: 10px 14px; margin: 12px 0; font-size: 14px; }
.caution strong { color: var(--second); }
.note { color: var(--muted); font-size: 13px; }
nav.toc { columns: 2; font-size: 14px; background: var(--tint); padding: 10px 16px 10px 30px; margin: 10px 0; }
nav.toc ol { margin: 0; }
nav.toc a { color: var(--accent); text-decoration: none; }
main a { color: var(--accent); }
table { border-collapse: collapse; margin: 8px 0 14px; font-size: 13px; width: 100%; }
th, td { border-bottom: 1px solid var(--line); padding: 4px 8px; text-align: left; vertical-align: top; }
th { background: var(--tint); font-weight: bold; }
td.n, th.n { text-align: right; font-variant-numeric: tabular-nums; }
td.n { white-space: nowrap; }
td:first-child { white-space: nowrap; }
tr.rec td { background: #e3f1ef; font-weight: bold; }
figure { margin: 10px 0 18px; }
figure img { max-width: 100%; height: auto; border: 1px solid var(--line); display: block; }
figcaption { font-size: 13px; color: var(--muted); margin-top: 4px; }
.grid2 { display: grid; grid-template-columns: 1fr 1fr; gap: 12px; }
.verdict-reaches { color: var(--accent); font-weight: bold; }
.verdict-marginal { color: #8a6d0b; font-weight: bold; }
.verdict-no { color: var(--second); font-weight: bold; }
ul.warnings li { margin-bottom: 4px; }
ol.refs li { margin-bottom: 6px; font-size: 13px; }
footer { margin-top: 36px; font-size: 12px; color: var(--muted); border-top: 1px solid var(--line);
         padding-top: 8px; }
@media (max-width: 760px) { main { padding: 16px; } .cards { grid-template-columns: 1fr 1fr; }
  .grid2 { grid-template-columns: 1fr; } nav.toc { columns: 1; } }
@media print {
  @page { size: A4; margin: 14mm 12mm; }
  body { background: #fff; font-size: 10.5pt; }
  main { max-width: none; padding: 0; }
  nav.toc { display: none; }
  h2 { break-after: avoid; page-break-after: avoid; }
  figure, table, .cards, .caution { break-inside: avoid; page-break-inside: avoid; }
  a { color: inherit; text-decoration: none; }
  .card, th, tr.rec td, .caution { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
"""

_SECTIONS = [
    ("summary", "At a glance"),
    ("site", "Site and inputs"),
    ("ground", "What the radar wave sees"),
    ("reach", "How deep can the target be seen"),
    ("antennas", "Antenna ranking and recommendation"),
    ("settings", "Acquisition settings"),
    ("maps", "Feasibility maps and scenarios"),
    ("depth", "Travel time to depth (field chart)"),
    ("assumptions", "Assumptions, validity and warnings"),
    ("references", "References"),
    ("safety", "Safety"),
]


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _img(png: bytes, alt: str, caption: str = "") -> str:
    data = base64.b64encode(png).decode("ascii")
    cap = f"<figcaption>{_e(caption)}</figcaption>" if caption else ""
    return f'<figure><img alt="{_e(alt)}" src="data:image/png;base64,{data}">{cap}</figure>'


def _fmt(v, fmt=".3g") -> str:
    if v is None:
        return "–"
    if isinstance(v, float):
        if math.isnan(v):
            return "–"
        if math.isinf(v):
            return "∞"
    try:
        return format(v, fmt)
    except (TypeError, ValueError):
        return str(v)


def _table(headers, rows, numeric=(), row_classes=None) -> str:
    out = ["<table><thead><tr>"]
    for i, h in enumerate(headers):
        out.append(f'<th class="n">{_e(h)}</th>' if i in numeric else f"<th>{_e(h)}</th>")
    out.append("</tr></thead><tbody>")
    for j, r in enumerate(rows):
        cls = f' class="{row_classes[j]}"' if row_classes and row_classes[j] else ""
        out.append(f"<tr{cls}>")
        for i, cell in enumerate(r):
            html_cell = cell if isinstance(cell, _Raw) else _e(cell)
            out.append(f'<td class="n">{html_cell}</td>' if i in numeric else f"<td>{html_cell}</td>")
        out.append("</tr>")
    out.append("</tbody></table>")
    return "".join(out)


class _Raw(str):
    """Pre-escaped HTML for a table cell."""


def _verdict_html(v: str) -> _Raw:
    cls = {"reaches": "verdict-reaches", "marginal": "verdict-marginal"}.get(v, "verdict-no")
    return _Raw(f'<span class="{cls}">{_e(v)}</span>')


def _section(sid: str, body: str) -> str:
    title = dict(_SECTIONS)[sid]
    return f'<section id="{sid}"><h2>{_e(title)}</h2>{body}</section>'


def _summary(data) -> str:
    rows = data["ranking"]
    rec = data["recommended"]
    t = data["target"]
    chart = data["depth_chart"]
    rec_row = next((r for r in rows if r["name"] == rec), None)
    reaching = [r["name"] for r in rows if r["verdict"] == "reaches"]
    cards = []
    if rec_row:
        cards.append(("recommended antenna", rec, f"{rec_row['centre_freq_hz'] / 1e6:.0f} MHz", False))
        cards.append(("max depth, this target", f"{rec_row['max_depth_m']:.2f} m",
                      f"target at {t['depth_m']:.2f} m · margin {rec_row['margin_db']:.0f} dB",
                      rec_row["verdict"] != "reaches"))
    else:
        cards.append(("recommended antenna", "none", "no listed antenna reaches the target", True))
        best = max(rows, key=lambda r: r["margin_db"])
        cards.append(("closest antenna", best["name"], f"max depth {best['max_depth_m']:.2f} m", True))
    cards.append(("ground velocity", f"{chart['velocity'] * 1e-9:.3f} m/ns",
                  f"5–95 %: {chart['velocity_p05'] * 1e-9:.3f}–{chart['velocity_p95'] * 1e-9:.3f} m/ns", False))
    cards.append(("antennas that reach", f"{len(reaching)} of {len(rows)}",
                  ", ".join(reaching) if reaching else "none with margin", not reaching))
    html_cards = "".join(
        f'<div class="card{" bad" if bad else ""}"><div class="k">{_e(k)}</div><div class="v">{_e(v)}</div>'
        f'<div class="s">{_e(s)}</div></div>' for k, v, s, bad in cards)
    desc = data["survey"].get("description") or ""
    size = f", {t['size_m']:.2g} m across" if t["kind"] != "planar" else ""
    target_text = f"{t['kind']} target of {t['material'].replace('_', ' ')}{size}, top at {t['depth_m']:.2f} m"
    body = [f'<div class="cards">{html_cards}</div>',
            f"<p><strong>Target:</strong> {_e(target_text)}. <strong>Recommendation:</strong> {_e(data['reason'])}.</p>"]
    if desc:
        body.insert(0, f"<p>{_e(desc)}</p>")
    maps = data.get("maps") or {}
    if maps.get("summary"):
        # "reaches" means >= 6 dB to spare everywhere else in the report; margin >= 0 is only "marginal"
        best = {}
        for r in maps["summary"]:
            key = (r["reach_headroom_pct"], r["reach_pct"])
            if r["scenario"] not in best or key > (best[r["scenario"]]["reach_headroom_pct"],
                                                   best[r["scenario"]]["reach_pct"]):
                best[r["scenario"]] = r
        text = "; ".join(f"{sc}: {r['antenna']} reaches the target with 6 dB to spare over "
                         f"{r['reach_headroom_pct']:.0f} % of the area (at least marginally over "
                         f"{r['reach_pct']:.0f} %)" for sc, r in best.items())
        body.append(f"<p><strong>Across the site</strong> (feasibility maps, best antenna per scenario): "
                    f"{_e(text)}. The site-median figures above can differ from parts of the site; "
                    '<a href="#maps">see the maps</a>.</p>')
    body.append('<div class="caution"><strong>Caution.</strong> ' + _e(" ".join(data["caution"])) + "</div>")
    if data.get("antennas_illustrative"):
        body.append('<p class="note">The antenna figures used are illustrative catalogue values, not measured '
                    "figures of a real instrument; replace them with your own before relying on the ranking.</p>")
    toc = "".join(f'<li><a href="#{sid}">{_e(title)}</a></li>' for sid, title in _SECTIONS[1:])
    body.append(f'<nav class="toc" aria-label="contents"><ol>{toc}</ol></nav>')
    return _section("summary", "".join(body))


def _site(data) -> str:
    from ..site.survey import QUANTITIES
    from .fig_report import site_map_png

    survey = data["survey_obj"]
    d = data["survey"]
    rings, zones, samples = _site_geometry(survey)
    png = site_map_png(rings, samples, crs_name=f"{survey.grid_crs.name} ({d['grid_crs_source']})", zones=zones)
    parts = [_img(png, "site outline with soil sample positions",
                  "Site outline and soil sample positions in the grid's projected coordinates.")]
    info = [
        ("survey file", Path(d["survey"]).name),
        ("outline CRS", d["outline_crs"]),
        ("grid CRS", f"{d['grid_crs_name']} ({d['grid_crs']}, {d['grid_crs_source']})"),
        ("grid cell size", f"{d['cell_size_m']:g} m"),
        ("soil model", d["soil_model"]),
        ("texture", d["texture"] or "not given"),
        ("antennas considered", ", ".join(d["antennas"])),
    ]
    parts.append(_table(["item", "value"], info))
    rows = []
    for f in data["site_soil"].facts:
        label, unit, k, fmt = _HUMAN[f["quantity"]]
        rng = "" if f["min"] == f["max"] else f"{_fmt(f['min'] * k, fmt)}–{_fmt(f['max'] * k, fmt)}"
        rows.append([label, _fmt(f["value"] * k, fmt), _fmt(f["sd"] * k, ".2g") if f["sd"] else "–", rng, unit,
                     f["source"]])
    parts.append("<h3>Soil facts used for the site-wide charts</h3>")
    parts.append(_table(["quantity", "value", "± (1 s.d.)", "range on site", "unit", "source"], rows,
                        numeric=(1, 2, 3)))
    parts.append('<p class="note">Site-wide charts use the median of each input; the spread combines the '
                 "variation across the site with the stated measurement uncertainty. The feasibility maps "
                 "use the full spatial detail. Quantities not listed come from the soil model's documented "
                 f"defaults. Known quantities: {_e(', '.join(QUANTITIES))}.</p>")
    return _section("site", "".join(parts))


def _site_geometry(survey):
    from ..site.grid import transform_points

    def ring_xy(geom):
        geoms = getattr(geom, "geoms", [geom])
        out = []
        for g in geoms:
            xy = np.asarray(g.exterior.coords, float)
            x, y = transform_points(xy[:, 0], xy[:, 1], survey.outline_crs, survey.grid_crs)
            out.append(np.column_stack([x, y]))
        return out

    rings = ring_xy(survey.outline)
    zones = []
    for zs in survey.zones:
        for name, g in zip(zs.names, zs.geometries):
            for r in ring_xy(g) if zs.crs == survey.outline_crs else []:
                zones.append((name, r))
            if zs.crs != survey.outline_crs:
                geoms = getattr(g, "geoms", [g])
                for gg in geoms:
                    xy = np.asarray(gg.exterior.coords, float)
                    x, y = transform_points(xy[:, 0], xy[:, 1], zs.crs, survey.grid_crs)
                    zones.append((name, np.column_stack([x, y])))
    samples = []
    for s in survey.samples:
        x, y = transform_points(s.x, s.y, s.crs, survey.grid_crs)
        samples.append((f"samples: {Path(s.path).name}", x, y))
    return rings, zones, samples


def _ground(data) -> str:
    from .fig_report import ground_properties_png

    g = data["ground"]
    conduction_in_eps = bool(getattr(data["site_soil"].soil, "conduction_in_eps", False))
    from scipy import constants

    eps_eff = g["sigma_eff"] / (2 * np.pi * g["freq_hz"] * constants.epsilon_0)
    png = ground_properties_png(g["freq_hz"], g["eps_real"], g["eps_imag"], g["velocity"],
                                g["attenuation_db_per_m"], antenna_freqs_hz=data["ground_table_freqs_hz"],
                                eps_effective=eps_eff)
    parts = [_img(png, "relative permittivity, loss, velocity and attenuation against frequency",
                  "The site-median ground against frequency. Loss panel: the dielectric ε'' of the soil model "
                  "and the effective ε''_eff = σ_eff/(ωε₀) that includes DC conduction. Vertical lines mark the "
                  "centre frequencies of the antennas considered.")]
    from ..waves.propagation import wave_properties

    soil = data["site_soil"].soil
    f = np.asarray(sorted(set(data["ground_table_freqs_hz"]) | {25e6, 50e6, 100e6, 250e6, 500e6, 1e9, 2e9}))
    eps, sig = soil.electrical(f)
    w = wave_properties(eps, sig, f)
    rows = [[_fmt(f[i] / 1e6, ".4g"), _fmt(float(w.eps_real[i])), _fmt(float(w.eps_imag[i])),
             _fmt(float(w.effective_conductivity[i]) * 1e3), _fmt(float(w.loss_tangent[i])),
             _fmt(float(w.velocity[i]) * 1e-9, ".4f"), _fmt(float(w.wavelength[i])),
             _fmt(float(w.attenuation_db_per_m[i])), _fmt(float(w.skin_depth[i]))] for i in range(f.size)]
    parts.append(_table(["f (MHz)", "ε'", "ε''", "σ_eff (mS/m)", "tan δ", "v (m/ns)", "λ (m)", "α (dB/m)",
                         "skin depth (m)"], rows, numeric=tuple(range(9))))
    note = ("ε = ε' − jε''; σ_eff = σ_DC + ωε₀ε''; tan δ = σ_eff/(ωε₀ε'); v is the phase velocity ω/β; "
            "α is the one-way attenuation; skin depth = 1/α (in Np/m).")
    if conduction_in_eps:
        note += " This soil model carries its conduction loss inside ε'' (counted there once)."
    parts.append(f'<p class="note">{_e(note)}</p>')
    return _section("ground", "".join(parts))


def _reach(data) -> str:
    from .fig_report import max_depth_png

    t = data["target"]
    pts = [{"name": r["name"], "freq_hz": r["centre_freq_hz"], "max_depth_m": r["max_depth_m"],
            "recommended": r["recommended"]} for r in data["ranking"]]
    png = max_depth_png(REPORT_FREQS_HZ, data["max_depth_curves"], t["depth_m"], pts,
                        target_label=f"{t['kind']} target")
    text = ("Curves: the deepest the target could be detected by a system of the stated performance and "
            "gain at each frequency. Points: each antenna with its own performance (stacking included) and "
            "gain; a point above the dashed target line does not reach it.")
    return _section("reach", _img(png, "maximum detectable depth against frequency", text))


def _antennas(data) -> str:
    rows, classes = [], []
    for r in sorted(data["ranking"], key=lambda r: -r["margin_db"]):
        rows.append([r["name"] + (" ★" if r["recommended"] else ""), _fmt(r["centre_freq_hz"] / 1e6, ".4g"),
                     _fmt(r["performance_db"], ".1f"), _fmt(r["max_depth_m"]), _fmt(r["margin_db"], ".1f"),
                     _verdict_html(r["verdict"]), _fmt(r["vertical_resolution_m"], ".2g"),
                     _fmt(r["fresnel_radius_m"], ".2g"), _fmt(r["received_freq_hz"] / 1e6, ".3g")])
        classes.append("rec" if r["recommended"] else "")
    parts = [_table(["antenna", "f_c (MHz)", "performance (dB)", "max depth (m)", "margin at target (dB)",
                     "verdict", "vertical resolution (m)", "horizontal resolution (m)",
                     "received f (MHz)"], rows, numeric=(1, 2, 3, 4, 6, 7, 8), row_classes=classes)]
    parts.append(f"<p><strong>Recommendation.</strong> {_e(data['reason'])}.</p>")
    parts.append('<p class="note">Margin: system performance minus the two-way loss to the target; "reaches" '
                 "means at least 6 dB to spare, \"marginal\" 0–6 dB. Resolution is evaluated at the received "
                 "centre frequency, which falls with depth in lossy ground.</p>")
    return _section("antennas", "".join(parts))


def _settings(data) -> str:
    acq = data["acquisition"]
    which = "the recommended antenna" if data["recommended"] else "the antenna that comes closest"
    rows = [[r["label"], _fmt(r["value"], r["fmt"]), r["unit"], r["rule"]] for r in acq["rows"]]
    parts = [f"<p>For <strong>{_e(data['chart_antenna'])}</strong> ({which}), with the target depth "
             f"({data['target']['depth_m']:.2f} m) as the depth of interest and the whole site "
             f"({acq['area_m2']:,.0f} m²) for the survey time:</p>",
             _table(["setting", "value", "unit", "rule"], rows, numeric=(1,))]
    if acq["notes"]:
        parts.append("<ul>" + "".join(f"<li>{_e(n)}</li>" for n in acq["notes"]) + "</ul>")
    return _section("settings", "".join(parts))


def _maps(data) -> str:
    m = data["maps"]
    if not m:
        return _section("maps", '<p class="note">No feasibility maps were computed for this report '
                        "(run <code>subsurf map</code>, or the report without <code>--no-maps</code>).</p>")
    parts = []
    scen = data["survey"]["scenarios"]
    if len(scen) > 1 or (scen and scen[0]["name"] != "base"):
        parts.append("<h3>Scenarios</h3><ul>" + "".join(
            f"<li><strong>{_e(s['name'])}</strong>: {_e(s['description'])}</li>" for s in scen) + "</ul>")
    if m["summary"]:
        rows = [[_fmt(r.get(k), f) if f != "s" else str(r.get(k, "")) for k, _, f in _MAP_COLUMNS]
                for r in m["summary"]]
        parts.append("<h3>Scenario and antenna comparison over the site</h3>")
        parts.append(_table([h for _, h, _ in _MAP_COLUMNS], rows, numeric=tuple(range(2, len(_MAP_COLUMNS)))))
        mc = m.get("monte_carlo") or {}
        if mc:
            parts.append(f'<p class="note">Probabilities from {mc.get("draws")} Monte Carlo draws per cell '
                         f'(seed {mc.get("seed")}); standard error at most {mc.get("max_standard_error", 0):.3f}. '
                         "Percentages are of the grid cells inside the site outline.</p>")
    parts.extend(_img(f["png"], f["caption"], f["caption"]) for f in m["figures"])
    if m["files"]:
        parts.append(f'<p class="note">Map files kept with this report: {_e(_describe_files(m["files"]))}.</p>')
    return _section("maps", "".join(parts))


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


def _depth(data) -> str:
    from .fig_report import time_depth_png

    c = data["depth_chart"]
    vtxt = (f"{data['chart_antenna']}: v = {c['velocity'] * 1e-9:.3f} m/ns "
            f"(5–95 %: {c['velocity_p05'] * 1e-9:.3f}–{c['velocity_p95'] * 1e-9:.3f} m/ns), "
            f"antenna separation {c['offset_m']:g} m")
    png = time_depth_png(c["twt_s"], c["depth_m"], c["depth_p05_m"], c["depth_p95_m"], velocity_text=vtxt,
                         target_depth_m=data["target"]["depth_m"])
    parts = [_img(png, "two-way travel time to depth chart with uncertainty band",
                  "Depth below the surface for a two-way travel time measured from time zero.")]
    rows = [[_fmt(r["twt_ns"], ".4g"), _fmt(r["depth_m"], ".2f"), _fmt(r["depth_p05_m"], ".2f"),
             _fmt(r["depth_p95_m"], ".2f")] for r in c["table"]]
    parts.append('<div class="grid2"><div>' +
                 _table(["two-way time (ns)", "depth (m)", "5 % (m)", "95 % (m)"], rows, numeric=(0, 1, 2, 3)) +
                 "</div><div>")
    names = {"moisture": "moisture", "pore_water_ec25": "pore-water EC", "pore_water_salinity_psu": "salinity",
             "temp_c": "temperature"}
    varied = ", ".join(names.get(v, v) for v in c["varied"]) or "none (no spread given)"
    parts.append(f'<p class="note">Velocity at {c["freq_hz"] / 1e6:.0f} MHz from the site-median soil. '
                 f"The band is the 5–95 % range of {c['draws']} Monte Carlo draws (seed {c['seed']}) of the "
                 f"uncertain soil inputs ({_e(varied)}) through the soil model and the exact phase velocity, "
                 "with depth d = √((v·t/2)² − (x/2)²) for antenna separation x. It does not include picking "
                 "or time-zero errors, nor layering; calibrate the velocity on site (a hyperbola or a target "
                 "of known depth) and use <code>subsurf velocity</code> and <code>subsurf depth</code> "
                 "with the field values.</p></div></div>")
    return _section("depth", "".join(parts))


def _assumptions(data) -> str:
    model = data["survey"]["soil_model"]
    items = [
        f"Soil model: {_MODEL_VALIDITY.get(model, model)}",
        "Bulk DC conductivity from pore-water conductivity by Archie's law with Waxman–Smits clay surface "
        "conduction; valid for water-wet, granular soils.",
        "Propagation: exact plane-wave solution of the Helmholtz equation in a homogeneous, non-magnetic "
        "ground (μ_r = 1); no layering, scattering or antenna near-field effects.",
        "Loss budget: far-field radar range equation with geometric spreading (planar: image source at 2d; "
        "line: cylinder over its first Fresnel zone; point: radar cross-section), two-way absorption at the "
        "antenna centre frequency, and air–ground transmission loss. Real detection also depends on clutter, "
        "target orientation and operator experience; treat depths within a few decibels of the limit as "
        "uncertain.",
        "Site-wide charts use one median soil; the maps show how the answer changes across the site.",
    ]
    parts = ["<ul>" + "".join(f"<li>{_e(i)}</li>" for i in items) + "</ul>"]
    parts.append("<h3>Warnings raised while building this report</h3>")
    if data["warnings"]:
        parts.append('<ul class="warnings">' + "".join(f"<li>{_e(w)}</li>" for w in data["warnings"]) + "</ul>")
    else:
        parts.append('<p class="note">None: every model was used inside its stated validity range.</p>')
    return _section("assumptions", "".join(parts))


def _references(data) -> str:
    model = data["survey"]["soil_model"]
    skip = {"crim": {"peplinski1995", "topp1980"}, "peplinski": {"birchak1974", "topp1980", "klein1977"},
            "topp": {"peplinski1995", "birchak1974", "klein1977"}}.get(model, set())
    items = [f"<li>{_e(text)} <span class=\"note\">— {_e(use)}</span></li>"
             for key, (text, use) in REFERENCES.items() if key not in skip]
    return _section("references", '<ol class="refs">' + "".join(items) + "</ol>")


def _safety(data) -> str:
    items = [
        "The depths, ranges and maps in this report are predictions from a model of the ground, not "
        "locations of buried objects. A target may be missed, and a reflection may come from something else.",
        "Before any excavation, verify buried services by the means your local regulations require "
        "(utility records, one-call notification, trial holes dug by qualified staff).",
        "GPR transmitters are radio equipment. Their licensing and permitted use differ by country (and "
        "sometimes by site); check that your equipment and its use are authorised where you work.",
        "Defer to local codes and licensed professional practice wherever they differ from this report.",
    ]
    return _section("safety", '<div class="caution"><ul>' + "".join(f"<li>{_e(i)}</li>" for i in items) +
                    "</ul></div>")


def render_html(data: dict) -> str:
    """The complete, self-contained HTML page for the content of :func:`collect`."""
    from .. import __version__

    d = data["survey"]
    body = [
        '<header class="top">',
        f"<h1>{_e(data['title'])}</h1>",
        f"<p>Survey file <code>{_e(Path(d['survey']).name)}</code> · generated {_e(data['generated'])} "
        f"by subsurf {_e(__version__)} · planning estimate, not a survey result</p>",
        "</header>",
        _summary(data), _site(data), _ground(data), _reach(data), _antennas(data), _settings(data),
        _maps(data), _depth(data), _assumptions(data), _references(data), _safety(data),
        f"<footer>subsurf {_e(__version__)} · {_e(Path(d['survey']).name)} · "
        "this file is self-contained and can be opened offline or printed.</footer>",
    ]
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
            f"<title>{_e(data['title'])}</title><style>{_CSS}</style></head>"
            f"<body><main>{''.join(body)}</main></body></html>\n")


def summary_payload(data: dict, report_path) -> dict:
    """The JSON-able summary printed by the commands (no arrays, no images)."""
    from .outputs import CAUTION

    rows = [{k: r[k] for k in ("name", "centre_freq_hz", "performance_db", "max_depth_m", "margin_db",
                                "verdict", "recommended")} for r in data["ranking"]]
    c = data["depth_chart"]
    return {
        "report": str(report_path),
        "survey": data["survey"]["survey"],
        "site": data["survey"]["name"],
        "target": data["target"],
        "recommended": data["recommended"],
        "reason": data["reason"],
        "ranking": rows,
        "velocity_m_per_s": c["velocity"],
        "velocity_p05_m_per_s": c["velocity_p05"],
        "velocity_p95_m_per_s": c["velocity_p95"],
        "warnings": data["warnings"],
        "caution": CAUTION,
    }


def report_tables(data: dict) -> dict[str, str]:
    """The report's main tables as CSV text: file name -> content (human units, caution column)."""
    import csv
    import io

    from .outputs import CAUTION

    def to_csv(header, rows):
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(header + ["caution"])
        for i, r in enumerate(rows):
            w.writerow([f"{v:.6g}" if isinstance(v, float) else v for v in r] + [CAUTION if i == 0 else ""])
        return buf.getvalue()

    c = data["depth_chart"]
    ranking = to_csv(
        ["antenna", "centre_frequency_mhz", "performance_db", "max_depth_m", "margin_db", "verdict",
         "vertical_resolution_m", "horizontal_resolution_m", "recommended"],
        [[r["name"], r["centre_freq_hz"] / 1e6, r["performance_db"], r["max_depth_m"], r["margin_db"],
          r["verdict"], r["vertical_resolution_m"], r["fresnel_radius_m"], "yes" if r["recommended"] else "no"]
         for r in data["ranking"]])
    depth = to_csv(["two_way_time_ns", "depth_m", "depth_p05_m", "depth_p95_m", "antenna", "velocity_m_per_ns",
                    "antenna_separation_m"],
                   [[r["twt_ns"], r["depth_m"], r["depth_p05_m"], r["depth_p95_m"], data["chart_antenna"],
                     c["velocity"] * 1e-9, c["offset_m"]] for r in c["table"]])
    g = data["ground"]
    idx = np.unique(np.searchsorted(g["freq_hz"], [25e6, 50e6, 100e6, 200e6, 250e6, 400e6, 500e6, 1e9, 2e9]))
    ground = to_csv(["frequency_mhz", "eps_real", "eps_imag", "sigma_eff_ms_per_m", "loss_tangent",
                     "velocity_m_per_ns", "attenuation_db_per_m", "skin_depth_m"],
                    [[g["freq_hz"][i] / 1e6, g["eps_real"][i], g["eps_imag"][i], g["sigma_eff"][i] * 1e3,
                      g["loss_tangent"][i], g["velocity"][i] * 1e-9, g["attenuation_db_per_m"][i],
                      g["skin_depth"][i]] for i in idx if i < g["freq_hz"].size])
    return {"antenna_ranking.csv": ranking, "time_to_depth.csv": depth, "ground_properties.csv": ground}


def write_report(survey_path, out_path, *, force: bool = False, map_result: dict | None = None,
                 bar=None, tables_dir=None) -> dict:
    """Build the report for ``survey_path`` and write it atomically to ``out_path``.

    Returns the summary of :func:`summary_payload` (with ``tables``: the CSV files
    written to ``tables_dir`` when given).  Raises
    :class:`~subsurf.errors.OutputExistsError` if an output exists and not ``force``
    (checked before any work is done).
    """
    from .outputs import atomic_write_text, check_outputs_free

    out_path = Path(out_path)
    names = ("antenna_ranking.csv", "time_to_depth.csv", "ground_properties.csv")
    check_outputs_free([out_path] + ([Path(tables_dir) / n for n in names] if tables_dir else []), force=force)
    data = collect(survey_path, map_result=map_result, bar=bar)
    page = render_html(data)
    if bar is not None:
        bar.advance("writing")
    atomic_write_text(out_path, page, force=force)
    summary = summary_payload(data, out_path)
    summary["tables"] = []
    if tables_dir is not None:
        for name, text in report_tables(data).items():
            summary["tables"].append(str(atomic_write_text(Path(tables_dir) / name, text, force=force)))
    return summary
