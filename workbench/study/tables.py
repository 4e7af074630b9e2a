"""The tables of a study's result, laid out from the plan and the money (tidy, one row per
candidate × class × metric or per year; column names in ``workbench.study.results.COLUMNS``).
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from workbench.core.fuels import Fuel
from workbench.models import economics as econ
from workbench.models.nox import DEFAULT_ENGINE_OUT, engine_preset, nox_sweep
from workbench.study.results import COLUMNS, PALETTE, StudyResult
from workbench.study.studyfile import Study, StudyInputs, all_uncertain

if TYPE_CHECKING:
    from workbench.study.runner import Plan

#: Equivalence ratios of the flame table [-].
FLAME_PHI = (0.7, 0.8, 0.9, 1.0, 1.1, 1.2, 1.3)


def study_result(study: Study, plan: Plan, det: econ.Money, mc: Mapping[str, np.ndarray],
                 paybacks: Mapping[str, np.ndarray], sensitivity: Mapping[str, pd.DataFrame],
                 draws: int) -> StudyResult:
    """Lay a run's plan and money out as a :class:`StudyResult`.

    Parameters
    ----------
    study : Study
        The study run.
    plan : Plan
        Its physics.
    det : Money
        The deterministic money (one draw at the nominal inputs).
    mc : mapping of str to ndarray
        NPV vs baseline of each draw, by candidate [currency]; empty without Monte Carlo.
    paybacks : mapping of str to ndarray
        Payback of each draw, by candidate [year].
    sensitivity : mapping of str to DataFrame
        :func:`workbench.models.economics.tornado` of the NPV, by candidate.
    draws : int
        Monte Carlo draws.

    Returns
    -------
    StudyResult
    """
    inputs = plan.inputs
    colours = {o.id: PALETTE[i % len(PALETTE)] for i, o in enumerate(inputs.options)}
    per_km = _frame("per_km", _per_km_rows(plan, det))
    return StudyResult(
        title=inputs.title,
        currency=inputs.currency,
        candidates=_candidates_table(plan, det, per_km, mc, paybacks, colours),
        per_km=per_km,
        cash_flows=_cash_flow_table(plan, det),
        fleet_years=_fleet_years_table(plan, det),
        nox_monthly=_nox_monthly_table(plan),
        storage=_storage_table(plan),
        monte_carlo=_monte_carlo_table(mc),
        tornado=_tornado_table(plan, sensitivity),
        operating_points=_operating_points_table(plan),
        flame=_flame_table(plan),
        catalyst=_catalyst_table(plan),
        assumptions=_assumptions(study, draws),
        sources=_sources(inputs),
    )


def _empty(name: str) -> pd.DataFrame:
    return pd.DataFrame({c: pd.Series(dtype=float) for c in COLUMNS[name]})


def _frame(name: str, rows: list[dict]) -> pd.DataFrame:
    return pd.DataFrame(rows, columns=list(COLUMNS[name])) if rows else _empty(name)


def _per_km_rows(plan: Plan, det: econ.Money) -> list[dict]:
    inputs = plan.inputs
    rate = float(det.rate[0])
    rows = []
    for o in inputs.options:
        for c in inputs.classes:
            co = o.per_class[c.id]
            ph = plan.physics[o.id, c.id]
            km_m = c.km_per_year.nominal
            fid = co.fuel.id
            price = inputs.prices[fid][1].nominal * plan.price_factor[fid]
            co2e_m = (inputs.upstream[fid].nominal * ph.fuel_energy_per_m
                      + ph.tailpipe_co2e_per_m)
            run_years = int(plan.active[c.id].sum())
            cat_year = plan.catalyst_cost[o.id, c.id].sum() / max(run_years, 1) / c.count
            inspections = econ.inspection_years(co.tank_inspection_interval,
                                                inputs.horizon_years)
            cat_year += (co.tank_inspection_cost.nominal
                         * float((inspections * plan.active[c.id]).sum()) / max(run_years, 1))
            fuel_cost = ph.fuel_energy_per_m * price + co2e_m * inputs.carbon_price.nominal
            upkeep = (c.upkeep_per_year.nominal + co.upkeep_change_per_year.nominal
                      + cat_year) / km_m
            capital = 0.0
            if co.converts:
                crf = float(econ.capital_recovery_factor(rate, c.remaining_life_years))
                capital = co.conversion_cost.nominal * crf / km_m
            nox_mean = float(ph.monthly["tailpipe_g_per_km"].mean())
            rows.append({
                "candidate": o.id, "vehicle_class": c.id, "fuel": fid,
                "fuel_energy_mj_per_km": ph.fuel_energy_per_m * 1e-3,
                "fuel_l_per_100km": ph.fuel_volume_per_m * 1e8,
                "fuel_kg_per_100km": ph.fuel_mass_per_m * 1e5,
                "co2_ttw_g_per_km": ph.co2_ttw_per_m * 1e6,
                "co2e_wtw_g_per_km": co2e_m * 1e6,
                "nox_engine_out_g_per_km": ph.engine_out_nox_per_m * 1e6,
                "nox_g_per_km": nox_mean,
                "cost_fuel_per_km": fuel_cost * 1e3,
                "cost_upkeep_per_km": upkeep * 1e3,
                "cost_capital_per_km": capital * 1e3,
                "cost_per_km": (fuel_cost + upkeep + capital) * 1e3,
                "share_out_of_map": ph.share_out_of_map,
                "share_full_load": ph.share_full_load,
            })
    return rows


def _candidates_table(plan: Plan, det: econ.Money, per_km: pd.DataFrame,
                      mc: Mapping[str, np.ndarray], paybacks: Mapping[str, np.ndarray],
                      colours: Mapping[str, str]) -> pd.DataFrame:
    inputs = plan.inputs
    per_km = per_km.copy()
    weights = {c.id: c.count * c.km_per_year.nominal for c in inputs.classes}
    per_km["w"] = per_km["vehicle_class"].map(weights)
    rate = det.rate[0]
    base = inputs.baseline.id
    h = inputs.horizon_years
    rows = []
    for o in inputs.options:
        sub = per_km[per_km["candidate"] == o.id]

        def avg(col: str, _sub: pd.DataFrame = sub) -> float:
            return float(np.average(_sub[col], weights=_sub["w"]))

        diff = det.cash[o.id][0] - det.cash[base][0]
        is_base = o.is_baseline
        nox_year = sum(plan.nox_t[o.id, c.id] for c in inputs.classes) * 1e3
        nox_base = sum(plan.nox_t[base, c.id] for c in inputs.classes) * 1e3
        draws = mc.get(o.id)
        pct = np.percentile(draws, [10, 50, 90]) if draws is not None else [np.nan] * 3
        rows.append({
            "candidate": o.id, "name": o.name,
            "fuel": "/".join(dict.fromkeys(co.fuel.id for co in o.per_class.values())),
            "is_baseline": is_base, "colour": colours[o.id],
            "fuel_energy_mj_per_km": avg("fuel_energy_mj_per_km"),
            "co2_ttw_g_per_km": avg("co2_ttw_g_per_km"),
            "co2e_wtw_g_per_km": avg("co2e_wtw_g_per_km"),
            "nox_g_per_km": avg("nox_g_per_km"),
            "cost_per_km": avg("cost_per_km"),
            "levelised_cost_per_km": float(econ.levelised_cost(rate, det.costs[o.id][0],
                                                               det.km[0])) * 1e3,
            "npv_vs_baseline": np.nan if is_base else float(econ.npv(rate, diff)),
            "payback_years": np.nan if is_base else float(econ.simple_payback(diff)),
            "discounted_payback_years": np.nan if is_base else float(
                econ.discounted_payback(rate, diff)),
            "cost_per_t_co2e_avoided": np.nan if is_base else float(econ.abatement_cost(
                rate, det.costs[o.id][0] - det.costs[base][0],
                det.co2e[base][0] - det.co2e[o.id][0])) * 1e3,
            "cost_per_kg_nox_avoided": np.nan if is_base else float(econ.abatement_cost(
                rate, det.costs[o.id][0] - det.costs[base][0], nox_base - nox_year)),
            "p_npv_positive": np.nan if draws is None else float(
                econ.probability_positive(draws)),
            "p_payback_within_horizon": np.nan if draws is None else float(
                econ.probability_payback_within(paybacks[o.id], h)),
            "npv_p10": pct[0], "npv_p50": pct[1], "npv_p90": pct[2],
        })
    return _frame("candidates", rows)


def _cash_flow_table(plan: Plan, det: econ.Money) -> pd.DataFrame:
    inputs = plan.inputs
    rate = float(det.rate[0])
    factors = np.asarray(econ.discount_factors(rate, inputs.horizon_years)).reshape(-1)
    rows = []
    base = det.cash[inputs.baseline.id][0]
    for o in inputs.options:
        flows = det.cash[o.id][0]
        diff = flows - base
        disc = diff * factors
        cum = np.cumsum(disc)
        for y in range(inputs.horizon_years + 1):
            rows.append({"candidate": o.id, "year": inputs.start_year + y,
                         "cash_flow": flows[y], "cash_flow_vs_baseline": diff[y],
                         "discounted_vs_baseline": disc[y],
                         "cumulative_discounted_vs_baseline": cum[y]})
    return _frame("cash_flows", rows)


def _fleet_years_table(plan: Plan, det: econ.Money) -> pd.DataFrame:
    inputs = plan.inputs
    rows = []
    for o in inputs.options:
        for y in range(inputs.horizon_years + 1):
            energy = ttw = nox = 0.0
            repl = 0.0
            for c in inputs.classes:
                ph = plan.physics[o.id, c.id]
                km = c.km_per_year.nominal * c.count * plan.active[c.id][y]
                energy += km * ph.fuel_energy_per_m
                ttw += km * ph.co2_ttw_per_m
                nox += plan.nox_t[o.id, c.id][y]
                repl += plan.replacements[o.id, c.id][y]
            rows.append({"candidate": o.id, "year": inputs.start_year + y,
                         "fuel_energy_gj": energy / 1e9, "co2_ttw_t": ttw / 1e3,
                         "co2e_wtw_t": det.co2e[o.id][0][y] / 1e3, "nox_t": nox,
                         "catalyst_replacements": repl, "cost_total": det.costs[o.id][0][y]})
    return _frame("fleet_years", rows)


def _nox_monthly_table(plan: Plan) -> pd.DataFrame:
    frames = []
    for (oid, cid), ph in plan.physics.items():
        m = ph.monthly
        frames.append(pd.DataFrame({
            "candidate": oid, "vehicle_class": cid, "month": m["month"],
            "catalyst_efficiency": m["efficiency"], "nox_g_per_km": m["tailpipe_g_per_km"],
            "replaced": m["replacements"] > 0}))
    return pd.concat(frames, ignore_index=True)[list(COLUMNS["nox_monthly"])]


def _storage_table(plan: Plan) -> pd.DataFrame:
    rows = [{"candidate": oid, "vehicle_class": cid,
             "fuel": _fuel(plan.inputs, oid, cid).id, **ph.storage}
            for (oid, cid), ph in plan.physics.items()]
    return _frame("storage", rows)


def _fuel(inputs: StudyInputs, option_id: str, class_id: str) -> Fuel:
    """The fuel an option gives a class."""
    option = next(o for o in inputs.options if o.id == option_id)
    return option.per_class[class_id].fuel


def _monte_carlo_table(mc: Mapping[str, np.ndarray]) -> pd.DataFrame:
    frames = [pd.DataFrame({"candidate": oid, "draw": np.arange(len(v)),
                            "npv_vs_baseline": v}) for oid, v in mc.items()]
    return pd.concat(frames, ignore_index=True) if frames else _empty("monte_carlo")


def _tornado_table(plan: Plan, sensitivity: Mapping[str, pd.DataFrame]) -> pd.DataFrame:
    units = {u.path: (u.unit, u.scale) for u in all_uncertain(plan.inputs)}
    frames = []
    for oid, t in sensitivity.items():
        t = t[t["swing"] > 1e-9 * max(float(t["swing"].max()), 1.0)]
        scale = t["input"].map(lambda p: units[p][1]).astype(float)
        frames.append(pd.DataFrame({
            "candidate": oid,
            "input": t["input"].map(lambda p: f"{p} [{units[p][0]}]" if units[p][0] else p),
            "low_value": t["low_value"] * scale, "high_value": t["high_value"] * scale,
            "npv_at_low": t["output_low"], "npv_at_high": t["output_high"],
            "swing": t["swing"]}))
    return pd.concat(frames, ignore_index=True) if frames else _empty("tornado")


def _operating_points_table(plan: Plan) -> pd.DataFrame:
    frames = []
    for (oid, cid), ph in plan.physics.items():
        c = next(k for k in plan.inputs.classes if k.id == cid)
        per_year = c.km_per_year.nominal / ph.duty.energy.distance  # profile passes per year
        p = ph.duty.points
        frames.append(pd.DataFrame({
            "candidate": oid, "vehicle_class": cid, "engine_speed_rpm": p["engine_speed_rpm"],
            "torque_nm": p["torque_nm"], "hours": p["seconds"] * per_year / 3600.0,
            "brake_efficiency": p["brake_efficiency"]}))
    return pd.concat(frames, ignore_index=True)[list(COLUMNS["operating_points"])]


def _flame_table(plan: Plan) -> pd.DataFrame:
    rows = []
    seen = set()
    for o in plan.inputs.options:
        for co in o.per_class.values():
            key = (o.id, co.fuel.id)
            if key in seen or (not co.converts and not o.is_baseline):
                continue
            seen.add(key)
            table = nox_sweep(co.fuel, engine_preset(co.engine), phi=list(FLAME_PHI))
            for _, r in table.iterrows():
                rows.append({"candidate": o.id, "fuel": co.fuel.id, "phi": r["phi"],
                             "flame_temperature_k": r["flame_temperature_k"],
                             "no_ppm": r["no_ppm"]})
    return _frame("flame", rows)


def _catalyst_table(plan: Plan) -> pd.DataFrame:
    rows = []
    for (oid, cid), ph in plan.physics.items():
        co = next(o for o in plan.inputs.options if o.id == oid).per_class[cid]
        rows.append({"candidate": oid, "vehicle_class": cid, "device": co.aftertreatment.name,
                     "replacements": ph.replacements,
                     "replacement_cost": float(ph.yearly["replacement_cost"].sum()),
                     "reductant_cost": float(ph.yearly["reductant_cost"].sum()),
                     "best_interval_months": ph.best_interval_months,
                     "best_total_cost": ph.best_total_cost})
    return _frame("catalyst", rows)


def _assumptions(study: Study, draws: int) -> dict[str, str]:
    i = study.inputs
    out = {
        "study": i.title,
        "demo": "yes" if i.fictional else "no",
        "question": i.notes,
        "fictional demo data": "yes: every number is invented" if i.fictional else "no",
        "currency": i.currency,
        "programme": f"{i.start_year}, {i.horizon_years} years",
        "discount rate": f"{i.discount_rate.nominal:.1%} a year, real (prices in today's "
                         "money, escalation on top)",
        "carbon price": f"{i.carbon_price.nominal * 1e3:g} {i.currency}/t CO2e, on well-to-wheel "
                        "CO2e, counted with fuel costs",
        "NOx damage cost": f"{i.nox_damage_cost.nominal:g} {i.currency}/kg: finds the catalyst "
                           "replacement interval that would minimise upkeep plus NOx damage, "
                           "shown beside each device's own policy; not in the NPV",
        "Monte Carlo": f"{draws} draws, seed {i.seed}; uncertain inputs: "
                       f"{', '.join(i.uncertain) or 'none'}",
        "input hash": study.digest(),
        "uncertain physics inputs": "evaluated at P1, P10, P30, P50, P70, P90 and P99 and "
                                    "interpolated per draw; effects of several such inputs "
                                    "add (first order)",
        "engine-out NOx": "screening model: baseline measured or typical engine-out NOx scaled "
                          "by the flame-chemistry propensity of each fuel",
        "classes past their remaining life": "drop out of every option alike (replacement "
                                             "vehicles are outside the study)",
    }
    return out


def _sources(inputs: StudyInputs) -> dict[str, str]:
    out = {f"upstream CO2e of {fid}": src for fid, src in inputs.upstream_sources.items()}
    for o in inputs.options:
        for cid, co in o.per_class.items():
            for section, src in co.fuel.sources:
                out.setdefault(f"fuel {co.fuel.id} [{section}]", src)
            if co.engine_out_nox is None and o.is_baseline:
                out[f"engine-out NOx, {o.id}/{cid}"] = DEFAULT_ENGINE_OUT[co.engine].source
    out["thermochemistry"] = "Cantera with GRI-Mech 3.0 and NASA Glenn species data"
    out["GWP-100"] = "IPCC AR6 WG1 Table 7.15 (CH4 fossil 29.8, N2O 273)"
    return out
