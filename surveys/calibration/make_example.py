"""Write a small FICTIONAL test profile for `subsurf calibrate` (invented data, no real site).

    python surveys/calibration/make_example.py [OUT_DIR]     (default: this folder)

writes ``fictional_test_line.sgy`` (SEG-Y rev 1, IEEE floats, sample interval stored in
picoseconds: read it with ``--segy-time-unit ps``) and ``fictional_test_line.nc`` (the
same traces in subsurf's NetCDF profile layout).  The "Fernhollow Paddock test line" is
invented: 120 traces 5 cm apart over a loamy ground of velocity 0.1 m/ns, constant
Q = 25, a dense random layering and Gaussian noise, recorded with the catalogue's
illustrative ``midband-250`` antenna.  Deterministic (seeded); rerun to regenerate.

The model is convolutional, in the frequency domain: each reflector at two-way time τ
returns r·W(f)·e^(−j2πfτ)·e^(−πfτ/Q)·(1/(2d)) with the Kolsky–Futterman dispersion
τ(f) = τ·(1 − ln(f/f₀)/(πQ)), plus a direct air wave at x/c after time zero.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from scipy import constants


def synthetic_profile(*, n_traces=120, n_samples=1024, dt=0.1e-9, fc=250e6, velocity=0.1e9, q=25.0,
                      time_zero=8e-9, separation=0.28, noise=1e-3, reflector_spacing=0.02, max_depth=6.0,
                      reflectivity=0.02, direct=1.0, seed=0, first_reflector=0.3):
    """Traces (n_traces, n_samples) of a constant-Q layered ground; returns (amplitude, dt, first_sample)."""
    rng = np.random.default_rng(seed)
    nfft = 2 * n_samples
    f = np.fft.rfftfreq(nfft, d=dt)
    ricker = (2.0 / np.sqrt(np.pi)) * f**2 / fc**3 * np.exp(-(f / fc) ** 2)  # Ricker amplitude spectrum
    depths = np.arange(first_reflector, max_depth, reflector_spacing)
    tau = 2.0 * np.sqrt(depths**2 + (separation / 2) ** 2) / velocity  # two-way times after time zero
    fr = np.maximum(f, 1e6) / fc
    # per reflector (rows) and frequency: attenuation, dispersion and delay (shared by every trace)
    tau_f = tau[:, None] * (1.0 - np.log(fr)[None, :] / (np.pi * q))
    prop = np.exp(-np.pi * f[None, :] * tau[:, None] / q) * np.exp(-2j * np.pi * f[None, :] * (tau_f + time_zero))
    prop /= (2.0 * depths)[:, None]
    r = reflectivity * rng.standard_normal((n_traces, depths.size))
    r = 0.6 * r + 0.4 * np.roll(r, 1, axis=0)  # some lateral continuity
    spec = (r @ prop) * ricker
    spec += direct * ricker * np.exp(-2j * np.pi * f * (time_zero + separation / constants.c))
    traces = np.fft.irfft(spec, n=nfft, axis=-1)[:, :n_samples]
    traces /= np.abs(traces).max()  # direct wave peak ~ 1: noise and reflectivity are relative to it
    traces += noise * rng.standard_normal(traces.shape)
    return traces, dt, 0.0


def write_segy(path, traces, dt, *, spacing=0.05, unit_s=1e-12, stacks=4):
    """Write traces as SEG-Y rev 1 (IEEE float) with segyio; interval stored in ``unit_s`` units."""
    import segyio

    spec = segyio.spec()
    spec.format = 5
    spec.samples = list(range(traces.shape[1]))
    spec.tracecount = traces.shape[0]
    interval = int(round(dt / unit_s))
    with segyio.create(str(path), spec) as f:
        for i, tr in enumerate(traces):
            x = int(round(i * spacing * 1000))
            f.header[i] = {segyio.TraceField.TRACE_SAMPLE_INTERVAL: interval,
                           segyio.TraceField.TRACE_SAMPLE_COUNT: traces.shape[1],
                           segyio.TraceField.TraceIdentificationCode: 1,
                           segyio.TraceField.NSummedTraces: stacks,
                           segyio.TraceField.SourceGroupScalar: -1000,
                           segyio.TraceField.SourceX: x, segyio.TraceField.GroupX: x,
                           segyio.TraceField.TRACE_SEQUENCE_LINE: i + 1}
            f.trace[i] = tr.astype(np.float32)
        f.bin.update({segyio.BinField.Interval: interval, segyio.BinField.Samples: traces.shape[1],
                      segyio.BinField.Format: 5})


def write_netcdf(path, traces, dt, *, spacing=0.05, stacks=4):
    import xarray as xr

    ds = xr.Dataset(
        {"amplitude": (("trace", "sample"), traces.astype(np.float32), {"long_name": "recorded amplitude"})},
        coords={"twt": ("sample", np.arange(traces.shape[1]) * dt * 1e9, {"units": "ns",
                                                                          "long_name": "two-way time"}),
                "distance": ("trace", np.arange(traces.shape[0]) * spacing, {"units": "m"})},
        attrs={"title": "FICTIONAL test line (invented data)", "stacks": stacks})
    ds.to_netcdf(path)


def main(out_dir=None):
    out = Path(out_dir) if out_dir else Path(__file__).resolve().parent
    out.mkdir(parents=True, exist_ok=True)
    traces, dt, _ = synthetic_profile()
    write_segy(out / "fictional_test_line.sgy", traces, dt)
    write_netcdf(out / "fictional_test_line.nc", traces, dt)
    print(f"wrote {out / 'fictional_test_line.sgy'} and {out / 'fictional_test_line.nc'} (invented data)")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else None)
