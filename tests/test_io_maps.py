"""Tests of workbench.io.maps: efficiency-map CSV grids read and written."""

from __future__ import annotations

import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.core.paths import DATA
from workbench.io.maps import format_map_csv, read_map
from workbench.models.engine import EngineMap


def demo_map(stem: str) -> EngineMap:
    return read_map(DATA / "maps" / f"{stem}.csv")


def test_map_csv_round_trip(tmp_path):
    m = demo_map("van-ci-2.3l")
    path = tmp_path / "m.csv"
    path.write_text(format_map_csv(m), encoding="utf-8")
    back = read_map(path)
    assert_allclose(back.efficiency, m.efficiency, atol=1e-12)
    assert_allclose(back.speed, m.speed, rtol=1e-12)


def test_bsfc_map_converts_with_lhv(tmp_path):
    # Brake fuel conversion efficiency eta = 3600 / (bsfc [g/kWh] * LHV [MJ/kg])
    # (Heywood, Internal Combustion Engine Fundamentals, 1988, sect. 2.9, from memory):
    # 250 g/kWh on a 42.8 MJ/kg fuel gives 3600/10700 = 0.336449.
    path = tmp_path / "bsfc.csv"
    path.write_text("# value: bsfc_g_per_kwh\n# bsfc_lhv_mj_per_kg: 42.8\n"
                    "# idle_speed_rpm: 800\n# idle_fuel_power_kw: 3\n"
                    "torque_n_m/speed_rpm,800,2000,4000\nfull_load,200,250,220\n"
                    "20,400,380,420\n200,250,240,260\n", encoding="utf-8")
    m = read_map(path)
    assert_allclose(m.efficiency[1, 0], 3600.0 / (250 * 42.8), rtol=1e-12)


GOOD = ("# value: brake_efficiency\n# idle_speed_rpm: 800\n# idle_fuel_power_kw: 3\n"
        "torque_n_m/speed_rpm,800,2000,4000\nfull_load,200,250,220\n"
        "20,0.15,0.16,0.14\n200,0.33,0.35,0.32\n")


@pytest.mark.parametrize(
    ("edit", "match"),
    [
        (lambda t: t.replace("20,0.15,0.16", "20,,0.16"),
         r"row 6 column 2: map cell '' is missing"),
        (lambda t: t.replace(",800,2000,4000", ",800,4000,2000"),
         r"row 4 column 4: speed axis is not strictly increasing"),
        (lambda t: t.replace("20,0.15", "300,0.15"), r"row 7: torque axis is not strictly"),
        (lambda t: t.replace("# idle_fuel_power_kw: 3\n", ""), r"missing metadata line"),
        (lambda t: t.replace("brake_efficiency", "efficiency_percent"), r"value: unknown"),
        (lambda t: t.replace("0.35", "35"), r"row 7 column 3: efficiency must be in \(0, 1\)"),
        (lambda t: t.replace("speed_rpm,", "speed_rps,"), r"row 4: first header cell"),
        (lambda t: t.replace("full_load,", "fullload,"), r"row 5: second row must be"),
        (lambda t: t.replace("0.16,0.14\n", "0.16\n"), r"row 6: has 3 fields"),
        (lambda t: t.replace("idle_speed_rpm: 800", "idle_speed_rpm: 300"),
         r"idle_speed: must lie within"),
    ],
)
def test_bad_map_files(tmp_path, edit, match):
    path = tmp_path / "map.csv"
    path.write_text(edit(GOOD), encoding="utf-8")
    with pytest.raises(InputError, match=match) as info:
        read_map(path)
    assert str(path) in str(info.value) and "\n" not in str(info.value)


def test_good_map_reads(tmp_path):
    # guard for the parametrised bad-map cases: the unedited text is valid
    path = tmp_path / "map.csv"
    path.write_text(GOOD, encoding="utf-8")
    assert read_map(path).efficiency.shape == (2, 3)
