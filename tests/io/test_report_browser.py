"""The planning report opened in a real browser: headless Chromium driven by selenium.

Chromium is Debian's ``chromium`` package with its ``chromedriver``; nothing is
downloaded (selenium is given both paths, so its driver manager never runs).  The page
is opened from a ``file://`` URL with the network-quiet flags; the test checks that
every image decoded (non-zero natural size), that the browser console logged no
errors, and that the key sections and numbers are on the page.  A screenshot is saved
in the test's temporary folder.  Where Chromium or its driver is absent the test is
skipped with the reason printed.
"""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pytest

pytestmark = pytest.mark.browser

CHROMIUM_FLAGS = [
    "--headless=new", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
    "--disable-default-apps", "--disable-extensions", "--disable-dev-shm-usage",
    "--hide-scrollbars", "--window-size=1280,1000",
]


def _find(*names):
    for n in names:
        p = shutil.which(n) or (n if Path(n).is_file() else None)
        if p:
            return p
    return None


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    chromium = _find("chromium", "/usr/bin/chromium", "chromium-browser")
    driver_path = _find("chromedriver", "/usr/bin/chromedriver", "/usr/lib/chromium/chromedriver")
    if not chromium or not driver_path:
        reason = ("headless Chromium is not installed (apt-get install chromium chromium-driver); "
                  "the browser test cannot run")
        print("SKIP:", reason)
        pytest.skip(reason)
    try:
        from selenium import webdriver
        from selenium.webdriver.chrome.service import Service
    except ImportError:
        reason = "selenium is not installed (pip install -e '.[test]'); the browser test cannot run"
        print("SKIP:", reason)
        pytest.skip(reason)
    opts = webdriver.ChromeOptions()
    opts.binary_location = chromium
    for f in CHROMIUM_FLAGS:
        opts.add_argument(f)
    opts.add_argument(f"--user-data-dir={tmp_path_factory.mktemp('chromium-profile')}")
    opts.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    drv = webdriver.Chrome(service=Service(executable_path=driver_path), options=opts)
    try:
        yield drv
    finally:
        drv.quit()


@pytest.fixture(scope="module")
def opened_report(browser, tmp_path_factory, report_survey):
    """Write the report of the test survey and load it in the browser (once per module)."""
    from subsurf.io.report import make_report

    out = tmp_path_factory.mktemp("browser") / "report.html"
    summary = make_report(report_survey, out, quiet=True)  # with the feasibility maps
    browser.get(out.resolve().as_uri())
    browser.execute_script("return document.readyState")
    shot = out.with_name("report-first-screen.png")
    browser.save_screenshot(str(shot))
    print("screenshot:", shot)
    logs = browser.get_log("browser")
    return {"summary": summary, "path": out, "screenshot": shot, "logs": logs}


def test_every_image_loaded(browser, opened_report):
    """Every <img> decoded with a non-zero natural size."""
    sizes = browser.execute_script(
        "return Array.from(document.images).map(i => [i.alt, i.complete, i.naturalWidth, i.naturalHeight]);")
    assert len(sizes) >= 7, sizes  # site, ground, reach, depth chart and three map figures
    bad = [s for s in sizes if not (s[1] and s[2] > 0 and s[3] > 0)]
    assert not bad, bad


def test_no_console_errors(opened_report):
    """The browser console logged no error while loading the page."""
    errors = [e for e in opened_report["logs"] if e.get("level") == "SEVERE"]
    assert not errors, errors


def test_no_network_resources(browser, opened_report):
    """Nothing on the page was fetched from anywhere but the file itself."""
    urls = browser.execute_script(
        "return performance.getEntriesByType('resource').map(e => e.name);")
    assert urls == [], urls


def test_key_sections_and_numbers_present(browser, opened_report):
    """Section headings, the recommendation, the target depth and the caution are on the page."""
    text = browser.find_element("tag name", "body").text
    for heading in ("At a glance", "Site and inputs", "What the radar wave sees", "How deep can the target be seen",
                    "Antenna ranking and recommendation", "Acquisition settings", "Feasibility maps and scenarios",
                    "Scenario and antenna comparison", "Travel time to depth",
                    "Assumptions, validity and warnings", "References", "Safety"):
        assert heading in text, heading
    s = opened_report["summary"]
    assert f"{s['target']['depth_m']:.2f} m" in text
    for row in s["ranking"]:
        assert row["antenna"] in text
        assert f"{row['max_depth_m']:.3g}" in text
    assert "not locations of buried objects" in text
    assert re.search(r"licens", text)
    assert f"{s['velocity_m_per_ns']:.3f} m/ns" in text


def test_screenshot_saved(opened_report):
    """A screenshot of the first screen was written in the test's folder."""
    shot = opened_report["screenshot"]
    assert shot.is_file() and shot.stat().st_size > 10_000
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.fixture(scope="module")
def report_survey(tmp_path_factory):
    from report_support import write_test_survey

    return write_test_survey(tmp_path_factory.mktemp("survey"))
