#!/usr/bin/env python3
"""Checks the sky report page in a headless browser, opened from the file (no server).

Makes a report with the `wend` binary (a short `--front` run of the built-in demo into a
temporary directory), opens `report.html` in headless Chromium from file://, clicks a point of
the front, and checks that the chosen plan's table appears with that plan's rows (the rows of
its plan-K.csv) and that its pictures are linked. Fails on any console error.

Needs Chromium and its driver from the system packages (Debian: chromium, chromium-driver)
and Selenium (pip); nothing is downloaded at run time.

    python3 sky/scripts/check_report.py [--wend PATH] [--time-limit SECONDS]

Exit status 0 when every check passes, 1 otherwise.
"""

import argparse
import csv
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from selenium import webdriver
from selenium.webdriver.chrome.service import Service
from selenium.webdriver.common.by import By
from selenium.webdriver.common.keys import Keys
from selenium.webdriver.support.ui import WebDriverWait

ROOT = Path(__file__).resolve().parents[2]


def find_wend(given):
    """The wend binary: the one given, else a built one of the workspace."""
    if given:
        return Path(given)
    target = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
    for profile in ("release", "debug"):
        path = target / profile / "wend"
        if path.exists():
            return path
    sys.exit("no wend binary: build it (cargo build -p wend-bench --bin wend) or pass --wend")


def first_existing(*names):
    for name in names:
        path = shutil.which(name)
        if path:
            return path
    return None


def plan_rows(csv_path):
    """The rows of a plan's CSV file, less its caution line and its header."""
    with open(csv_path, newline="", encoding="utf-8") as f:
        lines = [line for line in f if not line.startswith("#")]
    rows = list(csv.reader(lines))
    return rows[0], rows[1:]


def table_rows(driver):
    """The header and the rows of the chosen plan's table as the page shows them."""
    table = driver.find_element(By.ID, "chosen-table")
    head = [th.text for th in table.find_elements(By.CSS_SELECTOR, "thead th")]
    rows = [
        [td.get_attribute("textContent") for td in tr.find_elements(By.TAG_NAME, "td")]
        for tr in table.find_elements(By.CSS_SELECTOR, "tbody tr")
    ]
    return head, rows


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--wend", help="path of the wend binary")
    parser.add_argument("--time-limit", default="3", help="seconds for the front search")
    args = parser.parse_args()

    wend = find_wend(args.wend)
    browser = first_existing("chromium", "chromium-browser")
    driver_path = first_existing("chromedriver")
    if not (browser and driver_path):
        sys.exit("needs chromium and chromedriver (Debian: apt-get install chromium chromium-driver)")

    failures = []

    def check(ok, what):
        print(("ok    " if ok else "FAIL  ") + what)
        if not ok:
            failures.append(what)

    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "report"
        started = time.monotonic()
        subprocess.run(
            [str(wend), "sky", "plan", "--front", "--time-limit", args.time_limit, "--out", str(out)],
            check=True,
            stdout=subprocess.DEVNULL,
        )
        print(f"report made in {time.monotonic() - started:.1f} s")
        page = out / "report.html"
        check(page.exists(), "report.html written")

        options = webdriver.ChromeOptions()
        options.binary_location = browser
        for flag in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
                     "--window-size=1280,2000"):
            options.add_argument(flag)
        options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
        driver = webdriver.Chrome(service=Service(executable_path=driver_path), options=options)
        try:
            driver.get(page.as_uri())
            points = driver.find_elements(By.CSS_SELECTOR, ".front-point")
            check(len(points) > 0, f"the front has points to choose ({len(points)})")
            if not points:
                raise SystemExit(1)

            # Every point's dot must take a click itself, not the shading, a line or another
            # point's label drawn over it.
            blocked = driver.execute_script(
                """
                var out = [];
                document.querySelectorAll(".front-point").forEach(function (g) {
                  var dot = g.querySelector("circle.dot");
                  dot.scrollIntoView({block: "center"});
                  var r = dot.getBoundingClientRect();
                  var hit = document.elementFromPoint(r.left + r.width / 2, r.top + r.height / 2);
                  if (hit && hit.closest(".front-point") === g) return;
                  var owner = hit && hit.closest(".front-point");
                  out.push(g.getAttribute("data-plan") + " under " +
                           (hit ? hit.tagName + (owner ? " of plan " + owner.getAttribute("data-plan") : "")
                                : "nothing"));
                });
                return out;
                """
            )
            check(not blocked, f"every point's dot takes its own click (covered: {blocked or 'none'})")

            # Choose the last point by clicking it (the first plan is seldom the knee, which
            # the page shows at first, so this changes what is shown).
            point = points[-1]
            plan = point.get_attribute("data-plan")
            # Click the point itself, where a person would (the group's box also spans its
            # label and leader line, whose middle may lie on the shading).
            point.find_element(By.CSS_SELECTOR, "circle.hit").click()
            WebDriverWait(driver, 5).until(
                lambda d: d.find_element(By.ID, "chosen-heading").text.startswith(f"Plan {plan}")
            )
            check(point.get_attribute("aria-pressed") == "true", f"plan {plan}'s point is marked chosen")
            head, rows = table_rows(driver)
            want_head, want_rows = plan_rows(out / f"plan-{plan}.csv")
            check(head == want_head, f"plan {plan}'s table has the CSV's columns")
            check(rows == want_rows, f"plan {plan}'s table has its {len(want_rows)} rows")
            for name in ("sky-map", "timeline", "momentum"):
                src = driver.find_element(By.ID, f"chosen-{name}").get_attribute("src")
                check(src.endswith(f"plan-{plan}-{name}.svg"), f"plan {plan}'s {name} shown ({src})")
                loaded = driver.execute_script(
                    "var i = arguments[0]; return i.complete && i.naturalWidth > 0;",
                    driver.find_element(By.ID, f"chosen-{name}"),
                )
                check(bool(loaded), f"plan {plan}'s {name} picture loads")

            # By keyboard: focus the first point and press Enter.
            first = points[0]
            other = first.get_attribute("data-plan")
            driver.execute_script("arguments[0].focus();", first)
            first.send_keys(Keys.ENTER)
            WebDriverWait(driver, 5).until(
                lambda d: d.find_element(By.ID, "chosen-heading").text.startswith(f"Plan {other}")
            )
            head, rows = table_rows(driver)
            _, want_rows = plan_rows(out / f"plan-{other}.csv")
            check(rows == want_rows, f"Enter on plan {other}'s point shows its {len(want_rows)} rows")

            check("planning proposals" in driver.find_element(By.TAG_NAME, "body").text,
                  "the caution is on the page")

            errors = [e for e in driver.get_log("browser") if e.get("level") == "SEVERE"]
            for e in errors:
                print("console:", e.get("message"))
            check(not errors, "no console errors")
        finally:
            driver.quit()

    if failures:
        print(f"{len(failures)} check(s) failed")
        return 1
    print("all checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
