"""Make the invented example pick files in this folder (fictional site, seeded noise).

Run:  python surveys/picks/make_examples.py
The "true" values used are printed, so the fits in the README can be compared with them.
"""

from pathlib import Path

import numpy as np

from subsurf.interpretation.layers import LayeredEarth, layered_time_from_depth
from subsurf.interpretation.velocity import hyperbola_twt

HERE = Path(__file__).resolve().parent
rng = np.random.default_rng(20240607)
NOTE = "# Invented data for a fictional site (Lower Fenwick yard); not a real survey.\n"


def hyperbolas():
    out = [NOTE, "# antenna separation 0.14 m; times already corrected to time zero\n",
           "line,target,distance_m,twt_ns,pick_sd_ns\n"]
    # target P1: pipe of radius 0.05 m, velocity 0.095 m/ns, apex 12.40 m, top 0.85 m
    x = np.round(np.arange(11.2, 13.65, 0.1), 2)
    t = hyperbola_twt(x, 0.095e9, 12.40, 0.85, radius_m=0.05, offset_m=0.14) * 1e9
    t += rng.normal(0, 0.15, x.size)
    t[3] += 2.5  # a mis-pick on a neighbouring event
    out += [f"L1,P1,{xi:.2f},{ti:.2f},0.3\n" for xi, ti in zip(x, t)]
    # target P2: point-like, velocity 0.095 m/ns, apex 18.10 m, top 1.30 m
    x = np.round(np.arange(16.6, 19.65, 0.15), 2)
    t = hyperbola_twt(x, 0.095e9, 18.10, 1.30, offset_m=0.14) * 1e9 + rng.normal(0, 0.2, x.size)
    out += [f"L1,P2,{xi:.2f},{ti:.2f},0.3\n" for xi, ti in zip(x, t)]
    (HERE / "fictional_hyperbolas.csv").write_text("".join(out))
    print("hyperbolas: v = 0.095 m/ns; P1 x0 12.40 m, top 0.85 m, radius 0.05 m; P2 x0 18.10 m, top 1.30 m")


def cmp():
    out = [NOTE, "# common-midpoint gather at L2 25.0 m; times corrected to time zero\n",
           "line,target,offset_m,twt_ns\n"]
    # reflector R1: interval 0.11 m/ns over 0.60 m; R2: 0.08 m/ns over the next 1.00 m.  Times of
    # R2 by ray tracing through both layers (Snell's law), not the hyperbola of an RMS velocity
    t1, t2 = 2 * 0.60 / 0.11e9, 2 * 1.00 / 0.08e9
    x = np.round(np.arange(0.2, 3.01, 0.2), 2)
    earth = LayeredEarth.from_thicknesses([0.11e9, 0.08e9], [0.60])
    for name, depth in (("R1", 0.60), ("R2", 1.60)):
        t = layered_time_from_depth(np.full(x.shape, depth), earth, offset_m=x) * 1e9 + rng.normal(0, 0.2, x.size)
        out += [f"L2,{name},{xi:.2f},{ti:.2f}\n" for xi, ti in zip(x, t)]
    (HERE / "fictional_cmp.csv").write_text("".join(out))
    print(f"cmp: R1 t0 {t1 * 1e9:.2f} ns, 0.110 m/ns over 0.60 m; R2 t0 {(t1 + t2) * 1e9:.2f} ns, "
          "0.080 m/ns over the next 1.00 m (bottom at 1.60 m)")


def utility():
    out = [NOTE, "# crs: EPSG:32633\n", "# raw record times; time zero of this system is about 2.0 ns\n",
           "line,easting_m,northing_m,twt_ns,surface_elev_m,pick_sd_ns\n"]
    e0, n0 = 512_340.0, 5_403_210.0
    for k in range(6):
        e = e0 + 2.5 * k
        n = n0 + 0.8 * k
        depth = 0.9 + 0.05 * k
        t = 2.0 + 2 * np.sqrt(depth**2 + 0.07**2) / 0.095e9 * 1e9 + rng.normal(0, 0.2)
        out.append(f"A,{e:.2f},{n:.2f},{t:.2f},{101.35 - 0.02 * k:.2f},0.3\n")
    (HERE / "fictional_utility_picks.csv").write_text("".join(out))


def lonlat():
    out = [NOTE, "# crs: EPSG:4326\n", "line,lon_deg,lat_deg,twt_ns,surface_elev_m\n"]
    for k in range(4):
        out.append(f"B,{15.165200 + 0.00002 * k:.6f},{48.778400 + 0.00001 * k:.6f},"
                   f"{22.0 + 0.8 * k + rng.normal(0, 0.2):.2f},{99.80 + 0.01 * k:.2f}\n")
    (HERE / "fictional_lonlat_picks.csv").write_text("".join(out))


def bad():
    (HERE / "fictional_bad_picks.csv").write_text(
        NOTE + "# crs: EPSG:32633\n"
        "line,easting_m,northing_m,twt_ns,surface_elev_m\n"
        "C,512400.00,5403250.00,18.4,101.10\n"
        "C,512402.50,5403250.80,-3.0,101.08\n"
        "C,512405.00,5403251.60,abc,101.06\n"
        "C,512407.50,,21.0,101.04\n")


if __name__ == "__main__":
    hyperbolas()
    cmp()
    utility()
    lonlat()
    bad()
