"""Files a study names: one resolution rule, read once when checked, never served stale.

The stale-file tests follow the user's path in one process: run a study, edit a file on disk,
read the study again and run it: the new numbers must come out, equal to a run from empty
caches (which cannot be stale). The reference for "equal" is that fresh run, computed by the
same code from scratch; the edits are chosen so that the old numbers would differ.
"""

from __future__ import annotations

import builtins
import io
import shutil
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import tomli_w
from numpy.testing import assert_allclose

from workbench.core.cache import clear_caches
from workbench.core.errors import InputError
from workbench.core.fuels import LIBRARY
from workbench.io.maps import format_map_csv, read_map
from workbench.io.profiles import format_trace_csv, read_trace
from workbench.models.duty import DutyTrace, duty_stats
from workbench.models.engine import EngineMap
from workbench.study import read_study, run
from workbench.study.studyfile import DATA, DEMO_STUDY

#: Keyword of the taxi class's per-km rows in the result.
TAXI = "taxi"


def copy_demo(folder: Path) -> Path:
    """The demo study in ``folder``, its taxi class pointing at copies of its files there."""
    data = tomllib.loads(DEMO_STUDY.read_text(encoding="utf-8"))
    taxi = data["classes"][0]
    assert taxi["id"] == TAXI
    (folder / "files").mkdir()
    for key, sub, suffix, name in (("profile", "profiles", ".csv", "shift.csv"),
                                   ("vehicle", "vehicles", ".toml", "car.toml"),
                                   ("engine_map", "maps", ".csv", "engine.csv")):
        shutil.copy(DATA / sub / f"{taxi[key]}{suffix}", folder / "files" / name)
        taxi[key] = f"files/{name}"
    data["programme"]["monte_carlo_draws"] = 0
    path = folder / "study.toml"
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    return path


def taxi_per_km(result) -> pd.DataFrame:
    per_km = result.per_km
    return per_km[per_km["vehicle_class"] == TAXI].reset_index(drop=True)


def rerun_sees_the_edit(path: Path, edit) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Per-km taxi rows before and after ``edit()``, checked against a run from scratch."""
    before = taxi_per_km(run(read_study(path), draws=0))
    edit()
    after = taxi_per_km(run(read_study(path), draws=0))
    clear_caches()
    fresh = taxi_per_km(run(read_study(path), draws=0))
    pd.testing.assert_frame_equal(after, fresh, rtol=1e-12)
    assert not np.allclose(before["fuel_energy_mj_per_km"], after["fuel_energy_mj_per_km"],
                           rtol=1e-6)
    return before, after


@pytest.mark.slow
def test_edited_profile_is_read_again(tmp_path):
    path = copy_demo(tmp_path)
    profile = tmp_path / "files" / "shift.csv"
    old = read_trace(profile)

    def double_the_distance():
        # every interval twice as long at the same speeds: twice the distance (trapezoid rule)
        longer = DutyTrace(time=old.time * 2.0, speed=old.speed, grade=old.grade,
                           payload=old.payload)
        profile.write_text(format_trace_csv(longer), encoding="utf-8")

    first = read_study(path)
    rerun_sees_the_edit(path, double_the_distance)
    new = read_study(path).inputs.classes[0].profile_data
    assert_allclose(duty_stats(new).distance, 2.0 * duty_stats(old).distance, rtol=1e-9)
    # a study already read keeps what it read (read it again to see an edit)
    assert first.inputs.classes[0].profile_data == old


@pytest.mark.slow
def test_edited_vehicle_is_read_again(tmp_path):
    path = copy_demo(tmp_path)
    vehicle = tmp_path / "files" / "car.toml"
    text = vehicle.read_text(encoding="utf-8")
    assert "mass_kg = { value = 1450" in text

    def heavier():
        vehicle.write_text(text.replace("mass_kg = { value = 1450", "mass_kg = { value = 1950"),
                           encoding="utf-8")

    rerun_sees_the_edit(path, heavier)
    assert read_study(path).inputs.classes[0].vehicle_data.mass == 1950.0


@pytest.mark.slow
def test_edited_map_is_read_again(tmp_path):
    path = copy_demo(tmp_path)
    engine = tmp_path / "files" / "engine.csv"
    old = read_map(engine)

    def less_efficient():
        worse = EngineMap(name="m", speed=old.speed, torque=old.torque,
                          efficiency=old.efficiency * 0.9, full_load_torque=old.full_load_torque,
                          idle_speed=old.idle_speed, idle_fuel_power=old.idle_fuel_power)
        engine.write_text(format_map_csv(worse), encoding="utf-8")

    before, after = rerun_sees_the_edit(path, less_efficient)
    # 10 % less brake efficiency in every cell (idle fuel kept): more fuel per km on every
    # option, by about 1/0.9 (more where an option's efficiency offset is subtracted too)
    ratio = after["fuel_energy_mj_per_km"] / before["fuel_energy_mj_per_km"]
    assert ((ratio > 1.05) & (ratio < 1.15)).all()


def test_each_profile_is_parsed_once_per_check(monkeypatch):
    import workbench.io.profiles as profiles

    clear_caches()
    calls = []
    real = profiles.parse_csv

    def counting(data, name, *args, **kwargs):
        calls.append(Path(name).name)
        return real(data, name, *args, **kwargs)

    monkeypatch.setattr(profiles, "parse_csv", counting)
    study = read_study("demo")
    assert sorted(calls) == ["shuttle-route.csv", "taxi-shift.csv", "van-day.csv"]
    study.with_value("programme.discount_rate", "5 %")  # a re-check: same bytes, no re-parse
    assert len(calls) == 3


@pytest.mark.slow
def test_run_opens_no_file(monkeypatch):
    study = read_study("demo")

    def refuse(*args, **kwargs):
        raise AssertionError(f"run() opened a file: {args[:1]}")

    for target, name in ((builtins, "open"), (io, "open"), (Path, "read_bytes"),
                         (Path, "read_text")):
        monkeypatch.setattr(target, name, refuse)
    result = run(study, draws=10)
    assert len(result.candidates) == 4


# ----------------------------------------------------------------------------- resolution


def study_with(tmp_path: Path, **taxi: str) -> Path:
    data = tomllib.loads(DEMO_STUDY.read_text(encoding="utf-8"))
    data["classes"][0].update(taxi)
    path = tmp_path / "sub" / "study.toml"
    path.parent.mkdir(exist_ok=True)
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    return path


def test_relative_paths_are_read_from_the_study_folder(tmp_path, monkeypatch):
    path = study_with(tmp_path, profile="shift.csv", vehicle="../car.toml")
    shutil.copy(DATA / "profiles" / "taxi-shift.csv", path.parent / "shift.csv")
    shutil.copy(DATA / "vehicles" / "taxi.toml", tmp_path / "car.toml")
    monkeypatch.chdir(tmp_path)  # the working directory must not matter
    taxi = read_study(path).inputs.classes[0]
    assert taxi.profile == path.parent / "shift.csv"
    assert taxi.vehicle == (tmp_path / "car.toml").resolve()


@pytest.mark.parametrize(("taxi", "match"), [
    ({"profile": "missing.csv"}, r"classes\[0\].profile: no profile file at .*sub/missing.csv"),
    ({"profile": "shift.txt"}, r"classes\[0\].profile: 'shift.txt' is not a profile file: name "
                               r"a .csv file"),
    ({"vehicle": "taxi.csv"}, r"classes\[0\].vehicle: 'taxi.csv' is not a vehicle file"),
    ({"engine_map": "maps/none.csv"}, r"no map file at .*sub/maps/none.csv"),
    ({"profile": "bad\x00name.csv"},
     r"classes\[0\].profile: .* holds a null byte; name a profile .csv file"),
])
def test_bad_file_references_name_the_path_tried(tmp_path, taxi, match):
    with pytest.raises(InputError, match=match) as info:
        read_study(study_with(tmp_path, **taxi))
    assert "\n" not in str(info.value)


def test_reader_errors_name_the_key_path_and_the_row(tmp_path):
    path = study_with(tmp_path, profile="shift.csv")
    (path.parent / "shift.csv").write_text("time_s,speed_km_per_h\n0,0\n1,-5\n",
                                           encoding="utf-8")
    with pytest.raises(InputError, match=r"classes\[0\].profile: .*shift.csv row 3: speed is "
                                         r"negative"):
        read_study(path)


def test_fuel_files_follow_the_same_rule(tmp_path, monkeypatch):
    data = tomllib.loads(DEMO_STUDY.read_text(encoding="utf-8"))
    fuel_id = data["candidates"][0]["fuel"]
    data["candidates"][0]["fuel"] = "fuels/own.toml"
    folder = tmp_path / "sub"
    (folder / "fuels").mkdir(parents=True)
    shutil.copy(LIBRARY / f"{fuel_id}.toml", folder / "fuels" / "own.toml")
    path = folder / "study.toml"
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    data["prices"]["own"] = data["prices"].pop(fuel_id)
    data["upstream"]["own"] = data["upstream"].pop(fuel_id)
    if fuel_id in data.get("escalation", {}):
        data["escalation"]["own"] = data["escalation"].pop(fuel_id)
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    study = read_study(path)
    assert study.inputs.candidates[0].per_class[TAXI].fuel.id == "own"
    data["candidates"][0]["fuel"] = "fuels/own.json"
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    with pytest.raises(InputError, match=r"'fuels/own.json' is not a fuel file: name a .toml"):
        read_study(path)
