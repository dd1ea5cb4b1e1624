"""Fixtures of the web-page tests: a real `molid serve` process on loopback, and headless Chromium.

The browser tests skip themselves, saying why, where Debian's chromium and chromium-driver
packages or the selenium package are missing; .ci/run installs all three.
"""

import shutil

import pytest

from tests.web.serving import Server


@pytest.fixture(scope="session")
def server():
    """Run a server on 127.0.0.1 with a 1 MB upload limit (the demo files are a few kB)."""
    pytest.importorskip("flask")
    running = Server("--max-upload", "1")
    yield running
    running.stop()


@pytest.fixture(scope="session")
def browser():
    """Headless Chromium driven by selenium; skipped, saying why, where either is missing."""
    webdriver = pytest.importorskip("selenium.webdriver", reason="selenium is not installed (pip install "
                                    "'.[test]')")
    binary = shutil.which("chromium") or shutil.which("chromium-browser")
    driver = shutil.which("chromedriver")
    if not binary or not driver:
        pytest.skip("headless Chromium is not installed (Debian packages chromium and chromium-driver; "
                    ".ci/run installs them)")
    from selenium.webdriver.chrome.service import Service

    options = webdriver.ChromeOptions()
    options.binary_location = binary
    for argument in ("--headless=new", "--no-sandbox", "--disable-dev-shm-usage", "--window-size=1280,1600",
                     "--disable-gpu"):
        options.add_argument(argument)
    chrome = webdriver.Chrome(service=Service(driver), options=options)
    chrome.set_page_load_timeout(60)
    yield chrome
    chrome.quit()
