"""A site calibration on the survey grid: the measured α(f) and velocity, anchored at a reference soil.

A calibration file (``subsurf calibrate``) measures the ground on one test line: α(f) at
the band centre with its Q* slope, the velocity, and the effective performance of the
antenna used.  On a map the soil varies from cell to cell, so the measurement is
*anchored*: at the reference soil (the site median of the survey's own soil inputs, as
mapped before scenarios) the ground is exactly the calibrated one, and elsewhere the
soil model's variation is kept as a ratio,

    α_cal(f, x) = α_meas(f) · α_model(f, x) / α_model(f, ref)
    v_cal(f, x) = v_meas · v_model(f, x) / v_model(f, ref)

(α_model includes the model's volume scattering, which the measured decay contains too).
A uniform site is therefore the calibrated ground everywhere, as ``choose --calibration``
uses it; a wetter scenario raises α by the factor the soil model gives.  The calibrated
(α, v) become (ε', σ_eff) through :func:`subsurf.interpretation.calibrated_ground.effective_medium`
and enter the one detection budget with no extra scattering term and no roughness factor
(both are in the measured decay and effective performance).  No file I/O here beyond
reading the calibration file through :mod:`subsurf.io.calibration_file`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

__all__ = ["GridCalibration", "load_grid_calibration", "reference_soil"]


@dataclass(frozen=True)
class GridCalibration:
    """A calibration file applied to a survey's soil model.

    Attributes
    ----------
    ground : subsurf.interpretation.calibrated_ground.CalibratedGround
        The measured α(f), v.
    record : dict
        The calibration file's content (human units).
    path : Path
        The calibration file.
    reference : dict of str -> float
        The anchor soil: survey quantity name -> SI value (site medians).
    texture, model : str or None, str
        The survey's texture preset and soil model (for the reference soil).
    replaced : list of str
        Antennas whose performance is the measured one (empty: the calibrated antenna is not mapped).
    """

    ground: object
    record: dict
    path: Path
    reference: dict
    texture: str | None
    model: str
    replaced: list = field(default_factory=list)

    def _alpha_beta(self, soil, freq_hz, eps, sigma):
        """Model α (Np/m, scattering included) and β (rad/m) of ``soil`` with (eps, sigma) at ``freq_hz``."""
        from ..detection.evaluate import soil_loss_terms
        from ..waves.propagation import _alpha_beta

        e = np.asarray(eps)
        alpha, beta = _alpha_beta(e.real, -e.imag, sigma, 2.0 * np.pi * np.asarray(freq_hz, dtype=float))
        extra, _ = soil_loss_terms(soil, freq_hz, e)
        return alpha + extra, beta

    def electrical(self, soil, freq_hz, eps, sigma):
        """Calibrated (eps, sigma_eff) at ``freq_hz`` for cells whose model gives (eps, sigma) from ``soil``.

        Parameters
        ----------
        soil : subsurf.ground.Soil
            The cells' soil (its scattering attenuation is part of the model α).
        freq_hz : array_like
            Frequencies, broadcasting against the soil fields as ``soil.electrical`` does.
        eps, sigma : ndarray
            ``soil.electrical(freq_hz)``.

        Returns
        -------
        (eps, sigma) : complex ndarray, ndarray
            Relative permittivity (real) and effective conductivity (S/m) of the calibrated ground.
        """
        from ..ground import Soil
        from ..interpretation.calibrated_ground import effective_medium
        from .feasibility import _chain_kwargs

        f = np.asarray(freq_hz, dtype=float)
        a_cell, b_cell = self._alpha_beta(soil, f, eps, sigma)
        ref = Soil(texture=self.texture, model=self.model, **_chain_kwargs(self.reference))
        eps_r, sig_r = ref.electrical(f)
        a_ref, b_ref = self._alpha_beta(ref, f, eps_r, sig_r)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio_a = np.where(a_ref > 0, a_cell / a_ref, 1.0)
        eps_g, sig_g = self.ground.electrical(f)  # the measured ground: α(f), v(f)
        a_g, b_g = _alpha_beta_plain(eps_g, sig_g, f)
        alpha = a_g * ratio_a
        velocity = 2.0 * np.pi * f / b_g * b_ref / b_cell
        # a scaled α may not exceed what any ground of the scaled velocity can have (ε' ≥ 1:
        # α ≤ β·√(1 − v²/c²)), the ceiling the measured ground itself keeps below its band
        from .. import _codata as constants

        ceiling = 0.999 * (2.0 * np.pi * f / velocity) * np.sqrt(np.clip(1.0 - (velocity / constants.c) ** 2, 0.0, None))
        alpha = np.minimum(alpha, ceiling)
        eps_c, sig_c = effective_medium(alpha, velocity, f)
        return eps_c.astype(complex), sig_c

    def describe(self) -> dict:
        """The calibration as the map's JSON and the report state it (human units, keys with units)."""
        from ..io.jsonstyle import soil_values_json

        rec = self.record
        att, pen, perf = rec["attenuation"], rec["penetration"], rec["effective_performance"]
        return {"file": str(self.path), "antenna": rec["antenna"]["name"],
                "attenuation_db_per_m": att["db_per_m"], "attenuation_se_db_per_m": att.get("se_db_per_m"),
                "reference_freq_mhz": att["reference_freq_mhz"], "q_star": rec["q_star"].get("value"),
                "q_star_se": rec["q_star"].get("se"), "velocity_m_per_ns": rec["velocity"]["m_per_ns"],
                "velocity_se_m_per_ns": rec["velocity"].get("se_m_per_ns"),
                "observed_penetration_m": pen["depth_m"], "observed_penetration_se_m": pen.get("se_m"),
                "effective_performance_single_trace_db": perf["single_trace_db"],
                "effective_performance_se_db": perf.get("se_db"),
                "catalogue_performance_db": rec["antenna"].get("catalogue_performance_db"),
                "performance_replaced_for": list(self.replaced),
                "anchor_soil": soil_values_json(self.reference), "note": self.note()}

    def note(self) -> str:
        """One line saying that (and how) the map is calibrated."""
        rec = self.record
        att, q = rec["attenuation"], rec["q_star"].get("value")
        text = (f"CALIBRATED to the site by {self.path.name}: attenuation {att['db_per_m']:.3g} dB/m at "
                f"{att['reference_freq_mhz']:.4g} MHz" + (f", Q* = {q:.3g}" if q is not None else ", no Q* (constant ε′, σ)")
                + f", velocity {rec['velocity']['m_per_ns']:.4f} m/ns measured on a test line, anchored at the "
                "site-median soil (the soil model only varies them from cell to cell)")
        perf = rec["effective_performance"]["single_trace_db"]
        if self.replaced:
            text += f"; {self.replaced[0]}: measured effective performance {perf:.1f} dB per trace"
        else:
            text += (f"; the calibrated antenna {rec['antenna']['name']} is not mapped, so every performance is "
                     "the catalogue's")
        return text


def _alpha_beta_plain(eps, sigma, freq_hz):
    from ..waves.propagation import _alpha_beta

    e = np.asarray(eps)
    return _alpha_beta(e.real, -e.imag, sigma, 2.0 * np.pi * np.asarray(freq_hz, dtype=float))


def reference_soil(values: dict, mask) -> dict:
    """Site medians (inside ``mask``) of the soil inputs on the grid: the calibration's anchor soil."""
    inside = np.asarray(mask, dtype=bool)
    out = {}
    for q, v in values.items():
        a = np.asarray(v, dtype=float)[inside]
        a = a[np.isfinite(a)]
        if a.size:
            out[q] = float(np.median(a))
    return out


def load_grid_calibration(path, survey, antennas, *, field_name: str | None = None):
    """Read and check a calibration file for ``survey`` (reference soil filled in later by the map).

    Parameters
    ----------
    path : str or Path
        The calibration file.
    survey : subsurf.site.survey.Survey
    antennas : list of Antenna
        The survey's antennas (catalogue figures).
    field_name : str, optional
        The survey key that named the file, for errors about the file itself ("[calibration] file").

    Returns
    -------
    (GridCalibration, list of Antenna)
        The calibration (empty reference) and the antennas with the calibrated one's
        performance replaced.
    """
    from ..errors import FileInputError
    from ..interpretation.calibrated_ground import (
        CalibratedGround,
        calibrated_antennas,
        check_calibrated_antenna,
    )
    from ..io.calibration_file import read_calibration
    from ..planning.antennas import load_catalogue

    p = Path(path)
    try:
        record = read_calibration(p)
    except FileInputError as exc:
        if field_name is not None and "file not found" in str(exc):
            raise FileInputError(survey.path, f"calibration file not found: {p}", field=field_name) from None
        raise
    catalogue = survey.catalogue.antennas if survey.catalogue is not None else load_catalogue(survey.catalogue_path)
    check_calibrated_antenna(record, catalogue, source=p)  # the survey's antennas, inline ones included
    ground = CalibratedGround.from_record(record, source=str(p))
    used, replaced = calibrated_antennas(antennas, record)
    return GridCalibration(ground=ground, record=record, path=p, reference={}, texture=survey.texture,
                           model=survey.soil_model, replaced=replaced), used
