"""Pollutant factors by regime and device, against the Euro VI and Euro 6 limits."""

from __future__ import annotations

import pytest

from workbench.core.errors import InputError
from workbench.models.pollutants import FACTORS, pollutant_factors

G_PER_KWH = 1e-3 / 3.6e6  # [kg/J] per g/kWh (1 kWh = 3.6 MJ, by definition)
#: Euro VI WHTC limits [g/kWh] (Regulation (EC) 595/2009 Annex I, from memory): CO 4.0,
#: THC 0.16 for compression ignition, NMHC 0.16 for positive ignition, PM 0.010.
EURO_VI = {"co": 4.0, "hc": 0.16, "pm": 0.010}


@pytest.mark.parametrize(("regime", "device"), [("compression-ignition", "urea-scr"),
                                                 ("spark-ignition", "three-way-catalyst")])
def test_factors_with_aftertreatment_meet_euro_vi(regime, device):
    f = pollutant_factors(regime, device)
    assert f.pm / G_PER_KWH <= 0.5 * EURO_VI["pm"]
    assert f.co / G_PER_KWH <= 0.5 * EURO_VI["co"]
    assert f.nmhc / G_PER_KWH <= 0.5 * EURO_VI["hc"]
    assert "memory" in f.source


def test_engine_out_fails_the_limits_a_device_is_fitted_for():
    # A diesel without a particulate filter emits several times the Euro VI PM limit, and a
    # spark-ignition engine without a three-way catalyst several times the CO limit: why both
    # devices became standard (Heywood 1988 ch. 11 engine-out levels, from memory).
    assert pollutant_factors("compression-ignition", "none").pm / G_PER_KWH > 5 * EURO_VI["pm"]
    assert pollutant_factors("spark-ignition", "none").co / G_PER_KWH > 5 * EURO_VI["co"]


def test_a_device_without_its_own_factors_falls_back_to_none():
    # a three-way catalyst on a diesel does nothing for PM (common practice, no source)
    assert pollutant_factors("compression-ignition", "three-way-catalyst") == FACTORS[
        "compression-ignition", "none"]
    with pytest.raises(InputError, match="engine setting"):
        pollutant_factors("steam", "none")
