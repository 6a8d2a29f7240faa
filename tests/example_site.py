"""The bundled fictional example site, made fast for tests (shared by tests/cli and tests/io)."""

from __future__ import annotations

from pathlib import Path

EXAMPLE = Path(__file__).resolve().parents[1] / "surveys" / "example-site"


def coarse_copy(tmp_path: Path, *, cell_size: str = "6 m", draws: int = 40, name: str = "coarse.toml") -> Path:
    """The example survey with 6 m cells and 40 draws (fast; or the cells and draws given), reading the example's
    own inputs."""
    text = (EXAMPLE / "survey.toml").read_text()
    for name_ in ("outline.geojson", "samples.csv", "zones.geojson", "ground_temperature.nc"):
        text = text.replace(f'"{name_}"', f'"{(EXAMPLE / name_).as_posix()}"')
    assert 'cell_size = "2 m"' in text and "draws = 200" in text
    text = text.replace('cell_size = "2 m"', f'cell_size = "{cell_size}"').replace("draws = 200", f"draws = {draws}")
    p = tmp_path / name
    p.write_text(text)
    return p
