"""Tests of ``workbench duty`` (stats and fuel), including bad input -> exit 2, one line."""

from __future__ import annotations

import json

import pytest

from workbench.core.fuels import load_fuel
from workbench.interfaces.cli import main


def run(capsys, *argv: str) -> tuple[int, str, str]:
    try:
        code = main(list(argv))
    except SystemExit as exc:  # argparse usage errors
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


def test_stats_json(capsys):
    code, out, err = run(capsys, "duty", "stats", "taxi-shift", "--json")
    assert code == 0 and err == ""
    record = json.loads(out)
    assert record["profile"] == "taxi-shift"
    for key in ("distance_km", "duration_h", "mean_speed_km_per_h", "max_speed_km_per_h",
                "idle_share", "stops_per_km", "positive_kinetic_energy_m_per_s2"):
        assert isinstance(record[key], float), key
    # mean speed is distance over duration
    assert record["mean_speed_km_per_h"] == pytest.approx(
        record["distance_km"] / record["duration_h"], rel=1e-12)


def test_stats_text_from_path(capsys, tmp_path):
    path = tmp_path / "t.csv"
    path.write_text("time_s,speed_m_per_s\n0,0\n10,10\n20,10\n", encoding="utf-8")
    code, out, _ = run(capsys, "duty", "stats", str(path))
    assert code == 0
    assert "distance_km" in out and "0.15" in out  # 50 m + 100 m


def test_fuel_json_several_fuels(capsys):
    code, out, err = run(capsys, "duty", "fuel", "van-day", "--vehicle", "van",
                         "--map", "van-ci-2.3l", "--fuel", "diesel", "--fuel", "natural-gas",
                         "--derate", "0.1", "--efficiency-offset", "-0.02", "--json")
    assert code == 0, err
    record = json.loads(out)
    assert [r["fuel"] for r in record["fuels"]] == ["diesel", "natural-gas"]
    diesel, gas = record["fuels"]
    for key in ("fuel_energy_mj_per_km", "fuel_l_per_100km", "co2_ttw_g_per_km",
                "share_out_of_map", "share_at_full_load", "fuel_kg_per_100km", "fuel_mpg_us"):
        assert key in diesel
    assert gas["fuel_l_per_100km"] is None  # compressed gas: per kg, not per litre
    assert gas["derate"] == 0.1 and diesel["derate"] == 0.0
    # two points less efficiency on the candidate -> more energy per km
    assert gas["fuel_energy_mj_per_km"] > diesel["fuel_energy_mj_per_km"]


def test_gas_on_a_diesel_map_is_converted_and_says_so(capsys):
    code, out, err = run(capsys, "duty", "fuel", "van-day", "--vehicle", "van",
                         "--map", "van-ci-2.3l", "--fuel", "diesel", "--fuel", "lpg",
                         "--fuel", "natural-gas", "--json")
    assert code == 0, err
    record = json.loads(out)
    diesel, lpg, gas = record["fuels"]
    assert record["map_regime"] == "compression-ignition" and record["notices"] == []
    assert lpg["conversion"] == gas["conversion"] == "dedicated-si"
    # Stoichiometric gas engines on diesel blocks use about 20-40 % more energy per km in urban
    # duty (fleet comparisons as recalled, from memory): no longer the diesel's MJ/km.
    for f in (lpg, gas):
        assert 1.15 < f["fuel_energy_mj_per_km"] / diesel["fuel_energy_mj_per_km"] < 1.45
    assert any("conversion = dedicated-si" in line for line in record["defaults"])


def test_a_fuel_kept_on_a_map_of_another_regime_warns_in_one_line(capsys):
    code, out, _ = run(capsys, "duty", "fuel", "van-day", "--vehicle", "van",
                       "--map", "van-ci-2.3l", "--fuel", "diesel", "--fuel", "lpg",
                       "--conversion", "none")
    assert code == 0
    warnings = [line for line in out.splitlines() if line.startswith("warning:")]
    assert len(warnings) == 1 and "lpg" in warnings[0] and "compression-ignition" in warnings[0]


def test_dual_fuel_splits_the_energy_between_gas_and_pilot(capsys):
    code, out, err = run(capsys, "duty", "fuel", "van-day", "--vehicle", "van",
                         "--map", "van-ci-2.3l", "--fuel", "diesel", "--fuel", "natural-gas",
                         "--conversion", "dual-fuel-ci", "--json")
    assert code == 0, err
    diesel, gas, pilot = json.loads(out)["fuels"]
    assert pilot["fuel"] == "diesel pilot"
    share = gas["gas_energy_share"]
    assert 0.0 < share < 0.6  # below the high-load share on an urban duty
    total = gas["fuel_energy_mj_per_km"] + pilot["fuel_energy_mj_per_km"]
    assert gas["fuel_energy_mj_per_km"] == pytest.approx(share * total, rel=1e-12)
    # 3 % of the gas slips unburnt: a little more energy than the diesel alone
    assert diesel["fuel_energy_mj_per_km"] < total < 1.02 * diesel["fuel_energy_mj_per_km"]
    # the slipped methane (3 % of the gas's methane) leaves as CH4, not CO2: carbon balance
    # with 12.011 g C, 16.043 g CH4, 44.009 g CO2 per mol (IUPAC atomic weights, from memory)
    ng = load_fuel("natural-gas")
    m_gas = gas["fuel_kg_per_100km"] * 10  # [g/km]
    ch4 = 0.03 * ng.mole_fractions["CH4"] * 16.043 / ng.molar_mass() * m_gas
    assert gas["ch4_g_per_km"] == pytest.approx(ch4, rel=1e-4)
    carbon = {"CH4": 1, "C2H6": 2, "C3H8": 3, "C4H10,n-butane": 4, "CO2": 1}
    moles_c = sum(n * ng.mole_fractions.get(s, 0.0) for s, n in carbon.items())
    co2_all = m_gas * moles_c * 44.009 / ng.molar_mass()
    assert gas["co2_ttw_g_per_km"] == pytest.approx(co2_all - ch4 * 44.009 / 16.043, rel=1e-4)
    assert pilot["ch4_g_per_km"] == diesel["ch4_g_per_km"] == 0.0
    for f in (diesel, gas, pilot):  # fossil fuels: all their CO2 is fossil
        assert f["co2_ttw_fossil_g_per_km"] == f["co2_ttw_g_per_km"]
        assert f["co2_ttw_biogenic_g_per_km"] == 0.0


def test_biogenic_co2_is_split_off(capsys):
    # E85's carbon: the fuel file's biogenic share (docs/renewables.md); the split is
    # co2 (1 - b) and co2 b (IPCC 2006 Guidelines vol. 2 ch. 3: biogenic CO2 reported apart)
    code, out, err = run(capsys, "duty", "fuel", "taxi-shift", "--vehicle", "taxi", "--map",
                         "taxi-si-1.8l", "--fuel", "gasoline", "--fuel", "e85", "--json")
    assert code == 0, err
    _, e85 = json.loads(out)["fuels"]
    b = load_fuel("e85").biogenic_carbon_share
    assert 0.6 < b < 0.9  # about 80 % ethanol by volume, most of the carbon (from memory)
    assert e85["co2_ttw_biogenic_g_per_km"] == pytest.approx(b * e85["co2_ttw_g_per_km"],
                                                             rel=1e-12)
    assert e85["co2_ttw_fossil_g_per_km"] == pytest.approx((1 - b) * e85["co2_ttw_g_per_km"],
                                                           rel=1e-12)


def test_fuel_text(capsys):
    code, out, _ = run(capsys, "duty", "fuel", "shuttle-route", "--vehicle", "shuttle-bus",
                       "--map", "bus-ci-4.5l", "--fuel", "diesel", "--accessory-kw", "3")
    assert code == 0
    assert "fuel_l_per_100km" in out and "diesel" in out


def test_fuel_on_mode_table(capsys, tmp_path):
    path = tmp_path / "modes.csv"
    path.write_text("# distance_km: 30\nengine_speed_rpm,torque_n_m,time_h\n"
                    "800,0,0.2\n1600,120,0.8\n", encoding="utf-8")
    code, out, err = run(capsys, "duty", "fuel", str(path), "--map", "van-ci-2.3l",
                         "--fuel", "diesel", "--json")
    assert code == 0, err
    record = json.loads(out)
    assert record["distance_km"] == pytest.approx(30.0)
    assert record["wheel_energy_mj_per_km"] is None


@pytest.mark.parametrize(
    ("argv", "match"),
    [
        (["duty", "stats", "no-such-profile"], "PROFILE: 'no-such-profile' is neither a demo"),
        (["duty", "fuel", "taxi-shift", "--map", "taxi-si-1.8l", "--fuel", "gasoline"],
         "--vehicle: a speed trace needs a vehicle"),
        (["duty", "fuel", "taxi-shift", "--vehicle", "taxi", "--map", "taxi-si-1.8l",
          "--fuel", "gasoline", "--fuel", "lpg", "--derate", "2"], "derate: must be a share"),
        (["duty", "fuel", "taxi-shift", "--vehicle", "taxi", "--map", "nomap",
          "--fuel", "gasoline"], "--map: 'nomap' is neither"),
        (["duty", "fuel", "taxi-shift", "--vehicle", "taxi", "--map", "taxi-si-1.8l",
          "--fuel", "gasoline", "--accessory-kw", "-1"], "--accessory-kw: must be between"),
        (["duty", "fuel", "taxi-shift", "--vehicle", "taxi", "--map", "taxi-si-1.8l"],
         "the following arguments are required: --fuel"),
    ],
)
def test_bad_input_exit_2_one_line(capsys, argv, match):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert out == ""
    assert err.count("\n") == 1 and match in err


def test_bad_files_exit_2(capsys, tmp_path):
    trace = tmp_path / "t.csv"
    trace.write_text("time_s,speed_km_per_h\n0,10\n1,-5\n", encoding="utf-8")
    code, _, err = run(capsys, "duty", "stats", str(trace))
    assert code == 2 and f"{trace} row 3: speed is negative" in err and err.count("\n") == 1
    table = tmp_path / "m.csv"
    table.write_text("engine_speed_rpm,torque_n_m,time_h\n800,0,1\n", encoding="utf-8")
    code, _, err = run(capsys, "duty", "stats", str(table))
    assert code == 2 and "time-at-mode table" in err
    code, _, err = run(capsys, "duty", "fuel", str(table), "--map", "van-ci-2.3l",
                       "--fuel", "diesel")
    assert code == 2 and "covers no distance" in err and err.count("\n") == 1
