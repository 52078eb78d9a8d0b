"""Fixtures of the real-browser tests: the app served in a subprocess, headless Debian Chromium.

Needs the Debian packages ``chromium`` and ``chromium-driver`` (binary /usr/lib/chromium/chromium,
override with $FLOOD_CHROMIUM) and the pip package ``playwright`` -- never ``playwright install``.
"""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

import pytest

from flood.dashboard import ids

ROOT = Path(__file__).resolve().parents[2]
CHROMIUM = os.environ.get("FLOOD_CHROMIUM", "/usr/lib/chromium/chromium")
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync",
                 "--disable-dev-shm-usage"]
FIRST_RENDER_MS = 20_000


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="session")
def scratch():
    """Scratch folder for Chromium's config/cache and temporary files (removed at the end)."""
    path = Path(tempfile.mkdtemp(prefix="flood-browser-"))
    yield path
    shutil.rmtree(path, ignore_errors=True)


def scratch_env(scratch: Path) -> dict:
    env = dict(os.environ)
    for key in ("XDG_CONFIG_HOME", "XDG_CACHE_HOME", "TMPDIR"):
        (scratch / key.lower()).mkdir(exist_ok=True)
        env[key] = str(scratch / key.lower())
    env["FLOOD_CACHE_DIR"] = str(scratch / "dash-cache")
    env["PYTHONUNBUFFERED"] = "1"
    return env


def _wait_http(url: str, proc, timeout=60.0):
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if proc.poll() is not None:
            raise RuntimeError(f"server exited with {proc.returncode}: {proc.stdout.read()[-2000:]}")
        try:
            with urllib.request.urlopen(url, timeout=2) as r:
                if r.status == 200:
                    return
        except OSError:
            time.sleep(0.2)
    raise RuntimeError(f"server at {url} did not answer within {timeout} s")


def start_server(cmd: list, scratch: Path, port: int):
    """Start a server subprocess and wait until its page answers; returns (process, base URL)."""
    proc = subprocess.Popen(cmd, cwd=ROOT, env=scratch_env(scratch), stdout=subprocess.PIPE,
                            stderr=subprocess.STDOUT, text=True)
    url = f"http://127.0.0.1:{port}/"
    try:
        _wait_http(url, proc)
    except BaseException:
        proc.kill()
        raise
    return proc, url


def stop_server(proc):
    proc.terminate()
    try:
        proc.wait(timeout=10)
    except subprocess.TimeoutExpired:
        proc.kill()


@pytest.fixture(scope="session")
def app_url(scratch):
    """The dashboard served by ``python app.py --port N`` (as a user starts it)."""
    port = free_port()
    proc, url = start_server([sys.executable, "app.py", "--port", str(port)], scratch, port)
    yield url
    stop_server(proc)


@pytest.fixture(scope="session")
def gunicorn_url(scratch):
    """The dashboard served by ``gunicorn app:server -w 2`` (as a team serves it)."""
    port = free_port()
    cmd = [sys.executable, "-m", "gunicorn", "app:server", "-b", f"127.0.0.1:{port}", "-w", "2",
           "--no-control-socket"]
    proc, url = start_server(cmd, scratch, port)
    yield url
    stop_server(proc)


@pytest.fixture(scope="session")
def browser(scratch):
    if not Path(CHROMIUM).exists():
        pytest.fail(f"Chromium not found at {CHROMIUM}: apt-get install -y chromium chromium-driver")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, headless=True, args=CHROMIUM_ARGS,
                              env=scratch_env(scratch))
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
        self.page.wait_for_function(
            "() => ['fig-rate-cut','fig-wor']"
            ".every(id => { const g = document.querySelector('#' + id + ' .js-plotly-plot');"
            " return g && g._fullData && g._fullData.length > 0; })", timeout=FIRST_RENDER_MS)

    def open_tab(self, label: str, figure_ids=()):
        """Select a view tab and wait until its figures are drawn."""
        self.page.locator(f"#{ids.VIEW_TABS}").get_by_text(label, exact=True).click()
        for fig_id in figure_ids:
            self.page.wait_for_function(
                f"() => {{ const g = document.querySelector('#{fig_id} .js-plotly-plot');"
                " return g && g._fullData && g._fullData.length > 0; }", timeout=10_000)

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
