"""Tailpipe particulate mass, CO and unburnt hydrocarbons by combustion regime and device.

Screening factors per kWh of brake work, for a warmed-up engine over an urban cycle, set from
the Euro VI heavy-duty limits and what measured engines of each kind typically emit against
them. A study turns them into per-km figures with each class's brake work per km. They are
typical values, not this fleet's engines: replace them with measured factors where known.

Euro VI WHTC limits (Regulation (EC) 595/2009 Annex I, from memory), g/kWh:
CO 4.0, THC 0.16 (compression ignition), NMHC 0.16 and CH4 0.5 (positive ignition),
NOx 0.46, PM 0.010.

Methane is not in the hydrocarbon factors here: a study adds the methane slip it computes from
the fuel (``thc = nmhc + ch4``).
"""

from __future__ import annotations

from dataclasses import dataclass

from workbench.core.constants import J_PER_KWH
from workbench.core.errors import InputError

#: Euro VI WHTC limits [g/kWh] (Regulation (EC) 595/2009 Annex I, from memory).
EURO_VI_WHTC = {"co": 4.0, "thc_ci": 0.16, "nmhc_pi": 0.16, "ch4_pi": 0.5, "nox": 0.46,
                "pm": 0.010}
#: Euro 6 light-duty limits [g/km] (Regulation (EC) 715/2007 Annex I Table 2, from memory).
EURO_6 = {"pi": {"co": 1.0, "thc": 0.10, "nmhc": 0.068, "nox": 0.060, "pm": 0.0045},
          "ci": {"co": 0.50, "hc_nox": 0.170, "nox": 0.080, "pm": 0.0045}}


@dataclass(frozen=True)
class PollutantFactors:
    """Tailpipe factors of one regime and device, per brake work.

    Attributes
    ----------
    pm, co, nmhc : float
        Particulate mass, carbon monoxide, non-methane hydrocarbons [kg/J].
    source : str
        Where the numbers come from.
    """

    pm: float
    co: float
    nmhc: float
    source: str


_G_PER_KWH = 1e-3 / J_PER_KWH  # [kg/J] per g/kWh


def _f(pm: float, co: float, nmhc: float, source: str) -> PollutantFactors:
    return PollutantFactors(pm * _G_PER_KWH, co * _G_PER_KWH, nmhc * _G_PER_KWH, source)


#: Factors by (engine regime, device) [g/kWh in, kg/J stored]. "urea-scr" on a diesel stands for
#: the Euro VI system of oxidation catalyst, particulate filter and SCR.
FACTORS: dict[tuple[str, str], PollutantFactors] = {
    ("compression-ignition", "urea-scr"): _f(
        0.002, 0.3, 0.02, "diesel with oxidation catalyst, particulate filter and SCR: PM about "
        "a fifth of the Euro VI 0.010 g/kWh limit, CO and THC a small share of theirs, as "
        "measured Euro VI engines typically show (from memory)"),
    ("compression-ignition", "none"): _f(
        0.10, 1.5, 0.40, "diesel engine-out without aftertreatment: PM 0.05-0.2, CO 1-2, "
        "HC 0.3-0.5 g/kWh (Euro III-era engines, Heywood 1988 ch. 11; from memory)"),
    ("spark-ignition", "three-way-catalyst"): _f(
        0.002, 1.0, 0.05, "stoichiometric spark ignition with a three-way catalyst: PM well "
        "below the Euro VI limit (premixed, port-injected), CO a quarter of the 4.0 g/kWh "
        "limit, NMHC a third of 0.16 (from memory)"),
    ("spark-ignition", "none"): _f(
        0.005, 30.0, 4.0, "stoichiometric spark ignition engine-out: CO about 0.5-1 % and HC a "
        "few thousand ppm C1 in the exhaust (Heywood 1988 ch. 11, from memory)"),
    ("lean-burn-gas", "none"): _f(
        0.002, 2.0, 0.3, "lean-burn gas engine-out: little CO, unburnt gas mostly methane "
        "(common practice, from memory)"),
}


def pollutant_factors(regime: str, device: str) -> PollutantFactors:
    """Factors of one regime and device; a device without its own row uses ``none``'s.

    Parameters
    ----------
    regime : str
        Engine setting (``spark-ignition``, ``compression-ignition``, ``lean-burn-gas``).
    device : str
        Aftertreatment device name.

    Returns
    -------
    PollutantFactors
    """
    key = (regime, device) if (regime, device) in FACTORS else (regime, "none")
    if key not in FACTORS:
        raise InputError("engine", f"no pollutant factors for engine setting {regime!r}")
    return FACTORS[key]


__all__ = ["EURO_6", "EURO_VI_WHTC", "FACTORS", "PollutantFactors", "pollutant_factors"]
