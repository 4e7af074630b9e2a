"""A corpus of bad invocations and bad files through the command line.

Each ends in exit status 2 with one line on standard error and no traceback: the promise of
``workbench.core.errors`` and the README. The files are the shipped demo study with one value
broken; "common practice, no source" for what a clean refusal is.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from workbench.core.fuels import LIBRARY
from workbench.study.studyfile import DEMO_STUDY

DEMO_TEXT = DEMO_STUDY.read_text(encoding="utf-8")

# (label, original line of the demo study, its broken replacement)
BROKEN_STUDIES = [
    ("power tower", 'range = "450 km"', 'range = "9 ** 9 ** 9 km"'),
    ("division by zero", 'range = "450 km"', 'range = "1 / 0 km"'),
    ("arithmetic", 'range = "450 km"', 'range = "5 km + 3 m"'),
    ("unbalanced bracket", 'range = "450 km"', 'range = "450 (km"'),
    ("overflow", 'range = "450 km"', 'range = "1e400 km"'),
    ("discount -99 %", 'discount_rate = { kind = "uniform", low = "5 %", high = "9 %" }',
     'discount_rate = "-99 %"'),
    ("start year", "start_year = 2027", "start_year = 99999"),
    ("horizon", "horizon_years = 8", "horizon_years = 100000"),
    ("draws", "monte_carlo_draws = 10000", "monte_carlo_draws = 1000000000000"),
    ("nan money", "upkeep_per_year = 1900", "upkeep_per_year = nan"),
    ("inf money", "daily_revenue = 210", "daily_revenue = inf"),
    ("nan share", "extra_idle_share = 0.15", "extra_idle_share = nan"),
    ("list for a name", 'name = "Taxis"', 'name = ["Taxis"]'),
    ("table for a number", "count = 640", "count = { kind = \"uniform\" }"),
    ("list for a fuel", 'fuel = "lpg"', 'fuel = ["lpg"]'),
    ("table for a conversion", 'fuel = "lpg"', 'fuel = "lpg"\nconversion = { kind = 1 }'),
    ("null byte in a file name", 'profile = "taxi-shift"', 'profile = "taxi\\u0000shift"'),
    ("over-long file name", 'profile = "taxi-shift"', f'profile = "{"x" * 5000}.csv"'),
    ("price per per", 'lpg = "1.5 %"', 'lpg = "1.5 % per %"'),
    ("nan upstream", "lpg = { wtt_co2e_g_per_mj = 8.0,", "lpg = { wtt_co2e_g_per_mj = nan,"),
    ("unknown programme key", "seed = 2027", "seed = 2027\nsede = 1"),
    ("dual-fuel pilot without a price", 'conversion = "bi-fuel-si"',
     'conversion = "dual-fuel-ci"\npilot_fuel = "n-dodecane"'),
]


def _study(tmp_path: Path, old: str, new: str) -> str:
    assert old in DEMO_TEXT
    path = tmp_path / "broken.toml"
    path.write_text(DEMO_TEXT.replace(old, new, 1), encoding="utf-8")
    return str(path)


def _assert_clean_refusal(code: int, out: str, err: str) -> None:
    assert code == 2, (code, out, err)
    assert "Traceback" not in err and "Traceback" not in out
    assert len(err.strip().splitlines()) == 1, err
    assert err.startswith("workbench"), err


@pytest.mark.parametrize(("label", "old", "new"), BROKEN_STUDIES,
                         ids=[b[0] for b in BROKEN_STUDIES])
def test_broken_study_files(run_cli, tmp_path, label, old, new):
    _assert_clean_refusal(*run_cli("study", "check", _study(tmp_path, old, new)))


def _bytes_file(tmp_path: Path, name: str, data: bytes) -> str:
    path = tmp_path / name
    path.write_bytes(data)
    return str(path)


BAD_INVOCATIONS = [
    ("missing study", lambda t: ["study", "check", str(t / "missing.toml")]),
    ("study is a folder", lambda t: ["study", "check", str(t)]),
    ("study not UTF-8", lambda t: ["study", "check", _bytes_file(
        t, "latin.toml", "title = 'Café'".encode("latin-1"))]),
    ("study random bytes", lambda t: ["study", "check", _bytes_file(
        t, "r.toml", bytes(range(256)))]),
    ("study null byte in its name", lambda t: ["study", "check", "a\x00b.toml"]),
    ("draws 10^12", lambda t: ["study", "run", "demo", "--draws", "1000000000000"]),
    ("report wrong suffix", lambda t: ["study", "report", "demo", "-o", str(t / "r.txt")]),
    ("report missing folder", lambda t: ["study", "report", "demo", "-o",
                                         str(t / "no" / "r.html")]),
    ("fuel density nan", lambda t: ["fuels", "show", _bytes_file(
        t, "nanfuel.toml", (LIBRARY / "diesel.toml").read_bytes().replace(
            b"density_kg_per_m3 = ", b"density_kg_per_m3 = nan #"))]),
    ("fuel not UTF-8", lambda t: ["fuels", "show", _bytes_file(t, "bad.toml", b"name = '\xff'")]),
    ("fuel null byte", lambda t: ["fuels", "show", "pro\x00pane.toml"]),
    ("phi nan", lambda t: ["fuels", "show", "propane", "--phi", "nan"]),
    ("rpm inf", lambda t: ["nox", "propane", "--rpm", "inf"]),
    ("storage temperature nan", lambda t: ["fuels", "storage", "lpg", "--temperature", "nan"]),
    ("blend fraction nan", lambda t: ["fuels", "blend", "propane=nan", "n-butane=0.5"]),
    ("blend write wrong suffix", lambda t: ["fuels", "blend", "propane=0.5", "n-butane=0.5",
                                            "--write", str(t / "b.txt")]),
    ("missing profile", lambda t: ["duty", "stats", str(t / "missing.csv")]),
    ("fuel folder missing", lambda t: ["fuels", "list", "--fuels", str(t / "none")]),
    ("fuel folder name too long", lambda t: ["fuels", "show", "propane", "--fuels", "x" * 5000]),
]


@pytest.mark.parametrize(("label", "argv"), BAD_INVOCATIONS, ids=[b[0] for b in BAD_INVOCATIONS])
def test_bad_invocations(run_cli, tmp_path, label, argv):
    _assert_clean_refusal(*run_cli(*argv(tmp_path)))


def test_a_byte_order_mark_is_read_not_refused(run_cli, tmp_path):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + DEMO_TEXT.encode("utf-8"))
    code, out, err = run_cli("study", "check", str(path))
    assert code == 0, err
    assert out.startswith("ok: ")


def test_the_draws_cap_says_how_much_memory_it_would_take(run_cli):
    # 8 bytes per float64 (IEEE 754 binary64) for each uncertain input and each option's
    # yearly costs, cash flow and CO2e: 10^12 draws of the demo (4 options, 9 years: over
    # 117 floats a draw) need about a PB.
    code, _, err = run_cli("study", "run", "demo", "--draws", "1000000000000")
    assert code == 2
    assert "--draws: 10^12 draws would need ~" in err and " PB of memory; at most 1,000,000" in err


def test_a_discount_rate_of_minus_99_percent_is_refused(run_cli, tmp_path):
    # (1 + r)^-t at r = -0.99 is 100^t: an NPV of 1e22 from ordinary costs (the case).
    path = _study(tmp_path, 'discount_rate = { kind = "uniform", low = "5 %", high = "9 %" }',
                  'discount_rate = "-99 %"')
    code, _, err = run_cli("study", "check", path)
    assert code == 2 and "programme.discount_rate: must be at least -10 %" in err
