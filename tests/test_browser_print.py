"""The demo report printed to PDF by Debian chromium (Playwright), as a client would print it.

Checks that the print stylesheet gives a sensible A4 document: a page count in a plausible
range, every chart in the PDF (its title is text in the PDF), no chart wider than the printable
width, and the answer on the first page. Saves the PDF and PNG pages to artifacts/ for a person
to look at. Demo data are INVENTED (fictional city).
"""

from __future__ import annotations

import shutil
import subprocess

import pytest
from browser import ARTIFACTS, launch, needs_chromium

from workbench.interfaces.charts import all_figures
from workbench.interfaces.report import write_study_report
from workbench.study import read_study, run

pytestmark = [pytest.mark.browser, needs_chromium]

#: A4 width less the stylesheet's 14 mm margins, in CSS pixels (96 per inch).
PRINTABLE_WIDTH_PX = (210 - 2 * 14) / 25.4 * 96


def test_demo_report_prints_to_a_clean_pdf(tmp_path):
    from playwright.sync_api import sync_playwright
    from pypdf import PdfReader

    study = read_study("demo")
    result = run(study, draws=500)
    figures = all_figures(result)
    titles = [f.layout.title.text for f in figures.values()]
    path = write_study_report(study, result, tmp_path / "report.html")
    pdf = ARTIFACTS / "report.pdf"
    ARTIFACTS.mkdir(exist_ok=True)
    with sync_playwright() as p:
        browser = launch(p)
        try:
            page = browser.new_page(viewport={"width": 1280, "height": 900})
            page.goto(path.as_uri())
            page.wait_for_selector(".js-plotly-plot .main-svg", timeout=30_000)
            page.wait_for_function(
                f"document.querySelectorAll('.js-plotly-plot .main-svg').length >= "
                f"{len(figures)}", timeout=30_000)
            page.emulate_media(media="print")
            page.wait_for_timeout(500)
            widths = page.eval_on_selector_all(
                ".js-plotly-plot .main-svg", "els => els.map(e => e.getBoundingClientRect().width)")
            page.pdf(path=str(pdf), format="A4", print_background=True)
        finally:
            browser.close()
    reader = PdfReader(str(pdf))
    pages = [pg.extract_text() for pg in reader.pages]
    text = "\n".join(pages)
    # five options on three classes: the summary, tables, one efficiency map per class and
    # per map an option runs on (13), every input and default; 44 pages on 2026-12-03
    assert 8 <= len(pages) <= 48, len(pages)
    assert max(widths) <= PRINTABLE_WIDTH_PX + 1, widths
    for title in titles:
        assert title.split("<")[0].strip()[:30] in text, title
    assert "Summary" in pages[0] and "pays" in pages[0]
    if shutil.which("pdftoppm"):
        subprocess.run(["pdftoppm", "-r", "50", "-png", str(pdf), str(ARTIFACTS / "report-page")],
                       check=True)
