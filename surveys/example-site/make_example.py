"""Write the bundled fictional example survey inputs (run from anywhere; deterministic).

The site "Fernhollow Paddock" is INVENTED: an imaginary grass field placed in a real UTM
zone (30N, central England) so that the coordinate handling is exercised with real
projections.  Every value written here is invented for demonstration; none describes a
real place, soil or utility.

Writes beside this script: outline.geojson (WGS 84 lon/lat), zones.geojson (UTM 30N),
samples.csv (WGS 84 lon/lat) and ground_temperature.nc (a small CF NetCDF raster in
UTM 30N).  ``survey.toml`` is written by hand and refers to these files.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import shapely
import xarray as xr
from pyproj import CRS, Transformer

HERE = Path(__file__).resolve().parent
UTM = CRS.from_epsg(32630)
TO_LONLAT = Transformer.from_crs(UTM, "EPSG:4326", always_xy=True)

# Site corner in UTM 30N (invented field, ~150 m x 100 m)
E0, N0 = 596_400.0, 5_781_200.0
SOUTH = [(-20, -20), (-20, 52), (60, 62), (180, 38), (200, 38), (200, -20), (-20, -20)]
NORTH = [(-20, 52), (-20, 200), (200, 200), (200, 38), (180, 38), (60, 62), (-20, 52)]
OUTLINE_UTM = [(0, 0), (150, 8), (158, 70), (120, 104), (40, 98), (-6, 60), (0, 0)]


def lonlat(points):
    xs = np.array([E0 + p[0] for p in points])
    ys = np.array([N0 + p[1] for p in points])
    lon, lat = TO_LONLAT.transform(xs, ys)
    return [[round(float(a), 8), round(float(b), 8)] for a, b in zip(lon, lat)]


def write_outline():
    feat = {"type": "Feature", "properties": {"name": "Fernhollow Paddock (fictional)"},
            "geometry": {"type": "Polygon", "coordinates": [lonlat(OUTLINE_UTM)]}}
    (HERE / "outline.geojson").write_text(json.dumps({"type": "FeatureCollection", "features": [feat]}, indent=1))


def write_zones():
    south, north = SOUTH, NORTH

    def utm(points):
        return [[E0 + x, N0 + y] for x, y in points]

    feats = [
        {"type": "Feature", "properties": {"name": "upper terrace", "texture": "loamy sand", "moisture": "14 %",
                                           "moisture_sd": "3 %", "pore_water_ec": "20 mS/m",
                                           "pore_water_ec_sd": "6 mS/m"},
         "geometry": {"type": "Polygon", "coordinates": [utm(north)]}},
        {"type": "Feature", "properties": {"name": "lower hollow", "texture": "loam", "moisture": "21 %",
                                           "moisture_sd": "4 %", "pore_water_ec": "45 mS/m",
                                           "pore_water_ec_sd": "12 mS/m"},
         "geometry": {"type": "Polygon", "coordinates": [utm(south)]}},
    ]
    (HERE / "zones.geojson").write_text(json.dumps({"type": "FeatureCollection", "features": feats}, indent=1))


def write_samples():
    rng = np.random.default_rng(7)
    pts = [(20, 15), (55, 10), (95, 12), (135, 18), (15, 45), (50, 40), (90, 35), (130, 45), (150, 60),
           (25, 75), (60, 70), (100, 65), (130, 80), (70, 92), (105, 95), (45, 55)]
    rows = []
    for i, (x, y) in enumerate(pts, start=1):
        # the invented hollow (south of the zone boundary) is wetter and more saline
        wet = 1.0 if shapely.contains_xy(shapely.Polygon(SOUTH), x, y) else 0.0
        moisture = 0.14 + 0.07 * wet + rng.normal(0, 0.012) + 0.0003 * (x - 75)
        ec = 18 + 27 * wet + rng.normal(0, 4) + 0.05 * x
        lon, lat = lonlat([(x, y)])[0]
        rows.append({"id": f"S{i:02d}", "lon": lon, "lat": lat, "moisture [%]": round(100 * moisture, 1),
                     "moisture_sd [%]": 1.5, "pore_water_ec [mS/m]": round(ec, 0), "pore_water_ec_sd [mS/m]": 8})
    with (HERE / "samples.csv").open("w", newline="") as fh:
        w = csv.DictWriter(fh, fieldnames=list(rows[0]))
        w.writeheader()
        w.writerows(rows)


def write_temperature():
    x = E0 - 30 + 10.0 * np.arange(23)
    y = N0 - 30 + 10.0 * np.arange(17)
    xx, yy = np.meshgrid(x, y)
    temp = 11.0 + 2.0 * (yy - y.min()) / (y.max() - y.min()) + 0.5 * np.sin((xx - x.min()) / 40.0)
    cf = UTM.to_cf()
    ds = xr.Dataset(
        {"ground_temperature": (("y", "x"), temp.astype("float32"),
                                {"long_name": "ground temperature at 0.5 m (invented)", "units": "degC",
                                 "grid_mapping": "crs"}),
         "crs": ((), np.int32(0), {**cf, "crs_wkt": UTM.to_wkt()})},
        coords={"x": ("x", x, {"standard_name": "projection_x_coordinate", "units": "m"}),
                "y": ("y", y, {"standard_name": "projection_y_coordinate", "units": "m"})},
        attrs={"Conventions": "CF-1.8", "title": "Invented ground temperature for a fictional site",
               "comment": "fictional data for the subsurf example; describes no real place"},
    )
    ds.to_netcdf(HERE / "ground_temperature.nc")


if __name__ == "__main__":
    write_outline()
    write_zones()
    write_samples()
    write_temperature()
    print(f"wrote example inputs to {HERE}")
