"""A battery-electric option in a study: closed forms through the study path, money, bad input.

The test studies are invented: one class of 2000 kg vans on a made-up trace, the baseline on
diesel. The traces are chosen so that the energy per metre has a closed form (a level road at
constant speed; or no drag and no rolling resistance, where the braking energy is the kinetic
energy change), worked out here by hand, never from the code under test.
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.interfaces.present import significant
from workbench.interfaces.summary import verdicts
from workbench.study.runner import run
from workbench.study.studyfile import Study

G = 9.80665  # standard gravity [m/s2], exact by definition (3rd CGPM, 1901)
KWH = 3.6e6  # J per kWh, exact
M0, PAYLOAD, SAVED = 2000.0, 0.0, 200.0  # vehicle mass, payload, powertrain saved [kg]
ETA_G, ETA_M, ETA_C, SHARE = 0.97, 0.90, 0.88, 0.6  # reducer, motor, charging, regen share
DOD, SOH, S_E = 0.9, 0.8, 150.0 * 3600.0  # depth of discharge, end-of-life health, J/kg
RANGE = 150e3  # [m]
F_ROT = 1.05  # rotating-mass factor


def _vehicle_toml(cd: float, crr: float) -> str:
    value = {"mass_kg": M0, "payload_kg": PAYLOAD, "frontal_area_m2": 4.0,
             "drag_coefficient": cd, "rolling_resistance": crr, "driveline_efficiency": 0.92,
             "wheel_radius_m": 0.35, "gear_ratios": [4.7, 2.5, 1.5, 1.05, 0.82, 0.68],
             "final_drive": 3.9, "shift_speed_rpm": 1200, "max_engine_speed_rpm": 3800,
             "air_density_kg_per_m3": 1.2, "rotating_mass_factor": F_ROT}
    lines = ['name = "test van"']
    lines += [f'{k} = {{ value = {v}, source = "invented" }}' for k, v in value.items()]
    return "\n".join(lines) + "\n"


def _study(tmp_path, speeds_kmh, *, cd=0.35, crr=0.008, **electric) -> Study:
    (tmp_path / "van.toml").write_text(_vehicle_toml(cd, crr), encoding="utf-8")
    rows = "\n".join(f"{t},{v:.6f}" for t, v in enumerate(speeds_kmh))
    (tmp_path / "trace.csv").write_text(f"time_s,speed_km_per_h\n{rows}\n", encoding="utf-8")
    cand = {"id": "ev", "name": "Electric vans", "drive": "battery-electric",
            "purchase_price": 50000, "resale_value": 15000, "old_vehicle_sale": 6000,
            "motor_power": "150 kW", "motor_efficiency": ETA_M, "reducer_efficiency": ETA_G,
            "regen_share": SHARE, "charging_efficiency": ETA_C, "depth_of_discharge": DOD,
            "end_of_life_health": SOH, "specific_energy": "150 Wh/kg", "range": "150 km",
            "mass_saved": f"{SAVED} kg", "charger_power": "11 kW", "charger_capital": 2000,
            "charger_upkeep_per_year": 100, "electricity_price": "0.20 per kWh",
            "grid_co2e": 300, **electric}
    data = {
        "title": "electric test (invented)", "currency": "KBD", "fictional": True,
        "programme": {"horizon_years": 4, "discount_rate": "6 %", "carbon_price": "50 per t",
                      "monte_carlo_draws": 0},
        "classes": [{"id": "van", "count": 10, "km_per_year": "30000 km",
                     "remaining_life_years": 6, "profile": "trace.csv", "vehicle": "van.toml",
                     "engine_map": "van-ci-2.3l", "upkeep_per_year": 2000}],
        "baseline": {"id": "today", "fuel": "diesel",
                     "aftertreatment": {"preset": "urea-scr"}},
        "candidates": [cand],
        "prices": {"diesel": "1.50 per L"},
        "upstream": {"diesel": {"wtt_co2e_g_per_mj": 17.0, "source": "invented"}},
    }
    return Study(data, where="test.toml", base_dir=tmp_path)


def _constant_speed(v_kmh: float = 54.0, seconds: int = 600) -> list[float]:
    return [v_kmh] * (seconds + 1)


def _up_and_down(v1: float = 3.0, v0: float = 20.0, seconds: int = 20) -> list[float]:
    """Linear acceleration v1 -> v0 [m/s] over ``seconds``, then linear braking back to v1."""
    up = np.linspace(v1, v0, seconds + 1)
    return list(np.concatenate([up, up[::-1][1:]]) * 3.6)


@pytest.mark.slow
def test_battery_sizing_matches_the_closed_form_on_a_level_constant_speed_trace(tmp_path):
    # At constant speed on a level road the wheel force per metre is affine in the mass,
    # e(m) = (a m + b) / (eta_g eta_m) with a = g Crr and b = rho/2 Cd A v^2 (Guzzella &
    # Sciarretta, Vehicle Propulsion Systems, 3rd ed., 2013, sect. 2.1, from memory). The pack
    # sized for range R at the end of its life, m_b = R e(m0 - m_s + m_b) / (DoD SOH s_E), is
    # then m_b = k (a (m0 - m_s) + b) / (1 - k a), k = R / (eta DoD SOH s_E) (docs/electric.md).
    v = 15.0
    a, b, eta = G * 0.008, 0.5 * 1.2 * 0.35 * 4.0 * v * v, ETA_G * ETA_M
    k = RANGE / (eta * DOD * SOH * S_E)
    m_b = k * (a * (M0 + PAYLOAD - SAVED) + b) / (1.0 - k * a)
    e_bat = (a * (M0 + PAYLOAD - SAVED + m_b) + b) / eta  # [J/m]
    result = run(_study(tmp_path, _constant_speed(v * 3.6)), draws=0)
    row = result.battery.iloc[0]
    # 1e-6: the sizing iterates to 1 g on a pack of some 500 kg (the model's tolerance)
    assert_allclose(row["pack_mass_kg"], m_b, rtol=1e-6)
    assert_allclose(row["capacity_kwh"], m_b * S_E / KWH, rtol=1e-6)
    assert_allclose(row["added_mass_kg"], m_b - SAVED, rtol=1e-6)
    assert_allclose(row["payload_loss_kg"], max(m_b - SAVED, 0.0), rtol=1e-6)
    assert_allclose(row["battery_kwh_per_km"], e_bat * 1e3 / KWH, rtol=1e-6)
    assert_allclose(row["energy_kwh_per_km"], e_bat / ETA_C * 1e3 / KWH, rtol=1e-6)
    # the recharge of the whole range at 11 kW: R e_grid / P
    assert_allclose(row["charging_hours"], RANGE * e_bat / ETA_C / 11e3 / 3600, rtol=1e-6)
    assert bool(row["charging_fits"]) == (RANGE * e_bat / ETA_C / 11e3 <= 8 * 3600)
    pk = result.per_km.set_index(["candidate", "vehicle_class"]).loc[("ev", "van")]
    assert pk["fuel"] == "electricity"
    assert_allclose(pk["energy_kwh_per_km"], e_bat / ETA_C * 1e3 / KWH, rtol=1e-6)
    # nothing burns on board (docs/electric.md): zero tailpipe CO2, NOx, PM, CO, HC
    for column in ("co2_ttw_g_per_km", "nox_engine_out_g_per_km", "nox_g_per_km",
                   "pm_mg_per_km", "co_g_per_km", "thc_g_per_km"):
        assert pk[column] == 0.0, column
    # well to wheel: the grid's 300 g/kWh on the grid energy
    assert_allclose(pk["co2e_wtw_g_per_km"], 300.0 * e_bat / ETA_C / KWH * 1e3, rtol=1e-6)


@pytest.mark.slow
def test_regeneration_matches_the_kinetic_energy_closed_form(tmp_path):
    # Without drag and rolling resistance on a level road, the energy into the wheels while
    # accelerating v1 -> v0 and out of them while braking back is the kinetic energy change
    # E = m f_rot (v0^2 - v1^2) / 2 (Guzzella & Sciarretta, 3rd ed., sect. 2.1, from memory).
    # Under the motor's power limit the motor takes s E at the wheels, so the battery gives
    # E / (eta_g eta_m) - s E eta_g eta_m. Per metre, with distance 2 (v0 + v1) / 2 T:
    # e(m) = c m, and the self-carrying pack m_b = k' c (m0 - m_s) / (1 - k' c),
    # k' = R / (DoD SOH s_E).
    v1, v0, t = 3.0, 20.0, 20
    c = F_ROT * (v0**2 - v1**2) / 2 * (1 / (ETA_G * ETA_M) - SHARE * ETA_G * ETA_M)
    c /= 2 * (v0 + v1) / 2 * t  # [J/m per kg]
    kp = RANGE / (DOD * SOH * S_E)
    m_b = kp * c * (M0 - SAVED) / (1 - kp * c)
    result = run(_study(tmp_path, _up_and_down(v1, v0, t), cd=0.0, crr=0.0), draws=0)
    row = result.battery.iloc[0]
    assert_allclose(row["regen_share_of_braking"], SHARE, rtol=1e-9)  # below the power limit
    assert_allclose(row["pack_mass_kg"], m_b, rtol=1e-6)  # the sizing's 1 g tolerance
    assert_allclose(row["battery_kwh_per_km"], c * (M0 - SAVED + m_b) * 1e3 / KWH, rtol=1e-6)
    # the peak: m f a v at the top of the ramp (a = 17/20 m/s2, mean speed of the last
    # interval 19.575 m/s), through reducer and motor
    m = M0 - SAVED + m_b
    peak = m * F_ROT * (v0 - v1) / t * (v0 - (v0 - v1) / t / 2) / (ETA_G * ETA_M)
    assert_allclose(row["peak_power_kw"], peak / 1e3, rtol=1e-6)


@pytest.mark.slow
def test_money_of_the_electric_option_in_the_study(tmp_path):
    # Year 0 of the option against the baseline, by hand, 10 vans: the new vans 10 x 50000,
    # less the old vans' sale 10 x 6000, plus chargers 10 x 2000 = 460000 out. The last year
    # (4, the horizon, inside the 6-year remaining life) gets the resale 10 x 15000 and the
    # chargers' straight-line value 20000 x (1 - 4/6).
    study = _study(tmp_path, _constant_speed())
    result = run(study, draws=0)
    cf = result.cash_flows.set_index(["candidate", "year"])["cash_flow_vs_baseline"]
    start = study.inputs.start_year
    assert_allclose(cf[("ev", start)], -(10 * 50000 - 10 * 6000 + 10 * 2000), rtol=1e-12)
    # years 1..4: the baseline's diesel and upkeep against grid energy at 0.20 per kWh,
    # carbon on 300 g/kWh, and 100 more upkeep per van for the chargers
    per_km = result.per_km.set_index(["candidate", "vehicle_class"])
    kwh_km = per_km.loc[("ev", "van"), "energy_kwh_per_km"]
    grid_cost = 10 * 30000 * kwh_km * (0.20 + 0.300 * 0.050)  # [KBD/year]
    costs = result.fleet_years.set_index(["candidate", "year"])["cost_total"]
    assert_allclose(costs[("ev", start + 1)], grid_cost + 10 * (2000 + 100), rtol=1e-9)
    last = cf[("ev", start + 4)] - (costs[("today", start + 4)] - costs[("ev", start + 4)])
    assert_allclose(last, 10 * 15000 + 10 * 2000 * (1 - 4 / 6), rtol=1e-9)
    ranked = result.candidates.set_index("candidate")
    assert np.isfinite(ranked.loc["ev", "npv_vs_baseline"])  # ranked with the others
    (verdict,) = verdicts(result)
    row = result.battery.iloc[0]
    assert verdict.name == "Electric vans"
    assert any(f"payload lost {significant(row['payload_loss_kg'])} kg" in line
               and "grid electricity" in line for line in verdict.per_class)


@pytest.mark.slow
def test_time_of_use_tariff_is_weighted_by_the_charging_shares(tmp_path):
    # Bands 0.12 and 0.32 per kWh drawn 75 % / 25 %: 0.17 per kWh, the same money as a flat
    # 0.17 (energy-weighted mean; docs/electric.md).
    bands = _study(tmp_path, _constant_speed(), electricity_price={
        "night": "0.12 per kWh", "day": "0.32 per kWh"},
        charging_shares={"night": 0.75, "day": 0.25})
    flat = _study(tmp_path, _constant_speed(), electricity_price="0.17 per kWh")
    a, b = run(bands, draws=0), run(flat, draws=0)
    assert_allclose(a.cash_flows["cash_flow"], b.cash_flows["cash_flow"], rtol=1e-12)


@pytest.mark.slow
def test_grid_path_by_year_enters_the_co2e(tmp_path):
    # 400 g/kWh in the first programme year (2027) falling linearly to 200 in 2029 and held
    # after: the option's yearly CO2e is the grid energy times 400, 300, 200, 200 g/kWh.
    study = _study(tmp_path, _constant_speed(), grid_co2e={"2028": 400, "2030": 200})
    result = run(study, draws=0)
    kwh_km = result.per_km.set_index("candidate").loc["ev", "energy_kwh_per_km"]
    years = result.fleet_years[result.fleet_years["candidate"] == "ev"]
    kwh = 10 * 30000 * kwh_km
    assert_allclose(years["co2e_wtw_t"].to_numpy()[1:],
                    kwh * np.array([400, 300, 200, 200]) * 1e-6, rtol=1e-9)


# ----------------------------------------------------------------------------- bad input


@pytest.mark.parametrize(("change", "where", "words"), [
    ({"fuel": "diesel"}, "candidates[0].fuel", "no combustion engine"),
    ({"aftertreatment": {"preset": "none"}}, "candidates[0].aftertreatment",
     "no combustion engine"),
    ({"drive": "steam"}, "candidates[0].drive", "unknown drive"),
    ({"purchase_price": None}, "candidates[0].purchase_price", "is required"),
    ({"motor_power": None}, "candidates[0].motor_power", "is required"),
    ({"electricity_price": None}, "candidates[0].electricity_price", "is required"),
    ({"electricity_price": "1.2 per L"}, "candidates[0].electricity_price", "per kWh"),
    ({"electricity_price": {"a": "0.1 per kWh", "b": "0.3 per kWh"}},
     "candidates[0].charging_shares", "each band"),
    ({"electricity_price": {"a": "0.1 per kWh", "b": "0.3 per kWh"},
      "charging_shares": {"a": 0.5, "b": 0.6}}, "candidates[0].charging_shares", "sum to 1"),
    ({"charging_shares": {"a": 1.0}}, "candidates[0].charging_shares", "bands"),
    ({"grid_co2e": None}, "candidates[0].grid_co2e", "is required"),
    ({"grid_co2e": {"next year": 300}}, "candidates[0].grid_co2e.next year", "calendar year"),
    ({"grid_co2e": -5}, "candidates[0].grid_co2e", "at least 0"),
    ({"regen_share": 1.5}, "candidates[0].regen_share", "at most"),
    ({"depth_of_discharge": 0}, "candidates[0].depth_of_discharge", "share"),
    ({"specific_energy": "150 kg"}, "candidates[0].specific_energy", ""),
    ({"mass_saved": "5000 kg"}, "candidates[0].mass_saved", "at most"),
    ({"charging_window": "30 h"}, "candidates[0].charging_window", "at most"),
    ({"resale_value": -1}, "candidates[0].resale_value", "at least 0"),
    ({"motro_power": "100 kW"}, "candidates[0].motro_power", "unknown key"),
])
def test_bad_electric_input_is_one_line_naming_the_key(tmp_path, change, where, words):
    study = _study(tmp_path, _constant_speed())
    cand = {**study.data["candidates"][0], **change}
    cand = {k: v for k, v in cand.items() if v is not None}
    with pytest.raises(InputError) as err:
        Study({**study.data, "candidates": [cand]}, where="test.toml", base_dir=tmp_path)
    assert err.value.where == where, str(err.value)
    assert words in err.value.message and "\n" not in str(err.value)


def test_electric_keys_on_a_combustion_option_and_a_new_drive_on_the_baseline(tmp_path):
    study = _study(tmp_path, _constant_speed())
    data = study.data
    lpg = {"id": "lpg", "fuel": "lpg", "motor_power": "100 kW"}
    with pytest.raises(InputError, match="battery-electric") as err:
        Study({**data, "candidates": [lpg]}, base_dir=tmp_path)
    assert err.value.where == "candidates[0].motor_power"
    with pytest.raises(InputError, match="baseline") as err:
        Study({**data, "baseline": {**data["baseline"], "drive": "battery-electric"}},
              base_dir=tmp_path)
    assert err.value.where == "baseline.drive"
    with pytest.raises(InputError, match="baseline keeps") as err:
        Study({**data, "baseline": {**data["baseline"], "purchase_price": 1000}},
              base_dir=tmp_path)


def test_a_range_no_pack_can_carry_is_one_line(tmp_path):
    # 5000 km on a 20 Wh/kg pack: k a >= 1 (docs/electric.md), the iteration cannot settle
    study = _study(tmp_path, _constant_speed(), range="5000 km", specific_energy="20 Wh/kg")
    with pytest.raises(InputError, match="carries itself") as err:
        run(study, draws=0)
    assert err.value.where == "candidates[0].range"


def test_a_time_at_mode_profile_is_refused(tmp_path):
    study = _study(tmp_path, _constant_speed())
    (tmp_path / "modes.csv").write_text(
        "engine_speed_rpm,torque_n_m,time_h\n1500,100,1\n2000,200,1\n", encoding="utf-8")
    data = study.data
    data["classes"][0]["profile"] = "modes.csv"
    with pytest.raises(InputError, match="speed trace") as err:
        Study(data, base_dir=tmp_path)
    assert err.value.where == "candidates[0].drive"


def test_a_drive_per_class_reads_each_class_by_its_own_keys(tmp_path):
    # Two classes on the same trace: the option keeps the first a combustion engine on LPG and
    # makes the second battery-electric; keys by class id go to their class only.
    study = _study(tmp_path, _constant_speed())
    data = study.data
    data["classes"].append({**data["classes"][0], "id": "van2"})
    cand = {k: v if k in ("id", "name") else {"van2": v}
            for k, v in data["candidates"][0].items()}
    cand.update(drive={"van": "combustion", "van2": "battery-electric"}, fuel={"van": "lpg"})
    data["prices"]["lpg"] = "0.80 per L"
    data["upstream"]["lpg"] = {"wtt_co2e_g_per_mj": 8.0, "source": "invented"}
    option = Study({**data, "candidates": [cand]}, base_dir=tmp_path).inputs.candidates[0]
    van, van2 = option.per_class["van"], option.per_class["van2"]
    assert (van.drive, van.fuel.id, van.electric, van.new_vehicle) == ("combustion", "lpg",
                                                                       None, None)
    assert van2.drive == "battery-electric" and van2.fuels == ()
    assert van2.electric.drive.motor_power == 150e3
    assert van2.new_vehicle.purchase_price.nominal == 50000
    # a key by class that names the combustion class for an electric-only key is refused
    cand["motor_power"] = {"van": "150 kW"}
    with pytest.raises(InputError) as err:
        Study({**data, "candidates": [cand]}, base_dir=tmp_path)
    assert err.value.where == "candidates[0].motor_power.van"
