"""The demo study's headline tables, pinned.

The pin (``tests/data/demo-headline-pin.json``) was written from the demo study before the
package was re-laid into layers; a refactor must reproduce it to 1e-9. A change that is meant
to move the numbers (a model or a money definition) rewrites the pin in the same commit and
says why: ``python tests/test_regression_pin.py --write``.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

PIN = Path(__file__).parent / "data" / "demo-headline-pin.json"
TABLES = ("candidates", "per_km", "cash_flows", "fleet_years", "storage", "catalyst", "tornado")


def _snapshot() -> dict:
    from workbench.study import read_study, run

    result = run(read_study("demo"))
    out = {name: json.loads(getattr(result, name).to_json(orient="split",
                                                           double_precision=15))
           for name in TABLES}
    out["monte_carlo_summary"] = {
        c: [float(g["npv_vs_baseline"].mean()), float(g["npv_vs_baseline"].std())]
        for c, g in result.monte_carlo.groupby("candidate")}
    return out


@pytest.mark.slow
def test_demo_headline_tables_match_the_pin():
    pinned = json.loads(PIN.read_text(encoding="utf-8"))
    now = _snapshot()
    for name in TABLES:
        a = pd.DataFrame(**{k: pinned[name][k] for k in ("columns", "data")})
        b = pd.DataFrame(**{k: now[name][k] for k in ("columns", "data")})
        assert list(a.columns) == list(b.columns), name
        assert a.shape == b.shape, name
        for col in a.columns:
            if pd.api.types.is_numeric_dtype(a[col]) and not pd.api.types.is_bool_dtype(a[col]):
                np.testing.assert_allclose(b[col].to_numpy(float), a[col].to_numpy(float),
                                           rtol=1e-9, atol=1e-9, err_msg=f"{name}.{col}")
            else:
                assert a[col].tolist() == b[col].tolist(), f"{name}.{col}"
    for cand, (mean, sd) in pinned["monte_carlo_summary"].items():
        np.testing.assert_allclose(now["monte_carlo_summary"][cand], [mean, sd], rtol=1e-9)


if __name__ == "__main__" and "--write" in sys.argv:
    PIN.write_text(json.dumps(_snapshot(), indent=1) + "\n", encoding="utf-8")
    print(f"wrote {PIN}")
