"""Tests of workbench.io.profiles: trace and time-at-mode CSV files, the shipped demo profiles."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.io import demo_profiles
from workbench.io.profiles import read_mode_table, read_profile, read_trace
from workbench.models.duty import ModeTable, duty_stats

PROFILES = demo_profiles.DATA / "profiles"


def write(tmp_path: Path, text: str, name: str = "p.csv") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_header_units_convert_to_si(tmp_path):
    kmh = write(tmp_path, "time_s,speed_km_per_h,grade_percent,payload_t\n0,36,2,0.5\n1,72,2,0.5\n",
                "a.csv")
    mph = write(tmp_path, "time_min,speed_mph,grade_fraction\n0,10,0.02\n1,20,0.02\n", "b.csv")
    a, b = read_trace(kmh), read_trace(mph)
    assert_allclose(a.speed, [10.0, 20.0], rtol=1e-15)
    assert_allclose(a.grade, [0.02, 0.02], rtol=1e-15)
    assert_allclose(a.payload, [500.0, 500.0], rtol=1e-15)
    # 1 mile = 1609.344 m exactly (international mile, 1959): 10 mph = 4.4704 m/s
    assert_allclose(b.speed, [4.4704, 8.9408], rtol=1e-15)
    assert_allclose(b.time, [0.0, 60.0], rtol=1e-15)
    assert list(a.rows) == [2, 3]


def test_side_file_units(tmp_path):
    path = write(tmp_path, "time,speed\n0,0\n1,18\n", "route.csv")
    with pytest.raises(InputError, match=r"route.csv column time: no unit"):
        read_trace(path)
    write(tmp_path, '[units]\ntime = "s"\nspeed = "km_per_h"\n', "route.units.toml")
    assert_allclose(read_trace(path).speed, [0.0, 5.0], rtol=1e-15)


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("time_s,speed_km_per_h\n0,10\n2,10\n1,10\n", r"p.csv row 4: time is not increasing"),
        ("time_s,speed_km_per_h\n0,10\n1,-3\n", r"p.csv row 3: speed is negative"),
        ("time_s,speed_km_per_h\n0,10\n1,\n", r"p.csv row 3: speed is missing"),
        ("time_s,speed_km_per_h\n0,10\n1,fast\n",
         r"p.csv row 3 column 2: speed_km_per_h 'fast' is not a number"),
        ("time_s,grade_percent\n0,1\n1,1\n", r"p.csv: missing column speed"),
        ("time_s,speed_kmh\n0,1\n1,1\n", r"p.csv column speed_kmh: unknown unit 'kmh'"),
        ("time_s,speed_km_per_h\n0,1\n1,1,3\n", r"p.csv row 3: has 3 fields"),
        ("time_s,speed_km_per_h,grade_percent\n0,1,45\n1,1,0\n", r"p.csv row 2: grade is steeper"),
        ("# only a comment\n", r"p.csv: no header and data rows"),
    ],
)
def test_bad_trace_raises_one_line(tmp_path, text, match):
    with pytest.raises(InputError, match=match) as info:
        read_trace(write(tmp_path, text))
    assert "\n" not in str(info.value)


def test_missing_file():
    with pytest.raises(InputError, match="file not found"):
        read_trace("no/such/profile.csv")


def test_mode_table(tmp_path):
    path = write(tmp_path, "# distance_km: 12.5\nengine_speed_rpm,torque_n_m,time_h\n"
                           "800,0,0.5\n1500,100,1.5\n")
    table = read_profile(path)
    assert isinstance(table, ModeTable)
    assert_allclose(table.engine_speed, [800 * np.pi / 30, 1500 * np.pi / 30], rtol=1e-15)
    assert_allclose(table.duration, [1800.0, 5400.0], rtol=1e-15)
    assert table.distance == 12500.0
    bad = write(tmp_path, "engine_speed_rpm,torque_n_m,time_h\n800,,0.5\n", "bad.csv")
    with pytest.raises(InputError, match=r"bad.csv row 2: torque is missing"):
        read_mode_table(bad)


def test_demo_profiles_are_small_labelled_and_reproducible(tmp_path):
    demo_profiles.write_demo_data(tmp_path)
    for name in ("taxi-shift", "shuttle-route", "van-day"):
        shipped = PROFILES / f"{name}.csv"
        text = shipped.read_text(encoding="utf-8")
        assert shipped.stat().st_size < 1_000_000
        assert "INVENTED" in text.splitlines()[1]
        # the shipped files are exactly what the seeded generator makes
        assert (tmp_path / "profiles" / f"{name}.csv").read_text(encoding="utf-8") == text
        trace = read_trace(shipped)
        assert trace.grade is not None and trace.payload is not None


def test_demo_profiles_look_urban():
    # Urban duties: mean speed incl. stops 15-35 km/h, max <= 90 km/h, idle 20-50 % of time
    # (common practice, no source: typical of urban taxi, bus and delivery logging).
    for name in ("taxi-shift", "shuttle-route", "van-day"):
        s = duty_stats(read_trace(PROFILES / f"{name}.csv"))
        assert 15.0 < s.mean_speed * 3.6 < 35.0, name
        assert s.max_speed * 3.6 <= 90.0, name
        assert 0.2 < s.idle_share < 0.5, name
        # PKE of urban cycles is a few tenths of m/s2 (common practice, no source)
        assert 0.15 < s.positive_kinetic_energy < 0.6, name
