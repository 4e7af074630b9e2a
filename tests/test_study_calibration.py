"""A study that applies a class's fuel-card calibration (``fuel_cards``, ``calibrate``)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.core.paths import DATA
from workbench.io import demo_fleet
from workbench.models.combustion import fuel_sheet
from workbench.study import read_study, run
from workbench.study.results import COLUMNS

DEMO = DATA / "studies" / "kestrel-bay.toml"
CARDS = demo_fleet.DATA / "fuel-cards.csv"


def _study(folder, extra: str, profile: str | None = None):
    """The demo study with the taxis on the demo fleet's logs and ``extra`` in their class."""
    text = DEMO.read_text(encoding="utf-8")
    logs = profile or (demo_fleet.DATA / "logs").as_posix()
    assert 'profile = "taxi-shift"' in text
    text = text.replace('profile = "taxi-shift"', f'profile = "{logs}"\n{extra}', 1)
    path = folder / "fleet.toml"
    path.write_text(text, encoding="utf-8")
    return read_study(path)


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    on = _study(tmp_path_factory.mktemp("on"), f'fuel_cards = "{CARDS.as_posix()}"')
    off = _study(tmp_path_factory.mktemp("off"),
                 f'fuel_cards = "{CARDS.as_posix()}"\ncalibrate = false')
    return on, run(on, draws=300), run(off, draws=300)


def _hand_factor(vehicles: pd.DataFrame, litres_to_joules: float) -> float:
    """Ratio estimator k = sum F_i / sum (m_i d_i) (Cochran, Sampling Techniques, 3rd ed.,
    ch. 6; from memory) with full-to-full fuel per vehicle (common practice, no source):
    litres bought after the first fill over the odometer distance from first to last fill."""
    cards = pd.read_csv(CARDS, comment="#").sort_values(["vehicle", "date"])
    logged = dict(zip(vehicles["vehicle"], vehicles["fuel_energy_mj_per_km"], strict=True))
    fuel = model = 0.0
    for vid, g in cards.groupby("vehicle"):
        if vid not in logged or len(g) < 2:
            continue
        fuel += g["litres"].iloc[1:].sum() * 1e-3 * litres_to_joules  # [J]
        model += logged[vid] * 1e3 * (g["odometer_km"].iloc[-1] - g["odometer_km"].iloc[0]) * 1e3
    return fuel / model


def test_calibrated_energy_is_the_uncalibrated_times_the_factor(runs):
    _, on, off = runs
    factor = on.calibration["calibration_factor"].iloc[0]
    for cls in ("taxi", "van", "bus"):
        a = on.per_km[on.per_km["vehicle_class"] == cls].sort_values("candidate")
        b = off.per_km[off.per_km["vehicle_class"] == cls].sort_values("candidate")
        k = factor if cls == "taxi" else 1.0  # only the taxis have cards
        # every option alike, the baseline included: the factor corrects the duty's model
        assert_allclose(a["fuel_energy_mj_per_km"], b["fuel_energy_mj_per_km"] * k, rtol=1e-12)
    assert factor != pytest.approx(1.0, abs=1e-3)  # the demo cards do move the model


def test_factor_is_the_ratio_estimator_of_the_cards(runs):
    study, on, off = runs
    fuel = study.inputs.baseline.per_class["taxi"].fuel
    per_litre = fuel_sheet(fuel).lhv_mass * fuel.liquid_density  # [J/m3]
    row = on.calibration.iloc[0]
    assert_allclose(row["calibration_factor"], _hand_factor(off.vehicles, per_litre), rtol=1e-12)
    # the same table, not applied, when calibrate = false
    assert off.calibration["applied"].tolist() == [False]
    assert on.calibration["applied"].tolist() == [True]
    assert_allclose(off.calibration["calibration_factor"], on.calibration["calibration_factor"],
                    rtol=0)


def test_calibration_table_and_assumption_line(runs):
    _, on, off = runs
    table = on.calibration
    assert tuple(table.columns) == COLUMNS["calibration"]
    row = table.iloc[0]
    assert row["vehicle_class"] == "taxi" and row["fuel"] == "gasoline"
    # the fit's vehicles are those both logged (12 used) and on the cards with two fills or more
    cards = pd.read_csv(CARDS, comment="#")
    counts = cards.groupby("vehicle").size()
    used = [v for v in on.vehicles["vehicle"] if counts.get(v, 0) >= 2]
    assert row["vehicles"] == len(used)
    assert row["fills"] == int(counts[used].sum())
    assert row["calibration_factor_se"] > 0
    line = on.assumptions["fuel-card calibration, Taxis"]
    assert line.startswith(f"factor {row['calibration_factor']:.3f} ± "
                           f"{row['calibration_factor_se']:.3f} (1 s.e.) from {len(used)} "
                           f"vehicles and {row['fills']} fills of fuel-cards.csv")
    assert "applied to the modelled fuel energy per km of every option" in line
    assert "not applied" in off.assumptions["fuel-card calibration, Taxis"]


def test_standard_error_widens_the_monte_carlo(runs, monkeypatch):
    # Same study, same seed and draws, with the factor's s.e. drawn and without: drawing it
    # adds a normal factor (sd > 0) on the taxis' fuel, so each candidate's NPV spreads more.
    study, on, _ = runs
    from workbench.study import runner

    monkeypatch.setattr(runner, "_calibration_spread", lambda plan: {})
    without = run(study, draws=300).monte_carlo
    mc = on.monte_carlo
    for o in study.inputs.candidates:
        spread = np.std(mc[mc["candidate"] == o.id]["npv_vs_baseline"])
        alone = np.std(without[without["candidate"] == o.id]["npv_vs_baseline"])
        if o.per_class["taxi"].converts:
            assert spread > alone, o.id
        else:  # taxis as in the baseline: the factor's draw cancels in the difference
            np.testing.assert_allclose(spread, alone, rtol=1e-9)


def test_bad_fuel_card_file_names_file_and_row(tmp_path):
    bad = tmp_path / "cards.csv"
    bad.write_text("date,vehicle,litres,odometer_km\n2026-03-01,KB-T01,20,1000\n"
                   "2026-03-05,KB-T01,-3,1200\n", encoding="utf-8")
    with pytest.raises(InputError) as err:
        _study(tmp_path, 'fuel_cards = "cards.csv"')  # relative: read from the study's folder
    text = str(err.value)
    assert "\n" not in text
    assert text.startswith("fleet.toml: classes[0].fuel_cards: ")
    assert f"{bad} row 3" in text and "negative" in text


def test_fuel_cards_need_logs_and_calibrate_needs_cards(tmp_path):
    with pytest.raises(InputError, match=r"classes\[0\]\.fuel_cards: fuel cards calibrate a "
                                         r"class run from its vehicles' logs"):
        _study(tmp_path, f'fuel_cards = "{CARDS.as_posix()}"', profile="taxi-shift")
    with pytest.raises(InputError, match=r"classes\[0\]\.calibrate: needs fuel_cards"):
        _study(tmp_path, "calibrate = true")


def test_report_lists_the_calibration(runs):
    from workbench.interfaces.report import study_report_html

    study, on, _ = runs
    html = study_report_html(study, on)
    assert "The model against the fuel cards" in html  # the table's title in the Data section
    assert "fuel-card calibration, Taxis" in html  # the assumption line
    assert f"{on.calibration['calibration_factor'].iloc[0]:.3f}" in html


def test_a_warm_re_run_draws_the_same(runs):
    # The physics plan is cached between runs; the Monte Carlo factors (calibration, spread
    # between vehicles) must enter it once, so the same seed gives the same draws again.
    study, on, _ = runs
    again = run(study, draws=300)
    pd.testing.assert_frame_equal(again.monte_carlo, on.monte_carlo)


def test_a_study_checked_again_keys_its_cards_by_content(tmp_path):
    # Every edit checks the study again and reads the cards anew; the class must compare
    # equal (the physics cache is keyed by it), and differ once a fill changes.
    cards = tmp_path / "cards.csv"
    cards.write_bytes(CARDS.read_bytes())
    first = _study(tmp_path, 'fuel_cards = "cards.csv"').inputs.classes[0]
    again = _study(tmp_path, 'fuel_cards = "cards.csv"').inputs.classes[0]
    assert first.card_records is not again.card_records
    assert first == again and hash(first) == hash(again)
    lines = CARDS.read_text(encoding="utf-8").splitlines(keepends=True)
    row = next(i for i, line in enumerate(lines) if line.startswith("2026-"))
    date, vid, litres, odo = lines[row].rstrip("\n").split(",")
    lines[row] = f"{date},{vid},{float(litres) + 0.01:.2f},{odo}\n"  # one fill, 10 mL more
    cards.write_text("".join(lines), encoding="utf-8")
    assert _study(tmp_path, 'fuel_cards = "cards.csv"').inputs.classes[0] != first


def test_vehicles_table_sets_each_vehicles_cards_beside_its_model(runs):
    # observed MJ/km by hand from the card file (full-to-full: litres after the first fill
    # over the odometer distance, times gasoline's LHV per litre); residual = observed minus
    # the calibrated model (k x modelled), whether the factor is applied or not
    study, on, off = runs
    fuel = study.inputs.baseline.per_class["taxi"].fuel
    per_litre = fuel_sheet(fuel).lhv_mass * fuel.liquid_density * 1e-3  # J/L
    cards = pd.read_csv(CARDS, comment="#").sort_values(["vehicle", "date"])
    k = on.calibration["calibration_factor"].iloc[0]
    for result in (on, off):
        table = result.vehicles.set_index("vehicle")
        assert {"observed_mj_per_km", "residual_mj_per_km"} <= set(table.columns)
        for vid, g in cards.groupby("vehicle"):
            if vid not in table.index:
                continue  # KB-T13: cards but a broken log
            km = g["odometer_km"].iloc[-1] - g["odometer_km"].iloc[0]
            hand = g["litres"].iloc[1:].sum() * per_litre / 1e6 / km
            row = table.loc[vid]
            assert_allclose(row["observed_mj_per_km"], hand, rtol=1e-9)
            assert_allclose(row["residual_mj_per_km"],
                            hand - k * row["fuel_energy_mj_per_km"], rtol=1e-9, atol=1e-12)


def test_report_shows_each_vehicles_observed_fuel(runs):
    from workbench.interfaces.report import html_report

    _, on, _ = runs
    html = html_report(on, study_text="# fleet study\n")
    assert "observed fuel energy [MJ/km]" in html
    assert "residual, observed − calibrated model [MJ/km]" in html


def test_tornado_shows_the_vehicle_spread_and_the_calibration(runs):
    # Both drawn physics factors are normal with mean 1, so their P10 and P90 are
    # 1 -/+ z sd with z = 1.281552 (standard normal table). The tornado shows the spread's
    # factor as the taxis' baseline fuel energy per km (calibrated) and the calibration's as
    # the factor itself, each with its unit.
    study, on, _ = runs
    from workbench.study import runner

    z = 1.2815515655446004
    plan, _ = runner._plan(study.inputs)
    agg = plan.physics[study.inputs.baseline.id, "taxi"].duty.fleet.aggregate
    base_mj = plan.physics[study.inputs.baseline.id, "taxi"].fuel_energy_per_m / 1e3
    k, se = on.calibration[["calibration_factor", "calibration_factor_se"]].iloc[0]
    converting = [o.id for o in study.inputs.candidates if "taxi" in o.per_class
                  and o.per_class["taxi"].converts]
    assert converting
    for cand in converting:
        rows = on.tornado[on.tornado["candidate"] == cand].set_index("input")
        spread = rows.loc["classes.taxi.vehicle_spread"]
        assert spread["label"] == ("Taxis: mean fuel energy per km of its vehicles "
                                   "(from their spread)")
        assert spread["unit"] == "MJ/km"
        sd = agg.mean_se_per_m / agg.energy_per_m
        assert_allclose([spread["low_value"], spread["high_value"]],
                        [base_mj * (1 - z * sd), base_mj * (1 + z * sd)], rtol=1e-9)
        cal = rows.loc["classes.taxi.calibration"]
        assert cal["label"] == "Taxis: fuel-card calibration factor" and cal["unit"] == "-"
        assert_allclose([cal["low_value"], cal["high_value"]], [k - z * se, k + z * se],
                        rtol=1e-9)
        assert spread["swing"] > 0 and cal["swing"] > 0


def test_demo_cards_are_the_model_times_the_invented_factor(runs, tmp_path):
    # The demo generator made the cards from the model of the demo study's taxis (same
    # settings, checked here) on each vehicle's clean shift, times INVENTED_CARD_FACTOR. The
    # study fits the model on the *logs* (GPS noise, dropouts, spikes, then cleaned), so it
    # finds that factor times the ratio of the model on the clean shifts to the model on the
    # cleaned logs: an identity on the same vehicles and card distances. On the shipped
    # example (24-minute shifts with dropouts of 5-20 minutes) the logs read ~5 % less fuel
    # than the clean shifts, which the calibration absorbs (docs/fleet-logs.md).
    from workbench.study import runner

    study, on, _ = runs
    taxi = next(c for c in study.inputs.classes if c.id == "taxi")
    assert runner._settings(taxi) == demo_fleet.MODEL_SETTINGS
    base = study.inputs.baseline.per_class["taxi"]
    assert (taxi.vehicle.stem, base.engine_map.stem, base.fuel.id) == demo_fleet.MODEL
    clean = demo_fleet.write_shipped_example(tmp_path).model_l_per_km
    per_litre = fuel_sheet(base.fuel).lhv_mass * base.fuel.liquid_density * 1e-3 / 1e6  # MJ/L
    cards = pd.read_csv(CARDS, comment="#").sort_values(["vehicle", "date"])
    logged = on.vehicles.set_index("vehicle")["fuel_energy_mj_per_km"]
    m_clean = m_logged = bought = 0.0
    for vid, g in cards.groupby("vehicle"):
        if vid not in logged.index:
            continue
        km = g["odometer_km"].iloc[-1] - g["odometer_km"].iloc[0]
        bought += g["litres"].iloc[1:].sum() * per_litre
        m_clean += clean[vid] * per_litre * km
        m_logged += logged[vid] * km
    k = on.calibration["calibration_factor"].iloc[0]
    assert_allclose(k, bought / m_logged, rtol=1e-9)
    assert abs(bought / m_clean - demo_fleet.INVENTED_CARD_FACTOR) < 0.03  # as test_fleet
    assert 1.0 < m_clean / m_logged < 1.1  # the logs' loss on the shipped example
