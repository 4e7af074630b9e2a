"""Engine-out NOx of an option on a duty: which number applies, how it scales, its unit.

The choice, in order:

1. the option's own engine-out NOx, when given (measured or certified), used as it is;
2. on the baseline's engine setting, the baseline's engine-out NOx (given, or the typical
   default of that setting) scaled by the candidate fuel's NOx propensity against the baseline
   fuel (:func:`workbench.models.nox.duty_propensity`) and by its fuel energy against the
   baseline's (per km for g/km, per kWh of brake work for g/kWh);
3. on another engine setting, that setting's typical default, scaled by the propensity against
   the default's reference fuel (:data:`DEFAULT_REFERENCE_FUEL`).

The result is a mass per distance as NO2 [kg/m], whatever the unit it was given in.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from workbench.core.constants import J_PER_KWH, M_NO2
from workbench.core.fuels import Fuel
from workbench.models.combustion import exhaust, fuel_sheet
from workbench.models.engine import DutyEnergy
from workbench.models.nox import (
    DEFAULT_ENGINE_OUT,
    EngineOutNOx,
    duty_propensity,
    engine_out_nox,
    engine_preset,
)

__all__ = ["DEFAULT_REFERENCE_FUEL", "engine_out_per_m", "nox_per_m"]

#: Reference fuel of each engine setting's typical engine-out NOx default
#: (:data:`workbench.models.nox.DEFAULT_ENGINE_OUT`).
DEFAULT_REFERENCE_FUEL = {"spark-ignition": "gasoline", "lean-burn-gas": "natural-gas",
                          "compression-ignition": "diesel"}

def nox_per_m(value: float, unit: str, *, fuel: Fuel, lambda_overall: float,
              energy: DutyEnergy, fuel_energy_per_m: float) -> float:
    """Engine-out NOx in its own unit as NO2 mass per distance.

    Parameters
    ----------
    value : float
        Engine-out NOx in ``unit``.
    unit : {"g/km", "g/kWh", "ppm"}
        ``g/kWh`` is per kWh of brake work on the duty; ``ppm`` is NO by volume in the wet
        exhaust at ``lambda_overall``.
    fuel : Fuel
        The fuel burnt.
    lambda_overall : float
        Air–fuel equivalence ratio of the exhaust [-].
    energy : DutyEnergy
        Energy flows of the duty (brake work and distance for ``g/kWh``).
    fuel_energy_per_m : float
        Fuel energy per distance, LHV [J/m].

    Returns
    -------
    float
        [kg/m] as NO2.
    """
    if unit == "g/km":
        return value * 1e-6
    if unit == "g/kWh":
        return value * 1e-3 * energy.engine_energy / energy.distance / J_PER_KWH
    ex = exhaust(fuel, lambda_overall)  # ppm of NO in the wet exhaust, as NO2 mass
    fuel_kg_per_m = fuel_energy_per_m / fuel_sheet(fuel).lhv_mass
    return value * 1e-6 * ex.moles_per_kg_fuel * M_NO2 * fuel_kg_per_m


def engine_out_per_m(fuel: Fuel, engine: str, *, given: EngineOutNOx | None,
                     lambda_overall: float, energy: DutyEnergy, fuel_energy_per_m: float,
                     baseline_fuel: Fuel, baseline_engine: str,
                     baseline_given: EngineOutNOx | None, baseline_energy: DutyEnergy,
                     nox_speeds_rpm: Sequence[float] | np.ndarray,
                     nox_weights: Sequence[float] | np.ndarray,
                     reference_fuel: Fuel) -> tuple[float, str]:
    """Engine-out NOx of one option on one duty, and where the number comes from.

    Parameters
    ----------
    fuel : Fuel
        The option's fuel.
    engine : str
        The option's engine setting (a key of ``ENGINE_PRESETS``).
    given : EngineOutNOx or None
        The option's own engine-out NOx, if the study gives one.
    lambda_overall : float
        Air–fuel equivalence ratio of the option's exhaust [-] (for ppm).
    energy : DutyEnergy
        The option's energy flows on the duty.
    fuel_energy_per_m : float
        The option's fuel energy per distance, LHV [J/m].
    baseline_fuel : Fuel
        The baseline's fuel on this duty.
    baseline_engine : str
        The baseline's engine setting.
    baseline_given : EngineOutNOx or None
        The baseline's engine-out NOx, if the study gives one.
    baseline_energy : DutyEnergy
        The baseline's energy flows on the same duty.
    nox_speeds_rpm : array_like
        Engine-speed bin centres the propensity is weighted over [rev/min].
    nox_weights : array_like
        Fuel energy in each bin [J].
    reference_fuel : Fuel
        The fuel the engine setting's typical engine-out NOx holds for
        (:data:`DEFAULT_REFERENCE_FUEL`), loaded by the caller.

    Returns
    -------
    tuple of (float, str)
        Engine-out NOx [kg/m] as NO2, and its source in words.
    """
    if given is not None:
        spec, reference, ratio = given, None, 1.0
    elif baseline_engine == engine:
        spec = baseline_given or DEFAULT_ENGINE_OUT[baseline_engine]
        reference = baseline_fuel
        ratio = fuel_energy_per_m / (baseline_energy.fuel_energy / baseline_energy.distance)
        if spec.unit == "g/kWh":  # per kWh of brake work: ratio of fuel energy per kWh
            ratio = (energy.fuel_energy / energy.engine_energy) / (
                baseline_energy.fuel_energy / baseline_energy.engine_energy)
    else:
        spec = DEFAULT_ENGINE_OUT[engine]
        reference = reference_fuel
        ratio = 1.0
    value = spec.value
    source = spec.source + (" (typical default)" if spec.is_default else "")
    if reference is not None and reference.key != fuel.key:
        prop = duty_propensity(fuel, reference, engine_preset(engine),
                               engine_speed_rpm=nox_speeds_rpm, weight=nox_weights)
        value = float(engine_out_nox(spec, prop, energy_ratio=ratio))
        source += f", scaled by the NOx propensity of {fuel.id} against {reference.id}"
    return nox_per_m(value, spec.unit, fuel=fuel, lambda_overall=lambda_overall, energy=energy,
                     fuel_energy_per_m=fuel_energy_per_m), source
