"""``workbench study`` and ``workbench demo``."""

from __future__ import annotations

import json

import pytest

from workbench.study.studyfile import DEMO_STUDY

pytestmark = pytest.mark.slow

KEYS = ["id", "fuel", "fuel_energy_mj_per_km", "co2_ttw_g_per_km", "co2e_wtw_g_per_km",
        "nox_g_per_km", "cost_per_km", "npv_vs_baseline", "payback_years", "p_npv_positive"]


def test_check_says_what_the_file_holds(run_cli):
    code, out, _ = run_cli("study", "check", str(DEMO_STUDY))
    assert code == 0 and out.startswith("ok:") and "3 candidates" in out


def test_check_lists_the_defaults_and_warns_about_a_kept_map(run_cli, tmp_path):
    code, out, _ = run_cli("study", "check", str(DEMO_STUDY))
    lines = out.splitlines()
    assert any(line.startswith("default: cng-fleet/van: engine-out NOx = 7 g/kWh (")
               for line in lines)
    assert any(line.startswith("default: cng-fleet/bus: derate = 15.0 %") for line in lines)
    assert not any(line.startswith("warning:") for line in lines)
    text = DEMO_STUDY.read_text(encoding="utf-8").replace(
        'conversion = { taxi = "bi-fuel-si", van = "dedicated-si", bus = "dedicated-si" }',
        'conversion = { taxi = "bi-fuel-si", van = "none", bus = "dedicated-si" }')
    study = tmp_path / "s.toml"
    study.write_text(text, encoding="utf-8")
    code, out, _ = run_cli("study", "check", str(study), "--quiet-defaults")
    assert code == 0
    assert out.splitlines()[1:] == [
        "warning: cng-fleet/van: natural-gas (spark-ignition) runs unchanged on a map made for "
        "compression-ignition: name a conversion kind or give the converted engine's map"]


def test_run_json_has_the_promised_keys(run_cli):
    code, out, _ = run_cli("study", "run", str(DEMO_STUDY), "--json", "--draws", "300")
    assert code == 0
    data = json.loads(out)
    assert data["currency"] == "KBD"
    cands = data["candidates"]
    assert [c["id"] for c in cands] == ["today", "lpg-taxis", "cng-fleet", "electric-vans"]
    assert data["notices"] == [] and {"quantity", "value", "unit", "source"} <= set(
        data["defaults"][0])
    for c in cands:
        assert set(KEYS) <= set(c)
    assert cands[0]["npv_vs_baseline"] is None  # the baseline has no NPV against itself
    assert 0.0 <= cands[1]["p_npv_positive"] <= 1.0


def test_run_writes_every_table_as_csv(run_cli, tmp_path):
    code, out, _ = run_cli("study", "run", str(DEMO_STUDY), "--csv", str(tmp_path),
                           "--draws", "0")
    assert code == 0 and "lpg-taxis" in out
    names = {p.name for p in tmp_path.iterdir()}
    assert {"candidates.csv", "per_km.csv", "cash_flows.csv", "nox_monthly.csv"} <= names
    assert not [n for n in names if n.endswith(".tmp")]


@pytest.mark.parametrize(
    ("edit", "named"),
    [
        (("count = 640", "count = -640"), "classes[0].count"),
        (('natural-gas = { kind = "triangular", low = "1.15 per kg", mode = "1.38 per kg", '
          'high = "1.65 per kg" }', 'natural-gas = "1.3 per L"'), "prices.natural-gas"),
        (('discount_rate = { kind = "uniform", low = "5 %", high = "9 %" }',
          'discount_rate = "-120 %"'), "programme.discount_rate"),
        (("horizon_years = 8", "horizon_years = 0"), "programme.horizon_years"),
        (('fuel = "lpg"', 'fuel = "lpgx"'), "candidates[0].fuel"),
        (('low = 2100, high = 2900', 'low = 2900, high = 2100'), "candidates[0].conversion_cost"),
    ],
)
def test_bad_study_files_end_in_one_line(run_cli, tmp_path, edit, named):
    text = DEMO_STUDY.read_text(encoding="utf-8")
    assert edit[0] in text
    bad = tmp_path / "bad.toml"
    bad.write_text(text.replace(edit[0], edit[1], 1), encoding="utf-8")
    code, _, err = run_cli("study", "run", str(bad), "--draws", "0")
    assert code == 2, err
    assert err.count("\n") == 1 and named in err and "bad.toml" in err


def test_csv_folder_is_made_when_missing(run_cli, tmp_path):
    folder = tmp_path / "results" / "run-1"
    code, _, err = run_cli("study", "run", str(DEMO_STUDY), "--draws", "0", "--csv", str(folder))
    assert code == 0, err
    assert (folder / "candidates.csv").is_file()


def test_bad_output_paths(run_cli, tmp_path):
    (tmp_path / "a-file").write_text("x", encoding="utf-8")
    code, _, err = run_cli("study", "run", str(DEMO_STUDY), "--csv", str(tmp_path / "a-file"))
    assert code == 2 and "--csv" in err and "is a file" in err
    code, _, err = run_cli("study", "report", str(DEMO_STUDY), "-o", str(tmp_path / "r.txt"))
    assert code == 2 and "-o" in err
    code, _, err = run_cli("study", "run", "missing.toml")
    assert code == 2 and "missing.toml" in err


def test_demo_writes_a_report_with_every_chart(run_cli, tmp_path):
    out_file = tmp_path / "demo.html"
    code, out, _ = run_cli("demo", "-o", str(out_file), "--draws", "200")
    assert code == 0 and "report written" in out and "invented" in out
    html = out_file.read_text(encoding="utf-8")
    for chart in ("cost_per_km", "co2_per_km", "nox_monthly", "energy_density", "cash_flow",
                  "efficiency_map:taxi", "efficiency_map:bus", "tornado", "monte_carlo", "flame"):
        assert f'data-chart="{chart}"' in html
    assert "licensed" in html  # the safety caution


def test_check_reads_the_profiles_too(run_cli, tmp_path):
    (tmp_path / "mine.csv").write_text("time_s,speed_km_per_h\n0,0\n1,10\n1,20\n",
                                      encoding="utf-8")
    text = DEMO_STUDY.read_text(encoding="utf-8").replace('profile = "taxi-shift"',
                                                          'profile = "mine.csv"')
    study = tmp_path / "s.toml"
    study.write_text(text, encoding="utf-8")
    code, _, err = run_cli("study", "check", str(study))
    assert code == 2 and "mine.csv row 4" in err and err.count("\n") == 1
