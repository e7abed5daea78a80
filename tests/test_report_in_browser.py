"""The HTML report opened in a real browser: Debian's headless Chromium driven by Selenium.

The page must show every table and every plot (each image decoded by the browser, so
naturalWidth > 0), log no console error, and leave a screenshot for the CI artefacts. The
hostile-name suite of test_report.py is used, so an escaped `<script>` name that ran would
show up here as well.
"""

from __future__ import annotations

import os
import shutil
from pathlib import Path

import pytest
from test_report import stored_suite

from harness.api import analyse_store
from harness.cli import main
from harness.report.documents.suite_tables import all_tables

ROOT = Path(__file__).resolve().parents[1]
# git ignores this folder; CI keeps what lands in it (.ci/run prints its path)
ARTEFACTS = Path(os.environ.get("HEEDFUL_ARTEFACTS", ROOT / "artefacts"))
BROWSER_NAMES = ("chromium", "chromium-browser")
DRIVER_NAMES = ("chromedriver",)


def first_found(names: tuple[str, ...]) -> str | None:
    return next((found for name in names if (found := shutil.which(name))), None)


@pytest.fixture(scope="module")
def browser():
    """A headless Chromium session; skipped only off CI when Chromium is not installed."""
    binary, driver_path = first_found(BROWSER_NAMES), first_found(DRIVER_NAMES)
    if binary is None or driver_path is None:
        if os.environ.get("CI") == "true":
            pytest.fail("chromium and chromedriver are required under CI (.ci/services)")
        pytest.skip(
            "chromium or chromedriver not installed on this machine (apt: chromium, "
            "chromium-driver); CI always has them"
        )
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service

    options = webdriver.ChromeOptions()
    options.binary_location = binary
    for argument in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage"):
        options.add_argument(argument)
    options.add_argument("--window-size=1280,1000")
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    driver = webdriver.Chrome(service=Service(executable_path=driver_path), options=options)
    try:
        yield driver
    finally:
        driver.quit()


@pytest.mark.slow
def test_report_page_shows_every_table_and_plot_without_console_errors(tmp_path: Path, browser):
    suite, store_path = stored_suite(tmp_path, attention_extras=True)
    out = tmp_path / "report"
    assert main(["report", suite, "--out", str(out), "--store", str(store_path)]) == 0
    expected_tables = len(all_tables(analyse_store(store_path, suite)))
    expected_images = len(list((out / "plots").glob("*.png")))
    assert expected_tables > 0 and expected_images > 0

    browser.get((out / "report.html").resolve().as_uri())
    # every image decoded (naturalWidth > 0 only once the PNG data was read)
    images = browser.execute_async_script(
        """
        const done = arguments[arguments.length - 1];
        const images = Array.from(document.images);
        Promise.all(images.map((image) => image.decode().then(() => true, () => false)))
          .then((decoded) => done(images.map((image, index) => ({
            alt: image.alt, decoded: decoded[index], width: image.naturalWidth,
            shown: image.getBoundingClientRect().width}))));
        """
    )
    assert len(images) == expected_images
    for image in images:
        assert image["decoded"] and image["width"] > 0 and image["shown"] > 0, image
    tables = browser.execute_script(
        """return Array.from(document.querySelectorAll('table')).map((table) => ({
            rows: table.rows.length, height: table.getBoundingClientRect().height}));"""
    )
    # every table of the page's source is in the document, and every table of the report
    source = (out / "report.html").read_text(encoding="utf-8")
    assert len(tables) == source.count("<table") and len(tables) >= expected_tables
    for table in tables:
        assert table["rows"] >= 2 and table["height"] > 0, table  # a header and a body row

    severe = [entry for entry in browser.get_log("browser") if entry["level"] == "SEVERE"]
    assert severe == []

    height = browser.execute_script("return document.documentElement.scrollHeight")
    browser.set_window_size(1280, min(int(height) + 100, 16000))
    ARTEFACTS.mkdir(parents=True, exist_ok=True)
    screenshot = ARTEFACTS / "report-in-browser.png"
    assert browser.save_screenshot(str(screenshot))
    assert screenshot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
