"""The reach threshold's default and allowed range, without importing numpy.

:mod:`subsurf.detection.verdicts` owns the one definition of "reaches" and re-exports these
two numbers; they live here, in a module with no imports, so that the command line can put
them in ``--help`` text at start-up (``subsurf --help`` imports no numpy; see
``tests/cli/test_cli_startup.py``).
"""

from __future__ import annotations

__all__ = ["REACHES_MARGIN_DB", "REACH_MARGIN_RANGE_DB"]

#: Margin (dB) at or above which a target "reaches"; between 0 and this it is "marginal".
#: 6 dB is a factor of two in received amplitude: our allowance for the usual
#: uncertainty in ground conductivity and target contrast (engineering judgement,
#: in line with common practice of demanding a few dB of headroom in link budgets).
#: The default, defined here only; a run may set another threshold (``--reach-margin`` on
#: choose, setup, map, report, region and demo; ``[target] reach_margin`` in a survey file),
#: checked by :func:`check_reach_margin`, and every output states the one it used.
REACHES_MARGIN_DB = 6.0

#: Allowed range of a configured threshold (dB, inclusive).  Our limits, stated: below 0 dB
#: "reaches" would include targets whose echo is weaker than the system can detect, and above
#: 40 dB (a factor of 100 in amplitude) the threshold exceeds any uncertainty allowance and
#: approaches the whole dynamic range of a typical system (about 100-160 dB, from memory).
REACH_MARGIN_RANGE_DB = (0.0, 40.0)
