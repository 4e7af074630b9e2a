"""The panels without a kernel or a browser: set widget values, read the study and the charts.

Runs the shipped demo study (a FICTIONAL city; every number invented). The first run does the
flame chemistry (seconds); later apps in the same process reuse the cached chemistry.
"""

from __future__ import annotations

import datetime
import html
import re
import subprocess
import sys

import numpy as np
import pytest

from workbench.core.fuels import load_fuel
from workbench.interfaces.panels import open_study
from workbench.interfaces.panels.candidates import BLEND
from workbench.study.studyfile import read_study

pytestmark = pytest.mark.slow

#: Monte Carlo draws per run: enough for the charts to have something, few for speed.
DRAWS = 200
LPG_ROW = "candidates[0].fuel"


@pytest.fixture(scope="module")
def demo():
    return read_study("demo")


@pytest.fixture
def app(demo, tmp_path):
    return open_study(demo, draws=DRAWS, upload_dir=tmp_path / "uploads",
                      export_dir=tmp_path)


def _taxi_cost(app, candidate: str) -> float:
    """Height of a candidate's stacked cost-per-km bar in the first (taxi) facet [KBD/km]."""
    fig = app.results.figure("cost_per_km")
    return sum(t.y[0] for t in fig.data
               if t.legendgroup == f"candidate:{candidate}" and t.xaxis in (None, "x"))


def _npv(app, candidate: str) -> float:
    """Last point of a candidate's cumulative discounted cash flow line: its NPV [KBD]."""
    fig = app.results.figure("cash_flow")
    line = next(t for t in fig.data
                if t.legendgroup == f"candidate:{candidate}" and t.mode == "lines+markers")
    return float(line.y[-1])


def _per_km(app, candidate: str, column: str) -> float:
    t = app.state.result.per_km
    return float(t.loc[(t["candidate"] == candidate) & (t["vehicle_class"] == "taxi"),
                       column].iloc[0])


def _upload(widget, name: str, content: bytes) -> None:
    widget.value = ({"name": name, "type": "text/csv", "size": len(content),
                     "content": memoryview(content),
                     "last_modified": datetime.datetime.now(datetime.UTC)},)


# ----------------------------------------------------------------------------- economics


def test_lpg_price_field_moves_cost_bar_and_npv(app):
    panes = [slot.pane for slot in app.results.slots]
    cost_before, npv_before = _taxi_cost(app, "lpg-taxis"), _npv(app, "lpg-taxis")
    litres_per_km = _per_km(app, "lpg-taxis", "fuel_l_per_100km") / 100.0

    app.economics.prices["lpg"].params["mode"].value = "0.70 per L"

    assert app.study.get("prices.lpg")["mode"] == "0.70 per L"
    assert app.economics.prices["lpg"].error.value == ""
    # Same widgets, redrawn in place; what they show is the figure the panel holds.
    assert all(s.pane is p for s, p in zip(app.results.slots, panes, strict=True))
    for slot in app.results.slots:
        shown = slot.pane.outputs[0]["data"]["application/vnd.plotly.v1+json"]
        assert len(shown["data"]) == len(slot.figure.data)
    # Cheaper LPG: lower cost per km, higher NPV against the baseline.
    assert _taxi_cost(app, "lpg-taxis") < cost_before
    assert _npv(app, "lpg-taxis") > npv_before
    # The bar drops by the price cut times the litres per km (fuel cost = price x volume,
    # common practice, no source); only the fuel part moves, so float precision suffices.
    np.testing.assert_allclose(cost_before - _taxi_cost(app, "lpg-taxis"),
                               0.12 * litres_per_km, rtol=1e-9)
    # The baseline does not burn LPG: untouched.
    assert _taxi_cost(app, "today") == pytest.approx(
        _per_km(app, "today", "cost_per_km"), rel=1e-12)
    summary = app.results.summary.value
    assert f"{_npv(app, 'lpg-taxis'):,.0f}" in summary


def test_bad_price_shows_error_beside_field_and_keeps_results(app):
    study, result = app.study, app.state.result
    cost = _taxi_cost(app, "lpg-taxis")
    field = app.economics.prices["lpg"]

    field.params["mode"].value = "abc per L"

    assert "prices.lpg.mode" in field.error.value
    assert "color:#B00020" in field.error.value
    assert "Traceback" not in field.error.value
    # Only that field shows an error.
    assert app.economics.prices["gasoline"].error.value == ""
    assert app.economics.programme["discount_rate"].error.value == ""
    assert app.study is study and app.state.result is result
    assert _taxi_cost(app, "lpg-taxis") == cost
    assert "not applied" in app.status.value

    field.params["mode"].value = "0.80 per L"  # a good value clears the error
    assert field.error.value == ""
    assert app.study.get("prices.lpg")["mode"] == "0.80 per L"


def test_negative_discount_rate_is_refused(app):
    field = app.economics.programme["discount_rate"]
    before = app.study.get("programme.discount_rate")
    npv = _npv(app, "cng-fleet")

    field.params["low"].value = "-150 %"

    assert "programme.discount_rate" in field.error.value
    assert "must be at least -10 %, got -150 %" in html.unescape(field.error.value)
    assert app.study.get("programme.discount_rate") == before
    assert _npv(app, "cng-fleet") == npv


def test_fixed_discount_rate_and_horizon(app):
    rate = app.economics.programme["discount_rate"]
    rate.kind.value = "fixed"  # pre-filled with the first value of the range
    rate.params["value"].value = "7 %"
    assert app.study.get("programme.discount_rate") == "7 %"

    app.economics.programme["horizon_years"].control.value = 5
    assert app.study.get("programme.horizon_years") == 5
    years = app.results.figure("cash_flow").data[0].x
    assert len(years) == 6  # year 0 (conversions) and five years of operation


def test_uncertainty_range_reaches_the_monte_carlo(app):
    carbon = app.economics.programme["carbon_price"]
    carbon.kind.value = "uniform"
    assert "carbon_price" in app.study.get("programme")
    carbon.params["low"].value = "20 per t"
    carbon.params["high"].value = "120 per t"
    assert app.study.get("programme.carbon_price") == {
        "kind": "uniform", "low": "20 per t", "high": "120 per t"}
    assert "programme.carbon_price" in app.study.inputs.uncertain
    app.results.slots[0].choice.value = "tornado"
    tornado_inputs = {y for t in app.results.figure("tornado").data for y in (t.y or ())}
    assert "Carbon price [KBD/t]" in tornado_inputs


def test_empty_parameter_is_named(app):
    carbon = app.economics.programme["carbon_price"]
    carbon.kind.value = "normal"  # sd cannot be guessed: left empty
    assert "programme.carbon_price.sd" in carbon.error.value
    assert app.study.get("programme.carbon_price") == "55 per t"


def test_catalyst_life_changes_replacements(app):
    fields = app.economics.catalysts["candidates[0].aftertreatment"].fields
    life = fields["life"]  # the demo gives the life a triangular distribution
    assert life.kind.value == "triangular" and life.params["mode"].value == "250000 km"
    life.kind.value = "fixed"  # takes the mode as the value
    assert app.study.get("candidates[0].aftertreatment.life") == "250000 km"
    before = app.state.result.catalyst
    life.params["value"].value = "60000 km"
    assert app.study.get("candidates[0].aftertreatment.life") == "60000 km"
    after = app.state.result.catalyst

    def replacements(t):
        return int(t.loc[(t["candidate"] == "lpg-taxis") & (t["vehicle_class"] == "taxi"),
                         "replacements"].iloc[0])

    assert replacements(after) > replacements(before)

    fields["policy"].control.value = "interval"
    fields["replacement_interval"].control.value = "forever"
    assert "candidates[0].aftertreatment" in fields["replacement_interval"].error.value
    assert app.study.get("candidates[0].aftertreatment.policy") == "interval"


# ----------------------------------------------------------------------------- fuels


def _sheet_value(row, key: str) -> float:
    m = re.search(rf'data-key="{key}"><td>{key}</td><td[^>]*>([^<]+)</td>', row.sheet.value)
    return float(m.group(1).replace(",", ""))


def test_blend_slider_changes_the_sheet(app):
    row = app.candidates.rows[LPG_ROW]
    assert row.blend_box.layout.display == "none"
    row.choice.value = BLEND
    # Starts from the library LPG's own split (60/40 propane/n-butane by liquid volume).
    assert (row.part_a.value, row.part_b.value, row.basis.value) == (
        "propane", "n-butane", "liquid_volume")
    assert row.share.value == pytest.approx(0.6)
    density_60 = _sheet_value(row, "liquid_density_kg_per_m3")

    row.share.value = 0.9

    assert app.study.get(LPG_ROW) == {"id": "lpg", "basis": "liquid_volume",
                                      "parts": {"propane": 0.9, "n-butane": 0.1}}
    density_90 = _sheet_value(row, "liquid_density_kg_per_m3")
    assert density_90 < density_60  # more propane, the lighter liquid
    # Ideal mixing by liquid volume: the density is the volume-weighted mean of the parts'
    # (definition of the blend basis, common practice, no source); the sheet shows 4-5
    # significant figures.
    expected = 0.9 * load_fuel("propane").liquid_density + \
        0.1 * load_fuel("n-butane").liquid_density
    assert density_90 == pytest.approx(expected, rel=1e-3)
    assert row.error.value == ""


def test_blend_of_one_fuel_twice_is_refused(app):
    row = app.candidates.rows[LPG_ROW]
    row.choice.value = BLEND
    study = app.study
    row.part_b.value = "propane"
    assert "pick two different fuels" in row.error.value
    assert app.study is study


def test_library_fuel_change_moves_the_price(app):
    row = app.candidates.rows[LPG_ROW]
    lpg_price = app.study.get("prices.lpg")
    row.choice.value = "propane"
    assert row.error.value == ""
    assert app.study.get(LPG_ROW) == "propane"
    prices = app.study.get("prices")
    assert "lpg" not in prices and prices["propane"] == lpg_price
    assert "copied from lpg" in row.note.value
    assert set(app.economics.prices) == {"gasoline", "diesel", "propane", "natural-gas",
                                         "biomethane"}
    assert "Propane" in row.sheet.value

    row.choice.value = "diesel"  # per L fits diesel; a liquid: its own price is kept
    assert app.study.get("prices.diesel") != lpg_price


def test_a_fuel_change_drops_a_pathway_the_new_fuel_has_not(app):
    # the demo's biomethane option names a pathway of the biomethane sheet; fossil natural gas
    # has no such pathway, so the key goes and natural gas's [upstream] entry applies
    row = app.candidates.rows["candidates[3].fuel"]
    assert app.study.get("candidates[3].pathway") == "biowaste-closed-digestate"
    row.choice.value = "natural-gas"
    assert row.error.value == ""
    assert "pathway" not in app.study.data["candidates"][3]
    assert "pathway biowaste-closed-digestate removed" in row.note.value
    assert "biomethane" not in app.study.get("prices")  # no option buys it any more
    pk = app.state.result.per_km.set_index(["candidate", "vehicle_class"])
    np.testing.assert_allclose(pk.loc[("biomethane-fleet", "van"), "co2e_wtw_g_per_km"],
                               pk.loc[("cng-fleet", "van"), "co2e_wtw_g_per_km"], rtol=1e-12)


# ----------------------------------------------------------------------------- duty and map


TRACE = b"""# invented test trace
time_s,speed_km_per_h
0,0
10,20
20,40
30,40
40,20
50,0
60,0
"""


def test_duty_upload_updates_study_stats_and_plot(app, tmp_path):
    duty = app.duty
    assert duty.plot is None  # made when its tab is first opened
    app.tabs.selected_index = list(app.tabs.children).index(app.duty)
    assert duty.plot is not None and duty.plot in duty.children
    assert "distance [km]" in duty.stats.value
    _upload(duty.files.upload, "my shift.csv", TRACE)
    assert duty.files.error.value == ""
    path = app.study.get("classes[0].profile")
    assert path.startswith(str(tmp_path / "uploads")) and path.endswith(".csv")
    trace = duty.plot.figure.data[0]
    assert list(trace.y) == [0, 20, 40, 40, 20, 0, 0]
    # Distance by the trapezoid rule: (10+30+40+30+10) km/h x 10 s = 1200 km/h s = 1/3 km
    # (hand calculation).
    assert "0.3" in duty.stats.value


def test_bad_upload_names_the_file_and_keeps_study(app):
    study = app.study
    _upload(app.duty.files.upload, "bad.csv", TRACE.replace(b"30,40", b"30,-5"))
    error = html.unescape(app.duty.files.error.value)
    assert "bad.csv" in error and "negative" in error
    assert app.study is study
    _upload(app.duty.files.upload, "notes.txt", b"hello")
    assert "upload a .csv file" in app.duty.files.error.value


def test_shipped_profile_and_map_choice(app):
    app.duty.files.choice.value = "van-day"
    assert app.study.get("classes[0].profile") == "van-day"
    panel = app.engine_map
    panel.show_plot()
    contour = panel.plot.figure.data[0]
    assert contour.type == "contour"
    points = [t for t in panel.plot.figure.data if t.type == "scatter" and t.mode == "markers"]
    assert points, "the duty's operating points are drawn on the map"
    panel.files.vehicle_class.value = 2  # the shuttle buses
    assert "bus-ci-4.5l" in panel.plot.figure.layout.title.text
    # the natural-gas buses run on a map derived from the diesel's: their points are not
    # drawn on the diesel map, and the title says where they are
    drawn = {t.name for t in panel.plot.figure.data if t.type == "scatter" and t.mode == "markers"}
    assert "Keep today's fuels" in drawn and "Natural gas across the fleet" not in drawn
    assert "own maps, see the report: Natural gas across the fleet" in (
        panel.plot.figure.layout.title.text)
    panel.files.choice.value = "van-ci-2.3l"
    assert app.study.get("classes[2].engine_map") == "van-ci-2.3l"


# ----------------------------------------------------------------------------- export


def test_export_writes_report(app, tmp_path):
    app.export.name.value = "client.html"
    app.export.button.click()
    written = tmp_path / "client.html"
    assert written.is_file()
    assert str(written) in app.export.message.value
    assert "Kestrel Bay" in written.read_text(encoding="utf-8")


@pytest.mark.parametrize("name, words", [
    ("client.txt", "must end in .html"),
    ("no-such-folder/client.html", "does not exist"),
    ("   ", "is empty"),
])
def test_export_errors_show_in_panel(app, tmp_path, name, words):
    app.export.name.value = name
    app.export.button.click()
    assert words in html.unescape(app.export.message.value)
    assert "wb-error" in app.export.message.value
    assert not list(tmp_path.glob("*.html"))


def test_save_study_writes_a_file_that_reads_back(app, tmp_path):
    from workbench.study.studyfile import read_study

    app.economics.prices["lpg"].params["mode"].value = "0.77 per L"
    app.export.study_name.value = "edited.toml"
    app.export.save_button.click()
    saved = tmp_path / "edited.toml"
    assert saved.is_file() and str(saved) in app.export.save_message.value
    again = read_study(saved)
    assert again == app.study
    assert again.get("prices.lpg")["mode"] == "0.77 per L"
    app.export.study_name.value = "edited.txt"
    app.export.save_button.click()
    assert "must end in .toml" in html.unescape(app.export.save_message.value)


# ----------------------------------------------------------------------------- escaping


def test_user_text_is_escaped(demo, tmp_path):
    name = "<img src=x onerror=alert(1)>"
    app = open_study(demo.with_value("candidates[0].name", name), draws=0,
                     upload_dir=tmp_path)
    assert name not in app.results.summary.value
    assert html.escape(name) in app.results.summary.value
    assert name not in app.candidates.rows[LPG_ROW].children[0].value


def test_import_workbench_does_not_import_widgets():
    code = ("import sys, workbench; assert 'ipywidgets' not in sys.modules; "
            "assert callable(workbench.open_study); assert 'ipywidgets' in sys.modules")
    subprocess.run([sys.executable, "-c", code], check=True)


def test_conversion_kind_picked_in_the_panel_reaches_the_study_and_the_warning(app):
    row = app.candidates.conversions["candidates[1].conversion.van"]
    assert row.choice.value == "dedicated-si"
    assert "van: dedicated-si" in row.kinds.value
    assert "warning:" not in app.results.defaults.value
    row.choice.value = "none"  # the diesel van's map kept for natural gas: the trap, flagged
    assert app.study.get("candidates[1].conversion.van") == "none"
    assert "warning: cng-fleet/van: natural-gas (spark-ignition) runs unchanged" in html.unescape(
        app.results.defaults.value)
    assert "Best choice per class — Taxis: " in app.results.defaults.value
    lpg = app.candidates.conversions["candidates[0].conversion"]
    lpg.choice.value = "(inferred from the fuels)"  # the key removed: the study infers it
    assert "conversion" not in app.study.data["candidates"][0]
    assert "taxi: bi-fuel-si" in lpg.kinds.value


def test_a_dual_fuel_candidate_s_pilot_is_picked_in_the_panel(app):
    pilot = app.candidates.pilots["candidates[1].pilot_fuel"]
    assert pilot.choice.disabled  # no dual-fuel class yet
    app.candidates.conversions["candidates[1].conversion.van"].choice.value = "dual-fuel-ci"
    assert not pilot.choice.disabled and "van: diesel" in pilot.note.value
    fuel_use = app.state.result.fuel_use
    assert set(fuel_use.query("candidate == 'cng-fleet'")["role"]) >= {"gas", "pilot"}
    # another compression-ignition fuel of the library: written for the dual-fuel class only
    # (the option's other classes are not dual fuel), its prices copied from diesel's
    pilot.choice.value = "n-dodecane"
    assert pilot.error.value == ""
    assert app.study.get("candidates[1].pilot_fuel.van") == "n-dodecane"
    assert app.study.get("prices.n-dodecane") == app.study.get("prices.diesel")
    assert "van: n-dodecane" in pilot.note.value and "copied from diesel" in pilot.note.value
    pilot.choice.value = "(the class's fuel today)"
    assert pilot.error.value == "", pilot.error.value
    assert "pilot_fuel" not in app.study.data["candidates"][1]


def test_the_answer_is_on_top_in_the_report_s_words(app):
    from workbench.interfaces.report import SAFETY_CAUTION
    from workbench.interfaces.summary import verdicts

    top = app.children[1]
    assert top is app.results.verdict
    for v in verdicts(app.state.result):
        assert html.escape(v.headline) in top.value
    # the safety note once, in the title block
    shown = "".join(getattr(w, "value", "") for w in app.children)
    assert shown.count(html.escape(SAFETY_CAUTION)) == 1
    before = top.value
    app.economics.prices["lpg"].params["mode"].value = "0.70 per L"
    assert top.value != before


def test_fleet_progress_bar_follows_the_vehicles(demo):
    # The bar is driven by the (done, total) callback the terminal prints
    # (workbench.study.fleet.Progress); a later, shorter run must not be clipped by the
    # earlier one's count.
    from workbench.interfaces.panels.app import FleetProgress
    from workbench.interfaces.panels.state import StudyState

    state = StudyState(demo, draws=0, run_now=False)
    bar = FleetProgress(state)
    assert bar.layout.display == "none"  # nothing run from logs yet
    state._vehicle_done(3, 13)
    assert (bar.bar.value, bar.bar.max, bar.bar.bar_style) == (3, 13, "info")
    assert bar.label.value == "3 of 13 vehicles run" and bar.layout.display is None
    state._vehicle_done(13, 13)
    assert (bar.bar.value, bar.bar.bar_style) == (13, "success")
    state._vehicle_done(2, 5)
    assert (bar.bar.value, bar.bar.max) == (2, 5)
    assert state.vehicle_progress == (2, 5)
    assert FleetProgress(state).bar.value == 2  # a bar made later starts from the last report


def test_fleet_progress_bar_during_a_study_run(tmp_path):
    # A study whose taxis are a folder of logger files (a copy, so no cached run of the same
    # files skips the work): each fleet run (one per map the class runs on) reports every
    # vehicle, 1..13 of 13, to the panel's bar, in the state's own run.
    import shutil

    from workbench.core.paths import DATA
    from workbench.interfaces.panels.app import FleetProgress
    from workbench.interfaces.panels.state import StudyState
    from workbench.io import demo_fleet

    logs = tmp_path / "logs"
    shutil.copytree(demo_fleet.DATA / "logs", logs)
    text = (DATA / "studies" / "kestrel-bay.toml").read_text(encoding="utf-8")
    text = text.replace('profile = "taxi-shift"', f'profile = "{logs.as_posix()}"', 1)
    (tmp_path / "fleet.toml").write_text(text, encoding="utf-8")
    state = StudyState(read_study(tmp_path / "fleet.toml"), draws=0, run_now=False)
    bar = FleetProgress(state)
    calls = []
    state.on_vehicles(lambda done, total: calls.append((done, total)))
    state.rerun()
    assert calls and len(calls) % 13 == 0
    assert calls == [(i, 13) for i in range(1, 14)] * (len(calls) // 13)
    assert (bar.bar.value, bar.bar.max, bar.bar.bar_style) == (13, 13, "success")
    assert bar.label.value == "13 of 13 vehicles run"


def test_app_shows_the_fleet_progress_bar(app):
    # the demo study runs no logs: the bar is in the app, hidden
    assert app.fleet_progress in app.children
    assert app.fleet_progress.layout.display == "none"
