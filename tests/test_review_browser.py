"""The review site in a real browser: Debian's headless chromium, driven by
Playwright (pointed at the distribution's binary; Playwright's own browser download
is never used). The server runs on 127.0.0.1 on a free port in a thread.

`make test` installs chromium when it is missing (the `browser` target)."""

from __future__ import annotations

import csv
import io
import shutil
import threading

import pytest

from summarize.output.site.server import ReviewServer
from tests.review_store import build_review_store

CHROMIUM = shutil.which("chromium") or "/usr/bin/chromium"
LAUNCH_FLAGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
]


@pytest.fixture(scope="module")
def served(tmp_path_factory):
    path = tmp_path_factory.mktemp("browser") / "store.sqlite"
    ids = build_review_store(path)
    review = ReviewServer(path)
    server = review.start()
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    yield review.address(server), ids
    server.shutdown()
    server.server_close()


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    if not shutil.which("chromium"):
        pytest.fail("chromium is not installed: `make browser` (part of `make test`) installs it")
    from playwright.sync_api import sync_playwright

    profile = tmp_path_factory.mktemp("chromium-profile")
    with sync_playwright() as playwright:
        context = playwright.chromium.launch_persistent_context(
            str(profile), executable_path=CHROMIUM, headless=True, args=LAUNCH_FLAGS,
            viewport={"width": 1200, "height": 700}, accept_downloads=True,
        )
        yield context
        context.close()


def _in_viewport(page, selector: str) -> bool:
    return page.eval_on_selector(
        selector,
        "e => { const r = e.getBoundingClientRect();"
        " return r.height > 0 && r.top >= 0 && r.bottom <= window.innerHeight; }",
    )


def test_search_open_click_sentence_shows_its_span(served, browser):
    # External check: Debian's `chromium`, driven by Playwright
    address, ids = served
    page = browser.new_page()
    page.goto(address)
    page.fill("#q", "bollards")
    page.click("form.search button[type=submit]")
    page.wait_for_selector("li.hit")
    page.click("li.hit a.title")
    page.wait_for_url(f"**/document/{ids['long']}")
    # The textrank summary's second sentence comes from the end of a long document.
    link = page.locator("#summary-C a.sentence").nth(1)
    key = link.get_attribute("data-span")
    target = f"[id='{key}']"
    assert not _in_viewport(page, target)
    link.click()
    page.wait_for_function(f"document.getElementById('{key}').classList.contains('lit')")
    assert _in_viewport(page, target)
    lit = page.eval_on_selector_all("mark.lit", "ms => ms.map(m => m.textContent).join('')")
    assert lit.startswith("The final review found the new bollards")
    page.close()


def test_filters_narrow_the_results(served, browser):
    address, ids = served
    page = browser.new_page()
    page.goto(address)
    page.fill("#q", "inspection OR slates OR valve OR viaduct")
    page.click("form.search button[type=submit]")
    page.wait_for_selector("li.hit")
    everything = page.locator("li.hit").count()
    page.select_option("select[name=format]", "pdf")
    page.select_option("select[name=status]", "active")
    page.click("form.search button[type=submit]")
    page.wait_for_selector("li.hit")
    narrowed = page.locator("li.hit a.title").evaluate_all("links => links.map(a => a.getAttribute('href'))")
    assert narrowed == [f"/document/{ids['inspection']}"] and everything > 1
    page.close()


def test_a_payload_document_renders_inert(served, browser):
    address, ids = served
    page = browser.new_page()
    dialogs, errors = [], []
    page.on("dialog", lambda dialog: (dialogs.append(dialog.message), dialog.dismiss()))
    page.on("pageerror", lambda error: errors.append(str(error)))
    for url in (f"document/{ids['payload']}", "?q=payload", "?q=" + "%22%3E%3Cimg"):
        page.goto(address + url)
        page.wait_for_load_state("load")
        assert page.evaluate("window.__pwned === undefined"), url
        assert page.locator("iframe, svg, img").count() == 0
    page.goto(address + f"document/{ids['payload']}")
    assert "<script>window.__pwned = 1</script>" in page.inner_text("h1")
    assert not dialogs and not errors
    page.close()


def test_download_opens_as_csv_with_the_right_columns(served, browser):
    address, ids = served
    page = browser.new_page()
    page.goto(address + "?q=bollards+OR+valves")
    with page.expect_download() as caught:
        page.click("#download-csv")
    download = caught.value
    raw = open(download.path(), "rb").read()
    assert raw.startswith(b"\xef\xbb\xbf")
    rows = list(csv.DictReader(io.StringIO(raw.decode("utf-8-sig"), newline="")))
    assert {"document_id", "status", "method", "budget", "summary", "caution"} <= set(rows[0])
    assert {int(row["document_id"]) for row in rows} == {ids["long"], ids["payload"]}
    page.close()
