"""Which antennas to bring, decided from the feasibility maps' own area statistics.

The report's headline comes from here, not from a site-median soil: for each scenario the
antenna is chosen from the area of the site where each antenna *reaches* the target (the one
definition of :mod:`subsurf.detection.verdicts`: margin ≥ the reach threshold below the blind
zone), then the scenarios are combined into one sentence that names the worst one.

Rule per scenario (the rule of ``subsurf choose`` applied to areas):

1. antennas that reach the target over the whole site (every cell inside the outline):
   the one with the finest vertical resolution (median over the site) — on a uniform site
   this is exactly ``choose``'s answer;
2. else the antenna that reaches the largest share of the site (ties: the larger mean
   probability of reaching, then the finer resolution) — it covers only part of the site,
   and the sentence says how much;
3. else (no antenna reaches any cell) none.

Across scenarios, the antenna chosen in most scenarios is the one to bring (ties: the
finer resolution); each scenario that needs another one adds "for the <scenario> scenario
also bring <antenna>".  The worst scenario is the one where the antenna to bring reaches
the smallest share of the site (ties: the smaller mean probability).
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..detection.verdicts import REACHES_MARGIN_DB

__all__ = ["ScenarioChoice", "Decision", "decide", "FULL_COVER_PCT"]

#: Share of the site (%) at or above which an antenna counts as reaching "the whole site".
#: Every cell: a 1 % gap is still ground where the target would be missed.
FULL_COVER_PCT = 100.0 - 1e-9


@dataclass(frozen=True)
class ScenarioChoice:
    """The antenna chosen for one scenario with the map statistics that chose it."""

    scenario: str
    antenna: str | None
    reach_pct: float  # share of the site where it reaches the target (margin >= threshold)
    expected_reach_pct: float  # mean probability of reaching over the site
    whole_site: bool  # it reaches every cell of the site
    reason: str


@dataclass(frozen=True)
class Decision:
    """What to bring, from the map statistics of every scenario."""

    bring: str | None
    also: dict = field(default_factory=dict)  # scenario -> the further antenna that scenario needs
    worst_scenario: str | None = None
    per_scenario: list = field(default_factory=list)  # ScenarioChoice, in the survey's order
    headline: str = ""
    reaches_margin_db: float = REACHES_MARGIN_DB

    def as_dict(self) -> dict:
        return {"bring": self.bring, "also": dict(self.also), "worst_scenario": self.worst_scenario,
                "headline": self.headline, "reaches_margin_db": self.reaches_margin_db,
                "per_scenario": [vars(c).copy() for c in self.per_scenario]}


def _choose_one(scenario: str, rows: list[dict], reaches_db: float, area: str = "site") -> ScenarioChoice:
    resolution = {r["antenna"]: r["median_vertical_resolution_m"] for r in rows}
    t = f"{reaches_db:g} dB"
    whole = [r for r in rows if r["reach_pct"] >= FULL_COVER_PCT]
    if whole:
        best = min(whole, key=lambda r: (resolution[r["antenna"]], -r["centre_frequency_mhz"]))
        return ScenarioChoice(scenario, best["antenna"], best["reach_pct"], best["expected_reach_pct"], True,
                              f"the finest vertical resolution ({resolution[best['antenna']]:.3g} m) among the "
                              f"antennas that reach the target with at least {t} margin over the whole {area}")
    best = max(rows, key=lambda r: (r["reach_pct"], r["expected_reach_pct"], -resolution[r["antenna"]]))
    if best["reach_pct"] <= 0.0:
        return ScenarioChoice(scenario, None, 0.0, best["expected_reach_pct"], False,
                              f"no antenna reaches the target with {t} margin anywhere on the {area}")
    return ScenarioChoice(scenario, best["antenna"], best["reach_pct"], best["expected_reach_pct"], False,
                          f"no antenna reaches the whole {area} with {t} margin; this one reaches the largest "
                          f"share ({best['reach_pct']:.0f} %)")


def decide(rows: list[dict], *, scenarios: list[str] | None = None,
           reaches_db: float = REACHES_MARGIN_DB, area: str = "site") -> Decision:
    """The antennas to bring, from the map's summary rows.

    Parameters
    ----------
    rows : list of dict
        :func:`subsurf.site.maps.summary_rows`: per scenario and antenna ``reach_pct``,
        ``expected_reach_pct``, ``centre_frequency_mhz`` and ``median_vertical_resolution_m``
        (the vertical resolution at the target, the criterion ``choose`` ranks by).
    scenarios : list of str, optional
        Scenario order (default: the order of ``rows``).
    reaches_db : float
        The reach threshold the rows' ``reach_pct`` was counted with (the maps'
        ``reaches_margin_db``); it only words the sentences and is recorded in the Decision.
    area : str
        What the rows cover, for the sentences: "site", or "zone" for one soil zone's cells.
    """
    order = scenarios or list(dict.fromkeys(r["scenario"] for r in rows))
    choices = [_choose_one(s, [r for r in rows if r["scenario"] == s], reaches_db, area) for s in order]
    # finer resolution breaks ties across scenarios: the median over every scenario's rows
    import numpy as np

    resolution_m = {a: float(np.median([r["median_vertical_resolution_m"] for r in rows if r["antenna"] == a]))
                    for a in dict.fromkeys(r["antenna"] for r in rows)}
    named = [c.antenna for c in choices if c.antenna is not None]
    if not named:
        return Decision(None, {}, order[0] if len(order) == 1 else None, choices,
                        f"no listed antenna reaches the target with {reaches_db:g} dB margin anywhere on "
                        f"the {area}, in any scenario", reaches_db)
    bring = max(dict.fromkeys(named), key=lambda a: (named.count(a), -resolution_m[a]))
    also = {c.scenario: c.antenna for c in choices if c.antenna not in (None, bring)}
    by_name = {(r["scenario"], r["antenna"]): r for r in rows}
    worst = min(order, key=lambda s: (by_name[(s, bring)]["reach_pct"], by_name[(s, bring)]["expected_reach_pct"]))
    return Decision(bring, also, worst, choices, _headline(bring, also, worst, choices, by_name, reaches_db, area),
                    reaches_db)


def _headline(bring, also, worst, choices, by_name, reaches_db, area="site") -> str:
    t = f"margin ≥ {reaches_db:g} dB"
    n = len(choices)
    parts = [f"bring {bring}"]
    parts += [f"for the {s} scenario also {a}" for s, a in also.items()]
    text = "; ".join(parts)
    w = by_name[(worst, bring)]
    if n == 1:
        c = choices[0]
        cover = f"the whole {area}" if c.whole_site else f"{c.reach_pct:.0f} % of the {area}"
        return f"{text}: it reaches the target ({t}) over {cover}"
    if all(c.whole_site and c.antenna == bring for c in choices):
        return f"{text}: it reaches the target ({t}) over the whole {area} in every scenario"
    tail = f"worst scenario: {worst}, where {bring} reaches {w['reach_pct']:.0f} % of the {area}"
    if worst in also:
        tail += f" and {also[worst]} {by_name[(worst, also[worst])]['reach_pct']:.0f} %"
    return f"{text} ({tail}; {t})"
