"""The HTML report: self-contained, complete, escaped, and written whole or not at all.

The data are the INVENTED fixture of tests/study_fixture.py (layout tests, not physics).
"""

from __future__ import annotations

import base64
import gzip
import io
import os
import re
from functools import partial

import numpy as np
import pandas as pd
import plotly.offline
import pytest
from study_fixture import XSS_NAME, make_map_grid, make_result

from workbench.core.errors import InputError
from workbench.interfaces import report
from workbench.interfaces.charts import all_figures
from workbench.interfaces.present import column_label, reader_table

STUDY_TEXT = "abc"
#: SHA-256("abc") from FIPS 180-2, Appendix B.1 (the standard's own worked example).
SHA256_ABC = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"


@pytest.fixture(scope="module")
def page(tmp_path_factory) -> str:
    path = tmp_path_factory.mktemp("report") / "study.html"
    written = report.write_report(make_result(), path, study_text=STUDY_TEXT,
                                  map_grid=make_map_grid())
    assert written == path
    assert path.stat().st_mode & 0o777 == 0o644  # shareable, unlike a private temp file
    return path.read_text(encoding="utf-8")


def test_plotly_js_is_embedded_exactly_once(page):
    js = plotly.offline.get_plotlyjs()
    banner = js.splitlines()[1]  # "* plotly.js vX.Y.Z"
    assert banner.startswith("* plotly.js v")
    assert page.count(banner) == 1
    assert page.count(js) == 1
    # no script is fetched from anywhere: the file works offline
    assert not re.search(r"<script[^>]+src=", page)
    assert "cdn.plot.ly" not in page.replace(js, "")


def test_every_chart_has_its_div(page):
    figs = all_figures(make_result(), map_grid=make_map_grid())
    assert len(figs) == 9
    assert page.count('class="plotly-graph-div"') == len(figs)
    assert page.count("Plotly.newPlot(") == len(figs)
    for i, key in enumerate(figs):
        assert f'id="chart-{i}"' in page
        assert f'data-chart="{key}"' in page


def _attachments(page: str) -> dict[str, bytes]:
    found = re.findall(r'download="([^"]+)" href="data:[^;]+;base64,([A-Za-z0-9+/=]+)"', page)
    return {name: base64.b64decode(data) for name, data in found}


def test_every_table_is_attached_whole_as_csv(page):
    result = make_result()
    files = _attachments(page)
    for name, table in result.tables().items():
        if table.empty or name == "inputs":
            continue
        assert f'id="table-{name}"' in page
        back = pd.read_csv(io.BytesIO(gzip.decompress(files[f"{name}.csv.gz"])))
        assert list(back.columns) == list(table.columns)
        assert len(back) == len(table)
        numeric = table.select_dtypes("number").columns
        # full precision, but the draws' NPVs: to a cent of the currency (half a cent off)
        tol = ({"rtol": 0.0, "atol": 0.5 * 10.0 ** -report.MONTE_CARLO_DECIMALS}
               if name == "monte_carlo" else {"rtol": 1e-12})
        np.testing.assert_allclose(back[numeric].to_numpy(float),
                                   table[numeric].to_numpy(float), **tol)


def test_the_study_file_is_attached_and_hashed(page):
    assert _attachments(page)["study.toml"] == STUDY_TEXT.encode("utf-8")
    assert SHA256_ABC in page


def test_long_tables_show_a_preview_only():
    from dataclasses import replace

    result = make_result()
    draws = pd.DataFrame({"candidate": "lpg-convert", "draw": range(5000),
                          "npv_vs_baseline": 1.0})
    page = report.html_report(replace(result, monte_carlo=draws), study_text="x")
    section = page.split('id="table-monte_carlo"')[1].split("</details>")[0]
    assert f"first {report.PREVIEW_ROWS} of 5,000 rows" in section
    assert section.count("<tr") == report.PREVIEW_ROWS + 1  # header row + rows shown


def test_caution_versions_sources_and_assumptions(page):
    assert page.count(report.SAFETY_CAUTION) == 1  # once, in the caveats section
    for word in ("licensed installers", "local codes", "estimate", "flammable"):
        assert word in report.SAFETY_CAUTION
    for label, version in report.software_versions().items():
        assert f"<td>{label}</td><td>{version}</td>" in page
    assert set(report.software_versions()) == {"python", "workbench", "cantera", "numpy",
                                               "pandas", "plotly", "CoolProp"}
    assert report.input_hash(STUDY_TEXT) == SHA256_ABC
    assert "900 taxis, 300 vans (INVENTED fixture)" in page
    assert "INVENTED for tests &lt;b&gt;not a source&lt;/b&gt;" in page


def test_the_answer_comes_first(page):
    body = page.split("<body>")[1]
    assert body.index('id="summary"') < body.index('id="job"') < body.index('id="charts"')
    assert body.index('id="summary"') < body.index('id="caveats"')


def test_demo_notice_only_for_fictional_studies():
    assert report.DEMO_NOTICE in report.html_report(make_result(demo=True), study_text="")
    assert report.DEMO_NOTICE not in report.html_report(make_result(demo=False), study_text="")


def test_user_text_is_escaped(page):
    body = page.replace(plotly.offline.get_plotlyjs(), "")
    for raw in (XSS_NAME, "<script>alert(2)</script>", "<u>fleet</u>", "<b>not a source",
                "<i>heavy</i>", "<b>LPG</b>"):
        assert raw not in body, raw
    assert "&lt;img src=x onerror=alert(1)&gt;" in body
    assert "&lt;script&gt;alert(2)&lt;/script&gt;" in body
    assert "<title>Invented fixture study &lt;u&gt;fleet&lt;/u&gt;</title>" in body


@pytest.mark.parametrize("name, fix", [
    ("report.txt", r"must end in \.html"),
    ("missing-folder/report.html", "does not exist"),
])
def test_bad_path_is_one_line_naming_the_option(tmp_path, name, fix):
    with pytest.raises(InputError, match=fix) as err:
        report.write_report(make_result(), tmp_path / name, study_text="")
    assert err.value.where.startswith("-o/path")
    assert "\n" not in str(err.value)
    assert list(tmp_path.iterdir()) == []


def test_a_folder_named_html_is_refused(tmp_path):
    (tmp_path / "r.html").mkdir()
    with pytest.raises(InputError, match="is a folder"):
        report.write_report(make_result(), tmp_path / "r.html", study_text="")


def test_failed_write_leaves_the_old_file_and_no_temp_file(tmp_path, monkeypatch):
    target = tmp_path / "r.html"
    target.write_text("old report", encoding="utf-8")

    def fail(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", fail)
    with pytest.raises(InputError, match="cannot write"):
        report.write_report(make_result(), target, study_text="")
    assert target.read_text(encoding="utf-8") == "old report"
    assert [p.name for p in tmp_path.iterdir()] == ["r.html"]


def test_missing_numbers_say_why_in_the_candidates_table():
    # Issue 13: "not applicable", "no payback" and "raises the emission" must not look alike.
    res = make_result()
    cands = res.candidates.copy()
    cands.loc[2, ["discounted_payback_years", "cost_per_t_co2e_avoided"]] = float("nan")
    cands.loc[2, ["co2e_avoided_t", "raises_co2e"]] = (-300.0, True)
    shown = reader_table("candidates", res, cands)
    label = partial(column_label, currency=res.currency)
    assert shown.at[0, label("npv_vs_baseline")] == "n/a (baseline)"
    assert shown.at[2, label("discounted_payback_years")] == "not within horizon"
    assert shown.at[2, label("cost_per_t_co2e_avoided")] == "raises CO2e"
    assert shown.at[2, label("co2e_avoided_t")] == "-300"
    assert shown.at[2, label("raises_co2e")] == "yes"
