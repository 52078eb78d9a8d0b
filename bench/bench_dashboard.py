"""Benchmark: mobility-ratio slider change -> every figure on screen redrawn, timed in headless Chromium.

For each view tab, prints the in-browser latency (keydown on the slider handle until the last of
the tab's figures fires ``plotly_afterplot``, both on the page's clock) as median and p95 over
``--changes`` changes, and the server-side time of the main callback alone (engine + figure building + JSON
encoding of its outputs, in-process). Never fails on timing.

Usage: ``python bench/bench_dashboard.py [--changes 40] [--gunicorn]``
Needs Debian ``chromium`` (/usr/lib/chromium/chromium) and the pip package ``playwright``.
"""

from __future__ import annotations

import argparse
import os
import shutil
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from flood.dashboard.local_server import WAIT_FIGURES_JS, launch_chromium, served  # noqa: E402
#: View tabs and the figures each one shows (only the selected tab's figures are in the page).
TABS = {"Rates and water cut": ("fig-rate-cut", "fig-wor"),
        "Displacement and recovery": ("fig-fractional-flow", "fig-recovery"),
        "Saturation profile": ("fig-profile",)}

_LISTEN_JS = """
(ids) => {
  window.__plotted = {};
  window.__keydown = null;
  document.addEventListener('keydown', e => { window.__keydown = e.timeStamp; }, true);
  for (const id of ids) {
    const gd = document.querySelector('#' + id + ' .js-plotly-plot');
    gd.on('plotly_afterplot', () => { window.__plotted[id] = performance.now(); });
  }
}
"""


def percentile(values, q):
    data = sorted(values)
    k = (len(data) - 1) * q / 100.0
    lo, hi = int(k), min(int(k) + 1, len(data) - 1)
    return data[lo] + (data[hi] - data[lo]) * (k - lo)


def browser_latency(url: str, changes: int, scratch: Path) -> dict[str, list[float]]:
    """Per view tab: keydown -> every figure of the tab re-plotted [ms], one value per slider change."""
    from playwright.sync_api import sync_playwright

    out = {}
    with sync_playwright() as p:
        b = launch_chromium(p, scratch)
        page = b.new_page(viewport={"width": 1440, "height": 900})
        page.goto(url)
        for tab, figures in TABS.items():
            page.locator("#view-tabs").get_by_text(tab, exact=True).click()
            page.wait_for_function(WAIT_FIGURES_JS, arg=list(figures), timeout=30_000)
            page.wait_for_timeout(300)
            page.evaluate(_LISTEN_JS, list(figures))
            page.locator("#mobility_ratio-slider [role=slider]").focus()
            times = []
            for i in range(changes + 3):  # the first 3 warm up
                page.evaluate("() => { window.__plotted = {}; window.__keydown = null; }")
                page.keyboard.press("ArrowRight" if (i // 4) % 2 == 0 else "ArrowLeft")
                page.wait_for_function("(n) => Object.keys(window.__plotted).length >= n && window.__keydown !== null",
                                       arg=len(figures), timeout=15_000)
                page.wait_for_timeout(60)  # let a late duplicate afterplot land before the next change
                ms = page.evaluate("() => Math.max(...Object.values(window.__plotted)) - window.__keydown")
                if i >= 3:
                    times.append(ms)
            out[tab] = times
        b.close()
    return out


def server_time(changes: int) -> list[float]:
    """Main callback alone, in-process: engine + figures + JSON of the outputs [ms]."""
    from plotly.io.json import to_json_plotly

    from flood.dashboard import adapter, callbacks, ids

    demo = adapter.demo_scenario()
    values = adapter.controls_from_scenario(demo)
    out = []
    for i in range(changes + 3):
        values["mobility_ratio"] = 10 ** (0.29 + 0.01 * (i % 8))
        t0 = time.perf_counter()
        view = callbacks.compute_view(values, demo, [], 0.3, {ids.box("mobility_ratio")})
        to_json_plotly([view[k] for k in callbacks.VIEW_KEYS if view[k] is not callbacks.no_update])
        if i >= 3:
            out.append(1000 * (time.perf_counter() - t0))
    return out


def _report(name, values):
    print(f"{name}: n = {len(values)}, median {statistics.median(values):.1f} ms, "
          f"p95 {percentile(values, 95):.1f} ms, min {min(values):.1f} ms, max {max(values):.1f} ms")


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--changes", type=int, default=40, help="slider changes timed (>= 30)")
    parser.add_argument("--gunicorn", action="store_true", help="serve with gunicorn -w 2 instead of app.py")
    args = parser.parse_args(argv)
    changes = max(args.changes, 30)
    scratch = Path(tempfile.mkdtemp(prefix="flood-bench-"))
    try:
        _report("server-side main callback (engine + 5 figures + cards + JSON)", server_time(changes))
        with served("gunicorn" if args.gunicorn else "app", scratch) as url:
            server = "gunicorn -w 2" if args.gunicorn else "python app.py"
            for tab, times in browser_latency(url, changes, scratch).items():
                _report(f"browser ({server}), M slider keydown -> every figure of tab '{tab}' redrawn", times)
    finally:
        shutil.rmtree(scratch, ignore_errors=True)
    print(f"targets: median <= 100 ms, p95 <= 200 ms (machine: {os.cpu_count()} cores)")


if __name__ == "__main__":
    main()
