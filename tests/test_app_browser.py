"""End-to-end in a real headless browser: the served app on its demo, as its three users use it.

Chromium from the Debian packages (/usr/bin/chromium) driven by Playwright; `.ci/run`
installs both.  The walk does the three users' jobs: the assay developer (spec → compared
buffers → recipe → saved to the recipe book), the purchaser (prices → cheapest mix →
purchase plan) and the metal assay (pH of a mixture with CaCl2 and EDTA), then opens every
other page of the navigation.  A screenshot of every page goes to a temporary folder; the
files are listed in the test output.  No published check values: the case is that a person
can do each job and read each page.
"""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from dataclasses import dataclass
from pathlib import Path

import pytest

from selector.book import list_recipes, open_book
from selector.cli.app import streamlit_flags

playwright_sync = pytest.importorskip("playwright.sync_api")

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "examples" / "purchasing"
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


@dataclass(frozen=True)
class ServedApp:
    url: str
    book: str


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def served_app(tmp_path_factory):
    port = free_port()
    book = tmp_path_factory.mktemp("book") / "book.sqlite"       # the walk's own recipe book
    env = {**os.environ, "STREAMLIT_BROWSER_GATHER_USAGE_STATS": "false", "POISE_BOOK": str(book)}
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
    yield ServedApp(url, str(book))
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


class Shots:
    """Screenshots of the walk, numbered in order, in one folder."""

    def __init__(self, folder: Path):
        self.folder = folder
        self.files: list[Path] = []

    def take(self, page, name: str) -> None:
        path = self.folder / f"{len(self.files) + 1:02d}_{name}.png"
        page.screenshot(path=str(path), full_page=True)
        self.files.append(path)


def test_three_users_jobs_end_to_end(served_app, browser, tmp_path, capsys):
    shots = Shots(tmp_path / "screenshots")
    shots.folder.mkdir()
    page = browser.new_page(viewport={"width": 1400, "height": 1000}, accept_downloads=True)
    seconds: dict[str, float] = {}
    try:
        start = time.time()
        bench_sheet = assay_developer(page, served_app, tmp_path, shots)
        seconds["assay developer"], start = time.time() - start, time.time()
        purchaser(page, tmp_path, shots)
        seconds["purchaser"], start = time.time() - start, time.time()
        metal_assay(page, shots)
        seconds["metal assay"], start = time.time() - start, time.time()
        every_other_page(page, shots)
        printed_bench_sheet(page, bench_sheet, shots)
        seconds["other pages"] = time.time() - start
    except Exception:
        shots.take(page, "failure")
        raise
    finally:
        page.close()
        with capsys.disabled():
            print(f"\nscreenshots in {shots.folder}:", *(f"  {p.name}" for p in shots.files),
                  "walk, s: " + ", ".join(f"{job} {s:.1f}" for job, s in seconds.items()), sep="\n")


def open_page(page, title: str) -> None:
    """Click ``title`` in the navigation once the app is idle, and wait for the page's run."""
    wait_idle(page)
    page.get_by_role("link", name=title, exact=True).click()
    wait_idle(page)


def assay_developer(page, served_app, tmp_path, shots) -> Path:
    """Spec → compared buffers → recipe (downloads) → saved to the recipe book."""
    page.goto(served_app.url, wait_until="domcontentloaded")
    page.get_by_text("Top-ranked system").wait_for(timeout=120_000)
    wait_idle(page)
    assert page.locator("#top-system").inner_text().strip()
    page.locator("[data-testid=stVegaLiteChart]").first.wait_for(timeout=60_000)
    page.wait_for_timeout(1000)
    shots.take(page, "compare_buffers")

    # The spec is saved as a file a colleague can load (loading one back is an AppTest case).
    with page.expect_download(timeout=60_000) as saved_spec:
        page.get_by_role("button", name="Save spec (TOML)").click()
    spec_path = tmp_path / saved_spec.value.suggested_filename
    saved_spec.value.save_as(spec_path)
    assert "ph = 7.4" in spec_path.read_text(encoding="utf-8")
    top = page.locator("#top-system").inner_text().strip()

    open_page(page, "Recipe")
    page.get_by_text("meter pH at").first.wait_for(timeout=120_000)
    page.get_by_text("Cautions").first.wait_for(timeout=60_000)
    page.locator("[data-testid=stVegaLiteChart]").nth(3).wait_for(timeout=60_000)   # the four pictures
    wait_idle(page)
    shots.take(page, "recipe")
    with page.expect_download(timeout=60_000) as download:
        page.get_by_role("button", name="Download Markdown").click()
    saved = tmp_path / download.value.suggested_filename
    download.value.save_as(saved)
    text = saved.read_text(encoding="utf-8")
    assert text.startswith("# ") and top.split(" (")[0] in text
    assert "safety rules take precedence" in text
    with page.expect_download(timeout=60_000) as sheet_download:
        page.get_by_role("button", name="Download bench sheet (HTML)").click()
    bench_sheet = tmp_path / sheet_download.value.suggested_filename
    sheet_download.value.save_as(bench_sheet)
    assert "lot number" in bench_sheet.read_text(encoding="utf-8")

    page.get_by_text("Save to the recipe book").first.click()
    page.get_by_label("save in the recipe book as").first.fill("assay buffer")
    page.get_by_label("save in the recipe book as").first.press("Enter")
    wait_idle(page)
    page.get_by_role("button", name="Save to the book").first.click()
    page.get_by_text("saved 'assay buffer' as version 1").wait_for(timeout=60_000)

    open_page(page, "Recipe book")
    page.get_by_text("What changed").wait_for(timeout=60_000)
    wait_idle(page)
    with open_book(served_app.book, create=False) as book:
        assert [s.name for s in list_recipes(book)] == ["assay buffer"]     # saved where the page reads
    shots.take(page, "recipe_book")
    return bench_sheet


def purchaser(page, tmp_path, shots) -> None:
    """Prices (a sheet with bad rows named) → cheapest mix → purchase plan from offers and suppliers."""
    open_page(page, "Prices")
    page.get_by_text("price sheet (CSV or XLSX)").first.wait_for(timeout=60_000)
    sheet = tmp_path / "lab_prices.csv"
    sheet.write_text("reagent,pack_size,pack_price,currency,supplier\n"
                     "Tris,1 kg,95,EUR,Supplier A\n"
                     "unobtainium,1 kg,5,EUR,Supplier B\n"
                     "NaCl,1 L,3,EUR,Supplier A\n", encoding="utf-8")
    page.get_by_label("price sheet (CSV or XLSX)").locator("input[type=file]").set_input_files(str(sheet))
    page.get_by_text("1 of 3 rows used").wait_for(timeout=60_000)
    page.get_by_text("unknown reagent 'unobtainium'").wait_for(timeout=10_000)
    page.get_by_text("sodium chloride is a solid", exact=False).first.wait_for(timeout=10_000)
    shots.take(page, "prices")

    open_page(page, "Cheapest mix")
    page.get_by_role("button", name="Find the cheapest mix").click()
    page.get_by_text("per litre").first.wait_for(timeout=120_000)
    wait_idle(page)
    shots.take(page, "cheapest_mix")

    open_page(page, "Purchase plan")
    page.get_by_label("offers (CSV or XLSX", exact=False).locator("input[type=file]").set_input_files(
        str(EXAMPLES / "offers.csv"))
    page.get_by_label("suppliers' terms", exact=False).locator("input[type=file]").set_input_files(
        str(EXAMPLES / "suppliers.csv"))
    wait_idle(page)
    needs = page.get_by_label("needs, one a line", exact=False)
    needs.fill("Tris=2kg\nNaCl=1kg")
    needs.press("Control+Enter")
    wait_idle(page)
    page.get_by_role("button", name="Plan the purchase").click()
    page.get_by_text("Total", exact=False).first.wait_for(timeout=60_000)
    wait_idle(page)
    shots.take(page, "purchase_plan")


def metal_assay(page, shots) -> None:
    """The pH of a mixture that holds calcium and EDTA, with its uncertainty."""
    open_page(page, "pH of a mixture")
    metric = page.locator("[data-testid=stMetric]").first
    metric.wait_for(timeout=60_000)
    before = metric.inner_text()
    reagents = page.get_by_label("reagents, one per line")
    reagents.fill("CaCl2=1mM\nNa2H2EDTA=2mM\ntris=20mM")
    page.get_by_role("heading", name="pH of a mixture").click()          # leaving the field applies it
    wait_idle(page)
    for _ in range(120):
        if metric.inner_text() != before:
            break
        page.wait_for_timeout(250)
    assert metric.inner_text() != before, "the typed mixture was not solved"
    wait_idle(page)
    assert "±" in metric.inner_text()
    assert page.locator("[data-testid=stAlertContentError]").count() == 0
    assert "spec=" in page.url          # the spec travels in the link
    shots.take(page, "ph_of_a_mixture_calcium_edta")


def every_other_page(page, shots) -> None:
    """Every page of the navigation not yet seen, each shown without an error."""
    seen = {"Compare buffers", "Recipe", "Recipe book", "Prices", "Cheapest mix", "Purchase plan", "pH of a mixture"}
    titles = [t.strip() for t in page.locator("[data-testid=stSidebarNav] a").all_inner_texts()]
    assert seen <= set(titles), titles
    for title in [t for t in titles if t not in seen]:
        open_page(page, title)
        page.get_by_role("heading").first.wait_for(timeout=60_000)
        assert page.locator("[data-testid=stException]").count() == 0, title
        shots.take(page, title.lower().replace(" ", "_"))
    page.get_by_role("link", name="pH standards", exact=True).click()
    wait_idle(page)
    page.get_by_text("local regulations", exact=False).first.wait_for(timeout=30_000)


def printed_bench_sheet(page, bench_sheet: Path, shots) -> None:
    """The bench sheet downloaded from the recipe page, as printed (print media): its blanks are there."""
    page.goto(bench_sheet.as_uri(), wait_until="load")
    page.emulate_media(media="print")
    for blank in ("lot number", "balance reading", "measured pH", "operator", "signature", "volume made"):
        page.get_by_text(blank).first.wait_for(timeout=10_000)
    assert page.locator("td.blank").count() >= 10
    shots.take(page, "bench_sheet_printed")
