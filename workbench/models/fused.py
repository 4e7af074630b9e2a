"""One pass per interval: road load → gear choice → operating point → map lookup → sums.

:func:`trace_sums` runs a trace (in pieces) through a vehicle and an engine map and returns the
energy sums of :class:`~workbench.models.engine.DutyEnergy` and the operating-point histograms
(time and fuel energy per engine-speed × torque bin), built inside the loop: no gears × samples
matrices, no interpolator objects, no second pass. With numba it is one compiled loop; without
numba it falls back on the numpy reference path (:func:`~workbench.models.vehicle.road_load`,
:func:`~workbench.models.vehicle.operating_points`, :meth:`EngineMap.fuel_power` and
``numpy.histogram2d``), which defines the rules. Both give the same numbers (to ~1e-12; the
tests hold them to 1e-9 on the demo profiles).

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


def _bin(edges: np.ndarray, inv_width: float, x: float) -> int:
    """numpy.histogram's bin of ``x`` (-1 outside, the last bin closed on both sides)."""
    if not (edges[0] <= x <= edges[edges.size - 1]):
        return -1
    return _below(edges, inv_width, x)


def _interp(xp: np.ndarray, inv_width: float, fp: np.ndarray, x: float) -> float:
    """numpy.interp at one point: linear, ends held."""
    n = xp.size
    if x <= xp[0]:
        return fp[0]
    if x >= xp[n - 1]:
        return fp[n - 1]
    j = _below(xp, inv_width, x)
    return fp[j] + (x - xp[j]) * (fp[j + 1] - fp[j]) / (xp[j + 1] - xp[j])


def _cell(grid: np.ndarray, inv_width: float, inv_step: np.ndarray,
          x: float) -> tuple[int, float]:
    """Cell and position of ``x`` (already clipped to the axis) as scipy's linear interpolator:
    the last ``i`` with ``grid[i] < x``, clamped to the cells (``inv_step``: one over each
    cell's width)."""
    i = _guess(grid, inv_width, x)
    while i > 0 and x <= grid[i]:
        i -= 1
    while i < grid.size - 2 and x > grid[i + 1]:
        i += 1
    return i, (x - grid[i]) * inv_step[i]


def _inv_width(grid: np.ndarray) -> float:
    """Cells per unit of a grid taken as uniform (the first guess of :func:`_below`)."""
    return (grid.size - 1) / (grid[grid.size - 1] - grid[0])


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
    w_speed = _inv_width(m_speed)
    w_torque = _inv_width(m_torque)
    w_s_edges = _inv_width(s_edges)
    w_t_edges = _inv_width(t_edges)
    has_grade = grade.size > 0
    has_payload = payload.size > 0
    t_min = m_torque[0]
    t_top = m_torque[m_torque.size - 1]
    s_lo = m_speed[0]
    s_hi = m_speed[m_speed.size - 1]
    idle_torque = p_acc / idle
    # sums in locals (registers), written back once
    s_dist = s_dur = s_wheel = s_brake = s_engine = s_fuel = s_idle = s_oom = s_full = 0.0
    bad = -1
    idle_known = False
    idle_point = (0.0, False, False, -1, -1)
    for i in range(t.size - 1):
        dt = t[i + 1] - t[i]
        vm = 0.5 * (v[i + 1] + v[i])
        accel = (v[i + 1] - v[i]) / dt
        mass = mass0 + (payload[i] if has_payload else 0.0)
        aero = aero_k * (vm * vm)
        if has_grade:
            g = grade[i]
            cos = 1.0 / math.sqrt(1.0 + g * g)
            slope = STANDARD_GRAVITY * cos * (crr + g)
        else:
            slope = crr * STANDARD_GRAVITY
        force = mass * (f_rot * accel + slope) + aero
        work = force * vm * dt
        s_dist += vm * dt
        s_dur += dt
        if work > 0.0:
            s_wheel += work
        elif work < 0.0:
            s_brake -= work
        wheel_torque = force * r
        through = inv_eta if wheel_torque >= 0.0 else eta
        engine_side = wheel_torque * through
        # at a stop the engine idles (or is off) in any gear: no gear search
        moving = vm >= STOP_SPEED
        idling = not moving
        overrun = False
        if moving:
            # gear speeds fall with the gear number: the gears under max_engine_speed are j >=
            # under_lo, those also at or above shift_speed are under_lo <= j <= band_hi
            under_lo = k
            band_hi = -1
            for j in range(k):
                n_j = vm * n_per_v[j]
                if n_j <= n_max:
                    if under_lo == k:
                        under_lo = j
                    if n_j < shift:
                        break  # and so are all higher gears
                    band_hi = j
            band_lo = under_lo if band_hi >= under_lo else -1
            covered_hi = -1
            if band_lo >= 0:
                for j in range(band_hi, band_lo - 1, -1):  # highest covering gear first
                    n_j = vm * n_per_v[j]
                    t_j = engine_side * per_ratio[j] + p_acc / max(n_j, idle)
                    if t_j <= _interp(m_speed, w_speed, m_full, n_j):
                        covered_hi = j
                        break
            if under_lo == k:
                bad = i
                break
            gear = covered_hi if covered_hi >= 0 else (band_lo if band_lo >= 0 else under_lo)
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
            p, oom, at_full, bs, bt = idle_point
        else:
            # map lookup (EngineMap.fuel_power)
            n = min(max(speed, s_lo), s_hi)
            b, wb = _cell(m_speed, w_speed, inv_speed, n)
            full = m_full[b] + wb * (m_full[b + 1] - m_full[b])  # numpy.interp, ends held
            cap = min(full, t_top)
            tq = min(torque, cap)
            t_grid = max(tq, t_min)
            a, wa = _cell(m_torque, w_torque, inv_torque, min(max(t_grid, t_min), t_top))
            eff = (m_eff[a, b] * (1.0 - wa) * (1.0 - wb) + m_eff[a, b + 1] * (1.0 - wa) * wb
                   + m_eff[a + 1, b] * wa * (1.0 - wb) + m_eff[a + 1, b + 1] * wa * wb)
            p = speed * t_grid / eff
            if t_min > 0.0 and tq < t_min:
                p_zero = p_idle * speed / idle
                p = p_zero + (p - p_zero) * (tq / t_min)
            oom = n != speed or torque > cap
            at_full = torque >= full
            bs = _bin(s_edges, w_s_edges, _rpm(speed))
            bt = _bin(t_edges, w_t_edges, max(torque, 0.0))
            if idling:
                idle_point = (p, oom, at_full, bs, bt)
                idle_known = True
        e = p * dt
        s_fuel += e
        if oom:
            s_oom += dt
        if at_full:
            s_full += dt
        if bs >= 0 and bt >= 0:
            seconds[bs, bt] += dt
            fuel[bs, bt] += e
    for j, x in enumerate((s_dist, s_dur, s_wheel, s_brake, s_engine, s_fuel, s_idle, s_oom,
                           s_full)):
        sums[j] += x
    return bad


_rpm = to_rpm

if numba is not None:
    # error_model="numpy": a division by zero gives inf/nan as on the reference path instead
    # of a check (and a Python exception) in front of every division of the loop
    _jit = numba.njit(cache=True, error_model="numpy")
    _rpm = _jit(to_rpm)
    _guess = _jit(_guess)
    _below = _jit(_below)
    _bin = _jit(_bin)
    _interp = _jit(_interp)
    _cell = _jit(_cell)
    _inv_width = _jit(_inv_width)
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
