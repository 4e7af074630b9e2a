"""Engine efficiency maps, fuel over a duty, and fuel and energy per distance.

An :class:`EngineMap` holds brake efficiency on a grid of engine speed × torque, the full-load
torque curve, idle speed and idle fuel power. It comes from a CSV grid
(:func:`workbench.io.maps.read_map`, in brake efficiency or BSFC) or from a Willans-line model
(:func:`willans_map`); it is identified by its content (:attr:`EngineMap.digest`). Per-fuel engine
options (power derate, efficiency offset) are derived maps (:meth:`EngineMap.adjusted`).

:func:`duty_energy` runs a trace through a vehicle and a map, in chunks so that a year of 1 Hz
data stays in bounded memory, and returns fuel energy (LHV) and the shares of time out of map
and at full load; :func:`mode_energy` does the same for a time-at-mode table.
:func:`fuel_per_distance` turns the fuel energy into figures per metre (SI, like every model
quantity; per km and per 100 km only in :meth:`FuelPerDistance.trade_units`) for any fuel from
three plain numbers (LHV, stored density, CO2 per kg); :func:`fuel_per_distance_for` takes them
from a :class:`~workbench.core.fuels.Fuel` and its fuel sheet.

Fuel power at an operating point (engine speed ``n``, brake torque ``T``)
------------------------------------------------------------------------
* ``T`` at or above the map's lowest torque row ``T_min``: ``n T / eta(n, T)``, with ``eta``
  interpolated bilinearly on the grid: it passes through the grid points and is monotone
  wherever the grid is (scipy's pchip on a regular grid would be too, but costs ~0.4 ms per
  point, far too slow for a year of 1 Hz data).
* ``0 <= T < T_min``: linear in torque between the zero-load fuel power
  ``P_idle * n / n_idle`` (constant friction torque) and the fuel power at ``T_min``.
* Speeds outside the speed axis are clamped to it; torques above the full-load curve or the top
  torque row are clamped to them. Every clamped point counts as *out of map*; a demand at or
  above full load also counts as *at full load*. Nothing is extrapolated.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING, Literal

import numpy as np
import pandas as pd
from scipy.interpolate import RegularGridInterpolator

from workbench.core.cache import content_digest
from workbench.core.constants import RPM, to_rpm
from workbench.core.errors import InputError
from workbench.models.duty import DutySettings, DutyTrace, ModeTable
from workbench.models.fused import trace_sums
from workbench.models.vehicle import FIRED, IDLE, Vehicle, operating_points, road_load

if TYPE_CHECKING:
    from workbench.core.fuels import Fuel
    from workbench.models.combustion import FuelSheet

#: Gasoline (E0) energy per litre used for gasoline-litre equivalents [J/m3]:
#: LHV 43.2 MJ/kg × 745 kg/m3 (JEC Well-to-Wheels report v5, 2020, fuel properties table;
#: from memory).
GASOLINE_ENERGY_PER_VOLUME = 43.2e6 * 745.0

#: Diesel (B0) energy per litre used for diesel-litre equivalents [J/m3]:
#: LHV 43.1 MJ/kg × 832 kg/m3 (same source, from memory).
DIESEL_ENERGY_PER_VOLUME = 43.1e6 * 832.0

#: Litres per US gallon (231 cubic inches) and kilometres per mile, exact by definition
#: (NIST Handbook 44, Appendix C).
US_GALLON_L = 3.785411784
MILE_KM = 1.609344


@dataclass(frozen=True)
class MapLookup:
    """Fuel power at operating points, with the points that had to be clamped.

    Attributes
    ----------
    fuel_power : numpy.ndarray
        Fuel energy flow, LHV basis [W].
    out_of_map : numpy.ndarray
        True where speed or torque was clamped to the map.
    at_full_load : numpy.ndarray
        True where the torque demand reached the full-load curve.
    """

    fuel_power: np.ndarray
    out_of_map: np.ndarray
    at_full_load: np.ndarray


@dataclass(frozen=True, eq=False)
class EngineMap:
    """Brake efficiency over engine speed × torque, with full-load curve and idle fuel.

    Parameters
    ----------
    name : str
        Label (file path or model name).
    speed : numpy.ndarray
        Engine-speed axis, strictly increasing [rad/s].
    torque : numpy.ndarray
        Torque axis, strictly increasing, >= 0 [N m].
    efficiency : numpy.ndarray
        Brake efficiency, shape ``(len(torque), len(speed))``, each in (0, 1) [-].
    full_load_torque : numpy.ndarray
        Full-load torque at each speed of the axis [N m].
    idle_speed : float
        Idle speed [rad/s].
    idle_fuel_power : float
        Fuel power at idle with no load, LHV basis [W].

    Notes
    -----
    Equality and hashing go by :attr:`digest` (axes, grid, full-load curve, idle), not by name.
    """

    name: str
    speed: np.ndarray
    torque: np.ndarray
    efficiency: np.ndarray
    full_load_torque: np.ndarray
    idle_speed: float
    idle_fuel_power: float
    _interp: RegularGridInterpolator = field(init=False, repr=False)

    def __post_init__(self) -> None:
        for attr in ("speed", "torque", "efficiency", "full_load_torque"):
            a = np.array(getattr(self, attr), dtype=float)
            a.setflags(write=False)
            object.__setattr__(self, attr, a)
        where = f"map {self.name}"
        if self.speed.ndim != 1 or self.speed.size < 2 or np.any(np.diff(self.speed) <= 0):
            raise InputError(f"{where}: speed", "axis needs >= 2 strictly increasing values")
        if (self.torque.ndim != 1 or self.torque.size < 2 or np.any(np.diff(self.torque) <= 0)
                or self.torque[0] < 0):
            raise InputError(f"{where}: torque",
                             "axis needs >= 2 strictly increasing values >= 0")
        if self.efficiency.shape != (self.torque.size, self.speed.size):
            raise InputError(f"{where}: efficiency",
                             f"grid is {self.efficiency.shape}, axes need "
                             f"{(self.torque.size, self.speed.size)}")
        if not np.all((self.efficiency > 0.0) & (self.efficiency < 1.0)):
            raise InputError(f"{where}: efficiency", "every cell must be in (0, 1)")
        if self.full_load_torque.shape != self.speed.shape or not np.all(
                self.full_load_torque > 0.0):
            raise InputError(f"{where}: full_load", "needs one positive torque per speed")
        if not (self.speed[0] <= self.idle_speed <= self.speed[-1]):
            raise InputError(f"{where}: idle_speed", "must lie within the speed axis")
        if not (math.isfinite(self.idle_fuel_power) and self.idle_fuel_power > 0.0):
            raise InputError(f"{where}: idle_fuel_power", "must be a positive number")
        interp = RegularGridInterpolator((self.torque, self.speed), self.efficiency,
                                         method="linear")
        object.__setattr__(self, "_interp", interp)

    @cached_property
    def digest(self) -> str:
        """SHA-256 of the axes, grid, full-load curve and idle figures: the map's identity."""
        return content_digest("map", self.speed, self.torque, self.efficiency,
                              self.full_load_torque, self.idle_speed, self.idle_fuel_power)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, EngineMap) and self.digest == other.digest

    def __hash__(self) -> int:
        return hash(self.digest)

    def efficiency_at(self, speed: np.ndarray, torque: np.ndarray) -> np.ndarray:
        """Brake efficiency interpolated on the grid, speed and torque clamped to the axes.

        Parameters
        ----------
        speed : array_like
            Engine speed [rad/s].
        torque : array_like
            Brake torque [N m].

        Returns
        -------
        numpy.ndarray
            Brake efficiency [-].
        """
        n = np.clip(np.asarray(speed, dtype=float), self.speed[0], self.speed[-1])
        t = np.clip(np.asarray(torque, dtype=float), self.torque[0], self.torque[-1])
        n, t = np.broadcast_arrays(n, t)
        return self._interp(np.stack([t.ravel(), n.ravel()], axis=-1)).reshape(n.shape)

    def max_torque(self, speed: np.ndarray) -> np.ndarray:
        """Full-load torque, linear between the axis points and held beyond them [N m]."""
        return np.interp(speed, self.speed, self.full_load_torque)

    def fuel_power(self, speed: np.ndarray, torque: np.ndarray) -> MapLookup:
        """Fuel power at operating points, clamping (and flagging) points outside the map.

        Parameters
        ----------
        speed : numpy.ndarray
            Engine speed [rad/s], > 0.
        torque : numpy.ndarray
            Brake torque demanded [N m], >= 0.

        Returns
        -------
        MapLookup
            Fuel power [W] and the out-of-map and full-load flags.

        Notes
        -----
        See the module docstring for the rule below the lowest torque row.
        """
        speed = np.asarray(speed, dtype=float)
        torque = np.asarray(torque, dtype=float)
        n = np.clip(speed, self.speed[0], self.speed[-1])
        full = self.max_torque(speed)
        cap = np.minimum(full, self.torque[-1])
        t = np.minimum(torque, cap)
        t_min = self.torque[0]
        t_grid = np.maximum(t, t_min)
        p_grid = speed * t_grid / self.efficiency_at(n, t_grid)
        if t_min > 0.0:
            p_zero = self.idle_fuel_power * speed / self.idle_speed
            p_grid = np.where(t < t_min, p_zero + (p_grid - p_zero) * (t / t_min), p_grid)
        return MapLookup(fuel_power=p_grid, out_of_map=(n != speed) | (torque > cap),
                         at_full_load=torque >= full)

    def adjusted(self, *, derate: float = 0.0, efficiency_offset: float = 0.0,
                 name: str | None = None) -> EngineMap:
        """This engine run on another fuel: less full-load torque, shifted efficiency.

        Parameters
        ----------
        derate : float
            Share of full-load torque (and so power) lost, in [0, 0.9) [-].
        efficiency_offset : float
            Added to every brake-efficiency cell, e.g. -0.01 for one point less [-].
            Idle fuel power is kept.
        name : str, optional
            Label of the new map.

        Returns
        -------
        EngineMap
        """
        if not (math.isfinite(derate) and 0.0 <= derate < 0.9):
            raise InputError("derate", "must be a share in [0, 0.9), e.g. 0.1 for 10 % less power")
        eff = self.efficiency + efficiency_offset
        if not (math.isfinite(efficiency_offset) and np.all((eff > 0.0) & (eff < 1.0))):
            raise InputError("efficiency_offset",
                             "pushes map efficiency out of (0, 1); use a few points, e.g. -0.01")
        return EngineMap(name=name or self.name, speed=self.speed, torque=self.torque,
                         efficiency=eff, full_load_torque=self.full_load_torque * (1.0 - derate),
                         idle_speed=self.idle_speed, idle_fuel_power=self.idle_fuel_power)


# ----------------------------------------------------------------------------- Willans line


@dataclass(frozen=True)
class WillansParameters:
    """A Willans-line engine: brake mean effective pressure linear in fuel mean effective pressure.

    Parameters
    ----------
    displacement : float
        Swept volume [m3].
    stroke : float
        Piston stroke [m].
    e_max : float
        Peak slope of the Willans line (marginal efficiency) [-].
    e_curvature : float
        Fall of that slope with mean piston speed away from ``piston_speed_opt`` [s2/m2].
    piston_speed_opt : float
        Mean piston speed of the highest slope [m/s].
    pme_loss_0 : float
        Friction and pumping mean effective pressure at zero piston speed [Pa].
    pme_loss_2 : float
        Its growth with piston speed squared [Pa s2/m2].
    bmep_max : float
        Peak full-load brake mean effective pressure [Pa].
    full_load_shape : tuple of (float, float)
        Full-load curve as (speed / rated speed, bmep / bmep_max) points [-].
    idle_speed : float
        [rad/s].
    rated_speed : float
        Highest speed of the map [rad/s].
    """

    displacement: float
    stroke: float
    e_max: float
    e_curvature: float
    piston_speed_opt: float
    pme_loss_0: float
    pme_loss_2: float
    bmep_max: float
    full_load_shape: tuple[tuple[float, float], ...]
    idle_speed: float
    rated_speed: float


#: Typical shape parameters per ignition type ("typical value, example"; chosen so that peak
#: brake efficiency is ~0.35 for a naturally aspirated spark-ignition engine on gasoline, LPG or
#: CNG and ~0.40 for a turbocharged direct-injection diesel, common practice, no source).
WILLANS_SHAPES: dict[str, dict[str, object]] = {
    "spark-ignition": {
        "e_max": 0.39, "e_curvature": 8.0e-4, "piston_speed_opt": 9.0,
        "pme_loss_0": 1.5e5, "pme_loss_2": 400.0, "bmep_max": 12.0e5,
        "full_load_shape": ((0.12, 0.80), (0.40, 1.0), (0.70, 1.0), (1.0, 0.88)),
    },
    "compression-ignition": {
        "e_max": 0.43, "e_curvature": 1.0e-3, "piston_speed_opt": 8.0,
        "pme_loss_0": 1.3e5, "pme_loss_2": 600.0, "bmep_max": 19.0e5,
        "full_load_shape": ((0.20, 0.55), (0.40, 1.0), (0.65, 1.0), (1.0, 0.72)),
    },
}


def willans_parameters(
    kind: Literal["spark-ignition", "compression-ignition"],
    *,
    displacement: float,
    stroke: float,
    idle_speed: float,
    rated_speed: float,
) -> WillansParameters:
    """Willans parameters of a typical engine of one ignition type.

    Parameters
    ----------
    kind : {"spark-ignition", "compression-ignition"}
        Spark ignition (gasoline, LPG, CNG) or compression ignition (diesel).
    displacement : float
        [m3].
    stroke : float
        [m].
    idle_speed : float
        [rad/s].
    rated_speed : float
        [rad/s].

    Returns
    -------
    WillansParameters
        With the shape values of :data:`WILLANS_SHAPES`.
    """
    if kind not in WILLANS_SHAPES:
        raise ValueError(f"unknown engine kind {kind!r}; use one of {sorted(WILLANS_SHAPES)}")
    return WillansParameters(displacement=displacement, stroke=stroke, idle_speed=idle_speed,
                             rated_speed=rated_speed, **WILLANS_SHAPES[kind])  # type: ignore[arg-type]


def willans_efficiency(params: WillansParameters, speed: np.ndarray,
                       torque: np.ndarray) -> np.ndarray:
    """Brake efficiency of a Willans-line engine.

    Parameters
    ----------
    params : WillansParameters
        The engine.
    speed : array_like
        Engine speed [rad/s].
    torque : array_like
        Brake torque [N m], >= 0.

    Returns
    -------
    numpy.ndarray
        Brake efficiency [-].

    Notes
    -----
    With mean piston speed ``c_m = S omega / pi`` and four-stroke mean effective pressures
    ``p_me = 4 pi T / V_d`` (brake) and ``p_mf`` (fuel), the Willans line is
    ``p_me = e(c_m) p_mf - p_loss(c_m)``, with ``e = e_max - e_c (c_m - c_opt)**2`` and
    ``p_loss = p_0 + p_2 c_m**2``. Brake efficiency is then
    ``eta = p_me / p_mf = e p_me / (p_me + p_loss)``.

    References
    ----------
    L. Guzzella, C. H. Onder, *Introduction to Modeling and Control of Internal Combustion
    Engine Systems*, 2nd ed., Springer 2010, ch. 2 (Willans approximation; from memory); the
    parameter values are typical examples, not from that book.
    """
    e, p_loss = _willans_terms(params, np.asarray(speed, dtype=float))
    p_me = 4.0 * math.pi * np.asarray(torque, dtype=float) / params.displacement
    return e * p_me / (p_me + p_loss)


def _willans_terms(params: WillansParameters, speed: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    c_m = params.stroke * speed / math.pi
    e = params.e_max - params.e_curvature * (c_m - params.piston_speed_opt) ** 2
    return e, params.pme_loss_0 + params.pme_loss_2 * c_m**2


def willans_map(params: WillansParameters, *, name: str, n_speed: int = 12,
                n_torque: int = 14) -> EngineMap:
    """Sample a Willans-line engine on a grid.

    Parameters
    ----------
    params : WillansParameters
        The engine.
    name : str
        Label of the map.
    n_speed, n_torque : int
        Grid points from idle to rated speed and from 5 % to 100 % of peak torque.

    Returns
    -------
    EngineMap
        Efficiency grid, full-load curve from ``full_load_shape``, and idle fuel power
        ``p_loss V_d omega_idle / (4 pi e)`` (the Willans line at zero load).
    """
    speed = np.linspace(params.idle_speed, params.rated_speed, n_speed)
    peak = params.bmep_max * params.displacement / (4.0 * math.pi)
    torque = np.linspace(0.05, 1.0, n_torque) * peak
    shape = np.array(params.full_load_shape)
    full = np.interp(speed / params.rated_speed, shape[:, 0], shape[:, 1]) * peak
    e_idle, loss_idle = _willans_terms(params, np.array(params.idle_speed))
    idle_fuel = float(loss_idle * params.displacement * params.idle_speed / (4 * math.pi)
                      / e_idle)
    eff = willans_efficiency(params, speed[None, :], torque[:, None])
    return EngineMap(name=name, speed=speed, torque=torque, efficiency=eff,
                     full_load_torque=full, idle_speed=params.idle_speed,
                     idle_fuel_power=idle_fuel)


# ----------------------------------------------------------------------------- duty energy


@dataclass(frozen=True)
class DutyEnergy:
    """Energy flows of a vehicle and engine over a duty (any fuel; fuel energy is LHV).

    Attributes
    ----------
    distance : float
        [m]; NaN for a time-at-mode table without a distance.
    duration : float
        Operating time, extra idling included [s].
    wheel_energy : float
        Positive tractive work at the wheels [J]; NaN for a time-at-mode table.
    braking_energy : float
        Work taken out by the brakes and engine braking, as a positive number [J].
    engine_energy : float
        Brake work of the engine, accessories included [J].
    fuel_energy : float
        Fuel energy used, LHV basis [J].
    time_idle : float
        Time with the engine idling (not off), extra idling included [s].
    time_out_of_map : float
        Time at operating points clamped to the map [s].
    time_at_full_load : float
        Time at which the demand reached full-load torque [s].
    """

    distance: float
    duration: float
    wheel_energy: float
    braking_energy: float
    engine_energy: float
    fuel_energy: float
    time_idle: float
    time_out_of_map: float
    time_at_full_load: float

    @property
    def share_idle(self) -> float:
        """Share of operating time idling [-]."""
        return self.time_idle / self.duration

    @property
    def share_out_of_map(self) -> float:
        """Share of operating time at clamped operating points [-]."""
        return self.time_out_of_map / self.duration

    @property
    def share_at_full_load(self) -> float:
        """Share of operating time at full load [-]."""
        return self.time_at_full_load / self.duration


def energy_from_sums(sums: dict[str, float], engine_map: EngineMap,
                     settings: DutySettings) -> DutyEnergy:
    """A :class:`DutyEnergy` from the sums of a trace, with the settings' extra idling added.

    Parameters
    ----------
    sums : dict of str to float
        The fields of :class:`DutyEnergy` summed over the trace's intervals
        (:func:`workbench.models.fused.trace_sums`).
    engine_map : EngineMap
        The map (its idle point fuels the extra idling).
    settings : DutySettings
        Extra idle share and accessory power.

    Returns
    -------
    DutyEnergy
    """
    if sums["duration"] == 0.0:
        raise InputError("trace", "no samples to run")
    return DutyEnergy(**_with_extra_idle(dict(sums), engine_map, settings))


def _with_extra_idle(sums: dict[str, float], engine_map: EngineMap,
                     settings: DutySettings) -> dict[str, float]:
    share = settings.extra_idle_share
    if share == 0.0:
        return sums
    extra = sums["duration"] * share / (1.0 - share)
    idle_torque = settings.accessory_power / engine_map.idle_speed
    look = engine_map.fuel_power(np.array([engine_map.idle_speed]), np.array([idle_torque]))
    sums["duration"] += extra
    sums["time_idle"] += extra
    sums["fuel_energy"] += float(look.fuel_power[0]) * extra
    sums["engine_energy"] += settings.accessory_power * extra
    return sums


def duty_energy(
    trace: DutyTrace | Iterable[DutyTrace],
    vehicle: Vehicle,
    engine_map: EngineMap,
    *,
    settings: DutySettings | None = None,
    chunk_size: int = 262_144,
) -> DutyEnergy:
    """Fuel and wheel energy of a vehicle driving a trace.

    Parameters
    ----------
    trace : DutyTrace or iterable of DutyTrace
        One trace (processed in chunks of ``chunk_size`` intervals) or consecutive pieces of a
        longer one, e.g. generated a chunk at a time; pieces are joined by their intervals.
    vehicle : Vehicle
        Road load and driveline.
    engine_map : EngineMap
        Engine efficiency map (already adjusted for the fuel, if needed).
    settings : DutySettings, optional
        Accessory power, engine-off at stops, extra idle share.
    chunk_size : int
        Intervals per chunk; memory grows with it, not with the trace.

    Returns
    -------
    DutyEnergy

    Notes
    -----
    Per interval, fuel power comes from :meth:`EngineMap.fuel_power` at the operating point of
    :func:`workbench.models.vehicle.operating_points` while the engine is fired or idling; overrun
    (fuel cut) and engine-off intervals use no fuel. The loop is the fused kernel of
    :func:`workbench.models.fused.trace_sums` (same numbers, one pass, no gears × samples
    matrices).
    """
    settings = settings or DutySettings()
    pieces = trace.chunks(chunk_size) if isinstance(trace, DutyTrace) else trace
    sums = trace_sums(pieces, vehicle, engine_map, settings=settings).sums
    return energy_from_sums(sums, engine_map, settings)


def mode_energy(table: ModeTable, engine_map: EngineMap, *,
                settings: DutySettings | None = None) -> DutyEnergy:
    """Fuel energy of an engine over a time-at-mode table.

    Parameters
    ----------
    table : ModeTable
        Engine speed, torque and time per mode (torque without accessories).
    engine_map : EngineMap
        Engine efficiency map.
    settings : DutySettings, optional
        Accessory power (added as torque at each mode) and extra idle share.

    Returns
    -------
    DutyEnergy
        With ``wheel_energy`` and ``braking_energy`` NaN (no vehicle), ``distance`` from the
        table or NaN.
    """
    settings = settings or DutySettings()
    torque = table.torque + settings.accessory_power / table.engine_speed
    look = engine_map.fuel_power(table.engine_speed, torque)
    dt = table.duration
    idle = table.torque == 0.0
    sums = {
        "distance": math.nan if table.distance is None else table.distance,
        "duration": float(dt.sum()),
        "wheel_energy": math.nan,
        "braking_energy": math.nan,
        "engine_energy": float(np.dot(table.engine_speed * torque, dt)),
        "fuel_energy": float(np.dot(look.fuel_power, dt)),
        "time_idle": float(dt[idle].sum()),
        "time_out_of_map": float(dt[look.out_of_map].sum()),
        "time_at_full_load": float(dt[look.at_full_load].sum()),
    }
    if sums["duration"] <= 0.0:
        raise InputError(table.name, "the modes add up to no time")
    return DutyEnergy(**_with_extra_idle(sums, engine_map, settings))


# ----------------------------------------------------------------------------- duty pipeline

#: Engine-speed bins the NOx propensity is weighted over (by fuel energy).
NOX_SPEED_BINS = 3
#: Bins of the operating-point histogram: engine speed (over the map's axis) × torque (0 to
#: the highest full-load torque).
HISTOGRAM_BINS = (12, 10)


@dataclass(frozen=True)
class DutyRun:
    """What a vehicle and engine do on a duty (trace or time-at-mode table), before any fuel.

    Attributes
    ----------
    energy : DutyEnergy
        Energy flows over the profile.
    nox_speeds : numpy.ndarray
        Engine-speed bin centres for the NOx weighting [rev/min].
    nox_weights : numpy.ndarray
        Fuel energy in each bin [J].
    points : pandas.DataFrame
        Operating-point histogram: ``engine_speed_rpm``, ``torque_nm``, ``seconds``,
        ``brake_efficiency`` (per pass of the profile).
    """

    energy: DutyEnergy
    nox_speeds: np.ndarray
    nox_weights: np.ndarray
    points: pd.DataFrame


def run_duty(duty: DutyTrace | ModeTable, vehicle: Vehicle | None, engine_map: EngineMap, *,
             settings: DutySettings | None = None) -> DutyRun:
    """The engine pipeline: a trace or mode table → operating points → energy and histograms.

    Parameters
    ----------
    duty : DutyTrace or ModeTable
        The profile.
    vehicle : Vehicle or None
        Road load and driveline; needed for a trace, unused for a time-at-mode table.
    engine_map : EngineMap
        The engine (already adjusted for the fuel, if needed).
    settings : DutySettings, optional
        Accessory power, engine-off at stops, extra idle share.

    Returns
    -------
    DutyRun
        Energy (:func:`duty_energy` or :func:`mode_energy`), fuel energy in
        :data:`NOX_SPEED_BINS` engine-speed bins of the fired and idling points, and the
        time spent in :data:`HISTOGRAM_BINS` speed × torque cells.

    Raises
    ------
    InputError
        A trace without a vehicle; anything the energy functions raise.
    """
    settings = settings or DutySettings()
    if isinstance(duty, ModeTable):
        energy = mode_energy(duty, engine_map, settings=settings)
        speed, torque, dt = duty.engine_speed, duty.torque, duty.duration
    else:
        if vehicle is None:
            raise InputError(duty.name, "a speed trace needs a vehicle")
        energy = duty_energy(duty, vehicle, engine_map, settings=settings)
        load = road_load(vehicle, duty)
        ops = operating_points(vehicle, duty, load, idle_speed=engine_map.idle_speed,
                               settings=settings, full_load_torque=engine_map.max_torque)
        burning = (ops.state == FIRED) | (ops.state == IDLE)
        speed, torque = ops.engine_speed[burning], ops.engine_torque[burning]
        dt = load.duration[burning]
    fuel_power = engine_map.fuel_power(speed, torque).fuel_power
    rpm = to_rpm(speed)
    edges = np.linspace(rpm.min(), rpm.max() + 1e-9, NOX_SPEED_BINS + 1)
    weights, _ = np.histogram(rpm, edges, weights=fuel_power * dt)
    centres = (edges[:-1] + edges[1:]) / 2
    keep = weights > 0
    n_speed, n_torque = HISTOGRAM_BINS
    s_edges = to_rpm(np.linspace(engine_map.speed.min(), engine_map.speed.max(), n_speed + 1))
    t_edges = np.linspace(0.0, float(engine_map.full_load_torque.max()), n_torque + 1)
    seconds, _, _ = np.histogram2d(rpm, np.clip(torque, 0, None), [s_edges, t_edges],
                                   weights=dt)
    sc, tc = np.meshgrid((s_edges[:-1] + s_edges[1:]) / 2, (t_edges[:-1] + t_edges[1:]) / 2,
                         indexing="ij")
    mask = seconds > 0
    eff = engine_map.efficiency_at(sc[mask] * RPM, tc[mask])
    points = pd.DataFrame({"engine_speed_rpm": sc[mask], "torque_nm": tc[mask],
                           "seconds": seconds[mask], "brake_efficiency": eff})
    return DutyRun(energy, centres[keep], weights[keep], points)


# ----------------------------------------------------------------------------- per distance


@dataclass(frozen=True)
class FuelPerDistance:
    """Fuel, energy and tank-to-wheel CO2 per metre driven for one fuel on one duty.

    Attributes
    ----------
    fuel_energy_per_m : float
        Fuel energy, LHV basis [J/m] (1 MJ/km = 1000 J/m).
    fuel_mass_per_m : float
        [kg/m].
    fuel_volume_per_m : float
        Volume as stored on board [m3/m]; NaN when no stored density is known.
    co2_ttw_per_m : float
        Tank-to-wheel CO2 from the fuel's carbon [kg/m].
    gasoline_equivalent_per_m : float
        Volume of gasoline with the same energy [m3/m].
    diesel_equivalent_per_m : float
        Volume of diesel with the same energy [m3/m].
    share_idle, share_out_of_map, share_at_full_load : float
        From the duty [-].
    """

    fuel_energy_per_m: float
    fuel_mass_per_m: float
    fuel_volume_per_m: float
    co2_ttw_per_m: float
    gasoline_equivalent_per_m: float
    diesel_equivalent_per_m: float
    share_idle: float
    share_out_of_map: float
    share_at_full_load: float

    def trade_units(self) -> dict[str, float]:
        """The figures in the units users quote, keyed by suffix names.

        Returns
        -------
        dict of str to float
            ``fuel_energy_mj_per_km``, ``fuel_kg_per_100km``, ``fuel_l_per_100km``,
            ``fuel_km_per_l``, ``fuel_mpg_us``, ``gasoline_l_equivalent_per_100km``,
            ``diesel_l_equivalent_per_100km``, ``co2_ttw_g_per_km``, ``share_idle``,
            ``share_out_of_map``, ``share_at_full_load``.
        """
        litres_per_km = self.fuel_volume_per_m * 1e6  # 1e3 L/m3 x 1e3 m/km
        km_per_l = 1.0 / litres_per_km if litres_per_km > 0 else math.nan
        return {
            "fuel_energy_mj_per_km": self.fuel_energy_per_m * 1e-3,  # 1e3 m/km / 1e6 J/MJ
            "fuel_kg_per_100km": self.fuel_mass_per_m * 1e5,
            "fuel_l_per_100km": litres_per_km * 100.0,
            "fuel_km_per_l": km_per_l,
            "fuel_mpg_us": km_per_l * US_GALLON_L / MILE_KM,
            "gasoline_l_equivalent_per_100km": self.gasoline_equivalent_per_m * 1e8,
            "diesel_l_equivalent_per_100km": self.diesel_equivalent_per_m * 1e8,
            "co2_ttw_g_per_km": self.co2_ttw_per_m * 1e6,
            "share_idle": self.share_idle,
            "share_out_of_map": self.share_out_of_map,
            "share_at_full_load": self.share_at_full_load,
        }


def fuel_per_distance(
    energy: DutyEnergy,
    *,
    lhv_mass: float,
    density: float,
    co2_mass: float,
    gasoline_energy_per_volume: float = GASOLINE_ENERGY_PER_VOLUME,
    diesel_energy_per_volume: float = DIESEL_ENERGY_PER_VOLUME,
) -> FuelPerDistance:
    """Fuel figures per metre driven for one fuel.

    Parameters
    ----------
    energy : DutyEnergy
        From :func:`duty_energy` or :func:`mode_energy`.
    lhv_mass : float
        Lower heating value [J/kg].
    density : float
        Density as stored on board [kg/m3]; NaN when unknown (volume figures become NaN).
    co2_mass : float
        CO2 formed per kg of fuel burnt [kg/kg].
    gasoline_energy_per_volume, diesel_energy_per_volume : float
        Energy per volume of the reference fuels for litre equivalents [J/m3].

    Returns
    -------
    FuelPerDistance

    Raises
    ------
    InputError
        The duty covers no distance.
    """
    distance = energy.distance
    if not (math.isfinite(distance) and distance > 0.0):
        raise InputError("profile", "covers no distance; per-km figures need a moving trace "
                                    "or '# distance_km: ...' in a mode table")
    if not (lhv_mass > 0.0 and co2_mass >= 0.0):
        raise InputError("fuel", "needs a positive LHV and a CO2 factor >= 0")
    energy_m = energy.fuel_energy / distance
    mass_m = energy_m / lhv_mass
    return FuelPerDistance(
        fuel_energy_per_m=energy_m,
        fuel_mass_per_m=mass_m,
        fuel_volume_per_m=mass_m / density if density > 0.0 else math.nan,
        co2_ttw_per_m=mass_m * co2_mass,
        gasoline_equivalent_per_m=energy_m / gasoline_energy_per_volume,
        diesel_equivalent_per_m=energy_m / diesel_energy_per_volume,
        share_idle=energy.share_idle,
        share_out_of_map=energy.share_out_of_map,
        share_at_full_load=energy.share_at_full_load,
    )


def fuel_per_distance_for(energy: DutyEnergy, fuel: Fuel, sheet: FuelSheet) -> FuelPerDistance:
    """Fuel figures per metre driven for a library fuel.

    Parameters
    ----------
    energy : DutyEnergy
        From :func:`duty_energy` or :func:`mode_energy`.
    fuel : workbench.core.fuels.Fuel
        The fuel; its ``liquid_density`` is the stored density of liquid and liquefied fuels.
        Compressed and cryogenic gases get NaN volumes (quote them per kg).
    sheet : workbench.models.combustion.FuelSheet
        Its property sheet (``lhv_mass``, ``co2_mass``).

    Returns
    -------
    FuelPerDistance
    """
    liquid = fuel.storage is None or fuel.storage.kind in ("liquid", "liquefied")
    density = fuel.liquid_density if liquid and fuel.liquid_density else math.nan
    return fuel_per_distance(energy, lhv_mass=sheet.lhv_mass, density=density,
                       co2_mass=sheet.co2_mass)
