"""Clay facts for the surface-conduction model: exchange capacity per clay mineral, its temperature factor."""

from __future__ import annotations

from ..errors import InputError

__all__ = ["CLAY_MINERAL_CEC", "CLAY_CEC", "SURFACE_CONDUCTANCE_TEMPERATURE_COEFFICIENT", "clay_cec_of_mineral"]

#: Cation-exchange capacity of clay minerals, eq/kg (= mol(+)/kg; 1 eq/kg = 100 cmol(+)/kg =
#: 100 meq/100 g), as (low, high) ranges.  Kaolinite 1–15, fine mica (illite) 10–40, chlorite
#: 10–40, smectite 80–150 and vermiculite 100–200 cmol(+)/kg: Brady, N. C., & Weil, R. R.
#: (2002), The Nature and Properties of Soils, 13th ed., Prentice Hall, Table 8.1 (as
#: reproduced, "adapted from Table 8.1, Brady and Weil (2002)", in a public table of CEC and
#: surface area of soil minerals; the book itself was not checked).  Halloysite (2H2O) 5–10 is
#: not in that table: Grim, R. E. (1968), Clay Mineralogy, 2nd ed., McGraw-Hill, ch. 7,
#: written down FROM MEMORY.  Before this table was sourced, kaolinite read 3–15 and
#: vermiculite 100–150 (Grim 1968, from memory).
CLAY_MINERAL_CEC = {
    "kaolinite": (0.01, 0.15),
    "halloysite": (0.05, 0.10),
    "illite": (0.10, 0.40),
    "chlorite": (0.10, 0.40),
    "smectite": (0.80, 1.50),
    "vermiculite": (1.00, 2.00),
}

#: Default clay CEC, eq/kg: the middle of the illite range of :data:`CLAY_MINERAL_CEC`
#: (Brady & Weil 2002, Table 8.1, fine mica 10–40 cmol(+)/kg); illite as the default clay of
#: temperate soils and sediments is common practice (from memory).  Was 0.5 (from memory)
#: before it was tied to the table.
CLAY_CEC = 0.25

#: Linear temperature coefficient of the Waxman–Smits counter-ion conductance B, 1/°C.
#: The surface conduction of clays follows the mobility of the counter-ions in the
#: pore water, so B is given the same ~2 %/°C as the electrolyte (Revil, A., Cathles,
#: L. M., Losh, S., & Nunn, J. A. (1998), Electrical conductivity in shaly sands with
#: geophysical applications, JGR 103(B10), 23925–23936, doi:10.1029/98JB02125; from memory).
SURFACE_CONDUCTANCE_TEMPERATURE_COEFFICIENT = 0.02


def clay_cec_of_mineral(mineral: str) -> float:
    """CEC of a named clay mineral in eq/kg: the middle of its range in :data:`CLAY_MINERAL_CEC`.

    Raises
    ------
    InputError
        For a name not in the table (the message lists the allowed names).
    """
    key = str(mineral).strip().lower()
    if key == "montmorillonite":
        key = "smectite"
    if key not in CLAY_MINERAL_CEC:
        raise InputError(f"clay_mineral {mineral!r} is not in the CEC table; allowed: "
                         f"{', '.join(CLAY_MINERAL_CEC)}")
    lo, hi = CLAY_MINERAL_CEC[key]
    return 0.5 * (lo + hi)
