"""Tests of workbench.models.vehicle: road load against mechanics, gear rule."""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.models.duty import DutySettings, DutyTrace
from workbench.models.vehicle import (
    ENGINE_OFF,
    FIRED,
    IDLE,
    OVERRUN,
    Vehicle,
    operating_points,
    road_load,
)

VEHICLES = Path(__file__).resolve().parent.parent / "workbench" / "data" / "vehicles"
RPM = math.pi / 30.0
G = 9.80665  # standard gravity, exact by definition (3rd CGPM, 1901)


def car(**changes) -> Vehicle:
    base = Vehicle(name="test", mass=1500.0, payload=0.0, frontal_area=2.2,
                   drag_coefficient=0.30, rolling_resistance=0.010, driveline_efficiency=0.90,
                   wheel_radius=0.30, gear_ratios=(3.5, 2.0, 1.3, 1.0, 0.8), final_drive=4.0,
                   shift_speed=1200 * RPM, max_engine_speed=6000 * RPM, air_density=1.2,
                   rotating_mass_factor=1.05)
    return replace(base, **changes)


def test_constant_speed_flat_road_power():
    # Road-load power at constant speed on a flat road, P = (m g Crr + rho/2 Cd A v^2) v
    # (Guzzella & Sciarretta, Vehicle Propulsion Systems, 3rd ed., 2013, sect. 2.1, from
    # memory). Hand-computed for m = 1500 kg, Crr = 0.010, rho = 1.2, Cd A = 0.66 m2,
    # v = 20 m/s: rolling 147.09975 N, aero 158.4 N, P = 305.49975 N * 20 m/s = 6109.995 W.
    trace = DutyTrace(time=np.arange(0.0, 61.0), speed=np.full(61, 20.0))
    load = road_load(car(), trace)
    assert_allclose(load.tractive_force, 305.49975, rtol=1e-12)  # exact arithmetic
    assert_allclose(load.wheel_power, 6109.995, rtol=1e-12)
    assert_allclose(load.distance.sum(), 1200.0, rtol=1e-15)


def test_acceleration_work_is_kinetic_energy_change():
    # Work-energy theorem: with no drag and no rolling resistance the tractive work equals
    # the change of kinetic energy m f_rot (v1^2 - v0^2) / 2, for any speed history and
    # uneven sampling (the interval scheme makes it exact, so rtol is round-off only).
    rng = np.random.default_rng(5)
    time = np.cumsum(rng.uniform(0.2, 2.0, 200))
    speed = np.abs(np.cumsum(rng.normal(0.0, 0.8, 200))) + 3.0
    vehicle = car(drag_coefficient=0.0, rolling_resistance=0.0)
    load = road_load(vehicle, DutyTrace(time=time, speed=speed))
    expected = 0.5 * 1500.0 * 1.05 * (speed[-1] ** 2 - speed[0] ** 2)
    assert_allclose(np.sum(load.wheel_power * load.duration), expected, rtol=1e-9)


def test_grade_work_is_potential_energy_change():
    # Climbing at constant speed with no drag or rolling: work = m g dh, with
    # dh = distance * sin(arctan(grade)) (mechanics; a 5 % grade is rise/run = 0.05).
    n = 301
    payload = np.full(n, 300.0)
    trace = DutyTrace(time=np.arange(float(n)), speed=np.full(n, 12.0),
                      grade=np.full(n, 0.05), payload=payload)
    load = road_load(car(drag_coefficient=0.0, rolling_resistance=0.0), trace)
    rise = 12.0 * 300.0 * math.sin(math.atan(0.05))
    assert_allclose(np.sum(load.wheel_power * load.duration), 1800.0 * G * rise, rtol=1e-12)


def test_gear_rule_picks_highest_gear_above_shift_speed():
    vehicle = car()
    trace = DutyTrace(time=np.arange(0.0, 3.0), speed=np.full(3, 15.0))
    ops = operating_points(vehicle, trace, road_load(vehicle, trace), idle_speed=800 * RPM)
    # 15 m/s on 0.30 m wheels = 50 rad/s; x4 final drive: gear 4 (1.0) gives 200 rad/s
    # = 1910 rpm >= 1200, gear 5 (0.8) gives 1528 rpm >= 1200 -> fifth gear.
    assert list(ops.gear) == [5, 5]
    assert_allclose(ops.engine_speed, 50.0 * 4.0 * 0.8, rtol=1e-12)
    assert list(ops.state) == [FIRED, FIRED]


def test_gear_rule_downshifts_when_full_load_is_short():
    vehicle = car()
    trace = DutyTrace(time=np.arange(0.0, 3.0), speed=np.full(3, 15.0),
                      grade=np.full(3, 0.12))
    load = road_load(vehicle, trace)
    ops = operating_points(vehicle, trace, load, idle_speed=800 * RPM,
                           full_load_torque=lambda n: np.full_like(n, 100.0))
    assert ops.gear[0] < 5
    assert np.all(ops.engine_torque <= 100.0)


def test_stops_idle_or_engine_off_and_overrun():
    vehicle = car()
    trace = DutyTrace(time=np.arange(0.0, 5.0), speed=[0.0, 0.0, 20.0, 10.0, 10.0])
    load = road_load(vehicle, trace)
    on = operating_points(vehicle, trace, load, idle_speed=800 * RPM,
                          settings=DutySettings(accessory_power=1000.0))
    assert list(on.state) == [IDLE, FIRED, OVERRUN, FIRED]
    assert_allclose(on.engine_torque[0], 1000.0 / (800 * RPM), rtol=1e-12)
    off = operating_points(vehicle, trace, load, idle_speed=800 * RPM,
                           settings=DutySettings(engine_off_at_stops=True))
    assert off.state[0] == ENGINE_OFF and off.engine_speed[0] == 0.0


def test_gear_set_that_cannot_reach_a_speed():
    vehicle = car(max_engine_speed=2500 * RPM)
    trace = DutyTrace(time=np.arange(0.0, 4.0), speed=[20.0, 20.0, 45.0, 45.0], name="fast.csv",
                      rows=np.array([5, 6, 7, 8]))
    with pytest.raises(InputError, match=r"fast.csv row 7: the gear set cannot reach"):
        operating_points(vehicle, trace, road_load(vehicle, trace), idle_speed=800 * RPM)
