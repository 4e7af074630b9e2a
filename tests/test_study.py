"""The study: file checks, round trip, money against a reference library, Monte Carlo."""

from __future__ import annotations

import tomllib

import numpy as np
import numpy_financial as npf
import pytest
from numpy.testing import assert_allclose

from workbench.core.cache import cache_info, clear_caches
from workbench.core.errors import InputError
from workbench.study.results import check_columns, missing_reason
from workbench.study.runner import run
from workbench.study.studyfile import DEMO_STUDY, Study, read_study

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def demo():
    return read_study("demo")


@pytest.fixture(scope="module")
def result(demo):
    return run(demo, draws=2000)


def test_demo_round_trips_losslessly(demo):
    text = demo.to_toml()
    assert text == DEMO_STUDY.read_text(encoding="utf-8")  # the file's own text
    again = Study(tomllib.loads(text), base_dir=DEMO_STUDY.parent)
    assert again == demo
    generated = again.to_toml()  # a study made from data writes TOML that reads back equal
    assert Study(tomllib.loads(generated), base_dir=DEMO_STUDY.parent) == demo
    assert demo.data == tomllib.loads(DEMO_STUDY.read_text(encoding="utf-8"))


def test_tables_have_their_columns(result):
    check_columns(result)
    assert list(result.candidates["candidate"]) == ["today", "lpg-taxis", "cng-fleet",
                                                    "electric-vans"]


def test_npv_and_payback_against_numpy_financial(result):
    # Reference library numpy-financial (PyPI): NPV of year-0..H flows at the nominal rate
    # (uniform 5-9 %, mean 7 %); the study's deterministic run uses that mean.
    rate = 0.07
    flows = result.cash_flows
    for cand in ("lpg-taxis", "cng-fleet"):
        diff = flows.loc[flows["candidate"] == cand, "cash_flow_vs_baseline"].to_numpy()
        row = result.candidates.set_index("candidate").loc[cand]
        assert_allclose(row["npv_vs_baseline"], npf.npv(rate, diff), rtol=1e-10)
        cum = np.cumsum(diff)
        first = int(np.argmax(cum >= 0))  # payback falls inside year `first`
        assert first - 1 <= row["payback_years"] <= first


def test_cumulative_discounted_flow_ends_at_the_npv(result):
    flows = result.cash_flows
    last = flows.groupby("candidate")["cumulative_discounted_vs_baseline"].last()
    npv = result.candidates.set_index("candidate")["npv_vs_baseline"]
    assert_allclose(last["lpg-taxis"], npv["lpg-taxis"], rtol=1e-10)


def test_monte_carlo_with_zero_spread_reproduces_the_deterministic_run(demo):
    # Every distribution collapsed to its nominal value: every draw equals the deterministic NPV.
    fixed = demo
    for path in demo.inputs.uncertain:
        fixed = fixed.with_value(path, _nominal_text(fixed, path))
    res = run(fixed, draws=50)
    det = res.candidates.set_index("candidate")["npv_vs_baseline"]
    for cand, draws in res.monte_carlo.groupby("candidate")["npv_vs_baseline"]:
        assert_allclose(draws.to_numpy(), det[cand], rtol=1e-12)


def _nominal_text(study: Study, path: str):
    raw = study.get(path)
    return raw.get("mode", raw.get("mean", raw.get("low")))


def test_monte_carlo_mean_converges_for_a_linear_input(demo):
    # Only the LPG price uncertain (uniform): NPV is linear in it, so the Monte Carlo mean must
    # approach the NPV at the mean price within a few standard errors (central limit theorem).
    s = demo
    for path in demo.inputs.uncertain:
        s = s.with_value(path, _nominal_text(s, path))
    s = s.with_value("prices.lpg", {"kind": "uniform", "low": "0.70 per L", "high": "0.94 per L"})
    res = run(s, draws=4000)
    draws = res.monte_carlo.query("candidate == 'lpg-taxis'")["npv_vs_baseline"].to_numpy()
    at_mean = run(s.with_value("prices.lpg", "0.82 per L"), draws=0)
    expected = at_mean.candidates.set_index("candidate").at["lpg-taxis", "npv_vs_baseline"]
    stderr = draws.std(ddof=1) / np.sqrt(len(draws))
    assert abs(draws.mean() - expected) < 4 * stderr
    assert draws.std() > 0


def test_price_change_reuses_the_physics(demo):
    run(demo, draws=0)
    info = cache_info()
    before = info["workbench.study.runner.class_physics"]
    plan_before = info["workbench.study.runner._physics_plan"]
    cheaper = demo.with_value("prices.lpg", "0.60 per L")
    res = run(cheaper, draws=0)
    info = cache_info()
    after = info["workbench.study.runner.class_physics"]
    plan_after = info["workbench.study.runner._physics_plan"]
    assert after.misses == before.misses  # nothing recomputed
    assert plan_after.misses == plan_before.misses  # the whole physics plan came cached
    assert plan_after.hits > plan_before.hits
    base = run(demo, draws=0).candidates.set_index("candidate")
    assert res.candidates.set_index("candidate").at["lpg-taxis", "npv_vs_baseline"] > \
        base.at["lpg-taxis", "npv_vs_baseline"]


def test_lower_fuel_carbon_lowers_co2(result):
    # Common practice, no source: burning LPG or natural gas instead of gasoline/diesel emits
    # less tank-to-wheel CO2 per km for similar engine efficiency (lower carbon per MJ).
    c = result.candidates.set_index("candidate")["co2_ttw_g_per_km"]
    assert c["cng-fleet"] < c["today"] and c["lpg-taxis"] < c["today"]


def test_catalyst_replacements_show_in_the_nox_months(result):
    months = result.nox_monthly
    taxi = months.query("candidate == 'lpg-taxis' and vehicle_class == 'taxi'")
    assert taxi["replaced"].any()
    eff = taxi["catalyst_efficiency"].to_numpy()
    assert (np.diff(eff) > 0).any() and (np.diff(eff) < 0).any()  # ageing, then renewal


def test_classes_that_do_not_convert_cancel_out(result):
    per_km = result.per_km.set_index(["candidate", "vehicle_class"])
    assert_allclose(per_km.loc[("lpg-taxis", "van"), "cost_per_km"],
                    per_km.loc[("today", "van"), "cost_per_km"])


BAD = [
    ("candidates[0].fuel", "kerosene-x", "candidates[0].fuel"),
    ("classes[0].profile", "no-such-profile", "classes[0].profile"),
    ("prices.diesel", "1.2 per Sm3", "prices.diesel"),
    ("prices.natural-gas", "1.2 per L", "prices.natural-gas"),
    ("prices.diesel", "0.12 per kWh", "prices.diesel"),  # a liquid per energy needs LHV/HHV
    ("classes[1].count", -3, "classes[1].count"),
    ("programme.discount_rate", "-100 %", "programme.discount_rate"),
    ("programme.horizon_years", 0, "programme.horizon_years"),
    ("classes[0].km_per_year", {"kind": "uniform", "low": "90000 km", "high": "80000 km"},
     "classes[0].km_per_year"),
    ("classes[0].range", {"kind": "uniform", "low": "300 km", "high": "500 km"},
     "classes[0].range"),
    ("candidates[0].efficiency_offset", {"kind": "uniform", "low": "-50 %", "high": "0 %"},
     "candidates[0].efficiency_offset"),
    ("candidates[1].aftertreatment.preset", "magic", "candidates[1].aftertreatment.preset"),
    ("baseline.engine_out_nox.taxi", "1.6 g/mile", "baseline.engine_out_nox.taxi"),
]


@pytest.mark.parametrize(("path", "value", "named"), BAD, ids=[b[0] for b in BAD])
def test_bad_inputs_name_their_key_path(demo, path, value, named):
    with pytest.raises(InputError) as err:
        demo.with_value(path, value)
    assert named in str(err.value)
    assert "\n" not in str(err.value)


def test_liquid_priced_per_energy_with_its_heating_value(demo):
    # 0.12 per kWh LHV = 0.12 / 3.6 per MJ; diesel LHV 43.1 MJ/kg and 0.835 kg/L from the
    # library give 0.12 / 3.6 * 43.1 * 0.835 = 1.1996 per L: the same run as that price per L.
    per_kwh = run(demo.with_value("prices.diesel", "0.12 per kWh LHV"), draws=0)
    per_l = run(demo.with_value("prices.diesel", f"{0.12 / 3.6 * 43.1 * 0.835!r} per L"),
                draws=0)
    assert_allclose(per_kwh.candidates["cost_per_km"], per_l.candidates["cost_per_km"],
                    rtol=1e-9)


SECTION_EDITS = [
    ("prices.lpg", "0.75 per L"),
    ("prices.lpg", {"kind": "uniform", "low": "0.7 per L", "high": "0.9 per L"}),
    ("prices.lpg", "1.2 per kg"),
    ("prices.lpg", "12 per L per L"),  # bad
    ("prices.hydrogen", "9 per kg"),  # bad: no option uses hydrogen
    ("escalation.lpg", "3 %"),
    ("escalation.lpg", "300 %"),  # bad: above the range
    ("upstream.lpg.wtt_co2e_g_per_mj", 9.5),
    ("upstream.lpg.wtt_co2e_g_per_mj", -1.0),  # bad
    ("programme.discount_rate", "6 %"),
    ("programme.horizon_years", 12),
    ("programme.horizon_years", 0),  # bad
    ("programme.carbon_price", "90 per t"),
]


@pytest.mark.parametrize(("path", "value"), SECTION_EDITS,
                         ids=[f"{p}={v}" for p, v in SECTION_EDITS])
def test_an_edit_of_money_tables_checks_like_a_whole_file(demo, path, value):
    # An edit inside programme/prices/escalation/upstream re-checks those tables alone; the
    # reference is the full check of the same edited file: same inputs, or the same error.
    data = demo.data
    node, _, key = path.rpartition(".")
    target = data
    for part in node.split("."):
        target = target[part]
    target[key] = value
    try:
        whole = Study(data, base_dir=demo.base_dir)
    except InputError as exc:
        with pytest.raises(InputError) as err:
            demo.with_value(path, value)
        assert (err.value.where, err.value.message) == (exc.where, exc.message)
        return
    edited = demo.with_value(path, value)
    assert edited == whole
    assert edited.inputs == whole.inputs
    assert demo.get(path) != value  # the study edited from is unchanged


def test_an_edit_of_prices_rechecks_the_correlations(demo):
    # A correlation names uncertain inputs: fixing one of them by an edit of the prices must
    # fail as the whole file fails (the reference), and a spread kept must keep the matrix.
    data = demo.data
    data["correlations"] = [{"inputs": ["prices.diesel", "prices.lpg"], "coefficient": 0.7}]
    correlated = Study(data, base_dir=demo.base_dir)
    fixed = demo.data | {"correlations": data["correlations"]}
    fixed["prices"] = dict(fixed["prices"], lpg="0.8 per L")
    with pytest.raises(InputError) as whole:
        Study(fixed, base_dir=demo.base_dir)
    with pytest.raises(InputError) as edited:
        correlated.with_value("prices.lpg", "0.8 per L")
    assert (edited.value.where, edited.value.message) == (whole.value.where, whole.value.message)
    spread = {"kind": "uniform", "low": "0.7 per L", "high": "0.9 per L"}
    kept = correlated.with_value("prices.lpg", spread)
    assert kept.inputs.correlation == correlated.inputs.correlation
    assert kept.inputs == correlated.with_values({"prices.lpg": spread,
                                                   "classes[0].count": 640}).inputs


def test_unknown_keys_are_refused(demo):
    with pytest.raises(InputError, match="unknown key"):
        demo.with_value("candidates[0].conversoin_cost", 100)


def test_tank_inspections_fall_in_their_years(demo):
    # Every 3 years, 150 per taxi: the CNG option's taxi costs rise by 640 x 150 in years 3, 6.
    without = run(demo.with_value("candidates[1].tank_inspection_interval_years", 0), draws=0)
    with_ = run(demo, draws=0)

    def flows(res):
        f = res.cash_flows
        return f.loc[f["candidate"] == "cng-fleet", "cash_flow"].to_numpy()

    diff = flows(without) - flows(with_)
    per_year = 640 * 150 + 85 * 480  # taxis run 6 years, buses 10
    vans = 210 * 220 / 2  # the demo converts half the vans in year 0, half in year 1
    expected = np.zeros_like(diff)
    expected[[3, 6]] = per_year + vans
    expected[[4, 7]] = vans
    assert_allclose(diff, expected, rtol=1e-9, atol=1e-6)


def _collapsed(study: Study) -> Study:
    for path in study.inputs.uncertain:
        study = study.with_value(path, _nominal_text(study, path))
    return study


def test_physics_input_response_is_exact_at_its_nodes(demo):
    # Only the bus efficiency offset uncertain: the tornado sets it to its P10 and P90, which are
    # response nodes, so the NPV there must equal a deterministic run with that value fixed.
    s = _collapsed(demo).with_value(
        "candidates[1].efficiency_offset.bus",
        {"kind": "uniform", "low": "-6 %", "high": "-2 %"})
    res = run(s, draws=200)
    row = res.tornado.query("candidate == 'cng-fleet'").iloc[0]
    assert row["input"].startswith("candidates[1].efficiency_offset.bus")
    low_pct = row["low_value"]
    assert_allclose(low_pct, -5.6, rtol=1e-9)  # P10 of uniform(-6, -2) %
    fixed = run(s.with_value("candidates[1].efficiency_offset.bus", "-5.6 %"), draws=0)
    npv = fixed.candidates.set_index("candidate").at["cng-fleet", "npv_vs_baseline"]
    assert_allclose(row["npv_at_low"], npv, rtol=1e-9)
    # a worse conversion efficiency costs money
    assert row["npv_at_low"] < row["npv_at_high"]
    draws = res.monte_carlo.query("candidate == 'cng-fleet'")["npv_vs_baseline"]
    assert draws.std() > 0


def test_catalyst_life_uncertainty_moves_catalyst_costs(demo):
    s = _collapsed(demo).with_value(
        "candidates[0].aftertreatment.life",
        {"kind": "uniform", "low": "100000 km", "high": "400000 km"})
    res = run(s, draws=100)
    row = res.tornado.query("candidate == 'lpg-taxis'").iloc[0]
    assert row["unit"] == "km" and row["label"] == "LPG conversion of the taxis: catalyst life"
    # a shorter-lived catalyst is replaced more often: the NPV is lower at the low end
    assert row["npv_at_low"] < row["npv_at_high"]


@pytest.mark.parametrize("dist, message", [
    ({"kind": "triangular", "low": "0.70 per L", "mode": "1.10 per L", "high": "1.05 per L"},
     "mode 1.10 per L must lie between low 0.70 per L and high 1.05 per L"),
    ({"kind": "uniform", "low": "1.20 per L", "high": "1.05 per L"},
     "low 1.20 per L is above high 1.05 per L; swap them"),
])
def test_distribution_errors_speak_the_unit_the_user_typed(demo, dist, message):
    with pytest.raises(InputError) as err:
        demo.with_value("prices.lpg", dist)
    assert err.value.message == message


def test_checking_a_study_runs_no_chemistry():
    # The study file only parses and checks (issue 10): fuel sheets (Cantera) are worked out
    # when the study runs, not when it is read. A price whose basis does not fit the fuel is
    # still refused at check time, from the fuel's storage alone.
    clear_caches()
    s = read_study("demo")
    assert cache_info()["workbench.models.combustion._sheet"].misses == 0
    with pytest.raises(InputError, match="not sold as a liquid"):
        s.with_value("prices.natural-gas", "1.2 per L")
    assert cache_info()["workbench.models.combustion._sheet"].misses == 0


FUEL_PRICES = ["prices.gasoline", "prices.diesel", "prices.lpg", "prices.natural-gas"]


def test_correlated_fuel_prices_narrow_the_lpg_npv_band(demo):
    # Issue 13: fuel prices move together. The LPG option's NPV hangs on the gap between the
    # gasoline and LPG prices, so an assumed 0.8 correlation between the prices must narrow
    # its P10-P90 band; for two triangular prices of similar spread, Var(a - b) falls by about
    # the factor (1 - r) (common practice, no source), so by ~45 % in standard deviation.
    def band(res):
        c = res.candidates.set_index("candidate")
        return c.at["lpg-taxis", "npv_p90"] - c.at["lpg-taxis", "npv_p10"]

    together = demo.with_value("correlations", [{"inputs": FUEL_PRICES, "coefficient": 0.8}])
    res = run(together, draws=4000)
    narrowing = 1 - band(res) / band(run(demo, draws=4000))
    assert 0.35 < narrowing < 0.55
    # the report lists them (its assumptions)
    assert ("Price of Gasoline (E5-type) ~ Price of LPG (60/40 propane/butane by liquid "
            "volume) 0.8") in res.assumptions["correlations"]


@pytest.mark.parametrize(("entry", "message"), [
    ({"inputs": ["prices.lpg", "prices.jet"], "coefficient": 0.8}, "not an uncertain input"),
    ({"inputs": ["prices.lpg"], "coefficient": 0.8}, "two or more"),
    ({"inputs": ["prices.lpg", "prices.diesel"], "coefficient": 1.2}, "from -1 to 1"),
    ({"inputs": ["prices.lpg", "prices.diesel"], "matrix": [[1, 0.5], [0.4, 1]]},
     "not symmetric"),
    ({"inputs": ["prices.lpg", "prices.diesel"]}, "either one coefficient"),
])
def test_bad_correlations_name_their_table(demo, entry, message):
    with pytest.raises(InputError, match=message) as err:
        demo.with_value("correlations", [entry])
    assert "correlations[0]" in str(err.value)


def test_contradicting_correlations_and_repeated_pairs_are_refused(demo):
    a, b, c = FUEL_PRICES[:3]
    with pytest.raises(InputError, match="positive semi-definite"):
        demo.with_value("correlations", [{"inputs": [a, b], "coefficient": 0.9},
                                         {"inputs": [a, c], "coefficient": 0.9},
                                         {"inputs": [b, c], "coefficient": -0.9}])
    with pytest.raises(InputError, match="give each pair once"):
        demo.with_value("correlations", [{"inputs": [a, b], "coefficient": 0.5},
                                         {"inputs": [b, a, c], "coefficient": 0.5}])


def test_a_normal_price_is_truncated_at_zero(demo):
    # Issue 13: a normal LPG price of mean 0.82 and sd 0.5 per L would draw below zero about
    # 5 % of the time; cut at 0, no draw is negative and the nominal is the truncated mean.
    s = demo.with_value("prices.lpg", {"kind": "normal", "mean": "0.82 per L",
                                       "sd": "0.5 per L"})
    dist = s.inputs.uncertain["prices.lpg"]
    assert dist.lower == 0.0
    draws = dist.ppf(np.linspace(0.0, 1.0, 101))
    assert draws.min() >= 0.0
    assert s.inputs.prices["lpg"][1].nominal > dist.mean


def test_a_candidate_that_raises_co2e_says_so(demo):
    # Make the LPG option's upstream CO2e huge: it now raises well-to-wheel CO2e, so its
    # "avoided" is negative, flagged, and its abatement cost has no number (not a dash).
    s = demo.with_value("upstream.lpg", {"wtt_co2e_g_per_mj": 400.0, "source": "test"})
    res = run(s, draws=0)
    row = res.candidates.set_index("candidate").loc["lpg-taxis"]
    assert row["co2e_avoided_t"] < 0 and bool(row["raises_co2e"])
    assert np.isnan(row["cost_per_t_co2e_avoided"])
    assert missing_reason(row.to_dict(), "cost_per_t_co2e_avoided") == "raises CO2e"
    base = res.candidates.set_index("candidate").loc["today"].to_dict()
    assert missing_reason(base, "cost_per_t_co2e_avoided") == "n/a (baseline)"


def test_duty_table_reports_each_class_profile(demo):
    # The report's duty statistics are the profile's own (duty_stats is checked against hand
    # computations in tests/test_duty.py); one row per class, in the study's units.
    from workbench.models.duty import duty_stats

    res = run(demo, draws=0)
    for c in demo.inputs.classes:
        row = res.duty.set_index("vehicle_class").loc[c.id]
        s = duty_stats(c.profile_data)
        assert_allclose(row["distance_km"], s.distance / 1e3, rtol=1e-12)
        assert_allclose(row["mean_speed_km_per_h"], s.mean_speed * 3.6, rtol=1e-12)
        assert 0 <= row["idle_share"] <= 1
