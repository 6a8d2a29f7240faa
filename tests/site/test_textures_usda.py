"""USDA texture classes (subsurf.site.textures_usda) against an independent implementation of the triangle."""

from __future__ import annotations

import numpy as np
import pytest

from subsurf.errors import InputError
from subsurf.site.textures_usda import USDA_CLASSES, resolve_texture, usda_texture_class

soiltexture = pytest.importorskip("soiltexture")


def _reference(sand_pct, clay_pct):
    # soiltexture (PyPI) classifies with class polygons of the USDA triangle (tables from the
    # SoilTexture QGIS plugin, citing Soil Survey Division Staff 1993, USDA Handbook 18)
    name = soiltexture.getTexture(sand_pct, clay_pct, classification="USDA")
    return None if name is None else name.strip().replace(" ", "_")


def test_classes_match_independent_triangle_away_from_boundaries():
    """Every point of a 1 % lattice more than 0.6 % from any class boundary gets the reference class."""
    import shapely
    from soiltexture.texture import tables

    polys = {k.strip().replace(" ", "_"): shapely.Polygon(p.vertices) for k, p in tables["USDA"].items()}
    assert set(polys) == set(USDA_CLASSES)
    edges = shapely.union_all([p.boundary for p in polys.values()])
    s, c = np.meshgrid(np.arange(0.5, 100, 1.0), np.arange(0.5, 100, 1.0))
    ok = s + c < 99.5
    s, c = s[ok], c[ok]
    away = shapely.distance(edges, shapely.points(s, c)) > 0.6
    s, c = s[away], c[away]
    assert s.size > 3000
    ours = usda_texture_class(s / 100, c / 100)
    ref = np.array([_reference(a, b) for a, b in zip(s, c)])
    bad = ours != ref
    assert not bad.any(), list(zip(s[bad], c[bad], ours[bad], ref[bad]))[:5]


@pytest.mark.parametrize("name", USDA_CLASSES)
def test_every_class_has_a_preset_inside_its_own_class(name):
    """Each of the twelve classes has a preset, and the preset's sand/clay fall in that class."""
    from subsurf.ground.presets import texture_preset

    p = texture_preset(name)
    assert usda_texture_class(p["sand"], p["clay"]) == name
    assert abs(p["sand"] + p["silt"] + p["clay"] - 1) < 0.011
    assert "source" in p and p["source"]


@pytest.mark.parametrize("text,key", [("Silty Clay Loam", "silty_clay_loam"), ("SiCL", "silty_clay_loam"),
                                      ("sandy-loam", "sandy_loam"), ("LS", "loamy_sand"), ("c", "clay"),
                                      ("loam", "loam"), ("SiL", "silt_loam")])
def test_names_and_abbreviations(text, key):
    """Class names in any case/spacing and the Soil Survey Manual abbreviations resolve to presets."""
    assert resolve_texture(text) == key


def test_unknown_texture_lists_allowed():
    """An unknown texture name is refused naming the classes."""
    with pytest.raises(InputError, match="silty_clay_loam"):
        resolve_texture("peat")


def test_fractions_out_of_range_refused():
    """sand + clay > 1 is refused with the values."""
    with pytest.raises(InputError, match="sand"):
        usda_texture_class(0.7, 0.5)


def test_texture_presets_sit_near_their_usda_class_centroid():
    """Each preset of configs/textures.toml lies inside its USDA class, within 0.03 of its centroid.

    Outside reference: the USDA class polygons of the soiltexture package (Soil Survey
    Division Staff 1993, USDA Handbook 18); centroid by shapely.
    """
    import shapely
    from soiltexture.texture import tables

    from subsurf.ground import load_textures

    polys = {k.strip().replace(" ", "_"): shapely.Polygon(p.vertices) for k, p in tables["USDA"].items()}
    presets = load_textures()
    assert set(presets) <= set(polys)
    for name, tex in presets.items():
        sand, clay = float(tex["sand"]) * 100, float(tex["clay"]) * 100
        assert polys[name].contains(shapely.Point(sand, clay)), name
        c = polys[name].centroid
        assert abs(sand - c.x) <= 3.0 and abs(clay - c.y) <= 3.0, (name, sand, clay, c.x, c.y)
