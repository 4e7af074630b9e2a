"""A decision per vehicle class, and the best mix of options across classes.

Each candidate is split into one option per class it converts (the other classes as the
baseline has them, no programme costs): its NPV, payback and emissions against the baseline are
the class's own. The best mix then picks, for every class, the baseline or one candidate's
conversion, counting each chosen candidate's programme costs (capital and upkeep) once, and
keeps the mix with the highest NPV; every combination is tried (up to :data:`MAX_MIXES`). The
mix's uncertainty comes from the same Monte Carlo draws as the candidates'.

The cash flows are the study's own (:func:`workbench.study.runner._money`), run on synthetic
options whose physics are the existing (candidate, class) results: nothing is recomputed.
"""

from __future__ import annotations

import itertools
from collections.abc import Mapping
from dataclasses import replace

import numpy as np
import pandas as pd

from workbench.models import economics as econ
from workbench.study.runner import Plan, _money
from workbench.study.studyfile import Option, Uncertain

#: Most combinations of (baseline or candidate) per class the best-mix search tries; beyond it
#: each class takes its own best option (the programme costs then counted as they fall).
MAX_MIXES = 4096


def _zero(path: str) -> Uncertain:
    return Uncertain(0.0, None, path)


def _programme(options: list[Option], field: str, path: str) -> Uncertain:
    """The summed programme input of ``options``; one that alone carries a value keeps its own
    (so Monte Carlo draws reach it), several are summed at their nominal values."""
    given = [getattr(o, field) for o in options]
    given = [u for u in given if u.nominal != 0.0 or u.dist is not None]
    if len(given) == 1:
        return given[0]
    return replace(_zero(path), nominal=sum(u.nominal for u in given))


def _synthetic(plan: Plan, choice: Mapping[str, str], oid: str, *, programme: bool) -> Option:
    """An option giving each class the class option of the option named in ``choice``, with
    the baseline's programme costs and (``programme``) those of each candidate it uses."""
    inputs = plan.inputs
    by_id = {o.id: o for o in inputs.options}
    per_class = {c: by_id[o].per_class[c] for c, o in choice.items()}
    payers = [inputs.baseline]
    used = [by_id[o] for o in dict.fromkeys(choice.values()) if o != inputs.baseline.id]
    if programme:
        payers += used
    # each payer's stations, serving the classes the mix takes from it
    stations = tuple(replace(st, classes=served) for o in payers[1:] for st in o.stations
                     if (served := tuple(c for c in st.classes if choice.get(c) == o.id)))
    return Option(id=oid, name=oid, is_baseline=False, per_class=per_class,
                  programme_capital=_programme(payers, "programme_capital",
                                               f"{oid}.programme_capital"),
                  programme_upkeep_per_year=_programme(payers, "programme_upkeep_per_year",
                                                       f"{oid}.programme_upkeep"),
                  programme_grant=sum(o.programme_grant + o.programme_grant_share
                                      * o.programme_capital.nominal for o in payers[1:]),
                  loan=used[0].loan if len(used) == 1 else None, stations=stations)


def _extend(plan: Plan, options: dict[str, tuple[Option, Mapping[str, str]]], *,
            keep: bool = True) -> Plan:
    """The plan with synthetic options added (``keep``: after the study's candidates, else in
    their place); their physics point at the chosen options'."""
    keyed = {}
    for field in ("physics", "catalyst_cost", "nox_t", "replacements", "responses"):
        table = dict(getattr(plan, field))
        for oid, (_, choice) in options.items():
            for cid, src in choice.items():
                table[oid, cid] = table[src, cid]
        keyed[field] = table
    own = plan.inputs.candidates if keep else ()
    inputs = replace(plan.inputs, candidates=(*own, *(o for o, _ in options.values())))
    return replace(plan, inputs=inputs, **keyed)


def _npv(money: econ.Money, oid: str, base: str) -> float:
    """NPV of option ``oid`` against ``base`` in the first draw [currency]."""
    return float(np.asarray(econ.npv(money.rate[0], money.cash[oid][0] - money.cash[base][0])))


def _row(money: econ.Money, oid: str, base: str) -> dict:
    rate = money.rate
    diff = money.cash[oid] - money.cash[base]
    nox_kg = float((money.nox[base] - money.nox[oid]).sum())  # a phased class's cohorts in
    return {
        "npv_vs_baseline": _npv(money, oid, base),
        "discounted_payback_years": float(np.asarray(econ.discounted_payback(rate[0],
                                                                               diff[0]))),
        "co2e_avoided_t": float((money.co2e[base][0] - money.co2e[oid][0]).sum()) / 1e3,
        "nox_avoided_kg": nox_kg,
    }


def _spread(draws: Mapping[str, np.ndarray], oid: str) -> dict:
    if oid not in draws:
        return {"npv_p10": np.nan, "npv_p50": np.nan, "npv_p90": np.nan,
                "p_npv_positive": np.nan}
    npv = draws[oid]
    p10, p50, p90 = np.percentile(npv, [10, 50, 90])
    return {"npv_p10": p10, "npv_p50": p50, "npv_p90": p90,
            "p_npv_positive": float(econ.probability_positive(npv))}


def _single_draws(plan: Plan, single: Mapping[str, tuple[Option, Mapping[str, str]]],
                  samples: Mapping[str, np.ndarray], n: int) -> dict[str, np.ndarray]:
    """NPV draws of each one-class option, the money run on that class alone (the other
    classes are the baseline's in both, so they cancel)."""
    out = {}
    for c in plan.inputs.classes:
        mine = {oid: v for oid, v in single.items() if oid.endswith(f"@{c.id}")}
        if not mine:
            continue
        sub = _extend(plan, mine, keep=False)
        sub = replace(sub, inputs=replace(sub.inputs, classes=(c,)))
        money = _money(sub, samples, n)
        base = plan.inputs.baseline.id
        for oid in mine:
            out[oid] = np.asarray(econ.npv(money.rate, money.cash[oid] - money.cash[base])
                                  ).reshape(-1)
    return out


def decision_tables(plan: Plan, samples: Mapping[str, np.ndarray], n: int,
                    candidate_draws: Mapping[str, np.ndarray] | None = None
                    ) -> tuple[list[dict], list[dict]]:
    """Rows of the ``class_decisions`` and ``best_mix`` tables.

    Parameters
    ----------
    plan : Plan
        The study's physics and yearly arrays.
    samples : mapping
        Monte Carlo draws by input path (empty for none).
    n : int
        Number of draws (0 for none).
    candidate_draws : mapping, optional
        NPV draws of the study's candidates on the same samples: a mix that is one of them
        takes its draws instead of running them again.

    Returns
    -------
    (list of dict, list of dict)
        One row per candidate x class it converts; one row per class of the best mix (the
        mix's own figures repeated on each row, its choice for that class in ``candidate``).
    """
    inputs = plan.inputs
    base = inputs.baseline.id
    classes = [c.id for c in inputs.classes]
    keep = dict.fromkeys(classes, base)
    single: dict[str, tuple[Option, Mapping[str, str]]] = {}
    for o in inputs.candidates:
        for cid, co in o.per_class.items():
            if co.converts:
                choice = {**keep, cid: o.id}
                oid = f"{o.id}@{cid}"
                single[oid] = (_synthetic(plan, choice, oid, programme=False), choice)
    per_class = {cid: [base, *(o.id for o in inputs.candidates if o.per_class[cid].converts)]
                 for cid in classes}
    combos = list(itertools.islice(itertools.product(*per_class.values()), MAX_MIXES + 1))
    if len(combos) > MAX_MIXES:
        combos = []
    mixes = {}
    for k, combo in enumerate(combos):
        choice = dict(zip(classes, combo, strict=True))
        mixes[f"mix{k}"] = (_synthetic(plan, choice, f"mix{k}", programme=True), choice)
    ext = _extend(plan, {**single, **mixes})
    det = _money(ext, {}, 1)
    if mixes:
        best_id = max(mixes, key=lambda m: _npv(det, m, base))
    else:  # too many to try: each class its own best conversion
        choice = {}
        for cid in classes:
            options = [(oid, ch) for oid, (_, ch) in single.items() if ch[cid] != base]
            scores = [(_npv(det, oid, base), ch[cid]) for oid, ch in options]
            choice[cid] = max([(0.0, base), *scores])[1]
        mixes = {"mix": (_synthetic(plan, choice, "mix", programme=True), choice)}
        ext = _extend(plan, {**single, **mixes})
        det = _money(ext, {}, 1)
        best_id = "mix"
    best_choice = mixes[best_id][1]
    draws: dict[str, np.ndarray] = {}
    if n > 0:
        draws = _single_draws(plan, single, samples, n)
        same = [o.id for o in inputs.candidates if best_choice == {
            c: (o.id if co.converts else base) for c, co in o.per_class.items()}]
        if same and candidate_draws is not None and same[0] in candidate_draws:
            draws[best_id] = np.asarray(candidate_draws[same[0]]).reshape(-1)
        else:
            money = _money(_extend(plan, {best_id: mixes[best_id]}, keep=False), samples, n)
            draws[best_id] = np.asarray(econ.npv(
                money.rate, money.cash[best_id] - money.cash[base])).reshape(-1)
    rows = []
    for oid in single:
        src, cid = oid.split("@", 1)
        rows.append({"candidate": src, "vehicle_class": cid,
                     **_row(det, oid, base), **_spread(draws, oid),
                     "in_best_mix": best_choice[cid] == src})
    mix = {**_row(det, best_id, base), **_spread(draws, best_id)}
    mix_rows = [{"vehicle_class": cid, "candidate": best_choice[cid], **mix} for cid in classes]
    return rows, mix_rows


def mix_line(best_mix: pd.DataFrame, names: Mapping[str, str] | None = None) -> str:
    """One line naming the best mix and its NPV, for the command line and the panels."""
    if best_mix.empty:
        return ""
    names = names or {}
    parts = [f"{r.vehicle_class}: {names.get(r.candidate, r.candidate)}"
             for r in best_mix.itertuples(index=False)]
    r = best_mix.iloc[0]
    spread = ("" if not np.isfinite(r["npv_p10"]) else
              f", P10 {r['npv_p10']:,.0f} to P90 {r['npv_p90']:,.0f}, "
              f"P(NPV > 0) {r['p_npv_positive']:.0%}")
    return f"best mix by class ({'; '.join(parts)}): NPV {r['npv_vs_baseline']:,.0f}{spread}"


__all__ = ["MAX_MIXES", "decision_tables", "mix_line"]
