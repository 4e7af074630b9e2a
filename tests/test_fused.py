"""Tests of workbench.models.fused: the compiled loop equals the numpy reference path.

The reference is the models' own numpy functions (road_load, operating_points,
EngineMap.fuel_power, numpy.histogram2d), each checked against closed forms and handbook values
in test_vehicle.py and test_engine.py. Tolerance 1e-9 relative: the two paths add the same
terms in a different order, so they agree to rounding (~1e-14), far inside it.
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.io import demo_profiles
from workbench.io.maps import read_map
from workbench.io.profiles import read_trace
from workbench.io.vehicles import read_vehicle
from workbench.models import fused
from workbench.models.duty import DutySettings, DutyTrace
from workbench.models.engine import duty_energy

DATA = demo_profiles.DATA
CASES = [("taxi-shift", "taxi", "taxi-si-1.8l"), ("van-day", "van", "van-ci-2.3l"),
         ("shuttle-route", "shuttle-bus", "bus-ci-4.5l")]
SETTINGS = [DutySettings(),
            DutySettings(accessory_power=1500.0, engine_off_at_stops=True)]


def load(profile, vehicle, engine_map):
    return (read_trace(DATA / "profiles" / f"{profile}.csv"),
            read_vehicle(DATA / "vehicles" / f"{vehicle}.toml"),
            read_map(DATA / "maps" / f"{engine_map}.csv"))


pytestmark = pytest.mark.skipif(fused.numba is None, reason="numba not installed")


@pytest.mark.parametrize(("profile", "vehicle", "engine_map"), CASES)
@pytest.mark.parametrize("settings", SETTINGS, ids=["plain", "accessories-engine-off"])
@pytest.mark.parametrize("derate", [0.0, 0.3])
def test_compiled_equals_reference(profile, vehicle, engine_map, settings, derate):
    trace, veh, emap = load(profile, vehicle, engine_map)
    emap = emap.adjusted(derate=derate, efficiency_offset=-0.02 if derate else 0.0)
    fast = fused.trace_sums(trace.chunks(977), veh, emap, settings=settings)
    ref = fused.trace_sums(trace.chunks(977), veh, emap, settings=settings, compiled=False)
    for key in fused.SUMS:
        assert_allclose(fast.sums[key], ref.sums[key], rtol=1e-9, atol=1e-9, err_msg=key)
    assert_allclose(fast.seconds, ref.seconds, rtol=1e-9, atol=1e-9)
    assert_allclose(fast.fuel, ref.fuel, rtol=1e-9, atol=1e-3)
    assert fast.sums["fuel_energy"] > 0
    # the histograms hold all the fuel unless demands beyond full load fall off the top edge
    if fast.sums["time_at_full_load"] == 0.0:
        assert_allclose(fast.fuel.sum(), fast.sums["fuel_energy"], rtol=1e-9)
    assert fast.fuel.sum() <= fast.sums["fuel_energy"] * (1 + 1e-12)


def test_trace_without_payload_or_grade():
    trace, veh, emap = load(*CASES[0])
    bare = DutyTrace(time=trace.time, speed=trace.speed)
    fast = fused.trace_sums([bare], veh, emap)
    ref = fused.trace_sums([bare], veh, emap, compiled=False)
    assert_allclose(fast.sums["fuel_energy"], ref.sums["fuel_energy"], rtol=1e-9)


def test_duty_energy_runs_the_kernel_in_chunks_alike():
    trace, veh, emap = load(*CASES[1])
    whole = duty_energy(trace, veh, emap, chunk_size=10**7)
    pieces = duty_energy(trace, veh, emap, chunk_size=101)
    assert_allclose(pieces.fuel_energy, whole.fuel_energy, rtol=1e-12)
    assert_allclose(pieces.distance, whole.distance, rtol=1e-12)


def test_unreachable_speed_worded_as_the_reference():
    _, veh, emap = load(*CASES[0])
    fast_car = DutyTrace(time=[0.0, 1.0, 2.0], speed=[100.0, 110.0, 110.0], name="too-fast")
    with pytest.raises(InputError, match="too-fast sample 1: the gear set cannot reach"):
        fused.trace_sums([fast_car], veh, emap)


def test_histogram_edges_follow_numpy():
    edges = np.array([0.0, 1.0, 2.0])
    w = fused._inv_width(edges)
    assert fused._bin(edges, w, 2.0) == 1  # last edge closed, as numpy.histogram
    assert fused._bin(edges, w, 1.0) == 1
    assert fused._bin(edges, w, 2.5) == -1
    assert fused._bin(edges, w, float("nan")) == -1


def test_cell_search_on_an_uneven_grid_follows_searchsorted():
    # the first guess takes the grid as even; on an uneven one the correction must still
    # land where numpy.searchsorted does (reference: numpy), edges and grid points included
    grid = np.array([0.0, 0.1, 0.15, 2.0, 7.0, 7.5, 10.0])
    w = fused._inv_width(grid)
    inv = 1.0 / np.diff(grid)
    xs = np.concatenate([grid, np.linspace(-1.0, 11.0, 241)])
    for x in xs:
        right = min(max(int(np.searchsorted(grid, x, "right")) - 1, 0), grid.size - 2)
        assert fused._below(grid, w, x) == right, x
        clipped = min(max(x, grid[0]), grid[-1])
        cell, at = fused._locate(grid, w, inv, x)
        assert cell == min(max(int(np.searchsorted(grid, clipped, "right")) - 1, 0),
                           grid.size - 2), x
        hist = np.histogram([x], bins=grid)[0]
        assert fused._bin(grid, w, x) == (int(np.argmax(hist)) if hist.any() else -1), x
        f = grid ** 2
        assert f[cell] + at * (f[cell + 1] - f[cell]) == pytest.approx(
            np.interp(x, grid, f), rel=1e-12, abs=1e-12), x
        # the cell or bin tried first (the last interval's) changes nothing
        for hint in range(grid.size - 1):
            assert fused._locate(grid, w, inv, x, hint) == (cell, at), (x, hint)
            assert fused._bin(grid, w, x, hint) == fused._bin(grid, w, x), (x, hint)
