"""Tests of workbench.models.duty: traces and mode tables made from arrays, statistics."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.io import demo_profiles
from workbench.models.duty import DutySettings, DutyTrace, duty_stats

PROFILES = demo_profiles.DATA / "profiles"


def write(tmp_path: Path, text: str, name: str = "p.csv") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_stats_hand_computed():
    # Six samples at 1 s; interval mean speeds 1, 3, 4, 2, 0 m/s -> 10 m in 5 s. Hand-computed.
    trace = DutyTrace(time=np.arange(6.0), speed=[0, 2, 4, 4, 0, 0])
    s = duty_stats(trace)
    assert_allclose(s.distance, 10.0, rtol=1e-15)
    assert_allclose(s.duration, 5.0, rtol=1e-15)
    assert_allclose(s.mean_speed, 2.0, rtol=1e-15)
    assert s.max_speed == 4.0
    assert_allclose(s.idle_share, 0.2, rtol=1e-15)  # last interval stands still
    assert_allclose(s.stops_per_m, 0.1, rtol=1e-12)  # one stop in 10 m (SI: per metre)
    # v^2 = 0, 4, 16, 16, 0, 0: positive steps 4 + 12 over 10 m
    assert_allclose(s.positive_kinetic_energy, 1.6, rtol=1e-15)


def test_chunks_cover_the_intervals_once():
    trace = DutyTrace(time=np.arange(11.0), speed=np.linspace(0, 10, 11), name="t")
    pieces = list(trace.chunks(3))
    assert [p.time.size for p in pieces] == [4, 4, 4, 2]
    assert sum(p.time.size - 1 for p in pieces) == 10
    assert pieces[2].offset == 6
    assert pieces[1].time[0] == pieces[0].time[-1]


def test_generated_trace_errors_name_the_sample():
    with pytest.raises(InputError, match=r"gen sample 7: speed is negative"):
        DutyTrace(time=np.arange(4.0), speed=[0, 1, -1, 0], name="gen", offset=5)


@pytest.mark.parametrize("kwargs", [{"accessory_power": -1.0}, {"extra_idle_share": 0.95},
                                    {"accessory_power": float("nan")}])
def test_bad_settings(kwargs):
    with pytest.raises(InputError):
        DutySettings(**kwargs)
