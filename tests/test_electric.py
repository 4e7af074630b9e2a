"""Tests of workbench.models.electric against closed forms of the road-load mechanics."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.models.duty import DutySettings, DutyTrace
from workbench.models.electric import (
    BatteryPack,
    EfficiencyCurve,
    ElectricDrive,
    battery_capacity,
    charging_check,
    drive_energy,
    size_battery,
    tariff_price,
)
from workbench.models.vehicle import Vehicle

G = 9.80665  # standard gravity, exact by definition (3rd CGPM, 1901)
KWH = 3.6e6  # J per kWh, exact
RPM = math.pi / 30.0


def car(**changes) -> Vehicle:
    base = Vehicle(name="test", mass=1500.0, payload=0.0, frontal_area=2.2,
                   drag_coefficient=0.30, rolling_resistance=0.010, driveline_efficiency=0.90,
                   wheel_radius=0.30, gear_ratios=(1.0,), final_drive=9.0,
                   shift_speed=100 * RPM, max_engine_speed=12000 * RPM, air_density=1.2,
                   rotating_mass_factor=1.05)
    return replace(base, **changes)


def drive(**changes) -> ElectricDrive:
    base = ElectricDrive(motor_power=80e3, motor_efficiency=EfficiencyCurve.constant(0.90),
                         reducer_efficiency=0.97, regen_share=0.6, regen_min_speed=0.0,
                         hvac_power=0.0, charging_efficiency=0.88)
    return replace(base, **changes)


def constant_speed(v: float = 20.0, seconds: int = 60) -> DutyTrace:
    return DutyTrace(time=np.arange(0.0, seconds + 1.0), speed=np.full(seconds + 1, v))


def test_constant_speed_dc_power_is_road_load_over_efficiency():
    # Road load at constant speed on a flat road, P = (m g Crr + rho/2 Cd A v^2) v
    # (Guzzella & Sciarretta, Vehicle Propulsion Systems, 3rd ed., 2013, sect. 2.1, from
    # memory), carried through the reducer and motor: P_dc = P / (eta_g eta_m).
    m, crr, rho, cda, v = 1500.0, 0.010, 1.2, 0.30 * 2.2, 20.0
    p_wheel = (m * G * crr + 0.5 * rho * cda * v * v) * v
    energy = drive_energy(car(), constant_speed(v), drive())
    assert_allclose(energy.dc_power, p_wheel / (0.97 * 0.90), rtol=1e-12)  # round-off only
    assert_allclose(energy.battery, p_wheel / (0.97 * 0.90) * 60.0, rtol=1e-12)
    assert_allclose(energy.grid, energy.battery / 0.88, rtol=1e-15)
    assert_allclose(energy.battery_per_m, p_wheel / (0.97 * 0.90) / v, rtol=1e-12)
    assert energy.regen_wheel == 0.0 and energy.over_power_time == 0.0


def test_load_dependent_efficiency_is_taken_at_the_shaft_load():
    # With a curve, eta_m is read at P_shaft / P_max (linear between the points): the
    # constant-speed shaft power of 6.3 kW on an 80 kW motor is a load share of ~0.0787.
    curve = EfficiencyCurve(load=(0.0, 0.1, 1.0), efficiency=(0.70, 0.90, 0.90))
    energy = drive_energy(car(), constant_speed(), drive(motor_efficiency=curve))
    p_wheel = (1500.0 * G * 0.010 + 0.5 * 1.2 * 0.66 * 400.0) * 20.0
    shaft = p_wheel / 0.97
    eta = 0.70 + (0.90 - 0.70) * (shaft / 80e3) / 0.1  # the straight line by hand
    assert_allclose(energy.dc_power, shaft / eta, rtol=1e-12)


def decel(v0: float, v1: float, seconds: int) -> DutyTrace:
    return DutyTrace(time=np.arange(0.0, seconds + 1.0),
                     speed=np.linspace(v0, v1, seconds + 1))


def test_regeneration_under_the_power_limit_is_share_of_kinetic_energy():
    # Without drag and rolling resistance the braking work at the wheels is the kinetic-energy
    # change m f_rot (v0^2 - v1^2) / 2 (work-energy theorem); the motor takes the share s of
    # it while s |P_w| stays under P_max. Gentle stop 20 -> 10 m/s over 100 s: peak braking
    # power ~ 1575 kg * 0.1 m/s2 * 20 m/s = 3.2 kW, under 80 kW.
    vehicle = car(drag_coefficient=0.0, rolling_resistance=0.0)
    energy = drive_energy(vehicle, decel(20.0, 10.0, 100), drive())
    kinetic = 0.5 * 1500.0 * 1.05 * (20.0**2 - 10.0**2)
    assert_allclose(energy.braking, kinetic, rtol=1e-12)
    assert_allclose(energy.regen_wheel, 0.6 * kinetic, rtol=1e-12)
    assert_allclose(energy.regen_dc, 0.6 * kinetic * 0.97 * 0.90, rtol=1e-12)
    assert energy.battery == 0.0  # all regeneration, no draw: the net is clamped at 0


def test_regeneration_over_the_power_limit_is_capped_at_motor_power_times_time():
    # Hard stop 20 -> 0 m/s in 4 s: braking power ~ 1575 * 5 * v, 20-140 kW, above a 5 kW
    # motor in every interval, so the motor takes P_max t at its shaft (reducer ideal here).
    vehicle = car(drag_coefficient=0.0, rolling_resistance=0.0)
    energy = drive_energy(vehicle, decel(20.0, 0.0, 4),
                          drive(motor_power=5e3, reducer_efficiency=1.0, regen_share=1.0))
    assert_allclose(energy.regen_wheel, 5e3 * 4.0, rtol=1e-12)
    # With a reducer the limit is still at the shaft: P_max / eta_g at the wheels.
    energy = drive_energy(vehicle, decel(20.0, 0.0, 4), drive(motor_power=5e3, regen_share=1.0))
    assert_allclose(energy.regen_wheel, 5e3 / 0.97 * 4.0, rtol=1e-12)
    assert_allclose(energy.regen_dc, 5e3 * 4.0 * 0.90, rtol=1e-12)


def test_no_regeneration_below_the_minimum_speed():
    vehicle = car(drag_coefficient=0.0, rolling_resistance=0.0)
    energy = drive_energy(vehicle, decel(1.0, 0.0, 10), drive(regen_min_speed=5.0 / 3.6))
    assert energy.regen_wheel == 0.0 and energy.braking > 0.0


def test_lossless_drive_returns_the_kinetic_energy_gain():
    # Ideal drive (eta = 1, s = 1, no limit), no drag or rolling resistance: over any speed
    # history the net battery energy is the kinetic-energy change (work-energy theorem).
    rng = np.random.default_rng(7)
    time = np.cumsum(rng.uniform(0.5, 2.0, 300))
    speed = np.abs(np.cumsum(rng.normal(0.0, 0.7, 300))) + 2.0
    speed[-1] = speed[0] + 5.0
    ideal = drive(motor_efficiency=EfficiencyCurve.constant(1.0), reducer_efficiency=1.0,
                  regen_share=1.0, motor_power=1e9, charging_efficiency=1.0)
    energy = drive_energy(car(drag_coefficient=0.0, rolling_resistance=0.0),
                          DutyTrace(time=time, speed=speed), ideal)
    expected = 0.5 * 1500.0 * 1.05 * (speed[-1] ** 2 - speed[0] ** 2)
    assert_allclose(energy.battery, expected, rtol=1e-9)  # round-off over 300 intervals


def test_accessories_and_heating_draw_over_the_service_time():
    # 1 kW accessories + 2 kW heating over 60 s of trace, and as long again idling
    # (extra_idle_share 0.5 of the total time): (1 + 2) kW x 120 s.
    settings = DutySettings(accessory_power=1e3, extra_idle_share=0.5)
    energy = drive_energy(car(), constant_speed(), drive(hvac_power=2e3), settings=settings)
    assert_allclose(energy.accessory_dc, 3e3 * 120.0, rtol=1e-12)
    assert_allclose(energy.duration, 120.0, rtol=1e-12)
    per_interval = drive(hvac_power=np.full(60, 2e3))
    again = drive_energy(car(), constant_speed(), per_interval, settings=settings)
    assert_allclose(again.accessory_dc, energy.accessory_dc, rtol=1e-12)


def test_over_power_time_is_flagged():
    energy = drive_energy(car(), constant_speed(v=40.0), drive(motor_power=10e3))
    assert_allclose(energy.over_power_time, 60.0)


def test_battery_capacity_closed_form():
    # C = R e / (DoD SOH_end): 300 km at 0.2 kWh/km, DoD 0.9, SOH 0.8 -> 83.33 kWh.
    pack = BatteryPack(depth_of_discharge=0.9, end_of_life_health=0.8)
    assert_allclose(battery_capacity(300e3, 0.2 * KWH / 1000.0, pack) / KWH,
                    300.0 * 0.2 / 0.72, rtol=1e-12)
    many = battery_capacity(300e3, np.array([0.1, 0.2]) * KWH / 1000.0, pack)
    assert_allclose(many / KWH, [300.0 * 0.1 / 0.72, 300.0 * 0.2 / 0.72], rtol=1e-12)


def test_battery_that_carries_itself_matches_the_fixed_point_closed_form():
    # Constant speed, flat: e(m) = (a m + b) / eta with a = g Crr, b = rho/2 Cd A v^2, so the
    # pack mass solving m_b = R e(m0 - m_s + m_b) / (DoD SOH s_E) is
    # m_b = k (a (m0 - m_s) + b) / (1 - k a), k = R / (eta DoD SOH s_E)  (algebra).
    pack = BatteryPack(depth_of_discharge=0.9, end_of_life_health=0.8,
                       specific_energy=140.0 * 3600.0)
    sized = size_battery(car(), constant_speed(), drive(), pack, 250e3, mass_saved=200.0)
    a, b, eta = G * 0.010, 0.5 * 1.2 * 0.66 * 400.0, 0.97 * 0.90
    k = 250e3 / (eta * 0.9 * 0.8 * 140.0 * 3600.0)
    m_b = k * (a * 1300.0 + b) / (1.0 - k * a)
    assert_allclose(sized.mass, m_b, rtol=1e-6)  # iteration tolerance 1e-3 kg
    assert_allclose(sized.added_mass, m_b - 200.0, rtol=1e-6)
    assert_allclose(sized.vehicle.mass, 1300.0 + sized.mass, rtol=1e-6)
    assert_allclose(sized.capacity, sized.mass * 140.0 * 3600.0, rtol=1e-12)


def test_impossible_range_is_one_input_error():
    pack = BatteryPack(specific_energy=5.0 * 3600.0)
    with pytest.raises(InputError, match="range"):
        size_battery(car(), constant_speed(), drive(), pack, 2000e3)


def test_charging_window_check():
    # t = E / (n P): 60 kWh a day at one 11 kW charger takes 5.45 h.
    ok = charging_check(60 * KWH, 11e3, 1.0, 8 * 3600.0)
    assert ok.fits and ok.message == ""
    assert_allclose(ok.time_needed / 3600.0, 60.0 / 11.0, rtol=1e-12)
    short = charging_check(60 * KWH, 11e3, 0.5, 8 * 3600.0)
    assert not short.fits and "10.9 h" in short.message and "\n" not in short.message


def test_time_of_use_tariff_is_energy_weighted():
    assert_allclose(tariff_price([0.30, 0.10], [0.3, 0.7]), 0.16, rtol=1e-12)
    assert tariff_price([0.21], [1.0]) == 0.21
    with pytest.raises(InputError, match=r"sum to 0\.9"):
        tariff_price([0.3, 0.1], [0.2, 0.7])
    # one price per Monte Carlo draw: each draw weighted alike (0.3 x 0.3 + 0.7 x 0.1 = 0.16;
    # 0.3 x 0.4 + 0.7 x 0.2 = 0.26), an array back
    drawn = tariff_price([np.array([0.30, 0.40]), np.array([0.10, 0.20])], [0.3, 0.7])
    assert_allclose(drawn, [0.16, 0.26], rtol=1e-12)


@pytest.mark.parametrize("changes, field", [
    ({"motor_power": 0.0}, "motor_power"),
    ({"regen_share": 1.5}, "regen_share"),
    ({"charging_efficiency": 0.0}, "charging_efficiency"),
    ({"reducer_efficiency": float("nan")}, "reducer_efficiency"),
    ({"hvac_power": -1.0}, "hvac_power"),
])
def test_bad_drive_parameters_are_one_line_errors(changes, field):
    with pytest.raises(InputError, match=field):
        drive(**changes)


@pytest.mark.parametrize("load, eff", [((0.1, 1.0), (0.9, 0.9)), ((0.0, 0.5), (0.9,)),
                                       ((0.0, 0.5), (0.9, 1.2)), ((0.0, 0.5, 0.4), (1, 1, 1))])
def test_bad_efficiency_curves(load, eff):
    with pytest.raises(InputError, match="efficiency curve"):
        EfficiencyCurve(load=load, efficiency=eff)


def test_typical_curve_is_in_range_and_hvac_length_checked():
    curve = EfficiencyCurve.typical()
    assert np.all((curve(np.linspace(0, 2, 50)) > 0.6) & (curve(np.linspace(0, 2, 50)) < 1.0))
    with pytest.raises(InputError, match="hvac_power"):
        drive_energy(car(), constant_speed(), drive(hvac_power=np.ones(3)))
    with pytest.raises(InputError, match="no distance"):
        drive_energy(car(), DutyTrace(time=np.arange(3.0), speed=np.zeros(3)), drive())
