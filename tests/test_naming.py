"""The naming layer: key paths and ids in the study's own words (demo study, INVENTED data)."""

from __future__ import annotations

import re

import pytest

from workbench.study import read_study
from workbench.study.naming import display_unit, input_label, input_rows, study_names


@pytest.fixture(scope="module")
def demo():
    return read_study("demo")


@pytest.mark.parametrize("path, label", [
    ("classes[0].km_per_year", "Taxis: km per vehicle-year"),
    ("classes.taxi.vehicle_spread",
     "Taxis: mean fuel energy per km of its vehicles (from their spread)"),
    ("classes.taxi.calibration", "Taxis: fuel-card calibration factor"),
    ("candidates[1].efficiency_offset.bus",
     "Natural gas across the fleet · Shuttle buses: brake-efficiency offset"),
    ("candidates[0].aftertreatment.life", "LPG conversion of the taxis: catalyst life"),
    ("programme.discount_rate", "Discount rate"),
    ("baseline.upkeep_change_per_year.van",
     "Keep today's fuels · Delivery vans: change in upkeep per vehicle-year"),
])
def test_key_paths_read_as_the_study_names_them(demo, path, label):
    assert input_label(path, demo.inputs) == label


def test_prices_name_the_fuel_and_units_carry_the_currency(demo):
    assert input_label("prices.lpg", demo.inputs).startswith("Price of LPG")
    assert display_unit("per L", "KBD") == "KBD per L"
    assert display_unit("km", "KBD") == "km"


def test_names_and_input_rows_cover_the_study(demo):
    names = study_names(demo.inputs)
    assert names.vehicle_class("van") == "Delivery vans"
    assert names.candidate("unknown-id") == "unknown-id"
    rows = input_rows(demo.data, demo.inputs)
    sections = {r["section"] for r in rows}
    assert {"Programme", "Fleet: Taxis", "Prices"} <= sections
    # a per-class value becomes one row per class, named by the class
    fuel_rows = [r for r in rows if r["section"].startswith("Baseline")
                 and r["input"].endswith(": fuel")]
    assert [r["input"] for r in fuel_rows] == ["Taxis: fuel", "Delivery vans: fuel",
                                              "Shuttle buses: fuel"]
    assert not any(re.search(r"\[\d+\]", r["input"]) for r in rows)  # no key-path index
