"""Greenhouse-gas weighting: CO2-equivalent of CO2, CH4 and N2O on 100-year GWPs.

The weights are the 100-year global warming potentials of the IPCC Sixth Assessment Report,
Working Group I, Chapter 7, Table 7.15 (Forster et al., 2021): fossil methane 29.8, non-fossil
methane 27.0, nitrous oxide 273 (from memory). Fossil methane carries the CO2 its carbon becomes
in the atmosphere; natural gas slipping from an engine or a station is fossil methane, biomethane
is not.

CO2 from biogenic carbon (bio-ethanol, HVO, biomethane) is reported apart and left out of the
tailpipe CO2e, as national inventories do: the IPCC 2006 Guidelines (Vol. 2, Ch. 3, mobile
combustion, sec. 3.2.1.1; Vol. 1, Ch. 8) report it as an information item, since the carbon's
uptake and release are counted in the land sector (from memory). Its upstream (growing,
processing, transport) stays in the well-to-tank CO2e of its pathway.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["GWP100_CH4_FOSSIL", "GWP100_CH4_NON_FOSSIL", "GWP100_N2O", "co2e", "split_co2",
           "tailpipe_co2e"]

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


def split_co2(co2: ArrayLike, biogenic_share: ArrayLike
              ) -> tuple[NDArray[np.float64] | float, NDArray[np.float64] | float]:
    """Split CO2 from a fuel's carbon into its fossil and biogenic parts.

    Parameters
    ----------
    co2 : float or array
        CO2 from all the fuel's carbon [kg] (or any common basis).
    biogenic_share : float or array
        Share of the fuel's carbon that is biogenic [-], from 0 to 1.

    Returns
    -------
    (fossil, biogenic) : float or ndarray each
        ``co2 (1 - b)`` and ``co2 b`` on the basis of ``co2``.

    Examples
    --------
    >>> split_co2(2.0, 0.25)
    (1.5, 0.5)
    """
    co2 = np.asarray(co2, dtype=float)
    b = np.asarray(biogenic_share, dtype=float)
    fossil, biogenic = co2 * (1.0 - b), co2 * b
    if fossil.ndim == 0:
        return float(fossil), float(biogenic)
    return fossil, biogenic


def tailpipe_co2e(
    co2: ArrayLike, ch4: ArrayLike, n2o: ArrayLike, *, biogenic_share: ArrayLike = 0.0
) -> NDArray[np.float64] | float:
    """Tailpipe CO2e of a fuel whose carbon is partly biogenic.

    Parameters
    ----------
    co2 : float or array
        CO2 from all the fuel's carbon that was burnt [kg] (or any common basis).
    ch4 : float or array
        Methane slipped unburnt [kg].
    n2o : float or array
        Nitrous oxide [kg].
    biogenic_share : float or array
        Share of the fuel's carbon that is biogenic [-] (``Fuel.biogenic_carbon_share``).

    Returns
    -------
    float or ndarray
        [kg CO2e]: ``(1 - b) co2 + (29.8 (1 - b) + 27.0 b) ch4 + 273 n2o``; the biogenic CO2
        ``b co2`` is left out (reported apart, :func:`split_co2`), the methane of biogenic
        carbon weighs as non-fossil.

    References
    ----------
    IPCC (2006), Guidelines for National Greenhouse Gas Inventories, Vol. 2, Ch. 3, sec.
    3.2.1.1 (biofuel CO2 as an information item, from memory); IPCC (2021) AR6 WG1 Ch. 7,
    Table 7.15 (GWP-100).

    Examples
    --------
    >>> round(tailpipe_co2e(1.0, 0.01, 0.0, biogenic_share=1.0), 6)  # 27.0 * 0.01
    0.27
    """
    b = np.asarray(biogenic_share, dtype=float)
    fossil_co2, _ = split_co2(co2, b)
    fossil_ch4, biogenic_ch4 = split_co2(ch4, b)
    return co2e(fossil_co2, fossil_ch4, n2o) + co2e(0.0, biogenic_ch4, 0.0, ch4_fossil=False)
