"""Antenna catalogues: the file layout, declared once, and the catalogue a survey or command uses.

An antenna catalogue is a TOML file of ``[antenna.NAME]`` tables (``configs/antennas.toml``
is the bundled, illustrative one; its header documents every field).  The fields of one
antenna are declared once, as the pydantic model :class:`AntennaEntry`; the same model
reads a catalogue file (:func:`read_catalogue`) and the antennas a survey file defines
inline (``[antennas.define.NAME]``, :mod:`subsurf.site.schema`), so both refuse an unknown
key with the closest valid key suggested, and a missing field or out-of-range figure with
one line naming the file, the table and the key.

:func:`resolve_catalogue` combines the sources a survey may use (a catalogue file, else
the bundled one, plus inline antennas) and says which it used (:class:`CatalogueChoice`).

Library choice: pydantic, through the project's file-schema machinery (:mod:`subsurf._schema`),
so the catalogue is checked like survey and soil files and generates its JSON Schema.
"""

from __future__ import annotations

import math
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Annotated

from pydantic import BeforeValidator, Field, field_validator, model_validator
from pydantic_core import PydanticCustomError

from .._schema import Strict, closest, fail, json_schema, validate_file
from ..errors import FileInputError

__all__ = ["AntennaEntry", "CatalogueFile", "CatalogueChoice", "read_catalogue", "resolve_catalogue",
           "bundled_catalogue_path", "catalogue_json_schema", "missing_antenna_message", "NAME_RULE"]

#: What an antenna name may hold (letters, digits, '-' and '_', starting with a letter or digit).
NAME_RE = re.compile(r"[A-Za-z0-9][A-Za-z0-9_-]*")
NAME_RULE = "letters, digits, '-' and '_' (starting with a letter or digit)"


def _plain_number(value):
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise PydanticCustomError("number_type", "expected a number, got {got}", {"got": repr(value)})
    if not math.isfinite(value):
        raise PydanticCustomError("number_finite", "must be a finite number, got {got}", {"got": repr(value)})
    return float(value)


def _number(doc: str, **bounds):
    """A plain number (bool and text refused) with inclusive (ge, le) or exclusive (gt) bounds."""
    return Annotated[float, BeforeValidator(_plain_number), Field(description=doc, **bounds)]


class AntennaEntry(Strict):
    """One antenna of a catalogue, in the catalogue's human units (see ``configs/antennas.toml``)."""

    centre_frequency_mhz: _number("centre (peak) frequency of the transmitted spectrum, MHz", gt=0, le=1e5)
    bandwidth_mhz: _number("full width at half power of the spectrum, MHz (0.25 to 2 x centre)", gt=0, le=1e5)
    system_performance_db: _number("largest two-way loss the system detects for ONE trace, dB", gt=0, le=400)
    separation_m: _number("transmitter-receiver separation, m", ge=0, le=100)
    separation_adjustable: bool = Field(
        False, description="true where transmitter and receiver are separate units whose separation the crew "
                           "sets (then separation_m is the usual setting); false where it is fixed in one housing")
    trace_rate_hz: _number("raw traces recorded per second", gt=0, le=1e7)
    stacks: Annotated[int, Field(strict=True, ge=1, le=1_000_000)] = Field(
        1, description="traces averaged per recorded trace")
    pulse_length_ns: _number("pulse length for the blind zone, ns (default 1.5 periods)", gt=0, le=1e4) | None = None
    clutter_limit_db: _number("ceiling of the stacking gain, dB (default 15)", gt=0, le=60) | None = None
    gain_dbi: _number("measured one-way in-ground gain, replacing the coupling model, dBi", gt=-20, le=40) | None = None
    illustrative: bool = Field(False, description="true for invented demo values, false for measured figures")
    notes: str = Field("", description="free text")

    @model_validator(mode="after")
    def _band(self):
        lo, hi = 0.25 * self.centre_frequency_mhz, 2.0 * self.centre_frequency_mhz
        if not lo <= self.bandwidth_mhz <= hi:
            raise ValueError(f"bandwidth_mhz must be between 0.25 and 2 x centre_frequency_mhz ({lo:g} to {hi:g} "
                             f"MHz), got {self.bandwidth_mhz:g}")
        return self

    def to_antenna(self, name: str):
        """The :class:`subsurf.planning.antennas.Antenna` (SI units) this entry describes."""
        from .antennas import CLUTTER_LIMIT_DB, Antenna

        return Antenna(
            name=name, centre_freq_hz=self.centre_frequency_mhz * 1e6, bandwidth_hz=self.bandwidth_mhz * 1e6,
            performance_db=self.system_performance_db, separation_m=self.separation_m,
            separation_adjustable=self.separation_adjustable,
            trace_rate_hz=self.trace_rate_hz, stacks=self.stacks,
            gain=None if self.gain_dbi is None else 10.0 ** (self.gain_dbi / 10.0),
            pulse_length_s=None if self.pulse_length_ns is None else self.pulse_length_ns * 1e-9,
            clutter_limit_db=CLUTTER_LIMIT_DB if self.clutter_limit_db is None else self.clutter_limit_db,
            notes=self.notes, illustrative=self.illustrative)


def check_names(value: dict) -> dict:
    """Refuse antenna names outside :data:`NAME_RULE` (used by every table of antennas)."""
    for name in value:
        if not NAME_RE.fullmatch(str(name)):
            raise ValueError(f"antenna name {name!r} may use only {NAME_RULE}")
    return value


class CatalogueFile(Strict):
    """An antenna catalogue file: one ``[antenna.NAME]`` table per antenna."""

    antenna: dict[str, AntennaEntry] = Field(min_length=1, description="one table per antenna, [antenna.NAME]")

    @field_validator("antenna", mode="before")
    @classmethod
    def _names(cls, value):
        return check_names(value) if isinstance(value, dict) else value


def bundled_catalogue_path() -> Path:
    """``configs/antennas.toml``: the bundled catalogue of illustrative demo antennas."""
    from .. import config_dir

    return Path(config_dir()) / "antennas.toml"


def read_catalogue(path=None) -> dict:
    """Read a catalogue file into ``{name: Antenna}``, ordered by frequency (then name).

    Parameters
    ----------
    path : path-like or None
        Catalogue file; None reads the bundled ``configs/antennas.toml``.

    Raises
    ------
    FileInputError
        One line naming the file, the ``[antenna.NAME]`` table and the key of the first
        problem: an unknown key (the closest valid key suggested), a missing field, a figure
        out of range, an antenna defined twice (a TOML error naming the table and line).
    """
    path = Path(path) if path is not None else bundled_catalogue_path()
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
    except FileNotFoundError:
        raise FileInputError(path, "antenna catalogue not found") from None
    except IsADirectoryError:
        raise FileInputError(path, "is a folder, not an antenna catalogue (TOML file)") from None
    except UnicodeDecodeError:
        raise FileInputError(path, "not UTF-8 text; save the catalogue as UTF-8") from None
    except tomllib.TOMLDecodeError as exc:
        text = str(exc)
        m = re.match(r"Cannot declare \('antenna', '([^']*)'\) twice(.*)", text)
        if m:  # the same [antenna.NAME] table twice
            raise fail(path, f"[antenna.{m.group(1)}]", f"antenna {m.group(1)!r} is defined twice{m.group(2)}; "
                       "give each antenna one table") from None
        raise FileInputError(path, f"invalid TOML: {text}") from None
    spec = validate_file(CatalogueFile, data, path)
    return _ordered({name: entry.to_antenna(name) for name, entry in spec.antenna.items()})


def _ordered(antennas: dict) -> dict:
    return {a.name: a for a in sorted(antennas.values(), key=lambda a: (a.centre_freq_hz, a.name))}


@dataclass(frozen=True)
class CatalogueChoice:
    """The antennas a survey or command may use, and where they came from.

    Attributes
    ----------
    antennas : dict
        ``{name: Antenna}``, the file's antennas and the inline ones, ordered by frequency.
    file : Path
        The catalogue file read (the bundled one when no other was given).
    source : str
        ``"bundled"``, ``"survey"`` (the survey's ``[antennas] catalogue``) or ``"--catalogue"``.
    inline : tuple of str
        Names of the antennas the survey defines itself (``[antennas.define.NAME]``).
    """

    antennas: dict
    file: Path
    source: str
    inline: tuple = field(default_factory=tuple)

    def describe(self, used=None) -> dict:
        """Plain summary for JSON and reports; ``used`` names the antennas actually used."""
        used = list(self.antennas) if used is None else list(used)
        return {"file": str(self.file), "source": self.source, "bundled": self.source == "bundled",
                "inline": list(self.inline),
                "illustrative": [n for n in used if self.antennas[n].illustrative],
                "text": self.text(used)}

    def where(self) -> str:
        """Which file: the bundled illustrative catalogue, the survey's catalogue FILE or --catalogue FILE."""
        if self.source == "bundled":
            return f"the bundled illustrative catalogue ({self.file.name})"
        label = "the survey's catalogue" if self.source == "survey" else "--catalogue"
        return f"{label} {self.file}"

    def text(self, used=None) -> str:
        """One line: which catalogue, which antennas are inline, which are illustrative."""
        used = list(self.antennas) if used is None else list(used)
        text = self.where()
        if self.inline:
            text += f", with {len(self.inline)} antenna{'s' if len(self.inline) > 1 else ''} defined in the survey " \
                    f"({', '.join(self.inline)})"
        ill = [n for n in used if self.antennas[n].illustrative]
        if ill:
            text += "; illustrative figures" + (" only" if len(ill) == len(used) else f": {', '.join(ill)}")
        return text


def resolve_catalogue(*, file=None, source: str = "bundled", inline: dict | None = None,
                      inline_path=None) -> CatalogueChoice:
    """The catalogue from a file (or the bundled one) and antennas defined inline.

    Parameters
    ----------
    file : path-like or None
        Catalogue file; None: the bundled ``configs/antennas.toml``.
    source : {"bundled", "survey", "--catalogue"}
        Where ``file`` was named, for the outputs.
    inline : dict of AntennaEntry, optional
        Antennas defined in the survey file itself; a name also in the file is refused.
    inline_path : Path
        The survey file (for errors about inline antennas).
    """
    if file is None:
        file, source = bundled_catalogue_path(), "bundled"
    file = Path(file)
    antennas = read_catalogue(file)
    inline = inline or {}
    for name, entry in inline.items():
        if name in antennas:
            raise fail(inline_path, f"[antennas.define.{name}]",
                       f"antenna {name!r} is also in the catalogue {file}; give each antenna one definition "
                       "(rename one)")
        antennas[name] = entry.to_antenna(name)
    return CatalogueChoice(antennas=_ordered(antennas), file=file.resolve(), source=source, inline=tuple(inline))


def missing_antenna_message(name: str, choice: CatalogueChoice) -> str:
    """'antenna X is not in ...; did you mean Y? (available: ...)'."""
    near = closest(name, choice.antennas)
    inline = " or defined in the survey" if choice.inline else ""
    return (f"antenna {name!r} is not in {choice.where()}{inline}" + (f"; did you mean '{near}'?" if near else "")
            + f" (available: {', '.join(choice.antennas)})")


def catalogue_json_schema() -> dict:
    """JSON Schema of an antenna catalogue file (committed as ``surveys/catalogue.schema.json``)."""
    return json_schema(CatalogueFile, title="subsurf antenna catalogue",
                       description="Antennas for subsurf, one [antenna.NAME] table each; fields as documented "
                                   "in configs/antennas.toml.")
