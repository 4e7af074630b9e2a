"""Tests of workbench.models.fuelcell against Faraday's law, the published polarisation curve,
the hydrogen equation of state and closed forms of the buffer's energy balance."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.models import storage
from workbench.models.duty import DutySettings, DutyTrace
from workbench.models.electric import EfficiencyCurve, ElectricDrive, drive_energy
from workbench.models.fuelcell import (
    HYDROGEN_PATHWAYS,
    BufferBattery,
    FuelCellSystem,
    PolarisationCurve,
    electrolysis_co2e,
    hydrogen_pathway,
    hydrogen_use,
    pathway_table,
    reference_voltage,
    size_fuel_cell_vehicle,
)
from workbench.models.vehicle import Vehicle

KWH = 3.6e6  # J per kWh, exact
# Faraday constant N_A e [C/mol], exact since the 2019 SI (SI Brochure, 9th ed., Table 1).
F_MOL = 6.02214076e23 * 1.602176634e-19
M_H2 = 2 * 1.008  # g/mol, IUPAC standard atomic weight of H 1.008 (conventional value)


def car(**changes) -> Vehicle:
    base = Vehicle(name="test", mass=1800.0, payload=0.0, frontal_area=2.3,
                   drag_coefficient=0.30, rolling_resistance=0.010, driveline_efficiency=0.90,
                   wheel_radius=0.30, gear_ratios=(1.0,), final_drive=9.0,
                   shift_speed=100 * math.pi / 30, max_engine_speed=12000 * math.pi / 30,
                   air_density=1.2, rotating_mass_factor=1.05)
    return replace(base, **changes)


def motor(**changes) -> ElectricDrive:
    base = ElectricDrive(motor_power=100e3, motor_efficiency=EfficiencyCurve.constant(0.90),
                         reducer_efficiency=0.97, regen_share=0.6, regen_min_speed=0.0)
    return replace(base, **changes)


def system(**changes) -> FuelCellSystem:
    return FuelCellSystem(**{"rated_power": 60e3, **changes})


def buffer(**changes) -> BufferBattery:
    return BufferBattery(**{"capacity": 1.5 * KWH, "power": 40e3, **changes})


def trace(speed) -> DutyTrace:
    speed = np.asarray(speed, dtype=float)
    return DutyTrace(time=np.arange(speed.size, dtype=float), speed=speed)


# --- the cell ---------------------------------------------------------------------------------

def test_polarisation_curve_is_the_books_equation_in_its_own_units():
    # Larminie & Dicks, Fuel Cell Systems Explained, 2nd ed. (2003), eq. 3.18 with Table 3.3's
    # PEMFC constants (from memory): V = E - (i + i_n) r - A ln((i + i_n)/i_0) - m exp(n i),
    # i in mA/cm2, r in kOhm cm2. Evaluated here in the book's units, apart from the SI the
    # model works in, so the unit conversion is checked too (round-off only).
    curve = PolarisationCurve.larminie_dicks_pem()
    for i_ma in (0.0, 100.0, 500.0, 900.0):
        book = (1.2 - (i_ma + 2) * 30e-6 - 0.06 * math.log((i_ma + 2) / 0.067)
                - 3e-5 * math.exp(8e-3 * i_ma))
        assert_allclose(curve.voltage(i_ma * 10.0), book, rtol=1e-12)  # 1 mA/cm2 = 10 A/m2


def test_polarisation_curve_has_the_published_shape():
    # Larminie & Dicks, 2nd ed., sect. 3.1-3.10: a hydrogen PEM cell's open-circuit voltage is
    # below 1.0 V (crossover, i_n) against the reversible 1.229 V; activation dominates the
    # losses at low current, the mass-transport loss at high current; cells are run at
    # 0.6-0.7 V (common practice, no source).
    curve = PolarisationCurve.larminie_dicks_pem()
    assert 0.9 < float(curve.voltage(0.0)) < 1.0 < 1.229
    act, ohm, conc = curve.losses(np.array([1000.0, 11000.0]))
    assert act[0] > 10 * ohm[0] and act[0] > 100 * conc[0]
    assert conc[1] > ohm[1]
    i = np.linspace(0.0, 12000.0, 200)
    assert np.all(np.diff(curve.voltage(i)) < 0.0)
    assert_allclose(float(curve.voltage(curve.zero_voltage_current_density)), 0.0, atol=1e-8)
    # The power peak: d(i V)/di = V + i dV/di = 0 there (central difference of the power).
    i_mp, h = curve.max_power_current_density, 1e-3
    dp = ((i_mp + h) * curve.voltage(i_mp + h) - (i_mp - h) * curve.voltage(i_mp - h)) / (2 * h)
    assert abs(float(dp)) < 1e-6
    assert 0.5 < float(curve.voltage(i_mp)) < 0.6
    assert_allclose(float(curve.voltage(curve.current_density_at(0.65))), 0.65, rtol=1e-9)


def test_reference_voltages_are_the_heating_values_over_2f():
    # -Delta_f h of H2O at 25 °C: 241.826 kJ/mol as vapour, 285.830 kJ/mol as liquid (CODATA key
    # values, NIST-JANAF; from memory). Larminie & Dicks, 2nd ed., sect. 2.5, print 1.25 V (LHV)
    # and 1.48 V (HHV). The fuel sheet's NASA-polynomial enthalpies agree to about 1e-5.
    assert_allclose(reference_voltage("lhv"), 241826.0 / (2 * F_MOL), rtol=1e-4)
    assert_allclose(reference_voltage("hhv"), 285830.0 / (2 * F_MOL), rtol=1e-4)
    assert round(reference_voltage("lhv"), 2) == 1.25 and round(reference_voltage("hhv"), 2) == 1.48


# --- the system -------------------------------------------------------------------------------

def test_hydrogen_flow_is_faradays_law():
    # Faraday's law: N cells in series passing I take N I / (2 F) mol/s of H2 (two electrons
    # per molecule), over the fuel utilisation mu_f (Larminie & Dicks, 2nd ed., Appendix 2).
    fc = system(fuel_utilisation=1.0)
    op = fc.operate(np.array([0.0, 15e3, 60e3]))
    mol_per_s = op.stack_current * fc.cells / (2 * F_MOL)
    assert_allclose(op.hydrogen_flow, mol_per_s * M_H2 / 1e3, rtol=1e-12)
    # The book's form: m_H2 = 1.05e-8 P_e / V_c kg/s (Appendix 2, eq. A2.9; printed to three
    # figures from M = 2.02 g/mol, so 0.5 % apart from 2.016/(2 F)).
    assert_allclose(op.hydrogen_flow * op.cell_voltage / op.gross_power, 1.05e-8, rtol=6e-3)
    # With a utilisation below 1 the purged share is drawn as well.
    lean = system(fuel_utilisation=0.95).operate(15e3)
    assert_allclose(lean.hydrogen_flow, op.hydrogen_flow[1] / 0.95, rtol=1e-12)


def test_operating_point_closes_the_power_balance():
    # P_gross = (P_net + b P_rated) / (1 - k); A_act i V(i) = P_gross; eta_stack = mu_f V/V_LHV
    # (Larminie & Dicks, 2nd ed., sect. 2.5); eta_system = eta_stack P_net / P_gross.
    fc = system(bop_base_share=0.02, bop_load_share=0.10, fuel_utilisation=0.97)
    net = np.linspace(0.0, 60e3, 13)
    op = fc.operate(net)
    assert_allclose(op.gross_power, (net + 0.02 * 60e3) / 0.90, rtol=1e-15)
    assert_allclose(fc.active_area * op.current_density * op.cell_voltage, op.gross_power,
                    rtol=1e-12)  # Newton to round-off
    assert_allclose(op.stack_efficiency, 0.97 * op.cell_voltage / reference_voltage(), rtol=1e-12)
    assert_allclose(op.system_efficiency, op.stack_efficiency * net / op.gross_power, rtol=1e-12)
    assert_allclose(op.cell_voltage[-1], fc.rated_cell_voltage, rtol=1e-9)
    # Stack efficiency falls with load (the curve falls); the system's rises from 0 at idle
    # (the base balance of plant), peaks at part load and falls to the rated point.
    assert np.all(np.diff(op.stack_efficiency) < 0.0)
    peak = int(np.argmax(op.system_efficiency))
    assert op.system_efficiency[0] == 0.0 and 0 < peak < net.size - 1
    table = fc.efficiency_table(5)
    assert list(table["load"]) == [0.0, 0.25, 0.5, 0.75, 1.0]
    assert_allclose(fc.mass, 60e3 / 650.0, rtol=1e-15)


def test_scalar_and_array_powers_agree():
    fc = system()
    arr = fc.operate(np.array([5e3, 30e3]))
    for k, p in enumerate((5e3, 30e3)):
        assert_allclose(fc.operate(p).hydrogen_flow, arr.hydrogen_flow[k], rtol=1e-12)


# --- the drive with its buffer ----------------------------------------------------------------

def test_steady_demand_below_the_rating_is_all_fuel_cell():
    # At constant speed the DC demand is constant and below the rating: the buffer does
    # nothing and the hydrogen is the system's flow at that power times the time.
    tr = trace(np.full(61, 20.0))
    use = hydrogen_use(car(), tr, motor(), system(), buffer())
    dc = drive_energy(car(), tr, motor()).dc_power[0]
    flow = float(system().operate(dc).hydrogen_flow)
    assert_allclose(use.hydrogen, flow * 60.0, rtol=1e-12)
    assert use.battery_out == use.battery_in == use.correction == use.buffer_swing == 0.0
    assert_allclose(use.hydrogen_per_m, flow * 60.0 / 1200.0, rtol=1e-12)
    assert_allclose(use.mean_efficiency, float(system().operate(dc).system_efficiency),
                    rtol=1e-12)


def test_peaks_above_the_rating_are_owed_back_through_the_round_trip():
    # A small fuel cell on a hard acceleration: the buffer delivers E_out above the rating;
    # charge-sustaining, the fuel cell owes E_out / eta - E_in at the trace's mean efficiency.
    tr = trace(np.linspace(0.0, 25.0, 11))
    fc, buf = system(rated_power=20e3), buffer(power=200e3, round_trip_efficiency=0.9)
    use = hydrogen_use(car(), tr, motor(), fc, buf)
    d = drive_energy(car(), tr, motor()).dc_power
    e_out = float(np.sum(np.maximum(d - 20e3, 0.0)))
    assert_allclose(use.battery_out, e_out, rtol=1e-12)
    assert_allclose(use.correction, e_out / 0.9, rtol=1e-12)
    direct = float(np.sum(fc.operate(np.minimum(d, 20e3)).hydrogen_flow))
    lhv = use.energy_per_m / use.hydrogen_per_m
    eta = float(np.sum(np.minimum(d, 20e3))) / (direct * lhv)
    assert_allclose(use.hydrogen, direct + e_out / 0.9 / (eta * lhv), rtol=1e-12)


def test_regenerated_surplus_replaces_fuel_cell_energy_and_the_buffer_power_caps_it():
    # Cruise, then brake to rest: the buffer takes the regeneration (E_in); the surplus
    # delivers eta E_in in place of fuel-cell energy. A buffer of lower power takes only its
    # power; the rest goes to the friction brakes.
    speed = np.concatenate((np.full(30, 20.0), np.linspace(20.0, 0.0, 11)[1:]))
    tr = trace(speed)
    d = drive_energy(car(), tr, motor()).dc_power
    regen = np.maximum(-d, 0.0)
    use = hydrogen_use(car(), tr, motor(), system(), buffer(power=200e3))
    assert_allclose(use.battery_in, regen.sum(), rtol=1e-12)
    assert_allclose(use.correction, -0.9 * regen.sum(), rtol=1e-12)
    assert use.regen_lost == 0.0
    capped = hydrogen_use(car(), tr, motor(), system(), buffer(power=10e3))
    assert_allclose(capped.battery_in, np.minimum(regen, 10e3).sum(), rtol=1e-12)
    assert_allclose(capped.regen_lost, regen.sum() - capped.battery_in, rtol=1e-12)
    assert capped.hydrogen > use.hydrogen
    # A stronger regeneration share saves hydrogen.
    weak = hydrogen_use(car(), tr, motor(regen_share=0.2), system(), buffer(power=200e3))
    assert weak.hydrogen > use.hydrogen


def test_buffer_window_and_over_power_are_flagged():
    tr = trace(np.linspace(0.0, 30.0, 11))
    use = hydrogen_use(car(), tr, motor(), system(rated_power=10e3),
                       buffer(capacity=0.01 * KWH, power=20e3))
    assert not use.buffer_fits and use.buffer_swing > 0.0 and use.over_power_time > 0.0


def test_extra_idling_feeds_the_accessories():
    # With a share s of extra idle time the fuel cell feeds the accessories P_acc over
    # T s / (1 - s) more seconds, at its flow for P_acc.
    tr = trace(np.full(61, 15.0))
    settings = DutySettings(accessory_power=1500.0, extra_idle_share=0.2)
    base = hydrogen_use(car(), tr, motor(), system(), buffer(), settings=DutySettings(
        accessory_power=1500.0))
    idle = hydrogen_use(car(), tr, motor(), system(), buffer(), settings=settings)
    extra = 60.0 * 0.2 / 0.8
    assert_allclose(idle.hydrogen - base.hydrogen,
                    float(system().operate(1500.0).hydrogen_flow) * extra, rtol=1e-9)


# --- the tank ---------------------------------------------------------------------------------

@pytest.mark.parametrize(("bar", "g_per_l"), [(350, 24.0), (700, 40.2)])
def test_hydrogen_density_at_nominal_pressures(bar, g_per_l):
    # SAE J2601 (2016) takes 100 % state of charge as 24.0 g/L at 35 MPa and 40.2 g/L at
    # 70 MPa, both at 15 °C (from memory): densities of the NIST equation of state for normal
    # hydrogen (Leachman et al., J. Phys. Chem. Ref. Data 38 (2009) 721), which CoolProp
    # implements. 0.3 %: the printed three figures and gauge against absolute pressure (0.1 MPa).
    state = storage.stored_state("hydrogen", kind="compressed", pressure=bar * 1e5,
                                 temperature=288.15)
    assert_allclose(state.density, g_per_l, rtol=3e-3)


def test_tank_for_the_range_carries_itself():
    veh, tr = car(), trace(np.concatenate((np.linspace(0, 20, 11), np.full(50, 20.0),
                                           np.linspace(20, 0, 11)[1:])))
    fc, buf = system(), buffer()
    sizes = {}
    for bar in (350, 700):
        s = size_fuel_cell_vehicle(veh, tr, motor(), fc, buf, 500e3, pressure=bar * 1e5,
                                   mass_saved=150.0)
        # Usable hydrogen covers the range; the vehicle carries stack, buffer and full tank.
        assert_allclose(s.tank.usable_fuel_mass, 500e3 * s.use.hydrogen_per_m, rtol=1e-9)
        assert_allclose(s.added_mass, fc.mass + buf.mass + s.tank.system_mass - 150.0,
                        atol=2e-3)  # the iteration's tolerance, 1e-3 kg, and one more step
        assert_allclose(s.vehicle.mass, veh.mass + s.added_mass, rtol=1e-15)
        assert s.tank.tank.id == f"h2-type4-{bar}"
        sizes[bar] = s
    assert sizes[700].tank.tank_volume < sizes[350].tank.tank_volume
    # A passenger car's order of magnitude: about 1 kg H2 per 100 km (common practice, no
    # source); the invented test car is close.
    assert 0.5 < sizes[700].use.hydrogen_per_m * 1e5 < 1.5


# --- the pathways -----------------------------------------------------------------------------

def test_pathways_against_stoichiometry_and_the_low_carbon_threshold():
    # CH4 + 2 H2O -> CO2 + 4 H2: reforming alone gives 44.009 / (4 x 2.016) = 5.46 kg CO2 per
    # kg H2 (IUPAC atomic weights); the plant's firing and the gas's upstream methane add to it.
    assert HYDROGEN_PATHWAYS["grey-smr"].low > (12.011 + 2 * 15.999) / (4 * M_H2)
    # EU low-carbon hydrogen: 70 % below the fossil comparator of 94 g CO2e/MJ, 28.2 g/MJ
    # (Directive (EU) 2018/2001 and Delegated Regulation (EU) 2023/1185; from memory).
    table = pathway_table().set_index("pathway")
    assert table.loc["grey-smr", "co2e_g_per_mj"] > 0.3 * 94.0 > table.loc[
        "green-electrolysis", "co2e_g_per_mj"]
    for p in HYDROGEN_PATHWAYS.values():
        assert p.low <= p.co2e_per_kg <= p.high and p.source
    assert_allclose(table["co2e_g_per_mj"], table["co2e_kg_per_kg"] / 119.95 * 1e3, rtol=1e-3)
    # Electrolysis: electricity per kg times its CO2e (closed form): 52 kWh at 11 g/kWh.
    assert_allclose(electrolysis_co2e(52 * KWH, 0.011 / KWH), 0.572, rtol=1e-12)
    assert_allclose(hydrogen_pathway("grey-smr").upstream_co2e_per_j(),
                    11.0 / 119.95e6, rtol=1e-3)


# --- bad inputs -------------------------------------------------------------------------------

@pytest.mark.parametrize(("make", "where"), [
    (lambda: system(rated_power=-1.0), "rated_power"),
    (lambda: system(rated_power=math.nan), "rated_power"),
    (lambda: system(rated_cell_voltage=0.3), "rated_cell_voltage"),
    (lambda: system(rated_cell_voltage=1.1), "rated_cell_voltage"),
    (lambda: system(fuel_utilisation=1.2), "fuel_utilisation"),
    (lambda: system(bop_load_share=0.6), "bop_load_share"),
    (lambda: system(cells=0), "cells"),
    (lambda: system().operate(-5.0), "net power"),
    (lambda: system().operate(61e3), "net power"),
    (lambda: PolarisationCurve(1.2, 0.06, 0.67, 20.0, 0.0), "polarisation curve"),
    (lambda: PolarisationCurve(0.1, 0.06, 0.067, 20.0, 3e-6), "polarisation curve"),
    (lambda: buffer(capacity=0.0), "buffer capacity"),
    (lambda: buffer(round_trip_efficiency=0.0), "round_trip_efficiency"),
    (lambda: hydrogen_pathway("pink"), "pathway"),
    (lambda: reference_voltage("gross"), "basis"),
    (lambda: electrolysis_co2e(-1.0, 0.0), "electricity_per_kg"),
    (lambda: size_fuel_cell_vehicle(car(), trace([0, 10, 10]), motor(), system(), buffer(),
                                    -5.0), "range"),
    (lambda: size_fuel_cell_vehicle(car(), trace([0, 10, 10]), motor(), system(), buffer(),
                                    5e5, mass_saved=5000.0), "mass_saved"),
    (lambda: size_fuel_cell_vehicle(car(), trace([0, 10, 10]), motor(), system(), buffer(),
                                    5e5, pressure=900e5), "pressure"),
])
def test_bad_inputs_name_the_field(make, where):
    with pytest.raises(InputError) as err:
        make()
    assert err.value.where == where
