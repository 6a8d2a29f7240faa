"""Kriging of soil samples (subsurf.site.kriging, subsurf.site.interpolation) against gstools' own fields and kriging."""

from __future__ import annotations

import numpy as np
import pytest

from subsurf.errors import FileInputError
from subsurf.site.kriging import MIN_KRIGING_SAMPLES, fit_variogram, krige, leave_one_out
from subsurf.site.vectors import InputNote

gs = pytest.importorskip("gstools")

# the "true" variogram of the synthetic fields: exponential, variance 1, length scale 20 m, nugget 0.1
TRUE = {"var": 1.0, "len_scale": 20.0, "nugget": 0.1}


def _field(seed: int, n: int = 100, size: float = 100.0):
    """n random points in a size x size square (m) with values of a gstools Gaussian field (seeded)."""
    rng = np.random.default_rng(seed)
    x, y = rng.uniform(0, size, n), rng.uniform(0, size, n)
    model = gs.Exponential(dim=2, **TRUE)
    z = gs.SRF(model, seed=1000 + seed)((x, y))  # SRF adds the nugget as white noise at each point
    return x, y, z


def test_leave_one_out_closed_form_equals_gstools_refits():
    """Dubrule's closed form gives exactly what gstools' Ordinary kriging gives with each sample left out."""
    x, y, z = _field(3, n=40, size=100.0)
    cov, _ = fit_variogram(x, y, z)
    loo = leave_one_out(x, y, z, cov)
    for i in (0, 7, 21):
        keep = np.arange(z.size) != i
        k = gs.krige.Ordinary(cov, (x[keep], y[keep]), z[keep], exact=False, cond_err="nugget")
        pred, var = k((x[i:i + 1], y[i:i + 1]), return_var=True)
        assert loo["errors"][i] == pytest.approx(pred[0] - z[i], rel=1e-9, abs=1e-12)
        assert loo["sd"][i] == pytest.approx(np.sqrt(var[0]), rel=1e-9)


def test_standardised_loo_errors_are_standard_normal_on_known_fields():
    """On 12 seeded gstools fields with a known variogram: standardised LOO errors ~ N(0, 1), variogram recovered."""
    variances, pooled = [], []
    for seed in range(12):
        x, y, z = _field(seed)
        cov, _ = fit_variogram(x, y, z)
        loo = leave_one_out(x, y, z, cov)
        variances.append(loo["standardised_error_variance"])
        pooled.append(loo["standardised"])
    pooled = np.concatenate(pooled)
    # 1200 standardised errors: the mean of N(0,1) draws has sd ~0.03 (errors within a field are
    # correlated, so allow 0.1); the median per-field variance within 20 % of 1
    assert abs(pooled.mean()) < 0.1
    assert 0.8 < np.median(variances) < 1.2
    assert 0.85 < np.mean(pooled**2) < 1.25
    # the 5-95 % range of the pooled errors close to N(0,1)'s +-1.645 (scipy.stats.norm, outside reference)
    from scipy.stats import norm

    lo, hi = np.quantile(pooled, [0.05, 0.95])
    assert lo == pytest.approx(norm.ppf(0.05), abs=0.25) and hi == pytest.approx(norm.ppf(0.95), abs=0.25)


def test_fitted_variogram_recovers_the_known_one():
    """With 300 samples per field (8 seeds) the median fitted length is within 1.5x and the sill within 30 %.

    Variogram parameters from ~100 samples scatter by factors of several (Webster & Oliver 1992),
    which is why this check uses 300.
    """
    lengths, sills = [], []
    for seed in range(8):
        x, y, z = _field(seed, n=300, size=150.0)
        _, summary = fit_variogram(x, y, z)
        lengths.append(summary["len_scale_m"])
        sills.append(summary["sill"])
    assert TRUE["len_scale"] / 1.5 < np.median(lengths) < TRUE["len_scale"] * 1.5
    assert np.median(sills) == pytest.approx(TRUE["var"] + TRUE["nugget"], rel=0.3)


def test_wrong_variogram_fails_the_check():
    """A variogram 5x too long and without nugget gives standardised variances far from 1 (the test has power)."""
    wrong = gs.Exponential(dim=2, var=1.0, len_scale=100.0, nugget=0.0)
    variances = [leave_one_out(*_field(seed), wrong)["standardised_error_variance"] for seed in range(6)]
    assert np.median(variances) > 1.5


def test_kriging_variance_grows_to_the_sill_away_from_samples():
    """Kriging sd is smallest near samples and approaches sqrt(sill) (plus the mean's error) far away."""
    x, y, z = _field(5)
    r = krige(x, y, z, np.array([x[0], 2000.0]), np.array([y[0], 2000.0]))
    sill = r.variogram["sill"]
    assert r.kriging_sd[0] < np.sqrt(sill) * 0.7
    assert np.sqrt(sill) <= r.kriging_sd[1] < np.sqrt(sill) * 1.1


E0, N0 = 500_000.0, 5_700_000.0


def _survey(tmp_path, n: int, method: str | None = None):
    """A survey with n moisture samples drawn from a seeded gstools field (residual sd 0.03)."""
    rng = np.random.default_rng(11)
    x, y = rng.uniform(2, 98, n), rng.uniform(2, 58, n)
    z = gs.SRF(gs.Exponential(dim=2, var=1.0, len_scale=25.0, nugget=0.05), seed=7)((x, y))
    lines = ["x,y,moisture"] + [f"{E0 + a:.3f},{N0 + b:.3f},{0.2 + 0.03 * c:.5f}" for a, b, c in zip(x, y, z)]
    (tmp_path / "s.csv").write_text("\n".join(lines) + "\n")
    extra = f'interpolation = "{method}"\n' if method else ""
    (tmp_path / "survey.toml").write_text(f"""
[site]
bbox = [{E0}, {N0}, {E0 + 100}, {N0 + 60}]
crs = "EPSG:32631"
[grid]
cell_size = "2 m"
[soil]
texture = "loam"
{extra}[soil.defaults]
pore_water_ec = "20 mS/m"
[[soil.samples]]
file = "s.csv"
crs = "EPSG:32631"
[target]
kind = "line"
depth = "1 m"
size = "0.1 m"
material = "metal"
[antennas]
names = ["midband-250"]
""")
    return tmp_path / "survey.toml"


def test_auto_kriges_with_enough_samples_and_feeds_the_sd(tmp_path):
    """60 samples: 'auto' kriges (note with variogram and LOO), and moisture_sd is the kriging sd."""
    from subsurf.site.grid import build_grid, soil_on_grid
    from subsurf.site.survey import load_survey

    s = load_survey(_survey(tmp_path, 60))
    grid = build_grid(s)
    with pytest.warns(InputNote, match=r"moisture: ordinary kriging of 60 samples.*leave-one-out"):
        soil = soil_on_grid(s, grid)
    attrs = soil["moisture_interp_sd"].attrs
    assert attrs["interpolation_method"].startswith("ordinary kriging of 60 samples")
    assert 0.5 < attrs["loo_standardised_error_variance"] < 2.0
    inside = grid["mask"].values == 1
    # no sample sd given: the total sd that the reach probability draws from is the kriging sd
    np.testing.assert_allclose(soil["moisture_sd"].values[inside], soil["moisture_interp_sd"].values[inside])


def test_few_samples_auto_uses_spline_and_forced_kriging_is_refused(tmp_path):
    """Below the minimum, 'auto' keeps the spline and 'kriging' is one line naming the minimum."""
    from subsurf.site.grid import build_grid, soil_on_grid
    from subsurf.site.survey import load_survey

    n = MIN_KRIGING_SAMPLES - 5
    s = load_survey(_survey(tmp_path, n))
    soil = soil_on_grid(s, build_grid(s))
    assert soil["moisture_interp_sd"].attrs["interpolation_method"].startswith("thin-plate spline")
    (tmp_path / "k").mkdir()
    s = load_survey(_survey(tmp_path / "k", n, "kriging"))
    with pytest.raises(FileInputError, match=rf"needs at least {MIN_KRIGING_SAMPLES} samples.*give {n}"):
        soil_on_grid(s, build_grid(s))


def test_spline_can_be_chosen_with_many_samples(tmp_path):
    """interpolation = 'spline' keeps today's interpolation even with 60 samples."""
    from subsurf.site.grid import build_grid, soil_on_grid
    from subsurf.site.survey import load_survey

    s = load_survey(_survey(tmp_path, 60, "spline"))
    soil = soil_on_grid(s, build_grid(s))
    assert soil["moisture_interp_sd"].attrs["interpolation_method"].startswith("thin-plate spline of 60")
