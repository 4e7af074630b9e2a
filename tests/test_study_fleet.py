"""A study whose class is its vehicles' logs: profile names a folder of logger files."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.paths import DATA
from workbench.io import demo_fleet
from workbench.io.maps import read_map
from workbench.io.vehicles import read_vehicle
from workbench.study import read_study, run
from workbench.study.fleet import run_fleet
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
    assert "KB-T13.csv row" in note and "spread between the class's vehicles" in note


def test_spread_between_vehicles_widens_the_monte_carlo(fleet_study, result, monkeypatch):
    # The same study with the spread drawn and without (draws=400 both, same seed): the
    # spread adds variance to each candidate's NPV (a normal factor with sd > 0 on fuel).
    mc = result.monte_carlo
    assert len(mc) > 0
    from workbench.study import runner

    monkeypatch.setattr(runner, "_vehicle_spread", lambda plan: {})
    without = run(fleet_study, draws=400).monte_carlo
    col = "npv_vs_baseline"
    for cand in mc["candidate"].unique():
        assert np.std(mc[mc["candidate"] == cand][col]) > np.std(
            without[without["candidate"] == cand][col])
