"""Bounded and positive draws of uncertain soil inputs (subsurf.ground.spread)."""

import numpy as np
import pytest
from scipy import stats

from subsurf.errors import InputError
from subsurf.ground.spread import bounded_normal, draw_soil_input, positive_lognormal
from subsurf.interpretation.soil_velocity import velocity_from_soil
from subsurf.soil import Soil


def test_truncated_draws_follow_scipy_truncnorm_and_never_touch_the_bounds():
    """Outside reference: scipy.stats.truncnorm's CDF (Kolmogorov-Smirnov, 20,000 draws)."""
    rng = np.random.default_rng(3)
    x = bounded_normal(rng, 0.05, 0.05, 20_000, low=0.0, high=0.4)
    assert x.min() > 0.0 and x.max() < 0.4
    assert np.count_nonzero(x == 0.0) == 0      # a clipped normal puts 16 % exactly at 0 here
    ref = stats.truncnorm(-1.0, 7.0, loc=0.05, scale=0.05)
    assert stats.kstest(x, ref.cdf).pvalue > 0.01


def test_lognormal_draws_keep_the_stated_mean_and_sd():
    """A log-normal moment-matched to mean 0.04, sd 0.04 (S/m): sample mean and sd within 3 %."""
    rng = np.random.default_rng(5)
    x = positive_lognormal(rng, 0.04, 0.04, 400_000)
    assert x.min() > 0
    assert x.mean() == pytest.approx(0.04, rel=0.03)
    assert x.std() == pytest.approx(0.04, rel=0.03)
    # log of the draws is normal (scipy.stats.normaltest would reject a clipped normal)
    assert abs(stats.skew(np.log(x[:20_000]))) < 0.1


def test_moisture_draws_stay_within_the_pore_space():
    rng = np.random.default_rng(1)
    x = draw_soil_input(rng, "moisture", 0.30, 0.10, 5000, upper=0.35)
    assert 0.0 < x.min() and x.max() < 0.35


def test_bad_spread_is_refused():
    rng = np.random.default_rng(0)
    with pytest.raises(InputError, match="standard deviation"):
        bounded_normal(rng, 0.1, -0.1, 10, low=0.0)
    with pytest.raises(InputError, match="mean > 0"):
        positive_lognormal(rng, 0.0, 0.1, 10)


def test_velocity_band_of_a_moist_soil_is_physically_possible():
    """Moist loam 0.20 ± 0.08: every velocity draw is slower than that of the dry soil.

    Outside bound: Topp et al. (1980) gives eps' = 3.03 at zero moisture, so a velocity above
    c/sqrt(3.03) = 0.172 m/ns would need drier-than-dry soil; and the 95th percentile of the band
    must stay below the velocity of the soil at a moisture two standard deviations below the
    mean (0.04), which the clipped normal it replaces exceeded by piling draws at 0.
    """
    from scipy.constants import c

    soil = Soil(0.20, texture="loam", model="topp")
    band = velocity_from_soil(soil, 250e6, sd={"moisture": 0.08}, draws=4000, seed=2)
    assert band.samples.max() < c / np.sqrt(3.03)
    dry_edge = velocity_from_soil(Soil(0.04, texture="loam", model="topp"), 250e6).velocity
    assert band.velocity_p95 < dry_edge
