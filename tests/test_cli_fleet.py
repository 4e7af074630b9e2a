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
