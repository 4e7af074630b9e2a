"""A study at the ends of every limit still runs to finite results.

The limits of docs/study-file.md are chosen so that no allowed input overflows the money
model: the demo study with its money, counts, distances, prices, escalation and horizon at their
largest allowed values (and the discount rate at its lowest) gives no infinity and no NaN in
the NPVs. Common practice, no source.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from workbench.study.runner import run
from workbench.study.studyfile import read_study

EXTREMES = {
    "programme.horizon_years": 100,
    "programme.discount_rate": "-10 %",
    "programme.start_year": 2200,
    "programme.carbon_price": "1e15 per t",
    "programme.nox_damage_cost": "1e15 per kg",
    "classes[0].count": 10_000_000,
    "classes[0].km_per_year": "2000000 km",
    "classes[0].remaining_life_years": 100,
    "classes[0].upkeep_per_year": 1e15,
    "classes[0].daily_revenue": 1e15,
    "candidates[0].conversion_cost": 1e15,
    "candidates[0].upkeep_change_per_year": 1e15,
    "prices.lpg": "1e15 per (1e-15 L)",
    "escalation.lpg": "100 %",
    "upstream.lpg.wtt_co2e_g_per_mj": 1000,
    "baseline.engine_out_nox": "1000 g/km",
}


@pytest.mark.slow
def test_the_largest_allowed_inputs_give_finite_results():
    result = run(read_study("demo").with_values(EXTREMES), draws=200)
    for name in dir(result):
        table = getattr(result, name)
        if isinstance(table, pd.DataFrame):
            values = table.select_dtypes("number").to_numpy(dtype=float)
            assert not np.isinf(values).any(), name
    study = read_study("demo")
    rows = result.candidates.iloc[1:]  # the baseline's row has no NPV against itself
    assert len(rows) == len(study.inputs.candidates)
    npv = rows[["npv_vs_baseline", "npv_p10", "npv_p50", "npv_p90"]].to_numpy(dtype=float)
    assert np.isfinite(npv).all()
