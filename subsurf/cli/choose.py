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
                   help="depth to the top of the target (bare number: m), or the depths of interest as a range "
                        "TOP-BOTTOM ('0.5-1.5 m') or a list ('0.5,1.0,1.5 m'): reach is judged at the deepest, "
                        "the blind zone and resolution at the shallowest")
    g.add_argument("--size", metavar="Q", help="diameter of a point or line target (bare number: m)")
    g.add_argument("--material", metavar="NAME",
                   help="target material from configs/materials.toml, e.g. metal, void, plastic_pipe, water, "
                        "concrete, rock, water_table (default: metal for point/line, water_table for planar)")
    g.add_argument("--target-eps", metavar="EPS", help="target relative permittivity instead of --material")
    g.add_argument("--target-sigma", metavar="Q", help="target conductivity with --target-eps (bare number: mS/m)")
    g.add_argument("--orientation", metavar="WORD",
                   help="line target: antenna dipoles parallel to the pipe (default; lines cross it at right "
                        "angles), perpendicular to it, or unknown (the weaker return of the two)")
    ground = parser.add_argument_group("surface layers")
    ground.add_argument("--over", action="append", metavar="LAYER",
                        help="a surface layer over the ground, top first, repeatable: 'THICKNESS MATERIAL' "
                             "(e.g. '0.08 m asphalt', '0.2 m fill', '15 cm topsoil') or 'THICKNESS eps=E sigma=S' "
                             "(S in mS/m); the ground flags describe the ground below the layers")
    parser.add_argument("--catalogue", metavar="FILE", help="antenna catalogue TOML (default: the bundled "
                        "illustrative configs/antennas.toml)")
    parser.add_argument("--surface-loss", metavar="DB", help="extra two-way loss at the surface in dB, e.g. for "
                        "an air gap or a rough surface (default 0; the antenna-ground coupling is computed from "
                        "the ground)")


def target_from_args(args, *, depth_m, depths=None):
    """Build the Target of the flags (None when --target is not given).

    ``depths`` (a :class:`~subsurf.cli._depths.DepthsOfInterest`) gives a range or list of depths
    of interest; ``depth_m`` is then its bottom.
    """
    target = _target_from_args(args, depth_m=depth_m)
    if target is not None and depths is not None and depths.is_range:
        from dataclasses import replace

        target = replace(target, **depths.target_fields())
    return target


def _target_from_args(args, *, depth_m):
    from dataclasses import replace

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
    orientation = parse_orientation(getattr(args, "orientation", None), kind=args.target)
    if args.target_eps is not None:
        if args.material:
            raise InputError("give either --material or --target-eps, not both")
        try:
            eps = complex(str(args.target_eps).replace(" ", ""))
        except ValueError:
            raise InputError(f"--target-eps: cannot read {args.target_eps!r} as a number") from None
        sigma = 0.0 if args.target_sigma is None else parse_quantity(
            args.target_sigma, "conductivity", default_unit="mS/m", name="--target-sigma")
        return replace(make_target(args.target, depth_m=depth_m, size_m=size, eps=eps, sigma=sigma),
                       orientation=orientation)
    material = args.material or ("water_table" if args.target == "planar" else "metal")
    return replace(make_target(args.target, depth_m=depth_m, size_m=size, material=material), orientation=orientation)


def parse_orientation(text, *, kind):
    """--orientation word → Target.orientation (exit-1 error naming the allowed words)."""
    from ..detection.targets import ORIENTATIONS
    from ..errors import InputError

    if text is None:
        return "parallel"
    word = str(text).strip().lower()
    if word not in ORIENTATIONS:
        raise InputError(f"--orientation must be one of {', '.join(ORIENTATIONS)}, got {text!r}")
    if kind != "line":
        raise InputError("--orientation applies to line targets (--target line)")
    return word


def layers_from_args(args):
    """The --over layers (top first) as detection Layers."""
    from ..planning.overburden import parse_layer

    return tuple(parse_layer(t) for t in (getattr(args, "over", None) or ()))


from ._depths import MAX_DEPTH_M  # noqa: E402  (stated there; kept importable here)


def parse_depth(text, name="--depth"):
    from ..errors import InputError
    from ..units import parse_quantity

    d = parse_quantity(text, "length", default_unit="m", name=name)
    if not 0 < d <= MAX_DEPTH_M:
        raise InputError(f"{name} must be > 0 m and at most {MAX_DEPTH_M / 1e3:g} km (deeper than any radar "
                         f"sounding reaches), got {text!r}")
    return d


def depth_words(t: dict) -> str:
    """'at 1.2 m', or for a range 'depths of interest 0.5-1.5 m (reach judged at 1.5 m, ...)'."""
    if "depth_top_m" not in t:
        return f"at {t['depth_m']:g} m"
    listed = ", ".join(f"{d:g}" for d in t["depths_m"]) + " m" if t.get("depths_m") else \
        f"{t['depth_top_m']:g}-{t['depth_bottom_m']:g} m"
    return (f"depths of interest {listed} (reach judged at the deepest, {t['depth_bottom_m']:g} m; blind zone "
            f"and resolution at the shallowest, {t['depth_top_m']:g} m)")


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
    from ._reach import add_reach_margin_argument

    add_calibration_argument(parser)
    add_reach_margin_argument(parser)


COLUMNS_SPEC = [
    ("antenna", "antenna", "", ""),
    ("centre_frequency_mhz", "f", "MHz", ".4g"),
    ("performance_db", "perf", "dB", ".0f"),
    ("min_depth_m", "min depth", "m", ".2g"),
    ("max_depth_m", "max depth", "m", ".3g"),
    ("margin_db", "margin", "dB", ".1f"),
    ("verdict", "verdict", "", ""),
    ("received_freq_mhz", "f at depth", "MHz", ".4g"),
    ("vertical_resolution_m", "vert res", "m", ".2g"),
    ("fresnel_radius_m", "Fresnel r", "m", ".2g"),
    ("footprint_radius_m", "footprint", "m", ".2g"),
]


def compute(medium, target, antennas, *, surface_loss_db=None, layers=(), reaches_db=None) -> dict:
    """Rows (human units) and recommendation for ``target`` in ``medium`` (under ``layers``).

    ``reaches_db``: the reach threshold (default :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`).
    """
    from ..detection.blindzone import NEAR_FIELD_WAVELENGTHS
    from ..detection.verdicts import REACHES_MARGIN_DB, range_definition, reach_definition
    from ..io.jsonstyle import soil_facts_json
    from ..planning.antennas import rank_antennas, recommend, target_summary
    from ..safety import CAUTION

    reaches_db = REACHES_MARGIN_DB if reaches_db is None else reaches_db
    rows_si = rank_antennas(medium.electrical, antennas, target, surface_loss_db=surface_loss_db, layers=layers,
                            reaches_db=reaches_db)
    rows = []
    for r in rows_si:
        row = {
            "antenna": r["name"],
            "centre_frequency_mhz": r["centre_freq_hz"] / 1e6,
            "performance_db": r["performance_db"],
            "stacks": r["stacks"],
            "eps_real": r["eps_real"],
            "sigma_eff_ms_per_m": r["sigma"] * 1e3,
            "velocity_m_per_ns": r["velocity_m_per_s"] / 1e9,
            "attenuation_db_per_m": r["attenuation_db_per_m"],
            "coupling_gain_dbi": r["coupling_gain_dbi"],
            "min_depth_m": r["min_depth_m"],
            "max_depth_m": r["max_depth_m"],
            "margin_db": r["margin_db"],
            "verdict": r["verdict"],
            "near_field": r["near_field"],
            "received_freq_mhz": r["received_freq_hz"] / 1e6,
            "vertical_resolution_m": r["vertical_resolution_m"],
            "fresnel_radius_m": r["fresnel_radius_m"],
            "footprint_radius_m": r["footprint_radius_m"],
            "smallest_separable_m": r["smallest_separable_m"],
            "illustrative": r["illustrative"],
        }
        if "orientation_penalty_db" in r:
            row["orientation_penalty_db"] = r["orientation_penalty_db"]
        for k in ("margin_top_db", "vertical_resolution_bottom_m", "fresnel_radius_bottom_m"):
            if k in r:
                row[k] = r[k]
        rows.append(row)
    name, reason = recommend(rows_si, target=target, reaches_db=reaches_db)
    from ..detection.contrast import target_contrast

    contrast = target_contrast(medium.electrical, target, [a.centre_freq_hz for a in antennas])
    return {
        "ground": medium.label,
        "facts": soil_facts_json(medium.facts),
        "layers": [{"thickness_m": lay.thickness_m, "material": lay.label, "eps_real": complex(lay.eps).real,
                    "sigma_ms_per_m": lay.sigma * 1e3} for lay in layers],
        "target": target_summary(target),
        "thresholds": {"reaches_margin_db": reaches_db, "marginal_margin_db": 0.0,
                       "near_field_wavelengths": NEAR_FIELD_WAVELENGTHS},
        "reach_definition": reach_definition(reaches_db),
        **({"depth_range_definition": range_definition(target.depth_top_m, target.depth_m)}
           if target.is_range else {}),
        "rows": rows,
        "recommendation": {"antenna": name, "reason": reason},
        "contrast": contrast.as_json(),
        "caution": CAUTION,
    }


def run(args) -> int:
    from ..io.outputs import Column, collect_warnings, format_table, print_notes, print_result
    from ..planning.antennas import get_antenna
    from ..planning.catalogue import resolve_catalogue
    from ._depths import parse_depths
    from ._medium_args import medium_from_args
    from ._reach import reach_margin_from_args

    depths = parse_depths(args.depth)
    depth = depths.bottom
    surface = parse_surface_loss(args.surface_loss)
    reaches_db = reach_margin_from_args(args)
    with collect_warnings() as notes:
        choice = resolve_catalogue(file=args.catalogue, source="--catalogue")
        catalogue = choice.antennas
        antennas = [get_antenna(n, catalogue) for n in args.antenna] if args.antenna else list(catalogue.values())
        medium = medium_from_args(args, required=not args.calibration)
        if args.target is None:
            from ..errors import InputError

            raise InputError("give the target kind with --target planar|point|line")
        target = target_from_args(args, depth_m=depth, depths=depths)
        layers = layers_from_args(args)
        from ._calibration import add_model_columns, replan_inputs

        ground, used, calibration = replan_inputs(args, medium, antennas, catalogue)
        result = compute(ground, target, used, surface_loss_db=surface, layers=layers, reaches_db=reaches_db)
        if calibration and medium is not None:  # predicted (soil model, catalogue) beside observed
            add_model_columns(result["rows"], compute(medium, target, antennas, surface_loss_db=surface,
                                                      layers=layers, reaches_db=reaches_db)["rows"])
        medium = ground
    result["warnings"] = notes
    result["calibration"] = calibration
    result["catalogue"] = choice.describe([a.name for a in antennas])
    t = result["target"]
    size = ""
    if t["size_m"]:
        size = (f", {t['size_m']:g} m across" if t["kind"] != "planar"
                else f" (--size {t['size_m']:g} m not used: a planar target is an extended interface)")
    what = f"{t['kind']} target, {t['material']}" + size
    title = f"Ground: {medium.label}"
    if result["layers"]:
        title += "\nUnder: " + ", ".join(f"{lay['thickness_m']:g} m {lay['material']}" for lay in result["layers"])
    title += f"\nTarget: {what}, " + depth_words(t)
    if t["kind"] == "line":
        title += f" (antenna dipoles {t.get('orientation', 'parallel')} to it)"
    spec = list(COLUMNS_SPEC)
    if calibration:
        title += "\n" + calibration["note"]
        if "model_max_depth_m" in result["rows"][0]:
            spec[5:5] = [("model_max_depth_m", "model depth", "m", ".3g")]
    text = format_table(result["rows"], [Column(*c) for c in spec], title=title)
    text += f"\nverdict: {result['reach_definition']}."
    at = "the target depth" if "depth_top_m" not in t else f"the top of the range ({t['depth_top_m']:g} m)"
    text += ("\nperf includes the clutter-limited stacking gain; min depth = blind zone (pulse length, separation, "
             f"direct wave); f at depth and vert res (λ/4) from the spectrum received from {at}.")
    if "depth_top_m" in t:
        text += f"\nDepth range: {result['depth_range_definition']}."
        text += ("\nAt the bottom (" + f"{t['depth_bottom_m']:g} m) vert res / Fresnel r: " + ", ".join(
            f"{r['antenna']} {r['vertical_resolution_bottom_m']:.2g} / {r['fresnel_radius_bottom_m']:.2g} m"
            for r in result["rows"]) + ".")
        for r in result["rows"]:
            if r["verdict"] == "partly blind":
                text += (f"\nPartly blind: {r['antenna']} is blind above {r['min_depth_m']:.2g} m; it sees "
                         f"{r['min_depth_m']:.2g}-{t['depth_bottom_m']:g} m of the range, not its top.")
    near = [r["antenna"] for r in result["rows"] if r["near_field"]]
    if near:
        text += (f"\nNear field: the target is within {result['thresholds']['near_field_wavelengths']:g} wavelength "
                 f"of {', '.join(near)}; the far-field budget departs from a full-wave solution by more than 2 dB there.")
    pen = [r for r in result["rows"] if r.get("orientation_penalty_db") is not None]
    if pen and t.get("orientation", "parallel") == "parallel":
        text += _orientation_note(pen)
    if result["contrast"]["low_contrast"]:
        note = result["contrast"]["note"]
        text += f"\n{note[0].upper()}{note[1:]}."
    if any(r["illustrative"] for r in result["rows"]):
        text += "\nCatalogue figures are ILLUSTRATIVE demo values; use your instrument's measured figures."
    text += f"\nAntennas: {result['catalogue']['text']}."
    text += f"\nRecommendation: {result['recommendation']['reason']}."
    text += f"\nCaution: {result['caution']}"
    print_result(result, text, as_json=args.json)
    print_notes(notes, quiet=args.quiet or args.json)
    return 0


def _orientation_note(rows) -> str:
    """The line target's orientation note: how much weaker or stronger the return is with the dipoles across the
    pipe, only where that changes it by at least 0.1 dB (``orientation_penalty_db`` > 0: parallel is stronger)."""
    worst = max(rows, key=lambda r: r["orientation_penalty_db"])
    best = min(rows, key=lambda r: r["orientation_penalty_db"])
    parts = []
    if worst["orientation_penalty_db"] >= 0.1:
        parts.append(f"up to {worst['orientation_penalty_db']:.1f} dB weaker ({worst['antenna']})")
    if best["orientation_penalty_db"] <= -0.1:
        parts.append(f"up to {-best['orientation_penalty_db']:.1f} dB stronger ({best['antenna']})")
    if not parts:
        return ""
    advice = ("use --orientation unknown if the pipe direction is not known" if worst["orientation_penalty_db"] >= 0.1
              else "so the parallel assumption is the cautious one")
    return ("\nOrientation: assumes the antenna dipoles parallel to the pipe; across it the return is "
            + " and ".join(parts) + f"; {advice}.")
