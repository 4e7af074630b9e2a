"""Tests of workbench.models.emissions: CO2-equivalent on the IPCC AR6 100-year GWPs."""

from __future__ import annotations

import numpy as np
from numpy.testing import assert_allclose

from workbench.models.emissions import GWP100_CH4_FOSSIL, GWP100_CH4_NON_FOSSIL, GWP100_N2O, co2e


def test_gwp100_values_of_ar6():
    # IPCC AR6 WG1 (2021), Chapter 7, Table 7.15, GWP-100 (from memory): CH4-fossil 29.8,
    # CH4-non fossil 27.0, N2O 273. Exact: these are the printed values themselves.
    assert GWP100_CH4_FOSSIL == 29.8
    assert GWP100_CH4_NON_FOSSIL == 27.0
    assert GWP100_N2O == 273.0


def test_co2e_by_hand():
    # 1 kg CO2 + 10 g CH4 + 1 g N2O = 1 + 0.298 + 0.273 = 1.571 kg CO2e (fossil methane),
    # 1 + 0.270 + 0.273 = 1.543 kg (biomethane); weights from AR6 WG1 Table 7.15 (from memory).
    assert_allclose(co2e(1.0, 0.01, 0.001), 1.571, rtol=1e-12)
    assert_allclose(co2e(1.0, 0.01, 0.001, ch4_fossil=False), 1.543, rtol=1e-12)
    assert isinstance(co2e(1.0, 0.0, 0.0), float)


def test_co2e_broadcasts():
    co2 = np.array([[0.2, 0.3], [0.25, 0.35]])  # e.g. candidates x years [kg/km]
    ch4 = np.array([1e-4, 5e-4])
    out = co2e(co2, ch4, 0.0)
    assert out.shape == (2, 2)
    assert_allclose(out[1, 1], 0.35 + 29.8 * 5e-4, rtol=1e-12)
