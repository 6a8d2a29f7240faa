"""One JSON style for every command's ``--json`` output: soil facts under keys that carry their unit.

Inside, soil facts travel under the :class:`~subsurf.soil.Soil` field names in SI
(``moisture`` as a fraction, ``pore_water_ec25`` in S/m, ``bulk_density`` in kg/m³…).
At the edge they are written as snake_case keys whose suffix names the unit
(``moisture_pct``, ``pore_water_ec_ms_per_m``, ``bulk_density_kg_per_m3``), numbers as
numbers, the same key for the same quantity in every command.  The JSON Schemas of the
outputs (``docs/schemas/``) describe these keys; :data:`FACT_KEYS` is their one table.
"""

from __future__ import annotations

import math

__all__ = ["FACT_KEYS", "PLAIN_FACTS", "CALIBRATED_FACTS", "json_key", "soil_facts_json", "soil_values_json", "finite_or_none"]

#: Soil field (SI inside) -> (JSON key stem, unit suffix, factor from SI, unit for the schema's description)
FACT_KEYS: dict[str, tuple[str, str, float, str]] = {
    "moisture": ("moisture", "_pct", 100.0, "% by volume (volumetric water content)"),
    "sand": ("sand", "_pct", 100.0, "% of the solids by mass"),
    "clay": ("clay", "_pct", 100.0, "% of the solids by mass"),
    "porosity": ("porosity", "_pct", 100.0, "% by volume"),
    "bulk_density": ("bulk_density", "_kg_per_m3", 1.0, "kg/m³ (dry bulk density)"),
    "particle_density": ("particle_density", "_kg_per_m3", 1.0, "kg/m³"),
    "temp_c": ("temperature", "_c", 1.0, "°C"),
    "pore_water_salinity_psu": ("salinity", "_psu", 1.0, "practical salinity (PSU)"),
    "pore_water_ec25": ("pore_water_ec", "_ms_per_m", 1e3, "mS/m (pore-water EC referred to 25 °C)"),
    "pore_water_tds": ("tds", "_mg_per_l", 1e3, "mg/L (pore-water total dissolved solids)"),
    "eps_solid": ("eps_solid", "", 1.0, "relative permittivity of the grains (dimensionless)"),
    "archie_a": ("archie_a", "", 1.0, "Archie tortuosity factor (dimensionless)"),
    "archie_m": ("archie_m", "", 1.0, "Archie cementation exponent (dimensionless)"),
    "archie_n": ("archie_n", "", 1.0, "Archie saturation exponent (dimensionless)"),
    "clay_cec": ("clay_cec", "_cmol_per_kg", 100.0, "cmol(+)/kg (= meq/100 g)"),
    "interface_n": ("interface_n", "", 1.0, "Jonscher exponent (dimensionless)"),
    "interface_chi_per_bound_water": ("interface_chi_per_bound_water", "", 1.0,
                                      "Jonscher susceptibility at 100 MHz per unit bound water (dimensionless)"),
    "stone_fraction": ("stones", "_pct", 100.0, "% by volume (stones, gravel, rubble)"),
    "stone_size": ("stone_size", "_m", 1.0, "m (median stone diameter)"),
    "eps_stone": ("stone_eps", "", 1.0, "relative permittivity of the stones (dimensionless)"),
    "stone_size_sd_log": ("stone_size_sd_log", "", 1.0, "standard deviation of ln(stone diameter)"),
    "surface_roughness": ("roughness", "_m", 1.0, "m (rms height of the ground surface)"),
    # a direct ground (--eps/--sigma)
    "eps_real": ("eps_real", "", 1.0, "ε' (dimensionless)"),
    "eps_imag": ("eps_imag", "", 1.0, "ε'' (dimensionless, >= 0)"),
    "sigma_s_per_m": ("sigma", "_ms_per_m", 1e3, "mS/m (DC conductivity)"),
    "q_star": ("q_star", "", 1.0, "band-limited Q* (dimensionless)"),
}
#: facts that are words or switches, written as they are
PLAIN_FACTS = ("texture", "model", "clay_mineral", "interface_relaxation")
#: facts already in human units under keys that name them (a site-calibrated ground), written as they are
CALIBRATED_FACTS = {"calibration_file": "the site-calibration file (a path)",
                    "attenuation_db_per_m": "measured one-way attenuation (dB/m)",
                    "reference_freq_mhz": "frequency the attenuation applies at (MHz)",
                    "velocity_m_per_ns": "velocity measured on site (m/ns)",
                    "band_mhz": "usable band, low and high (MHz)"}


def finite_or_none(v):
    """``v`` as a float, or None when it is not finite (JSON has no NaN or infinity)."""
    v = float(v)
    return v if math.isfinite(v) else None


def _scaled(value, factor):
    if isinstance(value, (list, tuple)):
        return [_scaled(v, factor) for v in value]
    if hasattr(value, "tolist") and getattr(value, "ndim", 0):
        return _scaled(value.tolist(), factor)
    return finite_or_none(float(value) * factor)


def json_key(field: str, *, sd: bool = False) -> str:
    """The JSON key of a soil field (``temp_c`` -> ``temperature_c``; sd: ``temperature_sd_c``)."""
    stem, unit, _, _ = FACT_KEYS[field]
    return stem + ("_sd" if sd else "") + unit


def soil_facts_json(facts: dict) -> dict:
    """Soil facts keyed by :class:`~subsurf.soil.Soil` field (SI) -> the JSON keys with units."""
    out = {}
    for k, v in facts.items():
        if k in PLAIN_FACTS or k in CALIBRATED_FACTS:
            out[k] = v
        elif k in FACT_KEYS:
            out[json_key(k)] = None if v is None else _scaled(v, FACT_KEYS[k][2])
        else:  # an undeclared fact: refuse to guess a unit (the schema test catches it)
            raise KeyError(f"soil fact {k!r} has no JSON key in subsurf.io.jsonstyle.FACT_KEYS")
    return out


def soil_values_json(values: dict) -> dict:
    """A survey's ``[soil.defaults]`` (survey quantity names, SI, optional NAME_sd) -> the JSON keys with units."""
    from ..site.schema import QUANTITIES, SD_SUFFIX

    out = {}
    for k, v in values.items():
        sd = k.endswith(SD_SUFFIX)
        base = k[: -len(SD_SUFFIX)] if sd else k
        field = QUANTITIES[base].soil_field
        out[json_key(field, sd=sd)] = None if v is None else _scaled(v, FACT_KEYS[field][2])
    return out
