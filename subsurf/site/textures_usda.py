"""The twelve USDA soil texture classes: by name (with the usual abbreviations) or from sand/clay fractions.

Soil surveys name the fine-earth texture of a map unit by one of the twelve classes of
the USDA texture triangle, spelt out (``"silty clay loam"``) or abbreviated (``"SiCL"``).
:func:`resolve_texture` turns either into the key of a preset of ``configs/textures.toml``
(one preset per class); :func:`usda_texture_class` classifies sand and clay mass
fractions (silt = 1 - sand - clay, particle sizes sand 0.05-2 mm, silt 0.002-0.05 mm,
clay < 0.002 mm) by the class limits of the Soil Survey Manual, vectorised over arrays.

Class limits (percent by mass of the fine earth; Soil Survey Division Staff 1993, ch. 3,
"Soil texture"; restated in Soil Science Division Staff 2017).  Where two classes share a
boundary the manual's "or more"/"less than" wording is followed:

===================  =========================================================================
sand                 sand > 85 and silt + 1.5 clay < 15
loamy sand           sand 70-90, silt + 1.5 clay >= 15 and silt + 2 clay < 30
sandy loam           silt + 2 clay >= 30 and either clay 7-20 with sand > 52,
                     or clay < 7 with silt < 50
loam                 clay 7-27, silt 28-50, sand <= 52
silt loam            silt >= 50 with clay 12-27, or silt 50-80 with clay < 12
silt                 silt >= 80 and clay < 12
sandy clay loam      clay 20-35, silt < 28, sand > 45
clay loam            clay 27-40, sand 20-45
silty clay loam      clay 27-40, sand < 20
sandy clay           clay >= 35, sand >= 45
silty clay           clay >= 40, silt >= 40
clay                 clay >= 40, sand <= 45, silt < 40
===================  =========================================================================

References
----------
Soil Survey Division Staff (1993). *Soil Survey Manual*. USDA Handbook 18, U.S.
Government Printing Office, Washington DC, chapter 3 (texture classes).
Soil Science Division Staff (2017). *Soil Survey Manual*. USDA Handbook 18 (revised),
C. Ditzler, K. Scheffe and H.C. Monger (eds.), Government Publishing Office.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError

__all__ = ["USDA_CLASSES", "USDA_ABBREVIATIONS", "usda_texture_class", "resolve_texture"]

#: The twelve USDA classes, as preset keys of configs/textures.toml.
USDA_CLASSES = ("sand", "loamy_sand", "sandy_loam", "loam", "silt_loam", "silt", "sandy_clay_loam",
                "clay_loam", "silty_clay_loam", "sandy_clay", "silty_clay", "clay")

#: The abbreviations soil surveys use for the classes (Soil Survey Manual; NRCS NASIS codes).
USDA_ABBREVIATIONS = {"s": "sand", "ls": "loamy_sand", "sl": "sandy_loam", "l": "loam", "sil": "silt_loam",
                      "si": "silt", "scl": "sandy_clay_loam", "cl": "clay_loam", "sicl": "silty_clay_loam",
                      "sc": "sandy_clay", "sic": "silty_clay", "c": "clay"}


def usda_texture_class(sand, clay):
    """USDA texture class of sand and clay mass fractions (module table).

    Parameters
    ----------
    sand, clay : float or array_like
        Mass fractions of the fine earth, 0-1, with sand + clay <= 1 (broadcast together).

    Returns
    -------
    numpy.ndarray of str
        Preset keys from :data:`USDA_CLASSES` (a 0-d array for scalar input).

    Raises
    ------
    InputError
        When a fraction is outside 0-1 or sand + clay exceeds 1.
    """
    s = np.asarray(sand, dtype=float) * 100.0
    c = np.asarray(clay, dtype=float) * 100.0
    s, c = np.broadcast_arrays(s, c)
    bad = ~np.isfinite(s) | ~np.isfinite(c) | (s < 0) | (c < 0) | (s + c > 100.0 + 1e-9)
    if np.any(bad):
        i = int(np.flatnonzero(bad.ravel())[0])
        raise InputError(f"sand = {s.ravel()[i] / 100:.4g}, clay = {c.ravel()[i] / 100:.4g}: fractions must lie "
                         "in 0-1 with sand + clay <= 1")
    m = 100.0 - s - c  # silt
    conditions = [
        (s > 85) & (m + 1.5 * c < 15),
        (s >= 70) & (s <= 90) & (m + 1.5 * c >= 15) & (m + 2 * c < 30),
        (m + 2 * c >= 30) & (((c >= 7) & (c < 20) & (s > 52)) | ((c < 7) & (m < 50))),
        (c >= 7) & (c < 27) & (m >= 28) & (m < 50) & (s <= 52),
        ((m >= 50) & (c >= 12) & (c < 27)) | ((m >= 50) & (m < 80) & (c < 12)),
        (m >= 80) & (c < 12),
        (c >= 20) & (c < 35) & (m < 28) & (s > 45),
        (c >= 27) & (c < 40) & (s > 20) & (s <= 45),
        (c >= 27) & (c < 40) & (s <= 20),
        (c >= 35) & (s > 45),
        (c >= 40) & (m >= 40),
        (c >= 40) & (s <= 45) & (m < 40),
    ]
    return np.select(conditions, list(USDA_CLASSES), default="clay")


def resolve_texture(name) -> str:
    """The preset key for a texture name: a preset key, a USDA class name or abbreviation.

    Case, spaces and hyphens are ignored (``"Silty Clay Loam"``, ``"silty-clay-loam"``,
    ``"SiCL"`` all give ``"silty_clay_loam"``).  Raises :class:`InputError` naming the
    allowed names otherwise.
    """
    from ..ground.presets import load_textures

    text = str(name).strip()
    key = text.lower().replace(" ", "_").replace("-", "_")
    presets = load_textures()
    if key in presets:
        return key
    if key in USDA_ABBREVIATIONS and USDA_ABBREVIATIONS[key] in presets:
        return USDA_ABBREVIATIONS[key]
    raise InputError(f"texture {text!r} is not a known class; allowed: {', '.join(sorted(presets))} "
                     f"(or a USDA abbreviation: {', '.join(sorted(USDA_ABBREVIATIONS, key=len))})")
