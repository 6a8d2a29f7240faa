"""The self-contained HTML planning report of a survey file.

:mod:`.content` gathers what the report shows (a plain dictionary in SI units, from the
library's layers), :mod:`.sections` turns it into template contexts (formatted cells,
figures from :mod:`subsurf.io.fig_report`), :mod:`.render` fills the jinja2 templates in
``templates/`` (autoescaped) and writes the page, its CSV tables and JSON summary
atomically; :mod:`.build` runs the maps first.  Fixed wording is in :mod:`.texts`.
"""

from __future__ import annotations

from .build import make_report
from .content import REPORT_FREQS_HZ, collect
from .render import render_html, report_tables, summary_payload, write_report
from .soil import SiteSoil, site_soil
from .texts import REFERENCES

__all__ = [
    "SiteSoil",
    "site_soil",
    "collect",
    "render_html",
    "write_report",
    "make_report",
    "summary_payload",
    "report_tables",
    "REPORT_FREQS_HZ",
    "REFERENCES",
]
