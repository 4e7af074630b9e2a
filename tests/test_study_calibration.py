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
    cards.write_text(CARDS.read_text(encoding="utf-8").replace(",1.76,", ",1.77,", 1),
                     encoding="utf-8")
    assert _study(tmp_path, 'fuel_cards = "cards.csv"').inputs.classes[0] != first
