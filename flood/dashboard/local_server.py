"""Helpers to run the dashboard in a local subprocess and drive it with headless Chromium.

Used by the browser tests, ``bench/bench_dashboard.py`` and ``scripts/screenshot.py``. Chromium is
Debian's package (``/usr/lib/chromium/chromium``, override with $FLOOD_CHROMIUM), driven through the
pip package ``playwright`` -- never ``playwright install``.
"""

from __future__ import annotations

import contextlib
import os
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
CHROMIUM = os.environ.get("FLOOD_CHROMIUM", "/usr/lib/chromium/chromium")
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync",
                 "--disable-dev-shm-usage"]


def free_port() -> int:
    """A free TCP port on 127.0.0.1."""
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def scratch_env(scratch: Path) -> dict:
    """The environment with XDG_CONFIG_HOME, XDG_CACHE_HOME and TMPDIR inside ``scratch``."""
    env = dict(os.environ)
    for key in ("XDG_CONFIG_HOME", "XDG_CACHE_HOME", "TMPDIR"):
        (Path(scratch) / key.lower()).mkdir(parents=True, exist_ok=True)
        env[key] = str(Path(scratch) / key.lower())
    env["FLOOD_CACHE_DIR"] = str(Path(scratch) / "dash-cache")
    env["PYTHONUNBUFFERED"] = "1"
    return env


def server_command(kind: str, port: int) -> list:
    """Command serving the app: ``"app"`` (python app.py) or ``"gunicorn"`` (two workers)."""
    if kind == "gunicorn":
        return [sys.executable, "-m", "gunicorn", "app:server", "-b", f"127.0.0.1:{port}", "-w", "2",
                "--no-control-socket"]
    return [sys.executable, "app.py", "--port", str(port)]


@contextlib.contextmanager
def served(kind: str, scratch: Path, timeout: float = 60.0):
    """Serve the app in a subprocess; yields its base URL and stops it afterwards."""
    port = free_port()
    log_path = Path(scratch) / f"server-{kind}-{port}.log"  # a file, not a pipe: a full pipe would stall the server
    log = open(log_path, "w", encoding="utf-8")
    proc = subprocess.Popen(server_command(kind, port), cwd=ROOT, env=scratch_env(scratch),
                            stdout=log, stderr=subprocess.STDOUT, text=True)
    url = f"http://127.0.0.1:{port}/"
    try:
        end = time.monotonic() + timeout
        while True:
            if proc.poll() is not None:
                raise RuntimeError(f"server exited with {proc.returncode}: {log_path.read_text()[-2000:]}")
            try:
                with urllib.request.urlopen(url, timeout=2) as r:
                    if r.status == 200:
                        break
            except OSError:
                if time.monotonic() > end:
                    raise RuntimeError(f"server at {url} did not answer within {timeout} s") from None
                time.sleep(0.2)
        yield url
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait()
        log.close()


def launch_chromium(playwright, scratch: Path):
    """Headless Debian Chromium with the scratch environment."""
    if not Path(CHROMIUM).exists():
        raise RuntimeError(f"Chromium not found at {CHROMIUM}: apt-get install -y chromium chromium-driver")
    return playwright.chromium.launch(executable_path=CHROMIUM, headless=True, args=CHROMIUM_ARGS,
                                      env=scratch_env(scratch))


WAIT_FIGURES_JS = ("(ids) => ids.every(id => { const g = document.querySelector('#' + id + ' .js-plotly-plot');"
                   " return g && g._fullData && g._fullData.length > 0; })")
