"""Writes docs/notebooks/tour.ipynb (the Python API tour); run from the project root.

The notebook is executed end to end by tests/test_notebook.py, so what it shows is real.
The example site is the bundled fictional one (invented data, no real place).
"""

from pathlib import Path

import nbformat
from nbformat.v4 import new_code_cell, new_markdown_cell, new_notebook

cells = [
    new_markdown_cell(
        "# subsurf from Python\n\n"
        "The jobs of the command line as plain calls. Arguments take SI numbers or pint "
        "Quantities. The site is the bundled **fictional** example (invented data).\n\n"
        "> Predicted depths are estimates, not locations of buried objects; verify services by the "
        "means your local regulations require before any excavation."),
    new_code_cell("import numpy as np\nimport pint\nimport subsurf\n\nQ_ = pint.UnitRegistry().Quantity"),
    new_markdown_cell("## What the wave sees in a moist loamy sand"),
    new_code_cell(
        'ground = subsurf.medium(soil={"texture": "loamy_sand", "moisture": "12 %"})\n'
        'props = subsurf.ground_properties(ground, Q_(np.array([100, 250, 500, 1000]), "MHz"))\n'
        'props[["velocity", "attenuation"]].to_dataframe()'),
    new_markdown_cell("## Which antenna for a 15 cm metal pipe at 1.2 m?"),
    new_code_cell(
        'pipe = subsurf.target("line", depth_m=Q_(120, "cm"), size_m=Q_(15, "cm"), material="metal")\n'
        'choice = subsurf.choose_antenna(ground, pipe)\n'
        'for row in choice["rows"]:\n'
        '    print(f"{row[\'name\']:>14}: reaches {row[\'max_depth_m\']:.2f} m, margin {row[\'margin_db\']:+.1f} dB")\n'
        'print("recommended:", choice["recommended"])'),
    new_markdown_cell("## Time to depth with an honest uncertainty"),
    new_code_cell(
        'est = subsurf.time_to_depth(Q_(24, "ns"), Q_(0.1, "m/ns"), velocity_se=Q_(0.005, "m/ns"))\n'
        'print(f"depth {float(est.depth):.3f} m ± {float(est.depth_sd):.3f} m")'),
    new_markdown_cell("## Feasibility maps of the example site, in memory"),
    new_code_cell(
        'from pathlib import Path\n'
        'survey = Path(subsurf.__file__).resolve().parent.parent / "surveys" / "example-site" / "survey.toml"\n'
        'maps = subsurf.feasibility_maps(survey)\n'
        'print(maps.rio.crs)\n'
        'maps.max_depth.sel(scenario=str(maps.scenario.values[0])).max(dim=("x", "y")).to_series()'),
]
nb = new_notebook(cells=cells, metadata={"kernelspec": {"name": "python3", "display_name": "Python 3",
                                                         "language": "python"}})
out = Path(__file__).with_name("tour.ipynb")
nbformat.write(nb, out)
print(f"wrote {out}")
