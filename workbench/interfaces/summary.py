"""The answer first: a study's verdict per option, written from its result tables.

Every number in the summary is read from :class:`~workbench.study.results.StudyResult`
(candidates, per-class figures, tornado, break-even) and only formatted here; nothing is
computed beyond differences against the baseline row and the ranking by NPV. The report and the
panels show the same :class:`Verdict` records.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import pandas as pd

from workbench.interfaces.present import money, percent, significant
from workbench.study.results import StudyResult

#: Chance that the NPV is positive above which an option "pays", and below which it "does not
#: pay"; between them the verdict says "likely" or "unlikely" (common practice, no source).
SURE = 0.9
#: How many inputs the verdict names as moving the NPV most.
TOP_DRIVERS = 3


@dataclass(frozen=True)
class Verdict:
    """One option's answer, in words and numbers.

    Attributes
    ----------
    candidate : str
        Option id.
    name : str
        Option name.
    word : str
        "pays", "likely pays", "unlikely to pay" or "does not pay".
    headline : str
        One sentence: verdict, NPV with its P10–P90 band and chance, payback.
    emissions : str
        Change in well-to-wheel CO2e and tailpipe NOx against the baseline, signed.
    drivers : str
        The inputs that move the NPV most, with the NPV at their P10 and P90.
    breakeven : str
        The values at which the verdict would change (NPV zero), where they exist.
    per_class : tuple of str
        Per vehicle class: cost per km and emissions against the baseline (a
        battery-electric class: its pack, grid energy per km and the payload it costs).
    raises_emissions : bool
        The option raises CO2e or NOx against the baseline.
    """

    candidate: str
    name: str
    word: str
    headline: str
    emissions: str
    drivers: str
    breakeven: str
    per_class: tuple[str, ...]
    raises_emissions: bool


def _word(npv: float, chance: float) -> str:
    if math.isnan(chance):
        return "pays" if npv > 0 else "does not pay"
    if chance >= SURE:
        return "pays"
    if chance <= 1 - SURE:
        return "does not pay"
    return "likely pays" if chance >= 0.5 else "unlikely to pay"


def _change(new: float, old: float, unit: str) -> tuple[str, bool]:
    """'−35 g/km (−10.9 %)' and whether it rose."""
    diff = new - old
    rel = diff / old if old else math.nan
    word = significant(diff)
    word = f"+{word}" if diff > 0 else word.replace("-", "−")
    pct = percent(rel, signed=True).replace("-", "−")
    return f"{word} {unit} ({pct})", diff > 0


def verdicts(result: StudyResult) -> list[Verdict]:
    """The verdict of every candidate against the baseline, best NPV first.

    Parameters
    ----------
    result : StudyResult

    Returns
    -------
    list of Verdict
    """
    cur = result.currency
    cands = result.candidates
    base = cands[cands["is_baseline"].astype(bool)].iloc[0]
    others = cands[~cands["is_baseline"].astype(bool)].sort_values("npv_vs_baseline",
                                                                      ascending=False)
    horizon = len(result.cash_flows["year"].unique()) - 1 if len(result.cash_flows) else 0
    draws = int(result.monte_carlo["draw"].nunique()) if len(result.monte_carlo) else 0
    per_km, battery = _rows(result.per_km), _rows(result.battery)
    out = []
    for _, row in others.iterrows():
        cid = row["candidate"]
        chance = float(row["p_npv_positive"])
        word = _word(float(row["npv_vs_baseline"]), chance)
        band = ""
        if draws:
            band = (f" (P10–P90 {money(row['npv_p10'], signed=True)} to "
                    f"{money(row['npv_p90'], signed=True)}; positive in "
                    f"{percent(chance)} of {draws:,} draws)")
        pay = row["discounted_payback_years"]
        payback = (f"; discounted payback {significant(pay, 2)} years" if not math.isnan(pay)
                   else "; no discounted payback within the horizon")
        headline = (f"{row['name']} {word}: NPV {money(row['npv_vs_baseline'], cur, signed=True)}"
                    f" over {horizon} years against {base['name']}{band}{payback}.")
        co2, co2_up = _change(row["co2e_wtw_g_per_km"], base["co2e_wtw_g_per_km"], "g/km")
        nox, nox_up = _change(row["nox_g_per_km"], base["nox_g_per_km"], "g/km")
        emissions = (f"Well-to-wheel CO2e {co2}{' — RAISED' if co2_up else ''}; tailpipe NOx "
                     f"{nox}{' — RAISED' if nox_up else ''}, fleet average per km.")
        out.append(Verdict(cid, row["name"], word, headline, emissions, _drivers(result, cid),
                           _breakeven(result, cid),
                           _per_class(result, cid, base["candidate"], per_km, battery),
                           co2_up or nox_up))
    return out


def _amount(value: float, unit: str) -> str:
    """A value with its unit; a dimensionless ``-`` (a factor) is not written after it."""
    return f"{significant(value)} {'' if unit == '-' else unit}".strip()


def _drivers(result: StudyResult, cid: str) -> str:
    t = result.tornado[result.tornado["candidate"] == cid].sort_values("swing",
                                                                       ascending=False)
    if t.empty:
        return "No uncertain inputs were given, so no input was swung."
    parts = [f"{r['label']} (NPV {money(r['npv_at_low'], signed=True)} at "
             f"{_amount(r['low_value'], r['unit'])}, {money(r['npv_at_high'], signed=True)} "
             f"at {_amount(r['high_value'], r['unit'])})"
             for _, r in t.head(TOP_DRIVERS).iterrows()]
    return "Moves it most: " + "; ".join(parts) + "."


def _breakeven(result: StudyResult, cid: str) -> str:
    b = result.breakeven[(result.breakeven["candidate"] == cid)
                         & result.breakeven["breakeven_value"].notna()]
    if b.empty:
        return "No single price or distance tried turns the NPV to zero."
    parts = [f"{r['label']} at {_amount(r['breakeven_value'], r['unit'])} (now "
             f"{_amount(r['nominal_value'], r['unit'])})" for _, r in b.iterrows()]
    return "The NPV is zero at: " + "; ".join(parts) + "."


def _rows(table: pd.DataFrame) -> dict[tuple[str, str], dict[str, Any]]:
    """A table's rows by (candidate, vehicle class), for lookups in a loop (a boolean mask
    per lookup made the panel's summary the slowest part of an edit)."""
    return {(r["candidate"], r["vehicle_class"]): r for r in table.to_dict("records")}


def _per_class(result: StudyResult, cid: str, base_id: str,
               per_km: dict[tuple[str, str], dict[str, Any]],
               battery: dict[tuple[str, str], dict[str, Any]]) -> tuple[str, ...]:
    lines = []
    for vclass in dict.fromkeys(result.per_km["vehicle_class"]):
        b, c = per_km.get((base_id, vclass)), per_km.get((cid, vclass))
        if b is None or c is None or b["fuel"] == c["fuel"]:
            continue
        cost, _ = _change(c["cost_per_km"], b["cost_per_km"], f"{result.currency}/km")
        co2, _ = _change(c["co2e_wtw_g_per_km"], b["co2e_wtw_g_per_km"], "g/km")
        nox, _ = _change(c["nox_g_per_km"], b["nox_g_per_km"], "g/km")
        bat = battery.get((cid, vclass))
        pack = "" if bat is None else (
            f" Battery {significant(bat['capacity_kwh'])} kWh, "
            f"{significant(bat['energy_kwh_per_km'])} kWh/km from the grid, payload "
            f"lost {significant(bat['payload_loss_kg'])} kg.")
        lines.append(f"{result.names.vehicle_class(vclass)} on "
                     f"{result.names.fuel(c['fuel'])}: cost {cost}, CO2e {co2}, NOx {nox}."
                     + pack)
    return tuple(lines)


def best_option(result: StudyResult, vs: list[Verdict] | None = None) -> str:
    """One sentence naming the option with the highest NPV, or keeping today's fleet
    (``vs``: the result's :func:`verdicts`, when already made)."""
    vs = verdicts(result) if vs is None else vs
    paying = [v for v in vs if v.word in ("pays", "likely pays")]
    if not paying:
        return "No candidate is likely to pay: keeping the fleet as it is costs least."
    best = paying[0]
    return f"Highest NPV: {best.name} ({best.word})."



def best_mix_text(result: StudyResult) -> str:
    """The best choice per vehicle class in words, with its NPV band ("" without one)."""
    mix = result.best_mix
    if mix.empty:
        return ""
    names = result.names
    parts = [f"{names.vehicle_class(r['vehicle_class'])}: {names.candidate(r['candidate'])}"
             for _, r in mix.iterrows()]
    r = mix.iloc[0]
    band = ("" if not math.isfinite(r["npv_p10"]) else
            f" (P10–P90 {money(r['npv_p10'], signed=True)} to "
            f"{money(r['npv_p90'], signed=True)}; positive in {percent(r['p_npv_positive'])} "
            "of draws)")
    return (f"Best choice per class — {'; '.join(parts)}: NPV "
            f"{money(r['npv_vs_baseline'], result.currency, signed=True)}{band}.")


def programme_lines(result: StudyResult) -> list[str]:
    """The programme's phasing, grants, loans and fuel tax in words, one line each.

    Parameters
    ----------
    result : StudyResult
        The result (its ``phasing`` and ``funding`` tables).

    Returns
    -------
    list of str
        A line per class converted over several years, and per candidate with grants, a loan
        or fuel tax; empty when there is none.
    """
    names, cur = result.names, result.currency
    lines = []
    for (cand, vc), rows in result.phasing.groupby(["candidate", "vehicle_class"], sort=False):
        done = rows[rows["vehicles_converted"] > 0]
        if len(done) > 1:
            parts = ", ".join(f"{significant(float(r.vehicles_converted))} in {int(r.year)}"
                              for r in done.itertuples(index=False))
            lines.append(f"{names.candidate(cand)} converts {names.vehicle_class(vc)} over "
                         f"{len(done)} years ({parts}); until converted they run as the "
                         "baseline runs them.")
    for r in result.funding.itertuples(index=False):
        name = names.candidate(r.candidate)
        if r.grants > 0:
            lines.append(f"{name}: grants of {money(r.grants, cur)} towards "
                         f"{money(r.capital, cur)} of capital, received in the years paid.")
        if not math.isnan(r.loan_share):
            owed = (f"{money(r.loan_balance_at_horizon, cur)} still owed at the horizon is "
                    "settled in the last year" if r.loan_balance_at_horizon > 0
                    else "repaid within the horizon")
            lines.append(f"{name}: borrows {percent(r.loan_share)} of its capital at "
                         f"{percent(r.loan_rate)} over {int(r.loan_term_years)} years; {owed}.")
        if r.fuel_tax_paid > 0 or r.fuel_tax_change_pv != 0:
            lines.append(f"{name}: pays {money(r.fuel_tax_paid, cur)} of fuel tax over the "
                         "programme (in its NPV); a public client's tax revenue changes by "
                         f"{money(r.fuel_tax_change_pv, cur, signed=True)} against the "
                         "baseline (present value).")
    return lines
