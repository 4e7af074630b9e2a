"""One pass per interval: road load → gear choice → operating point → map lookup → sums.

:func:`trace_sums` runs a trace (in pieces) through a vehicle and an engine map and returns the
energy sums of :class:`~workbench.models.engine.DutyEnergy` and the operating-point histograms
(time and fuel energy per engine-speed × torque bin), built inside the loop: no gears × samples
matrices, no interpolator objects, no second pass. With numba it is one compiled loop over
blocks of intervals: the road load and the gears each speed allows are vectorised passes over
the block, then gear choice, map lookup and histogram go interval by interval (each axis cell
from a first guess on an even grid, corrected by comparisons). Without numba it falls back on
the numpy reference path (:func:`~workbench.models.vehicle.road_load`,
:func:`~workbench.models.vehicle.operating_points`, :meth:`EngineMap.fuel_power` and
``numpy.histogram2d``), which defines the rules. Both give the same numbers (to ~1e-15 on the
demo profiles; the tests hold them to 1e-9).

Histogram bins follow ``numpy.histogram2d``: engine speed in rev/min, torque clipped at 0, bins
closed on the left, the last bin closed on both sides, values outside the edges left out.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from workbench.core.constants import STANDARD_GRAVITY, to_rpm
from workbench.models.duty import STOP_SPEED, DutySettings, DutyTrace
from workbench.models.vehicle import FIRED, IDLE, OVERRUN, Vehicle, operating_points, road_load

if TYPE_CHECKING:
    from workbench.models.engine import EngineMap

try:
    import numba
except ImportError:  # pragma: no cover - numba is a dependency; the fallback is for odd installs
    numba = None

#: Names of the sums, in the order of the kernel's output vector.
SUMS = ("distance", "duration", "wheel_energy", "braking_energy", "engine_energy",
        "fuel_energy", "time_idle", "time_out_of_map", "time_at_full_load")



@dataclass(frozen=True, eq=False)
class TraceSums:
    """Energy sums and operating-point histograms of a trace.

    Attributes
    ----------
    sums : dict of str to float
        :data:`SUMS`, in the units of :class:`~workbench.models.engine.DutyEnergy` (before
        extra idling).
    seconds : numpy.ndarray
        Time with the engine burning fuel per (speed, torque) bin [s].
    fuel : numpy.ndarray
        Fuel energy per bin, LHV basis [J].
    speed_edges : numpy.ndarray
        Engine-speed bin edges [rev/min].
    torque_edges : numpy.ndarray
        Torque bin edges [N m].
    """

    sums: dict[str, float]
    seconds: np.ndarray
    fuel: np.ndarray
    speed_edges: np.ndarray
    torque_edges: np.ndarray


def histogram_edges(engine_map: EngineMap) -> tuple[np.ndarray, np.ndarray]:
    """Default bins: 12 speed bins over the map's speed axis, 10 torque bins up to full load.

    Returns
    -------
    tuple of numpy.ndarray
        Speed edges [rev/min], torque edges [N m].
    """
    speed = to_rpm(np.linspace(engine_map.speed.min(), engine_map.speed.max(), 13))
    return speed, np.linspace(0.0, float(engine_map.full_load_torque.max()), 11)


def _guess(grid: np.ndarray, inv_width: float, x: float) -> int:
    """Cell of ``x`` on ``grid`` if the grid were uniform (``inv_width``: cells per unit),
    clamped to the cells; the callers correct it by comparisons against the grid itself."""
    last = grid.size - 2
    g = (x - grid[0]) * inv_width
    if not g > 0.0:  # also NaN
        return 0
    return int(g) if g < last else last


def _below(grid: np.ndarray, inv_width: float, x: float) -> int:
    """The last ``i`` with ``grid[i] <= x``, clamped to the cells ``0 .. size - 2``
    (numpy.searchsorted(grid, x, "right") - 1)."""
    i = _guess(grid, inv_width, x)
    while i > 0 and x < grid[i]:
        i -= 1
    while i < grid.size - 2 and x >= grid[i + 1]:
        i += 1
    return i


def _bin(edges: np.ndarray, inv_width: float, x: float, hint: int = 0) -> int:
    """numpy.histogram's bin of ``x`` (-1 outside, the last bin closed on both sides); bin
    ``hint`` is tried first (consecutive intervals mostly fall in one bin)."""
    if edges[hint] <= x < edges[hint + 1]:
        return hint
    if not (edges[0] <= x <= edges[edges.size - 1]):
        return -1
    return _below(edges, inv_width, x)


def _locate(grid: np.ndarray, inv_width: float, inv_step: np.ndarray, x: float,
            hint: int = 0) -> tuple[int, float]:
    """Cell and position in it of ``x`` held at the ends of the axis: linear interpolation
    of values ``f`` on ``grid`` is ``f[i] + w (f[i + 1] - f[i])`` (numpy.interp, and scipy's
    linear interpolator on a clipped point); ``inv_step``: one over each cell's width. Cell
    ``hint`` is tried first (consecutive intervals mostly stay in one cell)."""
    xc = min(max(x, grid[0]), grid[grid.size - 1])
    i = hint if grid[hint] <= xc < grid[hint + 1] else _below(grid, inv_width, xc)
    return i, (xc - grid[i]) * inv_step[i]


def _inv_width(grid: np.ndarray) -> float:
    """Cells per unit of a grid taken as uniform (the first guess of :func:`_below`)."""
    return (grid.size - 1) / (grid[grid.size - 1] - grid[0])


#: Intervals per block: the road load and gear counts of a block are vectorised passes, then
#: the gear choice, map and histograms go interval by interval (blocks stay in cache).
BLOCK = 1024


def _road(t, v, grade, payload, i0, m, mass0, crr, f_rot, aero_k, dt_b, vm_b,
          force_b):  # pragma: no cover - compiled by numba
    """Duration, mean speed and tractive force of intervals ``i0 .. i0 + m`` into the block
    arrays (road_load's formula; one loop without branches, which the compiler vectorises)."""
    for q in range(m):
        i = i0 + q
        dt = t[i + 1] - t[i]
        vm = 0.5 * (v[i + 1] + v[i])
        accel = (v[i + 1] - v[i]) / dt
        mass = mass0 + (payload[i] if payload.size > 0 else 0.0)
        if grade.size > 0:
            g = grade[i]
            slope = STANDARD_GRAVITY * (1.0 / math.sqrt(1.0 + g * g)) * (crr + g)
        else:
            slope = crr * STANDARD_GRAVITY
        dt_b[q] = dt
        vm_b[q] = vm
        force_b[q] = mass * (f_rot * accel + slope) + aero_k * (vm * vm)


def _gear_counts(vm_b, m, n_per_v, n_max, shift, over_b,
                 band_b):  # pragma: no cover - compiled by numba
    """Per interval, how many gears put the engine above ``n_max`` and how many at or above
    ``shift``: gear speeds fall with the gear number, so these are runs from first gear and
    the counts are the lowest gear under ``n_max`` and one past the highest at or above
    ``shift`` (vectorised: no search, no branch)."""
    for q in range(m):
        over_b[q] = 0
        band_b[q] = 0
    for j in range(n_per_v.size):
        c = n_per_v[j]
        for q in range(m):
            n_j = vm_b[q] * c
            over_b[q] += n_j > n_max
            band_b[q] += n_j >= shift


def _kernel(t, v, grade, payload, par, ratios, m_speed, m_torque, m_eff, m_full, s_edges,
            t_edges, sums, seconds, fuel):  # pragma: no cover - compiled by numba
    """The loop; returns the first interval the gear set cannot reach, or -1."""
    mass0, crr, f_rot, aero_k, r, eta, shift, n_max, idle, p_acc, off, p_idle = (
        par[0], par[1], par[2], par[3], par[4], par[5], par[6], par[7], par[8], par[9],
        par[10] > 0.5, par[11])
    k = ratios.size
    n_per_v = ratios / r  # engine speed per vehicle speed in each gear [rad/m]
    per_ratio = 1.0 / ratios  # multiplications in the loop instead of divisions
    inv_eta = 1.0 / eta
    inv_speed = 1.0 / np.diff(m_speed)
    inv_torque = 1.0 / np.diff(m_torque)
    d_full = np.diff(m_full)
    w_speed = _inv_width(m_speed)
    w_torque = _inv_width(m_torque)
    w_s_edges = _inv_width(s_edges)
    w_t_edges = _inv_width(t_edges)
    t_min = m_torque[0]
    t_top = m_torque[m_torque.size - 1]
    s_lo = m_speed[0]
    s_hi = m_speed[m_speed.size - 1]
    idle_torque = p_acc / idle
    n_t = t_edges.size - 1
    # histograms as one flat array of (seconds, fuel) pairs, a last slot for points outside
    hist = np.zeros((seconds.size + 1, 2))
    outside = seconds.size
    dt_b = np.empty(BLOCK)
    vm_b = np.empty(BLOCK)
    force_b = np.empty(BLOCK)
    over_b = np.empty(BLOCK, dtype=np.int64)
    band_b = np.empty(BLOCK, dtype=np.int64)
    # sums in locals (registers), written back once
    s_dist = s_dur = s_wheel = s_brake = s_engine = s_fuel = s_idle = s_oom = s_full = 0.0
    bad = -1
    idle_known = False
    idle_point = (0.0, False, False, 0)
    a = b = hint_s = hint_t = 0  # the last cells and bins, tried first
    n_iv = t.size - 1
    for i0 in range(0, n_iv, BLOCK):
        m = min(BLOCK, n_iv - i0)
        _road(t, v, grade, payload, i0, m, mass0, crr, f_rot, aero_k, dt_b, vm_b, force_b)
        _gear_counts(vm_b, m, n_per_v, n_max, shift, over_b, band_b)
        for q in range(m):
            dt = dt_b[q]
            vm = vm_b[q]
            force = force_b[q]
            work = force * vm * dt
            s_dist += vm * dt
            s_dur += dt
            s_wheel += max(work, 0.0)
            s_brake -= min(work, 0.0)
            wheel_torque = force * r
            engine_side = wheel_torque * (inv_eta if wheel_torque >= 0.0 else eta)
            # at a stop the engine idles (or is off) in any gear: no gear search
            moving = vm >= STOP_SPEED
            idling = not moving
            overrun = False
            located = False
            if moving:
                under_lo = over_b[q]  # the lowest gear under max_engine_speed
                if under_lo == k:
                    bad = i0 + q
                    break
                band_hi = band_b[q] - 1  # the highest gear at or above shift_speed
                gear = under_lo
                if band_hi >= under_lo:
                    for j in range(band_hi, under_lo - 1, -1):  # highest covering gear first
                        n_j = vm * n_per_v[j]
                        t_j = engine_side * per_ratio[j] + p_acc / max(n_j, idle)
                        b, wb = _locate(m_speed, w_speed, inv_speed, n_j, b)
                        full = m_full[b] + wb * d_full[b]
                        if t_j <= full:
                            gear = j
                            located = True
                            break
                if located:
                    geared = n_j
                    torque = t_j
                else:
                    geared = vm * n_per_v[gear]
                    torque = engine_side * per_ratio[gear] + p_acc / max(geared, idle)
                overrun = torque <= 0.0 and geared >= shift
                idling = torque <= 0.0 and not overrun
            if idling:
                if off and not moving:
                    continue  # engine off: no fuel, no time idling
                speed = idle
                torque = idle_torque
                s_idle += dt
            elif overrun:
                continue
            else:
                speed = max(geared, idle)
            s_engine += speed * torque * dt
            if idling and idle_known:  # the idle point is the same at every idling interval
                p, oom, at_full, slot = idle_point
            else:
                # map lookup (EngineMap.fuel_power); the gear search located the gear's speed
                if not (located and speed == geared):
                    b, wb = _locate(m_speed, w_speed, inv_speed, speed, b)
                    full = m_full[b] + wb * d_full[b]
                cap = min(full, t_top)
                tq = min(torque, cap)
                t_grid = max(tq, t_min)
                a, wa = _locate(m_torque, w_torque, inv_torque, t_grid, a)
                e0 = m_eff[a, b] + wb * (m_eff[a, b + 1] - m_eff[a, b])
                e1 = m_eff[a + 1, b] + wb * (m_eff[a + 1, b + 1] - m_eff[a + 1, b])
                eff = e0 + wa * (e1 - e0)
                p = speed * t_grid / eff
                if t_min > 0.0 and tq < t_min:
                    p_zero = p_idle * speed / idle
                    p = p_zero + (p - p_zero) * (tq / t_min)
                oom = speed < s_lo or speed > s_hi or torque > cap
                at_full = torque >= full
                bs = _bin(s_edges, w_s_edges, _rpm(speed), hint_s)
                bt = _bin(t_edges, w_t_edges, max(torque, 0.0), hint_t)
                slot = bs * n_t + bt if bs >= 0 and bt >= 0 else outside
                hint_s = max(bs, 0)
                hint_t = max(bt, 0)
                if idling:
                    idle_point = (p, oom, at_full, slot)
                    idle_known = True
            e = p * dt
            s_fuel += e
            s_oom += dt if oom else 0.0
            s_full += dt if at_full else 0.0
            hist[slot, 0] += dt
            hist[slot, 1] += e
        if bad >= 0:
            break
    flat_s = seconds.reshape(-1)
    flat_f = fuel.reshape(-1)
    for j in range(outside):
        flat_s[j] += hist[j, 0]
        flat_f[j] += hist[j, 1]
    for j, x in enumerate((s_dist, s_dur, s_wheel, s_brake, s_engine, s_fuel, s_idle, s_oom,
                           s_full)):
        sums[j] += x
    return bad


_rpm = to_rpm

if numba is not None:
    # error_model="numpy": a division by zero gives inf/nan as on the reference path instead
    # of a check (and a Python exception) in front of every division of the loop. No
    # fastmath: fused multiply-adds would round differently in each compiled variant (array
    # layouts), so the same trace could give numbers differing in the last bit.
    _jit = numba.njit(cache=True, error_model="numpy")
    _rpm = _jit(to_rpm)
    _guess = _jit(_guess)
    _below = _jit(_below)
    _bin = _jit(_bin)
    _locate = _jit(_locate)
    _inv_width = _jit(_inv_width)
    _road = _jit(_road)
    _gear_counts = _jit(_gear_counts)
    _kernel = _jit(_kernel)


def _parameters(vehicle: Vehicle, engine_map: EngineMap, settings: DutySettings) -> np.ndarray:
    return np.array([
        vehicle.mass, vehicle.rolling_resistance, vehicle.rotating_mass_factor,
        0.5 * vehicle.air_density * vehicle.drag_coefficient * vehicle.frontal_area,
        vehicle.wheel_radius, vehicle.driveline_efficiency, vehicle.shift_speed,
        vehicle.max_engine_speed, engine_map.idle_speed, settings.accessory_power,
        float(settings.engine_off_at_stops), engine_map.idle_fuel_power])


def _reference(piece: DutyTrace, vehicle: Vehicle, engine_map: EngineMap,
               settings: DutySettings, out: TraceSums) -> None:
    """The numpy path: the models' own functions, one piece at a time."""
    load = road_load(vehicle, piece)
    ops = operating_points(vehicle, piece, load, idle_speed=engine_map.idle_speed,
                           settings=settings, full_load_torque=engine_map.max_torque)
    dt = load.duration
    work = load.wheel_power * dt
    burning = (ops.state == FIRED) | (ops.state == IDLE)
    dt_b = dt[burning]
    speed, torque = ops.engine_speed[burning], ops.engine_torque[burning]
    look = engine_map.fuel_power(speed, torque)
    energy = look.fuel_power * dt_b
    s = out.sums
    s["distance"] += float(load.distance.sum())
    s["duration"] += float(dt.sum())
    s["wheel_energy"] += float(work[work > 0.0].sum())
    s["braking_energy"] -= float(work[work < 0.0].sum())
    s["engine_energy"] += float(np.dot(speed * torque, dt_b))
    s["fuel_energy"] += float(energy.sum())
    s["time_idle"] += float(dt[ops.state == IDLE].sum())
    s["time_out_of_map"] += float(dt_b[look.out_of_map].sum())
    s["time_at_full_load"] += float(dt_b[look.at_full_load].sum())
    bins = [out.speed_edges, out.torque_edges]
    rpm, clipped = to_rpm(speed), np.clip(torque, 0, None)
    out.seconds[...] += np.histogram2d(rpm, clipped, bins, weights=dt_b)[0]
    out.fuel[...] += np.histogram2d(rpm, clipped, bins, weights=energy)[0]


def trace_sums(
    pieces: Iterable[DutyTrace],
    vehicle: Vehicle,
    engine_map: EngineMap,
    *,
    settings: DutySettings | None = None,
    edges: tuple[np.ndarray, np.ndarray] | None = None,
    compiled: bool = True,
) -> TraceSums:
    """Energy sums and operating-point histograms of a trace given in pieces.

    Parameters
    ----------
    pieces : iterable of DutyTrace
        Consecutive pieces of one trace, or separate trips; each piece's intervals count once.
    vehicle : Vehicle
        Road load and driveline.
    engine_map : EngineMap
        Engine efficiency map (already adjusted for the fuel).
    settings : DutySettings, optional
        Accessory power and engine-off at stops (extra idling is added by the caller).
    edges : tuple of numpy.ndarray, optional
        Speed [rev/min] and torque [N m] bin edges; :func:`histogram_edges` when omitted.
    compiled : bool
        Use the compiled loop when numba is installed; False runs the numpy reference path.

    Returns
    -------
    TraceSums

    Raises
    ------
    InputError
        The gear set cannot reach a speed of the trace (from the reference path's message).
    """
    settings = settings or DutySettings()
    s_edges, t_edges = edges if edges is not None else histogram_edges(engine_map)
    s_edges = np.ascontiguousarray(s_edges, dtype=float)
    t_edges = np.ascontiguousarray(t_edges, dtype=float)
    shape = (s_edges.size - 1, t_edges.size - 1)
    out = TraceSums(dict.fromkeys(SUMS, 0.0), np.zeros(shape), np.zeros(shape), s_edges,
                    t_edges)
    if numba is None or not compiled:
        for piece in pieces:
            _reference(piece, vehicle, engine_map, settings, out)
        return out
    par = _parameters(vehicle, engine_map, settings)
    ratios = np.ascontiguousarray(vehicle.total_ratios, dtype=float)
    m = (np.ascontiguousarray(engine_map.speed), np.ascontiguousarray(engine_map.torque),
         np.ascontiguousarray(engine_map.efficiency),
         np.ascontiguousarray(engine_map.full_load_torque))
    acc = np.zeros(len(SUMS))
    empty = np.empty(0)
    for piece in pieces:
        if piece.payload is None:
            par[0] = vehicle.mass + vehicle.payload
            payload = empty
        else:
            par[0] = vehicle.mass
            payload = piece.payload
        bad = _kernel(piece.time, piece.speed, empty if piece.grade is None else piece.grade,
                      payload, par, ratios, *m, s_edges, t_edges, acc, out.seconds, out.fuel)
        if bad >= 0:  # let the reference path word the error
            operating_points(vehicle, piece, road_load(vehicle, piece),
                             idle_speed=engine_map.idle_speed, settings=settings,
                             full_load_torque=engine_map.max_torque)
    out.sums.update(zip(SUMS, acc.tolist(), strict=True))
    return out


__all__ = ["OVERRUN", "SUMS", "TraceSums", "histogram_edges", "trace_sums"]
