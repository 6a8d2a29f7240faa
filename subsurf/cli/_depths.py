"""``--depth`` as one depth, a range ``TOP-BOTTOM`` or a list ``D1,D2,D3``, with units.

One depth (``1.2``, ``"120 cm"``) is read exactly as before.  A range is written with a
hyphen (or an en dash) between its ends, top first: ``"0.5-1.5 m"``, ``"50 cm-1.5 m"``,
``"50-150 cm"``.  A list separates depths by commas: ``"0.5,1.0,1.5 m"``.  A unit written
on one end (or on some items of a list) applies to the bare numbers; with no unit at all a
bare number is in metres.  Only positive numbers are accepted, so the hyphen can never be
mistaken for a minus sign.  Reach is judged at the deepest depth, the blind zone and the
resolution at the shallowest (:mod:`subsurf.detection.verdicts`).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

__all__ = ["DepthsOfInterest", "parse_depths", "MAX_DEPTH_M"]

#: Deepest target depth a plan may ask for (m).  Our limit, stated: radio-echo sounding of polar
#: ice, the deepest radar work there is, reaches about 4 km (the thickest Antarctic ice is ~4.8 km,
#: from memory); a depth of a megametre planned a margin of -7.9 million dB.
MAX_DEPTH_M = 1e4

_NUM = r"(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_END = re.compile(rf"\s*({_NUM})\s*([^\s\d.,\-–][^,\-–]*?)?\s*")
_SYNTAX = "one depth ('1.2 m'), a range top-bottom ('0.5-1.5 m') or a list ('0.5,1.0,1.5 m')"


@dataclass(frozen=True)
class DepthsOfInterest:
    """The depths a target is sought at (m): ``top`` ≤ ``bottom``; ``listed`` for a list."""

    top: float
    bottom: float
    listed: tuple[float, ...] | None = None

    @property
    def is_range(self) -> bool:
        return self.top < self.bottom

    def target_fields(self) -> dict:
        """Keyword arguments of :class:`subsurf.detection.Target` for these depths."""
        if not self.is_range:
            return {"depth_m": self.bottom}
        return {"depth_m": self.bottom, "depth_top_m": self.top, "depths_m": self.listed}


def _ends(parts, text, name):
    """Each part as (number, unit or None); refuses signs and unreadable parts."""
    from ..errors import InputError

    out = []
    for p in parts:
        m = _END.fullmatch(p)
        if m is None:
            raise InputError(f"{name}: cannot read {text!r} as depths; give {_SYNTAX}, "
                             "every depth > 0 (bare number: m)")
        out.append((m.group(1), (m.group(2) or "").strip() or None))
    units = {u for _, u in out if u is not None}
    if len(units) > 1 and any(u is None for _, u in out):
        raise InputError(f"{name}: {text!r} mixes units ({', '.join(sorted(units))}) and bare numbers; "
                         "write the unit on every depth, or once at the end")
    shared = units.pop() if len(units) == 1 else "m"
    return [f"{n} {u or shared}" for n, u in out]


def _one(text, name, whole):
    from ..errors import InputError
    from ..units import parse_quantity

    d = parse_quantity(text, "length", default_unit="m", name=name)
    if not 0 < d <= MAX_DEPTH_M:
        hint = " (a decimal comma? write 0.5, not 0,5)" if d == 0 and "," in str(whole) else ""
        raise InputError(f"{name} must be > 0 m and at most {MAX_DEPTH_M / 1e3:g} km (deeper than any radar "
                         f"sounding reaches), got {whole!r}{hint}")
    return d


def parse_depths(text, name: str = "--depth") -> DepthsOfInterest:
    """Read ``text`` as one depth, a range or a list (see the module docstring); SI metres.

    Raises InputError (exit 1) naming ``name`` for an inverted or zero-width range, a repeated
    or non-positive depth, or one beyond :data:`MAX_DEPTH_M`.
    """
    from ..errors import InputError

    s = str(text).strip()
    if s.startswith(("-", "−")):
        raise InputError(f"{name} must be > 0 m (depths are measured down from the surface), got {text!r}; "
                         f"give {_SYNTAX}")
    if "," in s:
        parts = s.split(",")
        if len(parts) < 2 or any(not p.strip() for p in parts):
            raise InputError(f"{name}: cannot read {text!r} as a list of depths; give {_SYNTAX}")
        depths = [_one(p, name, text) for p in _ends(parts, text, name)]
        if len(set(depths)) != len(depths):
            raise InputError(f"{name}: the list {text!r} repeats a depth; give each depth of interest once")
        depths.sort()
        return DepthsOfInterest(depths[0], depths[-1], tuple(depths))
    body = s.replace("–", "-")
    if "-" in re.sub(r"[eE]-", "e", body):  # a hyphen that is not an exponent's sign: a range
        parts = re.split(r"(?<![eE])-", body)
        if len(parts) != 2 or not all(p.strip() for p in parts):
            raise InputError(f"{name}: cannot read {text!r} as a depth range; give {_SYNTAX}")
        top, bottom = (_one(p, name, text) for p in _ends(parts, text, name))
        if top > bottom:
            raise InputError(f"{name}: the range {text!r} is inverted (top {top:g} m below bottom {bottom:g} m); "
                             "write the shallower depth first, e.g. '0.5-1.5 m'")
        if top == bottom:
            raise InputError(f"{name}: the range {text!r} has zero width; give one depth (e.g. '{top:g} m') "
                             "or a top shallower than the bottom")
        return DepthsOfInterest(top, bottom)
    if ".." in s:
        raise InputError(f"{name}: cannot read {text!r}; a range is written with a hyphen, top first "
                         "('0.5-1.5 m'); a list with commas ('0.5,1.0,1.5 m')")
    (one,) = _ends([s], text, name)
    d = _one(one, name, text)
    return DepthsOfInterest(d, d)
