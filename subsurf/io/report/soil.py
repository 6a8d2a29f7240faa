"""The site-wide soil of the planning report: one median soil of the survey with a spread per input."""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

__all__ = ["SiteSoil", "site_soil"]


@dataclass(frozen=True)
class SiteSoil:
    """The site-wide soil used for the site-level charts, with its spread and sources."""

    soil: object  # subsurf.soil.Soil
    mapping: dict  # Soil field -> SI value (plus texture/model)
    sd: dict  # Soil field -> standard deviation (SI)
    facts: list  # rows for the report: quantity, value, sd, unit, source


def site_soil(survey) -> SiteSoil:
    """Summarise a survey's soil inputs into one site-wide Soil with a spread per input.

    Each quantity is taken from the most local information the survey gives: the median
    of the point samples when there are samples of it, else the median over soil zones,
    else the median of a raster, else the survey default; quantities given nowhere are
    left to the texture preset (or the soil model's documented default).  The spread is
    the standard deviation across the site combined in quadrature with the stated
    measurement standard deviation (the largest one given), or the default's standard
    deviation.  The feasibility maps keep the full spatial detail; this summary feeds the
    site-level charts only.
    """
    from ...ground import Soil, texture_preset
    from ...site.survey import QUANTITIES

    mapping: dict = {"model": survey.soil_model}
    if survey.texture:
        mapping["texture"] = survey.texture
    sd: dict = {}
    facts: list = []
    for q, spec in QUANTITIES.items():
        vals, sds, source = None, [], ""
        pooled = [s.values[q] for s in survey.samples if q in s.values]
        if pooled:
            vals = np.concatenate([np.asarray(v, float) for v in pooled])
            sds = [np.asarray(s.sd[q], float) for s in survey.samples if q in s.sd]
            files = ", ".join(sorted({Path(s.path).name for s in survey.samples if q in s.values}))
            source = f"median of {vals.size} point samples ({files})"
        else:
            zv = [v[q] for z in survey.zones for v in z.values if q in v]
            if zv:
                vals = np.asarray(zv, float)
                sds = [np.asarray([d[q] for z in survey.zones for d in z.sd if q in d], float)]
                source = f"median over {vals.size} soil zones"
            else:
                rv = [r for r in survey.rasters if r.quantity == q]
                if rv:
                    vals = np.concatenate([np.asarray(r.values, float).ravel() for r in rv])
                    vals = vals[np.isfinite(vals)]
                    sds = [np.asarray([r.sd for r in rv], float)]
                    source = f"median of raster {Path(rv[0].path).name}"
                elif q in survey.defaults:
                    vals = np.asarray([survey.defaults[q]], float)
                    if q in survey.default_sd:
                        sds = [np.asarray([survey.default_sd[q]], float)]
                    source = "survey default"
        if vals is None or vals.size == 0:
            continue
        value = float(np.median(vals))
        site_sd = float(np.std(vals, ddof=1)) if vals.size > 1 else 0.0
        meas = max((float(np.max(s)) for s in sds if np.size(s)), default=0.0)
        spread = math.hypot(site_sd, meas)
        mapping[spec.soil_field] = value
        if spread > 0:
            sd[spec.soil_field] = spread
        facts.append({"quantity": q, "value": value, "sd": spread, "source": source,
                      "min": float(vals.min()), "max": float(vals.max())})
    if survey.texture:
        preset = texture_preset(survey.texture)
        for key, q in (("sand", "sand"), ("clay", "clay"), ("bulk_density", "bulk_density")):
            if key not in mapping and key in preset:
                facts.append({"quantity": q, "value": float(preset[key]), "sd": 0.0,
                              "source": f"texture preset '{survey.texture}': {preset.get('source', '')}",
                              "min": float(preset[key]), "max": float(preset[key])})
    soil = Soil.from_mapping(dict(mapping), source=f"{survey.path.name} (site median)")
    return SiteSoil(soil=soil, mapping=mapping, sd=sd, facts=facts)
