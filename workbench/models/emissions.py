"""Greenhouse-gas weighting: CO2-equivalent of CO2, CH4 and N2O on 100-year GWPs.

The weights are the 100-year global warming potentials of the IPCC Sixth Assessment Report,
Working Group I, Chapter 7, Table 7.15 (Forster et al., 2021): fossil methane 29.8, non-fossil
methane 27.0, nitrous oxide 273 (from memory). Fossil methane carries the CO2 its carbon becomes
in the atmosphere; natural gas slipping from an engine or a station is fossil methane, biomethane
is not.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["GWP100_CH4_FOSSIL", "GWP100_CH4_NON_FOSSIL", "GWP100_N2O", "co2e"]

#: GWP-100 of fossil methane [kg CO2e/kg] (IPCC AR6 WG1 Table 7.15).
GWP100_CH4_FOSSIL = 29.8
#: GWP-100 of non-fossil methane [kg CO2e/kg] (IPCC AR6 WG1 Table 7.15).
GWP100_CH4_NON_FOSSIL = 27.0
#: GWP-100 of nitrous oxide [kg CO2e/kg] (IPCC AR6 WG1 Table 7.15).
GWP100_N2O = 273.0


def co2e(
    co2: ArrayLike, ch4: ArrayLike, n2o: ArrayLike, *, ch4_fossil: bool = True
) -> NDArray[np.float64] | float:
    """CO2-equivalent mass of a CO2, CH4 and N2O emission on the AR6 100-year GWPs.

    Parameters
    ----------
    co2, ch4, n2o : float or array
        Emitted masses [kg] (or [kg/m], [kg/J]: any common basis); they broadcast.
    ch4_fossil : bool, optional
        Weigh methane as fossil (29.8) or non-fossil (27.0).

    Returns
    -------
    float or ndarray
        [kg CO2e] on the same basis: ``co2 + GWP_CH4 ch4 + GWP_N2O n2o``.

    References
    ----------
    IPCC (2021), Climate Change 2021: The Physical Science Basis, WG1 contribution to AR6,
    Chapter 7, Table 7.15.

    Examples
    --------
    >>> round(co2e(1.0, 0.01, 0.001), 6)  # 1 + 29.8 * 0.01 + 273 * 0.001
    1.571
    """
    gwp_ch4 = GWP100_CH4_FOSSIL if ch4_fossil else GWP100_CH4_NON_FOSSIL
    out = (
        np.asarray(co2, dtype=float)
        + gwp_ch4 * np.asarray(ch4, dtype=float)
        + GWP100_N2O * np.asarray(n2o, dtype=float)
    )
    return float(out) if out.ndim == 0 else out
