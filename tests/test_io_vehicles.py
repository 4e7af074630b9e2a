"""Tests of workbench.io.vehicles: vehicle TOML files."""

from __future__ import annotations

from pathlib import Path

import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.io.vehicles import read_vehicle

VEHICLES = Path(__file__).resolve().parent.parent / "workbench" / "data" / "vehicles"
RPM = 3.141592653589793 / 30.0  # 2 pi / 60 rad/s per rpm, exact by definition


def test_read_demo_vehicles():
    for name in ("taxi", "van", "shuttle-bus"):
        v = read_vehicle(VEHICLES / f"{name}.toml")
        assert v.mass > 1000 and len(v.gear_ratios) == 6
        text = (VEHICLES / f"{name}.toml").read_text(encoding="utf-8")
        assert "INVENTED" in text
        # every number carries a source or "typical value, example"
        assert text.count("source =") == 13
    taxi = read_vehicle(VEHICLES / "taxi.toml")
    assert_allclose(taxi.shift_speed, 1300 * RPM, rtol=1e-15)


@pytest.mark.parametrize(
    ("edit", "match"),
    [
        (lambda t: t.replace("mass_kg", "weight_kg", 1), r"weight_kg: unknown key"),
        (lambda t: t.replace("final_drive = { value = 3.70", "final_drive = { value = -1"),
         r"final_drive: must be a positive number"),
        (lambda t: t.replace("[4.15, 2.37", "[2.37, 4.15"), r"gear_ratios: must be positive and"),
        (lambda t: t.replace("wheel_radius_m", "# wheel_radius_m"), r"missing key wheel_radius_m"),
        (lambda t: t + "\n[[broken", r"not valid TOML"),
    ],
)
def test_bad_vehicle_files(tmp_path, edit, match):
    path = tmp_path / "v.toml"
    path.write_text(edit((VEHICLES / "taxi.toml").read_text(encoding="utf-8")), encoding="utf-8")
    with pytest.raises(InputError, match=match) as info:
        read_vehicle(path)
    assert str(path) in str(info.value) and "\n" not in str(info.value)
