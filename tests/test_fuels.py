"""The fuel library, its loader and blends."""

from __future__ import annotations

import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.core.fuels import blend, list_fuels, load_fuel
from workbench.models.combustion import fuel_sheet

REQUIRED = ["methane", "ethane", "propane", "n-butane", "isobutane", "natural-gas", "lpg",
            "gasoline", "diesel", "hydrogen"]


def test_library_has_the_required_fuels_and_every_one_loads():
    ids = list_fuels()
    assert set(REQUIRED) <= set(ids)
    for fid in ids:
        fuel = load_fuel(fid)
        assert_allclose(sum(fuel.mole_fractions.values()), 1.0, rtol=1e-12)
        assert all(src for _, src in fuel.sources), fid  # every section names its source


def test_pure_propane_blend_equals_propane():
    # Round trip (issue check): a 100 % propane blend is propane.
    pure = blend({"propane": 1.0}, "liquid_volume")
    assert pure.composition == load_fuel("propane").composition
    assert_allclose(fuel_sheet(pure).lhv_mass, fuel_sheet("propane").lhv_mass, rtol=1e-12)


def test_mole_mass_and_liquid_volume_bases_agree():
    # Round trip: the same blend written on three bases gives the same mixture. Conversion by
    # hand from molar masses (C3H8 44.097, n-C4H10 58.123 kg/kmol) and the library's liquid
    # densities.
    x_p = 0.7
    m_p, m_b = 44.097, 58.123
    y_p = x_p * m_p / (x_p * m_p + (1 - x_p) * m_b)
    rho_p, rho_b = load_fuel("propane").liquid_density, load_fuel("n-butane").liquid_density
    v_p = y_p / rho_p / (y_p / rho_p + (1 - y_p) / rho_b)
    by_mole = blend({"propane": x_p, "n-butane": 1 - x_p}, "mole")
    by_mass = blend({"propane": y_p, "n-butane": 1 - y_p}, "mass")
    by_vol = blend({"propane": v_p, "n-butane": 1 - v_p}, "liquid_volume")
    for other in (by_mass, by_vol):
        assert_allclose(other.mole_fractions["C3H8"], by_mole.mole_fractions["C3H8"], rtol=1e-4)


def test_lpg_file_is_the_blend_of_its_parts():
    lpg = load_fuel("lpg")
    again = blend({"propane": 0.6, "n-butane": 0.4}, "liquid_volume")
    assert lpg.composition == again.composition
    # ideal mixing: 0.6 and 0.4 volumes of 507.5 and 584.3 kg/m3
    assert_allclose(lpg.liquid_density, 0.6 * 507.5 + 0.4 * 584.3, rtol=1e-12)


def test_blend_of_pseudo_and_species_fuels_keeps_the_pseudo_species():
    mix = blend({"diesel": 0.9, "n-dodecane": 0.1}, "liquid_volume")
    assert {"DIESEL", "c12h26"} == set(mix.mole_fractions)
    lhv = fuel_sheet(mix).lhv_mass
    assert fuel_sheet("diesel").lhv_mass < lhv < fuel_sheet("n-dodecane").lhv_mass


def test_blend_rejects_mixed_phases_and_bad_fractions():
    with pytest.raises(InputError, match="gaseous and liquid"):
        blend({"propane": 0.5, "diesel": 0.5})
    with pytest.raises(InputError, match=r"sum to 1\.1"):
        blend({"propane": 0.5, "n-butane": 0.6})
    with pytest.raises(InputError, match="zero or more"):
        blend({"propane": 1.2, "n-butane": -0.2})
    with pytest.raises(InputError, match="no \\[liquid\\] density"):
        blend({"methane": 0.5, "propane": 0.5}, "liquid_volume")


def write(tmp_path, name, text):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


BAD_FILES = {
    "malformed.toml": ("name = 'x\n", "not valid TOML"),
    "nospecies.toml": ('state = "gas"\n[species]\nsource = "s"\nC3H9 = 1.0\n',
                       r"\[species\]\.C3H9: unknown species"),
    "sum.toml": ('state = "gas"\n[species]\nsource = "s"\nCH4 = 0.5\nC2H6 = 0.4\n',
                 "sum to 0.9"),
    "negative.toml": ('state = "gas"\n[species]\nsource = "s"\nCH4 = 1.1\nC2H6 = -0.1\n',
                      "zero or more"),
    "nolhv.toml": ('state = "liquid"\n[pseudo]\nsource = "s"\ncarbon = 0.86\nhydrogen = 0.14\n'
                   "molar_mass_kg_per_kmol = 200\n", "lhv_mj_per_kg: is required"),
    "nosource.toml": ('state = "gas"\n[species]\nCH4 = 1.0\n', r"source: is required"),
    "twokinds.toml": ('state = "gas"\n[species]\nsource="s"\nCH4 = 1\n[blend]\nsource="s"\n'
                      "methane = 1\n", "exactly one of"),
    "compressed_diesel.toml": ('state = "liquid"\n[species]\nsource="s"\nc12h26 = 1\n'
                               '[storage]\nkind = "compressed"\npressure_bar = 200\nsource="s"\n',
                               "for gaseous fuels"),
}


@pytest.mark.parametrize("name", sorted(BAD_FILES))
def test_bad_fuel_files_name_the_file_and_field(tmp_path, name):
    text, message = BAD_FILES[name]
    path = write(tmp_path, name, text)
    with pytest.raises(InputError, match=message) as err:
        load_fuel(str(path))
    assert name in str(err.value)
    assert "\n" not in str(err.value)


def test_unknown_id_lists_the_library():
    with pytest.raises(InputError, match=r"unknown fuel id.*propane"):
        load_fuel("propanol-x")


def test_user_file_with_mass_basis(tmp_path):
    # 50/50 by mass methane/ethane -> mole fraction of CH4 = (0.5/16.043)/(0.5/16.043+0.5/30.069)
    path = write(tmp_path, "mygas.toml", 'state = "gas"\n[species]\nbasis = "mass"\n'
                 'source = "test"\nCH4 = 0.5\nC2H6 = 0.5\n')
    fuel = load_fuel(str(path))
    expected = (0.5 / 16.043) / (0.5 / 16.043 + 0.5 / 30.069)
    assert_allclose(fuel.mole_fractions["CH4"], expected, rtol=1e-4)
    assert fuel.id == "mygas"


# ----------------------------------------------------------------------------- where fuels live


METHANE = 'state = "gas"\n[species]\nsource = "test"\nCH4 = 1.0\n'
ETHANE = 'state = "gas"\n[species]\nsource = "test"\nC2H6 = 1.0\n'


def test_shipped_library_is_package_data():
    # common practice, no source: package data sits inside the package folder, read through
    # importlib.resources, so an installed wheel finds it without a checkout.
    from importlib import resources
    from pathlib import Path

    from workbench.core.fuels import LIBRARY

    assert LIBRARY == Path(resources.files("workbench").joinpath("data", "fuels"))
    assert (LIBRARY / "propane.toml").is_file()


def test_an_edited_fuel_file_is_read_again(tmp_path):
    # Turns, An Introduction to Combustion, 3rd ed., Table B.1: LHV of methane 50.016 MJ/kg,
    # of ethane 47.489 MJ/kg (rtol 2e-3: Cantera's GRI-Mech 3.0 enthalpies, not the table's).
    path = write(tmp_path, "mygas.toml", METHANE)
    before = load_fuel(str(path))
    assert_allclose(fuel_sheet(before).lhv_mass, 50.016e6, rtol=2e-3)
    path.write_text(ETHANE, encoding="utf-8")  # same path, same process
    after = load_fuel(str(path))
    assert after.mole_fractions == {"C2H6": 1.0}
    assert_allclose(fuel_sheet(after).lhv_mass, 47.489e6, rtol=2e-3)


def test_a_blend_sees_an_edited_part(tmp_path):
    # Closed form: a 50/50 mole blend of a part holds half of each of the part's species.
    write(tmp_path, "part.toml", METHANE)
    mix = write(tmp_path, "mix.toml", 'state = "gas"\n[blend]\nsource = "test"\n'
                'part = 0.5\nethane = 0.5\n')
    assert load_fuel(str(mix)).mole_fractions == {"C2H6": 0.5, "CH4": 0.5}
    write(tmp_path, "part.toml", 'state = "gas"\n[species]\nsource = "test"\nH2 = 1.0\n')
    assert load_fuel(str(mix)).mole_fractions == {"C2H6": 0.5, "H2": 0.5}


def test_blend_parts_come_from_the_blend_files_own_folder(tmp_path, monkeypatch):
    # The part "mygas" is in no library: only the blend file's folder has it.
    folder = tmp_path / "mine"
    folder.mkdir()
    write(folder, "mygas.toml", ETHANE)
    mix = write(folder, "mix.toml", 'state = "gas"\n[blend]\nsource = "test"\n'
                'mygas = 0.25\nmethane = 0.75\n')
    by_path = write(folder, "by-path.toml", 'state = "gas"\n[blend]\nsource = "test"\n'
                    '"./mygas.toml" = 1.0\n')
    monkeypatch.chdir(tmp_path)  # neither name resolves from the working folder
    assert_allclose(load_fuel(mix).mole_fractions["C2H6"], 0.25, rtol=1e-12)
    assert load_fuel(by_path).mole_fractions == {"C2H6": 1.0}
    with pytest.raises(InputError, match="unknown fuel id"):
        load_fuel("mygas")


def test_user_fuel_folders_come_before_the_shipped_library(tmp_path, monkeypatch):
    from workbench.core.fuels import FUELS_ENV, use_fuel_folders

    env_dir, cli_dir = tmp_path / "env", tmp_path / "cli"
    env_dir.mkdir()
    cli_dir.mkdir()
    write(env_dir, "propane.toml", 'name = "env propane"\n' + METHANE)
    write(env_dir, "only-env.toml", METHANE)
    write(cli_dir, "propane.toml", 'name = "cli propane"\n' + ETHANE)
    monkeypatch.setenv(FUELS_ENV, str(env_dir))
    assert load_fuel("propane").name == "env propane"
    assert {"only-env", "propane", "lpg"} <= set(list_fuels())
    previous = use_fuel_folders([cli_dir])
    try:
        assert load_fuel("propane").name == "cli propane"
        # The shipped LPG blend takes its parts from its own folder, not the user's propane.
        assert "C3H8" in load_fuel("lpg").mole_fractions
    finally:
        use_fuel_folders(previous)
    monkeypatch.setenv(FUELS_ENV, str(tmp_path / "missing"))
    with pytest.raises(InputError, match=f"{FUELS_ENV}: .*missing is no folder"):
        load_fuel("propane")


def test_a_blend_naming_itself_is_refused(tmp_path):
    path = write(tmp_path, "loop.toml", 'state = "gas"\n[blend]\nsource = "test"\nloop = 1.0\n')
    with pytest.raises(InputError, match=r"blend cycle loop\.toml -> loop\.toml") as err:
        load_fuel(str(path))
    assert "\n" not in str(err.value)


def test_two_blends_naming_each_other_are_refused(tmp_path):
    write(tmp_path, "a.toml", 'state = "gas"\n[blend]\nsource = "t"\nb = 0.5\nmethane = 0.5\n')
    write(tmp_path, "b.toml", 'state = "gas"\n[blend]\nsource = "t"\n"./a.toml" = 1.0\n')
    with pytest.raises(InputError, match=r"blend cycle a\.toml -> b\.toml -> a\.toml"):
        load_fuel(str(tmp_path / "a.toml"))
    # and nothing is left half-loaded: the same files load once the cycle is broken
    write(tmp_path, "b.toml", ETHANE)
    assert load_fuel(str(tmp_path / "a.toml")).mole_fractions == {"C2H6": 0.5, "CH4": 0.5}


def test_a_cycle_through_a_link_is_refused(tmp_path):
    # The same file under two names (a symbolic link) is still the same blend.
    write(tmp_path, "a.toml", 'state = "gas"\n[blend]\nsource = "t"\n"./alias.toml" = 1.0\n')
    (tmp_path / "alias.toml").symlink_to(tmp_path / "a.toml")
    with pytest.raises(InputError, match=r"blend cycle a\.toml -> alias\.toml"):
        load_fuel(str(tmp_path / "a.toml"))
