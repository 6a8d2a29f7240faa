"""Site calibration from a test profile: fits, closed forms and synthetic profiles of known Q, α and noise."""

import numpy as np
import pytest
from scipy.constants import c, epsilon_0, mu_0

from subsurf.errors import InputError
from subsurf.interpretation.calibrated_ground import CalibratedGround, effective_medium
from subsurf.interpretation.decay_fits import constant_q_centroid, robust_line_fit
from subsurf.interpretation.site_calibration import calibrate_profile, effective_performance
from subsurf.interpretation.trace_profile import TraceProfile, envelope_power, noise_floor, pick_time_zero

NP_TO_DB = 20.0 / np.log(10.0)


def textbook_alpha_beta(eps_r, sigma, freq):
    """α, β of a lossy dielectric, the closed form of e.g. Balanis (2012) eq. 4-28 (not subsurf's code)."""
    w = 2 * np.pi * freq
    e = eps_r * epsilon_0
    root = np.sqrt(1 + (sigma / (w * e)) ** 2)
    return w * np.sqrt(mu_0 * e / 2 * (root - 1)), w * np.sqrt(mu_0 * e / 2 * (root + 1))


def constant_q_profile(*, q, n_traces=300, n_samples=1024, dt=0.1e-9, fc=250e6, v=0.1e9, t0=8e-9, sep=0.0,
                       noise=3e-4, direct=1.0, seed=1):
    """Convolutional synthetic written out here: Ricker × e^(−πfτ/Q) × e^(−j2πf(τ+t0)) / (2d) per reflector."""
    rng = np.random.default_rng(seed)
    nfft = 2 * n_samples
    f = np.fft.rfftfreq(nfft, d=dt)
    ricker = f**2 * np.exp(-(f / fc) ** 2)
    d = np.arange(0.3, 4.0, 0.02)
    tau = 2 * np.sqrt(d**2 + (sep / 2) ** 2) / v
    g = np.exp(-np.pi * f * tau[:, None] / q - 2j * np.pi * f * (tau[:, None] + t0)) / (2 * d[:, None])
    spec = (rng.standard_normal((n_traces, d.size)) * 0.02) @ g * ricker
    spec += direct * ricker * np.exp(-2j * np.pi * f * (t0 + sep / c))
    tr = np.fft.irfft(spec, n=nfft, axis=-1)[:, :n_samples]
    tr /= np.abs(tr).max()
    return tr + noise * rng.standard_normal(tr.shape), dt


# --- closed forms and reference libraries ---------------------------------------------------

def test_constant_q_centroid_matches_numerical_integration():
    """Quan & Harris (1997, eq. 10): a Gaussian spectrum tilted by exp(−2πft/Q) moves by 2πσ²t/Q (numerical check)."""
    f = np.linspace(0, 2e9, 200_001)
    f0, sd, q = 500e6, 60e6, 20.0  # ≥ 7 sd above 0 Hz: the one-sided integral is the full Gaussian
    for t in (0.0, 20e-9, 60e-9):
        w = np.exp(-((f - f0) ** 2) / (2 * sd**2)) * np.exp(-2 * np.pi * f * t / q)
        numeric = np.trapezoid(f * w, f) / np.trapezoid(w, f)
        assert constant_q_centroid(f0, sd**2, t, q) == pytest.approx(numeric, rel=1e-9)


def test_constant_q_centroid_is_quan_harris_amplitude_form():
    """The power-spectrum form equals Quan & Harris's amplitude form f_S − σ_A²·πt/Q with σ_A² = 2σ²."""
    sd_power = 70e6
    assert constant_q_centroid(250e6, sd_power**2, 40e-9, 30.0) == pytest.approx(
        250e6 - 2 * sd_power**2 * np.pi * 40e-9 / 30.0, rel=1e-12)


def test_robust_line_fit_matches_statsmodels_huber():
    """Huber IRLS estimate and H1 covariance agree with statsmodels RLM (HuberT 1.345, MAD scale)."""
    sm = pytest.importorskip("statsmodels.api")
    rng = np.random.default_rng(3)
    x = np.linspace(0, 10, 80)
    y = 2 - 0.7 * x + 0.5 * rng.standard_t(3, 80)
    y[5] += 8.0
    ref = sm.RLM(y, sm.add_constant(x), M=sm.robust.norms.HuberT(t=1.345)).fit(cov="H1", conv="coefs", tol=1e-12,
                                                                             maxiter=200)
    fit = robust_line_fit(x, y, correlated=False)
    assert [fit.intercept, fit.slope] == pytest.approx(ref.params, rel=1e-7)
    assert [fit.intercept_se, fit.slope_se] == pytest.approx(ref.bse, rel=1e-6)


def test_effective_medium_reproduces_alpha_and_velocity():
    """ε', σ from (α, v) give back α and β in the textbook closed form (Balanis 2012)."""
    alpha, v, f = 0.6, 0.09e9, 250e6
    eps, sigma = effective_medium(alpha, v, f)
    a, b = textbook_alpha_beta(eps, sigma, f)
    assert a == pytest.approx(alpha, rel=1e-10)
    assert 2 * np.pi * f / b == pytest.approx(v, rel=1e-10)


def test_effective_medium_refuses_permittivity_below_one():
    """An attenuation too large for the velocity has no physical ground (ε' < 1)."""
    with pytest.raises(InputError, match="too large"):
        effective_medium(50.0, 0.29e9, 100e6)


def test_effective_performance_puts_max_depth_at_penetration():
    """The one depth solver with the effective performance returns the observed penetration (invariant)."""
    from subsurf.detection import Target, max_depth

    perf, se = effective_performance(2.3, 4.0, 0.1e9, 250e6, penetration_se_m=0.1, attenuation_se_db_per_m=0.3,
                                     gain=10 ** 0.4, reference_reflection=0.1)
    eps, sigma = effective_medium(4.0 / NP_TO_DB, 0.1e9, 250e6)
    assert max_depth(eps, sigma, 250e6, perf, target=Target("planar", reflection=0.1), gain=10 ** 0.4) == \
        pytest.approx(2.3, rel=1e-9)
    assert se == pytest.approx(np.hypot((20 / (2.3 * np.log(10)) + 8.0) * 0.1, 2 * 2.3 * 0.3), rel=1e-12)


def test_calibrated_ground_slope_from_q():
    """α(f) = α_ref + π(f − f_ref)/(Q·v) in Np/m (constant-Q slope, Turner & Siggins 1994)."""
    g = CalibratedGround(5.0, 200e6, NP_TO_DB * np.pi / (25 * 0.1e9), 0.1e9, (100e6, 400e6))
    assert g.attenuation_at(300e6) == pytest.approx(5.0 + NP_TO_DB * np.pi * 100e6 / (25 * 0.1e9))
    eps, sigma = g.electrical(np.array([300e6]))
    a, _ = textbook_alpha_beta(eps.real, sigma, 300e6)
    assert a[0] * NP_TO_DB == pytest.approx(g.attenuation_at(300e6), rel=1e-9)


# --- envelope measurements --------------------------------------------------------------------

def test_noise_floor_of_gaussian_noise_is_two_sigma_squared():
    """E|s + jH[s]|² = 2σ² for zero-mean noise (analytic-signal theory, Gabor 1946)."""
    rng = np.random.default_rng(5)
    s = 0.3 * rng.standard_normal((200, 512))
    t = np.arange(512) * 1e-10
    nf = noise_floor(envelope_power(s), t, window="late", start_s=t[100], stop_s=t[-1] + 1e-10)
    assert nf.power == pytest.approx(2 * 0.09, rel=0.02)
    assert abs(nf.trend_db) < 0.3


def test_time_zero_from_direct_wave():
    """Time zero = direct-wave envelope peak − x/c recovers the synthetic's time zero to a fraction of a sample."""
    tr, dt = constant_q_profile(q=30.0, n_traces=40, t0=8e-9, sep=0.3)
    tz = pick_time_zero(envelope_power(tr), dt, 0.0, separation_m=0.3)
    assert tz.time_s == pytest.approx(8e-9, abs=0.3 * dt)


def test_q_star_recovered_from_constant_q_synthetic():
    """Q* from the centroid downshift of a seeded constant-Q convolutional synthetic is within 15 % of Q = 30."""
    tr, dt = constant_q_profile(q=30.0)
    cal = calibrate_profile(TraceProfile(tr, dt), centre_freq_hz=250e6, separation_m=0.0, velocity=0.1e9,
                            time_zero_s=8e-9)
    assert cal.q_star is not None and cal.q_star.value is not None
    assert cal.q_star.value == pytest.approx(30.0, rel=0.15)
    assert abs(cal.q_star.value - 30.0) < 3 * cal.q_star.se + 1.0


def test_attenuation_of_constant_q_synthetic_at_its_centroid():
    """The envelope decay gives α(f) = πf/(Qv) at the mean window centroid within 15 % (constant-Q theory)."""
    tr, dt = constant_q_profile(q=30.0)
    cal = calibrate_profile(TraceProfile(tr, dt), centre_freq_hz=250e6, separation_m=0.0, velocity=0.1e9,
                            time_zero_s=8e-9)
    expected = NP_TO_DB * np.pi * cal.reference_freq_hz / (30.0 * 0.1e9)
    assert cal.attenuation_db_per_m == pytest.approx(expected, rel=0.15)


def test_too_short_record_is_refused():
    """A record whose noise window starts before the fit can is refused with the reason."""
    tr, dt = constant_q_profile(q=30.0, n_traces=10, n_samples=128)
    with pytest.raises(InputError, match="shorter than the window"):
        calibrate_profile(TraceProfile(tr, dt), centre_freq_hz=250e6, separation_m=0.0, velocity=0.1e9,
                          time_zero_s=8e-9)


def test_all_zero_trace_is_refused():
    """An all-zero trace is named (trace number) and refused."""
    a = np.random.default_rng(0).standard_normal((5, 128))
    a[3] = 0
    with pytest.raises(InputError, match="trace 4"):
        TraceProfile(a, 1e-10)


def test_no_downshift_gives_a_q_lower_bound():
    """Without loss (Q = 10⁶) no Q* is claimed, only a lower bound; the signal outlasts the record (warned)."""
    from subsurf.errors import ModelRangeWarning

    tr, dt = constant_q_profile(q=1e6, noise=3e-5)
    with pytest.warns(ModelRangeWarning, match="still holds signal"):
        cal = calibrate_profile(TraceProfile(tr, dt), centre_freq_hz=250e6, separation_m=0.0, velocity=0.1e9,
                                time_zero_s=8e-9)
    assert cal.q_star is not None and cal.q_star.value is None
    assert cal.q_star.lower_bound is None or cal.q_star.lower_bound > 100.0
    assert cal.penetration_lower_bound


def test_model_predictions_attenuation_matches_textbook():
    """The side-by-side model attenuation is the textbook α of the model's ε, σ at the centre frequency."""
    from subsurf.interpretation.calibrated_ground import model_predictions

    def electrical(f):
        f = np.asarray(f, dtype=float)
        return np.full(f.shape, 9.0 + 0j), np.full(f.shape, 0.01)

    out = model_predictions(electrical, centre_freq_hz=250e6, performance_db=80.0, gain=2.0, reference_reflection=0.1)
    a, b = textbook_alpha_beta(9.0, 0.01, 250e6)
    assert out["attenuation_db_per_m"] == pytest.approx(a * NP_TO_DB, rel=1e-9)
    assert out["velocity_m_per_ns"] == pytest.approx(2 * np.pi * 250e6 / b * 1e-9, rel=1e-9)


def test_calibrated_attenuation_is_held_flat_below_the_measured_band():
    """Below the band the Q* line is not followed down towards zero loss.

    A constant-Q line measured at 120-320 MHz with Q* = 20 falls to 0.5 dB/m at 50 MHz and
    to 0 near 13 MHz, which let a 50 MHz antenna be planned to 118 m; conduction loss
    (alpha ~ sigma/2 sqrt(mu/eps), frequency independent: Annan 2009, from memory) keeps real
    grounds lossy there, so alpha is held at its band-edge value.  Inside and above the band
    the line dalpha/df = 8.686 pi / (Q* v) (Quan & Harris 1997 with alpha = pi f / (Q v)) holds.
    """
    import warnings

    import numpy as np

    from subsurf.interpretation.calibrated_ground import CalibratedGround

    v, q = 1.0e8, 20.0
    slope = 20 / np.log(10) * np.pi / (q * v)
    g = CalibratedGround(2.71, 215.5e6, slope, v, (120e6, 320e6))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        a = g.attenuation_at(np.array([10e6, 50e6, 120e6, 215.5e6, 320e6, 400e6]))
    edge = 2.71 + slope * (120e6 - 215.5e6)
    np.testing.assert_allclose(a[:3], edge, rtol=1e-12)
    np.testing.assert_allclose(a[3], 2.71, rtol=1e-12)
    np.testing.assert_allclose(a[4:], 2.71 + slope * (np.array([320e6, 400e6]) - 215.5e6), rtol=1e-12)
