"""A study whose class is its vehicles' logs: profile names a folder of logger files."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.paths import DATA
from workbench.interfaces import charts
from workbench.io import demo_fleet
from workbench.io.maps import read_map
from workbench.io.vehicles import read_vehicle
from workbench.study import read_study, run
from workbench.study.fleet import run_fleet
from workbench.study.results import COLUMNS
from workbench.study.runner import DutySettings

DEMO = DATA / "studies" / "kestrel-bay.toml"


@pytest.fixture(scope="module")
def fleet_study(tmp_path_factory):
    text = DEMO.read_text(encoding="utf-8")
    logs = demo_fleet.DATA / "logs"
    assert 'profile = "taxi-shift"' in text
    text = text.replace('profile = "taxi-shift"', f'profile = "{logs.as_posix()}"')
    path = tmp_path_factory.mktemp("study") / "fleet.toml"
    path.write_text(text, encoding="utf-8")
    return read_study(path)


@pytest.fixture(scope="module")
def result(fleet_study):
    return run(fleet_study, draws=400)


def test_class_energy_is_the_fleet_aggregate(fleet_study, result):
    taxi = next(c for c in fleet_study.inputs.classes if c.id == "taxi")
    base = fleet_study.inputs.baseline
    expected = run_fleet(demo_fleet.DATA / "logs", read_vehicle(taxi.vehicle),
                         read_map(base.per_class["taxi"].engine_map),
                         settings=DutySettings(accessory_power=taxi.accessory_power,
                                               engine_off_at_stops=taxi.engine_off_at_stops,
                                               extra_idle_share=taxi.extra_idle_share),
                         engine="serial")
    row = result.per_km[(result.per_km["candidate"] == base.id)
                        & (result.per_km["vehicle_class"] == "taxi")]
    assert_allclose(row["fuel_energy_mj_per_km"].iloc[0],
                    expected.aggregate.energy_per_m / 1e3, rtol=1e-9)


def test_study_says_how_many_vehicles_were_used(result):
    note = result.assumptions["vehicle logs, Taxis"]  # the class's name, as the report shows
    assert note.startswith("12 of 13 vehicles used")
    assert "KB-T13.csv row" in note and "uncertainty of the class mean" in note


def test_the_class_mean_is_drawn_with_its_standard_error(fleet_study, result):
    # The Monte Carlo factor's sd is the standard error of the km-weighted mean over the
    # mean (docs/fleet-logs.md: the programme converts the whole class), which is the
    # between-vehicle spread shrunk by about sqrt(effective vehicles); checked by hand on
    # three vehicles in tests/test_fleet.py.
    from workbench.study import runner

    plan, _ = runner._plan(fleet_study.inputs)
    agg = plan.physics[fleet_study.inputs.baseline.id, "taxi"].duty.fleet.aggregate
    dist = runner._vehicle_spread(plan)["classes.taxi.vehicle_spread"]
    assert dist.kind == "normal" and dist.mean == 1.0
    assert_allclose(dist.sd, agg.mean_se_per_m / agg.energy_per_m, rtol=1e-12)
    # narrower than one vehicle's spread (what was drawn before, about P10-P90 / 2.56)
    per_vehicle_sd = np.std(result.vehicles["fuel_energy_mj_per_km"], ddof=1) * 1e3
    assert dist.sd * agg.energy_per_m < 0.5 * per_vehicle_sd
    assert 1.0 < agg.effective_vehicles <= agg.vehicles


def test_spread_between_vehicles_moves_the_npv_of_options_that_convert_the_taxis(
        fleet_study, result, monkeypatch):
    # The same study with the class mean's uncertainty drawn and without (draws=400 both,
    # same seed: every other input draws the same numbers). The factor scales the taxis' fuel
    # energy on every option, so it moves the NPV of each candidate that converts the taxis
    # draw by draw, and cancels for a candidate that leaves them as they are (electric vans).
    # (Comparing the two NPV spreads would test sampling noise: the class mean's standard
    # error is small beside the prices' spread.)
    mc = result.monte_carlo
    assert len(mc) > 0
    from workbench.study import runner

    monkeypatch.setattr(runner, "_vehicle_spread", lambda plan: {})
    without = run(fleet_study, draws=400).monte_carlo
    key = ["candidate", "draw"]
    both = mc.merge(without, on=key, suffixes=("", "_without"))
    assert len(both) == len(mc)
    diff = both["npv_vs_baseline"] - both["npv_vs_baseline_without"]
    inputs = fleet_study.inputs
    for cand in inputs.candidates:
        d = diff[both["candidate"] == cand.id].to_numpy()
        if cand.per_class["taxi"].converts:
            assert np.std(d) > 1e-3 * np.std(both.loc[both["candidate"] == cand.id,
                                                      "npv_vs_baseline_without"])
        else:
            assert_allclose(d, 0.0, atol=1e-6 * np.abs(
                both.loc[both["candidate"] == cand.id, "npv_vs_baseline"]).max())


def test_vehicles_table_is_each_vehicle_on_the_baseline_fuel(fleet_study, result):
    # Rows equal the per-vehicle summaries of the same class run on its own (serial), each
    # vehicle's fuel energy over its own distance; litres per 100 km from the fuel's LHV and
    # liquid density (m3/m x 1e8 = L/100 km, closed form).
    from workbench.models.combustion import fuel_sheet

    taxi = next(c for c in fleet_study.inputs.classes if c.id == "taxi")
    base = fleet_study.inputs.baseline
    fuel = base.per_class["taxi"].fuel
    expected = run_fleet(demo_fleet.DATA / "logs", read_vehicle(taxi.vehicle),
                         read_map(base.per_class["taxi"].engine_map),
                         settings=DutySettings(accessory_power=taxi.accessory_power,
                                               engine_off_at_stops=taxi.engine_off_at_stops,
                                               extra_idle_share=taxi.extra_idle_share),
                         engine="serial").table()
    got = result.vehicles
    assert tuple(got.columns) == COLUMNS["vehicles"]
    assert set(got["vehicle_class"]) == {"taxi"}  # the other classes run a profile
    assert list(got["vehicle"]) == list(expected["vehicle"])
    assert_allclose(got["distance_logged_km"], expected["distance_km"], rtol=1e-12)
    assert_allclose(got["fuel_energy_mj_per_km"], expected["fuel_energy_mj_per_km"],
                    rtol=1e-12)
    assert_allclose(got["share_idle"], expected["share_idle"], rtol=1e-12)
    sheet = fuel_sheet(fuel)
    litres = expected["fuel_energy_mj_per_km"] * 1e3 / sheet.lhv_mass / fuel.liquid_density * 1e8
    assert_allclose(got["fuel_l_per_100km"], litres, rtol=1e-9)
    assert (got["fuel"] == fuel.id).all()
    # outlier flags follow Tukey's fences on the same L/100 km
    q1, q3 = np.quantile(litres, (0.25, 0.75))
    fences = (litres < q1 - 1.5 * (q3 - q1)) | (litres > q3 + 1.5 * (q3 - q1))
    assert list(got["outlier"]) == list(fences)


def test_vehicles_chart_histogram_is_the_table(result):
    # The demo logs hold no outlier (each within the fences, checked above), so one vehicle
    # is flagged by hand here to see it named.
    table = result.vehicles.copy()
    table.loc[table.index[3], "outlier"] = True
    marked = replace(result, vehicles=table)
    fig = charts.figure_dict("vehicles", marked)
    hist = [t for t in fig["data"] if t["type"] == "histogram"]
    assert len(hist) == 1
    assert_allclose(hist[0]["x"], table["fuel_l_per_100km"], rtol=0)
    named = [a["text"] for a in fig["layout"].get("annotations", [])
             if a["text"].startswith("outlier")]
    assert named == [f"outlier: {table['vehicle'].iloc[3]}"]
    assert "L/100 km" in fig["layout"]["xaxis"]["title"]["text"]
    assert "vehicles" in charts.all_figures(result)


def test_no_vehicles_chart_without_fleet_logs():
    plain = run(read_study(DEMO), draws=0)
    assert plain.vehicles.empty and tuple(plain.vehicles.columns) == COLUMNS["vehicles"]
    assert "vehicles" not in charts.all_figures(plain)


def test_report_shows_the_vehicles_table_and_chart(fleet_study, result):
    from workbench.interfaces.report import html_report

    html = html_report(result, study_text="# fleet study\n")
    assert 'id="table-vehicles"' in html
    assert "Each vehicle of a class run from its logs" in html
    assert "Fuel per 100 km across the vehicles of each class" in html
    assert "distance logged [km]" in html and "KB-T11" in html
