"""Site calibration against profiles modelled with empymod (layered-earth EM modeller, not subsurf's code).

The medium: a lossy ground of ε' = 9, σ = 10 mS/m holding 5 cm layers of ε' 9 × (1 ± 3 %)
from 0.3 m to 4 m, antennas inside it (an x-directed electric dipole pair 0.3 m apart), a
250 MHz Ricker pulse.  The air–ground surface is left out: with a bare point dipole on
the surface, reflected energy returns partly through the lateral wave in the air, and the
envelope then decays more slowly than the ground's α (a shielded antenna rejects it).
In this model the spreading-corrected envelope follows the plane-wave α only below
about 2 m (fitted noise-free over 1–3.9 m it gives 3.2 dB/m, over 2–3.9 m 5.3 dB/m,
against 5.45 dB/m).  A likely cause, not settled: with empymod's default digital linear
filter a single thin layer's reflection carries a tail 18–30 dB below it for ~50 ns
(the tail changes with the filter and is absent with adaptive quadrature), and in a
dense stack the tails of the strong shallow reflections add up.  Single thin layers
give 3.5, 5.0, 5.3, 5.4, 5.4 dB/m per half metre from 0.5 to 3.5 m.  So the decay fit
starts at 2 m, and the noise is set so that the reflections sink below it at 3.5 m (over
2–3 m the layerings' speckle leaves α uncertain by ±1.2 dB/m, which the fit's standard
error reports).  Eight noise seeds give α 5.31–5.62 dB/m and penetrations within 2 %.
"""

import numpy as np
import pytest
from scipy.constants import epsilon_0, mu_0
from scipy.ndimage import uniform_filter1d
from scipy.signal import hilbert

from subsurf.interpretation.site_calibration import calibrate_profile
from subsurf.interpretation.trace_profile import TraceProfile

empymod = pytest.importorskip("empymod")

EPS, SIG, FC, TD, SEP = 9.0, 0.01, 250e6, 10e-9, 0.3
DF, NF, KEEP = 2.5e6, 320, 256


def _alpha_beta(freq):
    """Textbook α, β of a lossy dielectric (e.g. Balanis 2012, eq. 4-28)."""
    w = 2 * np.pi * freq
    e = EPS * epsilon_0
    root = np.sqrt(1 + (SIG / (w * e)) ** 2)
    return w * np.sqrt(mu_0 * e / 2 * (root - 1)), w * np.sqrt(mu_0 * e / 2 * (root + 1))


def model_traces():
    """Eight traces (laterally different layerings) of reflections only, and the sample interval."""
    f = np.arange(1, NF + 1) * DF
    depth = 0.3 + 0.05 * np.arange(75)

    def response(eps_layers):
        ep = [EPS, *eps_layers]
        return np.asarray(empymod.dipole(src=[0, 0, 0], rec=[SEP, 0, 0], depth=depth, res=[1 / SIG] * (depth.size + 1),
                                         freqtime=f, epermH=ep, epermV=ep, ab=11, xdirect=True, verb=0))

    rng = np.random.default_rng(7)
    background = response(np.full(depth.size, EPS))
    wavelet = f**2 * np.exp(-(f / FC) ** 2) * np.exp(-2j * np.pi * f * TD)  # Ricker, delayed by TD
    traces = []
    for _ in range(8):
        e = EPS * (1 + 0.03 * rng.standard_normal(depth.size))
        e[-1] = EPS
        spec = (response(e) - background) * wavelet  # reflections only: the direct wave is the background's
        traces.append(np.fft.irfft(np.r_[0, spec], n=2 * NF)[:KEEP])
    traces = np.array(traces)
    return traces / np.abs(traces).max(), 1 / (2 * NF * DF)


@pytest.fixture(scope="module")
def modelled():
    return model_traces()


def test_empymod_attenuation_and_penetration(modelled):
    """α within 15 % of the medium's at 250 MHz; penetration within 10 % of where the reflections sink below the noise."""
    clean, dt = modelled
    t = np.arange(KEEP) * dt
    alpha, beta = _alpha_beta(FC)
    v = 2 * np.pi * FC / beta
    # noise: the noise-free mean envelope power at 3.5 m equals the added noise's envelope power 2σ²
    smooth_n = int(round(2 / (FC * dt))) | 1
    clean_power = uniform_filter1d((np.abs(hilbert(clean, N=4 * KEEP, axis=-1)[:, :KEEP]) ** 2).mean(0), smooth_n)
    tau3 = 2 * np.hypot(3.5, SEP / 2) / v + TD
    sigma_n = np.sqrt(np.interp(tau3, t, clean_power) / 2)
    rng = np.random.default_rng(11)
    noisy = np.repeat(clean, 6, axis=0) + sigma_n * rng.standard_normal((clean.shape[0] * 6, KEEP))
    cal = calibrate_profile(TraceProfile(noisy, dt), centre_freq_hz=FC, separation_m=SEP, velocity=v,
                            time_zero_s=TD, fit_from_m=2.0)
    # reference: last time the noise-free reflections are at or above the noise (signal power = noise power)
    above = np.flatnonzero((clean_power >= 2 * sigma_n**2) & (t < 0.9 * t[-1]))
    ref_depth = np.sqrt((v * (t[above[-1]] - TD) / 2) ** 2 - (SEP / 2) ** 2)
    assert cal.attenuation_db_per_m == pytest.approx(alpha * 20 / np.log(10), rel=0.15)
    assert cal.penetration_m == pytest.approx(ref_depth, rel=0.10)
