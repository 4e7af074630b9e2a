"""A study's conversions: kinds, the defaults it lists, the fuel penalty, per-km pollutants."""

from __future__ import annotations

import numpy as np
import pytest

from workbench.core.errors import InputError
from workbench.study.runner import run
from workbench.study.studyfile import read_study

pytestmark = pytest.mark.slow

#: Euro 6 light-duty PM 4.5 mg/km, CO 0.50 g/km (CI) and 1.0 g/km (PI); Euro VI CH4 0.5 g/kWh
#: for positive-ignition gas engines (Regulations (EC) 715/2007 and 595/2009, Annex I, from
#: memory).
EURO_6_PM_MG = 4.5
EURO_6_CO = {"taxi": 1.0, "van": 0.50}


def _lpg_vans(**extra):
    study = read_study("demo")
    cand = {"id": "lpg-vans", "name": "LPG vans", "fuel": "lpg", "classes": ["van"],
            "conversion_cost": 6000, **extra}
    # the LPG vans first, the demo's natural-gas and biomethane candidates kept (their fuels
    # have a price)
    return study.with_values({"candidates": [cand, *study.data["candidates"][1:]],
                              "programme.monte_carlo_draws": 0})


@pytest.fixture(scope="module")
def lpg_vans():
    return run(_lpg_vans(), draws=0)


def test_a_diesel_van_on_lpg_gets_a_derived_map_and_says_so(lpg_vans):
    d = lpg_vans.defaults.query("candidate == 'lpg-vans' and vehicle_class == 'van'")
    rows = dict(zip(d["quantity"], d["value"], strict=True))
    assert rows["conversion"] == "dedicated-si"
    assert rows["aftertreatment"] == "three-way-catalyst"
    assert "engine-out NOx" in rows and "peak brake efficiency, converted" in rows
    assert all(d["source"].str.len() > 0)
    assert lpg_vans.notices.empty  # the kind is named (inferred), so no trap to warn about
    per_km = lpg_vans.per_km.set_index(["candidate", "vehicle_class"])
    lpg = per_km.loc[("lpg-vans", "van")]
    diesel = per_km.loc[("today", "van")]
    # Stoichiometric gas engines on diesel blocks use about 20-40 % more energy per km than the
    # diesel in urban delivery and bus duty (fleet comparisons as recalled, from memory).
    assert 1.20 < lpg["fuel_energy_mj_per_km"] / diesel["fuel_energy_mj_per_km"] < 1.40
    # A stoichiometric engine with a three-way catalyst emits about as much NOx as a diesel with
    # SCR (Euro 6: 60 against 80 mg/km), not 3-5 times more (the symptom this fixes).
    assert 0.3 < lpg["nox_g_per_km"] / diesel["nox_g_per_km"] < 2.0


def test_the_same_study_without_a_kind_would_warn(lpg_vans):
    res = run(_lpg_vans(conversion="none"), draws=0)
    assert len(res.notices) == 1 and "lpg" in res.notices["message"].iloc[0]
    per_km = res.per_km.set_index(["candidate", "vehicle_class"])
    # unchanged diesel map: the same energy per km as the diesel, the trap the line names
    np.testing.assert_allclose(per_km.loc[("lpg-vans", "van"), "fuel_energy_mj_per_km"],
                               per_km.loc[("today", "van"), "fuel_energy_mj_per_km"])


def test_explicit_map_and_offset_override_the_kind():
    study = _lpg_vans(engine_map="van-ci-2.3l", efficiency_offset="-1 %")
    co = study.inputs.candidates[0].per_class["van"]
    assert co.conversion == "dedicated-si" and not co.derived_map
    assert co.efficiency_offset == pytest.approx(-0.01)


def test_an_engine_setting_named_overrides_the_kinds_defaults():
    # a diesel rebuilt as a lean-burn gas engine: no three-way catalyst (lean exhaust), lambda
    # of a lean-burn engine (common practice, no source)
    study = _lpg_vans(engine="lean-burn-gas")
    co = study.inputs.candidates[0].per_class["van"]
    assert co.conversion == "dedicated-si" and co.derived_map
    assert co.aftertreatment.name == "none" and co.lambda_overall == 1.5
    assert co.methane_slip == 0.0  # LPG carries no methane to slip
    gas = study.inputs.candidates[1].per_class["van"]  # the demo's natural gas, its own kind
    assert gas.methane_slip == pytest.approx(0.0015)


def test_an_unknown_conversion_kind_is_refused_in_one_line():
    # dual-fuel-ci is a kind a study runs (tests/test_study_dual_fuel.py)
    with pytest.raises(InputError, match="unknown conversion kind") as err:
        _lpg_vans(conversion="steam")
    assert "candidates[0].conversion" in err.value.where


def test_demo_pollutants_within_euro_limits():
    res = run(read_study("demo"), draws=0)
    per_km = res.per_km.set_index(["candidate", "vehicle_class"])
    for cid in ("taxi", "van"):  # light duty
        for cand in ("today", "cng-fleet"):
            row = per_km.loc[(cand, cid)]
            assert row["pm_mg_per_km"] <= EURO_6_PM_MG
            assert row["co_g_per_km"] <= EURO_6_CO[cid]
    # methane: the converted bus slips within the Euro VI CH4 limit of 0.5 g/kWh; THC per km
    # includes it, so the gas bus has more THC than the diesel
    assert per_km.loc[("cng-fleet", "bus"), "thc_g_per_km"] > per_km.loc[
        ("today", "bus"), "thc_g_per_km"]
    assert set(res.defaults.columns) == {"candidate", "vehicle_class", "quantity", "value",
                                         "unit", "source"}


def test_the_report_draws_the_derived_map_the_natural_gas_vans_ran_on():
    from workbench.core.constants import to_rpm
    from workbench.interfaces.charts import all_figures
    from workbench.interfaces.report import study_report_html
    from workbench.study.runner import option_map, run_maps

    study = read_study("demo").with_values({"programme.monte_carlo_draws": 0})
    res = run(study, draws=0)
    by_option = {(m.vehicle_class, o): m.engine_map for m in run_maps(study.inputs)
                 for o in m.options}
    gas = next(o for o in study.inputs.options if o.id == "cng-fleet").per_class["van"]
    diesel = study.inputs.baseline.per_class["van"]
    gas_map = by_option[("van", "cng-fleet")]
    assert gas_map is option_map(gas)  # the runner's cached map, not one made again here
    # A spark-ignition gas engine on a diesel block peaks near 33-36 % brake efficiency, a
    # light-duty diesel near 40 %: the derived map must peak lower (from memory).
    assert gas_map.efficiency.max() < diesel.map_data.efficiency.max() - 0.03
    assert by_option[("van", "today")] == diesel.map_data
    # the points the runner reports for the gas vans are looked up on the derived map
    pts = res.operating_points.query("candidate == 'cng-fleet' and vehicle_class == 'van'")
    speed = pts["engine_speed_rpm"].to_numpy() / to_rpm(1.0)
    torque = pts["torque_nm"].to_numpy()
    np.testing.assert_allclose(gas_map.efficiency_at(speed, torque), pts["brake_efficiency"],
                               rtol=1e-9)
    assert not np.allclose(diesel.map_data.efficiency_at(speed, torque),
                           pts["brake_efficiency"])

    figs = all_figures(res, map_grid=run_maps(study.inputs))
    fig = figs["efficiency_map:van:cng-fleet"]
    assert fig.layout.title.text.endswith("Delivery vans — Natural gas across the fleet")
    np.testing.assert_allclose(np.max(fig.data[0].z), gas_map.efficiency.max() * 100.0)
    assert [t.name for t in fig.data[2:]] == ["Natural gas across the fleet"]
    base = figs["efficiency_map:van"]
    # the baseline's map carries every option that runs the vans on it
    assert base.layout.title.text.endswith(
        "Delivery vans — Keep today's fuels, LPG conversion of the taxis")
    np.testing.assert_allclose(np.max(base.data[0].z), diesel.map_data.efficiency.max() * 100.0)
    assert "Natural gas across the fleet" not in {t.name for t in base.data}
    html = study_report_html(study, res)
    assert 'data-chart="efficiency_map:van:cng-fleet"' in html
