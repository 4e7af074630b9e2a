"""Vehicle road load and engine operating points over a speed trace.

:class:`Vehicle` holds the parameters (SI); :func:`road_load` turns a :class:`DutyTrace` into
tractive force and power at the wheel per interval; :func:`operating_points` chooses a gear
and gives engine speed and torque per interval. No regenerative braking: these are engine
vehicles, braking energy is lost. Vehicle TOML files (``docs/duty.md``) are read by
:func:`workbench.io.vehicles.read_vehicle`.

Gear-selection rule (economy shifting, documented in ``docs/duty.md``)
----------------------------------------------------------------------
For each moving interval, among the gears whose engine speed lies between ``shift_speed`` and
``max_engine_speed``, take the highest one whose full-load torque covers the demand. If none
covers it, take the lowest of those gears (most power). If no gear reaches ``shift_speed``
(launch, creeping), take the lowest gear that stays under ``max_engine_speed``, with the engine
held at least at idle speed (clutch or converter slipping). If even top gear would over-speed
the engine, the gear set cannot reach the trace's speed: :class:`InputError`.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from workbench.core.constants import STANDARD_GRAVITY, to_rpm
from workbench.core.errors import InputError
from workbench.models.duty import STOP_SPEED, DutySettings, DutyTrace

#: Engine states of an interval (see :class:`OperatingPoints`).
ENGINE_OFF, IDLE, OVERRUN, FIRED = 0, 1, 2, 3


@dataclass(frozen=True)
class Vehicle:
    """Road-load and driveline parameters of a vehicle.

    Parameters
    ----------
    name : str
        Label.
    mass : float
        Vehicle mass in running order with driver, without payload [kg].
    payload : float
        Payload when the trace gives none [kg].
    frontal_area : float
        Frontal area [m2].
    drag_coefficient : float
        Aerodynamic drag coefficient Cd [-].
    rolling_resistance : float
        Tyre rolling-resistance coefficient Crr [-].
    driveline_efficiency : float
        Gearbox and axle efficiency, wheel power over engine power, in (0, 1] [-].
    wheel_radius : float
        Dynamic rolling radius [m].
    gear_ratios : tuple of float
        Gearbox ratios, first gear first, decreasing [-].
    final_drive : float
        Axle ratio [-].
    shift_speed : float
        Lowest engine speed the gear rule drives at [rad/s].
    max_engine_speed : float
        Highest engine speed the gear rule allows [rad/s].
    air_density : float
        Air density [kg/m3]; 1.2 is about 20 °C at sea level.
    rotating_mass_factor : float
        Inertial mass over actual mass, covering wheels, shafts and engine (>= 1) [-].
    """

    name: str
    mass: float
    payload: float
    frontal_area: float
    drag_coefficient: float
    rolling_resistance: float
    driveline_efficiency: float
    wheel_radius: float
    gear_ratios: tuple[float, ...]
    final_drive: float
    shift_speed: float
    max_engine_speed: float
    air_density: float = 1.2
    rotating_mass_factor: float = 1.05

    def __post_init__(self) -> None:
        object.__setattr__(self, "gear_ratios", tuple(float(g) for g in self.gear_ratios))
        positive = ("mass", "frontal_area", "wheel_radius", "final_drive",
                    "shift_speed", "max_engine_speed", "air_density")
        for f in positive:
            value = getattr(self, f)
            if not (isinstance(value, int | float) and math.isfinite(value) and value > 0):
                raise InputError(f"vehicle {self.name}: {f}", "must be a positive number")
        checks = {
            "payload": self.payload >= 0.0,
            "drag_coefficient": 0.0 <= self.drag_coefficient < 3.0,
            "rolling_resistance": 0.0 <= self.rolling_resistance < 0.1,
            "driveline_efficiency": 0.0 < self.driveline_efficiency <= 1.0,
            "rotating_mass_factor": 1.0 <= self.rotating_mass_factor < 2.0,
            "gear_ratios": bool(self.gear_ratios)
            and all(g > 0 for g in self.gear_ratios)
            and all(a > b for a, b in zip(self.gear_ratios, self.gear_ratios[1:], strict=False)),
            "max_engine_speed": self.max_engine_speed > self.shift_speed,
        }
        hints = {
            "payload": ">= 0 kg",
            "drag_coefficient": "between 0 and 3",
            "rolling_resistance": "between 0 and 0.1",
            "driveline_efficiency": "in (0, 1]",
            "rotating_mass_factor": "between 1 and 2",
            "gear_ratios": "positive and decreasing, first gear first",
            "max_engine_speed": "above shift_speed",
        }
        for f, ok in checks.items():
            if not ok:
                raise InputError(f"vehicle {self.name}: {f}", f"must be {hints[f]}")

    @property
    def total_ratios(self) -> np.ndarray:
        """Engine speed over wheel speed in each gear (gearbox × final drive) [-]."""
        return np.asarray(self.gear_ratios) * self.final_drive


@dataclass(frozen=True, eq=False)
class RoadLoad:
    """Tractive force and power at the wheel per trace interval.

    Attributes
    ----------
    duration : numpy.ndarray
        Interval length [s].
    distance : numpy.ndarray
        Distance covered in the interval [m].
    speed : numpy.ndarray
        Mean speed [m/s].
    acceleration : numpy.ndarray
        Constant acceleration over the interval [m/s²].
    tractive_force : numpy.ndarray
        Force at the wheels' contact patches, negative when braking [N].
    wheel_power : numpy.ndarray
        Tractive force times mean speed [W].
    """

    duration: np.ndarray
    distance: np.ndarray
    speed: np.ndarray
    acceleration: np.ndarray
    tractive_force: np.ndarray
    wheel_power: np.ndarray


def road_load(vehicle: Vehicle, trace: DutyTrace) -> RoadLoad:
    """Tractive force and power at the wheel over a trace.

    Parameters
    ----------
    vehicle : Vehicle
        Road-load parameters.
    trace : DutyTrace
        Speed (and optional grade, payload) per sample.

    Returns
    -------
    RoadLoad
        Per-interval arrays of length ``len(trace.time) - 1``.

    Notes
    -----
    With ``m = mass + payload``, ``theta = arctan(grade)`` and interval mean speed ``v``::

        F = m * f_rot * a + m * g * (Crr * cos(theta) + sin(theta)) + rho/2 * Cd * A * v**2
        P = F * v

    Because ``a * v * dt`` equals half the change of the squared end speeds, the inertial work
    summed over a trace is exactly the kinetic-energy change ``m f_rot (v_end² - v_0²) / 2``.

    References
    ----------
    L. Guzzella, A. Sciarretta, *Vehicle Propulsion Systems*, 3rd ed., Springer 2013, ch. 2
    (longitudinal vehicle dynamics).
    """
    t, v = trace.time, trace.speed
    dt = t[1:] - t[:-1]
    v_mean = 0.5 * (v[1:] + v[:-1])
    accel = (v[1:] - v[:-1]) / dt
    mass = vehicle.mass + (vehicle.payload if trace.payload is None else trace.payload[:-1])
    aero = (0.5 * vehicle.air_density * vehicle.drag_coefficient * vehicle.frontal_area) * (
        v_mean * v_mean)
    if trace.grade is None:
        slope = vehicle.rolling_resistance * STANDARD_GRAVITY
    else:
        grade = trace.grade[:-1]
        cos = 1.0 / np.sqrt(1.0 + grade * grade)
        slope = STANDARD_GRAVITY * cos * (vehicle.rolling_resistance + grade)
    force = mass * (vehicle.rotating_mass_factor * accel + slope) + aero
    return RoadLoad(duration=dt, distance=v_mean * dt, speed=v_mean, acceleration=accel,
                    tractive_force=force, wheel_power=force * v_mean)


@dataclass(frozen=True, eq=False)
class OperatingPoints:
    """Engine operating point per trace interval.

    Attributes
    ----------
    engine_speed : numpy.ndarray
        Engine speed [rad/s] (idle speed when idling, 0 when off).
    engine_torque : numpy.ndarray
        Brake torque the engine delivers, accessories included; negative in overrun [N m].
    gear : numpy.ndarray
        Gear number, 1 = first; 0 when stopped.
    state : numpy.ndarray
        :data:`ENGINE_OFF`, :data:`IDLE`, :data:`OVERRUN` (fuel cut) or :data:`FIRED`.
    """

    engine_speed: np.ndarray
    engine_torque: np.ndarray
    gear: np.ndarray
    state: np.ndarray


def operating_points(
    vehicle: Vehicle,
    trace: DutyTrace,
    load: RoadLoad,
    *,
    idle_speed: float,
    settings: DutySettings | None = None,
    full_load_torque: Callable[[np.ndarray], np.ndarray] | None = None,
) -> OperatingPoints:
    """Choose gears and give engine speed and torque for each interval.

    Parameters
    ----------
    vehicle : Vehicle
        Driveline parameters.
    trace : DutyTrace
        The trace ``load`` was computed from (for error messages).
    load : RoadLoad
        From :func:`road_load`.
    idle_speed : float
        Engine idle speed [rad/s].
    settings : DutySettings, optional
        Accessory power and engine-off at stops; defaults when omitted.
    full_load_torque : callable, optional
        Engine speed [rad/s] -> full-load torque [N m]; lets the gear rule downshift when the
        demand exceeds it. Without it only the speed limits choose the gear.

    Returns
    -------
    OperatingPoints

    Raises
    ------
    InputError
        The gear set cannot reach a speed of the trace without over-speeding the engine.

    Notes
    -----
    Engine torque is ``F r / (i eta)`` when driving and ``F r eta / i`` when braking (power flows
    back through the driveline), plus ``P_acc / omega`` for the accessories. A moving interval
    with zero or negative engine torque is overrun with fuel cut while the engine runs at or
    above ``shift_speed``; below it (clutch open, rolling to a stop) the engine idles. Stopped
    intervals idle, or are off with ``engine_off_at_stops``.
    """
    settings = settings or DutySettings()
    p_acc = settings.accessory_power
    eta = vehicle.driveline_efficiency
    ratios = vehicle.total_ratios[:, None]
    n_all = load.speed[None, :] * ratios / vehicle.wheel_radius  # gears × intervals
    wheel_torque = load.tractive_force * vehicle.wheel_radius
    through = np.where(wheel_torque >= 0.0, 1.0 / eta, eta)
    t_all = (wheel_torque * through)[None, :] / ratios + p_acc / np.maximum(n_all, idle_speed)
    under_max = n_all <= vehicle.max_engine_speed
    in_band = under_max & (n_all >= vehicle.shift_speed)
    covered = in_band if full_load_torque is None else in_band & (
        t_all <= full_load_torque(n_all))
    k = n_all.shape[0]
    highest_covered = k - 1 - np.argmax(covered[::-1], axis=0)
    gear = np.where(covered.any(axis=0), highest_covered,
                    np.where(in_band.any(axis=0), np.argmax(in_band, axis=0),
                             np.argmax(under_max, axis=0)))
    moving = load.speed >= STOP_SPEED
    unreachable = moving & ~under_max.any(axis=0)
    if unreachable.any():
        i = int(np.argmax(unreachable))
        need = to_rpm(n_all[-1, i])
        raise InputError(trace.where(i + 1),
                         f"the gear set cannot reach {load.speed[i] * 3.6:.1f} km/h: top gear "
                         f"needs {need:.0f} rpm, above max_engine_speed "
                         f"{to_rpm(vehicle.max_engine_speed):.0f} rpm")
    cols = np.arange(n_all.shape[1])
    geared = n_all[gear, cols]
    speed = np.maximum(geared, idle_speed)
    torque = t_all[gear, cols]
    idle_torque = p_acc / idle_speed
    overrun = moving & (torque <= 0.0) & (geared >= vehicle.shift_speed)
    idling = ~moving | ((torque <= 0.0) & ~overrun)
    state = np.where(overrun, OVERRUN, FIRED).astype(np.int8)
    state[idling] = ENGINE_OFF if settings.engine_off_at_stops else IDLE
    state[moving & idling] = IDLE
    speed = np.where(idling, idle_speed, speed)
    torque = np.where(idling, idle_torque, torque)
    if settings.engine_off_at_stops:
        off = state == ENGINE_OFF
        speed[off] = 0.0
        torque[off] = 0.0
    return OperatingPoints(engine_speed=speed, engine_torque=torque,
                           gear=np.where(moving, gear + 1, 0).astype(np.int8), state=state)
