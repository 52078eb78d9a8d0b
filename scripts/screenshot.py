"""Generate docs/screenshot.png: the dashboard's main view with the demo case, in headless Chromium.

Usage: ``python scripts/screenshot.py [--output docs/screenshot.png]``. Serves the app on a free
loopback port, opens it at 1440 x 900 (a laptop screen), waits for the figures and saves the view.
Needs Debian ``chromium`` and the pip package ``playwright`` (never ``playwright install``).
"""

from __future__ import annotations

import argparse
import shutil
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from flood.dashboard import ids  # noqa: E402
from flood.dashboard.local_server import WAIT_FIGURES_JS, launch_chromium, served  # noqa: E402


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--output", default=str(ROOT / "docs" / "screenshot.png"))
    args = parser.parse_args(argv)
    from playwright.sync_api import sync_playwright

    scratch = Path(tempfile.mkdtemp(prefix="flood-shot-"))
    try:
        with served("app", scratch) as url, sync_playwright() as p:
            browser = launch_chromium(p, scratch)
            page = browser.new_page(viewport={"width": 1440, "height": 900}, device_scale_factor=1)
            page.goto(url)
            page.wait_for_function(WAIT_FIGURES_JS, arg=[ids.FIG_RATE_CUT, ids.FIG_WOR], timeout=30_000)
            page.wait_for_timeout(800)
            out = Path(args.output)
            out.parent.mkdir(parents=True, exist_ok=True)
            page.screenshot(path=str(out))
            browser.close()
    finally:
        shutil.rmtree(scratch, ignore_errors=True)
    print(f"wrote {args.output}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
