"""``subsurf choose``: rank the antennas of a catalogue for one target in one ground."""

from __future__ import annotations

HELP = "rank antennas for a target (kind, depth, size, material) in a ground and recommend one"
EXAMPLE = """subsurf choose --texture loam --moisture "25 %" --pore-water-ec "60 mS/m" --target line --depth 1.2 --size "20 cm" --material metal
subsurf choose --eps 9 --sigma "5 mS/m" --target point --depth 2 --size 0.8 --material void --json"""


def add_target_arguments(parser, *, depth_required: bool) -> None:
    """Target flags shared by ``choose`` and ``setup``."""
    g = parser.add_argument_group("target")
    g.add_argument("--target", choices=["planar", "point", "line"],
                   help="planar interface (water table, bedrock, slab base), point (void, boulder, drum) "
                        "or line (pipe, cable, duct)")
    g.add_argument("--depth", metavar="Q", required=depth_required,
                   help="depth to the top of the target (bare number: m)")
    g.add_argument("--size", metavar="Q", help="diameter of a point or line target (bare number: m)")
    g.add_argument("--material", metavar="NAME",
                   help="target material from configs/materials.toml, e.g. metal, void, plastic_pipe, water, "
                        "concrete, rock, water_table (default: metal for point/line, water_table for planar)")
    g.add_argument("--target-eps", metavar="EPS", help="target relative permittivity instead of --material")
    g.add_argument("--target-sigma", metavar="Q", help="target conductivity with --target-eps (bare number: mS/m)")
    parser.add_argument("--catalogue", metavar="FILE", help="antenna catalogue TOML (default: the bundled "
                        "illustrative configs/antennas.toml)")
    parser.add_argument("--surface-loss", metavar="DB", help="two-way air-ground transmission loss in dB "
                        "(default: from the air-ground contrast; 0 leaves it out)")


def target_from_args(args, *, depth_m):
    """Build the Target of the flags (None when --target is not given)."""
    from ..errors import InputError
    from ..planning.antennas import make_target
    from ..units import parse_quantity

    if args.target is None:
        if args.size or args.material or args.target_eps or args.target_sigma:
            raise InputError("--size/--material/--target-eps/--target-sigma describe a target; "
                             "give its kind with --target")
        return None
    if args.target_sigma is not None and args.target_eps is None:
        raise InputError("--target-sigma goes with --target-eps (a material's conductivity comes from "
                         "configs/materials.toml); give --target-eps too, or leave --target-sigma out")
    size = None
    if args.size is not None:
        size = parse_quantity(args.size, "length", default_unit="m", name="--size")
        if size <= 0:
            raise InputError(f"--size must be > 0 m, got {args.size!r}")
    elif args.target != "planar":
        raise InputError(f"a {args.target} target needs --size (its diameter, e.g. '20 cm')")
    if args.target_eps is not None:
        if args.material:
            raise InputError("give either --material or --target-eps, not both")
        try:
            eps = complex(str(args.target_eps).replace(" ", ""))
        except ValueError:
            raise InputError(f"--target-eps: cannot read {args.target_eps!r} as a number") from None
        sigma = 0.0 if args.target_sigma is None else parse_quantity(
            args.target_sigma, "conductivity", default_unit="mS/m", name="--target-sigma")
        return make_target(args.target, depth_m=depth_m, size_m=size, eps=eps, sigma=sigma)
    material = args.material or ("water_table" if args.target == "planar" else "metal")
    return make_target(args.target, depth_m=depth_m, size_m=size, material=material)


def parse_depth(text, name="--depth"):
    from ..errors import InputError
    from ..units import parse_quantity

    d = parse_quantity(text, "length", default_unit="m", name=name)
    if d <= 0:
        raise InputError(f"{name} must be > 0 m, got {text!r}")
    return d


def parse_surface_loss(text):
    from ..errors import InputError

    if text is None:
        return None
    try:
        v = float(str(text).lower().replace("db", "").strip())
    except ValueError:
        raise InputError(f"--surface-loss: cannot read {text!r} as dB") from None
    if not v >= 0:
        raise InputError(f"--surface-loss must be >= 0 dB, got {text!r}")
    return v


def add_arguments(parser) -> None:
    from ._medium_args import add_medium_arguments

    add_medium_arguments(parser)
    add_target_arguments(parser, depth_required=True)
    parser.add_argument("--antenna", action="append", metavar="NAME",
                        help="only these antennas of the catalogue (repeatable)")
    from ._calibration import add_calibration_argument

    add_calibration_argument(parser)


COLUMNS_SPEC = [
    ("name", "antenna", "", ""),
    ("freq_mhz", "f", "MHz", ".4g"),
    ("performance_db", "perf", "dB", ".0f"),
    ("max_depth_m", "max depth", "m", ".3g"),
    ("margin_db", "margin", "dB", ".1f"),
    ("verdict", "verdict", "", ""),
    ("received_freq_mhz", "f at depth", "MHz", ".4g"),
    ("vertical_resolution_m", "vert res", "m", ".2g"),
    ("fresnel_radius_m", "Fresnel r", "m", ".2g"),
    ("footprint_radius_m", "footprint", "m", ".2g"),
]


def compute(medium, target, antennas, *, surface_loss_db=None) -> dict:
    """Rows (human units) and recommendation for ``target`` in ``medium``."""
    from ..detection.budget import REACHES_MARGIN_DB
    from ..io.outputs import CAUTION
    from ..planning.antennas import rank_antennas, recommend, target_summary

    rows_si = rank_antennas(medium.electrical, antennas, target, surface_loss_db=surface_loss_db)
    rows = []
    for r in rows_si:
        rows.append({
            "name": r["name"],
            "freq_mhz": r["centre_freq_hz"] / 1e6,
            "performance_db": r["performance_db"],
            "stacks": r["stacks"],
            "eps_real": r["eps_real"],
            "sigma_eff_ms_per_m": r["sigma"] * 1e3,
            "velocity_m_per_ns": r["velocity_m_per_s"] / 1e9,
            "attenuation_db_per_m": r["attenuation_db_per_m"],
            "max_depth_m": r["max_depth_m"],
            "margin_db": r["margin_db"],
            "verdict": r["verdict"],
            "received_freq_mhz": r["received_freq_hz"] / 1e6,
            "vertical_resolution_m": r["vertical_resolution_m"],
            "fresnel_radius_m": r["fresnel_radius_m"],
            "footprint_radius_m": r["footprint_radius_m"],
            "smallest_separable_m": r["smallest_separable_m"],
            "illustrative": r["illustrative"],
        })
    name, reason = recommend(rows_si)
    return {
        "ground": medium.label,
        "facts": medium.facts,
        "target": target_summary(target),
        "thresholds": {"reaches_margin_db": REACHES_MARGIN_DB, "marginal_margin_db": 0.0},
        "rows": rows,
        "recommendation": {"antenna": name, "reason": reason},
        "caution": CAUTION,
    }


def run(args) -> int:
    from ..io.outputs import CAUTION, Column, collect_warnings, format_table, print_notes, print_result
    from ..planning.antennas import get_antenna, load_catalogue
    from ._medium_args import medium_from_args

    depth = parse_depth(args.depth)
    surface = parse_surface_loss(args.surface_loss)
    with collect_warnings() as notes:
        catalogue = load_catalogue(args.catalogue)
        antennas = [get_antenna(n, catalogue) for n in args.antenna] if args.antenna else list(catalogue.values())
        medium = medium_from_args(args, required=not args.calibration)
        if args.target is None:
            from ..errors import InputError

            raise InputError("give the target kind with --target planar|point|line")
        target = target_from_args(args, depth_m=depth)
        from ._calibration import add_model_columns, replan_inputs

        ground, used, calibration = replan_inputs(args, medium, antennas)
        result = compute(ground, target, used, surface_loss_db=surface)
        if calibration and medium is not None:  # predicted (soil model, catalogue) beside observed
            add_model_columns(result["rows"], compute(medium, target, antennas, surface_loss_db=surface)["rows"])
        medium = ground
    result["warnings"] = notes
    result["calibration"] = calibration
    t = result["target"]
    what = f"{t['kind']} target, {t['material']}" + (f", {t['size_m']:g} m across" if t["size_m"] else "")
    title = f"Ground: {medium.label}\nTarget: {what}, at {t['depth_m']:g} m"
    spec = list(COLUMNS_SPEC)
    if calibration:
        title += "\n" + calibration["note"]
        if "model_max_depth_m" in result["rows"][0]:
            spec[4:4] = [("model_max_depth_m", "model depth", "m", ".3g")]
    text = format_table(result["rows"], [Column(*c) for c in spec], title=title)
    text += (f"\nverdict: reaches = margin >= {result['thresholds']['reaches_margin_db']:g} dB; "
             "marginal = 0 to that; perf includes stacking gain 10·log10(N).")
    text += "\nvert res = λ/4 at the frequency received from the target depth; footprint = semi-axis at depth."
    if any(r["illustrative"] for r in result["rows"]):
        text += "\nCatalogue figures are ILLUSTRATIVE demo values; use your instrument's measured figures."
    text += f"\nRecommendation: {result['recommendation']['reason']}."
    text += f"\nCaution: {CAUTION}"
    print_result(result, text, as_json=args.json)
    print_notes(notes, quiet=args.quiet or args.json)
    return 0
