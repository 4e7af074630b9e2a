"""On-board storage: what each fuel costs in tank space, mass and cold weather.

Four storage models, one per :data:`workbench.core.fuels.STORAGE_KINDS` kind, each in a module
of this package (the names below are all importable from the package itself):

``"liquid"`` (:mod:`.liquids`)
    A liquid at ambient pressure (diesel, gasoline). Density is the fuel's declared density at
    15 °C corrected for temperature with the volume-correction equation of the petroleum
    measurement tables (ASTM D1250-80 / API MPMS 11.1, Table 54B "generalized products").
``"liquefied"`` (:mod:`.saturation`)
    A gas liquefied under its own vapour pressure (propane, butane, LPG): saturated liquid at
    the bubble point, from the reference equations of state in CoolProp.
``"compressed"`` (:mod:`.compressed`)
    A supercritical gas at the storage pressure (natural gas at 200 or 250 bar, hydrogen at 350
    or 700 bar): density and compressibility factor from CoolProp.
``"cryogenic"`` (:mod:`.state`, on the saturation model)
    A liquid at its bubble point for the tank pressure (LNG, liquid hydrogen).

Gas mixtures (:mod:`.fluids`) use CoolProp's multi-fluid Helmholtz model (backend ``"HEOS"``,
GERG-2008-type mixing functions). When CoolProp has no model for a pair (propylene with
butane, for example) or a flash fails, the functions fall back to an ideal solution of the pure
fluids (Raoult's law for the bubble pressure, additive volumes for densities, Amagat's law for
gases) and say so in the ``method`` they report. Compressed-gas flashes are run with the
single phase imposed: the unimposed mixture flash runs a phase-stability search that, in
CoolProp 8.0, hung for minutes on a natural gas at -20 °C and 200 bar.

:func:`stored_state` (:mod:`.state`) picks the model for a fuel. Tank systems (:mod:`.tanks`,
:class:`TankType`) add a usable-fill fraction, the mass of the empty tank and its installed
envelope per litre of water volume; :func:`tank_of_volume` and :func:`tank_for_range` turn
them into litres and kilograms for a range. The shipped tank figures are typical values,
example: replace them with the supplier's data for a study.

References
----------
.. [1] E. W. Lemmon, M. O. McLinden, W. Wagner, J. Chem. Eng. Data 54 (2009) 3141 (propane).
.. [2] D. Buecker, W. Wagner, J. Phys. Chem. Ref. Data 35 (2006) 929 (n-butane, isobutane).
.. [3] U. Setzmann, W. Wagner, J. Phys. Chem. Ref. Data 20 (1991) 1061 (methane).
.. [4] J. W. Leachman et al., J. Phys. Chem. Ref. Data 38 (2009) 721 (hydrogen).
.. [5] O. Kunz, W. Wagner, J. Chem. Eng. Data 57 (2012) 3032 (GERG-2008 mixtures).
.. [6] I. H. Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498 (CoolProp).
.. [7] ASTM D1250-80 / API MPMS Ch. 11.1 / IP 200, Table 54B (volume correction to 15 °C).
"""

from workbench.models.storage.compressed import (
    DEFAULT_COMPRESSED_PRESSURE,
    compressed_gas_density,
    compressibility_factor,
)
from workbench.models.storage.fluids import COOLPROP_FLUIDS, critical_temperature, freezing_limit
from workbench.models.storage.liquids import (
    LIQUID_TEMPERATURE_RANGE,
    liquid_density,
    thermal_expansion_coefficient,
)
from workbench.models.storage.saturation import (
    DEFAULT_FEED_PRESSURE,
    bubble_temperature,
    cold_start_temperature,
    saturated_liquid_density,
    vapour_pressure,
    vapour_pressure_table,
)
from workbench.models.storage.state import (
    DEFAULT_CRYOGENIC_PRESSURE,
    StoredState,
    state_summary,
    storage_spec,
    storage_summary,
    stored_state,
)
from workbench.models.storage.tanks import (
    DEFAULT_TANKS,
    TANK_TYPES,
    TankSystem,
    TankType,
    tank_for_range,
    tank_of_volume,
    tank_table,
    tank_type,
)

__all__ = [
    "COOLPROP_FLUIDS",
    "DEFAULT_COMPRESSED_PRESSURE",
    "DEFAULT_CRYOGENIC_PRESSURE",
    "DEFAULT_FEED_PRESSURE",
    "DEFAULT_TANKS",
    "LIQUID_TEMPERATURE_RANGE",
    "TANK_TYPES",
    "StoredState",
    "TankSystem",
    "TankType",
    "bubble_temperature",
    "cold_start_temperature",
    "compressed_gas_density",
    "compressibility_factor",
    "critical_temperature",
    "freezing_limit",
    "liquid_density",
    "saturated_liquid_density",
    "state_summary",
    "storage_spec",
    "storage_summary",
    "stored_state",
    "tank_for_range",
    "tank_of_volume",
    "tank_table",
    "tank_type",
    "thermal_expansion_coefficient",
    "vapour_pressure",
    "vapour_pressure_table",
]
