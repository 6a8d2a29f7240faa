"""The soil facts a soil file (``subsurf medium --soil FILE.toml``) or a mapping may give,
declared once: kind, unit of a bare number, allowed range, meaning.

:data:`SOIL_FACTS` drives three things: the pydantic model of the soil file
(:class:`SoilFile`, unknown keys refused with the closest valid key suggested), the
reading of Python mappings (:meth:`subsurf.soil.Soil.from_mapping`) and the JSON Schema
``surveys/soil.schema.json`` for editors.  **Adding a soil fact is one line** in
:data:`SOIL_FACTS` (then regenerate the JSON Schema with ``python surveys/make_schemas.py``).

Keys that are :class:`~subsurf.soil.Soil` field names read bare numbers in SI; the
flag-named keys (``temp``, ``temperature``, ``salinity``, ``pore_water_ec``, ``tds``) read
bare numbers in the units of the corresponding command-line flags.  Strings may carry any
unit (``"20 %"``, ``"12 mS/m"``, ``"1.6 g/cm3"``, ``"12 degC"``).
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from pydantic import Field, create_model, model_validator

from .._schema import Strict, json_schema, quantity_type, validate_file
from ..errors import FileInputError, InputError
from ._validity import BULK_DENSITY_RANGE, PARTICLE_DENSITY_RANGE
from .water import WATER_RELAXATION_T_LIMIT

__all__ = ["SoilFact", "SOIL_FACTS", "SoilFile", "load_soil_file", "soil_json_schema", "soil_fact"]


@dataclass(frozen=True)
class SoilFact:
    """One key of a soil description.

    ``kind`` and ``unit`` are those of :func:`subsurf.units.parse_quantity` (unit of a bare
    number); ``low``/``high`` the inclusive allowed range in SI (None: open); ``field`` the
    :class:`~subsurf.soil.Soil` field a flag-named key sets (None: the key is the field).
    """

    kind: str
    unit: str
    low: float | None
    high: float | None
    doc: str
    field: str | None = None


#: Ground temperatures the water relaxation model can describe (°C; see water.py).
_T_HIGH = WATER_RELAXATION_T_LIMIT

#: Every soil fact a soil file or mapping may give (one line each).
SOIL_FACTS: dict[str, SoilFact] = {
    "moisture": SoilFact("fraction", "dimensionless", 0.0, 1.0, "volumetric water content (m³/m³)"),
    "sand": SoilFact("fraction", "dimensionless", 0.0, 1.0, "sand mass fraction of the solids"),
    "clay": SoilFact("fraction", "dimensionless", 0.0, 1.0, "clay mass fraction of the solids"),
    "porosity": SoilFact("fraction", "dimensionless", 0.0, 1.0, "porosity"),
    "bulk_density": SoilFact("density", "kg/m**3", *BULK_DENSITY_RANGE, "dry bulk density"),
    "particle_density": SoilFact("density", "kg/m**3", *PARTICLE_DENSITY_RANGE, "particle (grain) density"),
    "temp_c": SoilFact("temperature", "degC", 0.0, _T_HIGH, "ground temperature (liquid pore water)"),
    "pore_water_salinity_psu": SoilFact("salinity", "dimensionless", 0.0, 50.0, "pore-water practical salinity"),
    "pore_water_ec25": SoilFact("conductivity", "S/m", 0.0, 10.0, "pore-water EC at 25 degC"),
    "pore_water_tds": SoilFact("mass_concentration", "kg/m**3", 0.0, 60.0, "pore-water total dissolved solids"),
    "eps_solid": SoilFact("dimensionless", "dimensionless", 1.0, 100.0, "relative permittivity of the grains"),
    "archie_a": SoilFact("dimensionless", "dimensionless", 1e-9, None, "Archie tortuosity factor"),
    "archie_m": SoilFact("dimensionless", "dimensionless", 1.0, 5.0, "Archie cementation exponent"),
    "archie_n": SoilFact("dimensionless", "dimensionless", 1.0, 5.0, "Archie saturation exponent"),
    "clay_cec": SoilFact("dimensionless", "dimensionless", 0.0, 2.0, "CEC of the clay fraction (eq/kg)"),
    "interface_n": SoilFact("dimensionless", "dimensionless", 0.0, 1.0,
                            "Jonscher exponent of the bound-water / clay-water interface loss (0-1)"),
    "interface_chi_per_bound_water": SoilFact("dimensionless", "dimensionless", 0.0, 1000.0,
                                              "Jonscher susceptibility at 100 MHz per unit bound water"),
    "stone_fraction": SoilFact("fraction", "dimensionless", 0.0, 1.0,
                               "volume fraction of stones / gravel / rubble (at most 1 - porosity)"),
    "stone_size": SoilFact("length", "m", 0.0, 10.0, "median stone diameter (m)"),
    "eps_stone": SoilFact("dimensionless", "dimensionless", 1.0, 100.0, "relative permittivity of the stones"),
    "stone_size_sd_log": SoilFact("dimensionless", "dimensionless", 0.0, 2.0,
                                  "standard deviation of ln(stone diameter), log-normal by volume"),
    "surface_roughness": SoilFact("length", "m", 0.0, 1.0, "rms height of the ground surface (m)"),
    # flag-named keys: bare numbers in the command-line flags' units
    "temp": SoilFact("temperature", "degC", 0.0, _T_HIGH, "ground temperature (as --temp)", field="temp_c"),
    "temperature": SoilFact("temperature", "degC", 0.0, _T_HIGH, "ground temperature", field="temp_c"),
    "salinity": SoilFact("salinity", "dimensionless", 0.0, 50.0, "pore-water salinity, PSU (as --salinity)",
                         field="pore_water_salinity_psu"),
    "pore_water_ec": SoilFact("conductivity", "mS/m", 0.0, 10.0, "pore-water EC at 25 degC (as --pore-water-ec)",
                              field="pore_water_ec25"),
    "tds": SoilFact("mass_concentration", "mg/L", 0.0, 60.0, "pore-water TDS (as --tds)", field="pore_water_tds"),
}

_MODELS = ("crim", "peplinski", "topp")
_CLAY_MINERALS = ("kaolinite", "halloysite", "illite", "chlorite", "smectite", "vermiculite")


def soil_fact(key: str) -> SoilFact:
    """The declared fact for ``key``; a key with no declaration is read as a plain number."""
    return SOIL_FACTS.get(key) or SoilFact("dimensionless", "dimensionless", None, None, key)


def _field_type(fact: SoilFact):
    return quantity_type(fact.kind, fact.unit, low=fact.low, high=fact.high, description=fact.doc,
                         allow_list=True)


class _SoilFactsBase(Strict):
    @model_validator(mode="after")
    def _one_name_per_field(self):
        seen: dict[str, str] = {}
        for key in type(self).model_fields:
            if getattr(self, key, None) is None or key not in SOIL_FACTS:
                continue
            target = SOIL_FACTS[key].field or key
            if target in seen:
                raise ValueError(f"'{seen[target]}' and '{key}' both give {target}; keep one")
            seen[target] = key
        return self

    def soil_kwargs(self) -> dict:
        """Keyword arguments of :class:`~subsurf.soil.Soil` (SI numbers, lists for arrays)."""
        out = {}
        for key in type(self).model_fields:
            value = getattr(self, key)
            if value is None:
                continue
            out[SOIL_FACTS[key].field or key if key in SOIL_FACTS else key] = value
        return out


#: The facts of one soil: every key of :data:`SOIL_FACTS`, ``texture`` and ``model``.
SoilFacts = create_model(
    "SoilFacts",
    __base__=_SoilFactsBase,
    texture=(str | None, Field(None, description="texture preset of configs/textures.toml "
                                                 "(fills sand, clay and densities), e.g. 'loam'")),
    model=(Literal[_MODELS] | None, Field(None, description="soil permittivity model (default crim)")),
    clay_mineral=(Literal[_CLAY_MINERALS] | None,
                  Field(None, description="clay mineral whose CEC (Brady & Weil 2002 table) sets the surface conduction")),
    interface_relaxation=(bool | None, Field(None, description="add the bound-water / clay-water interface loss "
                                                               "(default true)")),
    **{key: (_field_type(f) | None, Field(None, description=f.doc)) for key, f in SOIL_FACTS.items()},
)


class SoilFile(Strict):
    """A soil file whose facts sit under a ``[soil]`` table (the flat form is also read)."""

    soil: SoilFacts = Field(description="the soil facts")  # type: ignore[valid-type]


def load_soil_file(path) -> dict:
    """Read and validate a soil TOML file into :class:`~subsurf.soil.Soil` keyword arguments.

    The facts may be at the top level of the file or under ``[soil]``.  Every problem
    raises one :class:`~subsurf.errors.FileInputError` line naming the file, the key and
    the allowed range; unknown keys are refused with the closest valid key suggested.
    """
    path = Path(path)
    try:
        with path.open("rb") as fh:
            data = tomllib.load(fh)
    except FileNotFoundError:
        raise InputError(f"--soil: file not found: {path}") from None
    except IsADirectoryError:
        raise InputError(f"--soil: {path} is a folder, not a TOML file") from None
    except tomllib.TOMLDecodeError as exc:
        raise FileInputError(path, f"not valid TOML: {exc}") from None
    if "soil" in data:
        facts = validate_file(SoilFile, data, path).soil
    else:
        facts = validate_file(SoilFacts, data, path)
    kwargs = facts.soil_kwargs()
    if "texture" in kwargs:
        from .presets import texture_preset

        try:
            texture_preset(kwargs["texture"])
        except InputError as exc:
            where = "[soil] texture" if "soil" in data else "texture"
            raise FileInputError(path, f"{where}: {exc}") from None
    return kwargs


def soil_json_schema() -> dict:
    """JSON Schema of a soil file (committed as ``surveys/soil.schema.json``): the facts at the
    top level or under ``[soil]``."""
    facts = json_schema(SoilFacts, title="soil facts", description="")
    defs = facts.pop("$defs", {})
    for key in ("$schema", "title", "description"):
        facts.pop(key, None)
    facts["title"] = "soil facts"
    defs["SoilFacts"] = facts
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "title": "subsurf soil file",
        "description": "Soil facts for 'subsurf medium --soil FILE' (and choose, setup ...), at the top level "
                       "or under a [soil] table. Schema: surveys/README.md.",
        "anyOf": [{"$ref": "#/$defs/SoilFacts"},
                  {"type": "object", "properties": {"soil": {"$ref": "#/$defs/SoilFacts"}}, "required": ["soil"],
                   "additionalProperties": False}],
        "$defs": defs,
    }
