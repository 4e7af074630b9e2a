"""The one cache registry: results keyed by arguments, cleared together, resources kept."""

from __future__ import annotations

from workbench.core.cache import cache_info, clear_caches, memoize


@memoize(maxsize=2)
def _double(x: float) -> float:
    _double.calls += 1  # type: ignore[attr-defined]
    return 2 * x


_double.calls = 0  # type: ignore[attr-defined]


@memoize(maxsize=None, kind="resource")
def _resource(name: str) -> list[str]:
    return [name]


def test_results_are_served_then_cleared():
    clear_caches()
    _double.calls = 0  # type: ignore[attr-defined]
    assert _double(2.0) == 4.0 and _double(2.0) == 4.0
    assert _double.calls == 1  # type: ignore[attr-defined]
    clear_caches()
    _double(2.0)
    assert _double.calls == 2  # type: ignore[attr-defined]


def test_least_recently_used_entry_is_dropped():
    clear_caches()
    for x in (1.0, 2.0, 3.0):
        _double(x)
    info = cache_info()[f"{__name__}._double"]
    assert info.size == 2 and info.misses == 3


def test_resources_survive_a_result_clear():
    first = _resource("gri30")
    clear_caches()
    assert _resource("gri30") is first
    clear_caches(resources=True)
    assert _resource("gri30") is not first


def test_every_package_cache_is_registered():
    import workbench.models.nox
    import workbench.models.storage
    import workbench.study.runner  # noqa: F401

    names = cache_info()
    assert "workbench.models.nox._fuel_no" in names
    assert "workbench.models.combustion._flame" in names
    assert names["workbench.core.thermo.phase"].kind == "resource"
    # The storage package's caches, one module each (the split of storage.py kept them all).
    for result in ("saturation._saturated", "compressed._gas", "fluids._critical_temperature"):
        assert names[f"workbench.models.storage.{result}"].kind == "result"
    for resource in ("_coolprop", "_pure", "_heos"):
        assert names[f"workbench.models.storage.fluids.{resource}"].kind == "resource"
