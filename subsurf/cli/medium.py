"""``subsurf medium``: what the radar wave sees in a ground, over frequency."""

from __future__ import annotations

HELP = "wave properties of a ground (soil facts or direct ε'/σ) over frequency"
EXAMPLE = """subsurf medium --texture loam --moisture "22 %" --pore-water-ec "80 mS/m"
subsurf medium --eps 9 --sigma "5 mS/m" --freq "100 MHz" --freq "400 MHz" --json"""

#: common GPR antenna centre frequencies (MHz) shown by default
DEFAULT_FREQS_MHZ = (25, 50, 100, 200, 250, 400, 500, 900, 1600, 2600)


def add_arguments(parser) -> None:
    from ._medium_args import add_medium_arguments

    add_medium_arguments(parser)
    parser.add_argument("--freq", action="append", metavar="Q",
                        help="frequency to tabulate (repeatable; bare number: MHz); "
                             "default: common centre frequencies from 25 MHz to 2.6 GHz")


def compute(medium, freqs_hz) -> dict:
    """Wave-property rows (human units) for ``medium`` at ``freqs_hz``."""
    import numpy as np

    from ..io.jsonstyle import soil_facts_json
    from ..waves.attenuation import medium_loss_by_mechanism
    from ..waves.propagation import wave_properties

    f = np.asarray(freqs_hz, dtype=float)
    eps, sigma = medium.electrical(f)
    w = wave_properties(eps, sigma, f)
    loss = medium_loss_by_mechanism(medium, f)
    in_eps = bool(getattr(medium.soil, "conduction_in_eps", False))
    rows = []
    for i in range(f.size):
        rows.append({
            "freq_mhz": f[i] / 1e6,
            "eps_real": float(w.eps_real[i]),
            "eps_imag": float(w.eps_imag[i]),
            # a model whose ε'' carries conduction has no separate σ_DC (null, not a misleading 0)
            "sigma_dc_ms_per_m": None if in_eps else float(w.sigma[i]) * 1e3,
            "sigma_eff_ms_per_m": float(w.effective_conductivity[i]) * 1e3,
            "loss_tangent": float(w.loss_tangent[i]),
            "velocity_m_per_ns": float(w.velocity[i]) / 1e9,
            "wavelength_m": float(w.wavelength[i]),
            "attenuation_db_per_m": float(w.attenuation_db_per_m[i]),
            "skin_depth_m": float(w.skin_depth[i]),
            **{f"loss_{k}_db_per_m": float(np.ravel(v)[i]) for k, v in loss.items()},
        })
    return {"medium": medium.label, "facts": soil_facts_json(medium.facts), "rows": rows,
            "conduction_in_eps": in_eps,
            "loss_note": medium.loss_note}


COLUMNS_SPEC = [
    ("freq_mhz", "f", "MHz", ".4g"),
    ("eps_real", "ε'", "", ".3g"),
    ("eps_imag", "ε''", "", ".3g"),
    ("sigma_eff_ms_per_m", "σ_eff", "mS/m", ".3g"),
    ("loss_tangent", "tan δ", "", ".3g"),
    ("velocity_m_per_ns", "v", "m/ns", ".4f"),
    ("wavelength_m", "λ", "m", ".3g"),
    ("attenuation_db_per_m", "α", "dB/m", ".3g"),
    ("skin_depth_m", "skin depth", "m", ".3g"),
]

#: the loss budget per mechanism (dB/m one way)
LOSS_COLUMNS_SPEC = [
    ("freq_mhz", "f", "MHz", ".4g"),
    ("loss_conduction_db_per_m", "conduction", "dB/m", ".3g"),
    ("loss_water_relaxation_db_per_m", "water relax.", "dB/m", ".3g"),
    ("loss_interface_relaxation_db_per_m", "interface relax.", "dB/m", ".3g"),
    ("loss_scattering_db_per_m", "scattering", "dB/m", ".3g"),
    ("loss_total_db_per_m", "total", "dB/m", ".3g"),
]


def run(args) -> int:
    from ..io.outputs import Column, collect_warnings, format_table, print_notes, print_result
    from ._medium_args import frequency_flag, medium_from_args

    if args.freq:
        freqs = [frequency_flag(v, "--freq") for v in args.freq]
    else:
        freqs = [m * 1e6 for m in DEFAULT_FREQS_MHZ]
    with collect_warnings() as notes:
        medium = medium_from_args(args)
        result = compute(medium, freqs)
    result["warnings"] = notes
    cols = [Column(*c) for c in COLUMNS_SPEC]
    title = f"Ground: {medium.label}"
    text = format_table(result["rows"], cols, title=title)
    text += ("\nσ_eff = σ_DC + ωε₀ε''; tan δ = σ_eff/(ωε₀ε'); v = ω/β (phase velocity); "
             "α in dB/m one way (without scattering); skin depth = 1/α.")
    text += "\n\n" + format_table(result["rows"], [Column(*c) for c in LOSS_COLUMNS_SPEC],
                                   title="Loss per mechanism (one way)")
    text += ("\nconduction: σ_DC; water relax.: free-water Debye loss in ε''; interface relax.: bound-water / "
             "clay-water term (or the dielectric loss of a direct ground); scattering: stones; total = sum.")
    if result["loss_note"]:
        text += "\n" + result["loss_note"]
    if result["conduction_in_eps"]:
        text += "\nThis soil model carries conduction inside ε'' (σ_DC counted there, not twice)."
    print_result(result, text, as_json=args.json)
    print_notes(notes, quiet=args.quiet or args.json)
    return 0
