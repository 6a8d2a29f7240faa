"""The survey file schema, declared once (pydantic v2 models).

Every key a survey file (TOML) may hold, its type, default, unit of a bare number and
allowed range is declared here; :func:`subsurf.site.survey.load_survey` validates a file
against :class:`SurveyFile` and then reads the inputs it names.  The same declaration
generates the unknown-key errors (with the closest valid key suggested), the type and
range errors (one line: file, key path, allowed range) and the JSON Schema for editors
(``surveys/survey.schema.json``, regenerate with ``python surveys/make_schemas.py``).
The prose documentation is ``surveys/README.md``.

Adding a soil quantity is one line in :data:`QUANTITIES`: the defaults, zone, scenario
tables and sample columns all accept it from then on.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Annotated, Literal

from pydantic import BeforeValidator, Field, create_model, field_validator, model_validator

from .._schema import Strict, json_schema, quantity_type
from ..detection.verdicts import REACH_MARGIN_RANGE_DB, REACHES_MARGIN_DB
from ..planning.catalogue import AntennaEntry, check_names

__all__ = ["Quantity", "QUANTITIES", "SD_SUFFIX", "TARGET_KINDS", "SurveyFile", "survey_json_schema",
           "SoilValues", "SoilSpreads"]


@dataclass(frozen=True)
class Quantity:
    """A soil quantity accepted in survey inputs: its Soil field, unit kind and range."""

    soil_field: str
    kind: str
    default_unit: str
    low: float
    high: float
    long_name: str
    si_unit: str


#: Soil quantities that samples, zones, rasters, defaults and scenarios may give.
#: A bare number is read in ``default_unit``; ranges are in SI.
QUANTITIES: dict[str, Quantity] = {
    "moisture": Quantity("moisture", "fraction", "dimensionless", 0.0, 0.7,
                         "volumetric water content", "1"),
    "pore_water_ec": Quantity("pore_water_ec25", "conductivity", "mS/m", 0.0, 25.0,
                              "pore-water electrical conductivity at 25 degC", "S m-1"),
    "salinity": Quantity("pore_water_salinity_psu", "salinity", "dimensionless", 0.0, 45.0,
                         "pore-water practical salinity", "1"),
    "clay": Quantity("clay", "fraction", "dimensionless", 0.0, 1.0, "clay mass fraction", "1"),
    "sand": Quantity("sand", "fraction", "dimensionless", 0.0, 1.0, "sand mass fraction", "1"),
    "temperature": Quantity("temp_c", "temperature", "degC", -5.0, 50.0, "ground temperature", "degC"),
    "bulk_density": Quantity("bulk_density", "density", "g/cm**3", 800.0, 2300.0,
                             "dry bulk density", "kg m-3"),
}

SD_SUFFIX = "_sd"
TARGET_KINDS = ("planar", "point", "line")

Crs = Annotated[str | int, Field(description="an EPSG code ('EPSG:4326' or 4326) or a WKT string")]
def Length(doc: str):  # noqa: N802 - a type factory, named like the types it makes
    """A positive length field: a bare number in m, or a string with units."""
    return quantity_type("length", "m", low=0.0, above_low=True, description=doc)
RelPath = Annotated[str, Field(min_length=1, description="a file path, relative to the survey file")]


def _value(q: Quantity, doc: str = ""):
    return quantity_type(q.kind, q.default_unit, low=q.low, high=q.high, description=doc or q.long_name)


def _spread(q: Quantity, doc: str):
    return quantity_type(q.kind, q.default_unit, low=0.0, difference=True, description=doc)


def _shift(q: Quantity):
    span = q.high - q.low
    return quantity_type(q.kind, q.default_unit, low=-span, high=span, difference=True,
                         description=f"added to the {q.long_name} (a difference)")


def _table_of(name: str, doc: str, make):
    return create_model(name, __base__=Strict, __doc__=doc,
                        **{k: (make(k, q) | None, Field(None)) for k, q in QUANTITIES.items()})


#: ``[soil.defaults]`` and zone properties: every quantity and its standard deviation.
SoilValues = create_model(
    "SoilValues", __base__=Strict, __doc__="Site-wide values of soil quantities, each optionally with NAME_sd.",
    **{k: (_value(q) | None, Field(None)) for k, q in QUANTITIES.items()},
    **{k + SD_SUFFIX: (_spread(q, f"standard deviation of the {q.long_name}") | None, Field(None))
       for k, q in QUANTITIES.items()},
)
SoilSpreads = SoilValues
_SetValues = _table_of("SetValues", "Values that replace the inputs everywhere.", lambda k, q: _value(q))
_ScaleValues = _table_of("ScaleValues", "Factors (>= 0) that multiply the inputs.",
                         lambda k, q: quantity_type("dimensionless", "dimensionless", low=0.0,
                                                    description=f"factor on the {q.long_name}"))
_OffsetValues = _table_of("OffsetValues", "Differences added to the inputs.", lambda k, q: _shift(q))


class Site(Strict):
    """[site]: the outline (or bbox) and its CRS."""

    name: str | None = Field(None, description="free text (default: the file name)")
    description: str = Field("", description="free text")
    outline: RelPath | None = Field(None, description="vector file of Polygon/MultiPolygon features (GeoPackage, "
                                    "Shapefile, KML, GeoJSON); several merge")
    outline_layer: str | None = Field(None, description="layer of a multi-layer outline file (GeoPackage, KML)")
    bbox: list[float] | None = Field(None, min_length=4, max_length=4,
                                     description="instead of outline: [xmin, ymin, xmax, ymax] in crs")
    crs: Crs

    @model_validator(mode="after")
    def _one_shape(self):
        if self.outline is not None and self.bbox is not None:
            raise ValueError("give either outline or bbox, not both")
        if self.outline is None and self.bbox is None:
            raise ValueError("give an outline (vector file) or a bbox = [xmin, ymin, xmax, ymax]")
        if self.bbox is not None:
            xmin, ymin, xmax, ymax = self.bbox
            if not (xmax > xmin and ymax > ymin):
                raise ValueError(f"bbox must have xmax > xmin and ymax > ymin, got {self.bbox}")
        return self


class Grid(Strict):
    """[grid]: the working grid."""

    crs: str | int = Field("auto-utm", description="a projected CRS in metres, or 'auto-utm': "
                                           "the WGS 84 / UTM zone holding the site centre")
    cell_size: Length("grid cell size, e.g. '2 m'")  # type: ignore[valid-type]
    max_cells: Annotated[int, Field(strict=True, ge=4, le=10**12)] = Field(
        4_000_000, description="refuse larger grids")


class Samples(Strict):
    """[[soil.samples]]: a CSV of point samples."""

    file: RelPath
    crs: Crs
    x_column: str = Field("x", min_length=1)
    y_column: str = Field("y", min_length=1)
    columns: dict[str, str] = Field(default_factory=dict, description="file header for a soil quantity, where "
                                    "the file names it otherwise, e.g. {moisture = 'VWC [%]'}")

    @field_validator("columns")
    @classmethod
    def _known_columns(cls, value):
        from .._schema import closest

        allowed = list(QUANTITIES) + [k + SD_SUFFIX for k in QUANTITIES]
        for key in value:
            if key not in allowed:
                near = closest(key, allowed)
                raise ValueError(f"columns: unknown soil quantity {key!r}"
                                 + (f"; did you mean '{near}'?" if near else "")
                                 + f" (allowed: {', '.join(allowed)})")
        if len(set(value.values())) != len(value):
            raise ValueError("columns: two quantities name the same file column")
        return value


class Zones(Strict):
    """[[soil.zones]]: a vector file of soil zones or soil-survey polygons (GeoPackage, Shapefile, KML, GeoJSON)."""

    file: RelPath
    crs: Crs
    layer: str | None = Field(None, description="layer of a multi-layer file (GeoPackage, KML)")
    attributes: dict[str, str] = Field(default_factory=dict, description="file attribute for a soil quantity, "
                                       "'name' or 'texture', where the file names it otherwise, "
                                       "e.g. {texture = 'TEXCL', moisture = 'VWC'}")

    @field_validator("attributes")
    @classmethod
    def _known_attributes(cls, value):
        from .._schema import closest

        allowed = list(QUANTITIES) + [k + SD_SUFFIX for k in QUANTITIES] + ["name", "texture"]
        for key in value:
            if key not in allowed:
                near = closest(key, allowed)
                raise ValueError(f"attributes: unknown key {key!r}" + (f"; did you mean '{near}'?" if near else "")
                                 + f" (allowed: {', '.join(allowed)})")
        if len(set(value.values())) != len(value):
            raise ValueError("attributes: two keys name the same file attribute")
        return value


class Raster(Strict):
    """[[soil.rasters]]: one quantity on a regular raster (GeoTIFF or NetCDF)."""

    file: RelPath
    quantity: Literal[tuple(QUANTITIES)]  # type: ignore[valid-type]
    variable: str | None = Field(None, description="NetCDF variable (default: the quantity name, else its CF "
                                 "standard_name, else the only gridded variable)")
    band: int | str | None = Field(None, description="GeoTIFF band (1-based number or band description); needed "
                                   "when the file has several")
    time: str | None = Field(None, description="time step to use (nearest to this date/time, e.g. '2024-06-01')")
    time_aggregate: Literal["mean", "median", "min", "max"] | None = Field(
        None, description="combine the time steps instead (default with several steps and no time: mean, noted)")
    unit: str | None = Field(None, description="unit of the stored numbers (default: the file's own unit "
                                "- NetCDF 'units', GeoTIFF band unit - else the quantity's bare unit)")
    sd: float | str | None = Field(None, description="measurement standard deviation (same units as the quantity)")
    crs: Crs | None = Field(None, description="optional when the file carries a CF grid_mapping or a GeoTIFF CRS")


class SoilTable(Strict):
    """[soil]: model, texture, defaults and the soil inputs."""

    model: Literal["crim", "peplinski", "topp"] = "crim"
    texture: str | None = Field(None, description="texture preset of configs/textures.toml, or a USDA texture "
                                "class name or abbreviation ('silty clay loam', 'SiCL')")
    interpolation: Literal["auto", "kriging", "spline"] = Field(
        "auto", description="samples to the grid: ordinary kriging with a fitted variogram (needs 30 samples of "
                            "a quantity), a thin-plate spline, or 'auto' (kriging where there are enough)")
    variogram: Literal["exponential", "spherical", "gaussian", "matern"] = Field(
        "exponential", description="variogram model family fitted for kriging")
    defaults: SoilValues = Field(default_factory=SoilValues)  # type: ignore[valid-type]
    samples: list[Samples] = Field(default_factory=list)
    zones: list[Zones] = Field(default_factory=list)
    rasters: list[Raster] = Field(default_factory=list)


#: Deepest target depth a survey may ask for (m), as ``--depth`` (subsurf.cli._depths.MAX_DEPTH_M).
MAX_TARGET_DEPTH_M = 1e4


class Target(Strict):
    """[target]: what is sought, at one depth or over a range (or list) of depths of interest."""

    kind: Literal[TARGET_KINDS]  # type: ignore[valid-type]
    depth: Length("depth to the top of the target, e.g. '1.2 m' (or give depth_top and depth_bottom, "  # type: ignore
                  "or depths)") | None = None
    depth_top: Length("shallowest depth of interest of a range, e.g. '0.5 m': the blind zone and the "  # type: ignore
                      "resolution are judged here") | None = None
    depth_bottom: Length("deepest depth of interest of a range, e.g. '1.5 m': reach (margin, verdict) is "  # type: ignore
                         "judged here") | None = None
    depths: list[Length("a depth of interest")] | None = Field(  # type: ignore[valid-type]
        None, min_length=2, description="a list of depths of interest, e.g. ['0.5 m', '1 m', '1.5 m']: reach "
                                        "judged at the deepest, blind zone and resolution at the shallowest")
    size: Length("diameter of a point or line target (default 0.1 m; planar: 1 m)") | None = None  # type: ignore
    material: str = Field(min_length=1, description="a key of configs/materials.toml or an alias "
                          "(metal, pvc, air, void, water, steel ...)")
    reach_margin: quantity_type(  # type: ignore[valid-type]
        "decibel", "dB", low=REACH_MARGIN_RANGE_DB[0], high=REACH_MARGIN_RANGE_DB[1],
        description=f"margin the target needs to count as reached, e.g. '10 dB' (default "
                    f"{REACHES_MARGIN_DB:g} dB; the commands' --reach-margin overrides it)") | None = None

    @field_validator("depth", "depth_top", "depth_bottom")
    @classmethod
    def _not_too_deep(cls, value):
        if value is not None and value > MAX_TARGET_DEPTH_M:
            raise ValueError(f"must be at most {MAX_TARGET_DEPTH_M / 1e3:g} km (deeper than any radar sounding "
                             f"reaches), got {value:g} m")
        return value

    @field_validator("depths")
    @classmethod
    def _distinct(cls, value):
        if value is None:
            return value
        if max(value) > MAX_TARGET_DEPTH_M:
            raise ValueError(f"must be at most {MAX_TARGET_DEPTH_M / 1e3:g} km each, got {max(value):g} m")
        if len(set(value)) != len(value):
            raise ValueError("repeats a depth; give each depth of interest once")
        return sorted(value)

    @field_validator("depth_bottom")
    @classmethod
    def _below_top(cls, value, info):
        top = info.data.get("depth_top")
        if value is not None and top is not None and not top < value:
            word = "has zero width" if top == value else "is inverted"
            raise ValueError(f"the range {word}: depth_bottom ({value:g} m) must be deeper than depth_top "
                             f"({top:g} m), e.g. depth_top = '0.5 m', depth_bottom = '1.5 m'")
        return value

    @model_validator(mode="after")
    def _one_form(self):
        forms = [self.depth is not None, self.depth_top is not None or self.depth_bottom is not None,
                 self.depths is not None]
        if sum(forms) != 1:
            raise ValueError("give the target depth once: depth = '1.2 m', or depth_top and depth_bottom "
                             "(a range), or depths = [...] (a list)")
        if forms[1] and (self.depth_top is None or self.depth_bottom is None):
            raise ValueError("a depth range needs both depth_top and depth_bottom, e.g. depth_top = '0.5 m', "
                             "depth_bottom = '1.5 m'")
        return self


def _names_list(value):
    return {"names": value} if isinstance(value, list) else value


class Antennas(Strict):
    """[antennas]: which antennas to map, from the bundled catalogue, the survey's own, or defined here."""

    names: list[str] | None = Field(None, min_length=1, description="antenna names to map, each once, from the "
                                    "catalogue or [antennas.define] (default: the antennas defined here)")
    catalogue: RelPath | None = Field(None, description="antenna catalogue TOML (as configs/antennas.toml) "
                                      "instead of the bundled illustrative one")
    define: dict[str, AntennaEntry] = Field(default_factory=dict, description="antennas defined in the survey "
                                            "itself, [antennas.define.NAME], fields as in configs/antennas.toml")

    @field_validator("names")
    @classmethod
    def _unique(cls, value):
        if value is not None and len(set(value)) != len(value):
            dup = next(n for n in value if value.count(n) > 1)
            raise ValueError(f"antenna {dup!r} is listed twice")
        return value

    @field_validator("define", mode="before")
    @classmethod
    def _define_names(cls, value):
        return check_names(value) if isinstance(value, dict) else value

    @model_validator(mode="after")
    def _something_to_map(self):
        if self.names is None and not self.define:
            raise ValueError("give names = [...] (antennas of the catalogue) or define antennas in "
                             "[antennas.define.NAME] tables")
        return self


class Scenario(Strict):
    """[[scenarios]]: a named modification of the soil inputs (set, then scale, then offset)."""

    name: str = Field(min_length=1)
    description: str = ""
    set: _SetValues = Field(default_factory=_SetValues)  # type: ignore[valid-type]
    scale: _ScaleValues = Field(default_factory=_ScaleValues)  # type: ignore[valid-type]
    offset: _OffsetValues = Field(default_factory=_OffsetValues)  # type: ignore[valid-type]


class Calibration(Strict):
    """[calibration]: plan with a site calibration written by ``subsurf calibrate``."""

    file: RelPath = Field(description="calibration file (JSON, schema subsurf-site-calibration): the measured "
                          "attenuation, Q*, velocity and effective performance replace the soil model's and the "
                          "catalogue's, anchored at the site-median soil")


class MonteCarlo(Strict):
    """[monte_carlo]: the per-cell reach probability."""

    draws: Annotated[int, Field(strict=True, ge=10, le=100_000)] = 400
    seed: Annotated[int, Field(strict=True, ge=0, le=2**63 - 1)] = 20240601


class SurveyFile(Strict):
    """A survey file (TOML); schema in ``surveys/README.md``."""

    site: Site
    grid: Grid
    soil: SoilTable = Field(default_factory=SoilTable)
    target: Target
    antennas: Annotated[Antennas, BeforeValidator(_names_list)]
    scenarios: list[Scenario] = Field(default_factory=list)
    monte_carlo: MonteCarlo = Field(default_factory=MonteCarlo)
    calibration: Calibration | None = None

    @field_validator("scenarios")
    @classmethod
    def _unique_names(cls, value):
        names = [s.name for s in value]
        if len(set(names)) != len(names):
            dup = next(n for n in names if names.count(n) > 1)
            raise ValueError(f"scenario name {dup!r} repeats")
        return value


def survey_json_schema() -> dict:
    """JSON Schema of a survey file (committed as ``surveys/survey.schema.json``)."""
    return json_schema(SurveyFile, title="subsurf survey file",
                       description="A GPR survey plan for 'subsurf map' and 'subsurf report'. "
                                   "Bare numbers are in the unit each key states; strings may carry units. "
                                   "Schema: surveys/README.md.")
