"""Tests of workbench.models.engine: maps, Willans line, fuel over a duty, per-km figures."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.core.paths import DATA
from workbench.io.maps import read_map
from workbench.io.profiles import read_trace
from workbench.io.vehicles import read_vehicle
from workbench.models.duty import DutySettings, DutyTrace, ModeTable
from workbench.models.engine import (
    NOX_SPEED_BINS,
    WILLANS_SHAPES,
    DutyEnergy,
    EngineMap,
    duty_energy,
    fuel_per_distance,
    fuel_per_distance_for,
    mode_energy,
    run_duty,
    willans_efficiency,
    willans_map,
    willans_parameters,
)
from workbench.models.vehicle import FIRED, IDLE, Vehicle, operating_points, road_load

RPM = math.pi / 30.0


def flat_map(eta: float = 0.3) -> EngineMap:
    speed = np.array([50.0, 300.0, 1000.0])
    torque = np.array([0.0, 500.0, 5000.0])
    return EngineMap(name="flat", speed=speed, torque=torque, efficiency=np.full((3, 3), eta),
                     full_load_torque=np.full(3, 5000.0), idle_speed=80.0, idle_fuel_power=3e3)


def demo_map(stem: str = "taxi-si-1.8l") -> EngineMap:
    return read_map(DATA / "maps" / f"{stem}.csv")


def test_constant_efficiency_map_gives_wheel_energy_over_efficiencies():
    # With a constant map and the engine always driving, fuel = wheel work / (eta_d eta_e)
    # by definition of the two efficiencies (energy balance); exact up to round-off.
    vehicle = Vehicle(name="v", mass=1600.0, payload=100.0, frontal_area=2.3,
                      drag_coefficient=0.32, rolling_resistance=0.011,
                      driveline_efficiency=0.88, wheel_radius=0.31,
                      gear_ratios=(3.6, 2.1, 1.4, 1.0, 0.8), final_drive=3.9,
                      shift_speed=1100 * RPM, max_engine_speed=6000 * RPM)
    t = np.arange(0.0, 400.0)
    speed = np.minimum(5.0 + 0.6 * t, 25.0) + 0.5 * np.sin(t / 7.0)  # accelerate, then cruise
    trace = DutyTrace(time=t, speed=speed, grade=np.full(t.size, 0.01))
    energy = duty_energy(trace, vehicle, flat_map(0.3), chunk_size=64)
    assert energy.braking_energy == 0.0  # all intervals drive
    assert_allclose(energy.fuel_energy, energy.wheel_energy / (0.88 * 0.3), rtol=1e-12)
    assert energy.share_out_of_map == 0.0 and energy.share_at_full_load == 0.0


def test_chunk_size_does_not_change_results():
    trace = read_trace(DATA / "profiles" / "taxi-shift.csv")
    vehicle = read_vehicle(DATA / "vehicles" / "taxi.toml")
    settings = DutySettings(accessory_power=800.0)
    a = duty_energy(trace, vehicle, demo_map(), settings=settings, chunk_size=1000)
    b = duty_energy(trace, vehicle, demo_map(), settings=settings, chunk_size=10**7)
    for f in ("distance", "fuel_energy", "wheel_energy", "time_idle"):
        assert_allclose(getattr(a, f), getattr(b, f), rtol=1e-12)


def test_interpolation_reproduces_grid_and_is_monotone():
    m = demo_map()
    n, t = np.meshgrid(m.speed, m.torque)
    assert_allclose(m.efficiency_at(n, t), m.efficiency, rtol=1e-12)
    # The Willans grid rises with torque at every speed; so must the interpolant in between.
    assert np.all(np.diff(m.efficiency, axis=0) > 0)
    for speed in np.linspace(m.speed[0], m.speed[-1], 37):
        eff = m.efficiency_at(np.full(500, speed), np.linspace(m.torque[0], m.torque[-1], 500))
        assert np.all(np.diff(eff) >= -1e-12)


def test_willans_efficiency_hand_computed():
    # Willans line (Guzzella & Onder, Introduction to Modeling and Control of IC Engine
    # Systems, 2nd ed., 2010, ch. 2, from memory): eta = e p_me / (p_me + p_loss).
    # Hand-computed for the spark-ignition shape at c_m = 9 m/s (e = e_max = 0.39,
    # p_loss = 1.5 bar + 400 Pa * 81 = 1.824 bar) and p_me = 10 bar: eta = 3.9/11.824.
    p = willans_parameters("spark-ignition", displacement=2.0e-3, stroke=0.09,
                           idle_speed=800 * RPM, rated_speed=6000 * RPM)
    omega = 9.0 * math.pi / 0.09  # c_m = S omega / pi
    torque = 10e5 * 2.0e-3 / (4 * math.pi)  # p_me = 4 pi T / V_d
    assert_allclose(willans_efficiency(p, omega, torque), 3.9 / 11.824, rtol=1e-12)


def test_willans_peaks_are_class_typical():
    # Peak brake efficiency ~0.33-0.37 for a naturally aspirated SI car engine and ~0.38-0.43
    # for a light-duty turbo diesel (common practice, no source).
    si = willans_map(willans_parameters("spark-ignition", displacement=1.8e-3, stroke=0.086,
                                        idle_speed=750 * RPM, rated_speed=6000 * RPM), name="si")
    ci = willans_map(willans_parameters("compression-ignition", displacement=2.3e-3,
                                        stroke=0.094, idle_speed=800 * RPM,
                                        rated_speed=3800 * RPM), name="ci")
    assert 0.33 < si.efficiency.max() < 0.37
    assert 0.38 < ci.efficiency.max() < 0.43
    assert set(WILLANS_SHAPES) == {"spark-ignition", "compression-ignition"}
    with pytest.raises(ValueError, match="unknown engine kind"):
        willans_parameters("rotary", displacement=1e-3, stroke=0.08, idle_speed=80.0,
                           rated_speed=600.0)  # type: ignore[arg-type]


def test_fuel_power_low_load_line_and_clamping():
    m = demo_map()
    n = 2000 * RPM
    t_min = m.torque[0]
    look = m.fuel_power(np.array([n, n, n, n]),
                        np.array([0.0, t_min * (1 - 1e-12), t_min, 1e4]))
    # zero load: idle fuel power scaled with speed (constant friction torque)
    assert_allclose(look.fuel_power[0], m.idle_fuel_power * n / m.idle_speed, rtol=1e-12)
    # continuous at the lowest torque row
    assert_allclose(look.fuel_power[1], look.fuel_power[2], rtol=1e-9)
    # above full load: clamped to it, flagged, not extrapolated
    full = m.max_torque(n)
    assert_allclose(look.fuel_power[3], n * full / m.efficiency_at(n, full), rtol=1e-12)
    assert list(look.out_of_map) == [False, False, False, True]
    assert list(look.at_full_load) == [False, False, False, True]
    # speed beyond the axis: efficiency of the edge, flagged
    fast = m.fuel_power(np.array([m.speed[-1] * 1.2]), np.array([50.0]))
    edge = m.efficiency_at(m.speed[-1], 50.0)
    assert_allclose(fast.fuel_power, m.speed[-1] * 1.2 * 50.0 / edge, rtol=1e-12)
    assert fast.out_of_map[0]


def test_idle_fuel_equals_willans_zero_load():
    p = willans_parameters("compression-ignition", displacement=2.3e-3, stroke=0.0938,
                           idle_speed=800 * RPM, rated_speed=3800 * RPM)
    m = willans_map(p, name="ci")
    e = p.e_max - p.e_curvature * (p.stroke * p.idle_speed / math.pi - p.piston_speed_opt) ** 2
    c_m = p.stroke * p.idle_speed / math.pi
    loss = p.pme_loss_0 + p.pme_loss_2 * c_m**2
    assert_allclose(m.idle_fuel_power, loss * 2.3e-3 * p.idle_speed / (4 * math.pi) / e,
                    rtol=1e-12)


def test_adjusted_engine():
    m = demo_map()
    lpg = m.adjusted(derate=0.1, efficiency_offset=-0.01)
    assert_allclose(lpg.full_load_torque, 0.9 * m.full_load_torque, rtol=1e-15)
    assert_allclose(lpg.efficiency, m.efficiency - 0.01, rtol=1e-15)
    with pytest.raises(InputError, match="derate"):
        m.adjusted(derate=1.5)
    with pytest.raises(InputError, match="efficiency_offset"):
        m.adjusted(efficiency_offset=-0.5)


def energy(**kw) -> DutyEnergy:
    base = dict(distance=100e3, duration=7200.0, wheel_energy=50e6, braking_energy=10e6,
                engine_energy=60e6, fuel_energy=200e6, time_idle=720.0, time_out_of_map=72.0,
                time_at_full_load=0.0)
    return DutyEnergy(**{**base, **kw})


def test_fuel_per_distance_is_si_and_trade_units_per_km():
    # 200 MJ over 100 km of a fuel with LHV 40 MJ/kg, 800 kg/m3, 3.2 kg CO2/kg:
    # 2 MJ/km = 2000 J/m, 5e-5 kg/m (hand-computed): the model figures are per metre (SI).
    per_m = fuel_per_distance(energy(), lhv_mass=40e6, density=800.0, co2_mass=3.2)
    assert_allclose(per_m.fuel_energy_per_m, 2000.0, rtol=1e-15)
    assert_allclose(per_m.fuel_mass_per_m, 5e-5, rtol=1e-15)
    assert_allclose(per_m.co2_ttw_per_m, 1.6e-4, rtol=1e-15)
    # In trade units: 2 MJ/km, 5 kg/100 km, 6.25 L/100 km, 16 km/L, 160 g CO2/km.
    r = per_m.trade_units()
    assert_allclose(r["fuel_energy_mj_per_km"], 2.0, rtol=1e-15)
    assert_allclose(r["fuel_kg_per_100km"], 5.0, rtol=1e-15)
    assert_allclose(r["fuel_l_per_100km"], 6.25, rtol=1e-15)
    assert_allclose(r["fuel_km_per_l"], 16.0, rtol=1e-15)
    # mpg (US) = 235.2146 / (L/100 km): 1 US gal = 3.785411784 L, 1 mile = 1.609344 km
    # (exact definitions, NIST Handbook 44, App. C); 235.2146/6.25 = 37.6343
    assert_allclose(r["fuel_mpg_us"], 235.214583 / 6.25, rtol=1e-8)
    assert_allclose(r["co2_ttw_g_per_km"], 160.0, rtol=1e-15)
    assert_allclose(r["share_idle"], 0.1, rtol=1e-15)
    assert_allclose(r["share_out_of_map"], 0.01, rtol=1e-15)
    # gasoline-litre equivalent with the module's 32.184 MJ/L: 2 MJ/km -> 6.2143 L/100 km
    assert_allclose(r["gasoline_l_equivalent_per_100km"], 200 / 32.184, rtol=1e-12)
    gas = fuel_per_distance(energy(), lhv_mass=48e6, density=float("nan"), co2_mass=2.7)
    assert math.isnan(gas.trade_units()["fuel_l_per_100km"])
    with pytest.raises(InputError, match="covers no distance"):
        fuel_per_distance(energy(distance=0.0), lhv_mass=40e6, density=800.0, co2_mass=3.2)


def test_mode_table_energy():
    m = flat_map(0.25)
    table = ModeTable(engine_speed=[200.0, 300.0], torque=[100.0, 400.0],
                      duration=[3600.0, 1800.0], distance=50e3)
    e = mode_energy(table, m)
    # fuel = sum(omega T t) / 0.25 for a constant map, hand-computed: (72 + 216) MJ / 0.25
    assert_allclose(e.fuel_energy, (200 * 100 * 3600 + 300 * 400 * 1800) / 0.25, rtol=1e-12)
    assert math.isnan(e.wheel_energy)


def test_extra_idle_share_adds_idle_time_and_fuel():
    m = demo_map("van-ci-2.3l")
    table = ModeTable(engine_speed=[2000 * RPM], torque=[150.0], duration=[3600.0],
                      distance=50e3)
    base = mode_energy(table, m)
    more = mode_energy(table, m, settings=DutySettings(extra_idle_share=0.2))
    assert_allclose(more.duration, 4500.0, rtol=1e-15)  # 3600 s / (1 - 0.2)
    assert_allclose(more.share_idle, 0.2, rtol=1e-12)
    # 900 s more at idle speed with no accessory load burn the map's idle fuel power
    assert_allclose(more.fuel_energy - base.fuel_energy, 900.0 * m.idle_fuel_power, rtol=1e-9)


CASES = [
    # Urban fuel use of the demo vehicles on their demo duties with 1 kW of accessories must
    # fall in class-typical ranges (common practice, no source; from memory: mid-size gasoline
    # cars 7-12 L/100 km in city taxi work, 3.5 t diesel panel vans 7-13 L/100 km in urban
    # delivery, diesel midibuses 18-35 L/100 km in urban service). Wide ranges: the duties
    # and vehicles are invented, only the order of magnitude is checked.
    ("taxi-shift", "taxi", "taxi-si-1.8l", "gasoline", (7.0, 12.0)),
    ("van-day", "van", "van-ci-2.3l", "diesel", (7.0, 13.0)),
    ("shuttle-route", "shuttle-bus", "bus-ci-4.5l", "diesel", (18.0, 35.0)),
]


@pytest.mark.parametrize(("profile", "vehicle", "map_stem", "fuel_id", "litres"), CASES)
def test_demo_vehicles_use_class_typical_fuel(profile, vehicle, map_stem, fuel_id, litres):
    from workbench.core.fuels import load_fuel
    from workbench.models.combustion import fuel_sheet

    e = duty_energy(read_trace(DATA / "profiles" / f"{profile}.csv"),
                    read_vehicle(DATA / "vehicles" / f"{vehicle}.toml"), demo_map(map_stem),
                    settings=DutySettings(accessory_power=1000.0))
    fuel = load_fuel(fuel_id)
    r = fuel_per_distance_for(e, fuel, fuel_sheet(fuel)).trade_units()
    assert litres[0] < r["fuel_l_per_100km"] < litres[1]
    assert r["share_out_of_map"] < 0.02
    # CO2 per litre burnt: about 2.3 kg/L for gasoline and 2.65 kg/L for diesel (common
    # practice, from memory; national inventory factors for fossil fuels differ by ~2 %).
    per_litre = r["co2_ttw_g_per_km"] / r["fuel_l_per_100km"] / 10.0
    expected = {"gasoline": 2.31, "diesel": 2.65}[fuel_id]
    assert_allclose(per_litre, expected, rtol=0.03)


def test_compressed_gas_has_no_litres():
    from workbench.core.fuels import load_fuel
    from workbench.models.combustion import fuel_sheet

    gas = load_fuel("natural-gas")
    r = fuel_per_distance_for(energy(), gas, fuel_sheet(gas)).trade_units()
    assert math.isnan(r["fuel_l_per_100km"]) and r["fuel_kg_per_100km"] > 0


def test_duty_pipeline_accounts_for_all_fuel_and_time():
    # Conservation, no source needed: the NOx speed bins hold the fuel energy of every fired
    # or idling interval, which is all the fuel of a duty without extra idling; the histogram
    # holds their time. A time-at-mode table inside the map's torque range puts all its time
    # into the histogram.
    trace = read_trace(DATA / "profiles" / "taxi-shift.csv")
    vehicle = read_vehicle(DATA / "vehicles" / "taxi.toml")
    emap = demo_map()
    settings = DutySettings(accessory_power=800.0)
    run = run_duty(trace, vehicle, emap, settings=settings)
    assert_allclose(run.nox_weights.sum(), run.energy.fuel_energy, rtol=1e-12)
    assert run.nox_speeds.size <= NOX_SPEED_BINS
    load = road_load(vehicle, trace)
    ops = operating_points(vehicle, trace, load, idle_speed=emap.idle_speed, settings=settings,
                           full_load_torque=emap.max_torque)
    burning = load.duration[(ops.state == FIRED) | (ops.state == IDLE)].sum()  # not overrun
    assert 0.5 * run.energy.duration < burning < run.energy.duration
    assert_allclose(run.points["seconds"].sum(), burning, rtol=1e-12)
    table = ModeTable(engine_speed=[800 * RPM, 2000 * RPM], torque=[0.0, 60.0],
                      duration=[600.0, 1800.0], distance=20e3)
    modes = run_duty(table, None, emap)
    assert_allclose(modes.points["seconds"].sum(), 2400.0, rtol=1e-15)
    assert_allclose(modes.energy.fuel_energy, modes.nox_weights.sum(), rtol=1e-12)
    with pytest.raises(InputError, match="needs a vehicle"):
        run_duty(trace, None, emap)
