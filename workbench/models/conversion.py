"""Conversion kinds: what converting an engine to another fuel does to its map and its defaults.

A conversion kind names how an engine burns a new fuel, and from that the engine map (a map
transform of the original engine's map), the combustion regime whose NOx chemistry and
defaults apply, the aftertreatment a converted vehicle normally carries, the exhaust lambda and
the methane slip:

``none``
    The engine burns the fuel it was made for.
``bi-fuel-si``
    A gasoline (spark-ignition) engine that also burns LPG or natural gas through a gas
    injection kit: the gasoline map with a small efficiency offset and a power derate from the
    air the gaseous fuel displaces in the intake (:func:`air_displacement_derate`).
``dedicated-si``
    A compression-ignition (diesel) engine rebuilt for spark ignition on gas: lower compression
    ratio, throttled load control, stoichiometric with a three-way catalyst; the derived map of
    :func:`dedicated_si_map`.
``dual-fuel-ci``
    A diesel engine that still ignites by compression on a diesel pilot while gas supplies a
    share of the energy that grows with load (:class:`Substitution`), with methane slip
    from the lean premixed gas (:func:`dual_fuel_map`).

Everything here is a screening model from a published parametric engine model, not an engine
prediction: measured maps of the converted engine, given in the study, replace it.

References
----------
L. Guzzella, A. Sciarretta, *Vehicle Propulsion Systems*, 3rd ed., Springer 2013, ch. 3
(engine efficiency as the Willans approximation ``p_me = e p_mf - p_me0``; from memory).
J. B. Heywood, *Internal Combustion Engine Fundamentals*, McGraw-Hill 1988, ch. 5 (ideal
Otto-cycle efficiency ``1 - r_c**(1 - gamma)``; the ideal throttled cycle's pumping mean
effective pressure ``p_e - p_i``) and ch. 6 (volumetric efficiency, fuel vapour displacing
air); from memory.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Literal

import numpy as np

from workbench.core.constants import ATMOSPHERE, GAS_CONSTANT, RPM
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel
from workbench.models.combustion import M_CH4, M_CO2, FuelSheet
from workbench.models.engine import DutyRun, EngineMap, FuelPerDistance

Regime = Literal["spark-ignition", "compression-ignition", "lean-burn-gas"]
KindName = Literal["none", "bi-fuel-si", "dedicated-si", "dual-fuel-ci"]

#: Ambient pressure of the naturally aspirated charge [Pa]: the standard atmosphere.
P_AMBIENT = ATMOSPHERE
#: Specific gas constant of dry air [J/(kg K)]: R over 28.9647 kg/kmol (dry air, ISO 2533).
R_AIR = GAS_CONSTANT / 28.9647

_SOURCE_GS = ("Willans approximation, Guzzella & Sciarretta, Vehicle Propulsion Systems, 3rd "
              "ed. 2013, ch. 3, from memory")
_SOURCE_HEYWOOD = ("Heywood, Internal Combustion Engine Fundamentals 1988, ch. 5 (Otto cycle, "
                   "throttled pumping work) and ch. 6 (air displaced by fuel vapour), from "
                   "memory")
_SOURCE_SLIP_SI = ("stoichiometric gas engines with a three-way catalyst: Euro 6 CNG cars and "
                   "Euro VI CNG engines meet the THC 100 mg/km and CH4 0.5 g/kWh limits with "
                   "margin (from memory)")


@dataclass(frozen=True)
class ConversionKind:
    """How a conversion burns the new fuel, and the defaults it implies.

    Attributes
    ----------
    name : str
        Kind id (``none``, ``bi-fuel-si``, ``dedicated-si``, ``dual-fuel-ci``).
    base_regime : str or None
        Combustion regime of the map it converts; None for ``none`` (any map).
    nox_engine : str or None
        Engine setting (``workbench.models.nox.ENGINE_PRESETS``) of the converted engine;
        None: the fuel's own regime (:func:`fuel_regime`).
    aftertreatment : str or None
        Default device (``workbench.models.aftertreatment.DEVICE_PRESETS``); None: the
        regime's default (:data:`REGIME_DEVICE`).
    lambda_overall : float or None
        Exhaust air-fuel equivalence (lambda) [-]; None: the regime's default.
    methane_slip : float
        Share of the fuel's methane leaving unburnt [-] (dual fuel: of the gas).
    efficiency_offset : float
        Added to the brake efficiency of the (derived) map [-].
    derate : float or None
        Share of full-load torque lost [-]; None: from the air the fuel displaces.
    summary : str
        One line for tables.
    source : str
        Where the kind's map comes from.
    sources : dict
        Where each default comes from, by ``derate``, ``efficiency_offset``, ``methane_slip``.
    """

    name: str
    base_regime: str | None
    nox_engine: str | None
    aftertreatment: str | None
    lambda_overall: float | None
    methane_slip: float
    efficiency_offset: float
    derate: float | None
    summary: str
    source: str
    sources: dict[str, str] = field(default_factory=dict)


#: Default device of each combustion regime: a stoichiometric spark-ignition engine is sold with
#: a three-way catalyst, a diesel since Euro 6/VI with SCR (and a particulate filter), a lean-burn
#: gas engine often with an oxidation catalyst only (no NOx reduction); common practice, no
#: source.
REGIME_DEVICE = {"spark-ignition": "three-way-catalyst", "compression-ignition": "urea-scr",
                 "lean-burn-gas": "none"}
#: Default exhaust lambda of each regime [-]: stoichiometric SI 1.0; diesel about 1.6 averaged
#: over urban load; lean-burn gas about 1.5 (Heywood 1988 ch. 1 and 11, from memory).
REGIME_LAMBDA = {"spark-ignition": 1.0, "compression-ignition": 1.6, "lean-burn-gas": 1.5}

KINDS: dict[str, ConversionKind] = {
    "none": ConversionKind(
        "none", None, None, None, None, 0.0, 0.0, 0.0,
        "the engine burns the fuel it was made for", "no conversion"),
    "bi-fuel-si": ConversionKind(
        "bi-fuel-si", "spark-ignition", "spark-ignition", "three-way-catalyst", 1.0,
        0.0015, -0.005, None,
        "gasoline engine with a gas injection kit: gasoline map, -0.5 point, derate from the "
        "air the gas displaces",
        "the gasoline engine's own map", {
            "efficiency_offset": "aftermarket port gas injection on a gasoline engine keeps its "
            "compression ratio and spark map, measured within about 1 point of gasoline "
            "(common practice, from memory)",
            "derate": "air displaced by the gas in the intake: " + _SOURCE_HEYWOOD,
            "methane_slip": _SOURCE_SLIP_SI}),
    "dedicated-si": ConversionKind(
        "dedicated-si", "compression-ignition", "spark-ignition", "three-way-catalyst", 1.0,
        0.0015, 0.0, 0.15,
        "diesel engine rebuilt for stoichiometric spark ignition: compression ratio 17 -> 11.5, "
        "stoichiometric charge, throttled, 15 % derate",
        f"derived map: {_SOURCE_GS}; {_SOURCE_HEYWOOD}", {
            "derate": "gas engines built on a diesel block are rated about 10-20 % below the "
            "diesel (knock-limited, hotter stoichiometric exhaust; common practice, from "
            "memory)",
            "methane_slip": _SOURCE_SLIP_SI}),
    "dual-fuel-ci": ConversionKind(
        "dual-fuel-ci", "compression-ignition", "compression-ignition", "urea-scr", 1.6,
        0.03, 0.0, 0.0,
        "diesel pilot plus gas: gas share 0 below 20 % load rising to 60 % at 60 % load, 3 % of "
        "the gas slips unburnt",
        "retrofit dual-fuel diesels substitute about 40-70 % of the energy at high load and "
        "little at idle (common practice, from memory)", {
            "methane_slip": "retrofit dual-fuel diesels measured about 1-5 % of the gas "
            "unburnt (common practice, from memory)"}),
}

#: Methane slip of the regimes without a conversion [-], as share of the fuel's methane:
#: stoichiometric SI with a three-way catalyst 0.15 % (``_SOURCE_SLIP_SI``); lean-burn gas
#: about 1 % (no three-way catalyst; common practice, from memory).
REGIME_SLIP = {"spark-ignition": 0.0015, "compression-ignition": 0.0, "lean-burn-gas": 0.01}


def conversion_kind(name: str, *, where: str = "conversion") -> ConversionKind:
    """The kind of that name.

    Raises
    ------
    InputError
        Unknown name; the message lists the kinds.
    """
    if name not in KINDS:
        raise InputError(where, f"unknown conversion kind {name!r}; use one of "
                         f"{', '.join(KINDS)}")
    return KINDS[name]


def fuel_regime(fuel: Fuel) -> Regime:
    """Combustion regime an engine made for this fuel uses: gases and gasoline spark-ignition,
    liquid fuels otherwise compression-ignition (common practice, no source)."""
    if fuel.is_gas or "GASOLINE" in fuel.mole_fractions:
        return "spark-ignition"
    return "compression-ignition"


#: Combustion family of each engine setting: a lean-burn gas engine is spark-ignited.
_FAMILY = {"lean-burn-gas": "spark-ignition"}


def infer_kind(fuel: Fuel, map_regime: str, original: Fuel | None = None) -> str:
    """The conversion a fuel needs on an engine of ``map_regime`` when none is named.

    Parameters
    ----------
    fuel : Fuel
        The new fuel.
    map_regime : str
        Engine setting the map was made for.
    original : Fuel, optional
        The fuel the engine burns today.

    Returns
    -------
    str
        A spark-ignition fuel on a compression-ignition map: ``dedicated-si``; a gas on a
        gasoline engine's map: ``bi-fuel-si``; otherwise ``none``: the engine's own kind of
        fuel (a gas on a gas engine, gasoline on a gasoline engine), or a diesel-like fuel on a
        spark-ignition map, which no kind converts (see :func:`regime_mismatch`).
    """
    regime = fuel_regime(fuel)
    if map_regime == "compression-ignition" and regime == "spark-ignition":
        return "dedicated-si"
    gas_engine = map_regime == "lean-burn-gas" or (original is not None and original.is_gas)
    if map_regime == "spark-ignition" and fuel.is_gas and not gas_engine:
        return "bi-fuel-si"
    return "none"


def regime_mismatch(fuel: Fuel, kind: ConversionKind, map_regime: str) -> str | None:
    """One line when a fuel runs on a map made for another combustion regime, else None."""
    if kind.base_regime is not None and kind.base_regime != map_regime:
        return (f"conversion {kind.name} converts a {kind.base_regime} engine but the map is "
                f"{map_regime}: the derived map is not meaningful; give the converted "
                "engine's engine_map")
    if kind.name == "none" and fuel_regime(fuel) != _FAMILY.get(map_regime, map_regime):
        return (f"{fuel.id} ({fuel_regime(fuel)}) runs unchanged on a map made for "
                f"{map_regime}: name a conversion kind or give the converted engine's map")
    return None


def air_displacement_derate(sheet: FuelSheet, reference: FuelSheet) -> float:
    """Full-load power lost by inducting a gaseous fuel with the air instead of a liquid.

    Parameters
    ----------
    sheet : FuelSheet
        The gaseous fuel, inducted as vapour at stoichiometric.
    reference : FuelSheet
        The engine's original liquid fuel (injected as liquid; its vapour neglected).

    Returns
    -------
    float
        Share of full-load torque lost [-] (negative if the gas carries more energy per kg of
        air; clipped at 0).

    Notes
    -----
    At the same volumetric efficiency the air inducted falls by the molar share of fuel in the
    stoichiometric mixture, ``x_f = 1 / (1 + AFR_mole)``, and the energy per kg of air is
    ``LHV / AFR_mass``; so ``derate = 1 - (1 - x_f) (LHV/AFR)_fuel / (LHV/AFR)_ref``
    (Heywood 1988 ch. 6, from memory). Methane: about 11 %, propane about 4 %.
    """
    x_f = 1.0 / (1.0 + sheet.stoich_afr_mole) if sheet.is_gas else 0.0
    per_air = sheet.lhv_mass / sheet.stoich_afr_mass
    ref_air = reference.lhv_mass / reference.stoich_afr_mass
    return max(0.0, 1.0 - (1.0 - x_f) * per_air / ref_air)


def kind_derate(kind: ConversionKind, sheet: FuelSheet, reference: FuelSheet | None) -> float:
    """The full-load derate a kind implies for a fuel [-]: its own, or for ``bi-fuel-si`` the
    air the gas displaces against the original fuel (:func:`air_displacement_derate`; 0 without
    a reference)."""
    if kind.derate is not None:
        return kind.derate
    return air_displacement_derate(sheet, reference) if reference is not None else 0.0


def otto_efficiency(compression_ratio: float, gamma: float = 1.3) -> float:
    """Ideal Otto-cycle efficiency ``1 - r_c**(1 - gamma)`` [-] (Heywood 1988 ch. 5)."""
    return 1.0 - compression_ratio ** (1.0 - gamma)


@dataclass(frozen=True)
class WillansFit:
    """The Willans line of a map at each speed of its axis.

    Attributes
    ----------
    displacement : float
        Swept volume used for mean effective pressures [m3].
    slope : numpy.ndarray
        ``e``: brake mep per fuel mep at each speed [-].
    loss : numpy.ndarray
        ``p_me0``: friction and pumping mean effective pressure at each speed [Pa].
    """

    displacement: float
    slope: np.ndarray
    loss: np.ndarray


#: Peak brake mean effective pressure of a turbocharged direct-injection diesel [Pa], used to
#: infer the displacement from the peak full-load torque when none is given: 18-22 bar is typical
#: of current light and heavy-duty diesels (common practice, from memory).
DIESEL_PEAK_BMEP = 19.0e5


def displacement_from_torque(engine_map: EngineMap, peak_bmep: float = DIESEL_PEAK_BMEP
                             ) -> float:
    """Swept volume of a four-stroke engine from its peak torque: ``4 pi T_max / bmep`` [m3]."""
    return 4.0 * math.pi * float(engine_map.full_load_torque.max()) / peak_bmep


def willans_fit(engine_map: EngineMap, displacement: float) -> WillansFit:
    """Fit ``p_me = e p_mf - p_me0`` to each speed column of a map.

    Parameters
    ----------
    engine_map : EngineMap
        The map.
    displacement : float
        Swept volume [m3].

    Returns
    -------
    WillansFit

    Notes
    -----
    Least squares over the torque rows at or above 30 % of the column's full-load torque, where
    the Willans line is straight (Guzzella & Sciarretta 2013 ch. 3, from memory); at lower
    load the map itself is used through the fit only for the loss term.
    """
    p_b = 4.0 * math.pi * engine_map.torque / displacement
    slope = np.empty(engine_map.speed.size)
    loss = np.empty(engine_map.speed.size)
    for j in range(engine_map.speed.size):
        keep = engine_map.torque >= 0.3 * engine_map.full_load_torque[j]
        if keep.sum() < 2:
            keep = np.ones_like(keep)
        p_f = p_b[keep] / engine_map.efficiency[keep, j]
        e, c = np.polyfit(p_f, p_b[keep], 1)
        slope[j], loss[j] = e, max(-c, 0.0)
    return WillansFit(displacement, slope, loss)


@dataclass(frozen=True)
class DerivedMap:
    """A converted engine's map and the numbers it was derived with.

    Attributes
    ----------
    engine_map : EngineMap
        The converted engine.
    parameters : dict
        Name -> (value, unit, source) of every number the derivation used.
    """

    engine_map: EngineMap
    parameters: dict[str, tuple[float, str, str]]


def dedicated_si_map(
    diesel: EngineMap,
    sheet: FuelSheet,
    *,
    compression_ratio_ci: float = 17.0,
    compression_ratio_si: float = 11.5,
    gamma_ci: float = 1.30,
    gamma_si: float = 1.27,
    displacement: float | None = None,
    volumetric_efficiency: float = 0.9,
    t_intake: float = 300.0,
    derate: float = 0.15,
    efficiency_offset: float = 0.0,
) -> DerivedMap:
    """The map of a diesel engine converted to stoichiometric spark ignition on a gas.

    Parameters
    ----------
    diesel : EngineMap
        The diesel engine's map.
    sheet : FuelSheet
        The gas it burns (sets the charge energy at wide-open throttle).
    compression_ratio_ci, compression_ratio_si : float
        Compression ratio before and after the rebuild [-] (17 and 11.5 typical; common
        practice, from memory).
    gamma_ci, gamma_si : float
        Ratio of specific heats of the ideal cycles [-]: a lean diesel charge about 1.30, a
        stoichiometric fuel-air charge about 1.27 (it falls as the mixture gets richer and
        hotter; Heywood 1988 ch. 4 and 5, fuel-air cycles, from memory).
    displacement : float, optional
        Swept volume [m3]; default from the peak torque (:func:`displacement_from_torque`).
    volumetric_efficiency : float
        Of the naturally aspirated charge at wide-open throttle [-].
    t_intake : float
        Intake temperature [K].
    derate : float
        Share of full-load torque lost [-].
    efficiency_offset : float
        Added to every cell afterwards [-].

    Returns
    -------
    DerivedMap

    Notes
    -----
    With the diesel's Willans line at each speed, ``p_me = e p_mf - p_me0``
    (:func:`willans_fit`), the converted engine

    * has the slope scaled by the Otto efficiency ratio
      ``k = eta_otto(r_si, gamma_si) / eta_otto(r_ci, gamma_ci)``: ``e_si = k e`` (lower
      compression ratio, stoichiometric charge);
    * keeps the friction and pumping ``p_me0`` of the block;
    * controls load by throttling below the wide-open-throttle gross indicated mep
      ``P = e_si eta_v rho_air (1 - x_f) LHV / AFR`` (``x_f`` the molar share of the gas in
      the stoichiometric mixture, ``rho_air`` at ambient pressure and ``t_intake``). The ideal
      throttled cycle adds the pumping mep ``p_amb - p_i`` (Heywood 1988 ch. 5), with intake
      pressure ``p_i = p_amb p_i_mep / P`` proportional to the charge; solving
      ``p_i_mep = p_me + p_me0 + p_amb (1 - p_i_mep / P)`` gives
      ``p_i_mep = (p_me + p_me0 + p_amb) / (1 + p_amb / P)``. Above ``P`` the turbocharger
      boosts and there is no throttling loss.

    The fuel mep is ``p_i_mep / e_si`` and the brake efficiency ``p_me / p_mf``. Idle fuel
    power scales by the same rule at zero brake load; full-load torque by ``1 - derate``.
    """
    v_d = displacement if displacement is not None else displacement_from_torque(diesel)
    fit = willans_fit(diesel, v_d)
    k = otto_efficiency(compression_ratio_si, gamma_si) / otto_efficiency(compression_ratio_ci,
                                                                          gamma_ci)
    e_si = fit.slope * k
    rho = P_AMBIENT / (R_AIR * t_intake)
    x_f = 1.0 / (1.0 + sheet.stoich_afr_mole) if sheet.is_gas else 0.0
    p_wot = e_si * volumetric_efficiency * rho * (1.0 - x_f) * sheet.lhv_mass \
        / sheet.stoich_afr_mass

    def indicated(p_me: np.ndarray) -> np.ndarray:
        q = p_me + fit.loss
        throttled = (q + P_AMBIENT) / (1.0 + P_AMBIENT / p_wot)
        return np.where(q < p_wot, throttled, q)

    p_b = 4.0 * math.pi * diesel.torque[:, None] / v_d
    eff = p_b * e_si / indicated(p_b) + efficiency_offset
    # idle: the same rule at zero load, at idle speed
    j = int(np.argmin(abs(diesel.speed - diesel.idle_speed)))
    idle_si = indicated(np.zeros_like(fit.loss))[j] / e_si[j]
    idle_ci = fit.loss[j] / fit.slope[j]
    idle_ratio = idle_si / idle_ci if idle_ci > 0 else 1.0 / k
    if not np.all((eff > 0.0) & (eff < 1.0)):
        raise InputError("efficiency_offset", "pushes the converted map out of (0, 1)")
    if not (0.0 <= derate < 0.9):
        raise InputError("derate", "must be a share in [0, 0.9)")
    emap = EngineMap(name=f"{diesel.name} as dedicated-si", speed=diesel.speed,
                     torque=diesel.torque, efficiency=eff,
                     full_load_torque=diesel.full_load_torque * (1.0 - derate),
                     idle_speed=diesel.idle_speed,
                     idle_fuel_power=diesel.idle_fuel_power * idle_ratio)
    src = "dedicated-si default (models/conversion.py)"
    params = {
        "compression ratio, diesel": (compression_ratio_ci, "-", src),
        "compression ratio, converted": (compression_ratio_si, "-", src),
        "Otto efficiency ratio": (k, "-", f"gamma {gamma_si:g} against {gamma_ci:g}; "
                                  + _SOURCE_HEYWOOD),
        "displacement": (v_d * 1e3, "L", "given" if displacement is not None else
                         f"from peak torque at {DIESEL_PEAK_BMEP / 1e5:g} bar peak bmep "
                         "(common practice, from memory)"),
        "wide-open-throttle indicated mep": (float(np.mean(p_wot)) / 1e5, "bar",
                                             _SOURCE_HEYWOOD),
        "peak brake efficiency, diesel": (float(diesel.efficiency.max()), "-", "class map"),
        "peak brake efficiency, converted": (float(eff.max()), "-", _SOURCE_GS),
    }
    return DerivedMap(emap, params)


#: The dual-fuel substitution curve (:class:`Substitution`): gas share of the fuel energy at
#: and above ``GAS_LOAD_HIGH`` [-], and the loads (torque over full-load torque) where
#: substitution starts and where it reaches that share [-]; ``KINDS["dual-fuel-ci"].source``.
GAS_SHARE_MAX, GAS_LOAD_LOW, GAS_LOAD_HIGH = 0.6, 0.2, 0.6


@dataclass(frozen=True)
class Substitution:
    """The share of a dual-fuel diesel's fuel energy that comes from gas, against load.

    Attributes
    ----------
    share_max : float
        Gas share at and above ``load_high`` [-], in [0, 1).
    load_low, load_high : float
        Loads (torque over full-load torque) at which substitution starts and reaches
        ``share_max`` [-], ``0 <= load_low < load_high <= 1``.
    """

    share_max: float = GAS_SHARE_MAX
    load_low: float = GAS_LOAD_LOW
    load_high: float = GAS_LOAD_HIGH

    def __post_init__(self) -> None:
        if not 0.0 <= self.share_max < 1.0:
            raise InputError("share_max", f"the gas share at high load is {self.share_max:.0%}; "
                             "give 0 or more and less than 100 %: the pilot always burns "
                             "some diesel")
        if not 0.0 <= self.load_low < self.load_high <= 1.0:
            raise InputError("load_low", f"loads {self.load_low:.0%} then {self.load_high:.0%} "
                             "must rise: 0 <= load_low < load_high <= 100 %")

    def share(self, load: np.ndarray) -> np.ndarray:
        """Gas share of the fuel energy at a load [-].

        Parameters
        ----------
        load : array_like
            Torque over full-load torque at that speed [-].

        Returns
        -------
        numpy.ndarray
            0 below ``load_low``, linear up to ``share_max`` at ``load_high``, held above: at
            low load the premixed gas charge is too lean to burn well, so controllers run on
            diesel (common practice, from memory).
        """
        x = (np.asarray(load, dtype=float) - self.load_low) / (self.load_high - self.load_low)
        return self.share_max * np.clip(x, 0.0, 1.0)

    def describe(self) -> str:
        """The curve in words, in per cent."""
        return (f"0 below {self.load_low * 100:g} % load, rising linearly to "
                f"{self.share_max * 100:g} % at {self.load_high * 100:g} % load and above")


#: The kind's own curve.
DEFAULT_SUBSTITUTION = Substitution()


def dual_fuel_map(diesel: EngineMap, *, methane_slip: float = 0.03,
                  curve: Substitution = DEFAULT_SUBSTITUTION) -> DerivedMap:
    """The map of a dual-fuel diesel: the diesel's, less the energy of the gas that slips.

    Parameters
    ----------
    diesel : EngineMap
        The diesel engine's map.
    methane_slip : float
        Share of the gas leaving unburnt [-].
    curve : Substitution
        Gas share of the fuel energy against load.

    Returns
    -------
    DerivedMap
        Efficiency ``eta_d (1 - sigma(load) slip)``: the burnt fuel converts as in the diesel
        (ignition and combustion phasing held by the pilot), the slipped gas is lost.
    """
    load = diesel.torque[:, None] / diesel.full_load_torque[None, :]
    sigma = curve.share(load)
    eff = diesel.efficiency * (1.0 - sigma * methane_slip)
    emap = EngineMap(name=f"{diesel.name} as dual-fuel-ci", speed=diesel.speed,
                     torque=diesel.torque, efficiency=eff,
                     full_load_torque=diesel.full_load_torque, idle_speed=diesel.idle_speed,
                     idle_fuel_power=diesel.idle_fuel_power)
    kind = KINDS["dual-fuel-ci"]
    return DerivedMap(emap, {"gas share at high load": (curve.share_max, "-", kind.source),
                             "methane slip of the gas": (methane_slip, "-",
                                                         kind.sources["methane_slip"])})


def duty_gas_share(points_speed: np.ndarray, points_torque: np.ndarray, fuel_energy: np.ndarray,
                   engine_map: EngineMap, *, curve: Substitution = DEFAULT_SUBSTITUTION
                   ) -> float:
    """Fuel-energy-weighted gas share of a dual-fuel engine over a duty [-].

    Parameters
    ----------
    points_speed : array_like
        Engine speed of each operating point [rad/s].
    points_torque : array_like
        Brake torque [N m].
    fuel_energy : array_like
        Fuel energy at each point [J].
    engine_map : EngineMap
        The map (its full-load curve sets the load).
    curve : Substitution
        Gas share of the fuel energy against load.

    Returns
    -------
    float
        Sum of gas share times fuel energy over the sum of fuel energy [-].
    """
    load = np.asarray(points_torque, float) / engine_map.max_torque(np.asarray(points_speed,
                                                                               float))
    w = np.asarray(fuel_energy, dtype=float)
    return float(np.sum(curve.share(load) * w) / np.sum(w))


def histogram_gas_share(duty: DutyRun, engine_map: EngineMap, *,
                        curve: Substitution = DEFAULT_SUBSTITUTION) -> float:
    """Gas share of a dual-fuel engine's fuel energy over a duty, from its operating points.

    Parameters
    ----------
    duty : DutyRun
        The duty run on the dual-fuel map (its speed x torque histogram, ``DutyRun.points``).
    engine_map : EngineMap
        That map: its full-load curve sets each cell's load, its fuel power the weight.
    curve : Substitution
        Gas share of the fuel energy against load.

    Returns
    -------
    float
        ``sum_i sigma(load_i) F_i / sum_i F_i`` over the histogram's cells, with ``F_i`` the
        fuel energy of cell ``i`` (the map's fuel power at its centre times the time in it,
        idling included) [-] (:func:`duty_gas_share`).
    """
    pts = duty.points
    speed = pts["engine_speed_rpm"].to_numpy(dtype=float) * RPM
    torque = pts["torque_nm"].to_numpy(dtype=float)
    fuel = engine_map.fuel_power(speed, torque).fuel_power * pts["seconds"].to_numpy(dtype=float)
    return duty_gas_share(speed, torque, fuel, engine_map, curve=curve)


def slipped(per_m: FuelPerDistance, fuel: Fuel, methane_slip: float
            ) -> tuple[FuelPerDistance, float]:
    """A fuel's use per metre with a share of its methane leaving unburnt.

    Parameters
    ----------
    per_m : FuelPerDistance
        The fuel's use with all its carbon burnt to CO2.
    fuel : Fuel
        The fuel (its methane mole fraction).
    methane_slip : float
        Share of the fuel's methane leaving unburnt [-].

    Returns
    -------
    (FuelPerDistance, float)
        The use with the CO2 of the slipped methane's carbon taken off (it leaves as CH4:
        ``CO2 = m_C M_CO2/M_C - m_CH4 M_CO2/M_CH4``, carbon balance; the methane's GWP-100
        counts its later oxidation), and the slipped methane [kg/m].
    """
    x = fuel.mole_fractions.get("CH4", 0.0)
    ch4 = methane_slip * x * M_CH4 / fuel.molar_mass() * per_m.fuel_mass_per_m if x else 0.0
    if not ch4:
        return per_m, 0.0
    return replace(per_m, co2_ttw_per_m=per_m.co2_ttw_per_m - ch4 * M_CO2 / M_CH4), ch4


@dataclass(frozen=True)
class ConvertedEngine:
    """The map a fuel runs on after a conversion and what was assumed to make it.

    Attributes
    ----------
    engine_map : EngineMap
    derate, efficiency_offset : float
        The values applied [-].
    parameters : dict
        Name -> (value, unit, source) of each number the conversion used.
    """

    engine_map: EngineMap
    derate: float
    efficiency_offset: float
    parameters: dict[str, tuple[float, str, str]]


def convert(engine_map: EngineMap, kind: ConversionKind, sheet: FuelSheet,
            reference: FuelSheet | None, *, derate: float | None = None,
            efficiency_offset: float | None = None, methane_slip: float | None = None,
            substitution: Substitution = DEFAULT_SUBSTITUTION) -> ConvertedEngine:
    """The map a fuel runs on after a conversion of this kind.

    Parameters
    ----------
    engine_map : EngineMap
        The original engine's map.
    kind : ConversionKind
        The conversion.
    sheet : FuelSheet
        The new fuel's sheet.
    reference : FuelSheet or None
        The original fuel's sheet (for the bi-fuel derate); None: gasoline-like air energy.
    derate, efficiency_offset : float, optional
        Given values; replace the kind's own [-].
    methane_slip : float, optional
        Given slip (dual fuel); replaces the kind's own [-].
    substitution : Substitution, optional
        Gas share against load (dual fuel).

    Returns
    -------
    ConvertedEngine
    """
    offset = kind.efficiency_offset if efficiency_offset is None else efficiency_offset
    if kind.name == "dedicated-si":
        d = kind.derate if derate is None else derate
        out = dedicated_si_map(engine_map, sheet, derate=float(d), efficiency_offset=offset)
        return ConvertedEngine(out.engine_map, float(d), offset, out.parameters)
    if kind.name == "dual-fuel-ci":
        slip = kind.methane_slip if methane_slip is None else methane_slip
        out = dual_fuel_map(engine_map, methane_slip=slip, curve=substitution)
        d = 0.0 if derate is None else derate
        emap = out.engine_map.adjusted(derate=d, efficiency_offset=offset)
        return ConvertedEngine(emap, d, offset, out.parameters)
    d = kind_derate(kind, sheet, reference) if derate is None else derate
    if (d, offset) == (0.0, 0.0):
        return ConvertedEngine(engine_map, 0.0, 0.0, {})
    return ConvertedEngine(engine_map.adjusted(derate=d, efficiency_offset=offset), d, offset,
                           {})


__all__ = [
    "DEFAULT_SUBSTITUTION",
    "GAS_LOAD_HIGH",
    "GAS_LOAD_LOW",
    "GAS_SHARE_MAX",
    "KINDS",
    "REGIME_DEVICE",
    "REGIME_LAMBDA",
    "REGIME_SLIP",
    "ConversionKind",
    "ConvertedEngine",
    "DerivedMap",
    "Substitution",
    "WillansFit",
    "air_displacement_derate",
    "conversion_kind",
    "convert",
    "dedicated_si_map",
    "displacement_from_torque",
    "dual_fuel_map",
    "duty_gas_share",
    "fuel_regime",
    "histogram_gas_share",
    "infer_kind",
    "kind_derate",
    "otto_efficiency",
    "regime_mismatch",
    "slipped",
    "willans_fit",
]
