"""Conventions every ``workbench`` command keeps: --version, python -m, help with examples,
``-`` for standard input and output, --open, progress on a terminal only, lazy imports.

The references are outside the code under test: the installed distribution's metadata and
``pyproject.toml`` for the version, Python's own ``tomllib`` and ``pandas.read_csv`` for what
is printed, ``sys.modules`` of a fresh interpreter for what a command imports.
"""

from __future__ import annotations

import argparse
import io
import json
import subprocess
import sys
import tomllib
from importlib import metadata
from pathlib import Path

import pandas as pd
import pytest

import workbench
from workbench.core.fuels import LIBRARY, list_fuels
from workbench.core.paths import DATA
from workbench.interfaces.cli import build_parser, main
from workbench.study.results import COLUMNS
from workbench.study.studyfile import DEMO_STUDY

ROOT = Path(__file__).resolve().parents[1]
#: Libraries that building the parser must not import (each costs 0.1-0.5 s at start-up).
HEAVY = ("numpy", "pandas", "cantera", "pint", "scipy", "plotly", "CoolProp", "ipywidgets")


def fresh_modules(code: str) -> set[str]:
    """Top-level modules a fresh interpreter holds after running ``code``."""
    probe = f"{code}\nimport sys\nprint(' '.join(sorted({{m.split('.')[0] for m in sys.modules}})))"
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                         check=True, cwd=ROOT).stdout
    return set(out.split())


class Terminal(io.StringIO):
    """A standard error that says it is a terminal."""

    def isatty(self) -> bool:
        return True


# ----------------------------------------------------------------------------- version


def test_version_is_the_package_metadata(run_cli):
    # One version string: pyproject.toml -> the installed metadata -> --version, __version__.
    declared = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    installed = metadata.version("fuelswitch-workbench")
    assert installed == declared["project"]["version"]
    assert workbench.__version__ == installed
    code, out, err = run_cli("--version")
    assert code == 0 and out == f"workbench {installed}\n" and err == ""


def test_python_dash_m_workbench_runs_the_cli():
    done = subprocess.run([sys.executable, "-m", "workbench", "--version"], capture_output=True,
                          text=True, cwd=ROOT)
    assert done.returncode == 0
    assert done.stdout.strip() == f"workbench {metadata.version('fuelswitch-workbench')}"


# ----------------------------------------------------------------------------- help


def _parsers(parser: argparse.ArgumentParser, name: str = "workbench"):
    yield name, parser
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for sub_name, sub in action.choices.items():
                yield from _parsers(sub, f"{name} {sub_name}")


def test_every_help_has_a_description_and_an_example():
    seen = 0
    for name, parser in _parsers(build_parser()):
        assert parser.description, name
        assert parser.epilog and parser.epilog.startswith("example"), name
        help_text = parser.format_help()
        # the examples are commands of this very program, shown as written
        examples = [line.strip() for line in help_text.splitlines()
                    if line.startswith("  workbench ") or line.startswith("  cat ")]
        assert examples and all("workbench" in e for e in examples), name
        seen += 1
    assert seen >= 13  # workbench, 5 groups/commands, 8 sub-commands


def test_bad_options_end_in_one_line_and_status_2(run_cli):
    for argv in (["fuels", "list", "--bogus"], ["nox", "lpg", "--engine", "two-stroke"],
                 ["study", "run"], ["demo", "--draws", "many"], ["frobnicate"]):
        code, out, err = run_cli(*argv)
        assert code == 2, argv
        assert out == "" and err.count("\n") == 1 and "error:" in err, argv


def test_lazy_engine_presets_are_checked_and_listed(run_cli):
    from workbench.models.nox import ENGINE_PRESETS

    code, _, err = run_cli("nox", "lpg", "--engine", "two-stroke")
    assert code == 2 and all(name in err for name in ENGINE_PRESETS)
    code, out, _ = run_cli("nox", "--help")
    assert code == 0 and all(name in out for name in ENGINE_PRESETS)


# ----------------------------------------------------------------------------- start-up


def test_building_the_parser_imports_no_numerical_library():
    loaded = fresh_modules("from workbench.interfaces.cli import build_parser\n"
                           "build_parser().format_help()")
    assert not loaded & set(HEAVY), loaded & set(HEAVY)


def test_fuels_list_reads_headers_without_cantera():
    loaded = fresh_modules("import contextlib, io\n"
                           "from workbench.interfaces.cli import main\n"
                           "with contextlib.redirect_stdout(io.StringIO()):\n"
                           "    main(['fuels', 'list'])")
    assert "cantera" not in loaded and "numpy" not in loaded


def test_fuels_list_says_what_the_files_say(run_cli):
    code, out, _ = run_cli("fuels", "list", "--json")
    assert code == 0
    rows = {r["id"]: r for r in json.loads(out)}
    assert sorted(rows) == list_fuels()
    for fid, row in rows.items():
        data = tomllib.loads((LIBRARY / f"{fid}.toml").read_text(encoding="utf-8"))
        assert row["name"] == data.get("name", fid)
        assert row["state"] == data["state"]
        assert row["storage"] == data.get("storage", {}).get("kind")


# ----------------------------------------------------------------------------- - for stdio


def test_blend_written_to_standard_output_is_a_fuel_file(run_cli):
    code, out, _ = run_cli("fuels", "blend", "propane=0.6", "n-butane=0.4", "--write", "-")
    assert code == 0
    data = tomllib.loads(out)
    assert data["state"] == "gas"
    assert data["blend"]["basis"] == "mole"
    assert data["blend"]["propane"] == 0.6 and data["blend"]["n-butane"] == 0.4


@pytest.mark.slow
def test_study_read_from_standard_input(run_cli, monkeypatch):
    monkeypatch.chdir(DEMO_STUDY.parent)  # relative paths of a piped study: the working folder
    monkeypatch.setattr(sys, "stdin", io.StringIO(DEMO_STUDY.read_text(encoding="utf-8")))
    code, out, err = run_cli("study", "check", "-")
    assert code == 0 and out.startswith("ok: -: ") and err == ""


def test_standard_input_from_a_terminal_or_empty_is_refused(run_cli, monkeypatch):
    for stdin in (Terminal(), io.StringIO("")):
        monkeypatch.setattr(sys, "stdin", stdin)
        code, _, err = run_cli("study", "check", "-")
        assert code == 2 and "FILE" in err and "standard input" in err
        assert err.count("\n") == 1


def piped(data: bytes) -> io.TextIOWrapper:
    """A standard input that holds ``data``, with the byte stream below it as a shell gives."""
    return io.TextIOWrapper(io.BytesIO(data), encoding="utf-8")


def test_duty_stats_reads_a_profile_from_standard_input(run_cli, monkeypatch):
    # 10 s at a steady 36 km/h (10 m/s), after a byte-order mark: 100 m (closed form, d = v t)
    monkeypatch.setattr(sys, "stdin", piped(b"\xef\xbb\xbftime_s,speed_km_per_h\n0,36\n10,36\n"))
    code, out, err = run_cli("duty", "stats", "-", "--json")
    assert code == 0 and err == ""
    got = json.loads(out)
    assert got["distance_km"] == pytest.approx(0.1) and got["mean_speed_km_per_h"] == 36.0


def test_duty_fuel_reads_a_profile_from_standard_input(run_cli, monkeypatch):
    # the same numbers as from the file itself (the file route: tests/test_cli_duty.py)
    profile = DATA / "profiles" / "taxi-shift.csv"
    argv = ("--vehicle", "taxi", "--map", "taxi-si-1.8l", "--fuel", "gasoline", "--json")
    code, out, _ = run_cli("duty", "fuel", str(profile), *argv)
    assert code == 0
    monkeypatch.setattr(sys, "stdin", piped(profile.read_bytes()))
    code, piped_out, err = run_cli("duty", "fuel", "-", *argv)
    assert code == 0 and err == ""
    want, got = json.loads(out), json.loads(piped_out)
    assert got.pop("profile") == "-"
    want.pop("profile")
    assert got == want


def test_a_bad_profile_on_standard_input_is_named_by_row(run_cli, monkeypatch):
    monkeypatch.setattr(sys, "stdin", piped(b"time_s,speed_km_per_h\n0,36\n10,fast\n"))
    code, _, err = run_cli("duty", "stats", "-")
    assert code == 2 and "<stdin> row 3" in err and err.count("\n") == 1


def test_an_empty_profile_on_standard_input_is_refused(run_cli, monkeypatch):
    for stdin in (Terminal(), piped(b""), piped(b"\xef\xbb\xbf \n")):
        monkeypatch.setattr(sys, "stdin", stdin)
        code, _, err = run_cli("duty", "stats", "-")
        assert code == 2 and "PROFILE" in err and "standard input" in err
        assert err.count("\n") == 1


@pytest.mark.slow
def test_every_table_as_csv_on_standard_output(run_cli):
    code, out, _ = run_cli("study", "run", str(DEMO_STUDY), "--draws", "0", "--csv", "-")
    assert code == 0
    blocks = out.split("# ")[1:]
    tables = {}
    for block in blocks:
        name, _, body = block.partition("\n")
        tables[name] = pd.read_csv(io.StringIO(body)) if body.strip() else None
    assert sorted(tables) == sorted(COLUMNS) and len(blocks) == len(COLUMNS)
    for name in ("candidates", "per_km", "cash_flows"):
        assert list(tables[name].columns) == list(COLUMNS[name])
    assert "lpg-taxis" in set(tables["candidates"]["candidate"])


@pytest.mark.slow
def test_report_on_standard_output(run_cli, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, _ = run_cli("study", "report", str(DEMO_STUDY), "-o", "-", "--draws", "0")
    assert code == 0
    assert out.startswith("<!DOCTYPE html>") and out.rstrip().endswith("</html>")
    assert 'data-chart="cost_per_km"' in out
    assert list(tmp_path.iterdir()) == []  # no file, no temporary left


def test_stdout_targets_that_clash_are_refused(run_cli):
    for argv, named in ((["demo", "-o", "-", "--json"], "-o"),
                        (["demo", "-o", "-", "--open"], "--open"),
                        (["demo", "--open"], "--open"),
                        (["study", "run", str(DEMO_STUDY), "--csv", "-", "--json"], "--csv")):
        code, out, err = run_cli(*argv)
        assert code == 2 and out == "" and named in err and err.count("\n") == 1, argv


# ----------------------------------------------------------------------------- --open, progress


@pytest.mark.slow
def test_open_shows_the_written_report(run_cli, tmp_path, monkeypatch):
    opened = []
    monkeypatch.setattr("webbrowser.open", lambda url, *a, **k: opened.append(url) or True)
    target = tmp_path / "demo.html"
    code, _, _ = run_cli("demo", "-o", str(target), "--draws", "0", "--open", "--quiet")
    assert code == 0 and target.is_file()
    assert opened == [target.resolve().as_uri()]


@pytest.mark.slow
def test_progress_only_on_a_terminal_and_not_when_quiet(monkeypatch, capsys):
    lines = {}
    for label, stderr, extra in (("piped", io.StringIO(), []), ("terminal", Terminal(), []),
                                 ("quiet", Terminal(), ["--quiet"])):
        monkeypatch.setattr(sys, "stderr", stderr)
        assert main(["study", "run", str(DEMO_STUDY), "--draws", "0", *extra]) == 0
        lines[label] = stderr.getvalue()
    capsys.readouterr()
    assert lines["piped"] == "" and lines["quiet"] == ""
    assert "workbench: physics and chemistry" in lines["terminal"]
    assert "workbench: done" in lines["terminal"]
