"""Benchmark: a cold NOx sheet for five fuels against the bare Cantera calls it needs.

Run ``python benchmarks/bench_nox.py``. Prints the best of several repeats of

* the cold sheet: ``nox_table`` for five fuels at the spark-ignition preset with every
  chemistry cache emptied (Cantera phases already built, as in a running session);
* the bare Cantera work the sheet cannot avoid, in the same process: per fuel the HP
  equilibria of the flame (two when the charge is diluted: the diluent's and the flame's),
  the NO-free GRI-Mech 3.0 reactor run and the TP equilibrium for the equilibrium NO;
* their ratio (target at most ``TARGET_RATIO``, 1.2) and the warm repeat: the same five
  results again, served from the cache.
"""

from __future__ import annotations

import time

import cantera as ct
import numpy as np

from workbench.core.cache import clear_caches
from workbench.core.fuels import load_fuel
from workbench.models import combustion, nox

FUELS = ("gasoline", "diesel", "lpg", "natural-gas", "hydrogen")
REPEATS = 7
#: Goal of issue 10: the cold sheet at most this many times the bare Cantera calls.
TARGET_RATIO = 1.2


def _clear() -> None:
    clear_caches()


def _bare(fuels: list, c: nox.EngineConditions, gri: ct.Solution) -> None:
    keep = {s.name for s in gri.species() if "N" not in s.composition or s.name == "N2"}
    t_u, p = c.flame_t_unburnt, c.flame_pressure
    for fuel in fuels:
        gas = fuel.gas_phase()
        fresh = combustion.unburnt_mole_fractions(fuel, c.phi, c.air)
        gas.TPX = t_u, p, fresh
        y_fresh = gas.Y.copy()
        gas.equilibrate("HP")
        if c.dilution > 0.0:
            burnt_y = gas.Y.copy()
            gas.TPY = t_u, p, (1 - c.dilution) * y_fresh + c.dilution * burnt_y
            gas.equilibrate("HP")
        x = {n: v for n, v in zip(gas.species_names, gas.X, strict=True)
             if n in keep}
        t_b = gas.T
        gri.TPX = t_b, p, x
        reactor = ct.IdealGasConstPressureReactor(gri, clone=False, energy="off")
        ct.ReactorNet([reactor]).advance(c.nox_residence_time)
        gri.TPX = t_b, p, x
        gri.equilibrate("TP")


def main() -> None:
    fuels = [load_fuel(f) for f in FUELS]
    c = nox.ENGINE_PRESETS["spark-ignition"]
    gri = ct.Solution("gri30.yaml", transport_model=None)
    nox.nox_table(fuels, nox.engine_preset("spark-ignition", phi=0.9))  # build phases
    _bare(fuels, c, gri)

    cold, bare, warm = [], [], []
    for _ in range(REPEATS):
        _clear()
        t0 = time.perf_counter()
        nox.nox_table(fuels, c)
        cold.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        for fuel in fuels:
            nox.nox_propensity(fuel, c, baseline=fuels[0])
        warm.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        _bare(fuels, c, gri)
        bare.append(time.perf_counter() - t0)

    t_cold, t_bare, t_warm = min(cold), min(bare), min(warm)
    print(f"NOx sheet, {len(fuels)} fuels, spark-ignition preset (best of {REPEATS})")
    print(f"  cold sheet            {t_cold * 1e3:9.2f} ms")
    print(f"  bare Cantera calls    {t_bare * 1e3:9.2f} ms")
    print(f"  ratio cold / bare     {t_cold / t_bare:9.2f}   (target <= {TARGET_RATIO})")
    per_fuel = t_warm / len(fuels) * 1e6
    print(f"  warm repeat           {t_warm * 1e6:9.1f} us   ({per_fuel:.1f} us per cached result)")
    print(f"  median cold / bare    {np.median(cold) / np.median(bare):9.2f}")


if __name__ == "__main__":
    main()
