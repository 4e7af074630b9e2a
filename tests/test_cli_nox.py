"""Tests of the ``workbench nox`` command."""

from __future__ import annotations

import json

import pytest

from workbench.interfaces.cli import main


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(["nox", *argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.slow
def test_json_keys_and_values(capsys):
    code, out, _ = run(capsys, "natural-gas", "--baseline", "gasoline", "--json")
    assert code == 0
    data = json.loads(out)
    for key in ("flame_temperature_k", "no_ppm", "no2_eq_g_per_mj", "propensity_index",
                "formation_time_ms", "no_equilibrium_ppm"):
        assert isinstance(data[key], float)
    assert data["fuel"] == "natural-gas" and data["baseline"] == "gasoline"
    # Common practice, no source: natural gas forms less thermal NO than gasoline.
    assert 0.0 < data["propensity_index"] < 1.0
    assert 1500.0 < data["flame_temperature_k"] < 3000.0


@pytest.mark.slow
def test_options_reach_the_model(capsys):
    _, out, _ = run(capsys, "propane", "--engine", "lean-burn-gas", "--phi", "0.7",
                    "--compression-ratio", "11", "--residence-time", "2", "--json")
    data = json.loads(out)
    assert data["engine"] == "lean-burn-gas" and data["phi"] == 0.7
    assert data["residence_time_ms"] == pytest.approx(2.0)
    # 320 K * 11^0.32, the lean-burn preset's intake and polytropic exponent.
    assert data["t_unburnt_k"] == pytest.approx(320.0 * 11.0**0.32)


@pytest.mark.slow
def test_human_table_has_units(capsys):
    code, out, _ = run(capsys, "propane")
    assert code == 0
    for label in ("flame_temperature_k [K]", "no_ppm [ppm]", "no2_eq_g_per_mj [g/MJ]",
                  "propensity_index [-]"):
        assert label in out


@pytest.mark.parametrize(
    ("argv", "option"),
    [(["propane", "--phi", "3"], "--phi"),
     (["propane", "--compression-ratio", "0.5"], "--compression-ratio"),
     (["propane", "--residence-time", "0"], "--residence-time"),
     (["no-such-fuel"], "no-such-fuel")],
)
def test_bad_input_is_one_line(capsys, argv, option):
    code, out, err = run(capsys, *argv)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and option in err and "Traceback" not in err


def test_unknown_preset_is_a_usage_error(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["nox", "propane", "--engine", "steam"])
    assert exc.value.code == 2
    assert "--engine" in capsys.readouterr().err
