"""The bundled fictional example site, made fast for tests (shared by tests/cli and tests/io)."""

from __future__ import annotations

from pathlib import Path

EXAMPLE = Path(__file__).resolve().parents[1] / "surveys" / "example-site"


def coarse_copy(tmp_path: Path) -> Path:
    """The example survey with 6 m cells and 40 draws (fast), reading the example's own inputs."""
    text = (EXAMPLE / "survey.toml").read_text()
    for name in ("outline.geojson", "samples.csv", "zones.geojson", "ground_temperature.nc"):
        text = text.replace(f'"{name}"', f'"{(EXAMPLE / name).as_posix()}"')
    text = text.replace('cell_size = "2 m"', 'cell_size = "6 m"').replace("draws = 200", "draws = 40")
    p = tmp_path / "coarse.toml"
    p.write_text(text)
    return p
