"""The fixed texts of the planning report: sources, model validity, labels, section titles, cautions.

Kept apart from the code that gathers numbers (:mod:`.content`) and the templates that lay
them out, so the wording can be reviewed in one place.
"""

from __future__ import annotations

#: survey quantity -> (label, unit shown, factor from SI, format)
HUMAN = {
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

MODEL_VALIDITY = {
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



MAP_CAPTIONS = {
    "png_antennas": "Maximum detectable depth of the target across the site for each antenna, scenario {scenario}.",
    "png_scenarios": "How each scenario changes where the target can be reached.",
    "png_inputs": "The soil inputs on the survey grid, with the sample positions.",
}

def map_columns(reaches_db: float) -> tuple:
    """Map summary columns shown in the scenario comparison, for the reach threshold: key, header, format."""
    return (
        ("scenario", "scenario", "s"), ("antenna", "antenna", "s"),
        ("reach_pct", f"area reached, margin ≥ {reaches_db:g} dB (%)", ".0f"),
        ("marginal_or_better_pct", "area with margin ≥ 0 dB, below the blind zone (%)", ".0f"),
        ("too_shallow_pct", "area where the target is inside the blind zone (%)", ".0f"),
        ("expected_reach_pct", f"mean probability of reaching (margin ≥ {reaches_db:g} dB) (%)", ".0f"),
        ("median_max_depth_m", "median max depth (m)", ".2f"),
        ("recommended_pct", "area where recommended (%)", ".0f"),
    )



#: section id -> heading, in page order
SECTIONS = [
    ("summary", "At a glance"),
    ("calibration", "Calibrated to the site: predicted versus observed"),
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



#: assumptions listed under the model's own validity text
ASSUMPTIONS = (
    "Bulk DC conductivity from pore-water conductivity by Archie's law with Waxman–Smits clay surface "
    "conduction; valid for water-wet, granular soils.",
    "Propagation: exact plane-wave solution of the Helmholtz equation in a homogeneous, non-magnetic "
    "ground (μ_r = 1); no layering, scattering or antenna near-field effects.",
    "Loss budget: far-field radar range equation with geometric spreading (planar: image source at 2d; "
    "line: cylinder over its first Fresnel zone; point: radar cross-section), two-way absorption at the "
    "antenna centre frequency, and air–ground transmission loss. Real detection also depends on clutter, "
    "target orientation and operator experience; treat depths within a few decibels of the limit as "
    "uncertain.",
    "The recommendation comes from the feasibility maps: the area of the site each antenna reaches in each "
    "scenario. The site-wide charts (ground properties, reach curves, the site-median ranking, acquisition "
    "settings and the depth chart) use one median soil; the maps show how the answer changes across the site.",
)

#: the safety section, in full sentences (the short form is subsurf.safety.CAUTION)
SAFETY = (
    "The depths, ranges and maps in this report are predictions from a model of the ground, not "
    "locations of buried objects. A target may be missed, and a reflection may come from something else.",
    "Before any excavation, verify buried services by the means your local regulations require "
    "(utility records, one-call notification, trial holes dug by qualified staff).",
    "GPR transmitters are radio equipment. Their licensing and permitted use differ by country (and "
    "sometimes by site); check that your equipment and its use are authorised where you work.",
    "Defer to local codes and licensed professional practice wherever they differ from this report.",
)

#: references not cited under each soil model
REFERENCES_SKIPPED = {"crim": {"peplinski1995", "topp1980"}, "peplinski": {"birchak1974", "topp1980", "klein1977"},
                      "topp": {"peplinski1995", "birchak1974", "klein1977"}}

#: Soil field -> name in the depth-chart note
SPREAD_NAMES = {"moisture": "moisture", "pore_water_ec25": "pore-water EC", "pore_water_salinity_psu": "salinity",
                "temp_c": "temperature"}


def depth_span(t: dict) -> str:
    """'1.20 m', '0.50–1.50 m' or '0.50, 1.00, 1.50 m' (a range or list of depths of interest)."""
    if t.get("depths_m"):
        return ", ".join(f"{d:.2f}" for d in t["depths_m"]) + " m"
    if "depth_top_m" in t:
        return f"{t['depth_top_m']:.2f}–{t['depth_bottom_m']:.2f} m"
    return f"{t['depth_m']:.2f} m"
