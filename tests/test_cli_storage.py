"""``workbench fuels storage``."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from workbench.models import storage


def _json(run_cli, *argv: str) -> dict:
    code, out, err = run_cli("fuels", "storage", *argv, "--json")
    assert code == 0, err
    return json.loads(out)


def test_lpg_on_a_cold_morning(run_cli):
    data = _json(run_cli, "lpg", "--temperature", "-10")
    assert {"density_kg_per_l", "energy_density_mj_per_l", "energy_density_mj_per_kg",
            "vapour_pressure_bar", "cold_start_temperature_c", "feeds_engine"} <= set(data)
    assert data["temperature_c"] == pytest.approx(-10.0)
    # The 60/40 blend's bubble pressure at -10 °C (2.40 bar absolute, CoolProp) is below the
    # 1.5 bar gauge + 1.013 bar the default feed needs, so it does not feed.
    assert data["feeds_engine"] is False
    assert data["cold_start_temperature_c"] > -10.0
    # With a lower feed need it does.
    data = _json(run_cli, "lpg", "--temperature", "-10", "--feed-pressure", "1.0")
    assert data["feeds_engine"] is True


def test_default_state_is_declared_storage_at_15_c(run_cli):
    data = _json(run_cli, "natural-gas")
    assert data["storage_kind"] == "compressed" and data["pressure_bar"] == pytest.approx(200)
    assert data["temperature_c"] == pytest.approx(15.0)
    assert 0.7 < data["compressibility_factor"] < 0.85
    assert "vapour_pressure_bar" not in data and "feeds_engine" not in data
    # density x LHV = energy per litre, in the interface units
    assert data["energy_density_mj_per_l"] == pytest.approx(
        data["density_kg_per_l"] * data["energy_density_mj_per_kg"])
    for key, value in storage.storage_summary("natural-gas").items():
        assert data[key] == (pytest.approx(value) if isinstance(value, float) else value)


def test_pressure_and_temperature_options(run_cli):
    data = _json(run_cli, "hydrogen", "--pressure", "350", "--temperature", "15")
    # SAE J2601: 24.0 g/L at 35 MPa, 15 °C (from memory); rtol 0.3 % for three figures.
    assert data["density_kg_per_l"] == pytest.approx(0.0240, rel=3e-3)
    assert data["tank"] == "h2-type4-350"


def test_range_sizing_and_tank_range_agree(run_cli):
    sized = _json(run_cli, "lpg", "--range", "500", "--energy-per-km", "2.5")
    assert sized["range_km"] == pytest.approx(500.0)
    back = _json(run_cli, "lpg", "--tank-volume", str(sized["tank_volume_l"]),
                 "--energy-per-km", "2.5")
    assert back["range_km"] == pytest.approx(500.0, rel=1e-9)
    for key in ("usable_fuel_kg", "tank_volume_l", "tank_mass_kg", "tank_system_mass_kg",
                "system_energy_density_mj_per_kg", "system_energy_density_mj_per_l"):
        assert sized[key] > 0


def test_human_table_has_units(run_cli):
    code, out, _ = run_cli("fuels", "storage", "diesel", "--range", "500",
                           "--energy-per-km", "2.5")
    assert code == 0
    assert "MJ/L" in out and "kg/L" in out and "tank water volume" in out and " L" in out


@pytest.mark.parametrize(("argv", "option"), [
    (["lpg", "--temperature", "150"], "--temperature"),  # above the critical point
    (["lpg", "--temperature", "-150"], "--temperature"),  # below freezing
    (["natural-gas", "--pressure", "0"], "--pressure"),
    (["diesel", "--kind", "compressed"], "--kind"),
    (["lpg", "--range", "500"], "--energy-per-km"),
    (["lpg", "--range", "-5", "--energy-per-km", "2"], "--range"),
    (["lpg", "--tank-volume", "60", "--range", "5", "--energy-per-km", "2"], "--tank-volume"),
    (["lpg", "--tank", "cng-type1"], "--tank"),
    (["no-such-fuel"], "no-such-fuel"),
])
def test_bad_input_is_one_line_and_exit_2(run_cli, argv, option):
    code, out, err = run_cli("fuels", "storage", *argv)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith(f"workbench: error: {option}")


def test_bad_input_from_the_installed_command_has_no_traceback():
    proc = subprocess.run(
        [sys.executable, "-m", "workbench.interfaces.cli", "fuels", "storage", "diesel", "--kind",
         "compressed"], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2
    assert proc.stderr.startswith("workbench: error: --kind: diesel cannot be stored")
    assert proc.stderr.strip().count("\n") == 0 and "Traceback" not in proc.stderr
