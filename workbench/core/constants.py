"""Physical constants, standard conditions and exact unit factors: one home for each.

Every module that needs one of these imports it from here; no other module of the package
defines them again (``duplicates`` and ``tests/test_constants.py`` watch for it). Each value
names its source beside it.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    import numpy as np

#: Molar gas constant [J/(kmol K)]: N_A k, exact since the 2019 redefinition of the SI
#: (CODATA 2018, 8.314 462 618 153 24 J/(mol K)); the value Cantera uses.
GAS_CONSTANT = 8314.46261815324
#: The kelvin temperature of 0 °C [K], exact by the definition of the Celsius scale
#: (SI Brochure, 9th ed., 2019, sec. 2.3.1).
ZERO_CELSIUS = 273.15
#: Standard atmosphere [Pa], exact by definition (10th CGPM, 1954, Resolution 4).
ATMOSPHERE = 101_325.0

#: Standard reference temperature for gas volumes [K]: 15 °C (ISO 13443:1996). Also the
#: temperature liquid-fuel densities are quoted at (ASTM D1250-80 / ISO 91) and the default
#: temperature of a stored fuel.
T_STANDARD = 288.15
#: Standard reference pressure for gas volumes [Pa]: 101.325 kPa (ISO 13443:1996); also the
#: ambient pressure behind gauge pressures and liquid tanks.
P_STANDARD = ATMOSPHERE
#: Molar volume of an ideal gas at (T_STANDARD, P_STANDARD) [m3/kmol], about 23.645: the
#: standard cubic metre (Sm3) of volumetric heating values and gas prices.
MOLAR_VOLUME_STANDARD = GAS_CONSTANT * T_STANDARD / P_STANDARD
#: "Normal" reference temperature [K]: 0 °C at 101.325 kPa (DIN 1343), the normal cubic metre.
T_NORMAL = ZERO_CELSIUS

#: Reference temperature of heating values and enthalpies of formation [K]: 25 °C, the
#: thermochemical standard state (NIST-JANAF tables; the NASA polynomials' reference).
T_REF = 298.15
#: Reference pressure of heating values and of the default flame [Pa]: 1 atm, the pressure
#: of the NASA polynomials' standard state (McBride, Zehe, Gordon, NASA/TP-2002-211556).
P_REF = ATMOSPHERE

#: Standard acceleration of gravity [m/s2], exact by definition (3rd CGPM, 1901).
STANDARD_GRAVITY = 9.80665
#: One revolution per minute as an angular speed [rad/s]: 2 pi / 60, exact by definition.
#: ``n * RPM`` turns n rpm into rad/s, ``omega / RPM`` turns rad/s into rpm.
RPM = 2.0 * math.pi / 60.0


def to_rpm(omega: float | np.ndarray) -> float | np.ndarray:
    """An angular speed in revolutions per minute: ``omega * 60 / (2 pi)`` [rev/min].

    Parameters
    ----------
    omega : float or numpy.ndarray
        Angular speed [rad/s].

    Returns
    -------
    float or numpy.ndarray
        The same speed [rev/min]. Computed in this order (not ``omega / RPM``, which differs
        in the last bit) so the demo's pinned results, whose thermal-NO runs take engine
        speeds in rpm, are reproduced exactly.
    """
    return omega * 60.0 / (2.0 * math.pi)


#: Joules in one kilowatt hour [J/kWh], exact (3600 s x 1000 W).
J_PER_KWH = 3.6e6

#: Molar mass of NO2 [kg/kmol]: 14.0067 + 2 x 15.9994, the IUPAC standard atomic weights of
#: N and O (IUPAC 1995 table, as printed to five decimals in the CRC Handbook; from memory).
#: NOx masses are reported "as NO2" (the regulatory convention, e.g. UN ECE R49 / R83).
M_NO2 = 46.0055

#: Faraday constant [C/kmol]: N_A e, exact since the 2019 redefinition of the SI
#: (N_A = 6.022 140 76e23 /mol, e = 1.602 176 634e-19 C; SI Brochure, 9th ed., Table 1), per
#: kmol like :data:`GAS_CONSTANT` (96 485.332 12 C/mol; the value Cantera uses). A cell that
#: passes a current I consumes I / (2 F) kmol/s of hydrogen (two electrons per H2).
FARADAY = 96_485_332.123310018
