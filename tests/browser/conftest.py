"""Fixtures of the real-browser tests: the app served in a subprocess, headless Debian Chromium.

Needs the Debian packages ``chromium`` and ``chromium-driver`` (binary /usr/lib/chromium/chromium,
override with $FLOOD_CHROMIUM) and the pip package ``playwright`` -- never ``playwright install``.
Chromium and the servers run with XDG_CONFIG_HOME, XDG_CACHE_HOME and TMPDIR in a scratch folder.
"""

from __future__ import annotations

import shutil
import tempfile
from pathlib import Path

import pytest

from flood.dashboard import ids
from flood.dashboard.local_server import WAIT_FIGURES_JS, launch_chromium, served

FIRST_RENDER_MS = 20_000


@pytest.fixture(scope="session")
def scratch():
    """Scratch folder for Chromium's config/cache and temporary files (removed at the end)."""
    path = Path(tempfile.mkdtemp(prefix="flood-browser-"))
    yield path
    shutil.rmtree(path, ignore_errors=True)


@pytest.fixture(scope="session")
def app_url(scratch):
    """The dashboard served by ``python app.py --port N`` (as a user starts it)."""
    with served("app", scratch) as url:
        yield url


@pytest.fixture(scope="session")
def gunicorn_url(scratch):
    """The dashboard served by ``gunicorn app:server -w 2`` (as a team serves it)."""
    with served("gunicorn", scratch) as url:
        yield url


@pytest.fixture(scope="session")
def browser(scratch):
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        b = launch_chromium(p, scratch)
        yield b
        b.close()


class Session:
    """One browser context on the dashboard, with console errors collected."""

    def __init__(self, browser, url):
        self.context = browser.new_context(accept_downloads=True, viewport={"width": 1440, "height": 900})
        self.page = self.context.new_page()
        self.errors = []
        self.page.on("console", lambda m: self.errors.append(m.text) if m.type == "error" else None)
        self.page.on("pageerror", lambda e: self.errors.append(str(e)))
        self.page.goto(url)
        self.page.wait_for_function(WAIT_FIGURES_JS, arg=[ids.FIG_RATE_CUT, ids.FIG_WOR], timeout=FIRST_RENDER_MS)

    def open_tab(self, label: str, figure_ids=()):
        """Select a view tab and wait until its figures are drawn."""
        self.page.locator(f"#{ids.VIEW_TABS}").get_by_text(label, exact=True).click()
        self.page.wait_for_function(WAIT_FIGURES_JS, arg=list(figure_ids), timeout=10_000)

    def card(self, key: str) -> str:
        return self.page.inner_text(f"#card-{key}")

    def trace_y(self, fig_id: str, i: int = 0) -> list:
        return self.page.evaluate(
            f"() => Array.from(document.querySelector('#{fig_id} .js-plotly-plot')._fullData[{i}].y)")

    def wait_card_change(self, key: str, old: str, timeout=10_000):
        self.page.wait_for_function(
            f"(old) => {{ const e = document.querySelector('#card-{key}'); return e && e.innerText !== old; }}",
            arg=old, timeout=timeout)

    def close(self):
        self.context.close()


@pytest.fixture
def session(browser, app_url):
    s = Session(browser, app_url)
    yield s
    s.close()


@pytest.fixture
def open_session(browser, app_url):
    """Factory of further sessions (separate browser contexts) on the same server."""
    made = []

    def _open(url=None):
        s = Session(browser, url or app_url)
        made.append(s)
        return s

    yield _open
    for s in made:
        s.close()
