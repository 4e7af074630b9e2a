"""The HTML report in a real browser (Debian chromium via Playwright), network off.

Uses the INVENTED fixture of tests/study_fixture.py. Saves a full-page screenshot to
artifacts/report.png for a person to look at.
"""

from __future__ import annotations

import pytest
from browser import ARTIFACTS, launch, needs_chromium
from study_fixture import XSS_NAME, make_map_grid, make_result

from workbench.interfaces.charts import all_figures
from workbench.interfaces.report import SAFETY_CAUTION, write_report

pytestmark = [
    pytest.mark.browser,
    needs_chromium,
]


def test_report_renders_offline_in_chromium(tmp_path):
    from playwright.sync_api import sync_playwright

    result = make_result()
    grid = make_map_grid()
    n_charts = len(all_figures(result, map_grid=grid))
    path = write_report(result, tmp_path / "report.html", study_text="title = 'x'\n",
                        map_grid=grid)

    errors: list[str] = []
    dialogs: list[str] = []
    requests: list[str] = []
    with sync_playwright() as p:
        browser = launch(p)
        try:
            context = browser.new_context(viewport={"width": 1280, "height": 900})

            def route(r):
                requests.append(r.request.url)
                if r.request.url.startswith("file://"):
                    r.continue_()
                else:
                    r.abort()

            context.route("**/*", route)
            page = context.new_page()
            page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
            page.on("pageerror", lambda e: errors.append(str(e)))

            def on_dialog(d):
                dialogs.append(d.message)
                d.dismiss()

            page.on("dialog", on_dialog)
            page.goto(path.as_uri())
            for i in range(n_charts):
                page.wait_for_selector(f"#chart-{i}.js-plotly-plot .main-svg", timeout=20_000)
            rendered = page.locator(".js-plotly-plot").count()
            text = page.inner_text("body")
            svg_text = page.eval_on_selector_all(
                ".js-plotly-plot .legendtext", "els => els.map(e => e.textContent)")
            ARTIFACTS.mkdir(exist_ok=True)
            page.screenshot(path=str(ARTIFACTS / "report.png"), full_page=True)
        finally:
            browser.close()

    assert rendered == n_charts
    assert errors == []
    assert dialogs == []
    # Nothing but the file itself was requested: plotly.js is embedded, not fetched.
    assert all(u.startswith("file://") for u in requests), requests
    # The markup in the name shows as text, in the page tables and in the chart legends.
    assert XSS_NAME in text
    assert XSS_NAME in svg_text
    assert SAFETY_CAUTION in text
