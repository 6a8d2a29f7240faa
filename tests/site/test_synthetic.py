"""Synthetic soil regions: seeded, chunk-independent, lazy, inside the physical ranges."""

import numpy as np
import pytest

from subsurf.errors import InputError
from subsurf.site.synthetic import FIELDS, field_values, parse_size, random_modes, synthetic_region


def test_same_seed_same_values_whatever_the_chunking():
    """A cell's value does not depend on how the region is cut into chunks (invariant)."""
    a = synthetic_region(120, 90, seed=11, chunk=17, nodata_fraction=0.1)
    b = synthetic_region(120, 90, seed=11, chunk=200, nodata_fraction=0.1)
    for q in FIELDS:
        np.testing.assert_array_equal(a[q].values, b[q].values)


def test_different_seeds_give_different_regions():
    """Changing the seed changes the field."""
    a = synthetic_region(50, 40, seed=1)["moisture"].values
    b = synthetic_region(50, 40, seed=2)["moisture"].values
    assert np.max(np.abs(a - b)) > 0.01


def test_values_stay_inside_each_quantity_range():
    """Every generated value lies within its FieldSpec range (normal-CDF mapping)."""
    ds = synthetic_region(200, 150, seed=5)
    for q, spec in FIELDS.items():
        v = ds[q].values
        assert np.all(v >= spec.low) and np.all(v <= spec.high)


def test_separable_evaluation_matches_direct_plane_waves():
    """Outer-product evaluation equals Σ a·cos(kx·x + ky·y + φ) evaluated directly (trig identity)."""
    rng = np.random.default_rng(3)
    modes = random_modes(rng, n_modes=5, shortest_m=50.0, longest_m=5000.0)
    x = np.linspace(0.0, 3000.0, 41)
    y = np.linspace(1000.0, -500.0, 23)
    xx, yy = np.meshgrid(x, y)
    direct = sum(a * np.cos(kx * xx + ky * yy + ph)
                 for kx, ky, a, ph in zip(modes.kx, modes.ky, modes.amplitude, modes.phase))
    np.testing.assert_allclose(field_values(modes, x, y), direct, atol=1e-12)


def test_field_has_unit_variance_over_seeds():
    """E[z²] = Σ a²/2 = 1 over random phases: the ensemble mean square at a point is 1 (analytical)."""
    z2 = []
    for seed in range(2000):
        modes = random_modes(np.random.default_rng(seed), n_modes=8, shortest_m=10.0, longest_m=1000.0)
        z2.append(field_values(modes, [123.0], [-45.0])[0, 0] ** 2)
    # standard error of the mean of z² is about sqrt(2/2000) = 0.03; allow 4 of them
    assert np.mean(z2) == pytest.approx(1.0, abs=0.13)


def test_nodata_cells_are_nan_in_every_quantity():
    """No-data cells (open water) are NaN in all quantities at the same places."""
    ds = synthetic_region(200, 200, seed=4, nodata_fraction=0.2)
    masks = [np.isnan(ds[q].values) for q in FIELDS]
    assert masks[0].any() and not masks[0].all()
    for m in masks[1:]:
        np.testing.assert_array_equal(m, masks[0])


def test_huge_region_is_lazy():
    """A 100 000 x 100 000 region is built without materialising it; a small window computes alone."""
    ds = synthetic_region(100_000, 100_000, seed=0, chunk=1000)
    assert ds["moisture"].data.npartitions == 100 * 100
    window = ds["moisture"].isel(x=slice(50_000, 50_010), y=slice(70_000, 70_005)).values
    assert window.shape == (5, 10) and np.all(np.isfinite(window))


def test_coordinates_are_cell_centres_north_up():
    """x increases, y decreases (north-up) by the cell size; the CRS is attached."""
    ds = synthetic_region(10, 8, cell_size_m=30.0)
    np.testing.assert_allclose(np.diff(ds["x"].values), 30.0)
    np.testing.assert_allclose(np.diff(ds["y"].values), -30.0)
    assert "crs_wkt" in ds["crs"].attrs and ds["moisture"].attrs["grid_mapping"] == "crs"


@pytest.mark.parametrize("text", ["100", "10x", "axb", "1x5", "3x4x5"])
def test_parse_size_rejects_bad_text(text):
    """Sizes that are not NXxNY with both >= 2 raise InputError naming the option."""
    with pytest.raises(InputError, match="--synthetic"):
        parse_size(text)


def test_parse_size_reads_underscores_and_case():
    """'20_000X300' reads as (20000, 300)."""
    assert parse_size("20_000X300") == (20000, 300)


def test_nodata_fraction_is_near_the_request():
    """The thresholded no-data area is within a factor of two of the requested fraction."""
    for seed in (0, 1, 2):
        ds = synthetic_region(400, 300, seed=seed, nodata_fraction=0.05, quantities=("moisture",))
        assert 0.025 < np.isnan(ds["moisture"].values).mean() < 0.1
