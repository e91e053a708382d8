"""Drive the study page in Debian's chromium (headless) with selenium and chromium-driver.

Usage: browser_study.py URL LOOPWRIGHT_BINARY REPO_ROOT WORK_DIR GALLERY_DIR

Checks, each against the command line (the independent expectation is what `loopwright design`
writes for the same brief, run here as a separate process):
1. the demo brief is designed on load;
2. with entry speed 23 and max g 5 typed into the panel, the shown loop height equals the
   `loop_height_m` of `loopwright design examples/demo-brief.toml --entry-speed 23 --max-g 5`;
3. the DXF downloaded through the browser has exactly the CLI's bytes (its dates and GUIDs are
   fixed or derived from the brief);
4. an infeasible brief (entry speed 12 m/s) shows its reason and hints; clicking the first hint
   gives a feasible design whose height equals the CLI's with that hint applied as a flag;
5. a small sweep runs to the end and offers its CSV.
Screenshots of each state go to GALLERY_DIR. Prints one line per check.
"""

import json
import os
import subprocess
import sys
import time

from selenium import webdriver
from selenium.webdriver.chrome.service import Service
from selenium.webdriver.common.by import By
from selenium.webdriver.support.ui import WebDriverWait

URL, BINARY, ROOT, WORK, GALLERY = sys.argv[1:6]
DEMO = os.path.join(ROOT, "examples", "demo-brief.toml")
DOWNLOADS = os.path.join(WORK, "downloads")
os.makedirs(DOWNLOADS, exist_ok=True)
os.makedirs(GALLERY, exist_ok=True)

def cli_design(out_name, *flags):
    out = os.path.join(WORK, out_name)
    subprocess.run([BINARY, "design", DEMO, *flags, "--out", out, "--quiet"], check=True)
    with open(os.path.join(out, "copperwing.json")) as f:
        return out, json.load(f)


opts = webdriver.ChromeOptions()
opts.binary_location = os.environ.get("LOOPWRIGHT_CHROMIUM", "/usr/bin/chromium")
for arg in ("--headless=new", "--no-sandbox", "--disable-dev-shm-usage", "--disable-gpu",
            "--window-size=1400,1900"):
    opts.add_argument(arg)
opts.add_experimental_option("prefs", {
    "download.default_directory": DOWNLOADS,
    "download.prompt_for_download": False,
    "safebrowsing.enabled": False,
})
driver = webdriver.Chrome(
    service=Service(os.environ.get("LOOPWRIGHT_CHROMEDRIVER", "/usr/bin/chromedriver")),
    options=opts)
wait = WebDriverWait(driver, 120)


def settled(_):
    # Every question answered: the newest design and comparison shown, nothing pending or queued.
    return driver.execute_script(
        "return !state.queued && document.body.dataset.pending === '0'"
        " && document.body.dataset.designSeq === String(state.designSeq)"
        " && document.body.dataset.compareSeq === String(state.compareSeq)")


def settle():
    time.sleep(0.5)  # let the page's 250 ms debounce fire; the wait below is on the page's state
    wait.until(settled)


def type_into(flag, text):
    box = driver.find_element(By.ID, "f-" + flag)
    box.clear()
    box.send_keys(text)


def shot(name):
    driver.save_screenshot(os.path.join(GALLERY, name))


try:
    driver.get(URL)
    wait.until(lambda d: d.execute_script("return document.body.dataset.designSeq !== '0'"))
    settle()
    assert driver.execute_script("return document.body.dataset.designStatus") == "ok"
    print("demo brief designed on load")
    shot("study-page-demo.png")

    # 2. Entry speed and max g typed as a user would.
    type_into("entry-speed", "23")
    type_into("max-g", "5")
    settle()
    cell = driver.find_element(By.ID, "fig-loop_height_m")
    shown = float(cell.get_attribute("data-value"))
    cli_out, cli = cli_design("cli-23", "--entry-speed", "23", "--max-g", "5")
    assert shown == cli["loop_height_m"], (shown, cli["loop_height_m"])
    assert cell.text == f"{cli['loop_height_m']:.3f} m", cell.text
    print(f"height shown {shown!r} m = CLI {cli['loop_height_m']!r} m")
    shot("study-page-23ms-5g.png")

    # 3. The DXF through the browser's own download.
    driver.find_element(By.CSS_SELECTOR, "button.download[data-file='copperwing.dxf']").click()
    target = os.path.join(DOWNLOADS, "copperwing.dxf")
    wait.until(lambda d: os.path.exists(target)
               and not any(n.endswith(".crdownload") for n in os.listdir(DOWNLOADS)))
    with open(target, "rb") as f:
        got = f.read()
    with open(os.path.join(cli_out, "copperwing.dxf"), "rb") as f:
        want = f.read()
    assert got == want, "DXF differs from the CLI's"
    print(f"DXF download: {len(got)} bytes, byte-identical to the CLI's")

    # 4. An infeasible brief and its hint.
    type_into("max-g", "4.5")
    type_into("entry-speed", "12")
    settle()
    assert driver.execute_script("return document.body.dataset.designStatus") == "infeasible"
    reason = driver.find_element(By.ID, "infeasible-reason").text
    assert reason.startswith("no clothoid loop meets the brief"), reason
    hint = driver.find_elements(By.CSS_SELECTOR, "button.hint")[0]
    flag, value = hint.get_attribute("data-flag"), hint.get_attribute("data-value")
    shot("study-page-infeasible.png")
    hint.click()
    settle()
    assert driver.execute_script("return document.body.dataset.designStatus") == "ok"
    assert driver.find_element(By.ID, "f-" + flag).get_attribute("value") == value
    flags = {"entry-speed": "12", "max-g": "4.5", flag: value}
    _, fixed = cli_design("cli-hint", *[x for k, v in flags.items() for x in ("--" + k, v)])
    shown = float(driver.find_element(By.ID, "fig-loop_height_m").get_attribute("data-value"))
    assert shown == fixed["loop_height_m"], (shown, fixed["loop_height_m"])
    print(f"hint --{flag} {value} applied: feasible, height {shown!r} m = CLI")

    # 5. A small sweep from the page.
    for box, text in (("sw-entry-speed", "20..30:3"), ("sw-max-g", "4..5:2")):
        el = driver.find_element(By.ID, box)
        el.clear()
        el.send_keys(text)
    driver.find_element(By.ID, "sweep-start").click()
    wait.until(lambda d: d.find_elements(By.CSS_SELECTOR, "#sweep-files a"))
    status = driver.find_element(By.ID, "sweep-status").text
    assert status.startswith("18 / 18 designs, finished"), status
    driver.execute_script("document.getElementById('sweep-picture').scrollIntoView()")
    shot("study-page-sweep.png")
    print("sweep of 18 designs finished from the page")
finally:
    driver.quit()
