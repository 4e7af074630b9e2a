"""The tables of a study's result, laid out from the plan and the money (tidy, one row per
candidate × class × metric or per year; column names in ``workbench.study.results.COLUMNS``).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import replace
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from workbench.core.cache import memoize
from workbench.core.constants import J_PER_KWH
from workbench.core.fuels import Fuel
from workbench.models import economics as econ
from workbench.models.duty import DutyTrace, duty_stats
from workbench.models.emissions import co2e
from workbench.models.nox import DEFAULT_ENGINE_OUT, engine_preset, nox_sweep
from workbench.study import refuelling
from workbench.study.naming import display_unit, input_label, input_rows, study_names
from workbench.study.results import COLUMNS, PALETTE, StudyResult
from workbench.study.studyfile import (
    ELECTRICITY,
    ClassOption,
    Study,
    StudyInputs,
    Uncertain,
    all_uncertain,
)

if TYPE_CHECKING:
    from workbench.study.runner import Plan

#: Equivalence ratios of the flame table [-].
FLAME_PHI = (0.7, 0.8, 0.9, 1.0, 1.1, 1.2, 1.3)


def study_result(study: Study, plan: Plan, lines: Mapping[str, econ.OptionLines],
                 det: econ.Money, draws: Mapping[str, econ.NPVDraws],
                 sensitivity: Mapping[str, pd.DataFrame], n: int,
                 break_even: Mapping[str, list[tuple[Uncertain, float]]],
                 physics: Mapping[str, pd.DataFrame]) -> StudyResult:
    """Lay a run's plan and money out as a :class:`StudyResult`.

    Parameters
    ----------
    study : Study
        The study run.
    plan : Plan
        Its physics.
    lines : mapping of str to OptionLines
        What the nominal cash flows of each option were built from (one draw).
    det : Money
        The deterministic money (one draw at the nominal inputs).
    draws : mapping of str to NPVDraws
        Each candidate's NPV and payback over the Monte Carlo draws; empty without them.
    sensitivity : mapping of str to DataFrame
        :func:`workbench.models.economics.tornado` of the NPV, by candidate.
    n : int
        Monte Carlo draws.
    break_even : mapping of str to list of (Uncertain, float)
        By candidate, inputs and the value at which its NPV is zero (NaN for none).
    physics : mapping of str to DataFrame
        :func:`physics_tables` of the plan (made once per physics; copied into the result).

    Returns
    -------
    StudyResult
    """
    inputs = plan.inputs
    colours = {o.id: PALETTE[i % len(PALETTE)] for i, o in enumerate(inputs.options)}
    per_km = _per_km_rows(plan, lines, det)
    return StudyResult(
        title=inputs.title,
        currency=inputs.currency,
        names=study_names(inputs),
        fictional=inputs.fictional,
        candidates=_candidates_table(plan, det, per_km, draws, colours),
        per_km=frame("per_km", per_km),
        fuel_use=_fuel_use_table(plan, lines),
        cash_flows=_cash_flow_table(plan, det),
        fleet_years=_fleet_years_table(plan, det),
        programme_years=_programme_table(plan, det),
        phasing=frame("phasing", _phasing_rows(plan)),
        funding=frame("funding", _funding_rows(plan, det)),
        stations=frame("stations", refuelling.station_rows(plan)),
        monte_carlo=_monte_carlo_table({k: v.npv for k, v in draws.items()}),
        tornado=_tornado_table(plan, sensitivity),
        breakeven=_breakeven_table(inputs, break_even),
        inputs=frame("inputs", input_rows(study.data, inputs)),
        **{name: table.copy() for name, table in physics.items()},
        assumptions=_assumptions(study, n),
        sources=_sources(inputs),
    )


def physics_tables(plan: Plan) -> dict[str, pd.DataFrame]:
    """The tables made of the physics alone (no price, rate or draw in them).

    Parameters
    ----------
    plan : Plan
        A plan (its price factors are not read).

    Returns
    -------
    dict of str to DataFrame
        ``nox_monthly``, ``storage``, ``operating_points``, ``flame``, ``catalyst``,
        ``duty``, ``battery`` and ``fuel_cell``.
    """
    return {"nox_monthly": _nox_monthly_table(plan), "storage": _storage_table(plan),
            "operating_points": _operating_points_table(plan), "flame": _flame_table(plan),
            "catalyst": _catalyst_table(plan), "duty": _duty_table(plan.inputs),
            "battery": _battery_table(plan), "fuel_cell": _fuel_cell_table(plan)}


def _empty(name: str) -> pd.DataFrame:
    return _empty_template(name).copy()  # a copy: 100x cheaper than a new empty frame


@memoize(maxsize=None)
def _empty_template(name: str) -> pd.DataFrame:
    return pd.DataFrame({c: pd.Series(dtype=float) for c in COLUMNS[name]})


def frame(name: str, rows: list[dict]) -> pd.DataFrame:
    """Table ``name`` of :data:`COLUMNS` from its rows (an empty, typed table for none)."""
    if not rows:
        return _empty(name)
    # by columns: a third of the time of a frame made from the row dicts, same dtypes
    return pd.DataFrame({c: [r.get(c, np.nan) for r in rows] for c in COLUMNS[name]})


def _per_km_rows(plan: Plan, lines: Mapping[str, econ.OptionLines],
                 det: econ.Money) -> list[dict]:
    inputs = plan.inputs
    rate = float(det.rate[0])
    carbon = inputs.carbon_price.nominal
    rows = []
    for o in inputs.options:
        for c, line in zip(inputs.classes, lines[o.id].classes, strict=True):
            ph = plan.physics[o.id, c.id]
            cost = econ.cost_per_m(line, rate=rate, carbon_price=carbon)
            co2e_m = econ.co2e_per_m(line)
            # litres or kg of two fuels do not add (see fuel_use); a fuel cell's are hydrogen
            one = len(ph.fuels) == 1 or ph.fuel_cell is not None
            rows.append({
                "candidate": o.id, "vehicle_class": c.id,
                "fuel": "/".join(_carriers(o.per_class[c.id])),
                "fuel_energy_mj_per_km": ph.fuel_energy_per_m * 1e-3,
                "energy_kwh_per_km": ph.fuel_energy_per_m * 1e3 / J_PER_KWH,
                "fuel_l_per_100km": ph.fuel_volume_per_m * 1e8,
                "fuel_kg_per_100km": ph.fuel_mass_per_m * 1e5 if one else np.nan,
                "co2_ttw_g_per_km": ph.co2_ttw_per_m * 1e6,
                "co2e_wtw_g_per_km": co2e_m * 1e6,
                "nox_engine_out_g_per_km": ph.engine_out_nox_per_m * 1e6,
                "nox_g_per_km": float(np.mean(ph.monthly["tailpipe_g_per_km"].to_numpy())),
                "pm_mg_per_km": ph.pm_per_m * 1e9,
                "co_g_per_km": ph.co_per_m * 1e6,
                "thc_g_per_km": (ph.nmhc_per_m + ph.ch4_per_m) * 1e6,
                "cost_fuel_per_km": cost["fuel"] * 1e3,
                "cost_upkeep_per_km": cost["upkeep"] * 1e3,
                "cost_capital_per_km": cost["capital"] * 1e3,
                "cost_per_km": (cost["fuel"] + cost["upkeep"] + cost["capital"]) * 1e3,
                "share_out_of_map": ph.share_out_of_map,
                "share_full_load": ph.share_full_load,
            })
    return rows


def _fuel_use_table(plan: Plan, lines: Mapping[str, econ.OptionLines]) -> pd.DataFrame:
    """One row per option x class x fuel it burns: a dual-fuel engine's gas and pilot apart.

    The tailpipe CO2e of a fuel is its CO2 (all its carbon burnt) and its slipped methane on
    GWP-100 (the class's N2O stays in ``per_km``); the well-to-wheel figure adds the fuel's
    upstream CO2e (its part of the class line, year 1).
    """
    rows = []
    for o in plan.inputs.options:
        for c, line in zip(plan.inputs.classes, lines[o.id].classes, strict=True):
            fuels = plan.physics[o.id, c.id].fuels
            for f, part in zip(fuels, line.parts[:len(fuels)], strict=True):
                tailpipe = float(co2e(f.per_m.co2_ttw_per_m, f.ch4_per_m, 0.0))
                upstream = econ.co2e_per_m(replace(line, parts=(part,), tailpipe_co2e_per_m=0.0))
                rows.append({
                    "candidate": o.id, "vehicle_class": c.id, "fuel": f.fuel.id,
                    "role": f.role, "energy_share": f.energy_share,
                    "fuel_energy_mj_per_km": f.per_m.fuel_energy_per_m * 1e-3,
                    "fuel_l_per_100km": f.per_m.fuel_volume_per_m * 1e8,
                    "fuel_kg_per_100km": f.per_m.fuel_mass_per_m * 1e5,
                    "co2_ttw_g_per_km": f.per_m.co2_ttw_per_m * 1e6,
                    "ch4_g_per_km": f.ch4_per_m * 1e6,
                    "co2e_ttw_g_per_km": tailpipe * 1e6,
                    "co2e_wtw_g_per_km": (tailpipe + upstream) * 1e6,
                })
            if plan.physics[o.id, c.id].electric is not None:  # grid electricity: no tailpipe
                upstream = econ.co2e_per_m(replace(line, parts=line.parts[-1:],
                                                   tailpipe_co2e_per_m=0.0))
                rows.append({
                    "candidate": o.id, "vehicle_class": c.id, "fuel": ELECTRICITY,
                    "role": "grid", "energy_share": 1.0,
                    "fuel_energy_mj_per_km": plan.physics[o.id, c.id].fuel_energy_per_m * 1e-3,
                    "co2_ttw_g_per_km": 0.0, "ch4_g_per_km": 0.0, "co2e_ttw_g_per_km": 0.0,
                    "co2e_wtw_g_per_km": upstream * 1e6})
            if (fc := plan.physics[o.id, c.id].fuel_cell) is not None:  # only water leaves
                upstream = econ.co2e_per_m(replace(line, parts=line.parts[-1:],
                                                   tailpipe_co2e_per_m=0.0))
                rows.append({
                    "candidate": o.id, "vehicle_class": c.id,
                    "fuel": o.per_class[c.id].fuel_cell.hydrogen.id, "role": "fuel-cell",
                    "energy_share": 1.0,
                    "fuel_energy_mj_per_km": plan.physics[o.id, c.id].fuel_energy_per_m * 1e-3,
                    "fuel_kg_per_100km": fc.sizing.use.hydrogen_per_m * 1e5,
                    "co2_ttw_g_per_km": 0.0, "ch4_g_per_km": 0.0, "co2e_ttw_g_per_km": 0.0,
                    "co2e_wtw_g_per_km": upstream * 1e6})
    return frame("fuel_use", rows)


def _carriers(co: ClassOption) -> tuple[str, ...]:
    """Ids of the energy carriers an option buys for a class: its fuels, electricity or a fuel
    cell's hydrogen."""
    drive = ((ELECTRICITY,) if co.electric is not None else
             (co.fuel_cell.hydrogen.id,) if co.fuel_cell is not None else ())
    return tuple(f.id for f in co.fuels) + drive


def _battery_table(plan: Plan) -> pd.DataFrame:
    """One row per battery-electric option x class: the pack, its mass, the charging check."""
    rows = []
    for (oid, cid), ph in plan.physics.items():
        if ph.electric is None:
            continue
        e = next(o for o in plan.inputs.options if o.id == oid).per_class[cid].electric
        s, ch = ph.electric.sizing, ph.electric.charging
        energy = s.energy
        rows.append({
            "candidate": oid, "vehicle_class": cid, "range_km": e.range / 1e3,
            "capacity_kwh": s.capacity / J_PER_KWH, "pack_mass_kg": s.mass,
            "added_mass_kg": s.added_mass, "payload_loss_kg": max(s.added_mass, 0.0),
            "payload_kg": s.vehicle.payload,
            "battery_kwh_per_km": energy.battery_per_m * 1e3 / J_PER_KWH,
            "energy_kwh_per_km": energy.grid_per_m * 1e3 / J_PER_KWH,
            "regen_share_of_braking": (energy.regen_wheel / energy.braking
                                       if energy.braking > 0 else 0.0),
            "peak_power_kw": energy.peak_dc_power / 1e3,
            "charging_power_kw": ch.power / 1e3, "charging_hours": ch.time_needed / 3600.0,
            "charging_window_h": ch.window / 3600.0, "charging_fits": ch.fits,
            "charging_message": ch.message})
    return frame("battery", rows)


def _fuel_cell_table(plan: Plan) -> pd.DataFrame:
    """One row per fuel-cell option x class: stack, efficiency, buffer, hydrogen tank, mass."""
    rows = []
    for (oid, cid), ph in plan.physics.items():
        if ph.fuel_cell is None:
            continue
        h = next(o for o in plan.inputs.options if o.id == oid).per_class[cid].fuel_cell
        s = ph.fuel_cell.sizing
        use, tank, system = s.use, s.tank, h.system
        rows.append({
            "candidate": oid, "vehicle_class": cid, "stack_kw": system.rated_power / 1e3,
            "fuel_cell_mass_kg": system.mass,
            "rated_system_efficiency": float(system.operate(system.rated_power)
                                             .system_efficiency),
            "mean_system_efficiency": use.mean_efficiency,
            "h2_kg_per_100km": use.hydrogen_per_m * 1e5, "range_km": h.range / 1e3,
            "tank_pressure_bar": h.tank_pressure / 1e5, "tank": tank.tank.id,
            "tank_h2_kg": float(tank.usable_fuel_mass),
            "tank_volume_l": float(tank.tank_volume) * 1e3,
            "tank_mass_kg": float(tank.tank_mass),
            "tank_system_mass_kg": float(tank.system_mass),
            "buffer_kwh": h.buffer.capacity / J_PER_KWH, "buffer_mass_kg": h.buffer.mass,
            "buffer_fits": use.buffer_fits,
            "added_mass_kg": s.added_mass, "payload_loss_kg": max(s.added_mass, 0.0),
            "payload_kg": s.vehicle.payload, "pathway": h.pathway,
            "h2_co2e_kg_per_kg": h.co2e_per_kg.nominal})
    return frame("fuel_cell", rows)


def _candidates_table(plan: Plan, det: econ.Money, per_km: list[dict],
                      draws: Mapping[str, econ.NPVDraws],
                      colours: Mapping[str, str]) -> pd.DataFrame:
    inputs = plan.inputs
    weights = {c.id: c.count * c.km_per_year.nominal for c in inputs.classes}
    base = inputs.baseline.id
    h = inputs.horizon_years
    nan = float("nan")
    rows = []
    for o in inputs.options:
        sub = [r for r in per_km if r["candidate"] == o.id]
        w = np.array([weights[r["vehicle_class"]] for r in sub])

        def avg(col: str, _sub: list[dict] = sub, _w: np.ndarray = w) -> float:
            return float(np.dot([r[col] for r in _sub], _w) / _w.sum())

        vs = None if o.is_baseline else econ.compare(det, o.id, base)
        mc = draws.get(o.id)
        pct = np.percentile(mc.npv, [10, 50, 90]) if mc is not None else [nan] * 3
        rows.append({
            "candidate": o.id, "name": o.name,
            "fuel": "/".join(dict.fromkeys(f for co in o.per_class.values()
                                           for f in _carriers(co))),
            "is_baseline": o.is_baseline, "colour": colours[o.id],
            "fuel_energy_mj_per_km": avg("fuel_energy_mj_per_km"),
            "co2_ttw_g_per_km": avg("co2_ttw_g_per_km"),
            "co2e_wtw_g_per_km": avg("co2e_wtw_g_per_km"),
            "nox_g_per_km": avg("nox_g_per_km"),
            "cost_per_km": avg("cost_per_km"),
            "levelised_cost_per_km": float(econ.levelised_cost_per_m(det, o.id)[0]) * 1e3,
            "npv_vs_baseline": nan if vs is None else float(vs.npv[0]),
            "payback_years": nan if vs is None else float(vs.simple_payback[0]),
            "discounted_payback_years": nan if vs is None else float(vs.discounted_payback[0]),
            "co2e_avoided_t": nan if vs is None else float(vs.co2e_avoided[0]) * 1e-3,
            "raises_co2e": False if vs is None else bool(vs.co2e_avoided[0] < 0),
            "cost_per_t_co2e_avoided": nan if vs is None else float(
                vs.cost_per_kg_co2e_avoided[0]) * 1e3,
            "nox_avoided_kg": nan if vs is None else float(vs.nox_avoided[0]),
            "raises_nox": False if vs is None else bool(vs.nox_avoided[0] < 0),
            "cost_per_kg_nox_avoided": nan if vs is None else float(
                vs.cost_per_kg_nox_avoided[0]),
            "p_npv_positive": nan if mc is None else float(econ.probability_positive(mc.npv)),
            "p_discounted_payback_within_horizon": nan if mc is None else float(
                econ.probability_payback_within(mc.discounted_payback, h)),
            "npv_p10": pct[0], "npv_p50": pct[1], "npv_p90": pct[2],
        })
    return frame("candidates", rows)


def _cash_flow_table(plan: Plan, det: econ.Money) -> pd.DataFrame:
    inputs = plan.inputs
    rate = float(det.rate[0])
    factors = np.asarray(econ.discount_factors(rate, inputs.horizon_years)).reshape(-1)
    base = det.cash[inputs.baseline.id][0]
    parts: list[dict[str, np.ndarray]] = []
    for o in inputs.options:
        flows = det.cash[o.id][0]
        diff = flows - base
        disc = diff * factors
        parts.append({"cash_flow": flows, "cash_flow_vs_baseline": diff,
                      "discounted_vs_baseline": disc,
                      "cumulative_discounted_vs_baseline": np.cumsum(disc)})
    return _by_year("cash_flows", inputs, parts)


def phasing_of(plan: Plan, option: str, cid: str) -> np.ndarray | None:
    """Share of class ``cid`` an option converts in each programme year, shape (H+1,); None
    when it converts the class all in year 0 or not at all."""
    co = next(o for o in plan.inputs.options if o.id == option).per_class[cid]
    if not co.converts or co.phasing is None:
        return None
    out = np.zeros(plan.inputs.horizon_years + 1)
    out[:len(co.phasing)] = co.phasing
    return out


def _fleet_years_table(plan: Plan, det: econ.Money) -> pd.DataFrame:
    inputs = plan.inputs
    h = inputs.horizon_years
    base = inputs.baseline.id
    parts: list[dict[str, np.ndarray]] = []
    for o in inputs.options:
        energy = ttw = nox = repl = np.zeros(h + 1)
        for c in inputs.classes:
            ph = plan.physics[o.id, c.id]
            km = c.km_per_year.nominal * c.count * plan.active[c.id]
            phasing = phasing_of(plan, o.id, c.id)
            share = econ.converted_share(phasing, h) if phasing is not None else 1.0
            was = plan.physics[base, c.id]
            energy = energy + km * (share * ph.fuel_energy_per_m
                                    + (1.0 - share) * was.fuel_energy_per_m)
            ttw = ttw + km * (share * ph.co2_ttw_per_m + (1.0 - share) * was.co2_ttw_per_m)
            repl = repl + econ.cohorts(plan.replacements[o.id, c.id], phasing) \
                * plan.active[c.id] + (1.0 - share) * plan.replacements[base, c.id]
        nox = det.nox[o.id] / 1e3
        parts.append({"fuel_energy_gj": energy / 1e9, "co2_ttw_t": ttw / 1e3,
                      "co2e_wtw_t": det.co2e[o.id][0] / 1e3, "nox_t": nox,
                      "catalyst_replacements": repl, "cost_total": det.costs[o.id][0]})
    return _by_year("fleet_years", inputs, parts)


def _programme_table(plan: Plan, det: econ.Money) -> pd.DataFrame:
    """Capital, grants, financing and fuel tax by candidate and year (the public client's
    view of the fuel tax: ``fuel_tax_vs_baseline``)."""
    inputs = plan.inputs
    base = inputs.baseline.id
    parts = [{"capital": det.capital[o.id][0], "grants": det.grants[o.id][0],
              "financing": det.financing[o.id][0],
              "loan_balance": np.where(np.arange(inputs.horizon_years + 1)
                                       == inputs.horizon_years, det.loan_balance[o.id][0], 0.0),
              "fuel_tax": det.tax[o.id][0],
              "fuel_tax_vs_baseline": det.tax[o.id][0] - det.tax[base][0]}
             for o in inputs.options]
    return _by_year("programme_years", inputs, parts)


def _phasing_rows(plan: Plan) -> list[dict]:
    """Rows of the ``phasing`` table: each class a candidate converts, by programme year."""
    inputs = plan.inputs
    h = inputs.horizon_years
    rows = []
    for o in inputs.candidates:
        for c in inputs.classes:
            co = o.per_class[c.id]
            if not co.converts:
                continue
            shares = phasing_of(plan, o.id, c.id)
            if shares is None:
                shares = np.zeros(h + 1)
                shares[0] = 1.0
            running = econ.converted_share(shares, h) * plan.active[c.id]
            for y in range(h + 1):
                rows.append({"candidate": o.id, "vehicle_class": c.id,
                             "year": inputs.start_year + y, "converted_share": shares[y],
                             "vehicles_converted": shares[y] * c.count,
                             "running_converted_share": running[y]})
    return rows


def _funding_rows(plan: Plan, det: econ.Money) -> list[dict]:
    """Rows of the ``funding`` table: each candidate's capital, grants, loan and the present
    value of the change in fuel tax it pays (the public client's revenue change)."""
    inputs = plan.inputs
    base = inputs.baseline.id
    rate = float(det.rate[0])
    rows = []
    for o in inputs.candidates:
        tax_change = det.tax[o.id][0] - det.tax[base][0]
        rows.append({
            "candidate": o.id, "capital": float(det.capital[o.id][0].sum()),
            "grants": float(det.grants[o.id][0].sum()),
            "loan_share": np.nan if o.loan is None else o.loan.share.nominal,
            "loan_rate": np.nan if o.loan is None else o.loan.rate.nominal,
            "loan_term_years": np.nan if o.loan is None else o.loan.term_years,
            "loan_balance_at_horizon": float(det.loan_balance[o.id][0]),
            "fuel_tax_paid": float(det.tax[o.id][0].sum()),
            "fuel_tax_change_pv": float(np.asarray(econ.npv(rate, tax_change))),
            "npv_vs_baseline": float(np.asarray(econ.npv(
                rate, det.cash[o.id][0] - det.cash[base][0])))})
    return rows


def _by_year(name: str, inputs: StudyInputs, parts: list[dict[str, np.ndarray]]
             ) -> pd.DataFrame:
    """A table of one row per option x programme year from each option's yearly columns."""
    n = inputs.horizon_years + 1
    columns: dict[str, object] = {
        "candidate": [o.id for o in inputs.options for _ in range(n)],
        "year": np.tile(inputs.start_year + np.arange(n), len(inputs.options))}
    for key in parts[0]:
        columns[key] = np.concatenate([p[key] for p in parts])
    return pd.DataFrame({c: columns[c] for c in COLUMNS[name]})


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
            for (oid, cid), ph in plan.physics.items() if ph.storage]
    return frame("storage", rows)


def _fuel(inputs: StudyInputs, option_id: str, class_id: str) -> Fuel:
    """The fuel an option gives a class."""
    option = next(o for o in inputs.options if o.id == option_id)
    return option.per_class[class_id].fuel


def _monte_carlo_table(mc: Mapping[str, np.ndarray]) -> pd.DataFrame:
    frames = [pd.DataFrame({"candidate": oid, "draw": np.arange(len(v)),
                            "npv_vs_baseline": v}) for oid, v in mc.items()]
    return pd.concat(frames, ignore_index=True) if frames else _empty("monte_carlo")


def _tornado_table(plan: Plan, sensitivity: Mapping[str, pd.DataFrame]) -> pd.DataFrame:
    units = {u.path: (u.unit, u.scale) for u in all_uncertain(plan.inputs)} | plan.factor_units
    frames = []
    for oid, t in sensitivity.items():
        t = t[t["swing"] > 1e-9 * max(float(t["swing"].max()), 1.0)]
        scale = t["input"].map(lambda p: units[p][1]).astype(float)
        frames.append(pd.DataFrame({
            "candidate": oid,
            "input": t["input"],
            "label": t["input"].map(lambda p: input_label(p, plan.inputs)),
            "unit": t["input"].map(lambda p: display_unit(units[p][0], plan.inputs.currency)),
            "low_value": t["low_value"] * scale, "high_value": t["high_value"] * scale,
            "npv_at_low": t["output_low"], "npv_at_high": t["output_high"],
            "swing": t["swing"]}))
    return pd.concat(frames, ignore_index=True) if frames else _empty("tornado")


def _duty_table(inputs: StudyInputs) -> pd.DataFrame:
    """Each class's duty profile in numbers (speed traces; NaN for a time-at-mode table or a
    folder of logs, whose figures are elsewhere)."""
    rows = []
    for c in inputs.classes:
        row = {"vehicle_class": c.id, "profile": Path(str(c.profile)).stem}
        if isinstance(c.profile_data, DutyTrace):
            s = duty_stats(c.profile_data)
            row.update(distance_km=s.distance / 1e3, duration_h=s.duration / 3600.0,
                       mean_speed_km_per_h=s.mean_speed * 3.6,
                       max_speed_km_per_h=s.max_speed * 3.6, idle_share=s.idle_share,
                       stops_per_km=s.stops_per_m * 1e3)
        rows.append(row)
    return frame("duty", rows)


def _breakeven_table(inputs: StudyInputs,
                     break_even: Mapping[str, list[tuple[Uncertain, float]]]) -> pd.DataFrame:
    rows = [{"candidate": oid, "input": u.path, "label": input_label(u.path, inputs),
             "unit": display_unit(u.unit, inputs.currency), "nominal_value": u.nominal * u.scale,
             "breakeven_value": root * u.scale}
            for oid, found in break_even.items() for u, root in found]
    return frame("breakeven", rows)


def _operating_points_table(plan: Plan) -> pd.DataFrame:
    frames = []
    for (oid, cid), ph in plan.physics.items():
        if ph.duty is None:  # no engine
            continue
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
            if key in seen or (not co.converts and not o.is_baseline) or not co.fuels:
                continue
            seen.add(key)
            table = nox_sweep(co.fuel, engine_preset(co.engine), phi=list(FLAME_PHI))
            for _, r in table.iterrows():
                rows.append({"candidate": o.id, "fuel": co.fuel.id, "phi": r["phi"],
                             "flame_temperature_k": r["flame_temperature_k"],
                             "no_ppm": r["no_ppm"]})
    return frame("flame", rows)


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
    return frame("catalyst", rows)


def _assumptions(study: Study, draws: int) -> dict[str, str]:
    i = study.inputs
    out = {
        "study": i.title,
        "question": i.notes,
        "fictional data": "yes: every number is invented" if i.fictional else "no",
        "currency": i.currency,
        "programme": f"{i.start_year}, {i.horizon_years} years",
        "discount rate": f"{i.discount_rate.nominal:.1%} a year, real (prices in today's "
                         "money, escalation on top)",
        "carbon price": f"{i.carbon_price.nominal * 1e3:g} {i.currency}/t CO2e, on well-to-wheel "
                        "CO2e, counted with fuel costs",
        "NOx damage cost": f"{i.nox_damage_cost.nominal:g} {i.currency}/kg: finds the catalyst "
                           "replacement interval that would minimise upkeep plus NOx damage, "
                           "shown beside each device's own policy; not in the NPV",
        "Monte Carlo": f"{draws:,} draws, seed {i.seed}; uncertain inputs: "
                       f"{'; '.join(input_label(p, i) for p in i.uncertain) or 'none'}",
        "correlations": _correlation_text(i),
        "normal distributions": "cut to each input's range (no price, distance or cost draws "
                                "below 0); the nominal is the mean of the cut distribution",
        "input hash": study.digest(),
        "uncertain physics inputs": "evaluated at P1, P10, P30, P50, P70, P90 and P99 and "
                                    "interpolated per draw; effects of several such inputs "
                                    "add (first order)",
        "engine-out NOx": "screening model: baseline measured or typical engine-out NOx scaled "
                          "by the flame-chemistry propensity of each fuel",
        "classes past their remaining life": "drop out of every option alike (a candidate's "
                                             "new vehicles run the same years and are sold "
                                             "when the class leaves the programme)",
    }
    if any(co.electric is not None for o in i.options for co in o.per_class.values()):
        out["battery-electric tailpipe"] = (
            "zero CO2, CH4, N2O, NOx, PM, CO and hydrocarbons (nothing burns on board); brake "
            "and tyre wear particles are not counted for any drive; the grid's CO2e per kWh "
            "drawn is counted well to wheel, year by year")
    if any(co.fuel_cell is not None for o in i.options for co in o.per_class.values()):
        out["fuel-cell tailpipe"] = (
            "only water: zero CO2, CH4, N2O, NOx, PM, CO and hydrocarbons; the CO2e of making "
            "the hydrogen (its pathway, to the plant gate) is counted well to wheel. Hydrogen "
            "at 350-700 bar: tanks, stations and garages follow local codes and licensed "
            "practice")
    per_class = [co for o in i.candidates for co in o.per_class.values() if co.converts]
    if any(co.phasing is not None for co in per_class):
        out["phased conversions"] = ("a vehicle converted in year j runs converted from year "
                                     "j + 1 and as the baseline until then; each cohort's "
                                     "catalysts, inspections and residual value count from "
                                     "its own conversion year")
    if any(o.loan is not None for o in i.candidates):
        out["loans"] = ("a share of each year's capital net of grants is borrowed at a real "
                        "rate and repaid as a level annuity from the next year; a balance left "
                        "at the horizon is settled in the last year")
    if i.fuel_tax:
        out["fuel tax"] = ("paid on top of the prices and escalated with its fuel's price; in "
                           "the operator's NPV, and as the public client's revenue change in "
                           "the funding table")
    if any(o.stations for o in i.candidates):
        out["refuelling stations"] = ("sized for the whole class converted at the nominal "
                                      "distance; screening sizes for the cost, to be designed "
                                      "and installed by licensed practitioners under local "
                                      "codes")
    return out


def _correlation_text(inputs: StudyInputs) -> str:
    """The correlations of the uncertain inputs as text (Gaussian copula)."""
    corr = inputs.correlation
    if corr is None:
        return "none: uncertain inputs drawn independently"
    pairs = [f"{input_label(a, inputs)} ~ {input_label(b, inputs)} {corr.matrix[i][j]:g}"
             for i, a in enumerate(corr.names)
             for j, b in enumerate(corr.names) if j > i and corr.matrix[i][j] != 0.0]
    return "Gaussian copula over each input's own distribution: " + "; ".join(pairs)


def _sources(inputs: StudyInputs) -> dict[str, str]:
    out = {f"upstream CO2e of {fid}": src for fid, src in inputs.upstream_sources.items()}
    for o in inputs.options:
        for cid, co in o.per_class.items():
            for fuel in co.fuels:
                for section, src in fuel.sources:
                    out.setdefault(f"fuel {fuel.id} [{section}]", src)
            if co.engine_out_nox is None and o.is_baseline:
                out[f"engine-out NOx, {o.id}/{cid}"] = DEFAULT_ENGINE_OUT[co.engine].source
    out["thermochemistry"] = "Cantera with GRI-Mech 3.0 and NASA Glenn species data"
    out["GWP-100"] = "IPCC AR6 WG1 Table 7.15 (CH4 fossil 29.8, N2O 273)"
    return out
