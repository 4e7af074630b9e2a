"""Battery-electric drive: energy at the battery terminals and from the grid over a duty trace.

The wheel power comes from the road load of :mod:`workbench.models.vehicle` (the same physics
as the combustion candidates, on the same trace). Here it is carried back through a
single-speed reduction gear and the motor with its inverter to the DC bus, regenerative
braking returns a share of the braking energy at the wheels (limited by the motor's power),
the accessories and the heating or cooling draw from the bus all the time the vehicle is in
service, and the charger's and battery's losses give the energy bought from the grid. Battery
sizing for a range (usable depth of discharge, end-of-life capacity) and the charging window
check are closed forms. Formulas and sources: ``docs/electric.md``.

Sign convention: power into the wheels (driving) is positive, power out of them (braking)
negative; battery terminal power is positive when the battery discharges.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np

from workbench.core.errors import InputError
from workbench.models.duty import DutySettings, DutyTrace
from workbench.models.vehicle import Vehicle, road_load

#: Motor-and-inverter efficiency against load (shaft power over rated power) of a typical
#: permanent-magnet traction motor with its inverter: poor at light load (fixed iron and
#: switching losses), flat above about a third of rated power. From memory (the shape of the
#: published efficiency maps, e.g. Guzzella & Sciarretta, *Vehicle Propulsion Systems*, 3rd ed.,
#: 2013, ch. 4); not one specific machine's map.
TYPICAL_MOTOR_CURVE = ((0.0, 0.70), (0.05, 0.80), (0.10, 0.86), (0.25, 0.91),
                       (0.50, 0.93), (1.00, 0.92))

#: Mean speed below which an interval regenerates nothing [m/s] (about 5 km/h): at walking
#: speed the motor's back EMF is too low and the friction brakes hold the vehicle. Common
#: practice, no source.
REGEN_MIN_SPEED = 5.0 / 3.6


def _share(where: str, value: float, *, low_open: bool = True) -> float:
    value = float(value)
    ok = (0.0 < value <= 1.0) if low_open else (0.0 <= value <= 1.0)
    if not (math.isfinite(value) and ok):
        raise InputError(where, "must be a share in (0, 1]" if low_open
                         else "must be a share between 0 and 1")
    return value


def _non_negative(where: str, value: float, *, positive: bool = False) -> float:
    value = float(value)
    if not (math.isfinite(value) and (value > 0.0 if positive else value >= 0.0)):
        raise InputError(where, "must be a positive number" if positive
                         else "must be a number >= 0")
    return value


@dataclass(frozen=True)
class EfficiencyCurve:
    """Motor-and-inverter efficiency against load, linear between the points.

    Parameters
    ----------
    load : tuple of float
        Shaft power over the motor's rated power, strictly increasing, from 0 [-].
    efficiency : tuple of float
        Efficiency at each load, in (0, 1] [-]; the same both ways (driving: shaft power over
        DC power; generating: DC power over shaft power), common practice, no source.

    Notes
    -----
    Between the points ``numpy.interp``; beyond the last point the last efficiency (a motor
    asked for more than its rated power is flagged by :func:`drive_energy`, not extrapolated).
    """

    load: tuple[float, ...]
    efficiency: tuple[float, ...]

    def __post_init__(self) -> None:
        load = tuple(float(x) for x in self.load)
        eff = tuple(float(x) for x in self.efficiency)
        object.__setattr__(self, "load", load)
        object.__setattr__(self, "efficiency", eff)
        if not load or len(load) != len(eff):
            raise InputError("efficiency curve", "needs as many load shares as efficiencies, "
                                                 "at least one of each")
        if load[0] != 0.0 or any(b <= a for a, b in itertools.pairwise(load)):
            raise InputError("efficiency curve", "load shares must start at 0 and increase")
        for e in eff:
            _share("efficiency curve", e)

    @classmethod
    def constant(cls, efficiency: float) -> EfficiencyCurve:
        """One efficiency at every load [-]."""
        return cls(load=(0.0,), efficiency=(efficiency,))

    @classmethod
    def typical(cls) -> EfficiencyCurve:
        """:data:`TYPICAL_MOTOR_CURVE`."""
        load, eff = zip(*TYPICAL_MOTOR_CURVE, strict=True)
        return cls(load=load, efficiency=eff)

    def __call__(self, load_share: np.ndarray) -> np.ndarray:
        """Efficiency at ``load_share`` (shaft power over rated power, its magnitude) [-]."""
        return np.interp(np.abs(load_share), self.load, self.efficiency)


@dataclass(frozen=True)
class ElectricDrive:
    """Parameters of a battery-electric drivetrain.

    Parameters
    ----------
    motor_power : float
        Rated (peak) motor power at the shaft, the limit both driving and regenerating [W].
    motor_efficiency : EfficiencyCurve
        Motor and inverter, against load.
    reducer_efficiency : float
        Single-speed reduction gear and axle, wheel power over shaft power, in (0, 1] [-].
    regen_share : float
        Share of the braking energy at the wheels the motor takes (the rest goes to the
        friction brakes), before the power limit, in [0, 1] [-].
    regen_min_speed : float
        Mean interval speed below which nothing is regenerated [m/s].
    hvac_power : float
        Mean electric power of heating or cooling over the service time [W] (scalar), or per
        trace interval (array).
    charging_efficiency : float
        Energy delivered at the battery terminals over energy drawn from the grid: charger
        (AC/DC) and the battery's charge and discharge losses, in (0, 1] [-].
    """

    motor_power: float
    motor_efficiency: EfficiencyCurve
    reducer_efficiency: float = 0.97
    regen_share: float = 0.6
    regen_min_speed: float = REGEN_MIN_SPEED
    hvac_power: float | np.ndarray = 0.0
    charging_efficiency: float = 0.88

    def __post_init__(self) -> None:
        _non_negative("motor_power", self.motor_power, positive=True)
        _share("reducer_efficiency", self.reducer_efficiency)
        _share("regen_share", self.regen_share, low_open=False)
        _non_negative("regen_min_speed", self.regen_min_speed)
        _share("charging_efficiency", self.charging_efficiency)
        hvac = np.asarray(self.hvac_power, dtype=float)
        if not (np.all(np.isfinite(hvac)) and np.all(hvac >= 0.0)):
            raise InputError("hvac_power", "must be a number >= 0 W")


@dataclass(frozen=True, eq=False)
class DriveEnergy:
    """Energy flows of an electric drive over a trace (extra idling included).

    Attributes
    ----------
    distance : float
        Distance covered [m].
    duration : float
        Service time, trace plus extra idling [s].
    traction : float
        Energy into the wheels while driving [J].
    braking : float
        Energy out of the wheels while braking (friction and regeneration) [J].
    regen_wheel : float
        Braking energy the motor takes at the wheels, after the share and the power limit [J].
    traction_dc : float
        DC energy the motor and inverter draw for traction [J].
    regen_dc : float
        DC energy regeneration returns to the bus [J].
    accessory_dc : float
        Accessories and heating or cooling [J].
    battery : float
        Net energy the battery delivers at its terminals, ``traction_dc + accessory_dc -
        regen_dc``, at least 0 [J].
    grid : float
        Energy from the grid to recharge it, ``battery / charging_efficiency`` [J].
    peak_dc_power : float
        Highest battery terminal power of an interval [W].
    over_power_time : float
        Time the trace asks more than the rated motor power [s] (the energy is still counted).
    dc_power : numpy.ndarray
        Battery terminal power per trace interval, negative when regenerating [W] (the demand
        a fuel cell or other source on the DC bus has to meet).
    """

    distance: float
    duration: float
    traction: float
    braking: float
    regen_wheel: float
    traction_dc: float
    regen_dc: float
    accessory_dc: float
    battery: float
    grid: float
    peak_dc_power: float
    over_power_time: float
    dc_power: np.ndarray

    @property
    def battery_per_m(self) -> float:
        """Battery terminal energy per distance [J/m]."""
        return self.battery / self.distance

    @property
    def grid_per_m(self) -> float:
        """Grid energy per distance [J/m]."""
        return self.grid / self.distance


def drive_energy(vehicle: Vehicle, trace: DutyTrace, drive: ElectricDrive, *,
                 settings: DutySettings | None = None) -> DriveEnergy:
    """Battery and grid energy of an electric drive over a speed trace.

    Parameters
    ----------
    vehicle : Vehicle
        Road-load parameters of the electric vehicle (its mass with the battery; see
        :func:`size_battery`). Its gears and engine speeds are not used.
    trace : DutyTrace
        Speed (grade, payload) per sample.
    drive : ElectricDrive
        Motor, regeneration, heating or cooling, charging.
    settings : DutySettings, optional
        ``accessory_power`` (drawn electrically from the DC bus all the service time) and
        ``extra_idle_share`` (time in service standing still beyond the trace, with the
        accessories and heating or cooling on); ``engine_off_at_stops`` does not apply.

    Returns
    -------
    DriveEnergy

    Raises
    ------
    InputError
        The trace covers no distance, or ``hvac_power`` per interval has the wrong length.

    Notes
    -----
    Per interval of length ``dt`` with wheel power ``P_w`` (road load), rated motor power
    ``P_max``, reduction efficiency ``eta_g`` and motor efficiency ``eta_m(P_shaft / P_max)``::

        driving  (P_w > 0):  P_shaft = P_w / eta_g,           P_dc = P_shaft / eta_m
        braking  (P_w < 0):  P_regen = min(s |P_w|, P_max / eta_g)   (0 below regen_min_speed)
                             P_shaft = P_regen eta_g,          P_dc = -P_shaft eta_m
        always:              P_dc += P_acc + P_hvac

    ``E_battery = max(0, sum(P_dc dt))`` plus the accessories over the extra idling, and
    ``E_grid = E_battery / eta_charge``. The regenerated energy re-enters at the terminals
    without the battery's own losses on that round trip (a few per cent of it). On a trace
    without drag or rolling resistance, a deceleration's braking energy at the wheels is the
    kinetic-energy change ``m f_rot (v0^2 - v1^2) / 2`` (see :func:`road_load`), so the
    energy regenerated at the wheels is ``s`` times it while ``s |P_w|`` stays under the limit.

    References
    ----------
    L. Guzzella, A. Sciarretta, *Vehicle Propulsion Systems*, 3rd ed., Springer 2013, ch. 2
    (road load) and ch. 4 (electric propulsion: motors, batteries, regenerative braking).
    """
    settings = settings or DutySettings()
    load = road_load(vehicle, trace)
    dt = load.duration
    distance = float(np.sum(load.distance))
    if distance <= 0.0:
        raise InputError(trace.name, "the trace covers no distance: an electric drive's "
                                     "energy per km needs a moving trace")
    hvac = np.asarray(drive.hvac_power, dtype=float)
    if hvac.ndim and hvac.shape != dt.shape:
        raise InputError("hvac_power", f"has {hvac.size} values for {dt.size} trace intervals; "
                                       "give one number or one per interval")
    p_w = load.wheel_power
    p_max = drive.motor_power
    eta_g = drive.reducer_efficiency
    driving = p_w > 0.0
    shaft_drive = np.where(driving, p_w / eta_g, 0.0)
    regen = np.where(~driving & (load.speed >= drive.regen_min_speed),
                     np.minimum(drive.regen_share * -p_w, p_max / eta_g), 0.0)
    shaft_regen = regen * eta_g
    eta_drive = drive.motor_efficiency(shaft_drive / p_max)
    eta_regen = drive.motor_efficiency(shaft_regen / p_max)
    p_traction = shaft_drive / eta_drive
    p_regen = shaft_regen * eta_regen
    p_acc = settings.accessory_power + hvac
    dc_power = p_traction - p_regen + p_acc
    dc_power.setflags(write=False)
    share = settings.extra_idle_share
    duration = float(np.sum(dt))
    extra = duration * share / (1.0 - share)
    acc_extra = (settings.accessory_power + float(np.sum(hvac * dt)) / duration
                 if hvac.ndim else settings.accessory_power + float(hvac)) * extra
    accessory = float(np.sum(p_acc * dt)) + acc_extra
    traction_dc = float(np.sum(p_traction * dt))
    regen_dc = float(np.sum(p_regen * dt))
    battery = max(0.0, traction_dc + accessory - regen_dc)
    return DriveEnergy(
        distance=distance, duration=duration + extra,
        traction=float(np.sum(np.where(driving, p_w, 0.0) * dt)),
        braking=float(np.sum(np.where(driving, 0.0, -p_w) * dt)),
        regen_wheel=float(np.sum(regen * dt)), traction_dc=traction_dc, regen_dc=regen_dc,
        accessory_dc=accessory, battery=battery, grid=battery / drive.charging_efficiency,
        peak_dc_power=float(np.max(dc_power)),
        over_power_time=float(np.sum(np.where(shaft_drive > p_max, dt, 0.0))),
        dc_power=dc_power)


@dataclass(frozen=True)
class BatteryPack:
    """Pack parameters for sizing.

    Parameters
    ----------
    depth_of_discharge : float
        Usable share of the nameplate capacity (the state-of-charge window the pack's
        management allows), in (0, 1] [-].
    end_of_life_health : float
        Capacity at the end of the battery's service life over new (state of health), in
        (0, 1] [-]; the range must still be met then.
    specific_energy : float
        Nameplate energy over pack mass (cells, housing, cooling, management) [J/kg].
    """

    depth_of_discharge: float = 0.9
    end_of_life_health: float = 0.8
    specific_energy: float = 140.0 * 3600.0

    def __post_init__(self) -> None:
        _share("depth_of_discharge", self.depth_of_discharge)
        _share("end_of_life_health", self.end_of_life_health)
        _non_negative("specific_energy", self.specific_energy, positive=True)


def battery_capacity(range_m: float, energy_per_m: float | np.ndarray,
                     pack: BatteryPack) -> float | np.ndarray:
    """Nameplate capacity a new pack needs to cover a range at the end of its life [J].

    Parameters
    ----------
    range_m : float
        Distance between charges [m].
    energy_per_m : float or numpy.ndarray
        Battery terminal energy per distance [J/m].
    pack : BatteryPack
        Depth of discharge and end-of-life health.

    Returns
    -------
    float or numpy.ndarray
        ``range * energy_per_m / (DoD * SOH_end)`` [J].
    """
    return range_m * energy_per_m / (pack.depth_of_discharge * pack.end_of_life_health)


@dataclass(frozen=True)
class BatterySizing:
    """A pack sized for a range on a duty, and the vehicle that carries it.

    Attributes
    ----------
    capacity : float
        Nameplate capacity of the new pack [J].
    mass : float
        Pack mass, ``capacity / specific_energy`` [kg].
    added_mass : float
        Pack mass less the combustion powertrain mass the electric vehicle does without [kg].
    energy : DriveEnergy
        The drive's energy over the duty with the pack on board.
    vehicle : Vehicle
        The vehicle with ``added_mass`` in its mass.
    """

    capacity: float
    mass: float
    added_mass: float
    energy: DriveEnergy
    vehicle: Vehicle


def size_battery(vehicle: Vehicle, trace: DutyTrace, drive: ElectricDrive, pack: BatteryPack,
                 range_m: float, *, mass_saved: float = 0.0,
                 settings: DutySettings | None = None, tolerance: float = 1e-3,
                 max_iterations: int = 50) -> BatterySizing:
    """Size the pack for a range, carrying its own mass on the duty.

    Parameters
    ----------
    vehicle : Vehicle
        The combustion vehicle the electric one replaces (its mass without the pack).
    trace : DutyTrace
        The duty.
    drive : ElectricDrive
        The drivetrain.
    pack : BatteryPack
        Depth of discharge, end-of-life health, specific energy.
    range_m : float
        Distance between charges [m].
    mass_saved : float
        Combustion powertrain mass (engine, gearbox, tank, fuel) less the electric motor and
        its electronics, taken off the vehicle [kg].
    settings : DutySettings, optional
        As for :func:`drive_energy`.
    tolerance : float
        Stop when the pack mass changes by less than this [kg].
    max_iterations : int
        Give up (InputError) after this many steps.

    Returns
    -------
    BatterySizing

    Raises
    ------
    InputError
        No pack can carry itself over the range (the iteration does not settle: the range is
        too long for the specific energy).

    Notes
    -----
    Fixed point of ``m_b = R e(m0 + m_b - m_s) / (DoD SOH_end s_E)``. Energy per metre is
    affine in mass (rolling, grade and inertia terms), so the iteration converges
    geometrically when ``R (de/dm) / (DoD SOH s_E) < 1``; on a constant-speed flat trace
    ``e(m) = (a m + b) / eta`` and the fixed point is the closed form
    ``m_b = k (a (m0 - m_s) + b) / (1 - k a)`` with ``k = R / (eta DoD SOH s_E)``.
    """
    _non_negative("range", range_m, positive=True)
    _non_negative("mass_saved", mass_saved)
    if mass_saved >= vehicle.mass:
        raise InputError("mass_saved", f"must be below the vehicle's mass {vehicle.mass:g} kg")
    mass = 0.0
    for _ in range(max_iterations):
        ev = replace(vehicle, mass=vehicle.mass - mass_saved + mass)
        energy = drive_energy(ev, trace, drive, settings=settings)
        capacity = float(battery_capacity(range_m, energy.battery_per_m, pack))
        new = capacity / pack.specific_energy
        if not math.isfinite(new) or new > 10.0 * vehicle.mass:
            break
        if abs(new - mass) < tolerance:
            ev = replace(vehicle, mass=vehicle.mass - mass_saved + new)
            energy = drive_energy(ev, trace, drive, settings=settings)
            capacity = float(battery_capacity(range_m, energy.battery_per_m, pack))
            mass = capacity / pack.specific_energy
            return BatterySizing(capacity=capacity, mass=mass, added_mass=mass - mass_saved,
                                 energy=energy, vehicle=ev)
        mass = new
    raise InputError("range", f"no pack of {pack.specific_energy / 3600.0:g} Wh/kg carries "
                              f"itself over {range_m / 1000.0:g} km on this duty: shorten "
                              "the range or raise the pack's specific energy")


@dataclass(frozen=True)
class ChargingCheck:
    """Whether the daily energy fits the charging window.

    Attributes
    ----------
    power : float
        Charging power available to one vehicle, chargers per vehicle times charger power
        [W].
    time_needed : float
        Daily grid energy over that power [s].
    window : float
        The charging window [s].
    fits : bool
        ``time_needed <= window``.
    """

    power: float
    time_needed: float
    window: float
    fits: bool

    @property
    def message(self) -> str:
        """One line for a person: empty when it fits."""
        if self.fits:
            return ""
        return (f"charging needs {self.time_needed / 3600.0:.1f} h a day at "
                f"{self.power / 1000.0:.3g} kW per vehicle, more than the "
                f"{self.window / 3600.0:.1f} h window: add chargers or power, or charge "
                "during the day")


def charging_check(daily_grid_energy: float, charger_power: float, chargers_per_vehicle: float,
                   window: float) -> ChargingCheck:
    """Time a vehicle's daily energy takes at the chargers, against the charging window.

    Parameters
    ----------
    daily_grid_energy : float
        Grid energy one vehicle needs a day [J].
    charger_power : float
        Rated power of one charger at the grid [W].
    chargers_per_vehicle : float
        Chargers per vehicle (below 1 when vehicles share them in turn) [-].
    window : float
        Hours a day the vehicles stand at the chargers [s].

    Returns
    -------
    ChargingCheck
        ``t = E_day / (n P)`` against the window.
    """
    _non_negative("daily energy", daily_grid_energy)
    _non_negative("charger_power", charger_power, positive=True)
    _non_negative("chargers_per_vehicle", chargers_per_vehicle, positive=True)
    _non_negative("charging_window", window, positive=True)
    power = charger_power * chargers_per_vehicle
    needed = daily_grid_energy / power
    return ChargingCheck(power=power, time_needed=needed, window=window, fits=needed <= window)


def tariff_price(prices: Sequence[float | np.ndarray], shares: Sequence[float]
                 ) -> float | np.ndarray:
    """Energy-weighted price of a time-of-use tariff [currency/J, or the prices' unit].

    Parameters
    ----------
    prices : sequence of float or numpy.ndarray
        Price of each tariff band (an array: one value per Monte Carlo draw).
    shares : sequence of float
        Share of the charging energy drawn in each band, summing to 1 [-].

    Returns
    -------
    float or numpy.ndarray
        ``sum(share_i price_i)``, an array when the prices are; a flat tariff is one band
        with share 1.

    Raises
    ------
    InputError
        Lengths differ, a share is outside [0, 1] or the shares do not sum to 1 (within 1e-6).
    """
    if not prices or len(prices) != len(shares):
        raise InputError("tariff", "give one share of charging energy for each band's price")
    for s in shares:
        _share("tariff share", s, low_open=False)
    if abs(sum(shares) - 1.0) > 1e-6:
        raise InputError("tariff", f"the bands' shares of charging energy sum to "
                                   f"{sum(shares):g}; they must sum to 1")
    total = sum(p * s for p, s in zip(prices, shares, strict=True))
    return total if isinstance(total, np.ndarray) else float(total)
