"""One home per constant: workbench.core.constants against its sources, and no second copy.

Where two copies used to differ, the test says which value is right and whether a result moved.
"""

from __future__ import annotations

import ast
import math
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core import constants as c

PACKAGE = Path(__file__).resolve().parents[1] / "workbench"


def test_gas_constant_is_avogadro_times_boltzmann():
    # N_A = 6.022 140 76e23 /mol and k = 1.380 649e-23 J/K, both exact since the 2019 SI
    # (SI Brochure, 9th ed., Table 1); R in J/(kmol K). The old copy in core/units.py used
    # CODATA's 8314.462618 (rounded): 1.8e-11 low, the exact value is right; prices per Sm3
    # moved by that 1.8e-11 relative, below the demo pin's 1e-9, so the pin was not rewritten.
    assert_allclose(c.GAS_CONSTANT, 6.02214076e26 * 1.380649e-23, rtol=1e-15)
    assert abs(c.GAS_CONSTANT / 8314.462618 - 1.0) < 2e-11


def test_standard_conditions_are_iso_13443_and_the_molar_volume_follows():
    # ISO 13443:1996: 15 °C and 101.325 kPa; 1 atm = 101 325 Pa exactly (10th CGPM, 1954).
    assert c.T_STANDARD == 288.15 and c.P_STANDARD == 101_325.0
    assert c.T_STANDARD - c.ZERO_CELSIUS == pytest.approx(15.0, abs=1e-12)
    # 23.645 m3/kmol for an ideal gas at 15 °C (CODATA 22.413 969 54 L/mol at 0 °C x 288.15/273.15).
    assert_allclose(c.MOLAR_VOLUME_STANDARD, 22.41396954 * 288.15 / 273.15, rtol=1e-9)
    # DIN 1343 normal conditions: 0 °C. Thermochemical reference: 25 °C, 1 atm (NIST-JANAF).
    assert c.T_NORMAL == 273.15 and c.T_REF == 298.15 and c.P_REF == 101_325.0


def test_no2_molar_mass_is_the_iupac_one():
    # IUPAC standard atomic weights N 14.0067, O 15.9994 (1995 table, CRC Handbook; from
    # memory): 46.0055 kg/kmol. models/nox.py and models/aftertreatment.py had this value;
    # models/combustion.py had a third copy from Cantera's element weights, 14.007 + 2 x 15.999
    # = 46.005, 1.1e-5 low. 46.0055 is right. Only the runner's engine-out NOx given in ppm
    # used the Cantera copy: such a NOx mass is now 1.1e-5 higher. The demo study's NOx
    # defaults are in g/kWh, so its pinned tables did not move.
    assert_allclose(c.M_NO2, 14.0067 + 2 * 15.9994, rtol=1e-12)
    assert_allclose(c.M_NO2 / 46.005 - 1.0, 1.087e-5, rtol=1e-3)


def test_faraday_is_avogadro_times_the_elementary_charge():
    # F = N_A e with e = 1.602 176 634e-19 C, exact since the 2019 SI (SI Brochure, 9th ed.,
    # Table 1); per kmol like GAS_CONSTANT, and the value Cantera uses (ct.faraday, C/kmol).
    assert_allclose(c.FARADAY, 6.02214076e26 * 1.602176634e-19, rtol=1e-15)
    assert round(c.FARADAY / 1e3, 5) == 96485.33212


def test_rpm_and_other_exact_factors():
    # 1 rev/min = 2 pi rad / 60 s (definition): 3000 rpm = 314.159 265 rad/s.
    assert_allclose(3000 * c.RPM, 100 * math.pi, rtol=1e-15)
    speeds = np.array([800.0, 2500.0, 6000.0]) * c.RPM
    assert_allclose(c.to_rpm(speeds), [800.0, 2500.0, 6000.0], rtol=1e-15)
    # to_rpm keeps the operation order the study always used (the pin depends on the bits).
    omega = np.linspace(50.0, 650.0, 97)
    assert np.array_equal(c.to_rpm(omega), omega * 60 / (2 * math.pi))
    assert c.STANDARD_GRAVITY == 9.80665  # 3rd CGPM, 1901, exact
    assert c.J_PER_KWH == 3600.0 * 1000.0  # 1 kWh = 1000 W x 3600 s, exact


def test_the_two_phi_ranges_have_two_names():
    from workbench.core.errors import InputError
    from workbench.models.combustion import PHI_RANGE_EQUILIBRIUM
    from workbench.models.nox import PHI_RANGE_FLAME_ZONE, EngineConditions

    # The equilibrium flame takes any phi an engine could see; the thermal-NO model only its
    # flame-zone range (about the flammable range, Turns 2nd ed. Table 8.3, from memory).
    lo, hi = PHI_RANGE_FLAME_ZONE
    assert PHI_RANGE_EQUILIBRIUM[0] < lo < hi < PHI_RANGE_EQUILIBRIUM[1]
    with pytest.raises(InputError, match="flame-zone"):
        EngineConditions(phi=0.3)


# The values that must live only in core/constants.py (as number literals in code; docstrings,
# messages and tests may quote them).
_ONE_HOME = {288.15, 273.15, 298.15, 101325.0, 9.80665, 46.0055, 46.005, 8314.462618, 3.6e6,
             96485332.12331001, 96485.33212331001, 96485.0}


def _literals(path: Path) -> list[tuple[int, float]]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    return [(n.lineno, n.value) for n in ast.walk(tree)
            if isinstance(n, ast.Constant) and isinstance(n.value, int | float)
            and not isinstance(n.value, bool) and float(n.value) in _ONE_HOME]


@pytest.mark.parametrize("path", sorted(p for p in PACKAGE.rglob("*.py")
                                        if p.name != "constants.py"),
                         ids=lambda p: str(p.relative_to(PACKAGE)))
def test_no_module_defines_a_constant_again(path):
    assert _literals(path) == [], f"{path.name}: import these from workbench.core.constants"


def test_no_module_writes_the_rpm_factor_again():
    for path in PACKAGE.rglob("*.py"):
        if path.name == "constants.py":
            continue
        text = path.read_text(encoding="utf-8")
        for pattern in ("pi / 60", "pi / 30", "/ (2 * math.pi)", "/ (2.0 * math.pi)"):
            assert pattern not in text, f"{path.name}: use constants.RPM / to_rpm"
