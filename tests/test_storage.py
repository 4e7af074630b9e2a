"""On-board storage: real-fluid properties, liquid densities, tanks and LPG cold start."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

from workbench.core.cache import clear_caches
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel, blend
from workbench.models import storage

C = 273.15  # K at 0 °C


@pytest.fixture
def no_mixture_model(monkeypatch):
    """Make CoolProp's multi-fluid model unavailable, so the ideal-solution fallbacks run."""
    clear_caches()
    for model in (storage.saturation, storage.compressed):  # the two that use the mixture
        monkeypatch.setattr(model, "_heos", lambda mix: None)
    yield
    clear_caches()


# ----------------------------------------------------------------------------- reference checks

# NIST Chemistry WebBook, "Thermophysical properties of fluid systems", saturation tables
# (Lemmon, McLinden & Wagner 2009 for propane; Buecker & Wagner 2006 for n-butane), values
# from memory: vapour pressure to 3 significant figures, saturated liquid density to 4.
# CoolProp implements the same equations of state, so agreement is limited by the quoted
# figures: rtol 0.5 % on pressure (half a unit in the 3rd figure is up to 0.3 % at 1.76 bar),
# 0.2 % on density (0.01 % rounding plus the uncertainty of a remembered value).
SATURATION = [
    # fuel, temperature [°C], p_sat [bar], rho_liquid [kg/m3]
    ("propane", 15.0, 7.31, 507.5),
    ("propane", 20.0, 8.36, 500.1),
    ("n-butane", 15.0, 1.76, 584.3),
    ("n-butane", 20.0, 2.08, 578.6),
]


@pytest.mark.parametrize(("fuel", "t_c", "p_bar", "rho"), SATURATION)
def test_saturation_matches_nist_webbook(fuel, t_c, p_bar, rho):
    assert_allclose(storage.vapour_pressure(fuel, t_c + C), p_bar * 1e5, rtol=5e-3)
    assert_allclose(storage.saturated_liquid_density(fuel, t_c + C), rho, rtol=2e-3)


def test_normal_boiling_points_are_the_cold_start_at_zero_feed_pressure():
    # NIST Chemistry WebBook (from memory): normal boiling points 231.04 K (propane) and
    # 272.66 K (n-butane) at 101.325 kPa. Tolerance 0.05 K: the remembered values have two
    # decimals and the solver converges to 1e-6 K.
    assert_allclose(storage.cold_start_temperature("propane", feed_pressure=0.0), 231.04,
                    atol=0.05)
    assert_allclose(storage.cold_start_temperature("n-butane", feed_pressure=0.0), 272.66,
                    atol=0.05)


def test_methane_at_200_bar():
    # NIST Chemistry WebBook isothermal data, methane at 15 °C and 20 MPa (Setzmann & Wagner
    # 1991 equation of state; from memory): 167.8 kg/m3. rtol 0.1 %: four figures quoted.
    assert_allclose(storage.compressed_gas_density("methane", 15 + C, 200e5), 167.8, rtol=1e-3)


def test_hydrogen_at_350_and_700_bar():
    # SAE J2601 defines a 100 % state of charge as 40.2 g/L at 70 MPa and 15 °C and 24.0 g/L at
    # 35 MPa and 15 °C (from memory; the often-quoted ~40 kg/m3 of 700-bar tanks, common
    # practice). rtol 0.3 %: three figures quoted.
    assert_allclose(storage.compressed_gas_density("hydrogen", 15 + C, 700e5), 40.2, rtol=3e-3)
    assert_allclose(storage.compressed_gas_density("hydrogen", 15 + C, 350e5), 24.0, rtol=3e-3)
    # Hydrogen is repulsive-dominated at these pressures: Z > 1 (textbook behaviour, common
    # practice, no source), about 1.47 at 700 bar.
    assert storage.compressibility_factor("hydrogen", 15 + C, 700e5) > 1.4


def test_methane_liquid_at_its_normal_boiling_point():
    # NIST Chemistry WebBook (from memory): methane boils at 111.67 K at 101.325 kPa, saturated
    # liquid 422.4 kg/m3. Tolerances: 0.05 K and 0.1 % (figures quoted).
    state = storage.stored_state("methane", kind="cryogenic", pressure=101325.0)
    assert_allclose(state.temperature, 111.67, atol=0.05)
    assert_allclose(state.density, 422.4, rtol=1e-3)


def test_road_fuel_densities_inside_their_standards():
    # EN 590 (diesel) density at 15 °C: 820.0–845.0 kg/m3; EN 228 (gasoline): 720.0–775.0
    # kg/m3 (the standards' requirement tables; from memory).
    assert 820.0 <= storage.liquid_density("diesel", 15 + C) <= 845.0
    assert 720.0 <= storage.liquid_density("gasoline", 15 + C) <= 775.0


def test_thermal_expansion_near_typical_values():
    # Typical cubic expansion coefficients at 15 °C, ASTM D1250 / API tables order of
    # magnitude: ~0.00083 1/K for diesel, ~0.00120 1/K for gasoline (typical values, quoted to
    # two figures): rtol 5 %.
    assert_allclose(storage.thermal_expansion_coefficient(835.0), 0.00083, rtol=0.05)
    assert_allclose(storage.thermal_expansion_coefficient(745.0), 0.00120, rtol=0.05)


@pytest.mark.parametrize("edge", [770.5, 787.5, 838.5])
def test_table_54b_bands_join_up(edge):
    # The Table 54B constants are from memory; the bands were fitted separately and meet within
    # about 0.1 % (0.11 % at 770.5 kg/m3), so a wrong leading digit of a constant shows as a
    # step at a band edge. rtol 0.2 % accepts the fitted mismatch, not a mistyped constant.
    assert_allclose(storage.thermal_expansion_coefficient(edge - 1e-9),
                    storage.thermal_expansion_coefficient(edge + 1e-9), rtol=2e-3)


def test_liquid_volume_correction_against_hand_calculation():
    # Volume correction factor of ASTM D1250-80, exp(-a dT (1 + 0.8 a dT)), worked by hand for
    # diesel at 35 °C: a = 594.5418/835^2 = 8.5273e-4 1/K, dT = 20 K,
    # a dT (1 + 0.8 a dT) = 0.0172873, VCF = exp(-0.0172873) = 0.98286.
    assert_allclose(storage.liquid_density("diesel", 35 + C), 835.0 * 0.98286, rtol=1e-5)
    # Warmer is lighter; 15 °C is the declared value exactly.
    assert storage.liquid_density("diesel", -10 + C) > 835.0
    assert storage.liquid_density("gasoline", 15 + C) == 745.0


# ----------------------------------------------------------------------------- blends


def test_blend_vapour_pressure_between_components_and_rising():
    t = np.linspace(-30, 50, 17) + C
    p_lpg = storage.vapour_pressure("lpg", t)
    p_c3 = storage.vapour_pressure("propane", t)
    p_c4 = storage.vapour_pressure("n-butane", t)
    assert np.all((p_c4 < p_lpg) & (p_lpg < p_c3))
    assert np.all(np.diff(p_lpg) > 0)


def test_more_propane_means_more_pressure_and_colder_start():
    winter = blend({"propane": 0.9, "n-butane": 0.1}, "liquid_volume")
    summer = blend({"propane": 0.3, "n-butane": 0.7}, "liquid_volume")
    assert storage.vapour_pressure(winter, 263.15) > storage.vapour_pressure(summer, 263.15)
    assert storage.cold_start_temperature(winter) < storage.cold_start_temperature(summer)


def test_cold_start_temperature_is_where_pressure_meets_the_feed_need():
    t = storage.cold_start_temperature("lpg", feed_pressure=1.5e5)
    # 1.5 bar gauge over the standard atmosphere, 101 325 Pa (exact by definition, CGPM 1954).
    assert_allclose(storage.vapour_pressure("lpg", t), 1.5e5 + 101_325.0, rtol=1e-6)
    # The library's 60/40 LPG is right at the edge on a -10 °C morning (about -9 °C).
    assert -12 + C < t < -5 + C
    table = storage.vapour_pressure_table("lpg", [t - 1.0, t + 1.0])
    assert table["feeds_engine"].tolist() == [False, True]
    assert list(table.columns) == ["temperature_k", "vapour_pressure_pa",
                                   "vapour_pressure_gauge_pa", "liquid_density_kg_per_m3",
                                   "feeds_engine", "method"]


def test_ideal_solution_fallback_is_close_for_propane_butane(no_mixture_model):
    # Propane/n-butane liquids are near-ideal: Raoult's law over-predicts the bubble pressure of
    # the library LPG by about 2.5 % at 15 °C against the multi-fluid model (5.271 vs 5.145
    # bar, both CoolProp) and additive volumes under-predict density by about 0.5 %.
    table = storage.vapour_pressure_table("lpg", [288.15])
    assert table["method"].iloc[0].startswith("ideal solution")
    assert_allclose(table["vapour_pressure_pa"].iloc[0], 5.145e5, rtol=0.04)
    assert_allclose(table["liquid_density_kg_per_m3"].iloc[0], 540.6, rtol=0.01)


def test_amagat_fallback_is_close_for_natural_gas(no_mixture_model):
    # Additive volumes of the real pure fluids come within 2 % of the multi-fluid mixture
    # model for the library natural gas at 200 bar (180.9 vs 184.1 kg/m3, both CoolProp).
    state = storage.stored_state("natural-gas")
    assert state.method.startswith("Amagat")
    assert_allclose(state.density, 184.1, rtol=0.025)


def test_blend_without_a_coolprop_pair_falls_back():
    # CoolProp 8.0 has no interaction parameters for propylene with n-butane.
    fuel = Fuel(id="c3-mix", name="propane/propylene/butane", is_gas=True,
                composition=(("C3H6,propylene", 0.2), ("C3H8", 0.5), ("C4H10,n-butane", 0.3)))
    state = storage.stored_state(fuel)
    assert state.kind == "liquefied" and state.method.startswith("ideal solution")
    assert storage.vapour_pressure("n-butane", 288.15) < state.pressure
    assert state.pressure < storage.vapour_pressure(
        Fuel(id="c3h6", name="propylene", is_gas=True, composition=(("C3H6,propylene", 1.0),)),
        288.15)


def test_natural_gas_is_denser_than_methane_and_below_z_1():
    # Ethane and heavier raise the molar mass (17.1 vs 16.04 kg/kmol) and lower Z.
    assert storage.compressed_gas_density("natural-gas", 288.15, 200e5) > \
        storage.compressed_gas_density("methane", 288.15, 200e5) * 17.1 / 16.04
    assert 0.7 < storage.compressibility_factor("natural-gas", 288.15, 200e5) < 0.85


def test_imposed_phase_gives_the_full_flash_result():
    # The compressed-gas flash imposes the supercritical phase to skip CoolProp's stability
    # search; for a pure fluid the full flash is quick and must give the same density.
    import CoolProp.CoolProp as CP

    for fluid, fuel in (("Methane", "methane"), ("Hydrogen", "hydrogen")):
        for t, p in ((233.15, 20e5), (288.15, 250e5), (333.15, 700e5)):
            state = CP.AbstractState("HEOS", fluid)
            state.update(CP.PT_INPUTS, p, t)
            assert_allclose(storage.compressed_gas_density(fuel, t, p), state.rhomass(),
                            rtol=1e-9)


# ----------------------------------------------------------------------------- arrays, NaN


def test_scalar_array_and_series_agree():
    t = [263.15, 288.15, 303.15]
    arr = storage.vapour_pressure("lpg", np.array(t))
    ser = storage.vapour_pressure("lpg", pd.Series(t))
    assert isinstance(storage.vapour_pressure("lpg", 288.15), float)
    assert_allclose(arr, ser)
    assert_allclose(arr[1], storage.vapour_pressure("lpg", 288.15))
    rho = storage.compressed_gas_density("natural-gas", np.array(t)[:, None], [200e5, 250e5])
    assert rho.shape == (3, 2) and np.all(np.diff(rho, axis=1) > 0)
    assert storage.liquid_density("diesel", np.array(t)).shape == (3,)


def test_nan_in_nan_out():
    out = storage.vapour_pressure("propane", [np.nan, 288.15])
    assert math.isnan(out[0]) and out[1] > 0
    assert math.isnan(storage.liquid_density("diesel", np.nan))


# ----------------------------------------------------------------------------- bad input


@pytest.mark.parametrize(("call", "where"), [
    (lambda: storage.vapour_pressure("lpg", 150 + C), "temperature"),  # above critical
    (lambda: storage.vapour_pressure("lpg", -150 + C), "temperature"),  # below freezing
    (lambda: storage.stored_state("natural-gas", pressure=0.0), "pressure"),
    (lambda: storage.stored_state("hydrogen", pressure=-5e5), "pressure"),
    (lambda: storage.stored_state("diesel", kind="compressed"), "kind"),
    (lambda: storage.stored_state("propane", kind="liquid"), "kind"),
    (lambda: storage.stored_state("propane", kind="compressed"), "temperature"),
    (lambda: storage.stored_state("propane", kind="cryogenic"), "kind"),
    (lambda: storage.stored_state("lpg", pressure=10e5), "pressure"),
    (lambda: storage.stored_state("methane", kind="cryogenic", temperature=110.0), "temperature"),
    (lambda: storage.stored_state("diesel", temperature=-60 + C), "temperature"),
    (lambda: storage.stored_state("lpg", kind="sealed"), "kind"),
    (lambda: storage.stored_state("natural-gas", kind="cryogenic"), "pressure"),  # CO2 freezes
    (lambda: storage.tank_of_volume("lpg", 0.06, tank="cng-type4"), "tank"),
    (lambda: storage.tank_of_volume("lpg", 0.06, tank="steel-drum"), "tank"),
    (lambda: storage.tank_of_volume("lpg", -0.06), "tank_volume"),
    (lambda: storage.tank_for_range("lpg", 500e3, 0.0), "energy_per_distance"),
    (lambda: storage.tank_for_range("lpg", -1.0, 2.5e3), "distance"),
    (lambda: storage.tank_of_volume(storage.stored_state("natural-gas", pressure=300e5), 0.1,
                                    tank="cng-type4"), "pressure"),  # above service pressure
    (lambda: storage.cold_start_temperature("lpg", feed_pressure=-1.0), "feed_pressure"),
    (lambda: storage.cold_start_temperature("lpg", feed_pressure=100e5), "feed_pressure"),
])
def test_bad_input_is_one_line_naming_the_field(call, where):
    with pytest.raises(InputError) as info:
        call()
    assert info.value.where == where
    assert "\n" not in str(info.value)


def test_gas_species_without_coolprop_fluid_is_named():
    fuel = Fuel(id="odd", name="odd", is_gas=True, composition=(("CH4", 0.9), ("NH3", 0.1)))
    with pytest.raises(InputError, match="NH3"):
        storage.stored_state(fuel)


# ----------------------------------------------------------------------------- tanks


def test_diesel_tank_range_by_hand():
    # 60 L x 0.95 usable x 0.835 kg/L x 43.1 MJ/kg / 2.5 MJ/km = 820.54 km (hand arithmetic).
    system = storage.tank_of_volume("diesel", 0.060, 2.5e3)
    assert_allclose(system.range, 820.54e3, rtol=1e-4)
    assert_allclose(system.tank_mass, 0.060 * 130.0)


def test_lpg_tank_is_filled_to_80_percent():
    system = storage.tank_of_volume("lpg", 0.060)
    assert_allclose(system.fuel_mass, 0.8 * 0.060 * system.state.density)
    assert math.isnan(system.range)


def test_sizing_and_range_are_inverse():
    for fuel in ("diesel", "lpg", "natural-gas", "hydrogen"):
        sized = storage.tank_for_range(fuel, 500e3, 2.5e3)
        back = storage.tank_of_volume(fuel, sized.tank_volume, 2.5e3)
        assert_allclose(back.range, 500e3, rtol=1e-9)
        assert_allclose(sized.usable_energy, 500e3 * 2.5e3, rtol=1e-9)
        assert sized.system_energy_per_mass < sized.fuel_energy_per_mass
        assert sized.system_energy_per_volume < sized.fuel_energy_per_volume


def test_compressed_gas_leaves_a_residual():
    system = storage.tank_of_volume("natural-gas", 0.1)
    residual = storage.compressed_gas_density("natural-gas", 288.15, 20e5)
    assert_allclose(system.fuel_mass - system.usable_fuel_mass, 0.1 * residual)


def test_default_tank_follows_pressure_and_custom_tanks_work():
    assert storage.tank_of_volume("natural-gas", 0.1).tank.id == "cng-type1"
    assert storage.tank_of_volume("hydrogen", 0.1).tank.id == "h2-type4-700"
    h350 = storage.stored_state("hydrogen", pressure=350e5)
    assert storage.tank_of_volume(h350, 0.1).tank.id == "h2-type4-350"
    light = dataclasses.replace(storage.TANK_TYPES["cng-type4"], mass_per_volume=300.0)
    assert_allclose(storage.tank_of_volume("natural-gas", 0.1, tank=light).tank_mass, 30.0)


def test_tank_volume_for_500_km_orders_the_fuels():
    # Fact of the trade (common practice, no source): per unit of energy, diesel takes the least
    # tank, then gasoline, LPG, CNG at 200 bar and hydrogen at 700 bar.
    table = storage.tank_table(["hydrogen", "lpg", "diesel", "natural-gas", "gasoline"],
                               500e3, 2.5e3)
    order = table.sort_values("tank_volume_m3")["fuel"].tolist()
    assert order == ["diesel", "gasoline", "lpg", "natural-gas", "hydrogen"]


def test_storage_summary_for_every_library_fuel():
    from workbench.core.fuels import list_fuels

    for fuel_id in list_fuels():
        summary = storage.storage_summary(fuel_id)
        assert summary["density_kg_per_l"] > 0 and summary["energy_density_mj_per_l"] > 0
        assert summary["temperature_c"] == pytest.approx(15.0)
    assert "vapour_pressure_bar" in storage.storage_summary("lpg")
    assert "compressibility_factor" in storage.storage_summary("natural-gas")


def test_blend_without_storage_table_gets_an_inferred_kind():
    assert storage.storage_spec(blend({"propane": 0.5, "n-butane": 0.5})).kind == "liquefied"
    assert storage.storage_spec(blend({"methane": 0.9, "hydrogen": 0.1})).kind == "compressed"


def test_liquid_density_outside_the_volume_correction_table_names_the_file_field():
    light = Fuel(id="light", name="light naphtha", is_gas=False, liquid_density=600.0,
                 composition=(("C8H18,isooctane", 1.0),))
    with pytest.raises(InputError, match=r"light: \[liquid\]\.density_kg_per_m3: 600"):
        storage.stored_state(light)
    # a measured coefficient bypasses the table
    assert storage.liquid_density(light, 288.15, thermal_expansion=1.3e-3) == 600.0
