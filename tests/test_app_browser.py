"""End-to-end in a real headless browser: the served app on its demo, as a person uses it.

Chromium from the Debian packages (/usr/bin/chromium) driven by Playwright; `.ci/run`
installs both.  Screenshots of each view go to artifacts/screenshots (git-ignored).
No published check values: the case is that a person can load the demo, read the
top-ranked system, open its recipe and download it.
"""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

from selector.cli.app import streamlit_flags

playwright_sync = pytest.importorskip("playwright.sync_api")

ROOT = Path(__file__).resolve().parent.parent
ARTIFACTS = ROOT / "artifacts" / "screenshots"
CHROMIUM = shutil.which("chromium") or "/usr/bin/chromium"
pytestmark = pytest.mark.skipif(not Path(CHROMIUM).exists(), reason="Debian chromium is not installed")

CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def wait_idle(page, timeout_s: float = 180.0) -> None:
    """Wait until the app has finished its current run (Streamlit's status widget is gone
    on two polls in a row), so the next action does not land in the middle of a rerun."""
    page.wait_for_timeout(400)
    deadline = time.time() + timeout_s
    quiet = 0
    while time.time() < deadline:
        quiet = quiet + 1 if page.locator("[data-testid=stStatusWidget]").count() == 0 else 0
        if quiet >= 2:
            return
        page.wait_for_timeout(250)
    raise AssertionError(f"the app was still running after {timeout_s:g} s")


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def served_app():
    port = free_port()
    env = {**os.environ, "STREAMLIT_BROWSER_GATHER_USAGE_STATS": "false"}
    process = subprocess.Popen(
        [sys.executable, "-m", "streamlit", "run", str(ROOT / "app" / "main.py"), "--server.address", "127.0.0.1",
         "--server.port", str(port), *streamlit_flags(), "--", "--demo"],
        cwd=ROOT, env=env, stdout=subprocess.PIPE, stderr=subprocess.STDOUT)
    url = f"http://127.0.0.1:{port}"
    deadline = time.time() + 90
    while time.time() < deadline:
        try:
            with urllib.request.urlopen(f"{url}/_stcore/health", timeout=2) as response:
                if response.status == 200:
                    break
        except OSError:
            time.sleep(0.5)
    else:
        process.kill()
        pytest.fail("the app did not start within 90 s: " + process.stdout.read().decode(errors="replace")[-2000:])
    yield url
    process.terminate()
    try:
        process.wait(timeout=10)
    except subprocess.TimeoutExpired:
        process.kill()


@pytest.fixture(scope="module")
def browser():
    with playwright_sync.sync_playwright() as p:
        instance = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        yield instance
        instance.close()


def test_demo_rank_recipe_download(served_app, browser, tmp_path):
    ARTIFACTS.mkdir(parents=True, exist_ok=True)
    page = browser.new_page(viewport={"width": 1400, "height": 1000}, accept_downloads=True)
    try:
        walk_through_the_app(page, served_app, tmp_path)
    except Exception:
        page.screenshot(path=str(ARTIFACTS / "failure.png"), full_page=True)
        raise
    finally:
        page.close()


def walk_through_the_app(page, served_app, tmp_path):
    page.goto(served_app, wait_until="domcontentloaded")
    page.get_by_text("Top-ranked system").wait_for(timeout=120_000)
    wait_idle(page)
    top = page.locator("#top-system").inner_text().strip()
    assert top
    page.locator("[data-testid=stVegaLiteChart]").first.wait_for(timeout=60_000)
    page.wait_for_timeout(1500)
    page.screenshot(path=str(ARTIFACTS / "1_ranked_systems.png"), full_page=True)

    # Save the spec, then load a spec file: its pH shows in the panel.
    with page.expect_download(timeout=60_000) as saved_spec:
        page.get_by_role("button", name="Save spec (TOML)").click()
    spec_path = tmp_path / saved_spec.value.suggested_filename
    saved_spec.value.save_as(spec_path)
    assert "ph = 7.4" in spec_path.read_text(encoding="utf-8")
    spec_path.write_text(spec_path.read_text(encoding="utf-8").replace("ph = 7.4", "ph = 7.2"), encoding="utf-8")
    page.get_by_label("Load a spec (TOML or JSON)").locator("input[type=file]").set_input_files(str(spec_path))
    page.get_by_text(f"Spec loaded from {spec_path.name}").wait_for(timeout=60_000)
    wait_idle(page)
    page.get_by_text("Top-ranked system").wait_for(timeout=120_000)
    top = page.locator("#top-system").inner_text().strip()

    page.get_by_role("link", name="Recipe", exact=True).click()
    wait_idle(page)
    page.get_by_text("meter pH at").first.wait_for(timeout=120_000)
    page.get_by_text("Cautions").first.wait_for(timeout=60_000)
    page.screenshot(path=str(ARTIFACTS / "2_recipe.png"), full_page=True)
    with page.expect_download(timeout=60_000) as download:
        page.get_by_role("button", name="Download Markdown").click()
    saved = tmp_path / download.value.suggested_filename
    download.value.save_as(saved)
    text = saved.read_text(encoding="utf-8")
    assert text.startswith("# ") and top.split(" (")[0] in text
    assert "safety rules take precedence" in text

    # The bench sheet: downloaded here, opened in the browser and printed at the end of the walk.
    with page.expect_download(timeout=60_000) as sheet_download:
        page.get_by_role("button", name="Download bench sheet (HTML)").click()
    bench_sheet = tmp_path / sheet_download.value.suggested_filename
    sheet_download.value.save_as(bench_sheet)
    assert "lot number" in bench_sheet.read_text(encoding="utf-8")   # opened in the browser at the end of the walk

    page.get_by_role("link", name="Optimiser").click()
    wait_idle(page)
    page.get_by_role("button", name="Optimise").click()
    page.get_by_text("per litre").first.wait_for(timeout=120_000)
    page.screenshot(path=str(ARTIFACTS / "3_optimiser.png"), full_page=True)

    wait_idle(page)
    page.get_by_role("link", name="Catalog").click()
    page.get_by_text("show one system with every source").wait_for(timeout=60_000)
    page.screenshot(path=str(ARTIFACTS / "4_catalog.png"), full_page=True)

    wait_idle(page)
    page.get_by_role("link", name="Prices").click()
    page.get_by_text("price sheet (CSV or XLSX)").first.wait_for(timeout=60_000)
    # A sheet with one good row and two bad ones: the good one is used, each bad one named.
    sheet = tmp_path / "lab_prices.csv"
    sheet.write_text("reagent,pack_size,pack_price,currency,supplier\n"
                     "Tris,1 kg,95,EUR,Supplier A\n"
                     "unobtainium,1 kg,5,EUR,Supplier B\n"
                     "NaCl,1 L,3,EUR,Supplier A\n", encoding="utf-8")
    page.get_by_label("price sheet (CSV or XLSX)").locator("input[type=file]").set_input_files(str(sheet))
    page.get_by_text("1 of 3 rows used").wait_for(timeout=60_000)
    page.get_by_text("unknown reagent 'unobtainium'").wait_for(timeout=10_000)
    page.get_by_text("sodium chloride is a solid", exact=False).first.wait_for(timeout=10_000)

    page.screenshot(path=str(ARTIFACTS / "5_prices.png"), full_page=True)

    # Check a solution: the pH of a typed mixture, then the pH standards with their published table.
    wait_idle(page)
    page.get_by_role("link", name="pH of a mixture").click()
    page.get_by_text("reagents, one per line").wait_for(timeout=60_000)
    wait_idle(page)
    page.locator("[data-testid=stMetric]").first.wait_for(timeout=60_000)
    assert "±" in page.locator("[data-testid=stMetric]").first.inner_text()
    page.screenshot(path=str(ARTIFACTS / "6_mixture.png"), full_page=True)
    assert "spec=" in page.url          # the spec travels in the link

    wait_idle(page)
    page.get_by_role("link", name="pH standards").click()
    page.get_by_text("Preparation.").wait_for(timeout=60_000)
    wait_idle(page)
    page.get_by_text("local regulations", exact=False).first.wait_for(timeout=30_000)
    page.screenshot(path=str(ARTIFACTS / "7_standards.png"), full_page=True)
    # The bench sheet downloaded from the recipe page, as printed (print media): its blanks are there.
    page.goto(bench_sheet.as_uri(), wait_until="load")
    page.emulate_media(media="print")
    for blank in ("lot number", "balance reading", "measured pH", "operator", "signature", "volume made"):
        page.get_by_text(blank).first.wait_for(timeout=10_000)
    assert page.locator("td.blank").count() >= 10
    page.screenshot(path=str(ARTIFACTS / "6_bench_sheet_print.png"), full_page=True)
