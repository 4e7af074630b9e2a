"""Tests of ``workbench fleet run`` on the shipped invented example fleet."""

from __future__ import annotations

import json

from workbench.interfaces.cli import main
from workbench.io import demo_fleet

LOGS = str(demo_fleet.DATA / "logs")
CARDS = str(demo_fleet.DATA / "fuel-cards.csv")
BASE = ["fleet", "run", LOGS, "--vehicle", "taxi", "--map", "taxi-si-1.8l", "--fuel", "gasoline",
        "--workers", "1"]


def test_json_with_fuel_cards(capsys):
    assert main([*BASE, "--fuel-cards", CARDS, "--json"]) == 0
    out, err = capsys.readouterr()
    data = json.loads(out)
    assert data["vehicles_found"] == 13 and data["vehicles_used"] == 12
    assert "KB-T13.csv row" in data["problems"][0]
    assert data["fuel_l_per_100km_p10"] < data["fuel_l_per_100km"] < data["fuel_l_per_100km_p90"]
    # L/100 km from MJ/km with gasoline's LHV and density (the fuel library's own numbers):
    # the same class figure both ways, so the unit change is right to rounding
    per_l = data["fuel_energy_mj_per_km"] / data["fuel_l_per_100km"] * 100  # MJ per litre
    assert 30.0 < per_l < 34.0  # gasoline ~32 MJ/L (common practice, no source)
    assert data["calibration"]["vehicles"] == 12
    assert "vehicles 13/13" in err
    # each vehicle: observed beside modelled, residual = observed - factor x modelled (the
    # calibration's definition, docs/fleet-logs.md), the same as the fit's own table
    k = data["calibration"]["calibration_factor"]
    fit = {r["vehicle"]: r for r in data["calibration"]["residuals"]}
    for row in data["vehicles"]:
        assert abs(row["residual_mj_per_km"] - (row["observed_mj_per_km"]
                                               - k * row["fuel_energy_mj_per_km"])) < 1e-12
        assert row["observed_mj_per_km"] == fit[row["vehicle"]]["observed_mj_per_km"]


def test_the_study_s_duty_settings_give_the_study_s_factor(capsys, tmp_path):
    # The demo study's taxis run with 1.5 kW of accessories and 15 % extra idling; on the same
    # logs and cards, fleet run with those settings must fit the factor the study fits (the
    # run's own number, tests/test_study_calibration.py), and without them a larger one.
    from workbench.core.paths import DATA
    from workbench.study import read_study, run

    text = (DATA / "studies" / "kestrel-bay.toml").read_text(encoding="utf-8").replace(
        'profile = "taxi-shift"', f'profile = "{LOGS}"\nfuel_cards = "{CARDS}"', 1)
    path = tmp_path / "fleet.toml"
    path.write_text(text, encoding="utf-8")
    study_k = run(read_study(path), draws=0).calibration["calibration_factor"].iloc[0]
    assert main([*BASE, "--fuel-cards", CARDS, "--accessory-kw", "1.5", "--extra-idle-share",
                 "0.15", "--json", "--quiet"]) == 0
    k = json.loads(capsys.readouterr().out)["calibration"]["calibration_factor"]
    assert abs(k - study_k) < 1e-9
    assert main([*BASE, "--fuel-cards", CARDS, "--json", "--quiet"]) == 0
    assert json.loads(capsys.readouterr().out)["calibration"]["calibration_factor"] > k


def test_bad_settings_name_the_option(capsys):
    assert main([*BASE, "--extra-idle-share", "1.5"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--extra-idle-share" in err


def test_text_with_fuel_cards_shows_each_vehicles_fit(capsys):
    assert main([*BASE, "--fuel-cards", CARDS, "--quiet"]) == 0
    out = capsys.readouterr().out
    header = out.splitlines()[0].split()
    assert header[:6] == ["vehicle", "distance_km", "fuel_l_per_100km", "fuel_energy_mj_per_km",
                          "observed_mj_per_km", "residual_mj_per_km"]


def test_text_and_quiet(capsys):
    assert main([*BASE, "--quiet"]) == 0
    out, err = capsys.readouterr()
    assert "P10-P90 between vehicles" in out and "left out:" in out
    assert err == ""


def test_bad_source_one_line(capsys):
    assert main(["fleet", "run", "/nonexistent/logs", "--vehicle", "taxi", "--map",
                 "taxi-si-1.8l", "--fuel", "gasoline"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "no such file, folder or pattern" in err
