"""The study notebook served by Voilà, driven in Debian chromium through Playwright.

Serves notebooks/study.ipynb (the FICTIONAL demo study; every number invented) on 127.0.0.1,
waits until Voilà has rendered every widget, changes the LPG price in the economics panel and
checks that the NPV in the summary table and in the cash-flow chart move. A
bad value must show its error beside the field. Screenshots for a person to look at:
artifacts/panel-app-before.png and artifacts/panel-app.png (after the change).
"""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest
from browser import ARTIFACTS, launch, needs_chromium

ROOT = Path(__file__).resolve().parents[1]
NOTEBOOK = ROOT / "notebooks" / "study.ipynb"
#: Voilà runs the notebook (first run with chemistry: seconds) before the page is complete.
RENDER_TIMEOUT_MS = 120_000

pytestmark = [
    pytest.mark.browser,
    pytest.mark.slow,
    needs_chromium,
]

#: The lpg-taxis NPV read from the cash-flow chart drawn by plotly.js: the last point of that
#: candidate's cumulative line (y may arrive as a typed array).
NPV_FROM_CHART = """() => {
  for (const div of document.querySelectorAll('.js-plotly-plot')) {
    const title = (div.layout && div.layout.title && div.layout.title.text) || '';
    if (!title.startsWith('Cumulative discounted')) continue;
    for (const t of div._fullData || []) {  // arrays decoded by plotly.js (not base64)
      if (t.legendgroup === 'candidate:lpg-taxis' && t.mode === 'lines+markers') {
        const y = Array.from(t.y);
        const last = y[y.length - 1];
        return typeof last === 'number' ? last : null;
      }
    }
  }
  return null;
}"""
NPV_CELL = 'td[data-candidate="lpg-taxis"][data-column="npv_vs_baseline"]'


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _wait_for_server(url: str, proc: subprocess.Popen, timeout: float) -> None:
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise RuntimeError(f"voila exited with status {proc.returncode}")
        try:
            with urllib.request.urlopen(url + "api", timeout=2):
                return
        except urllib.error.HTTPError:  # any HTTP answer means the server is up
            return
        except OSError:
            time.sleep(0.3)
    raise TimeoutError(f"voila did not answer on {url} within {timeout:.0f} s")


@pytest.fixture
def voila_url(tmp_path):
    """Voilà serving the study notebook on a free local port, with this interpreter's kernel."""
    from ipykernel.kernelspec import write_kernel_spec

    jupyter = tmp_path / "jupyter"
    write_kernel_spec(str(jupyter / "kernels" / "python3"))  # runs sys.executable
    # The kernel imports this checkout, whichever copy of the package is installed.
    path = os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")]))
    env = {**os.environ, "JUPYTER_PATH": str(jupyter), "PYTHONPATH": path}
    port = _free_port()
    log = (tmp_path / "voila.log").open("w")
    proc = subprocess.Popen(
        [sys.executable, "-m", "voila", str(NOTEBOOK), "--no-browser", f"--port={port}",
         "--Voila.ip=127.0.0.1", "--show_tracebacks=True", "--VoilaExecutor.timeout=120"],
        cwd=tmp_path, env=env, stdout=log, stderr=subprocess.STDOUT)
    url = f"http://127.0.0.1:{port}/"
    try:
        _wait_for_server(url, proc, 60)
        yield url
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=15)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait()
        log.close()


def test_price_change_moves_npv_in_voila(voila_url):
    from playwright.sync_api import sync_playwright

    errors: list[str] = []
    outside: list[str] = []
    ARTIFACTS.mkdir(exist_ok=True)
    with sync_playwright() as p:
        browser = launch(p)
        try:
            context = browser.new_context(viewport={"width": 1400, "height": 3000})

            def route(r):  # offline: only the local Voilà server
                if r.request.url.startswith(voila_url):
                    r.continue_()
                else:
                    outside.append(r.request.url)
                    r.abort()

            context.route("**/*", route)

            def open_app():
                page = context.new_page()
                page.on("pageerror", lambda e: errors.append(str(e)))
                page.goto(voila_url, timeout=RENDER_TIMEOUT_MS)
                page.wait_for_selector("#loading", state="detached", timeout=RENDER_TIMEOUT_MS)
                page.wait_for_selector(".js-plotly-plot .main-svg", state="attached",
                                       timeout=60_000)
                page.wait_for_function(f"({NPV_FROM_CHART})() !== null", timeout=60_000)
                return page

            page = open_app()
            page.screenshot(path=str(ARTIFACTS / "panel-app-before.png"))
            text = page.inner_text("body")
            npv_chart = page.evaluate(NPV_FROM_CHART)
            npv_cell = page.inner_text(NPV_CELL)

            price = page.locator(".wb-prices-lpg-mode input")
            price.fill("0.75 per L")  # within the demo range 0.70-0.98
            price.press("Enter")
            page.wait_for_function(
                f"document.querySelector('{NPV_CELL}').innerText !== {npv_cell!r}",
                timeout=30_000)
            page.wait_for_function(f"({NPV_FROM_CHART})() > {npv_chart}", timeout=30_000)
            npv_chart_after = page.evaluate(NPV_FROM_CHART)
            npv_cell_after = page.inner_text(NPV_CELL)

            rate = page.locator(".wb-programme-discount-rate-low input")
            rate.fill("-150 %")
            rate.press("Enter")
            page.wait_for_selector(".wb-error", timeout=30_000)
            error = page.inner_text(".wb-error")
            npv_cell_kept = page.inner_text(NPV_CELL)
            page.screenshot(path=str(ARTIFACTS / "panel-app.png"))
        finally:
            browser.close()

    assert "fictional" in text.lower() and "licensed installers" in text
    assert "Traceback" not in text
    assert npv_chart_after > npv_chart  # cheaper LPG: the LPG taxis save more
    assert float(npv_cell_after.replace(",", "")) > float(npv_cell.replace(",", ""))
    # The summary and the chart show the same NPV (the cell is rounded to a whole KBD).
    assert float(npv_cell_after.replace(",", "")) == pytest.approx(npv_chart_after, abs=1.0)
    assert "programme.discount_rate.low" in error
    assert npv_cell_kept == npv_cell_after  # the bad value left the results alone
    assert errors == []
    # Offline: everything outside the local server was refused (Voilà's own template asks a CDN
    # for its icon font and style sheets), and the app worked without it.
    assert all(not u.startswith(voila_url) for u in outside)
