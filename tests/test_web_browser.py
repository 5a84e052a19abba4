"""The planning desk in a real browser: headless Chromium (Debian's ``chromium`` and ``chromium-driver``, installed
by .ci/run) driven by selenium against ``phaseplan serve`` on loopback.

It fills the trip form with two place names and flight times, submits, sees the recommendation and the chart,
downloads the calendar and parses it with icalendar (a reference library from PyPI), then uploads the demo
roster and sees the drafts ranked. A screenshot of each page is written for a person to look at: to the folder
named by ``PHASEPLAN_SCREENSHOTS`` when set, else to the test's temporary folder.
"""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import icalendar
import pytest
from PIL import Image

REPO = Path(__file__).resolve().parent.parent
CHROMIUM, CHROMEDRIVER = "/usr/bin/chromium", "/usr/bin/chromedriver"


def _installed() -> None:
    if Path(CHROMIUM).is_file() and Path(CHROMEDRIVER).is_file():
        return
    if os.environ.get("CI"):
        pytest.fail("no Chromium or chromedriver on this CI machine; .ci/run installs chromium and chromium-driver")
    pytest.skip("needs /usr/bin/chromium and /usr/bin/chromedriver (apt-get install chromium chromium-driver)")


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    """``phaseplan serve`` as a process on a free loopback port, with its own data folder."""
    _installed()
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        port = probe.getsockname()[1]
    data = tmp_path_factory.mktemp("desk")
    process = subprocess.Popen([sys.executable, "-m", "planner", "serve", "--port", str(port), "--data", str(data)],
                               stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    base = f"http://127.0.0.1:{port}"
    deadline = time.monotonic() + 60
    while True:
        assert process.poll() is None, process.stderr.read().decode()
        try:
            with urllib.request.urlopen(base + "/healthz", timeout=2):
                break
        except OSError:
            assert time.monotonic() < deadline, "the server did not start"
            time.sleep(0.3)
    yield base
    process.terminate()
    process.wait(timeout=30)


@pytest.fixture(scope="module")
def downloads(tmp_path_factory) -> Path:
    return tmp_path_factory.mktemp("downloads")


@pytest.fixture(scope="module")
def browser(tmp_path_factory, downloads):
    _installed()
    os.environ.setdefault("SE_OFFLINE", "true")   # selenium must not look for drivers on the network
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service

    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    for argument in ("--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                     "--disable-component-update", "--disable-sync", "--no-first-run", "--window-size=1280,1800",
                     f"--user-data-dir={tmp_path_factory.mktemp('profile')}"):
        options.add_argument(argument)
    options.add_experimental_option("prefs", {"download.default_directory": str(downloads),
                                              "download.prompt_for_download": False})
    driver = webdriver.Chrome(service=Service(CHROMEDRIVER), options=options)
    driver.execute_cdp_cmd("Page.setDownloadBehavior", {"behavior": "allow", "downloadPath": str(downloads)})
    driver.set_page_load_timeout(120)
    yield driver
    driver.quit()


@pytest.fixture(scope="module")
def shots(tmp_path_factory) -> Path:
    folder = Path(os.environ.get("PHASEPLAN_SCREENSHOTS") or tmp_path_factory.mktemp("screenshots"))
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def screenshot(driver, folder: Path, name: str) -> Path:
    """A screenshot of the whole page; checked to show something (ink on a white page)."""
    driver.set_window_size(1280, 800)   # measure the page itself, not the window the previous page needed
    height = driver.execute_script("return document.documentElement.scrollHeight")
    driver.set_window_size(1280, min(max(height + 120, 800), 6000))
    path = folder / f"{name}.png"
    assert driver.save_screenshot(str(path))
    image = Image.open(path).convert("L")
    histogram = image.histogram()
    pixels = image.size[0] * image.size[1]
    assert sum(histogram[:128]) / pixels > 0.005 and histogram[255] / pixels > 0.3   # text on a white page
    return path


def wait(driver, condition, seconds: float = 240.0):
    from selenium.webdriver.support.ui import WebDriverWait

    return WebDriverWait(driver, seconds, poll_frequency=0.3).until(condition)


def fill(driver, values: dict[str, str]) -> None:
    from selenium.webdriver.common.by import By

    for name, value in values.items():
        field = driver.find_element(By.NAME, name)
        field.clear()
        field.send_keys(value)


def test_trip_in_the_browser(server, browser, downloads, shots):
    # the browser check: place names and flight times in, recommendation, chart and calendar out
    from selenium.webdriver.common.by import By

    browser.get(server + "/trip")
    fill(browser, {"label": "traveller 21", "home_place": "Lisbon", "destination_place": "Helsinki",
                   "depart": "2027-05-10 08:00", "arrive": "2027-05-10 14:00", "stay_days": "2",
                   "preparation_days": "1"})
    screenshot(browser, shots, "1-trip-form")
    browser.find_element(By.ID, "plan-button").click()
    wait(browser, lambda d: "/plans/" in d.current_url)
    recommendation = browser.find_element(By.ID, "recommendation").text
    assert recommendation.startswith("Recommended:")   # the recommendation comes first (issue)
    chart = browser.find_element(By.ID, "chart")
    wait(browser, lambda d: d.execute_script("return arguments[0].complete && arguments[0].naturalWidth", chart))
    assert browser.execute_script("return arguments[0].naturalWidth", chart) > 200   # the SVG chart loaded
    assert "Helsinki" in browser.page_source and "Lisbon" in browser.page_source
    screenshot(browser, shots, "2-trip-plan")

    browser.find_element(By.ID, "download-ics").click()
    found = wait(browser, lambda d: [p for p in downloads.glob("*.ics")], 60)
    calendar = icalendar.Calendar.from_ical(found[0].read_bytes())   # icalendar, a reference parser from PyPI
    events = list(calendar.walk("VEVENT"))
    assert events and all(event.get("UID") for event in events)   # RFC 5545 §3.8.4.7: every event has a UID
    assert {str(c) for e in events for c in e.get("CATEGORIES").cats} >= {"Sleep"}

    browser.get(server + "/")
    assert "traveller 21" in browser.page_source   # saved
    screenshot(browser, shots, "3-saved-plans")


def test_demo_roster_in_the_browser(server, browser, shots):
    # upload the demo roster file and see the drafts ranked (issue)
    from selenium.webdriver.common.by import By

    browser.get(server + "/roster")
    browser.find_element(By.ID, "file").send_keys(str(REPO / "scenarios" / "harbour-cranes.toml"))
    screenshot(browser, shots, "4-roster-form")
    browser.find_element(By.ID, "plan-button").click()
    wait(browser, lambda d: "/plans/" in d.current_url or "Planning" in d.title)
    if "/jobs/" in browser.current_url:
        screenshot(browser, shots, "5-planning-progress")
    wait(browser, lambda d: "/plans/" in d.current_url)
    rows = browser.find_elements(By.CSS_SELECTOR, "#ranking tbody tr")
    assert [row.find_elements(By.TAG_NAME, "td")[0].text for row in rows] == ["1", "2"]
    drafts = {row.find_elements(By.TAG_NAME, "td")[1].text for row in rows}
    assert drafts == {"fast 2-2-4", "slow 4-4-4-4"}   # the demo file's two drafts (scenarios/harbour-cranes.toml)
    screenshot(browser, shots, "6-roster-plan")
    browser.get(browser.current_url + "/report.html")
    screenshot(browser, shots, "7-roster-report")

