"""An INVENTED StudyResult for chart, report and panel tests.

Every number here is made up for a fictional fleet; nothing is measured or from any source. The
tests that use it check layout, escaping and that charts carry the table's numbers, not physics.
The names carry markup on purpose (:data:`XSS_NAME`, a vehicle class with ``<i>``), so every
test that draws them also checks escaping.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from workbench.interfaces.charts import MapGrid
from workbench.study.naming import Names
from workbench.study.results import COLUMNS, PALETTE, StudyResult

#: A candidate name that would run script if it reached the page as markup.
XSS_NAME = "<img src=x onerror=alert(1)>"

#: Candidate ids, display names and fuels; the first is the baseline.
CANDIDATES = (
    ("diesel-now", "Diesel as today", "diesel"),
    ("lpg-convert", XSS_NAME, "lpg-autogas"),
    ("cng-convert", 'CNG & "new tanks"', "cng-h"),
)

#: Vehicle classes (one with markup).
CLASSES = ("taxi", "van <i>heavy</i>")


def _frame(name: str, rows: list[dict]) -> pd.DataFrame:
    return pd.DataFrame(rows, columns=list(COLUMNS[name]))


def make_result(*, demo: bool = True, currency: str = "XCU") -> StudyResult:
    """Build the invented result.

    Parameters
    ----------
    demo : bool
        Whether the result says its study's data are fictional.
    currency : str
        Currency label of the money columns.

    Returns
    -------
    StudyResult
    """
    rng = np.random.default_rng(7)
    ids = [c[0] for c in CANDIDATES]
    fuels = {c[0]: c[2] for c in CANDIDATES}
    years = np.arange(9)
    rate = 0.06

    cash_rows, fleet_rows, payback, npv = [], [], {}, {}
    for k, cand in enumerate(ids):
        conversion = [0.0, 2.4e6, 5.1e6][k]
        saving = [0.0, 0.55e6, 0.80e6][k]
        vs = np.where(years == 0, -conversion, saving)
        disc = vs / (1.0 + rate) ** years
        cum = np.cumsum(disc)
        npv[cand] = float(cum[-1]) if k else np.nan
        crossed = np.nonzero(cum >= 0.0)[0]
        payback[cand] = float(crossed[0]) - 0.5 if k and crossed.size else np.nan
        for y, v, d, c in zip(years, vs, disc, cum, strict=True):
            cash_rows.append(dict(candidate=cand, year=int(y), cash_flow=-4.0e6 + v,
                                  cash_flow_vs_baseline=v, discounted_vs_baseline=d,
                                  cumulative_discounted_vs_baseline=c))
            fleet_rows.append(dict(candidate=cand, year=int(y), fuel_energy_gj=9.0e4 + 1e3 * k,
                                   co2_ttw_t=6.5e3 - 400 * k, co2_ttw_fossil_t=6.2e3 - 400 * k,
                                   co2_ttw_biogenic_t=300.0, co2e_wtw_t=8.0e3 - 500 * k,
                                   nox_t=20.0 - 3 * k, catalyst_replacements=y % 3 == 0,
                                   cost_total=4.0e6 - saving))

    mc_rows, pct = [], {}
    for k, cand in enumerate(ids[1:], start=1):
        draws = rng.normal(npv[cand], 0.8e6 * k, size=400)
        pct[cand] = np.percentile(draws, [10, 50, 90])
        mc_rows += [dict(candidate=cand, draw=i, npv_vs_baseline=v) for i, v in enumerate(draws)]

    cand_rows = []
    for k, (cand, name, fuel) in enumerate(CANDIDATES):
        p10, p50, p90 = pct.get(cand, (np.nan,) * 3)
        cand_rows.append(dict(
            candidate=cand, name=name, fuel=fuel, is_baseline=k == 0, colour=PALETTE[k],
            fuel_energy_mj_per_km=[3.1, 3.4, 3.6][k], co2_ttw_g_per_km=[228.0, 215.0, 196.0][k],
            co2_ttw_fossil_g_per_km=[221.0, 215.0, 196.0][k],
            co2_ttw_biogenic_g_per_km=[7.0, 0.0, 0.0][k],
            co2e_wtw_g_per_km=[281.0, 251.0, 240.0][k], nox_g_per_km=[0.31, 0.06, 0.04][k],
            cost_per_km=[0.210, 0.182, 0.171][k], levelised_cost_per_km=[0.22, 0.19, 0.18][k],
            npv_vs_baseline=npv[cand], payback_years=payback[cand] - 0.3 if k else np.nan,
            discounted_payback_years=payback[cand],
            co2e_avoided_t=[np.nan, 1200.0, 1650.0][k], raises_co2e=False,
            cost_per_t_co2e_avoided=[np.nan, -40.0, -25.0][k],
            nox_avoided_kg=[np.nan, 900.0, 950.0][k], raises_nox=False,
            cost_per_kg_nox_avoided=[np.nan, -3.0, -2.5][k],
            p_npv_positive=[np.nan, 0.81, 0.66][k],
            p_discounted_payback_within_horizon=[np.nan, 0.9, 0.7][k],
            npv_p10=p10, npv_p50=p50, npv_p90=p90))

    per_km_rows, nox_rows, op_rows = [], [], []
    for k, cand in enumerate(ids):
        for j, vclass in enumerate(CLASSES):
            fuel_cost = [0.120, 0.085, 0.070][k] * (1 + 0.5 * j)
            upkeep = [0.040, 0.046, 0.050][k] * (1 + 0.3 * j)
            capital = [0.0, 0.030, 0.048][k] * (1 + 0.2 * j)
            per_km_rows.append(dict(
                candidate=cand, vehicle_class=vclass, fuel=fuels[cand],
                fuel_energy_mj_per_km=3.0 + 0.3 * k + 2 * j, fuel_l_per_100km=8.0 + k + 3 * j,
                fuel_kg_per_100km=6.8 + k + 2 * j, co2_ttw_g_per_km=220.0 - 14 * k + 90 * j,
                co2_ttw_fossil_g_per_km=213.0 - 14 * k + 90 * j,
                co2_ttw_biogenic_g_per_km=7.0 if k == 0 else 0.0,
                co2e_wtw_g_per_km=270.0 - 18 * k + 110 * j,
                nox_engine_out_g_per_km=1.2 - 0.3 * k, nox_g_per_km=0.30 - 0.09 * k + 0.1 * j,
                cost_fuel_per_km=fuel_cost, cost_upkeep_per_km=upkeep,
                cost_capital_per_km=capital, cost_per_km=fuel_cost + upkeep + capital,
                share_out_of_map=0.01 * k, share_full_load=0.02 * j))
            interval = [36, 24, 24][k]
            for month in range(60):
                age = month % interval
                eff = 0.92 - 0.004 * age - 0.01 * k
                nox_rows.append(dict(candidate=cand, vehicle_class=vclass, month=month,
                                     catalyst_efficiency=eff,
                                     nox_g_per_km=(1.2 - 0.3 * k + 0.2 * j) * (1.0 - eff),
                                     replaced=month > 0 and age == 0))
            for i in range(12):
                op_rows.append(dict(candidate=cand, vehicle_class=vclass,
                                    engine_speed_rpm=1000.0 + 250.0 * i + 100 * j,
                                    torque_nm=30.0 + 11.0 * i + 20 * j, hours=50.0 + 40.0 * (i % 5),
                                    brake_efficiency=0.26 + 0.008 * i - 0.01 * k))

    storage = _frame("storage", [
        dict(candidate=ids[0], fuel="diesel", energy_density_mj_per_kg=43.1,
             energy_density_mj_per_l=35.9, system_energy_density_mj_per_kg=36.0,
             system_energy_density_mj_per_l=30.0, tank_volume_l=60.0,
             tank_system_mass_kg=62.0, range_km=700.0),
        dict(candidate=ids[1], fuel="lpg-autogas", energy_density_mj_per_kg=46.0,
             energy_density_mj_per_l=24.8, system_energy_density_mj_per_kg=26.0,
             system_energy_density_mj_per_l=17.0, tank_volume_l=90.0,
             tank_system_mass_kg=85.0, range_km=520.0),
        dict(candidate=ids[2], fuel="cng-h", energy_density_mj_per_kg=47.0,
             energy_density_mj_per_l=9.0, system_energy_density_mj_per_kg=12.0,
             system_energy_density_mj_per_l=6.5, tank_volume_l=320.0,
             tank_system_mass_kg=190.0, range_km=450.0),
    ])

    tornado_rows = []
    inputs = ("fuel price <b>LPG</b>", "discount rate", "km per year", "conversion cost")
    for k, cand in enumerate(ids[1:], start=1):
        for i, inp in enumerate(inputs):
            swing = (i + 1) * 0.4e6 * k
            tornado_rows.append(dict(candidate=cand, input=f"fixture.input{i}", label=inp,
                                     unit="XCU per L" if i == 0 else "", low_value=1.0 + i,
                                     high_value=2.0 + i, npv_at_low=npv[cand] - 0.6 * swing,
                                     npv_at_high=npv[cand] + 0.4 * swing, swing=swing))

    flame_rows = []
    for k, cand in enumerate(ids):
        for phi in np.round(np.arange(0.6, 1.45, 0.1), 2):
            flame_rows.append(dict(candidate=cand, fuel=fuels[cand], phi=phi,
                                   flame_temperature_k=2300.0 - 900.0 * (phi - 1.05) ** 2
                                   - 20 * k,
                                   no_ppm=max(0.0, 3000.0 - 16000.0 * (phi - 0.95) ** 2)
                                   * (1 - 0.1 * k)))

    catalyst = _frame("catalyst", [
        dict(candidate=cand, vehicle_class=vclass, device=["SCR", "TWC", "TWC"][k],
             replacements=[1, 2, 2][k], replacement_cost=[900.0, 650.0, 700.0][k],
             reductant_cost=[120.0, 0.0, 0.0][k], best_interval_months=[36, 24, 24][k],
             best_total_cost=[1400.0, 1300.0, 1400.0][k])
        for k, cand in enumerate(ids) for vclass in CLASSES])

    assumptions = {
        "fleet": "900 taxis, 300 vans (INVENTED fixture)",
        "discount_rate": "6 %",
        "note <script>": "<script>alert(2)</script>",
    }
    sources = {"fuel properties": "INVENTED for tests <b>not a source</b>"}
    return StudyResult(
        title="Invented fixture study <u>fleet</u>", currency=currency,
        candidates=_frame("candidates", cand_rows), per_km=_frame("per_km", per_km_rows),
        cash_flows=_frame("cash_flows", cash_rows), fleet_years=_frame("fleet_years", fleet_rows),
        nox_monthly=_frame("nox_monthly", nox_rows), storage=storage,
        monte_carlo=_frame("monte_carlo", mc_rows), tornado=_frame("tornado", tornado_rows),
        operating_points=_frame("operating_points", op_rows), flame=_frame("flame", flame_rows),
        catalyst=catalyst, assumptions=assumptions, sources=sources, fictional=demo,
        names=Names(candidates={c[0]: c[1] for c in CANDIDATES},
                    classes={c: c.capitalize() for c in CLASSES},
                    fuels={c[2]: c[2].upper() for c in CANDIDATES}))


def make_map_grid() -> MapGrid:
    """An invented brake-efficiency map: a smooth hill peaking at 36 % (made up)."""
    speed = np.linspace(800.0, 4800.0, 9)
    torque = np.linspace(10.0, 250.0, 9)
    n, t = np.meshgrid(speed, torque)
    eff = 0.36 - 0.10 * ((n - 2400.0) / 2400.0) ** 2 - 0.15 * ((t - 190.0) / 250.0) ** 2
    full_load = 180.0 + 60.0 * np.sin(np.pi * (speed - 800.0) / 4000.0)
    return MapGrid(speed_rpm=speed, torque_nm=torque, efficiency=eff,
                   full_load_torque_nm=full_load, name="invented 1.8 L <map>")
