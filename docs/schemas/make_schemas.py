"""Write the JSON Schemas (draft 2020-12) of every command's ``--json`` output into this folder.

    python docs/schemas/make_schemas.py            # rewrite docs/schemas/<command>.schema.json
    python docs/schemas/make_schemas.py --check    # exit 1 if a stored schema differs

One schema per command (``subsurf <command> --json``), and one per file format that is not a
command's output (:data:`FILE_SCHEMAS`: the folder manifest ``subsurf-manifest.json``).  Every
key carries its unit in its name (``_m``, ``_m_per_ns``, ``_ms_per_m``, ``_db``, ``_pct``,
``_ns`` …) and says it again in its description; objects refuse keys they do not declare
(``additionalProperties: false``), so an output that drifts from this file fails
``tests/cli/test_json_schemas.py``, which validates real runs against these files.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent.parent
sys.path.insert(0, str(ROOT))

DRAFT = "https://json-schema.org/draft/2020-12/schema"
BASE_ID = "https://subsurf.invalid/schemas/"  # our own namespace; not fetched


# --- building blocks ---------------------------------------------------------------------
def num(desc: str, *, null: bool = False, minimum: float | None = None, maximum: float | None = None) -> dict:
    s: dict = {"type": ["number", "null"] if null else "number", "description": desc}
    if minimum is not None:
        s["minimum"] = minimum
    if maximum is not None:
        s["maximum"] = maximum
    return s


def pct(desc: str, *, null: bool = False) -> dict:
    return num(desc + " (%, 0-100)", null=null, minimum=0, maximum=100)


def integer(desc: str, *, null: bool = False, minimum: int | None = None) -> dict:
    s: dict = {"type": ["integer", "null"] if null else "integer", "description": desc}
    if minimum is not None:
        s["minimum"] = minimum
    return s


def text(desc: str, *, null: bool = False, enum=None) -> dict:
    s: dict = {"type": ["string", "null"] if null else "string", "description": desc}
    if enum:
        s["enum"] = list(enum) + ([None] if null else [])
    return s


def boolean(desc: str, *, null: bool = False) -> dict:
    return {"type": ["boolean", "null"] if null else "boolean", "description": desc}


def array(items: dict, desc: str) -> dict:
    return {"type": "array", "items": items, "description": desc}


def obj(props: dict, desc: str, *, optional=(), null: bool = False, extra: dict | None = None) -> dict:
    """An object with exactly ``props``; all required except ``optional``; other keys refused."""
    s: dict = {"type": ["object", "null"] if null else "object", "description": desc, "properties": props,
               "required": [k for k in props if k not in optional], "additionalProperties": False}
    if extra:
        s.update(extra)
    return s


def strings(desc: str) -> dict:
    return array(text("one line"), desc)


THRESHOLDS = obj({"reaches_margin_db": num("margin from which a target 'reaches' (dB; --reach-margin)",
                                            minimum=0, maximum=40),
                  "marginal_margin_db": num("margin from which it is 'marginal' (dB)")}, "verdict thresholds")
#: the thresholds of a survey run (map, report, demo): also where the reach threshold came from
SURVEY_THRESHOLDS = obj({**THRESHOLDS["properties"],
                         "reaches_margin_source": text("where the reach threshold came from",
                                                       enum=("default", "[target] reach_margin", "--reach-margin"))},
                        "verdict thresholds")
CAUTION = text("the safety caution: predictions are not locations; verify buried services before digging")
WARNINGS = strings("model warnings (a published validity range left), one line each")
WRITTEN = strings("files written by this run (paths as given)")


# --- shared pieces -------------------------------------------------------------------------


def catalogue_used() -> dict:
    """The antenna catalogue a survey run used (subsurf.planning.catalogue.CatalogueChoice.describe)."""
    return obj({
        "file": text("the catalogue file read (the bundled configs/antennas.toml when no other was given)"),
        "source": text("where it was named", enum=("bundled", "survey", "--catalogue")),
        "bundled": boolean("the bundled illustrative catalogue was used"),
        "inline": strings("antennas defined in the survey itself ([antennas.define.NAME])"),
        "illustrative": strings("antennas used whose figures are illustrative, not measured"),
        "text": text("the same in one line"),
    }, "the antenna catalogue used")
def soil_facts() -> dict:
    """The ground as described on the command line or in --soil FILE, keys with units (subsurf.io.jsonstyle)."""
    from subsurf.io.jsonstyle import CALIBRATED_FACTS, FACT_KEYS, PLAIN_FACTS, json_key

    props = {json_key(field): num(f"{unit}", null=True) for field, (_, _, _, unit) in FACT_KEYS.items()}
    for k in PLAIN_FACTS:
        props[k] = ({"type": ["boolean", "null"], "description": "bound-water / clay-water interface loss on"}
                    if k == "interface_relaxation" else text(f"{k.replace('_', ' ')} (a name)", null=True))
    for k, desc in CALIBRATED_FACTS.items():
        props[k] = (text(desc) if k == "calibration_file" else
                    array(num("frequency (MHz)"), desc) if k == "band_mhz" else num(desc))
    return obj(props, "the ground's facts as given (soil facts or a direct ε'/σ), numbers in the unit their key "
                      "names; only the facts given appear", optional=tuple(props))


#: Depth keys of a survey's target: one depth, or a range (or list) of depths of interest.
SURVEY_TARGET_DEPTHS = {
    "depth_m": num("depth at which reach is judged (m): the target's depth, or the bottom of a range"),
    "depth_top_m": num("a range of depths of interest: its shallowest (m), where the blind zone and resolution "
                       "are judged"),
    "depth_bottom_m": num("a range of depths of interest: its deepest (m), = depth_m"),
    "depths_m": array(num("depth (m)"), "the depths of interest when given as a list, ascending"),
}
_RANGE_KEYS = ("depth_top_m", "depth_bottom_m", "depths_m")

TARGET = obj({
    "kind": text("target kind", enum=("planar", "point", "line")),
    "depth_m": num("depth to the top of the target (m): the depth at which reach (margin, verdict) is judged; "
                   "for a range of depths of interest, its bottom", null=True),
    "depth_top_m": num("a range of depths of interest: its shallowest depth (m), where the blind zone and the "
                       "resolution are judged"),
    "depth_bottom_m": num("a range of depths of interest: its deepest depth (m), = depth_m"),
    "depths_m": array(num("depth (m)"), "the depths of interest when given as a list, ascending"),
    "size_m": num("diameter of a point or line target (m); null for a planar one", null=True),
    "material": text("target material (configs/materials.toml name, or the direct ε'/σ)"),
    "orientation": text("antenna dipoles relative to a line target", null=True),
    "perfect_conductor": boolean("the target is treated as a perfect conductor"),
    "eps_real": num("target relative permittivity ε' (dimensionless)"),
    "sigma_ms_per_m": num("target conductivity (mS/m)"),
}, "the target", optional=("orientation", "perfect_conductor", "eps_real", "sigma_ms_per_m", "depth_top_m",
                           "depth_bottom_m", "depths_m"))

#: Reach verdicts (subsurf.detection.verdicts); 'partly blind' only for a range of depths of interest.
VERDICTS = ("reaches", "marginal", "does not reach", "too shallow", "partly blind")

CALIBRATION_SUMMARY = obj({
    "file": text("the site-calibration file given with --calibration"),
    "antenna": text("antenna the calibration was measured with"),
    "attenuation_db_per_m": num("measured one-way ground attenuation (dB/m)"),
    "reference_freq_mhz": num("frequency at which the attenuation applies (MHz)"),
    "q_star": num("measured band-limited Q* (dimensionless); null when not resolved", null=True),
    "velocity_m_per_ns": num("velocity measured on site (m/ns)"),
    "observed_penetration_m": num("depth at which the signal met the noise floor on the test profile (m)"),
    "effective_performance_single_trace_db": num("measured system performance of one trace (dB)"),
    "catalogue_performance_db": num("the catalogue's performance of that antenna (dB)", null=True),
    "performance_replaced_for": strings("antennas whose catalogue performance the measured one replaced"),
    "note": text("what the calibration changed, one line"),
}, "the site calibration applied (--calibration), or null", null=True)

CONTRAST = obj({
    "reflection_magnitude": num("|R| at normal incidence, host → target (dimensionless, 0-1)", minimum=0, maximum=1),
    "reflection_db": num("20·log10 |R| (dB); null for |R| = 0", null=True),
    "freq_mhz": num("frequency of that |R|, the weakest over the antennas' centre frequencies (MHz)"),
    "host_eps_real": num("host ground ε' at that frequency (dimensionless)"),
    "host_sigma_eff_ms_per_m": num("host effective conductivity at that frequency (mS/m)"),
    "target_eps_real": num("target ε' (dimensionless); null for a perfect conductor or a given reflection",
                           null=True),
    "low_contrast_limit": num("|R| below which the target is flagged low contrast (dimensionless)"),
    "low_contrast": boolean("|R| is below the limit"),
    "note": text("the low-contrast note, or null", null=True),
}, "the target's reflection contrast in its host")

FIT_ROWS = array(integer("row number in the pick CSV (1 = header line)", minimum=1), "CSV rows used by the fit")


def medium_schema() -> dict:
    row = obj({
        "freq_mhz": num("frequency (MHz)"),
        "eps_real": num("real relative permittivity ε' (dimensionless)"),
        "eps_imag": num("imaginary relative permittivity ε'' (dimensionless, >= 0)"),
        "sigma_dc_ms_per_m": num("DC conductivity σ_DC (mS/m); null when the model's ε'' already carries conduction "
                                 "(conduction_in_eps)", null=True),
        "sigma_eff_ms_per_m": num("effective conductivity σ_DC + ωε₀ε'' (mS/m)"),
        "loss_tangent": num("loss tangent tan δ (dimensionless)"),
        "velocity_m_per_ns": num("phase velocity ω/β (m/ns)"),
        "wavelength_m": num("wavelength in the ground 2π/β (m)"),
        "attenuation_db_per_m": num("one-way attenuation without scattering (dB/m)"),
        "skin_depth_m": num("skin depth 1/α (m); null when lossless", null=True),
        "loss_conduction_db_per_m": num("one-way loss by DC conduction (dB/m)"),
        "loss_water_relaxation_db_per_m": num("one-way loss by free-water Debye relaxation (dB/m)"),
        "loss_interface_relaxation_db_per_m": num("one-way loss by bound-water / clay-water relaxation (dB/m)"),
        "loss_scattering_db_per_m": num("one-way loss by scattering on stones (dB/m)"),
        "loss_total_db_per_m": num("one-way loss, sum of the mechanisms (dB/m)"),
    }, "wave properties at one frequency")
    return obj({
        "medium": text("the ground in words"),
        "facts": soil_facts(),
        "rows": array(row, "one row per frequency"),
        "conduction_in_eps": boolean("the soil model carries conduction inside ε'' (σ_DC not counted twice)"),
        "loss_note": text("how the loss of a direct ground depends on frequency", null=True),
        "warnings": WARNINGS,
    }, "subsurf medium --json: wave properties of a ground over frequency")


def choose_row() -> dict:
    return obj({
        "antenna": text("antenna name (catalogue)"),
        "centre_frequency_mhz": num("antenna centre frequency (MHz)"),
        "performance_db": num("system performance with the clutter-limited stacking gain (dB)"),
        "stacks": integer("traces stacked", minimum=1),
        "eps_real": num("ground ε' at the centre frequency (dimensionless)"),
        "sigma_eff_ms_per_m": num("ground effective conductivity at the centre frequency (mS/m)"),
        "velocity_m_per_ns": num("ground phase velocity at the centre frequency (m/ns)"),
        "attenuation_db_per_m": num("one-way ground attenuation at the centre frequency (dB/m)"),
        "coupling_gain_dbi": num("antenna-ground coupling gain (dBi)"),
        "min_depth_m": num("blind zone: shallowest depth whose echo clears the direct wave (m)"),
        "max_depth_m": num("maximum detectable depth of the target (m)", null=True),
        "margin_db": num("performance minus two-way loss at the target depth (the bottom of a range) (dB)",
                         null=True),
        "verdict": text("reach verdict (a range: margin at its bottom, blind zone at its top)", enum=VERDICTS),
        "near_field": boolean("the target (the top of a range) is within the antenna's near field"),
        "received_freq_mhz": num("centroid frequency received from the target depth (the top of a range) (MHz)"),
        "margin_top_db": num("a range of depths: the margin at its top (dB)"),
        "vertical_resolution_bottom_m": num("a range of depths: vertical resolution λ/4 at its bottom (m)"),
        "fresnel_radius_bottom_m": num("a range of depths: first Fresnel zone radius at its bottom (m)"),
        "vertical_resolution_m": num("vertical resolution λ/4 at the received frequency (m)"),
        "fresnel_radius_m": num("first Fresnel zone radius at the target depth (m)"),
        "footprint_radius_m": num("antenna footprint radius at the target depth (m)"),
        "smallest_separable_m": num("smallest horizontal separation of two targets (m)"),
        "illustrative": boolean("the catalogue figures are illustrative demo values"),
        "orientation_penalty_db": num("weaker return with the dipoles across a line target (dB)"),
        "model_max_depth_m": num("with --calibration: the soil model's maximum depth (m)", null=True),
        "model_margin_db": num("with --calibration: the soil model's margin (dB)", null=True),
    }, "one antenna", optional=("orientation_penalty_db", "model_max_depth_m", "model_margin_db", "margin_top_db",
                                "vertical_resolution_bottom_m", "fresnel_radius_bottom_m"))


def choose_schema() -> dict:
    layer = obj({"thickness_m": num("layer thickness (m)"), "material": text("layer material"),
                 "eps_real": num("layer ε' (dimensionless)"), "sigma_ms_per_m": num("layer conductivity (mS/m)")},
                "one layer above the target's ground")
    return obj({
        "ground": text("the ground in words"),
        "facts": soil_facts(),
        "layers": array(layer, "layers over the ground (--layer), top first"),
        "target": TARGET,
        "thresholds": obj({**THRESHOLDS["properties"],
                           "near_field_wavelengths": num("near field: depth within this many wavelengths")},
                          "verdict thresholds"),
        "reach_definition": text("the verdicts in words"),
        "depth_range_definition": text("a range of depths of interest: where each thing is judged, in words"),
        "rows": array(choose_row(), "one row per antenna"),
        "recommendation": obj({"antenna": text("recommended antenna, or null when none reaches", null=True),
                               "reason": text("why, one line")}, "the recommendation"),
        "contrast": CONTRAST,
        "caution": CAUTION,
        "warnings": WARNINGS,
        "calibration": CALIBRATION_SUMMARY,
        "catalogue": catalogue_used(),
    }, "subsurf choose --json: antennas ranked for a target", optional=("depth_range_definition",))


def setup_schema() -> dict:
    from subsurf.planning.plan import ROWS_SPEC

    descs = {k: f"{label} ({unit})" if unit else label for k, label, unit, _, _ in ROWS_SPEC}
    ints = {"samples", "samples_power_of_two", "stacks"}
    settings = obj({k: (integer(d, minimum=1, null=True) if k in ints else num(d, null=True))
                    for k, d in descs.items()}, "acquisition settings (null where not applicable)")
    rules = obj({k: text(f"rule behind {k}") for k in descs}, "the rule behind each setting")
    return obj({
        "antenna": text("antenna name"),
        "illustrative": boolean("the catalogue figures are illustrative demo values"),
        "ground": text("the ground in words"),
        "facts": soil_facts(),
        "target": {**TARGET, "type": ["object", "null"], "description": "the target, or null without one"},
        "verdict": text("reach verdict at the depth of interest", null=True),
        "reachable": boolean("the target can be reached: settings are planned"),
        "thresholds": THRESHOLDS,
        "ground_at_centre": obj({"freq_mhz": num("antenna centre frequency (MHz)"),
                                 "eps_real": num("ground ε' (dimensionless)"),
                                 "velocity_m_per_ns": num("ground phase velocity (m/ns)"),
                                 "wavelength_m": num("wavelength in the ground (m)"),
                                 "attenuation_db_per_m": num("one-way attenuation (dB/m)")},
                                "the ground at the antenna's centre frequency"),
        "received_freq_mhz": num("centroid frequency received from the depth of interest (MHz)"),
        "settings": settings,
        "rules": rules,
        "area_m2": num("survey area (m²)", null=True),
        "grid_3d": boolean("a 3-D grid (--grid-3d) is planned"),
        "survey": survey_effort(),
        "contrast": {**CONTRAST, "type": ["object", "null"], "description": "the target's contrast, or null "
                     "without a target"},
        "notes": strings("planning notes"),
        "caution": CAUTION,
        "warnings": WARNINGS,
        "calibration": CALIBRATION_SUMMARY,
        "catalogue": catalogue_used(),
    }, "subsurf setup --json: acquisition settings for one antenna")


def survey_effort() -> dict:
    grid = obj({
        "grid": text("grid kind", enum=("2d_detection", "3d_practice", "3d_limit")),
        "label": text("the grid in words"),
        "planned": boolean("the plan shows this grid (2D lines, or both 3D spacings with --grid-3d)"),
        "line_spacing_m": num("line spacing (m)"),
        "lines": integer("parallel lines over the area", minimum=1),
        "total_line_km": num("length of all lines (km)"),
        "survey_time_h": num("time to record them at the towing speed, turns included (h)"),
        "unaliased_dip_deg": num("steepest dip sampled without aliasing across the lines (degrees, 0-90); null "
                                 "for 2D lines", null=True, minimum=0, maximum=90),
    }, "one grid")
    return obj({
        "area_m2": num("area covered (m²)"),
        "line_length_m": num("length of one line (m)"),
        "speed_m_per_s": num("towing speed (m/s)"),
        "turn_time_s": num("time per turn between lines (s)"),
        "grids": array(grid, "2D detection lines, 3D common practice, 3D λ/4 imaging limit"),
    }, "survey effort over the area for each grid, or null without an area or a reachable target", null=True)


def depth_schema() -> dict:
    layer = obj({"thickness_m": num("layer thickness (m); null for the half-space below", null=True),
                 "velocity_m_per_ns": num("layer velocity (m/ns)"),
                 "velocity_se_m_per_ns": num("standard error of the layer velocity (m/ns)")}, "one layer")
    inputs = obj({
        "velocity_model": text("homogeneous (one velocity) or layered", enum=("homogeneous", "layered")),
        "velocity_m_per_ns": num("the one velocity (m/ns); null for a layered model", null=True),
        "velocity_se_m_per_ns": num("its standard error (m/ns); null for a layered model", null=True),
        "layers": array(layer, "the layered model, top first (empty for a homogeneous one)"),
        "velocity_source": text("where the velocity came from (the flag, or the --velocity-from file and fit)"),
        "offset_m": num("antenna separation (m)"),
        "time_zero_ns": num("time zero subtracted from the picks (ns)"),
        "time_zero_source": text("where time zero came from"),
        "time_zero_sd_ns": num("standard deviation of time zero (ns)"),
        "pick_sd_default_ns": num("pick standard deviation where a pick gives none (ns)"),
        "uncertainty": text("how the uncertainty is propagated"),
        "crs": text("CRS of the output coordinates"),
    }, "the inputs of the conversion", optional=("crs",))
    pick = obj({
        "line": text("profile line (pick CSV)"),
        "row": integer("row number in the pick CSV", minimum=1),
        "distance_m": num("distance along the line (m)"),
        "easting_m": num("easting in the output CRS (m)"), "northing_m": num("northing in the output CRS (m)"),
        "lon_deg": num("longitude (degrees)"), "lat_deg": num("latitude (degrees)"),
        "twt_ns": num("two-way travel time picked (ns)"),
        "tau_ns": num("two-way time after time zero (ns)"),
        "depth_m": num("depth (m)"),
        "depth_sd_m": num("first-order standard deviation of the depth (m)"),
        "depth_mc_sd_m": num("Monte Carlo standard deviation of the depth (m)"),
        "depth_p05_m": num("Monte Carlo 5th percentile of the depth (m)"),
        "depth_p95_m": num("Monte Carlo 95th percentile of the depth (m)"),
        "surface_elev_m": num("ground surface elevation (m)"),
        "target_elev_m": num("target elevation = surface elevation - depth (m)"),
    }, "one pick", optional=("line", "row", "distance_m", "easting_m", "northing_m", "lon_deg", "lat_deg",
                             "depth_mc_sd_m", "depth_p05_m", "depth_p95_m", "surface_elev_m", "target_elev_m"))
    return obj({"caution": CAUTION, "inputs": inputs, "picks": array(pick, "one row per pick"),
                "written": WRITTEN}, "subsurf depth --json: two-way times converted to depths")


def velocity_schema() -> dict:
    flags = strings("warnings about this fit")
    fit = obj({
        "target": text("target or reflector id (pick CSV), or 'calibration'"),
        "method": text("fit method", enum=("hyperbola", "cmp", "known depth")),
        "velocity_m_per_ns": num("fitted velocity (m/ns)"),
        "velocity_se_m_per_ns": num("standard error of the velocity (m/ns)"),
        "permittivity": num("relative permittivity (c/v)² of the fitted velocity (dimensionless)"),
        "rms_ns": num("rms residual of the fit (ns)"),
        "n_picks": integer("picks used", minimum=1),
        "rows": FIT_ROWS,
        "x0_m": num("apex position along the line (m)"), "x0_se_m": num("its standard error (m)"),
        "t0_ns": num("zero-offset two-way time (ns)"), "t0_se_ns": num("its standard error (ns)"),
        "depth_m": num("depth of the target or reflector (m)"),
        "depth_se_m": num("its standard error (m)"),
        "depth_method": text("how the CMP reflector depth was obtained"),
        "radius_m": num("target radius (m)"), "radius_se_m": num("its standard error (m)", null=True),
        "radius_fitted": boolean("the radius was fitted"),
        "offset_m": num("antenna separation (m)"),
        "time_zero_ns": num("time zero subtracted (ns)"),
        "twt_ns": num("two-way time of the known-depth target (ns)"),
        "max_offset_m": num("largest CMP offset (m)"),
        "spread_to_depth": num("largest offset / reflector depth (dimensionless)"),
        "downweighted": array(obj({"row": integer("CSV row", minimum=1),
                                   "weight": num("robust weight 0-1", minimum=0, maximum=1),
                                   "residual_ns": num("residual (ns)")}, "a downweighted pick"),
                              "picks the robust fit downweighted"),
        "outliers": array(obj({"row": integer("CSV row", minimum=1), "residual_ns": num("residual (ns)"),
                               "studentized": num("externally studentized residual (dimensionless)")},
                              "an outlier"), "picks flagged as outliers"),
        "outlier_rule": text("the outlier rule"),
        "flags": flags,
    }, "one fit", optional=("rms_ns", "rows", "x0_m", "x0_se_m", "t0_ns", "t0_se_ns", "depth_se_m", "depth_method",
                            "radius_m", "radius_se_m", "radius_fitted", "offset_m", "time_zero_ns", "twt_ns",
                            "max_offset_m", "spread_to_depth", "downweighted", "outliers", "outlier_rule", "flags"))
    interval = obj({"reflector": text("reflector id"),
                    "interval_velocity_m_per_ns": num("interval velocity above the reflector (Dix, m/ns)"),
                    "interval_velocity_se_m_per_ns": num("its standard error (m/ns)"),
                    "thickness_m": num("interval thickness (m)"), "thickness_se_m": num("its standard error (m)")},
                   "one interval")
    nums = lambda d: array(num(d), d)  # noqa: E731
    layered = obj({
        "kind": text("layered"), "method": text("how the model was fitted"),
        "reflectors": strings("reflector ids, top first"),
        "velocity_m_per_ns": nums("layer velocities (m/ns)"),
        "velocity_se_m_per_ns": nums("their standard errors (m/ns)"),
        "thickness_m": nums("layer thicknesses (m)"), "thickness_se_m": nums("their standard errors (m)"),
        "reflector_depth_m": nums("reflector depths (m)"), "reflector_depth_se_m": nums("their standard errors (m)"),
        "parameters": strings("names of the covariance rows/columns"),
        "covariance": array(array(num("covariance entry (m/ns for velocities, m for thicknesses)"), "row"),
                            "covariance of the parameters"),
        "covariance_units": text("units of the covariance"),
        "below_deepest_reflector": text("what lies below the deepest reflector"),
        "rms_ns": num("rms residual (ns)"), "n_picks": integer("picks used", minimum=1),
        "flags": strings("warnings about the model"),
    }, "the joint layered model of all CMP reflectors")
    return obj({
        "caution": CAUTION,
        "method": text("what was fitted", enum=("hyperbola", "cmp", "calibration")),
        "fits": array(fit, "one fit per target or reflector"),
        "interval_velocities": array(interval, "Dix interval velocities (CMP)"),
        "layered_model": layered,
        "warnings": WARNINGS,
        "written": WRITTEN,
    }, "subsurf velocity --json: ground velocity fits", optional=("interval_velocities", "layered_model",
                                                                 "warnings"))


def _report_common() -> dict:
    ranking = obj({
        "antenna": text("antenna name"),
        "centre_frequency_mhz": num("antenna centre frequency (MHz)"),
        "performance_db": num("system performance (dB)"),
        "max_depth_m": num("maximum detectable depth at the site median (m)", null=True),
        "margin_db": num("margin at the target depth (dB)", null=True),
        "verdict": text("reach verdict", enum=VERDICTS),
        "recommended": boolean("the recommended antenna"),
    }, "one antenna")
    return {
        "report": text("the HTML report written"),
        "survey": text("the survey file"),
        "site": text("site name"),
        "target": obj({"kind": text("target kind"), **SURVEY_TARGET_DEPTHS,
                       "size_m": num("target diameter (m)", null=True), "material": text("target material")},
                      "the survey's target", optional=_RANGE_KEYS),
        "catalogue": catalogue_used(),
        "recommended": text("recommended antenna (from the maps when they were computed), or null", null=True),
        "reason": text("why, one line"),
        "thresholds": SURVEY_THRESHOLDS,
        "reach_definition": text("the verdicts in words"),
        "decision": obj({
            "bring": text("the antenna to bring, or null when none reaches", null=True),
            "also": {"type": "object", "description": "scenario -> a further antenna that scenario needs",
                     "additionalProperties": text("antenna name")},
            "worst_scenario": text("scenario where the antenna to bring reaches the least area", null=True),
            "headline": text("the recommendation in words"),
            "reaches_margin_db": num("margin from which a target 'reaches' (dB)"),
            "per_scenario": array(obj({
                "scenario": text("scenario name"),
                "antenna": text("antenna chosen for it, or null", null=True),
                "reach_pct": pct("area it reaches, margin >= the reach threshold"),
                "expected_reach_pct": pct("its mean probability of reaching over the area"),
                "whole_site": boolean("it reaches every cell of the site"),
                "reason": text("why, one line")}, "one scenario's choice"), "the choice per scenario"),
        }, "what to bring, from the maps' area statistics (null without maps)", null=True),
        "zones": array(obj({
            "zone": text("zone name (file name first where two files share it; 'rest of the site (no zone)' for "
                         "the cells in no zone)"),
            "file": text("the zone file, or null for the rest of the site", null=True),
            "texture": text("the zone's texture preset or USDA class (else the survey's), or null", null=True),
            "cells": integer("grid cells of the site whose centre lies in the zone", minimum=0),
            "area_pct": pct("share of the site's cells"),
            "moisture_pct": num("median volumetric water content on its cells, before scenarios (%)", null=True),
            "pore_water_ec_ms_per_m": num("median pore-water EC on its cells, before scenarios (mS/m)", null=True),
            "clay_pct": num("median clay fraction on its cells (%)", null=True),
            "recommended": text("the antenna for the zone by the site's rule on its cells alone, or null",
                                null=True),
            "also": {"type": "object", "description": "scenario -> a further antenna that scenario needs here",
                     "additionalProperties": text("antenna name")},
            "worst_scenario": text("scenario where the zone's antenna reaches the fewest of its cells", null=True),
            "recommended_reach_pct": pct("share of the zone's cells its antenna reaches in the worst scenario",
                                         null=True),
            "headline": text("the zone's decision in words"),
            "antennas": array(obj({
                "antenna": text("antenna name"),
                "reach_pct": {"type": "object", "description": "scenario -> share of the zone's cells reached (%)",
                              "additionalProperties": pct("share of the zone's cells")},
                "worst_reach_pct": pct("the smallest of those over the scenarios")}, "one antenna in the zone"),
                "per antenna"),
        }, "one soil zone"), "per soil zone, from the maps' statistics over its cells (empty without zones or "
                             "maps)"),
        "site_median_recommendation": obj({"antenna": text("antenna recommended for the site-median soil", null=True),
                                           "reason": text("why, one line")},
                                          "the ranking of the site-median soil alone"),
        "ranking": array(ranking, "antennas at the site median"),
        "velocity_m_per_ns": num("site-median ground velocity (m/ns)"),
        "velocity_p05_m_per_ns": num("5th percentile of the ground velocity (m/ns)"),
        "velocity_p95_m_per_ns": num("95th percentile of the ground velocity (m/ns)"),
        "warnings": WARNINGS,
        "caution": CAUTION,
        "tables": strings("CSV tables written beside the report"),
        "calibration": report_calibration(),
    }


def report_calibration() -> dict:
    comparison = obj({
        "quantity": text("what is compared (its unit in 'unit')"),
        "model": num("the soil model's prediction, in 'unit'", null=True),
        "model_range": {"type": ["array", "null"], "items": num("bound, in 'unit'"),
                        "description": "5-95 % range of the model over the soil spread, in 'unit', or null"},
        "observed": num("the calibration's measurement, in 'unit'", null=True),
        "observed_se": num("its standard error, in 'unit'", null=True),
        "unit": text("unit of model, model_range, observed and observed_se (a table of different quantities)"),
        "how": text("how the two figures were obtained"),
    }, "one quantity: model vs site")
    change = obj({
        "antenna": text("antenna name"),
        "max_depth_before_m": num("maximum depth by the soil model (m)", null=True),
        "max_depth_after_m": num("maximum depth calibrated (m)", null=True),
        "margin_before_db": num("margin by the soil model (dB)", null=True),
        "margin_after_db": num("margin calibrated (dB)", null=True),
        "verdict_before": text("verdict by the soil model"), "verdict_after": text("verdict calibrated"),
    }, "what the calibration changed for one antenna")
    return grid_calibration(soil_defaults(), {
        "recommended_before": text("the antenna the soil model alone recommended", null=True),
        "changes": array(change, "per antenna, before and after calibration"),
        "comparison": array(comparison, "model against site, quantity by quantity"),
    })


def report_schema() -> dict:
    props = _report_common()
    props["maps_out"] = text("the map folder kept (--maps-out)")
    return obj(props, "subsurf report --json: the planning report written", optional=("maps_out",))


def demo_schema() -> dict:
    props = {"out": text("the demo folder"), **_report_common(), "files": strings("files written, relative to out")}
    return obj(props, "subsurf demo --json: the example chain run and its report")


def grid_calibration(defaults: dict, extra: dict | None = None) -> dict:
    """The site calibration of a map or report (subsurf.site.calibrated.GridCalibration.describe)."""
    anchor = obj({k: v for k, v in defaults.items() if "_sd_" not in k},
                 "the reference soil the calibration is anchored at (site medians), numbers in the unit their key "
                 "names", optional=tuple(k for k in defaults if "_sd_" not in k))
    calibration = obj({
        "file": text("the site-calibration file"), "antenna": text("antenna the calibration was measured with"),
        "attenuation_db_per_m": num("measured one-way attenuation (dB/m)"),
        "attenuation_se_db_per_m": num("its standard error (dB/m)", null=True),
        "reference_freq_mhz": num("frequency the attenuation applies at (MHz)"),
        "q_star": num("measured band-limited Q* (dimensionless)", null=True),
        "q_star_se": num("its standard error (dimensionless)", null=True),
        "velocity_m_per_ns": num("velocity measured on site (m/ns)"),
        "velocity_se_m_per_ns": num("its standard error (m/ns)", null=True),
        "observed_penetration_m": num("observed penetration on the test profile (m)"),
        "observed_penetration_se_m": num("its standard error (m)", null=True),
        "effective_performance_single_trace_db": num("measured performance of one trace (dB)"),
        "effective_performance_se_db": num("its standard error (dB)", null=True),
        "catalogue_performance_db": num("the catalogue's performance of that antenna (dB)", null=True),
        "performance_replaced_for": strings("antennas whose catalogue performance the measured one replaced"),
        "anchor_soil": anchor,
        "note": text("what the calibration changed, one line"),
        **(extra or {}),
    }, "the site calibration applied, or null", null=True, optional=tuple(extra or ()))
    return calibration


def soil_defaults() -> dict:
    """[soil.defaults] keys with units (and their _sd), as the map and report write them."""
    from subsurf.io.jsonstyle import FACT_KEYS, json_key
    from subsurf.site.schema import QUANTITIES

    defaults = {}
    for q in QUANTITIES.values():
        unit = FACT_KEYS[q.soil_field][3]
        defaults[json_key(q.soil_field)] = num(f"site-wide {q.long_name}: {unit}")
        defaults[json_key(q.soil_field, sd=True)] = num(f"its standard deviation: {unit}")
    return defaults


def map_schema() -> dict:
    row = obj({
        "scenario": text("scenario name"), "antenna": text("antenna name"),
        "centre_frequency_mhz": num("antenna centre frequency (MHz)"),
        "reach_pct": pct("area where the target is reached, margin >= the reach threshold"),
        "marginal_or_better_pct": pct("area with margin >= 0 dB below the blind zone (reaches or marginal)"),
        "too_shallow_pct": pct("area where the target is inside the antenna's blind zone, whatever the margin"),
        "expected_reach_pct": pct("mean probability of reaching over the area"),
        "reach_p90_pct": pct("area where the probability of reaching is >= 0.9"),
        "median_max_depth_m": num("median maximum detectable depth over the area (m)", null=True),
        "median_vertical_resolution_m": num("median vertical resolution at the target over the area (m)",
                                            null=True),
        "max_depth_min_m": num("smallest maximum detectable depth over the area (m)", null=True),
        "max_depth_max_m": num("largest maximum detectable depth over the area (m)", null=True),
        "recommended_pct": pct("area where this antenna is the recommended one"),
    }, "one scenario and antenna")
    defaults = soil_defaults()
    inputs = obj({
        "survey": text("survey file"), "name": text("site name"), "description": text("site description", null=True),
        "outline_crs": text("CRS of the outline"), "grid_crs": text("CRS of the grid"),
        "grid_crs_name": text("name of the grid CRS"), "grid_crs_source": text("how the grid CRS was chosen"),
        "cell_size_m": num("grid cell size (m)"), "soil_model": text("soil permittivity model"),
        "interpolation": text("interpolation of the samples"), "variogram": text("variogram model of kriging"),
        "texture": text("texture preset", null=True),
        "defaults": obj(defaults, "[soil.defaults], numbers in the unit their key names", optional=tuple(defaults)),
        "samples": array(obj({"file": text("sample table"), "count": integer("samples", minimum=0),
                              "quantities": strings("quantities it gives")}, "a sample table"), "sample tables"),
        "zones": array(obj({"file": text("zone file"), "names": strings("zone names")}, "a zone file"), "zones"),
        "rasters": array(obj({"file": text("raster"), "quantity": text("quantity it gives")}, "a raster"),
                         "rasters"),
        "target": obj({"kind": text("target kind"), **SURVEY_TARGET_DEPTHS,
                       "size_m": num("target diameter (m)", null=True), "material": text("target material")},
                      "the target", optional=_RANGE_KEYS),
        "antennas": strings("antennas mapped"),
        "catalogue": catalogue_used(),
        "scenarios": array(obj({"name": text("scenario"), "description": text("what it changes", null=True)},
                               "a scenario"), "scenarios"),
        "calibration": text("the site-calibration file ([calibration]), or null", null=True),
        "monte_carlo_draws": integer("draws of the reach probability", minimum=1),
        "monte_carlo_seed": integer("seed of the draws", minimum=0),
    }, "the survey's inputs")
    mc = obj({
        "draws": integer("draws", minimum=1), "seed": integer("seed", minimum=0),
        "max_standard_error": num("largest standard error of a Monte Carlo probability (probability, 0-1)"),
        "max_estimated_error": num("largest estimated error of the probability map (probability, 0-1)", null=True),
        "sampled_fraction": {"type": "object", "description": "scenario -> fraction of cells sampled (0-1)",
                             "additionalProperties": num("fraction 0-1", minimum=0, maximum=1)},
        "method": text("how the probability was estimated"),
    }, "how the reach probability was estimated")
    paths = {"type": "object", "description": "output kind -> file written",
             "properties": {**{k: text(f"{k} file") for k in ("netcdf", "summary_csv", "summary_md", "summary_json",
                                                              "png_scenarios", "png_inputs")},
                            "summary_csvw": text("the summary CSV's W3C CSV-on-the-Web metadata (columns, units, "
                                                 "caution)"),
                            "summary_csvt": text("the summary CSV's field types for GDAL/OGR (.csvt)"),
                            "netcdf_band_names": text("GDAL PAM sidecar (.aux.xml) naming the NetCDF's bands "
                                                      "'scenario / antenna' for GDAL/QGIS")},
             "patternProperties": {"^png_antennas:.+$": text("the per-antenna depth map of one scenario (PNG)"),
                                   "^tif_(max_depth|margin_db|reach_probability)_.+$": text("a GeoTIFF layer")},
             "additionalProperties": False}
    paths["required"] = list(paths["properties"])
    calibration = grid_calibration(defaults)
    return obj({"caution": CAUTION, "paths": paths, "thresholds": SURVEY_THRESHOLDS,
                "reach_definition": text("the verdicts in words"),
                "summary": array(row, "area fractions per scenario and antenna"),
                "inputs": inputs, "monte_carlo": mc, "calibration": calibration, "text": text("the table as printed"),
                "warnings": WARNINGS},
               "subsurf map --json: feasibility maps of a survey site")


def region_schema() -> dict:
    row = obj({
        "antenna": text("antenna name"), "centre_frequency_mhz": num("antenna centre frequency (MHz)"),
        "reach_pct": pct("cells with soil data where the target is reached, margin >= the reach threshold"),
        "marginal_or_better_pct": pct("cells with margin >= 0 dB below the blind zone (reaches or marginal)"),
        "too_shallow_pct": pct("cells where the target is inside the antenna's blind zone, whatever the margin"),
        "mean_max_depth_m": num("mean maximum detectable depth (m)", null=True),
        "recommended_pct": pct("cells where this antenna is the recommended one"),
    }, "one antenna")
    target = {**TARGET, "type": "object"}
    return obj({
        "soil": text("the soil input (file or synthetic region)"),
        "cells": integer("cells of the region", minimum=1),
        "shape": obj({"y": integer("rows", minimum=1), "x": integer("columns", minimum=1)}, "grid shape"),
        "chunk": integer("chunk size (cells per side)", minimum=16),
        "estimate": obj({"memory_bytes": num("estimated peak memory (bytes)"),
                         "duration_s": num("estimated run time (s)"),
                         "output_bytes": num("estimated output size (bytes)")}, "the preflight estimate"),
        "outputs": obj({"map": text("map NetCDF written"), "soil": text("synthetic soil raster written")},
                       "files written", optional=("map", "soil")),
        "soil_write_duration_s": num("time to write the synthetic soil raster (s)"),
        "target": target,
        "texture": text("texture preset filling missing soil facts"),
        "soil_model": text("soil permittivity model"),
        "scheduler": text("dask scheduler used"),
        "tiles": integer("tiles computed", minimum=0),
        "batch": integer("tiles in flight", minimum=1),
        "cells_with_data": integer("cells with soil data", minimum=0),
        "map_duration_s": num("time to compute and write the map (s)"),
        "cells_per_second": num("throughput (cells/s)", null=True),
        "thresholds": THRESHOLDS,
        "reach_definition": text("the verdicts in words"),
        "catalogue": catalogue_used(),
        "rows": array(row, "one row per antenna"),
        "no_antenna_marginal_or_better_pct": pct("cells where no antenna has margin >= 0 dB"),
        "coverage": obj({
            "cells_with_data_pct": pct("cells of the region with moisture (the rest are empty in the map)"),
            "default_used_pct": {"type": "object", "description": "per quantity of the file: cells with data "
                                 "where it was missing and its default was used (%)",
                                 "additionalProperties": pct("percent of the cells with data")},
        }, "how much of the region the soil raster covers"),
        "soil_inputs": obj({
            "format": text("raster format of --soil", enum=("geotiff", "netcdf")),
            "quantities": array(obj({
                "quantity": text("soil quantity"),
                "read_from": text("the variable or band it was read from"),
                "units": text("unit of the stored numbers (as stated by the file or --soil-unit)"),
                "time": text("how a time dimension was reduced ('' without one)"),
            }, "one quantity read"), "the quantities read from --soil"),
            "unused": array(text("a band or variable"), "gridded variables or bands of --soil that name no quantity"),
            "crs": text("CRS of the raster (EPSG code and name, or name)"),
            "crs_source": text("where the CRS came from"),
            "gaps": text("what cells lacking a quantity became", enum=("defaults", "empty")),
            "fill_values": {"type": "object", "description": "value filling each quantity's gaps (defaults)",
                            "additionalProperties": obj({"value": num("the value, in 'unit'"),
                                                         "unit": text("its SI unit (UDUNITS)")}, "one default")},
        }, "what was read from --soil and how"),
        "warnings": WARNINGS,
        "caution": CAUTION,
    }, "subsurf region --json: feasibility over a regional soil raster",
        optional=("soil_write_duration_s", "target", "texture", "soil_model", "scheduler", "tiles", "batch",
                  "cells_with_data", "map_duration_s", "cells_per_second", "thresholds", "reach_definition",
                  "catalogue", "rows", "no_antenna_marginal_or_better_pct", "coverage", "soil_inputs"))


def calibrate_schema() -> dict:
    return obj({
        "schema": text("file schema name", enum=("subsurf-site-calibration",)),
        "schema_version": integer("file schema version", minimum=1),
        "created_by": text("subsurf version and command"),
        "caution": CAUTION,
        "profile": obj({"file": text("test profile"), "format": text("format read"),
                        "traces": integer("traces", minimum=1), "samples": integer("samples per trace", minimum=1),
                        "sample_interval_ns": num("sample interval (ns)"),
                        "first_sample_ns": num("time of the first sample (ns)"),
                        "length_m": num("profile length (m)", null=True),
                        "dropped_traces": {"type": "object", "description": "reason -> traces dropped",
                                           "additionalProperties": integer("traces", minimum=0)}},
                       "the test profile read"),
        "antenna": obj({"name": text("antenna name"), "centre_freq_mhz": num("centre frequency (MHz)"),
                        "bandwidth_mhz": num("bandwidth (MHz)"), "separation_m": num("antenna separation (m)"),
                        "gain_dbi": num("antenna gain (dBi)", null=True),
                        "catalogue_performance_db": num("catalogue system performance (dB)", null=True),
                        "illustrative": boolean("illustrative catalogue figures")}, "the antenna used"),
        "time_zero": obj({"ns": num("time zero (ns)"), "se_ns": num("its standard error (ns)", null=True),
                          "method": text("how it was found")}, "time zero"),
        "velocity": obj({"m_per_ns": num("ground velocity (m/ns)"),
                         "se_m_per_ns": num("its standard error (m/ns)"), "source": text("where it came from")},
                        "ground velocity"),
        "noise_floor": obj({"window": text("noise window", enum=("late", "pre")),
                            "from_ns": num("window start (ns)"), "to_ns": num("window end (ns)"),
                            "db": num("noise floor (dB of amplitude²)"), "se_db": num("its standard error (dB)"),
                            "trend_db": num("trend over the window (dB)"),
                            "power_unit": text("reference of the dB values")}, "the noise floor"),
        "margin_db": num("margin above the noise floor defining penetration (dB)"),
        "penetration": obj({"twt_ns": num("two-way time of the observed penetration (ns)"),
                            "se_ns": num("its standard error (ns)", null=True),
                            "depth_m": num("observed penetration depth (m)"),
                            "se_m": num("its standard error (m)", null=True),
                            "lower_bound": boolean("the record ends first: a lower bound")},
                           "observed penetration"),
        "attenuation": obj({"db_per_m": num("one-way ground attenuation (dB/m)"),
                            "se_db_per_m": num("its standard error (dB/m)"),
                            "reference_freq_mhz": num("frequency it applies at (MHz)"),
                            "spreading": text("geometric spreading assumed", enum=("planar", "line", "point")),
                            "fit_from_m": num("fit start depth (m)"), "fit_to_m": num("fit end depth (m)"),
                            "samples": integer("samples fitted", minimum=1),
                            "effective_samples": num("independent samples (dimensionless)")},
                           "attenuation from the envelope decay"),
        "q_star": obj({"value": num("band-limited Q* (dimensionless)", null=True),
                       "se": num("its standard error (dimensionless)", null=True),
                       "lower_bound": num("lower bound of Q* when not resolved (dimensionless)", null=True),
                       "windows": integer("time windows used", minimum=0),
                       "centroid_first_mhz": num("spectral centroid of the first window (MHz)", null=True),
                       "centroid_last_mhz": num("spectral centroid of the last window (MHz)", null=True),
                       "attenuation_slope_db_per_m_per_mhz": num("attenuation slope (dB/m per MHz)", null=True)},
                      "Q* from the centroid shift"),
        "band_mhz": array(num("frequency (MHz)"), "usable band, low and high (MHz)"),
        "effective_performance": obj({"db": num("effective system performance with stacking (dB)"),
                                      "se_db": num("its standard error (dB)"),
                                      "single_trace_db": num("performance of one trace (dB)"),
                                      "stacks": integer("stacks", minimum=1),
                                      "reference_reflection": num("reflection coefficient assumed (dimensionless)"),
                                      "surface_loss": text("how the surface loss was taken"),
                                      "solver_check_max_depth_m": num("the depth solver's answer with it (m)")},
                                     "effective performance measured"),
        "model": {"type": ["object", "null"], "description": "the soil model compared with the calibration "
                                                             "(when a ground is given), or null"},
        "warnings": WARNINGS,
        "written": WRITTEN,
    }, "subsurf calibrate --json: the site-calibration record (as written by --out)", optional=("written",))


def manifest_schema() -> dict:
    """The manifest of a folder output (subsurf/io/manifest.py), a file rather than a --json output."""
    entry = obj({"path": text("file, relative to the folder, '/'-separated"),
                 "bytes": integer("size as subsurf wrote it (bytes)", minimum=0),
                 "sha256": {**text("SHA-256 of the file as subsurf wrote it (hex)"), "pattern": "^[0-9a-f]{64}$"},
                 "rewritable": {"const": True, "description": "other software rewrites this file in place "
                                "(a GDAL PAM sidecar, *.aux.xml, gains statistics): only its presence is checked, "
                                "not bytes and sha256"}},
                "one file of the folder", optional=("rewritable",))
    return obj({"format": {"const": "subsurf-output-manifest", "description": "what this file is"},
                "version": {"const": 1, "description": "manifest layout version"},
                "command": text("the subcommand that wrote the folder"),
                "transaction": text("the run's transaction id"),
                "subsurf_version": text("subsurf version that wrote the folder"),
                "created_utc": {**text("when the manifest was written (UTC, ISO 8601)"), "format": "date-time"},
                "files": array(entry, "every file of the folder but the manifest, sorted by path")},
               "subsurf-manifest.json: what a complete folder output (map, demo, report --maps-out) holds")


#: schemas of files subsurf writes that are not a command's --json output: name -> (builder, title)
FILE_SCHEMAS = {"manifest": (manifest_schema, "subsurf-manifest.json (folder outputs)")}

BUILDERS = {"medium": medium_schema, "choose": choose_schema, "setup": setup_schema, "depth": depth_schema,
            "velocity": velocity_schema, "calibrate": calibrate_schema, "map": map_schema, "region": region_schema,
            "report": report_schema, "demo": demo_schema}


def schemas() -> dict[str, dict]:
    """Command -> its JSON Schema (draft 2020-12)."""
    out = {}
    for name, build in BUILDERS.items():
        s = build()
        out[name] = {"$schema": DRAFT, "$id": f"{BASE_ID}{name}.schema.json",
                     "title": f"subsurf {name} --json", **s}
    for name, (build, title) in FILE_SCHEMAS.items():
        out[name] = {"$schema": DRAFT, "$id": f"{BASE_ID}{name}.schema.json", "title": title, **build()}
    return out


def render(schema: dict) -> str:
    return json.dumps(schema, indent=2, ensure_ascii=False) + "\n"


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--check", action="store_true", help="report stale schema files, change nothing")
    args = ap.parse_args()
    stale = []
    for name, s in schemas().items():
        path = HERE / f"{name}.schema.json"
        new = render(s)
        if not path.exists() or path.read_text(encoding="utf-8") != new:
            stale.append(path.name)
            if not args.check:
                path.write_text(new, encoding="utf-8")
    if args.check:
        print(f"{len(stale)} schema file(s) out of date" + (f": {', '.join(stale)}" if stale else ""))
        return 1 if stale else 0
    print(f"wrote {len(stale)} schema file(s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
