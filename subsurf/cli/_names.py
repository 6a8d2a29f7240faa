"""Errors and notes in the words the user typed: internal parameter names become flags or file keys.

The physics speaks in :class:`~subsurf.soil.Soil` field names (``pore_water_salinity_psu``,
``temp_c``, ``bulk_density`` in kg/m³, ``freq_hz``).  A user typed ``--salinity``,
``--temp``, ``--bulk-density 1.4`` (g/cm³) or a survey key ``temperature``.  For one run,
:func:`translator` builds the table from the parsed flags; the guard applies it to the
error line and :func:`subsurf.io.outputs.collect_warnings` to every note, so the message
names what the user wrote.  Words a user did not type (a value that came from a texture
preset) become plain words ("particle density"), never an internal identifier.
"""

from __future__ import annotations

import re
from collections.abc import Callable

__all__ = ["FILE_KEYS", "names_for", "translate", "translator"]

#: Soil field -> survey/raster key (the survey file, [soil.defaults], zones, sample columns, raster variables)
FILE_KEYS = {"temp_c": "temperature", "pore_water_ec25": "pore_water_ec", "pore_water_salinity_psu": "salinity",
             "pore_water_tds": "tds"}
#: Soil field -> plain words, for a value the user did not type (a preset, a default)
PLAIN_WORDS = {"temp_c": "temperature", "pore_water_ec25": "pore-water EC (25 °C)",
               "pore_water_salinity_psu": "pore-water salinity", "pore_water_tds": "pore-water TDS",
               "bulk_density": "bulk density", "particle_density": "particle density", "eps_stone": "stone ε",
               "stone_fraction": "stone fraction", "stone_size": "stone size", "surface_roughness": "surface roughness",
               "clay_cec": "clay CEC", "eps_solid": "grain ε"}
#: commands whose soil comes from a survey file or a soil raster (keys as in surveys/README.md)
SURVEY_COMMANDS = ("map", "report", "demo", "region")

_NUM = r"[-+0-9.eE]+"
_FREQ = re.compile(rf"\bfreq_hz = ({_NUM})(?: to ({_NUM}))? Hz \(valid ({_NUM}) to ({_NUM}) Hz\)")
_KG_M3 = re.compile(r"(?<![\w.])([0-9]+(?:\.[0-9]+)?(?:e[-+]?[0-9]+)?) kg/m³")


def names_for(args, command: str | None) -> dict[str, str]:
    """Internal name -> what the user typed, for this run's flags."""
    from ._medium_args import _LOSS_FLAGS, _SOIL_FLAGS

    if command in SURVEY_COMMANDS:
        return {**FILE_KEYS, "particle_density": PLAIN_WORDS["particle_density"]}
    table: dict[str, str] = {}
    soil_file = getattr(args, "soil", None) is not None
    given = {**{attr: fld for attr, (fld, _, _) in _SOIL_FLAGS.items()}, **_LOSS_FLAGS, "clay_cec": "clay_cec"}
    for attr, fld in given.items():
        if getattr(args, attr, None) is not None:
            table[fld] = "--" + attr.replace("_", "-")
        elif not soil_file and fld in PLAIN_WORDS:  # from a preset or default: plain words
            table[fld] = PLAIN_WORDS[fld]
    if not soil_file:
        table.setdefault("particle_density", PLAIN_WORDS["particle_density"])
    # plain words (moisture, sand, clay, porosity) read well as they are; only identifiers are replaced
    return {k: v for k, v in table.items() if "_" in k}


def translate(message: str, table: dict[str, str]) -> str:
    """``message`` with each internal name of ``table`` replaced by what the user typed."""
    def hz(m: re.Match) -> str:
        x, x2, lo, hi = (None if g is None else float(g) / 1e6 for g in m.groups())
        what = f"{x:.6g}" if x2 is None else f"{x:.6g} to {x2:.6g}"
        return f"frequency {what} MHz (valid {lo:.6g} to {hi:.6g} MHz)"

    out = _FREQ.sub(hz, message)
    for name in sorted(table, key=len, reverse=True):
        out = re.sub(rf"(?<![\w-]){re.escape(name)}(?!\w)", table[name], out)
    if table.get("bulk_density") == "--bulk-density":  # the flag reads g/cm³: say it in both units
        out = _KG_M3.sub(lambda m: f"{m.group(1)} kg/m³ (= {float(m.group(1)) / 1000:.6g} g/cm³)", out)
    return out


def translator(args, command: str | None) -> Callable[[str], str]:
    """A function rewriting one message for this run (see :func:`names_for`)."""
    table = names_for(args, command)
    return lambda message: translate(message, table)
