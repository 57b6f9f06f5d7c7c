"""The HTML report in a real browser (headless Chromium through selenium): it opens from the
single file with no network, hovering shows a design's numbers, the objective-range and
flap filters narrow the front to exactly the designs that pass them, and clicking a design
shows its sheet and marks it on its constraint diagram.

Skipped, with the reason, only where no browser can be started (.ci/run installs chromium,
chromium-driver and selenium).

Source of the expected values: the designs that pass each filter and the numbers of the clicked
design are computed in Python from the run's front.csv here (the report must show exactly those;
common practice for an end-to-end check)."""

from __future__ import annotations

import shutil
import tempfile
from pathlib import Path

import pytest

import optimiser
from optimiser import decide
from optimiser.runfolder import load_run
from optimiser.report.html import write_report
from optimiser.study import bundled_study_path, load_study

CHROMIUM = shutil.which("chromium") or "/usr/bin/chromium"
CHROMEDRIVER = shutil.which("chromedriver") or "/usr/bin/chromedriver"


def _fmt(v):
    """The page's number format (fmt() in the page script), for comparing shown text."""
    a = abs(v)
    if a == 0:
        return "0"
    if a >= 1e5 or a < 1e-3:
        return f"{v:.4g}"
    if a < 10:
        return f"{float(f'{v:.4g}'):g}"
    return f"{v:.1f}" if a < 1e4 else f"{v:.0f}"


@pytest.fixture(scope="module")
def driver():
    try:
        from selenium import webdriver
        from selenium.webdriver.chrome.service import Service
    except ImportError:
        pytest.skip("selenium is not installed (pip install selenium; .ci/run does)")
    if not (Path(CHROMIUM).exists() and Path(CHROMEDRIVER).exists()):
        pytest.skip("no chromium/chromedriver (apt-get install chromium chromium-driver)")
    opts = webdriver.ChromeOptions()
    opts.binary_location = CHROMIUM
    profile = tempfile.mkdtemp(prefix="chromium-profile-")
    for a in ("--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
              "--disable-component-update", "--no-first-run", "--disable-sync",
              f"--user-data-dir={profile}", "--window-size=1400,1100"):
        opts.add_argument(a)
    try:
        d = webdriver.Chrome(service=Service(CHROMEDRIVER), options=opts)
    except Exception as exc:  # the browser is there but cannot start here
        pytest.skip(f"chromium cannot start: {type(exc).__name__}: {str(exc).splitlines()[0]}")
    yield d
    d.quit()
    shutil.rmtree(profile, ignore_errors=True)


def _report(tmp_path_factory, units="si"):
    """A small run of the bundled study and its report, written in ``units``."""
    from optimiser.display_units import using
    study = load_study(bundled_study_path())
    out = tmp_path_factory.mktemp(f"browser_{units}") / "run"
    optimiser.optimise(study, out=out, population=24, generations=5, plots=False)
    run = load_run(out)
    choice = decide.choose(study, run.front, "knee")
    with using(units):   # as `optimiser --units <units> report` writes it
        return run, choice, write_report(run, choice=choice)


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    return _report(tmp_path_factory)


def _shown(d):
    from selenium.webdriver.common.by import By
    return d.find_elements(By.CSS_SELECTOR, "#front-svg circle.pt")


def test_report_filters_hovers_and_clicks(driver, report, tmp_path):
    from selenium.webdriver.common.action_chains import ActionChains
    from selenium.webdriver.common.by import By
    run, choice, path = report
    front = run.front
    driver.get(path.resolve().as_uri())
    assert "run report" in driver.title
    # every front design is drawn, the chosen one first selected
    assert len(_shown(driver)) == len(front)
    assert f"{len(front)} of {len(front)} front designs shown" in \
        driver.find_element(By.ID, "shown-count").text
    chosen = int(choice.design["front_row"])
    assert f"design {chosen}," in driver.find_element(By.ID, "sheet-title").text
    # hover: the tooltip shows that design's flap and trip fuel
    pt = _shown(driver)[0]
    i = int(pt.get_attribute("data-id"))
    driver.execute_script("arguments[0].scrollIntoView({block: 'center'});", pt)
    ActionChains(driver).move_to_element(pt).perform()
    tip = driver.find_element(By.ID, "tooltip")
    assert tip.is_displayed()
    assert front["flap"].iloc[i] in tip.text
    assert f"trip fuel [kg]: {_fmt(front['trip_fuel_kg'].iloc[i])}" in tip.text
    # filter: an engine-size range, then drop one flap type
    # a cap halfway between two front values, so the page's 6-digit rounding cannot matter
    vals = sorted(set(front["engine_power_kW"]))
    k = max(len(vals) // 2 - 1, 0)
    cap = (vals[k] + vals[k + 1]) / 2 if len(vals) > 1 else vals[0] + 1.0
    driver.find_element(By.ID, "max-engine_power_kW").send_keys(f"{cap:.6f}")
    keep = front["engine_power_kW"] <= float(f"{cap:.6f}")
    assert len(_shown(driver)) == int(keep.sum()) < len(front)
    flap = front.loc[keep, "flap"].iloc[0]
    driver.find_element(By.ID, f"flap-{flap}").click()
    keep &= front["flap"] != flap
    shown = _shown(driver)
    assert len(shown) == int(keep.sum())
    assert {int(c.get_attribute("data-id")) for c in shown} == set(front.index[keep])
    driver.save_screenshot(str(tmp_path / "filtered.png"))
    # click a remaining design (or, if none is left, reset and click the first)
    if not shown:
        driver.find_element(By.ID, "reset").click()
        shown = _shown(driver)
        assert len(shown) == len(front)
    target = shown[-1]
    j = int(target.get_attribute("data-id"))
    driver.execute_script("arguments[0].dispatchEvent(new MouseEvent('click', {bubbles: true}))",
                          target)
    assert f"design {j}, flap {front['flap'].iloc[j]}" in \
        driver.find_element(By.ID, "sheet-title").text
    row = driver.find_element(By.CSS_SELECTOR, "#sheet-table tr[data-col='wing_loading_N_m2']")
    assert _fmt(front["wing_loading_N_m2"].iloc[j]) in row.text
    mrow = driver.find_element(By.CSS_SELECTOR,
                               "#sheet-table tr[data-col='margin_takeoff_field']")
    assert f"{100 * front['margin_takeoff_field'].iloc[j]:.1f} %" in mrow.text
    marker = driver.find_element(By.CSS_SELECTOR, "#diagram-svg .design-marker")
    assert int(marker.get_attribute("data-id")) == j
    lines = driver.find_elements(By.CSS_SELECTOR, "#diagram-svg .cline")
    assert len(lines) >= 3
    # the star sits where the design is: inside the shaded all-met region's bounding box
    region = driver.find_element(By.CSS_SELECTOR, "#diagram-svg .region")
    box = driver.execute_script("return arguments[0].getBBox();", region)
    star = driver.execute_script("return arguments[0].getBBox();", marker)
    cx, cy = star["x"] + star["width"] / 2, star["y"] + star["height"] / 2
    assert box["x"] - 2 <= cx <= box["x"] + box["width"] + 2
    assert box["y"] - 2 <= cy <= box["y"] + box["height"] + 2
    shot = tmp_path / "clicked.png"
    driver.save_screenshot(str(shot))
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    logs = [e for e in driver.get_log("browser") if e.get("level") == "SEVERE"]
    assert not logs, logs


def test_a_flap_row_shows_only_that_option_on_the_front(driver, report):
    """Clicking an option's row of the flap comparison leaves only its front designs drawn
    (checked against front.csv), its checkbox alone ticked; 'show all' brings back all."""
    from selenium.webdriver.common.by import By
    run, _, path = report
    front = run.front
    driver.get(path.resolve().as_uri())
    flap = front["flap"].value_counts().index[0]   # an option with designs on the front
    row = driver.find_element(By.CSS_SELECTOR, f"table.flaps tbody tr[data-flap='{flap}']")
    driver.execute_script("arguments[0].dispatchEvent(new MouseEvent('click', {bubbles: true}))",
                          row)
    shown = _shown(driver)
    assert {int(c.get_attribute("data-id")) for c in shown} == \
        set(front.index[front["flap"] == flap])
    boxes = driver.find_elements(By.CSS_SELECTOR, "#controls input[type=checkbox]")
    assert [b.get_attribute("value") for b in boxes if b.is_selected()] == [flap]
    driver.execute_script("document.getElementById('reset').click()")
    assert len(_shown(driver)) == len(front)


@pytest.fixture(scope="module")
def us_report(tmp_path_factory):
    return _report(tmp_path_factory, "us")


def test_us_report_plots_and_filters_in_us_units(driver, us_report):
    """The explorer of a --units us page: axis labels, hover numbers and the range filter in
    lb and hp (1 lb = 0.45359237 kg; 1 hp = 550 ft lbf/s = 0.74569987158227022 kW; NIST SP
    811 Appendix B, from memory)."""
    from selenium.webdriver.common.action_chains import ActionChains
    from selenium.webdriver.common.by import By
    lb, hp = 0.45359237, 0.74569987158227022
    run, _, path = us_report
    front = run.front
    driver.get(path.resolve().as_uri())
    labels = {e.get_attribute("class"): e.text for e in
              driver.find_elements(By.CSS_SELECTOR,
                                   "#front-svg text.xlabel, #front-svg text.ylabel")}
    assert labels == {"xlabel": "installed engine power, all engines [hp]",
                      "ylabel": "trip fuel [lb]"}
    pt = _shown(driver)[0]
    i = int(pt.get_attribute("data-id"))
    driver.execute_script("arguments[0].scrollIntoView({block: 'center'});", pt)
    ActionChains(driver).move_to_element(pt).perform()
    tip = driver.find_element(By.ID, "tooltip").text
    # the page rounds to 6 digits, then shows 1 decimal: the same as the exact value here
    shown = float(f"{front['trip_fuel_kg'].iloc[i] / lb:.6g}")
    assert f"trip fuel [lb]: {_fmt(shown)}" in tip
    # a cap in hp halfway between two front values keeps exactly the designs below it
    vals = sorted(set(front["engine_power_kW"] / hp))
    k = max(len(vals) // 2 - 1, 0)
    cap = (vals[k] + vals[k + 1]) / 2 if len(vals) > 1 else vals[0] + 1.0
    driver.find_element(By.ID, "max-engine_power_kW").send_keys(f"{cap:.6f}")
    keep = front["engine_power_kW"] / hp <= float(f"{cap:.6f}")
    assert len(_shown(driver)) == int(keep.sum())
    assert " lb (its aspect ratio" in driver.find_element(By.ID, "diagram-svg").text
    logs = [e for e in driver.get_log("browser") if e.get("level") == "SEVERE"]
    assert not logs, logs
