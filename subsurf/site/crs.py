"""Coordinate reference systems of survey inputs: parsing a declared CRS and the automatic UTM zone.

pyproj wraps PROJ and the EPSG database; every input CRS is explicit (EPSG code or WKT).
"""

from __future__ import annotations

import math

from .._schema import fail
from ..errors import InputError

__all__ = ["read_crs", "auto_utm_crs", "horizontal_crs_problem"]


def horizontal_crs_problem(crs, given=None) -> str | None:
    """Why ``crs`` cannot place survey points on a map, in one clause; None when it can.

    ``given`` is the text the user or file wrote (an EPSG code, WKT...), shown beside the name.

    Accepted, the same way for every CRS a user or a file gives (survey files, rasters,
    vector files, pick tables, ``depth --crs``): projected (easting/northing) or geographic
    (longitude/latitude) CRSs, including a compound CRS whose horizontal part is one of them.
    Refused: vertical (heights only), geocentric (Earth-centred X/Y/Z) and any other kind
    (engineering, ...).  The kind comes from pyproj (``is_projected``, ``is_geographic``,
    ``is_vertical``, ``is_geocentric``), not from the name.
    """
    if crs.is_geocentric:
        kind = "a geocentric (Earth-centred X/Y/Z) CRS"
    elif crs.is_projected or crs.is_geographic:
        return None
    elif crs.is_vertical:
        kind = "a vertical (height-only) CRS"
    else:
        kind = f"a {crs.type_name}"
    label = repr(crs.name)
    if given is not None and str(given).strip() != crs.name:
        text = str(given).strip()
        label = f"{text if len(text) < 40 else text[:37] + '...'!r} ({crs.name})"
    return f"CRS {label} is {kind}; give a projected (easting/northing) or geographic (longitude/latitude) CRS"


def read_crs(value, *, path, field: str):
    """Parse an EPSG code (``"EPSG:4326"`` or ``4326``) or WKT into a ``pyproj.CRS``.

    ``field`` is the key path named in the error (e.g. ``"[site] crs"``).
    """
    from pyproj import CRS
    from pyproj.exceptions import CRSError

    if value is None or (isinstance(value, str) and not value.strip()):
        raise fail(path, field, "a CRS is required (an EPSG code such as 'EPSG:4326', or WKT)")
    try:
        crs = CRS.from_user_input(value)
    except CRSError:
        shown = str(value) if len(str(value)) < 60 else str(value)[:57] + "..."
        raise fail(path, field, f"unknown CRS {shown!r}; give an EPSG code such as 'EPSG:4326' "
                   "or a WKT string") from None
    problem = horizontal_crs_problem(crs, value)
    if problem:
        raise fail(path, field, problem)
    return crs


def auto_utm_crs(lon: float, lat: float):
    """The WGS 84 / UTM zone CRS holding (lon, lat).

    The zone follows the UTM grid definition: 6-degree zones numbered eastward from
    180 W, with the exceptions of the UTM/MGRS grid (zone 32 widened to 3-12 E between
    56 and 64 N for south-western Norway; zones 31, 33, 35 and 37 only, 9 or 12 degrees
    wide, between 72 and 84 N over Svalbard).  North of the equator (latitude >= 0) the
    northern-hemisphere code 326zz is used, south of it 327zz; the CRS itself comes from
    pyproj's EPSG database.  A site straddling a zone boundary uses the zone of the
    point given (the site centre); UTM stays usable a few degrees beyond its zone.

    References
    ----------
    NIMA (2001). *Datums, Ellipsoids, Grids, and Grid Reference Systems*, Technical
    Manual 8358.1 (UTM zones and their exceptions; cited from memory).
    """
    from pyproj import CRS

    if not (math.isfinite(lon) and math.isfinite(lat) and -180.0 <= lon <= 180.0 and -80.0 <= lat <= 84.0):
        raise InputError(f"site centre lon={lon:.6g}, lat={lat:.6g} is outside the UTM zones "
                         "(latitude -80 to 84 degrees); give the grid CRS explicitly")
    zone = min(int(math.floor((lon + 180.0) / 6.0)) + 1, 60)
    if 56.0 <= lat < 64.0 and 3.0 <= lon < 12.0:
        zone = 32  # south-western Norway
    elif lat >= 72.0 and 0.0 <= lon < 42.0:
        zone = 31 if lon < 9.0 else 33 if lon < 21.0 else 35 if lon < 33.0 else 37  # Svalbard
    return CRS.from_epsg((32600 if lat >= 0 else 32700) + zone)
