"""The report page, checked in a real headless browser (Debian's chromium, driven through
its chromedriver by Selenium): it loads without console errors, every section is there,
its pictures render with a size, and a screenshot is not blank.

References: the W3C WebDriver protocol as Selenium and chromedriver implement it; the
page itself uses HTML and SVG only (no script), so what the browser shows is what fsmsynth
wrote.
"""

from __future__ import annotations

import io
from pathlib import Path

import pytest
from test_verilog_tools import need, need_module

from fsmsynth.cli import main
from fsmsynth.flows.report import SECTIONS

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
SPECS = sorted(p.name for p in EXAMPLES.glob("*.toml")) + ["rail_crossing.csv"]


@pytest.fixture(scope="module")
def browser():  # type: ignore[no-untyped-def]
    need("chromium")
    driver_path = need("chromedriver")
    webdriver = need_module("selenium.webdriver", "test", "selenium")
    from selenium.webdriver.chrome.service import Service
    options = webdriver.ChromeOptions()
    for flag in ("--headless=new", "--no-sandbox", "--disable-gpu",
                 "--window-size=1280,2000", "--disable-dev-shm-usage"):
        options.add_argument(flag)
    options.binary_location = need("chromium")
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    driver = webdriver.Chrome(service=Service(driver_path), options=options)
    yield driver
    driver.quit()


@pytest.mark.parametrize("spec", SPECS)
def test_the_report_page_of_every_example_renders(spec: str, browser, tmp_path: Path,  # type: ignore[no-untyped-def]
                                                  capsys: pytest.CaptureFixture[str]) -> None:
    from matplotlib import image

    assert main(["build", str(EXAMPLES / spec), "-o", str(tmp_path), "--report", "-q"]) == 0
    capsys.readouterr()
    pages = list(tmp_path.glob("*.html"))
    assert len(pages) == 1
    text = pages[0].read_text()
    assert "<script" not in text and "http://" not in text.replace(
        'xmlns="http://www.w3.org/2000/svg"', "").replace(
        'xmlns:xlink="http://www.w3.org/1999/xlink"', "")  # nothing fetched from anywhere
    browser.get(pages[0].as_uri())
    errors = [e for e in browser.get_log("browser") if e["level"] == "SEVERE"]
    assert errors == []
    present = browser.execute_script(
        "return Array.from(document.querySelectorAll('section')).map(s => s.id)")
    assert present == [s for s in SECTIONS if s != "comparison"]
    sizes = browser.execute_script(
        "return Array.from(document.querySelectorAll('svg')).map(s => {"
        "const r = s.getBoundingClientRect(); return [r.width, r.height]; })")
    assert len(sizes) >= 2 and all(w > 50 and h > 20 for w, h in sizes)
    shot = image.imread(io.BytesIO(browser.get_screenshot_as_png()), format="png")
    assert shot.std() > 0.02  # not one colour
