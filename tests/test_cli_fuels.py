"""``workbench fuels``."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

KEYS = ["id", "name", "molar_mass_kg_per_kmol", "carbon_mass_fraction", "lhv_mj_per_kg",
        "hhv_mj_per_kg", "stoich_afr_mass", "stoich_afr_mole", "co2_kg_per_kg", "co2_g_per_mj",
        "flame_temperature_k"]


def test_show_json_has_the_promised_keys(run_cli):
    code, out, _ = run_cli("fuels", "show", "propane", "--json")
    assert code == 0
    data = json.loads(out)
    assert set(KEYS) <= set(data)
    # Turns 3rd ed. Table B.1 (from memory): propane LHV 46.357 MJ/kg, T_ad 2267 K
    assert abs(data["lhv_mj_per_kg"] - 46.357) < 0.1
    assert abs(data["flame_temperature_k"] - 2267) < 12


def test_show_human_table_has_units(run_cli):
    code, out, _ = run_cli("fuels", "show", "lpg")
    assert code == 0
    assert "lhv_mj_per_kg [MJ/kg]" in out and "flame_temperature_k [K]" in out


def test_options_change_the_flame(run_cli):
    _, out, _ = run_cli("fuels", "show", "methane", "--json", "--phi", "0.8",
                        "--t-unburnt", "400", "--pressure", "30", "--air", "dry")
    data = json.loads(out)
    assert data["phi"] == 0.8 and data["air_model"] == "dry"
    assert abs(data["t_unburnt_k"] - 673.15) < 1e-9


def test_compare_and_list(run_cli):
    code, out, _ = run_cli("fuels", "compare", "diesel", "lpg", "natural-gas", "--json")
    assert code == 0
    assert [r["id"] for r in json.loads(out)] == ["diesel", "lpg", "natural-gas"]
    code, out, _ = run_cli("fuels", "list", "--json")
    assert "hydrogen" in [r["id"] for r in json.loads(out)]


def test_blend_writes_a_fuel_file_that_loads(run_cli, tmp_path):
    path = tmp_path / "winter-lpg.toml"
    code, out, _ = run_cli("fuels", "blend", "propane=0.8", "n-butane=0.2", "--basis",
                           "liquid-volume", "--write", str(path), "--json")
    assert code == 0
    code, out2, _ = run_cli("fuels", "show", str(path), "--json")
    assert code == 0
    assert abs(json.loads(out)["lhv_mj_per_kg"] - json.loads(out2)["lhv_mj_per_kg"]) < 1e-9
    assert json.loads(out2)["id"] == "winter-lpg"


@pytest.mark.parametrize(
    ("argv", "names"),
    [
        (("fuels", "show", "kerosene-x"), "kerosene-x"),
        (("fuels", "show", "propane", "--phi", "0"), "phi"),
        (("fuels", "show", "propane", "--phi", "-1"), "phi"),
        (("fuels", "show", "propane", "--pressure", "0"), "--pressure"),
        (("fuels", "show", "propane", "--t-unburnt", "-400"), "--t-unburnt"),
        (("fuels", "blend", "propane=0.5", "n-butane=0.6"), "sum to 1.1"),
        (("fuels", "blend", "propane=-0.5", "n-butane=1.5"), "zero or more"),
        (("fuels", "blend", "propane"), "FUEL=FRACTION"),
        (("fuels", "blend", "propane=1", "--write", "/nonexistent/x.toml"), "--write"),
    ],
)
def test_bad_input_is_one_line_and_exit_2(run_cli, argv, names):
    code, _, err = run_cli(*argv)
    assert code == 2
    assert err.count("\n") == 1 and names in err and "Traceback" not in err


def test_bad_file_through_the_real_entry_point(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text('state = "gas"\n[species]\nsource = "s"\nCH4 = 0.5\n', encoding="utf-8")
    proc = subprocess.run([sys.executable, "-m", "workbench.interfaces.cli", "fuels", "show",
                           str(bad)],
                          capture_output=True, text=True, check=False)
    assert proc.returncode == 2
    assert proc.stderr.strip().startswith("workbench: error:") and "bad.toml" in proc.stderr
    assert "Traceback" not in proc.stderr


def test_fuels_option_puts_a_user_folder_first(run_cli, tmp_path):
    # Turns 3rd ed. Table B.1 (from memory): methane LHV 50.016 MJ/kg; the user's "propane"
    # here is methane, so its sheet must show methane's LHV, not propane's 46.357.
    (tmp_path / "propane.toml").write_text(
        'name = "house gas"\nstate = "gas"\n[species]\nsource = "test"\nCH4 = 1.0\n',
        encoding="utf-8")
    code, out, _ = run_cli("fuels", "show", "propane", "--fuels", str(tmp_path), "--json")
    assert code == 0
    assert abs(json.loads(out)["lhv_mj_per_kg"] - 50.016) < 0.1
    (tmp_path / "loop.toml").write_text('state = "gas"\n[blend]\nsource = "t"\nloop = 1\n',
                                        encoding="utf-8")
    code, out, _ = run_cli("fuels", "list", "--fuels", str(tmp_path))
    assert code == 0 and "house gas" in out and str(tmp_path) in out
    assert "blend cycle loop.toml -> loop.toml" in out and "Natural gas" in out  # others stay
    code, out, _ = run_cli("fuels", "show", "propane", "--json")  # gone after the call
    assert abs(json.loads(out)["lhv_mj_per_kg"] - 46.357) < 0.1
    code, _, err = run_cli("nox", "propane", "--fuels", str(tmp_path / "nope"))
    assert code == 2 and "--fuels" in err and "no such folder" in err


def test_docs_pages_are_shipped(run_cli):
    code, out, _ = run_cli("docs")
    assert code == 0 and {"fuels", "glossary", "nox", "storage", "study-file"} <= set(out.split())
    code, out, _ = run_cli("docs", "fuels")
    assert code == 0 and out.startswith("# The fuel library")
    code, _, err = run_cli("docs", "nope")
    assert code == 2 and "pick one of" in err
