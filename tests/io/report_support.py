"""A small invented survey for the report tests (fictional site, invented numbers)."""

from __future__ import annotations

from pathlib import Path

SURVEY = """\
[site]
name = "Test paddock (fictional)"
description = "An invented site for the report tests; every value is made up."
crs = "EPSG:4326"
bbox = [-1.2010, 52.1000, -1.1990, 52.1012]

[grid]
cell_size = "10 m"

[soil]
model = "crim"
texture = "loamy_sand"
defaults = { moisture = "15 %", moisture_sd = "3 %", pore_water_ec = "40 mS/m", pore_water_ec_sd = "10 mS/m", temperature = 12 }

[[soil.samples]]
file = "samples.csv"
crs = "EPSG:4326"
x_column = "lon"
y_column = "lat"

[target]
kind = "line"
depth = "0.8 m"
size = "0.1 m"
material = "metal"

[antennas]
names = ["lowband-100", "midband-250", "midband-500"]

[monte_carlo]
draws = 300
seed = 7
"""

SAMPLES = """\
lon,lat,moisture [%],moisture_sd [%]
-1.2005,52.1003,13,2
-1.1995,52.1008,18,2
-1.2000,52.1005,15,2
-1.2007,52.1010,16,2
"""


def write_test_survey(folder: Path) -> Path:
    """Write the invented survey and its sample file into ``folder``; return the survey path."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "samples.csv").write_text(SAMPLES, encoding="utf-8")
    path = folder / "survey.toml"
    path.write_text(SURVEY, encoding="utf-8")
    return path
