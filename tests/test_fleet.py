"""Tests of a class as its vehicles: workbench.models.fleet and workbench.study.fleet."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.io import demo_fleet, demo_profiles
from workbench.io.maps import read_map
from workbench.io.vehicles import read_vehicle
from workbench.models.engine import DutyEnergy
from workbench.models.fleet import VehicleSummary, aggregate, tukey_outliers
from workbench.study.fleet import run_fleet

DATA = demo_profiles.DATA
LOGS = demo_fleet.DATA / "logs"


def summary(vid: str, km: float, mj: float, hours: float = 1.0) -> VehicleSummary:
    energy = DutyEnergy(distance=km * 1e3, duration=hours * 3600.0, wheel_energy=1.0,
                        braking_energy=1.0, engine_energy=1.0, fuel_energy=mj * 1e6,
                        time_idle=0.25 * hours * 3600.0, time_out_of_map=0.0,
                        time_at_full_load=0.0)
    return VehicleSummary(vid, energy, np.ones((2, 2)), np.full((2, 2), mj), {})


def test_class_is_the_km_weighted_mean():
    # Hand-computed: A drives 100 km at 2.5 MJ/km, B 300 km at 2.0 MJ/km, C 50 km at 3.0.
    # km-weighted mean = (100*2.5 + 300*2.0 + 50*3.0) / 450 = 1000 / 450 = 2.2222 MJ/km;
    # the plain mean of the three would be 2.5.
    agg = aggregate([summary("A", 100, 250), summary("B", 300, 600), summary("C", 50, 150)])
    assert_allclose(agg.energy_per_m * 1e3 / 1e6, 1000 / 450, rtol=1e-14)
    assert_allclose(agg.energy.distance, 450e3)
    assert_allclose(agg.energy.share_idle, 0.25)
    assert agg.vehicles == 3
    assert_allclose(agg.seconds, 3.0)  # histograms add
    assert_allclose(agg.fuel, 1000.0)


def test_standard_error_of_the_km_weighted_mean_by_hand():
    # The same three vehicles. Ratio estimator R = sum E / sum d = 20/9 MJ/km; its standard
    # error sqrt(sum (E_i - R d_i)^2 / (n (n - 1))) / mean(d) (Cochran, "Sampling
    # Techniques", 3rd ed., 1977, ch. 6; from memory). By hand: E_i - R d_i = 100 * 5/18,
    # 300 * (-4/18), 50 * 14/18 MJ, squares summed 2,180,000 / 324 = 6728.40 MJ^2;
    # / (3 * 2) = 1121.40; sqrt = 33.4873 MJ; / 150 km = 0.223249 MJ/km.
    # Kish's effective n (Kish, "Survey Sampling", 1965; from memory):
    # 450^2 / (100^2 + 300^2 + 50^2) = 202500 / 102500 = 1.97561.
    agg = aggregate([summary("A", 100, 250), summary("B", 300, 600), summary("C", 50, 150)])
    assert_allclose(agg.mean_se_per_m, math.sqrt(2_180_000 / 324 / 6) / 150 * 1e3, rtol=1e-12)
    assert_allclose(agg.mean_se_per_m / 1e3, 0.223249, rtol=1e-5)
    assert_allclose(agg.effective_vehicles, 202500 / 102500, rtol=1e-12)
    # equal km: the textbook s / sqrt(n) of the plain mean (2.5 MJ/km, s = 0.5)
    equal = aggregate([summary("A", 100, 250), summary("B", 100, 200), summary("C", 100, 300)])
    assert_allclose(equal.mean_se_per_m / 1e3, 0.5 / math.sqrt(3), rtol=1e-12)
    assert_allclose(equal.effective_vehicles, 3.0, rtol=1e-12)
    assert math.isnan(aggregate([summary("A", 100, 250)]).mean_se_per_m)  # one vehicle


def test_spread_is_p10_p90_between_vehicles():
    # Eleven vehicles at 1..11 MJ/km: linear quantiles at (n-1) q = 1 and 9 -> 2 and 10 MJ/km
    # (numpy's default "linear" method, hand-computed).
    agg = aggregate([summary(str(k), 10.0 * k, 10.0 * k * k) for k in range(1, 12)])
    assert_allclose(np.array(agg.spread_per_m) / 1e3, [2.0, 10.0], rtol=1e-12)


def test_no_vehicles():
    with pytest.raises(InputError, match="no vehicle could be used"):
        aggregate([])


@pytest.fixture(scope="module")
def taxi():
    return (read_vehicle(DATA / "vehicles" / "taxi.toml"),
            read_map(DATA / "maps" / "taxi-si-1.8l.csv"))


@pytest.fixture(scope="module")
def serial(taxi):
    seen = []
    run = run_fleet(LOGS, *taxi, engine="serial", progress=lambda d, n: seen.append((d, n)))
    return run, seen


def test_shipped_example_runs_and_leaves_the_broken_file_out(serial):
    run, seen = serial
    assert run.found == 13
    assert len(run.summaries) == 12
    (problem,) = run.problems
    assert "KB-T13.csv row" in problem and "is not a number" in problem
    assert seen[-1] == (13, 13) and len(seen) == 13
    table = run.table()
    assert list(table["vehicle"]) == [f"KB-T{k:02d}" for k in range(1, 13)]
    # invented demo: urban taxi energy per km is plausible, 1.5-3 MJ/km (~4.5-9 L/100 km of
    # gasoline; common practice, no source)
    assert 1.5 < run.aggregate.energy_per_m / 1e3 < 3.0
    assert (table["spikes"] >= 3).all()  # three spikes were planted per shift
    # the aggregate is the km-weighted mean of the table (hand-computed from its columns)
    weighted = np.average(table["fuel_energy_mj_per_km"], weights=table["distance_km"])
    assert_allclose(run.aggregate.energy_per_m / 1e3, weighted, rtol=1e-12)


def test_mph_file_read_in_mph(serial):
    # Vehicle 7's logger writes mph; read as km/h it would drive 1.6x as far at the same time
    # and use far more fuel per hour. Its km per hour sits with the others'.
    table = serial[0].table()
    speed = table["distance_km"] / table["hours"]
    assert speed[table["vehicle"] == "KB-T07"].iloc[0] < 1.3 * speed.median()


@pytest.mark.slow
def test_process_pool_gives_the_same_numbers(taxi, serial):
    run = run_fleet(LOGS, *taxi, engine="process", workers=2)
    assert_allclose(run.aggregate.energy_per_m, serial[0].aggregate.energy_per_m, rtol=1e-12)
    assert run.problems == serial[0].problems


@pytest.mark.slow
def test_dask_local_cluster_gives_the_same_numbers(taxi, serial):
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(n_workers=1, processes=False, protocol="tcp",
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        run = run_fleet(LOGS, *taxi, engine=cluster.scheduler_address)
    assert_allclose(run.aggregate.energy_per_m, serial[0].aggregate.energy_per_m, rtol=1e-12)
    assert run.problems == serial[0].problems


def test_unreachable_scheduler(taxi):
    dask = pytest.importorskip("dask")
    pytest.importorskip("distributed")
    with (dask.config.set({"distributed.comm.timeouts.connect": "1s"}),
          pytest.raises(InputError, match="cannot reach the dask scheduler")):
        run_fleet(LOGS, *taxi, engine="tcp://127.0.0.1:1")


def test_generator_parquet_fleet(tmp_path, taxi):
    fleet = demo_fleet.write_demo_fleet(tmp_path, vehicles=13, days=2, shift_hours=0.2,
                                        parquet=True)
    run = run_fleet(fleet.logs, *taxi, engine="serial")
    assert len(run.summaries) == 12
    (problem,) = run.problems
    assert "KB-T13.parquet" in problem
    assert (run.table()["trips"] >= 2).all()  # two days, so at least two trips each


def test_shipped_example_is_the_seeded_output(tmp_path):
    fleet = demo_fleet.write_shipped_example(tmp_path)
    for path in fleet.logs.iterdir():
        assert path.read_bytes() == (LOGS / path.name).read_bytes(), path.name
    assert fleet.fuel_cards.read_bytes() == (LOGS.parent / "fuel-cards.csv").read_bytes()
    # The cards were made from the model's litres per km on each vehicle's clean shift times
    # the invented factor: full-to-full over the cards (litres after the first fill over the
    # odometer distance; common practice, no source) against that model gives the factor
    # back, up to the invented scatter: 3 % per vehicle over 13 vehicles (0.8 %) and 5 % per
    # fill over ~120 fills (0.5 %), about 1 % together, so 3 % is three standard deviations.
    cards = pd.read_csv(fleet.fuel_cards, comment="#").sort_values(["vehicle", "date"])
    bought = modelled = 0.0
    for vid, g in cards.groupby("vehicle"):
        bought += g["litres"].iloc[1:].sum()
        modelled += fleet.model_l_per_km[vid] * (g["odometer_km"].iloc[-1]
                                                 - g["odometer_km"].iloc[0])
    assert len(fleet.model_l_per_km) == 13
    assert abs(bought / modelled - demo_fleet.INVENTED_CARD_FACTOR) < 0.03


def test_tukey_outliers_against_hand_made_fences():
    # Tukey's fences (Tukey 1977, "Exploratory Data Analysis"; k = 1.5 is common practice,
    # no source). Values 1..8 and 20: quartiles by linear interpolation (numpy's default)
    # are Q1 = 3, Q3 = 7, IQR = 4, fences -3 and 13 (by hand); only 20 lies outside.
    values = [1, 2, 3, 4, 5, 6, 7, 8, 20]
    assert list(tukey_outliers(values)) == [False] * 8 + [True]
    # 1..9 and 13.5: Q1 3.25, Q3 7.75, upper fence 14.5, so 13.5 is inside (by hand)
    assert not tukey_outliers([1, 2, 3, 4, 5, 6, 7, 8, 9, 13.5]).any()
    # -10 and 4..9: Q1 4.5, Q3 7.5, lower fence 0, so -10 is below it (by hand)
    assert list(tukey_outliers([-10, 4, 5, 6, 7, 8, 9])) == [True] + [False] * 6
    # a wider fence lets 20 in (k = 4: upper fence 7 + 16 = 23)
    assert not tukey_outliers(values, k=4.0).any()
    # fewer than four vehicles: no quartiles worth the name, nothing flagged; NaN never flagged
    assert not tukey_outliers([1.0, 2.0, 100.0]).any()
    assert list(tukey_outliers([1, 2, 3, 4, 5, 6, 7, 8, 20, float("nan")]))[-2:] == [True, False]
