"""Reading and validating survey files (TOML) and the inputs they refer to.

A survey file names the site outline, the coordinate reference system (CRS) of every
input, the working grid, the soil information (point samples in CSV, zones in GeoJSON,
rasters in NetCDF or GeoTIFF), the target, the antennas (and optionally the survey's own
antenna catalogue) and optional scenarios.  Its keys, types and ranges are declared once
in :mod:`subsurf.site.schema` (pydantic); this module validates a file against that
schema and assembles a :class:`Survey` from the inputs it names, read by
:mod:`.samples`, :mod:`.zones` and :mod:`.rasters`.  Every problem raises one
:class:`~subsurf.errors.FileInputError` line naming the file, the key path (or row and
column) and the allowed range.  Nothing here computes physics: :mod:`subsurf.site.grid`
puts the inputs on a grid and :mod:`subsurf.site.feasibility` evaluates the chain.

Library choices: ``tomllib`` (standard library) for TOML; pydantic for the schema;
shapely for polygon validity; pyproj for CRS parsing and the automatic UTM zone (it wraps
PROJ and the EPSG database); pint (via :mod:`subsurf.units`) for units.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from .._schema import fail, key_path, validate_file
from ..detection.verdicts import REACHES_MARGIN_DB
from ..errors import FileInputError, InputError
from ..ground.presets import texture_preset
from .crs import auto_utm_crs, read_crs
from .rasters import RasterLayer, read_raster
from .rasters import raster_dims as _raster_dims  # noqa: F401 - used by subsurf.site.regional
from .samples import SampleSet, read_samples
from .schema import QUANTITIES, Quantity, SurveyFile
from .textures_usda import resolve_texture
from .vectors import check_polygon, read_polygons
from .zones import ZoneSet, read_zones

__all__ = [
    "QUANTITIES",
    "Quantity",
    "SampleSet",
    "ZoneSet",
    "RasterLayer",
    "TargetSpec",
    "Scenario",
    "Survey",
    "load_survey",
    "read_crs",
    "auto_utm_crs",
]


@dataclass(frozen=True)
class TargetSpec:
    """What is sought: kind, depth to its top, size and material.

    ``depth_m`` is the depth at which reach is judged: for a range (or list) of depths of
    interest its deepest, with ``depth_top_m`` its shallowest (blind zone and resolution judged
    there) and ``depths_m`` the list as given (ascending); both None for one depth.
    """

    kind: str
    depth_m: float
    size_m: float
    material: str
    depth_top_m: float | None = None
    depths_m: tuple[float, ...] | None = None

    @property
    def is_range(self) -> bool:
        return self.depth_top_m is not None

    def depth_text(self) -> str:
        """'1.2 m', '0.5-1.5 m' or '0.5, 1, 1.5 m'."""
        if self.depths_m is not None:
            return ", ".join(f"{d:g}" for d in self.depths_m) + " m"
        if self.depth_top_m is not None:
            return f"{self.depth_top_m:g}-{self.depth_m:g} m"
        return f"{self.depth_m:g} m"

    def json(self) -> dict:
        """The target facts as in ``subsurf choose --json`` (depth keys with units)."""
        out = {"kind": self.kind, "depth_m": self.depth_m, "size_m": self.size_m, "material": self.material}
        if self.is_range:
            out.update(depth_top_m=self.depth_top_m, depth_bottom_m=self.depth_m)
            if self.depths_m is not None:
                out["depths_m"] = list(self.depths_m)
        return out


@dataclass(frozen=True)
class Scenario:
    """A named modification of the soil inputs: ``set`` replaces, ``scale`` multiplies, ``offset`` adds."""

    name: str
    description: str = ""
    set: dict[str, float] = field(default_factory=dict)
    scale: dict[str, float] = field(default_factory=dict)
    offset: dict[str, float] = field(default_factory=dict)


@dataclass(frozen=True)
class Survey:
    """A validated survey: everything :func:`subsurf.grid.build_grid` and the map need."""

    path: Path
    name: str
    description: str
    outline: object  # shapely Polygon/MultiPolygon in outline_crs
    outline_crs: object
    grid_crs: object
    grid_crs_source: str  # "given" or "auto-utm"
    cell_size_m: float
    soil_model: str
    texture: str | None
    defaults: dict[str, float]
    default_sd: dict[str, float]
    samples: list[SampleSet]
    zones: list[ZoneSet]
    rasters: list[RasterLayer]
    target: TargetSpec
    antennas: list[str]
    scenarios: list[Scenario]
    draws: int
    seed: int
    max_cells: int
    catalogue_path: Path | None = None  # the antenna catalogue file used (None: the bundled one)
    catalogue: object = None  # subsurf.planning.catalogue.CatalogueChoice: every antenna available, and its source
    interpolation: str = "auto"  # samples to grid: "auto", "kriging" or "spline"
    variogram: str = "exponential"  # variogram model family for kriging
    calibration_path: Path | None = None  # [calibration] file: a site calibration (subsurf calibrate)
    reach_margin_db: float = REACHES_MARGIN_DB  # the reach threshold: [target] reach_margin or --reach-margin
    reach_margin_source: str = "default"  # where it came from: "default", "[target] reach_margin" or "--reach-margin"

    def antenna_list(self) -> list:
        """The antennas to map (catalogue entries, in the order of ``antennas``)."""
        from ..planning.catalogue import resolve_catalogue

        cat = self.catalogue if self.catalogue is not None else resolve_catalogue(file=self.catalogue_path,
                                                                                  source="survey")
        return [cat.antennas[n] for n in self.antennas]

    def describe(self) -> dict:
        """Plain summary of the inputs for reports and JSON (no arrays; defaults under keys with units)."""
        from ..io.jsonstyle import soil_values_json

        return {
            "survey": str(self.path),
            "name": self.name,
            "description": self.description,
            "outline_crs": self.outline_crs.to_string(),
            "grid_crs": self.grid_crs.to_string(),
            "grid_crs_name": self.grid_crs.name,
            "grid_crs_source": self.grid_crs_source,
            "cell_size_m": self.cell_size_m,
            "soil_model": self.soil_model,
            "interpolation": self.interpolation,
            "variogram": self.variogram,
            "texture": self.texture,
            "defaults": soil_values_json({**self.defaults,
                                          **{k + "_sd": v for k, v in self.default_sd.items()}}),
            "samples": [{"file": str(s.path), "count": int(s.x.size), "quantities": sorted(s.values)}
                        for s in self.samples],
            "zones": [{"file": str(z.path), "names": list(z.names)} for z in self.zones],
            "rasters": [{"file": str(r.path), "quantity": r.quantity} for r in self.rasters],
            "target": self.target.json(),
            "antennas": list(self.antennas),
            "catalogue": None if self.catalogue is None else self.catalogue.describe(self.antennas),
            "calibration": None if self.calibration_path is None else str(self.calibration_path),
            "scenarios": [{"name": s.name, "description": s.description} for s in self.scenarios],
            "monte_carlo_draws": self.draws,
            "monte_carlo_seed": self.seed,
        }


def _grid_crs(spec, outline, outline_crs, *, path):
    if spec.crs == "auto-utm":
        from pyproj import Transformer

        cx, cy = outline.centroid.x, outline.centroid.y
        lon, lat = Transformer.from_crs(outline_crs, "EPSG:4326", always_xy=True).transform(cx, cy)
        try:
            grid_crs = auto_utm_crs(lon, lat)
        except InputError as exc:
            raise fail(path, "[grid] crs", str(exc)) from None
        source = "auto-utm"
    else:
        grid_crs = read_crs(spec.crs, path=path, field="[grid] crs")
        source = "given"
    if not grid_crs.is_projected:
        raise fail(path, "[grid] crs", f"grid CRS {grid_crs.name!r} is not projected; the grid needs metres "
                   "(give a projected EPSG code or 'auto-utm')")
    unit = grid_crs.axis_info[0].unit_name if grid_crs.axis_info else "metre"
    if unit not in ("metre", "meter"):
        raise fail(path, "[grid] crs", f"grid CRS axis unit is {unit!r}; use a CRS in metres")
    return grid_crs, source


def _outline(site, outline_crs, *, path):
    import shapely
    import shapely.geometry

    if site.outline is not None:
        opath = (path.parent / site.outline).resolve()
        feats = read_polygons(opath, survey_path=path, field="[site] outline", declared_crs=outline_crs,
                              layer=site.outline_layer)
        outline = shapely.union_all([g for g, _ in feats])
        check_polygon(outline, path=opath, field="geometry")
    else:
        outline = shapely.geometry.box(*site.bbox)
    if outline_crs.is_geographic:
        minx, miny, maxx, maxy = outline.bounds
        if minx < -180 or maxx > 180 or miny < -90 or maxy > 90:
            raise fail(path, "[site] crs", f"outline bounds {outline.bounds} are not longitude/latitude although "
                       f"the CRS is geographic ({outline_crs.name}); check the CRS")
    return outline


def _catalogue(spec, *, path, override=None):
    """The survey's antennas (:class:`~subsurf.planning.catalogue.CatalogueChoice`) and the names to map.

    ``override`` (the command's ``--catalogue FILE``) replaces the survey's ``[antennas] catalogue``;
    antennas defined in ``[antennas.define.NAME]`` are added to whichever catalogue is used.
    """
    from ..planning.catalogue import missing_antenna_message, resolve_catalogue

    file, source = None, "bundled"
    if override is not None:
        file, source = Path(override), "--catalogue"
        if not file.exists():
            raise InputError(f"--catalogue: antenna catalogue not found: {file}")
    elif spec.catalogue is not None:
        file, source = (path.parent / spec.catalogue).resolve(), "survey"
        if not file.is_file():
            raise fail(path, "[antennas] catalogue", f"antenna catalogue not found: {file}")
    choice = resolve_catalogue(file=file, source=source, inline=spec.define, inline_path=path)
    names = list(spec.names) if spec.names is not None else list(spec.define)
    for name in names:
        if name not in choice.antennas:
            raise fail(path, "[antennas] names", missing_antenna_message(name, choice))
    return choice, names


def load_survey(path, *, catalogue=None, reach_margin_db=None) -> Survey:
    """Read and validate a survey file and every input it names.

    Parameters
    ----------
    path : str or Path
        The survey TOML file (schema in :mod:`subsurf.site.schema`, documented in
        ``surveys/README.md``).
    catalogue : str or Path, optional
        An antenna catalogue file replacing the survey's ``[antennas] catalogue`` (the
        commands' ``--catalogue``); antennas the survey defines inline are kept.

    Returns
    -------
    Survey
        Validated inputs in SI units with their CRSs.

    Raises
    ------
    FileInputError
        One line with the file, the key path (or row and column) of the first problem and
        what is allowed; unknown keys are refused with the closest valid key suggested.
    """
    path = Path(path).resolve()
    try:
        with path.open("rb") as fh:
            data = tomllib.load(fh)
    except FileNotFoundError:
        raise InputError(f"survey file not found: {path}") from None
    except IsADirectoryError:
        raise InputError(f"survey file {path} is a folder, not a TOML file") from None
    except tomllib.TOMLDecodeError as exc:
        raise FileInputError(path, f"not valid TOML: {exc}") from None
    spec = validate_file(SurveyFile, data, path)

    outline_crs = read_crs(spec.site.crs, path=path, field="[site] crs")
    outline = _outline(spec.site, outline_crs, path=path)
    grid_crs, source = _grid_crs(spec.grid, outline, outline_crs, path=path)

    soil = spec.soil
    values = soil.defaults.model_dump(exclude_none=True)
    defaults = {k: v for k, v in values.items() if k in QUANTITIES}
    default_sd = {k[: -len("_sd")]: v for k, v in values.items() if k not in QUANTITIES}
    texture = None
    if soil.texture is not None:
        try:
            texture = resolve_texture(soil.texture)
            preset = texture_preset(texture)
        except InputError as exc:
            raise fail(path, "[soil] texture", str(exc)) from None
        for q in ("sand", "clay", "bulk_density"):
            defaults.setdefault(q, preset[q])
    samples = [read_samples(e, survey_path=path, where=key_path(("soil", "samples", i), data))
               for i, e in enumerate(soil.samples)]
    zones = [read_zones(e, survey_path=path, where=key_path(("soil", "zones", i), data))
             for i, e in enumerate(soil.zones)]
    rasters = [read_raster(e, survey_path=path, where=key_path(("soil", "rasters", i), data))
               for i, e in enumerate(soil.rasters)]
    given = set(defaults) | {k for s in samples for k in s.values} | {k for z in zones for v in z.values
                                                                     for k in v} | {r.quantity for r in rasters}
    if "moisture" not in given:
        raise fail(path, "[soil]", "no moisture anywhere: give it in [soil.defaults], samples, zones or rasters")

    t = spec.target
    size = t.size if t.size is not None else (1.0 if t.kind == "planar" else 0.1)
    if t.depths is not None:
        depth, top, listed = t.depths[-1], t.depths[0], tuple(t.depths)
    elif t.depth_top is not None:
        depth, top, listed = t.depth_bottom, t.depth_top, None
    else:
        depth, top, listed = t.depth, None, None
    target = TargetSpec(kind=t.kind, depth_m=depth, size_m=size, material=t.material, depth_top_m=top,
                        depths_m=listed)
    choice, names = _catalogue(spec.antennas, path=path, override=catalogue)
    calibration_path = None
    if spec.calibration is not None:
        calibration_path = (path.parent / spec.calibration.file).resolve()
        if not calibration_path.is_file():
            raise fail(path, "[calibration] file", f"calibration file not found: {calibration_path}")

    scenarios = [Scenario(name=s.name, description=s.description, set=s.set.model_dump(exclude_none=True),
                          scale=s.scale.model_dump(exclude_none=True), offset=s.offset.model_dump(exclude_none=True))
                 for s in spec.scenarios] or [Scenario(name="base", description="inputs as given")]

    return Survey(path=path, name=spec.site.name if spec.site.name is not None else path.stem,
                  description=spec.site.description, outline=outline, outline_crs=outline_crs, grid_crs=grid_crs,
                  grid_crs_source=source, cell_size_m=spec.grid.cell_size, soil_model=soil.model,
                  texture=texture, defaults=defaults, default_sd=default_sd, samples=samples, zones=zones,
                  rasters=rasters, target=target, antennas=names, scenarios=scenarios,
                  draws=spec.monte_carlo.draws, seed=spec.monte_carlo.seed, max_cells=spec.grid.max_cells,
                  catalogue_path=None if choice.source == "bundled" else choice.file, catalogue=choice,
                  interpolation=soil.interpolation, variogram=soil.variogram,
                  calibration_path=calibration_path,
                  reach_margin_db=(reach_margin_db if reach_margin_db is not None else
                                   t.reach_margin if t.reach_margin is not None else REACHES_MARGIN_DB),
                  reach_margin_source=("--reach-margin" if reach_margin_db is not None else
                                       "[target] reach_margin" if t.reach_margin is not None else "default"))
