"""Tests of workbench.models.aftertreatment: ageing, replacement, reductant, programme totals."""

from __future__ import annotations

import math

import cantera as ct
import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.models.aftertreatment import (
    DEF_PER_NOX,
    DEVICE_PRESETS,
    Aftertreatment,
    optimal_interval,
    programme_nox,
)

KM = 1.0e3  # [m]
G_PER_KM = 1.0e-6  # [kg/m]


def test_def_per_nox_from_stoichiometry():
    # Standard SCR 4 NH3 + 4 NO + O2 -> 4 N2 + 6 H2O, urea CO(NH2)2 + H2O -> 2 NH3 + CO2
    # (textbook SCR chemistry, e.g. Heck & Farrauto, Catalytic Air Pollution Control, from
    # memory); AdBlue is 32.5 % urea by mass (ISO 22241-1). Molar masses from Cantera's
    # element table (IUPAC weights), a reference library independent of our constants.
    w = {el: ct.Element(el).weight for el in ("C", "H", "N", "O")}
    urea = w["C"] + w["O"] + 2 * (w["N"] + 2 * w["H"])
    no2 = w["N"] + 2 * w["O"]
    # Exact arithmetic, only the last digits of atomic weights may differ: rtol 1e-4.
    assert_allclose(DEF_PER_NOX, 0.5 * urea / no2 / 0.325, rtol=1e-4)
    assert 1.9 < DEF_PER_NOX < 2.1  # ~2 kg DEF per kg NOx (common practice, no source)


def test_exponential_ageing_and_threshold_age():
    d = Aftertreatment("x", efficiency_new=0.95, efficiency_aged=0.55, life=100.0,
                       age_basis="months", policy="threshold", replacement_threshold=0.75)
    # Definition of the documented model: the loss falls by 1/e per life.
    assert_allclose(d.efficiency([0.0, 100.0]), [0.95, 0.55 + 0.40 / math.e], rtol=1e-12)
    # 0.75 = 0.55 + 0.40 exp(-a/100)  ->  a = 100 ln 2.
    assert_allclose(d.replacement_age(), 100.0 * math.log(2.0), rtol=1e-12)
    never = Aftertreatment("x", 0.9, efficiency_aged=0.8, life=10.0, age_basis="months",
                           policy="threshold", replacement_threshold=0.7)
    assert never.replacement_age() == math.inf


def test_user_ageing_table():
    table = ((0.0, 0.9), (50.0e6, 0.8), (100.0e6, 0.5))
    d = Aftertreatment("t", efficiency_new=0.9, ageing_table=table, policy="threshold",
                       replacement_threshold=0.65)
    assert_allclose(d.efficiency([25.0e6, 75.0e6, 200.0e6]), [0.85, 0.65, 0.5])
    assert_allclose(d.replacement_age(), 75.0e6)


def test_constant_efficiency_programme_by_hand():
    # No ageing: tailpipe = engine-out (1 - eta). 2.0 g/km, eta 0.9, 5000 km/month,
    # 100 vehicles: 0.2 g/km * 5000 km * 12 * 100 = 1.2 t/year. Hand arithmetic.
    d = Aftertreatment("c", efficiency_new=0.9, efficiency_aged=0.9, life=1.0)
    r = programme_nox(d, 2.0 * G_PER_KM, distance_per_month=5000 * KM, months=36,
                      fleet_size=100, nox_damage_cost=10.0)
    assert_allclose(r.monthly["tailpipe_g_per_km"], 0.2, rtol=1e-12)
    assert_allclose(r.yearly["fleet_nox_t"], [1.2, 1.2, 1.2], rtol=1e-12)
    assert_allclose(r.damage_cost, 3.6e3 * 10.0, rtol=1e-12)
    assert r.replacements == 0 and r.replacement_cost == 0.0 and r.reductant_cost == 0.0


def test_fixed_interval_replacements_and_cost():
    d = Aftertreatment("i", efficiency_new=0.95, efficiency_aged=0.5, life=24.0,
                       age_basis="months", replacement_interval=12.0, parts_cost=800.0,
                       labour_cost=200.0)
    r = programme_nox(d, 1.0 * G_PER_KM, distance_per_month=4000 * KM, months=60,
                      fleet_size=10)
    # Replaced after months 12, 24, 36, 48 (not at the programme's end): 4 per vehicle.
    assert r.replacements == 40 and r.interval_months == 12
    assert_allclose(r.replacement_cost, 40 * 1000.0)
    assert list(r.yearly["replacements"]) == [10, 10, 10, 10, 0]
    # The device is new again in month 13: same efficiency as month 1.
    eff = r.monthly["efficiency"].to_numpy()
    assert eff[12] == eff[0] and eff[11] < eff[0]


def test_threshold_policy_in_distance():
    d = DEVICE_PRESETS["three-way-catalyst"]
    r = programme_nox(d, 0.5 * G_PER_KM, distance_per_month=10000 * KM, months=120)
    # Replaced in the month the threshold age is reached (a month is 10,000 km).
    assert r.interval_months == math.ceil(d.replacement_age() / (10000 * KM))
    assert r.monthly["efficiency"].min() >= d.replacement_threshold - 0.01


def test_reductant_follows_converted_nox():
    d = DEVICE_PRESETS["urea-scr"]
    r = programme_nox(d, 5.0 * G_PER_KM, distance_per_month=8000 * KM, months=12)
    converted = (r.monthly["engine_out_g_per_km"] - r.monthly["tailpipe_g_per_km"]) * 8000e-3
    assert_allclose(r.monthly["reductant_kg"], converted * DEF_PER_NOX, rtol=1e-12)
    assert_allclose(r.reductant_cost, r.monthly["reductant_kg"].sum() * d.reductant_price)


def test_optimal_interval_matches_square_root_rule():
    # Linear efficiency loss b per month makes the NOx damage per cycle of T months
    # D E b T^2 / 2 (D damage cost per kg, E engine-out kg per month); with C per
    # replacement the cost per month C/T + D E b T/2 is least at T* = sqrt(2C/(D E b)),
    # the classic replacement-interval (square-root) rule of maintenance economics
    # (common practice, no source).
    b = 0.01  # efficiency lost per month
    d = Aftertreatment("lin", efficiency_new=0.95,
                       ageing_table=((0.0, 0.95), (95.0, 0.0)), age_basis="months",
                       parts_cost=2000.0)
    e_month = 4.0 * G_PER_KM * 10000 * KM  # kg per vehicle-month
    damage = 50.0
    t_star = math.sqrt(2 * 2000.0 / (damage * e_month * b))  # ~14.1 months
    choice = optimal_interval(d, 4.0 * G_PER_KM, distance_per_month=10000 * KM, months=240,
                              nox_damage_cost=damage)
    # Whole-month grid and end effects of a finite programme: within 1.5 months.
    assert abs(choice.interval_months - t_star) <= 1.5
    assert choice.device.policy == "interval"
    table = choice.table
    assert table["total_cost"].idxmin() == choice.interval_months - 1
    # Never replacing is chosen when replacements cost more than all the damage.
    pricey = optimal_interval(d, 4.0 * G_PER_KM, distance_per_month=10000 * KM, months=24,
                              nox_damage_cost=0.01)
    assert pricey.interval_months == 24 and pricey.device.replacement_interval == math.inf


def test_engine_out_per_month_array():
    d = DEVICE_PRESETS["none"]
    eo = np.linspace(1.0, 2.0, 12) * G_PER_KM
    r = programme_nox(d, eo, distance_per_month=1000 * KM, months=12)
    assert_allclose(r.monthly["tailpipe_g_per_km"], eo * 1e6)
    with pytest.raises(InputError, match="engine_out"):
        programme_nox(d, eo[:5], distance_per_month=1000 * KM, months=12)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"efficiency_new": 1.2}, "efficiency_new"),
        ({"efficiency_new": 0.9, "efficiency_aged": 0.95}, "efficiency_aged"),
        ({"efficiency_new": 0.9, "life": 0.0}, "life"),
        ({"efficiency_new": 0.9, "policy": "threshold", "replacement_threshold": 0.95},
         "replacement_threshold"),
        ({"efficiency_new": 0.9, "ageing_table": ((5.0, 0.9), (1.0, 0.5))}, "ageing_table"),
        ({"efficiency_new": 0.9, "parts_cost": -1.0}, "parts_cost"),
        ({"efficiency_new": 0.9, "age_basis": "hours"}, "age_basis"),
    ],
)
def test_bad_device_names_the_field(kwargs, field):
    with pytest.raises(InputError) as err:
        Aftertreatment("bad", **kwargs)
    assert err.value.where == field and "\n" not in str(err.value)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [({"months": 0}, "months"), ({"fleet_size": 0}, "fleet_size"),
     ({"distance_per_month": 0.0}, "distance_per_month"),
     ({"nox_damage_cost": -1.0}, "nox_damage_cost")],
)
def test_bad_programme_names_the_field(kwargs, field):
    args = {"distance_per_month": 1000 * KM, "months": 12, "fleet_size": 1,
            "nox_damage_cost": 0.0} | kwargs
    with pytest.raises(InputError) as err:
        programme_nox(DEVICE_PRESETS["urea-scr"], 1e-6, **args)
    assert err.value.where == field
