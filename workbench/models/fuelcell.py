"""Fuel-cell electric drive: hydrogen over a duty trace, its tank, and where the hydrogen came from.

The electric side is :mod:`workbench.models.electric`: the road load carried back through the
reducer and motor to the DC bus, regeneration as a share of the wheel braking energy limited by
the motor's power, accessories and heating (:func:`~workbench.models.electric.drive_energy`).
Here a PEM fuel-cell system meets that DC demand up to its rated net power and a small buffer
battery takes the peaks above it and the regenerated energy, charge-sustaining over the trace.

The stack follows the empirical polarisation curve of Larminie & Dicks (activation, ohmic and
mass-transport losses); its hydrogen follows Faraday's law; the balance of plant (air
compressor, pumps, fans) takes a fixed power plus a share of the gross stack power. The tank
for a range is the compressed-gas model of :mod:`workbench.models.storage` (CoolProp,
hydrogen's reference equation of state) at 350 or 700 bar. Formulas and sources:
``docs/fuel-cell.md``.

Efficiencies are on the lower heating value, as every fuel of the workbench is bought and
compared (:class:`~workbench.models.economics.EnergyPart` is per J of LHV).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from functools import cached_property

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike
from scipy.optimize import brentq

from workbench.core.constants import FARADAY, J_PER_KWH
from workbench.core.errors import InputError
from workbench.models.combustion import fuel_sheet
from workbench.models.duty import DutySettings, DutyTrace
from workbench.models.electric import BatteryPack, DriveEnergy, ElectricDrive, drive_energy
from workbench.models.storage import TankSystem, stored_state, tank_for_range
from workbench.models.vehicle import Vehicle

#: The fuel sheet the hydrogen figures (molar mass, heating values) come from.
HYDROGEN = "hydrogen"

#: Larminie & Dicks' constants for a PEM cell at about 70 °C, as we recall their Table 3.3 (in
#: the book's units: E 1.2 V, i_n 2 mA/cm2, r 30e-6 kOhm cm2, i_0 0.067 mA/cm2, A 0.06 V,
#: m 3e-5 V, n 8e-3 cm2/mA), here in SI. From memory: check against the book before relying on
#: it; replace with the stack supplier's curve for a study.
LARMINIE_DICKS_PEM = dict(open_circuit=1.2, tafel_slope=0.06, exchange_current_density=0.67,
                          internal_current_density=20.0, area_resistance=3.0e-6,
                          mass_transport_voltage=3.0e-5, mass_transport_exponent=8.0e-4)


def _finite(where: str, value: float, *, positive: bool = False, share: bool = False) -> float:
    value = float(value)
    ok = math.isfinite(value) and (value > 0.0 if positive or share else value >= 0.0)
    if share:
        ok = ok and value <= 1.0
    if not ok:
        raise InputError(where, "must be a share in (0, 1]" if share
                         else "must be a positive number" if positive else "must be a number >= 0")
    return value


@dataclass(frozen=True)
class PolarisationCurve:
    """Cell voltage against current density, the empirical curve of Larminie & Dicks.

    Parameters
    ----------
    open_circuit : float
        ``E``, the voltage the losses are taken from [V] (a little below the reversible
        1.229 V at 25 °C; 1.2 V for a PEM cell at about 70 °C).
    tafel_slope : float
        ``A``, slope of the activation (Tafel) loss [V].
    exchange_current_density : float
        ``i_0`` [A/m2].
    internal_current_density : float
        ``i_n``, fuel crossover and internal current, which makes the open-circuit voltage
        ``E - A ln(i_n / i_0)`` fall short of ``E`` [A/m2].
    area_resistance : float
        ``r``, area-specific resistance of membrane, electrodes and contacts [ohm m2].
    mass_transport_voltage : float
        ``m`` of the mass-transport (concentration) loss ``m exp(n i)`` [V].
    mass_transport_exponent : float
        ``n`` of that loss [m2/A].
    source : str
        Where the constants come from.
    """

    open_circuit: float
    tafel_slope: float
    exchange_current_density: float
    internal_current_density: float
    area_resistance: float
    mass_transport_voltage: float = 0.0
    mass_transport_exponent: float = 0.0
    source: str = "typical value, example"

    def __post_init__(self) -> None:
        _finite("open_circuit", self.open_circuit, positive=True)
        _finite("tafel_slope", self.tafel_slope)
        _finite("exchange_current_density", self.exchange_current_density, positive=True)
        _finite("internal_current_density", self.internal_current_density, positive=True)
        _finite("area_resistance", self.area_resistance)
        _finite("mass_transport_voltage", self.mass_transport_voltage)
        _finite("mass_transport_exponent", self.mass_transport_exponent)
        if self.area_resistance == 0.0 and self.mass_transport_voltage * \
                self.mass_transport_exponent == 0.0:
            raise InputError("polarisation curve", "needs an area resistance or a "
                                                   "mass-transport loss, or it never falls to 0 V")
        if not 0.0 < float(self.voltage(0.0)) <= self.open_circuit:
            raise InputError("polarisation curve", "the open-circuit voltage E - A ln(i_n/i_0) "
                                                   "must lie in (0, E]: raise E or i_0")

    @classmethod
    def larminie_dicks_pem(cls) -> PolarisationCurve:
        """:data:`LARMINIE_DICKS_PEM`."""
        return cls(**LARMINIE_DICKS_PEM, source="J. Larminie, A. Dicks, Fuel Cell Systems "
                   "Explained, 2nd ed., Wiley 2003, sect. 3.10, Table 3.3 (PEMFC; from memory)")

    def losses(self, current_density: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Activation, ohmic and mass-transport losses at a current density [V].

        Parameters
        ----------
        current_density : array_like
            Current over active area, >= 0 [A/m2].

        Returns
        -------
        tuple of numpy.ndarray
            ``A ln((i + i_n)/i_0)``, ``(i + i_n) r`` and ``m exp(n i)`` [V].
        """
        i = np.asarray(current_density, dtype=float)
        j = i + self.internal_current_density
        return (self.tafel_slope * np.log(j / self.exchange_current_density),
                j * self.area_resistance,
                self.mass_transport_voltage * np.exp(self.mass_transport_exponent * i))

    def voltage(self, current_density: ArrayLike) -> np.ndarray:
        """Cell voltage ``E - A ln((i + i_n)/i_0) - (i + i_n) r - m exp(n i)`` [V].

        Parameters
        ----------
        current_density : array_like
            Current over active area, >= 0 [A/m2].

        Returns
        -------
        numpy.ndarray
            Cell voltage [V] (negative beyond the curve's end: no real cell gets there).

        References
        ----------
        J. Larminie, A. Dicks, *Fuel Cell Systems Explained*, 2nd ed., Wiley 2003, ch. 3
        (eq. 3.18 with the mass-transport term of sect. 3.7).
        """
        act, ohm, conc = self.losses(current_density)
        return self.open_circuit - act - ohm - conc

    def slope(self, current_density: ArrayLike) -> np.ndarray:
        """dV/di [V m2/A]."""
        i = np.asarray(current_density, dtype=float)
        return (-self.tafel_slope / (i + self.internal_current_density) - self.area_resistance
                - self.mass_transport_voltage * self.mass_transport_exponent
                * np.exp(self.mass_transport_exponent * i))

    @property
    def zero_voltage_current_density(self) -> float:
        """Current density at which the cell voltage reaches 0 [A/m2]."""
        bounds = []
        if self.area_resistance > 0.0:
            bounds.append(self.open_circuit / self.area_resistance)
        if self.mass_transport_voltage * self.mass_transport_exponent > 0.0:
            bounds.append(math.log(self.open_circuit / self.mass_transport_voltage)
                          / self.mass_transport_exponent)
        return float(brentq(lambda i: float(self.voltage(i)), 0.0, min(bounds), xtol=1e-9))

    @property
    def max_power_current_density(self) -> float:
        """Current density of the highest power density ``i V(i)`` [A/m2]."""
        grid = np.linspace(0.0, self.zero_voltage_current_density, 4001)
        k = int(np.argmax(grid * self.voltage(grid)))
        lo, hi = grid[max(k - 1, 0)], grid[min(k + 1, grid.size - 1)]

        def dp(i: float) -> float:
            return float(self.voltage(i) + i * self.slope(i))

        return float(brentq(dp, lo, hi, xtol=1e-9)) if dp(lo) > 0.0 > dp(hi) else float(grid[k])

    def current_density_at(self, voltage: float) -> float:
        """Current density at which the cell runs at ``voltage`` on the rising-power side [A/m2].

        Raises
        ------
        InputError
            The voltage is above the open-circuit voltage or below the voltage of highest
            power (beyond it more current gives less power: no stack is rated there).
        """
        i_max = self.max_power_current_density
        v_oc, v_mp = float(self.voltage(0.0)), float(self.voltage(i_max))
        if not v_mp <= voltage < v_oc:
            raise InputError("rated_cell_voltage", f"must lie between {v_mp:.3f} V (the curve's "
                                                   f"highest power) and {v_oc:.3f} V (open "
                                                   "circuit)")
        return float(brentq(lambda i: float(self.voltage(i)) - voltage, 0.0, i_max, xtol=1e-9))


def reference_voltage(basis: str = "lhv") -> float:
    """Voltage equivalent of hydrogen's heating value, ``-Delta h / (2 F)`` [V].

    Parameters
    ----------
    basis : {"lhv", "hhv"}
        Lower heating value (product water as vapour, 1.253 V) or higher (liquid, 1.481 V).

    Returns
    -------
    float
        The heating value per kmol of the hydrogen fuel sheet (Cantera, 25 °C) over 2 F.

    Notes
    -----
    A cell at voltage ``V`` with fuel utilisation ``mu_f`` converts ``mu_f V / V_ref`` of the
    hydrogen's heating value into electricity (Larminie & Dicks, 2nd ed., sect. 2.5). The
    reversible 1.229 V (Gibbs energy, liquid water, 25 °C) is the voltage of no losses, not
    the reference of an efficiency: on it a perfect cell would read 100 %.
    """
    if basis not in ("lhv", "hhv"):
        raise InputError("basis", f"must be 'lhv' or 'hhv', got {basis!r}")
    sheet = fuel_sheet(HYDROGEN)
    return (sheet.lhv_mole if basis == "lhv" else sheet.hhv_mole) / (2.0 * FARADAY)


@dataclass(frozen=True, eq=False)
class SystemPoint:
    """A fuel-cell system at given net powers (arrays like the powers).

    Attributes
    ----------
    net_power : numpy.ndarray
        Net electric power to the DC bus [W].
    gross_power : numpy.ndarray
        Stack electric power, net plus balance of plant [W].
    current_density : numpy.ndarray
        Stack current over cell active area [A/m2].
    cell_voltage : numpy.ndarray
        [V].
    stack_current : numpy.ndarray
        Current through the cells in series [A].
    hydrogen_flow : numpy.ndarray
        Hydrogen drawn from the tank [kg/s].
    stack_efficiency : numpy.ndarray
        Gross power over the hydrogen's LHV flow, ``mu_f V / V_LHV`` [-].
    system_efficiency : numpy.ndarray
        Net power over the hydrogen's LHV flow [-].
    """

    net_power: np.ndarray
    gross_power: np.ndarray
    current_density: np.ndarray
    cell_voltage: np.ndarray
    stack_current: np.ndarray
    hydrogen_flow: np.ndarray
    stack_efficiency: np.ndarray
    system_efficiency: np.ndarray


@dataclass(frozen=True)
class FuelCellSystem:
    """A PEM fuel-cell system: stack on a polarisation curve and its balance of plant.

    Parameters
    ----------
    rated_power : float
        Net electric power at the rated point, the figure system makers quote [W].
    curve : PolarisationCurve
        The cells' polarisation curve (default :meth:`PolarisationCurve.larminie_dicks_pem`).
    rated_cell_voltage : float
        Cell voltage at the rated point [V]; sets the active area (lower: a smaller, cheaper
        stack that runs less efficiently). 0.6 V by default: the usual design point of
        automotive stacks, common practice, no source.
    cells : int
        Cells in series [-]; sets the stack's current and voltage, not its efficiency.
    fuel_utilisation : float
        Share of the hydrogen drawn that reacts (the rest is purged), ``mu_f`` [-].
    bop_base_share : float
        Balance-of-plant power drawn whenever the system runs, as a share of rated power [-].
    bop_load_share : float
        Balance-of-plant power that grows with load (mostly the air compressor), as a share
        of the gross stack power [-].
    specific_power : float
        Rated net power over system mass (stack, air and hydrogen supply, cooling, DC/DC)
        [W/kg].

    Notes
    -----
    ``P_gross = (P_net + b P_rated) / (1 - k)`` with ``b`` the base and ``k`` the load share;
    the active area is ``P_gross(P_rated) / (i_r V_r)`` with ``V(i_r) = V_r`` the rated cell
    voltage.
    """

    rated_power: float
    curve: PolarisationCurve = field(default_factory=PolarisationCurve.larminie_dicks_pem)
    rated_cell_voltage: float = 0.6
    cells: int = 300
    fuel_utilisation: float = 0.95
    bop_base_share: float = 0.01
    bop_load_share: float = 0.08
    specific_power: float = 650.0

    def __post_init__(self) -> None:
        _finite("rated_power", self.rated_power, positive=True)
        if not (isinstance(self.cells, int) and self.cells >= 1):
            raise InputError("cells", "must be a whole number of cells, at least 1")
        _finite("fuel_utilisation", self.fuel_utilisation, share=True)
        _finite("bop_base_share", self.bop_base_share)
        _finite("bop_load_share", self.bop_load_share)
        if self.bop_load_share >= 0.5:
            raise InputError("bop_load_share", "must be below 0.5 (a balance of plant that "
                                               "takes half the stack's power is not a design)")
        _finite("specific_power", self.specific_power, positive=True)
        _finite("rated_cell_voltage", self.rated_cell_voltage, positive=True)
        _ = self.rated_current_density  # refuses a rated voltage off the curve

    @cached_property
    def rated_current_density(self) -> float:
        """Current density at the rated point [A/m2]."""
        return self.curve.current_density_at(self.rated_cell_voltage)

    @property
    def rated_gross_power(self) -> float:
        """Stack power at the rated point [W]."""
        return float(self.gross_power(self.rated_power))

    @property
    def active_area(self) -> float:
        """Active area of all cells together [m2]."""
        return self.rated_gross_power / (self.rated_current_density * self.rated_cell_voltage)

    @property
    def mass(self) -> float:
        """System mass, ``rated_power / specific_power`` [kg]."""
        return self.rated_power / self.specific_power

    def gross_power(self, net_power: ArrayLike) -> np.ndarray:
        """Stack power for a net power, ``(P_net + b P_rated) / (1 - k)`` [W]."""
        return (np.asarray(net_power, dtype=float) + self.bop_base_share * self.rated_power) \
            / (1.0 - self.bop_load_share)

    def operate(self, net_power: ArrayLike) -> SystemPoint:
        """The system delivering net powers between 0 and the rated power.

        Parameters
        ----------
        net_power : array_like
            Net electric power to the DC bus, in [0, rated_power] [W]. At 0 the system idles
            and still feeds its base balance of plant.

        Returns
        -------
        SystemPoint

        Raises
        ------
        InputError
            A power below 0 or above the rated power (the buffer battery takes those).

        Notes
        -----
        The current density solves ``A_act i V(i) = P_gross`` on the rising-power side of the
        curve (interpolated on a table, then Newton steps to round-off); the hydrogen flow is
        Faraday's law over the cells in series, ``I N M_H2 / (2 F mu_f)``.
        """
        p = np.asarray(net_power, dtype=float)
        if not np.all(np.isfinite(p)) or np.any(p < 0.0) or \
                np.any(p > self.rated_power * (1.0 + 1e-12)):
            raise InputError("net power", f"must be between 0 and the rated "
                                          f"{self.rated_power / 1e3:g} kW")
        gross = self.gross_power(p)
        area = self.active_area
        grid = np.linspace(0.0, self.rated_current_density, 513)
        i = np.interp(gross / area, grid * self.curve.voltage(grid), grid)
        for _ in range(4):  # Newton on A i V(i) - P, from a close start
            v = self.curve.voltage(i)
            i = i - (i * v - gross / area) / (v + i * self.curve.slope(i))
        v = self.curve.voltage(i)
        sheet = fuel_sheet(HYDROGEN)
        current = i * area / self.cells
        flow = current * self.cells * sheet.molar_mass / (2.0 * FARADAY * self.fuel_utilisation)
        heat = flow * sheet.lhv_mass
        return SystemPoint(net_power=p, gross_power=gross, current_density=i, cell_voltage=v,
                           stack_current=current, hydrogen_flow=flow,
                           stack_efficiency=gross / heat, system_efficiency=p / heat)

    def efficiency_table(self, points: int = 21) -> pd.DataFrame:
        """Efficiencies against load, for a chart or a check.

        Parameters
        ----------
        points : int
            Loads from 0 to 1 of rated net power.

        Returns
        -------
        pandas.DataFrame
            ``load``, ``net_power_w``, ``gross_power_w``, ``cell_voltage_v``,
            ``current_density_a_per_m2``, ``hydrogen_flow_kg_per_s``, ``stack_efficiency``,
            ``system_efficiency`` (LHV).
        """
        load = np.linspace(0.0, 1.0, points)
        op = self.operate(load * self.rated_power)
        return pd.DataFrame({
            "load": load, "net_power_w": op.net_power, "gross_power_w": op.gross_power,
            "cell_voltage_v": op.cell_voltage, "current_density_a_per_m2": op.current_density,
            "hydrogen_flow_kg_per_s": op.hydrogen_flow, "stack_efficiency": op.stack_efficiency,
            "system_efficiency": op.system_efficiency})


#: Pack figures of a buffer battery: high-power cells in a narrow window (depth of discharge
#: 0.5, 80 % health at end of life, 80 Wh/kg at pack level): typical value, example.
BUFFER_PACK = BatteryPack(depth_of_discharge=0.5, end_of_life_health=0.8,
                          specific_energy=80.0 * J_PER_KWH / 1e3)


@dataclass(frozen=True)
class BufferBattery:
    """The small battery beside the fuel cell: takes regeneration and the peaks.

    Parameters
    ----------
    capacity : float
        Nameplate capacity [J].
    power : float
        Highest charge or discharge power at its terminals [W].
    round_trip_efficiency : float
        Energy out over energy in, charge and discharge together [-].
    pack : BatteryPack
        Usable window (depth of discharge, end-of-life health) and specific energy
        (:data:`BUFFER_PACK` by default).
    """

    capacity: float
    power: float
    round_trip_efficiency: float = 0.90
    pack: BatteryPack = field(default_factory=lambda: BUFFER_PACK)

    def __post_init__(self) -> None:
        _finite("buffer capacity", self.capacity, positive=True)
        _finite("buffer power", self.power, positive=True)
        _finite("round_trip_efficiency", self.round_trip_efficiency, share=True)

    @property
    def usable(self) -> float:
        """Energy window at the end of its life, ``capacity DoD SOH_end`` [J]."""
        return self.capacity * self.pack.depth_of_discharge * self.pack.end_of_life_health

    @property
    def mass(self) -> float:
        """``capacity / specific_energy`` [kg]."""
        return self.capacity / self.pack.specific_energy


@dataclass(frozen=True, eq=False)
class HydrogenUse:
    """Hydrogen and energy flows of a fuel-cell drive over a trace (extra idling included).

    Attributes
    ----------
    drive : DriveEnergy
        The DC bus demand (:func:`workbench.models.electric.drive_energy`).
    hydrogen : float
        Hydrogen drawn from the tank [kg].
    fuel_cell_energy : float
        Net energy the fuel cell delivers to the bus, charge correction included [J].
    battery_out : float
        Energy the buffer delivers for peaks above the fuel cell's rated power [J].
    battery_in : float
        Regenerated energy the buffer takes [J].
    regen_lost : float
        Regenerated energy beyond the buffer's power, left to the friction brakes [J].
    correction : float
        Fuel-cell energy at the bus that brings the buffer back to its starting charge,
        negative when regeneration left a surplus that replaced fuel-cell energy [J].
    buffer_swing : float
        Range of the buffer's charge over the trace, correction spread evenly [J].
    buffer_fits : bool
        ``buffer_swing`` fits the usable window.
    over_power_time : float
        Time the demand above the fuel cell exceeds the buffer's power [s] (energy counted).
    mean_efficiency : float
        Net fuel-cell energy over the hydrogen's LHV on the trace [-].
    """

    drive: DriveEnergy
    hydrogen: float
    fuel_cell_energy: float
    battery_out: float
    battery_in: float
    regen_lost: float
    correction: float
    buffer_swing: float
    buffer_fits: bool
    over_power_time: float
    mean_efficiency: float

    @property
    def hydrogen_per_m(self) -> float:
        """Hydrogen per distance [kg/m]."""
        return self.hydrogen / self.drive.distance

    @property
    def energy_per_m(self) -> float:
        """Hydrogen energy (LHV) per distance [J/m]."""
        return self.hydrogen_per_m * fuel_sheet(HYDROGEN).lhv_mass


def hydrogen_use(vehicle: Vehicle, trace: DutyTrace, drive: ElectricDrive,
                 system: FuelCellSystem, buffer: BufferBattery, *,
                 settings: DutySettings | None = None) -> HydrogenUse:
    """Hydrogen a fuel-cell vehicle draws over a speed trace.

    Parameters
    ----------
    vehicle : Vehicle
        Road-load parameters of the fuel-cell vehicle (its mass with stack, tank and buffer;
        see :func:`size_fuel_cell_vehicle`).
    trace : DutyTrace
        The duty.
    drive : ElectricDrive
        Motor, reducer, regeneration share, heating or cooling (its ``charging_efficiency``
        is not used: nothing is charged from the grid).
    system : FuelCellSystem
        The fuel-cell system.
    buffer : BufferBattery
        The buffer battery.
    settings : DutySettings, optional
        As for :func:`~workbench.models.electric.drive_energy`; during the extra idling the
        fuel cell feeds the accessories.

    Returns
    -------
    HydrogenUse

    Notes
    -----
    Per interval with DC demand ``d`` (negative when regenerating) and rated net power
    ``P_fc``: the fuel cell gives ``min(max(d, 0), P_fc)``, the buffer ``max(d - P_fc, 0)``
    and takes ``min(max(-d, 0), P_b)``. The fuel cell runs all the service time (at zero net
    power it still feeds its base balance of plant). Charge-sustaining: with ``E_out`` and
    ``E_in`` the buffer's totals and ``eta`` its round trip, the fuel cell owes
    ``E_out / eta - E_in`` when positive; a negative balance is a surplus that delivers
    ``eta`` times its magnitude in place of fuel-cell energy. That correction is charged at
    the trace's mean system efficiency (a closed form, common practice for charge-sustaining
    hybrids, no source).
    """
    energy = drive_energy(vehicle, trace, drive, settings=settings)
    dt = np.diff(trace.time)
    d = energy.dc_power
    p_fc = system.rated_power
    fc = np.clip(d, 0.0, p_fc)
    out = np.maximum(d - p_fc, 0.0)
    regen = np.maximum(-d, 0.0)
    taken = np.minimum(regen, buffer.power)
    op = system.operate(fc)
    h2_trace = float(np.sum(op.hydrogen_flow * dt))
    fc_trace = float(np.sum(fc * dt))
    eta = buffer.round_trip_efficiency
    e_out, e_in = float(np.sum(out * dt)), float(np.sum(taken * dt))
    owed = e_out / eta - e_in
    correction = owed if owed >= 0.0 else eta * owed
    trace_time = float(np.sum(dt))
    extra = energy.duration - trace_time
    hydrogen, fc_energy = h2_trace, fc_trace
    if extra > 0.0:  # the accessories during extra idling (drive_energy's totals, per second)
        idle = (energy.accessory_dc - (float(np.sum(d * dt)) - energy.traction_dc
                                       + energy.regen_dc)) / extra
        idle_point = system.operate(min(idle, p_fc))
        hydrogen += float(idle_point.hydrogen_flow) * extra
        fc_energy += min(idle, p_fc) * extra
    lhv = fuel_sheet(HYDROGEN).lhv_mass
    mean_eff = fc_energy / (hydrogen * lhv)
    correction = max(correction, -fc_energy)
    hydrogen += correction / (mean_eff * lhv)
    fc_energy += correction
    half = math.sqrt(eta)  # each way of the round trip
    swing = np.concatenate(([0.0], np.cumsum((taken * half - out / half) * dt)))
    swing -= swing[-1] * np.concatenate(([0.0], np.cumsum(dt))) / trace_time
    buffer_swing = float(np.max(swing) - np.min(swing))
    return HydrogenUse(
        drive=energy, hydrogen=hydrogen, fuel_cell_energy=fc_energy, battery_out=e_out,
        battery_in=e_in, regen_lost=float(np.sum((regen - taken) * dt)), correction=correction,
        buffer_swing=buffer_swing, buffer_fits=buffer_swing <= buffer.usable,
        over_power_time=float(np.sum(np.where(out > buffer.power, dt, 0.0))),
        mean_efficiency=mean_eff)


@dataclass(frozen=True)
class FuelCellSizing:
    """A fuel-cell vehicle with its tank sized for a range.

    Attributes
    ----------
    use : HydrogenUse
        Hydrogen over the duty with everything on board.
    tank : TankSystem
        Hydrogen tank for the range (usable hydrogen, water volume, mass, envelope).
    added_mass : float
        Fuel-cell system, buffer and full tank less the powertrain mass saved [kg].
    vehicle : Vehicle
        The vehicle with ``added_mass`` in its mass.
    """

    use: HydrogenUse
    tank: TankSystem
    added_mass: float
    vehicle: Vehicle


def size_fuel_cell_vehicle(vehicle: Vehicle, trace: DutyTrace, drive: ElectricDrive,
                           system: FuelCellSystem, buffer: BufferBattery, range_m: float, *,
                           pressure: float = 700e5, mass_saved: float = 0.0,
                           tank: str | None = None, settings: DutySettings | None = None,
                           tolerance: float = 1e-3, max_iterations: int = 50) -> FuelCellSizing:
    """Hydrogen per km and the tank for a range, the vehicle carrying its tank.

    Parameters
    ----------
    vehicle : Vehicle
        The vehicle the fuel-cell one replaces (its mass without the new powertrain).
    trace : DutyTrace
        The duty.
    drive : ElectricDrive
        Motor, reducer, regeneration, heating or cooling.
    system : FuelCellSystem
        The fuel-cell system.
    buffer : BufferBattery
        The buffer battery.
    range_m : float
        Distance between fills [m].
    pressure : float
        Nominal storage pressure at 15 °C, absolute [Pa] (350 or 700 bar).
    mass_saved : float
        Combustion powertrain mass (engine, gearbox, tank, fuel) less the electric motor and
        its electronics [kg].
    tank : str, optional
        A :data:`workbench.models.storage.TANK_TYPES` id; the default for the pressure.
    settings : DutySettings, optional
        As for :func:`hydrogen_use`.
    tolerance : float
        Stop when the added mass changes by less than this [kg].
    max_iterations : int
        Give up (InputError) after this many steps.

    Returns
    -------
    FuelCellSizing

    Notes
    -----
    Fixed point of ``m_a = m_fc + m_b + m_tank(R h(m0 + m_a - m_s)) - m_s`` with ``h`` the
    hydrogen per metre (affine in mass) and the tank the compressed-gas model at the storage
    pressure (:func:`workbench.models.storage.tank_for_range`, CoolProp).
    """
    _finite("range", range_m, positive=True)
    _finite("mass_saved", mass_saved)
    if mass_saved >= vehicle.mass:
        raise InputError("mass_saved", f"must be below the vehicle's mass {vehicle.mass:g} kg")
    state = stored_state(HYDROGEN, kind="compressed", pressure=pressure)
    fixed = system.mass + buffer.mass - mass_saved
    added = fixed
    for _ in range(max_iterations):
        fcv = replace(vehicle, mass=vehicle.mass + added)
        use = hydrogen_use(fcv, trace, drive, system, buffer, settings=settings)
        tanks = tank_for_range(state, range_m, use.energy_per_m, tank=tank)
        new = fixed + float(tanks.system_mass)
        if not math.isfinite(new) or new > 10.0 * vehicle.mass:
            break
        if abs(new - added) < tolerance:
            return FuelCellSizing(use=use, tank=tanks, added_mass=new,
                                  vehicle=replace(vehicle, mass=vehicle.mass + new))
        added = new
    raise InputError("range", f"no hydrogen tank carries itself over {range_m / 1e3:g} km on "
                              "this duty: shorten the range")


@dataclass(frozen=True)
class HydrogenPathway:
    """How a kilogram of hydrogen was made, and the CO2e of making it.

    Attributes
    ----------
    id : str
        Short id (``"grey-smr"``).
    name : str
        Description.
    co2e_per_kg : float
        Central CO2e of production to the plant gate, GWP-100 [kg CO2e/kg H2].
    low, high : float
        Range of published estimates [kg CO2e/kg H2].
    source : str
        Where the figures come from.
    """

    id: str
    name: str
    co2e_per_kg: float
    low: float
    high: float
    source: str

    def upstream_co2e_per_j(self) -> float:
        """CO2e per J of hydrogen (LHV), what a study's upstream factor is [kg/J]."""
        return self.co2e_per_kg / fuel_sheet(HYDROGEN).lhv_mass


def electrolysis_co2e(electricity_per_kg: float, electricity_co2e_per_j: float) -> float:
    """CO2e of electrolytic hydrogen from its electricity [kg CO2e/kg H2].

    Parameters
    ----------
    electricity_per_kg : float
        Electricity the electrolysis plant takes per kg of hydrogen (stack, rectifier, water
        treatment) [J/kg]; about 52 kWh/kg today (typical value, example), against the
        39.4 kWh/kg of hydrogen's HHV.
    electricity_co2e_per_j : float
        Life-cycle CO2e of the electricity [kg/J].

    Returns
    -------
    float
        ``e_el x c_el``; compression and delivery are not included.
    """
    _finite("electricity_per_kg", electricity_per_kg, positive=True)
    _finite("electricity_co2e_per_j", electricity_co2e_per_j)
    return electricity_per_kg * electricity_co2e_per_j


#: Electricity of a PEM or alkaline electrolysis plant per kg of hydrogen [J/kg]: 52 kWh/kg,
#: typical value, example (published plants quote 50-55 kWh/kg at the system boundary).
ELECTROLYSIS_ENERGY = 52.0 * J_PER_KWH
#: Life-cycle CO2e of onshore wind and of utility-scale solar electricity [kg/J]: IPCC AR5
#: WGIII (2014), Annex III, Table A.III.2 medians 11 and 48 g CO2e/kWh (from memory).
WIND_CO2E, SOLAR_CO2E = 0.011 / J_PER_KWH, 0.048 / J_PER_KWH

#: Hydrogen production pathways, by id. Figures from memory; use a certified figure of the
#: supplier (a guarantee of origin) for a study.
HYDROGEN_PATHWAYS: dict[str, HydrogenPathway] = {p.id: p for p in (
    HydrogenPathway(
        "grey-smr", "Steam methane reforming of natural gas, no capture", 11.0, 10.0, 13.0,
        "IEA, Towards hydrogen definitions based on their emissions intensity (2023), about "
        "10-13 with the gas's upstream methane at today's rates (from memory)"),
    HydrogenPathway(
        "blue-smr-ccs", "Steam methane reforming with carbon capture and storage", 3.0, 0.8,
        6.0, "IEA (2023) 0.8-4.6 at high capture (over 90 %) and low upstream methane; capture "
             "of the process CO2 only (about 55-60 %) gives about 5-6 (from memory)"),
    HydrogenPathway(
        "green-electrolysis", "Electrolysis on wind or solar electricity",
        electrolysis_co2e(ELECTROLYSIS_ENERGY, WIND_CO2E),
        electrolysis_co2e(ELECTROLYSIS_ENERGY, WIND_CO2E),
        electrolysis_co2e(ELECTROLYSIS_ENERGY, SOLAR_CO2E),
        "52 kWh/kg (typical value, example) at the life-cycle CO2e of wind (11 g/kWh) to "
        "solar (48 g/kWh), IPCC AR5 WGIII Annex III medians (from memory)"),
)}


def hydrogen_pathway(pathway: str) -> HydrogenPathway:
    """A :data:`HYDROGEN_PATHWAYS` entry by id.

    Raises
    ------
    InputError
        An unknown id (the message lists the known ones).
    """
    if pathway not in HYDROGEN_PATHWAYS:
        raise InputError("pathway", f"unknown hydrogen pathway {pathway!r}; pick one of "
                                    f"{', '.join(HYDROGEN_PATHWAYS)}")
    return HYDROGEN_PATHWAYS[pathway]


def pathway_table() -> pd.DataFrame:
    """The pathways as a table.

    Returns
    -------
    pandas.DataFrame
        ``pathway``, ``name``, ``co2e_kg_per_kg``, ``low_kg_per_kg``, ``high_kg_per_kg``,
        ``co2e_g_per_mj`` (per MJ of LHV) and ``source``.
    """
    lhv = fuel_sheet(HYDROGEN).lhv_mass
    return pd.DataFrame([{
        "pathway": p.id, "name": p.name, "co2e_kg_per_kg": p.co2e_per_kg,
        "low_kg_per_kg": p.low, "high_kg_per_kg": p.high,
        "co2e_g_per_mj": p.co2e_per_kg / lhv * 1e9, "source": p.source,
    } for p in HYDROGEN_PATHWAYS.values()])
