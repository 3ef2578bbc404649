"""Browser tests: Playwright for Python driving the system Chromium.

Chromium is never downloaded: the tests use /usr/bin/chromium (or $CHROMIUM_PATH). Where it is
missing they skip with a reason, except in CI (CI=true), where they fail.
"""

from __future__ import annotations

import os
import shutil
from collections.abc import Iterator
from pathlib import Path

import pytest

SCREENSHOTS = Path(__file__).resolve().parents[2] / "var" / "screenshots"
CHROMIUM_FLAGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
    "--disable-quic",
]


def _chromium() -> str | None:
    path = os.environ.get("CHROMIUM_PATH") or "/usr/bin/chromium"
    return path if Path(path).exists() else shutil.which("chromium")


@pytest.fixture(scope="session")
def browser() -> Iterator[object]:
    executable = _chromium()
    if executable is None:
        message = "Chromium is not installed (apt-get install chromium); browser tests need it"
        if os.environ.get("CI") == "true":
            pytest.fail(message)
        pytest.skip(message)
    from playwright.sync_api import sync_playwright

    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=executable, args=CHROMIUM_FLAGS, headless=True)
        yield browser
        browser.close()


@pytest.fixture
def page(browser, live_server) -> Iterator[object]:
    context = browser.new_context(base_url=live_server.url, viewport={"width": 1180, "height": 820})
    context.set_default_timeout(10_000)
    page = context.new_page()
    yield page
    context.close()


@pytest.fixture
def screenshot(page):
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)

    def take(name: str) -> None:
        page.screenshot(path=str(SCREENSHOTS / f"{name}.png"), full_page=True)

    return take


def sign_in(page, username: str, password: str) -> None:
    page.goto("/accounts/sign-in/")
    page.fill("input[name=username]", username)
    page.fill("input[name=password]", password)
    page.click("button[type=submit]")
    page.wait_for_url("**/")
