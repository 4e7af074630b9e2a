"""Liquid fuels at ambient pressure: density against temperature (ASTM D1250-80).

The fuel's declared density at 15 °C corrected for temperature with the volume-correction
equation of the petroleum measurement tables (ASTM D1250-80 / API MPMS 11.1, Table 54B
"generalized products").
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from workbench.core.constants import T_STANDARD, ZERO_CELSIUS
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel, load_fuel
from workbench.models.storage.fluids import _celsius

#: Temperatures the liquid-fuel model accepts [K]: -40 °C to +70 °C, the service range of
#: vehicle fuel tanks (typical value). Diesel grades gel well above -40 °C in summer grades:
#: check the grade's cold filter plugging point.
LIQUID_TEMPERATURE_RANGE = (233.15, 343.15)

#: ASTM D1250-80 Table 54B bands: (upper density [kg/m3], K0 [kg2/m6/K], K1 [kg/m3/K],
#: A [1/K]) with alpha15 = K0/rho^2 + K1/rho + A. Constants from memory; they join up at
#: the band edges to four digits, which tests/test_storage.py checks.
_TABLE_54B = (
    (770.5, 346.4228, 0.4388, 0.0),  # gasolines, from 653 kg/m3
    (787.5, 2680.3206, 0.0, -0.00336312),  # transition zone
    (838.5, 594.5418, 0.0, 0.0),  # jet fuels, kerosene
    (1075.0, 186.9696, 0.4862, 0.0),  # fuel oils, diesel
)
_TABLE_54B_LOWEST = 653.0



def thermal_expansion_coefficient(density_15: float, *, where: str = "density_15") -> float:
    """Thermal expansion coefficient of a petroleum liquid at 15 °C [1/K].

    Parameters
    ----------
    density_15 : float
        Density at 15 °C [kg/m3], 653 to 1075.
    where : str, optional
        Name of the input that error messages name.

    Returns
    -------
    float
        :math:`\\alpha_{15} = K_0/\\rho_{15}^2 + K_1/\\rho_{15} + A` with the constants of the
        density band (ASTM D1250-80 Table 54B, generalized products; from memory): about
        0.00085 1/K for a diesel of 835 kg/m3 and 0.0012 1/K for a gasoline of 745 kg/m3.

    Raises
    ------
    InputError
        A density outside the table's 653–1075 kg/m3.
    """
    if not _TABLE_54B_LOWEST <= density_15 <= _TABLE_54B[-1][0]:
        raise InputError(where, f"{density_15:g} kg/m3 is outside the "
                         f"{_TABLE_54B_LOWEST:g}–{_TABLE_54B[-1][0]:g} kg/m3 of the volume-"
                         "correction table; give thermal_expansion explicitly")
    k0, k1, a = next(band[1:] for band in _TABLE_54B if density_15 <= band[0])
    return k0 / density_15**2 + k1 / density_15 + a


def liquid_density(
    fuel: Fuel | str, temperature: ArrayLike, *, thermal_expansion: float | None = None
) -> float | np.ndarray:
    """Density of a liquid fuel at a temperature [kg/m3].

    Parameters
    ----------
    fuel : Fuel or str
        A liquid fuel with a declared density at 15 °C (``Fuel.liquid_density``).
    temperature : array_like
        Liquid temperature [K], within :data:`LIQUID_TEMPERATURE_RANGE`.
    thermal_expansion : float, optional
        Thermal expansion coefficient at 15 °C [1/K]; from
        :func:`thermal_expansion_coefficient` by default.

    Returns
    -------
    float or numpy.ndarray
        :math:`\\rho = \\rho_{15} \\exp(-\\alpha \\Delta T (1 + 0.8 \\alpha \\Delta T))` with
        :math:`\\Delta T = T - 288.15` (the volume-correction factor of ASTM D1250-80).
    """
    fuel = load_fuel(fuel)
    if fuel.is_gas:
        raise InputError(fuel.id, "is a gas at 15 °C; use the liquefied or compressed model")
    if fuel.liquid_density is None:
        raise InputError(f"{fuel.id}: [liquid].density_kg_per_m3", "is needed for liquid "
                         "storage; add a [liquid] table to the fuel file")
    alpha = thermal_expansion
    if alpha is None:
        alpha = thermal_expansion_coefficient(
            fuel.liquid_density, where=f"{fuel.id}: [liquid].density_kg_per_m3")
    lo, hi = LIQUID_TEMPERATURE_RANGE
    t = np.asarray(temperature, dtype=float)
    bad = t[np.isfinite(t) & ((t < lo) | (t > hi))]
    if bad.size:
        raise InputError("temperature", f"{_celsius(bad.flat[0])} is outside "
                         f"{lo - ZERO_CELSIUS:.0f}…{_celsius(hi, '.0f')}, the range the "
                         "liquid-fuel model covers (below it diesel gels)")
    dt = t - T_STANDARD
    rho = fuel.liquid_density * np.exp(-alpha * dt * (1.0 + 0.8 * alpha * dt))
    return float(rho) if rho.ndim == 0 else rho
