"""Renewable fuels: biogenic carbon, the fossil/biogenic tailpipe CO2 split and pathways.

Reference values name their source beside them. Atomic weights are the IUPAC standard values
(conventional, 4 figures: C 12.011, H 1.008, O 15.999; CO2 44.009); "from memory" marks the
values recalled from the JEC Well-to-Wheels fuel-properties table and EU RED II
(Directive 2018/2001) Annexes III, V and VI.
"""

from __future__ import annotations

import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.core.fuels import blend, load_fuel
from workbench.models.combustion import fuel_sheet
from workbench.models.emissions import split_co2, tailpipe_co2e
from workbench.study.studyfile import read_study

#: IUPAC standard atomic weights (conventional values).
M_C, M_H, M_O = 12.011, 1.008, 15.999
M_CO2 = M_C + 2 * M_O  # 44.009
#: Ethanol C2H5OH from its formula.
M_ETHANOL = 2 * M_C + 6 * M_H + M_O  # 46.068
W_C_ETHANOL = 2 * M_C / M_ETHANOL  # 0.5214
#: Fossil fuel comparator of EU RED II, Annex V Part C point 19 (94 g CO2e/MJ, from memory).
FOSSIL_COMPARATOR = 94.0


# ----------------------------------------------------------------------------- carbon balance


@pytest.mark.parametrize(("fuel", "carbon"), [
    ("ethanol", W_C_ETHANOL),  # the formula
    ("gasoline-e0", 0.864),  # JEC fuel-properties table, gasoline (from memory)
    ("hvo", 0.848),  # C15-C18 paraffins; C16H34 is 0.849 from its formula
    ("bio-lpg", 3 * M_C / (3 * M_C + 8 * M_H)),  # propane C3H8
])
def test_co2_per_kg_is_the_carbon_mass_fraction_times_44_over_12(fuel, carbon):
    # complete combustion: each kg of carbon becomes M_CO2 / M_C = 3.664 kg of CO2
    # (closed form). 2e-4: the sheets' element shares are given to 4 figures.
    assert_allclose(fuel_sheet(fuel).co2_mass, M_CO2 / M_C * carbon, rtol=2e-4)


def test_biomethane_co2_per_kg_from_its_mole_fractions():
    # 97.5 % CH4, 1.5 % CO2, 1 % N2 by mole (the sheet's analysis): carbon of CH4 and CO2
    x = {"CH4": 0.975, "CO2": 0.015, "N2": 0.010}
    mass = {"CH4": M_C + 4 * M_H, "CO2": M_CO2, "N2": 2 * 14.007}
    molar = sum(x[s] * mass[s] for s in x)
    carbon = (x["CH4"] + x["CO2"]) * M_C / molar
    assert_allclose(fuel_sheet("biomethane").co2_mass, M_CO2 / M_C * carbon, rtol=1e-4)


def test_ethanol_matches_the_jec_fuel_properties():
    # JEC Well-to-Wheels fuel properties, ethanol (from memory): 1.91 kg CO2/kg,
    # 71.4 g CO2/MJ at 26.8 MJ/kg. 3e-3: the table's three figures.
    sheet = fuel_sheet("ethanol")
    assert_allclose(sheet.co2_mass, 1.91, rtol=3e-3)
    assert_allclose(sheet.co2_per_energy * 1e9, 71.4, rtol=3e-3)
    assert_allclose(sheet.lhv_mass / 1e6, 26.8, rtol=1e-9)  # the sheet's measured LHV


def test_ethanol_density_is_the_handbook_value_at_15_c():
    # CRC Handbook of Chemistry and Physics: 789.3 kg/m3 at 20 °C, cubic expansion 1.09e-3/K
    # near 20 °C (from memory); 5 K cooler is 0.55 % denser. 1e-3: the expansion figure.
    assert_allclose(load_fuel("ethanol").liquid_density, 789.3 * (1 + 5 * 1.09e-3), rtol=1e-3)


def test_e10_density_and_lhv_from_its_volumes():
    # volumes add (ideal mixing): density and mass-weighted LHV in closed form
    m_e0, m_eth = 0.9 * 743.0, 0.1 * 794.0  # kg per m3 of blend
    sheet = fuel_sheet("e10")
    assert_allclose(load_fuel("e10").liquid_density, m_e0 + m_eth, rtol=1e-12)
    assert_allclose(sheet.lhv_mass / 1e6, (m_e0 * 43.2 + m_eth * 26.8) / (m_e0 + m_eth),
                    rtol=1e-6)


# ----------------------------------------------------------------------------- biogenic share


def _ethanol_blend_share(v_ethanol: float, rho_e0: float) -> float:
    """Biogenic share of an ethanol/E0 blend's carbon from its volumes (volumes add)."""
    rho_ethanol = 794.0  # kg/m3 at 15 °C: EU RED II Annex III, 0.794 kg/L (from memory)
    c_ethanol = v_ethanol * rho_ethanol * W_C_ETHANOL
    c_e0 = (1.0 - v_ethanol) * rho_e0 * 0.864  # JEC gasoline carbon (from memory)
    return c_ethanol / (c_ethanol + c_e0)


@pytest.mark.parametrize(("fuel", "v_ethanol"), [("e10", 0.10), ("e85", 0.85)])
def test_e10_and_e85_biogenic_share_from_the_blend_volumes(fuel, v_ethanol):
    # closed form with the E0 sheet's 743 kg/m3 (inside EN 228's 720-775 kg/m3)
    share = load_fuel(fuel).biogenic_carbon_share
    assert_allclose(share, _ethanol_blend_share(v_ethanol, 743.0), rtol=2e-4)
    # and it stays within the band that the EN 228 density range gives the blendstock
    low, high = (_ethanol_blend_share(v_ethanol, rho) for rho in (775.0, 720.0))
    assert low < share < high


def test_e10_is_about_6_7_percent_and_e85_about_79_percent_biogenic():
    # orders of magnitude: 10 % ethanol by volume is ~10.6 % by mass, carbon-poorer (52 % vs
    # 86 %), so ~6.7 % of the carbon; E85 ~79 % (closed form above, rounded)
    assert load_fuel("e10").biogenic_carbon_share == pytest.approx(0.067, abs=1e-3)
    assert load_fuel("e85").biogenic_carbon_share == pytest.approx(0.785, abs=1e-3)


def test_e5_gasoline_counts_its_ethanol_carbon_as_biogenic():
    # all 1.8 % oxygen (the sheet's) as ethanol: ethanol mass = O / (M_O / M_ETHANOL)
    sheet = fuel_sheet("gasoline")
    ethanol_mass = sheet.oxygen_mass_fraction / (M_O / M_ETHANOL)
    expected = ethanol_mass * W_C_ETHANOL / sheet.carbon_mass_fraction
    assert_allclose(load_fuel("gasoline").biogenic_carbon_share, expected, rtol=2e-3)


def test_fossil_and_renewable_fuels_are_labelled():
    for fid in ("diesel", "natural-gas", "lpg", "gasoline-e0", "propane"):
        assert load_fuel(fid).biogenic_carbon_share == 0.0
    for fid in ("ethanol", "hvo", "bio-lpg", "biomethane"):
        assert load_fuel(fid).biogenic_carbon_share == 1.0


def test_a_blend_of_fossil_and_biogenic_methane_is_carbon_weighted():
    half = blend({"methane": 0.5, "biomethane": 0.5}, "mole")
    # carbon per mole: methane 1, biomethane 0.975 + 0.015 = 0.99 (closed form)
    assert_allclose(half.biogenic_carbon_share, 0.99 / 1.99, rtol=1e-12)


# ----------------------------------------------------------------------------- CO2e split


def test_split_and_tailpipe_co2e_closed_forms():
    fossil, biogenic = split_co2(200.0, 0.25)
    assert (fossil, biogenic) == (150.0, 50.0)
    # IPCC AR6 WG1 Table 7.15 (from memory): CH4 fossil 29.8, non-fossil 27.0, N2O 273
    got = tailpipe_co2e(200.0, 1.0, 0.1, biogenic_share=0.25)
    assert_allclose(got, 150.0 + 29.8 * 0.75 + 27.0 * 0.25 + 273.0 * 0.1, rtol=1e-12)
    assert tailpipe_co2e(200.0, 0.0, 0.0, biogenic_share=1.0) == 0.0


@pytest.fixture(scope="module")
def demo_result():
    from workbench.study import run
    return run(read_study("demo"), draws=0)


@pytest.mark.slow
def test_demo_biomethane_reports_its_co2_apart_and_its_pathway(demo_result):
    fu = demo_result.fuel_use.set_index(["candidate", "vehicle_class"])
    for vclass in ("taxi", "van", "bus"):
        bio = fu.loc[("biomethane-fleet", vclass)]
        assert bio["co2_ttw_fossil_g_per_km"] == 0.0
        assert_allclose(bio["co2_ttw_biogenic_g_per_km"], bio["co2_ttw_g_per_km"], rtol=1e-12)
        # tailpipe CO2e: only its slipped methane, weighed as non-fossil (27.0)
        assert_allclose(bio["co2e_ttw_g_per_km"], 27.0 * bio["ch4_g_per_km"], rtol=1e-9)
        # well to wheel: + the RED II pathway's 30 g CO2e/MJ (the sheet's, from memory)
        assert_allclose(bio["co2e_wtw_g_per_km"],
                        bio["co2e_ttw_g_per_km"] + 30.0 * bio["fuel_energy_mj_per_km"],
                        rtol=1e-9)
    taxi = fu.loc[("today", "taxi")]  # E5 gasoline: 3.19 % of its carbon biogenic
    share = load_fuel("gasoline").biogenic_carbon_share
    assert_allclose(taxi["co2_ttw_fossil_g_per_km"], (1 - share) * taxi["co2_ttw_g_per_km"],
                    rtol=1e-12)
    assert_allclose(taxi["co2e_ttw_g_per_km"], taxi["co2_ttw_fossil_g_per_km"], rtol=1e-12)
    years = demo_result.fleet_years
    assert_allclose(years["co2_ttw_fossil_t"] + years["co2_ttw_biogenic_t"],
                    years["co2_ttw_t"], rtol=1e-12)


# ----------------------------------------------------------------------------- pathways


#: EU RED II Annex V Part A and Annex VI Part B default values (from memory), as the savings
#: against the fossil comparator or as g CO2e/MJ; the sheets keep them to 0.1 g/MJ.
RED_II_DEFAULT_SAVINGS = {
    ("ethanol", "sugar-beet"): 0.59,  # no biogas from slop, natural gas, conventional boiler
    ("ethanol", "maize"): 0.40,  # natural gas as process fuel, conventional boiler
    ("ethanol", "sugar-cane"): 0.70,
    ("ethanol", "wheat-straw"): 0.83,
    ("hvo", "waste-cooking-oil"): 0.83,
    ("hvo", "rapeseed"): 0.47,
}
RED_II_DEFAULT_G_PER_MJ = {
    ("biomethane", "biowaste-open-digestate"): 71.0,
    ("biomethane", "biowaste-closed-digestate"): 30.0,
}


@pytest.mark.parametrize(("fuel", "pathway"), sorted(RED_II_DEFAULT_SAVINGS))
def test_pathways_are_the_red_ii_default_savings(fuel, pathway):
    expected = FOSSIL_COMPARATOR * (1.0 - RED_II_DEFAULT_SAVINGS[fuel, pathway])
    got = load_fuel(fuel).pathway(pathway).wtt_co2e_per_energy * 1e9
    assert got == pytest.approx(expected, abs=0.05)  # the sheets round to 0.1 g/MJ
    assert "RED II" in load_fuel(fuel).pathway(pathway).source


@pytest.mark.parametrize(("fuel", "pathway"), sorted(RED_II_DEFAULT_G_PER_MJ))
def test_biomethane_pathways_are_the_red_ii_defaults(fuel, pathway):
    got = load_fuel(fuel).pathway(pathway).wtt_co2e_per_energy * 1e9
    assert got == pytest.approx(RED_II_DEFAULT_G_PER_MJ[fuel, pathway], abs=1e-9)


@pytest.mark.parametrize(("fuel", "v_ethanol"), [("e10", 0.10), ("e85", 0.85)])
def test_blend_pathways_are_their_parts_weighted_by_energy(fuel, v_ethanol):
    # energy of each part per m3 of blend: volume x density x LHV (the part sheets)
    e0, eth = load_fuel("gasoline-e0"), load_fuel("ethanol")
    energy_e0 = (1 - v_ethanol) * e0.liquid_density * fuel_sheet(e0).lhv_mass
    energy_eth = v_ethanol * eth.liquid_density * fuel_sheet(eth).lhv_mass
    share = energy_eth / (energy_e0 + energy_eth)
    fossil = e0.pathway("crude-oil").wtt_co2e_per_energy
    for p in eth.pathways:
        expected = (1 - share) * fossil + share * p.wtt_co2e_per_energy
        got = load_fuel(fuel).pathway(p.name).wtt_co2e_per_energy
        assert got * 1e9 == pytest.approx(expected * 1e9, abs=0.05)  # 0.1 g/MJ rounding


# ----------------------------------------------------------------------------- bad input


def _write(tmp_path, text):
    path = tmp_path / "own.toml"
    path.write_text(text, encoding="utf-8")
    return str(path)


SPECIES = 'state = "gas"\n[species]\nsource = "s"\nCH4 = 1.0\n'


@pytest.mark.parametrize(("extra", "where", "words"), [
    ('[origin]\nbiogenic_carbon_share = 1.5\nsource = "s"\n', "[origin].biogenic_carbon_share",
     "at most 1"),
    ('[origin]\nbiogenic_carbon_share = "all"\nsource = "s"\n',
     "[origin].biogenic_carbon_share", "a number"),
    ("[origin]\nbiogenic_carbon_share = 1.0\n", "[origin].source", "is required"),
    ('[origin]\nbiogenic_share = 1.0\nsource = "s"\n', "[origin].biogenic_share",
     "unknown key"),
    ('[pathways.Waste]\nwtt_co2e_g_per_mj = 10.0\nsource = "s"\n', "[pathways.Waste]",
     "lower-case"),
    ("[pathways]\nwaste = 10.0\n", "[pathways.waste]", "must be a table"),
    ('[pathways.waste]\nwtt_co2e_g_per_mj = 5000.0\nsource = "s"\n',
     "[pathways.waste].wtt_co2e_g_per_mj", "1000"),
    ("[pathways.waste]\nwtt_co2e_g_per_mj = 10.0\n", "[pathways.waste].source", "is required"),
])
def test_bad_origin_and_pathway_tables_are_refused_in_one_line(tmp_path, extra, where, words):
    path = _write(tmp_path, SPECIES + extra)
    with pytest.raises(InputError) as err:
        load_fuel(path)
    assert err.value.where.endswith(where), err.value.where
    assert words in err.value.message and "\n" not in str(err.value)


def test_a_blend_may_not_state_its_own_origin(tmp_path):
    path = _write(tmp_path, 'state = "gas"\n[blend]\nsource = "s"\nmethane = 1.0\n'
                  '[origin]\nbiogenic_carbon_share = 1.0\nsource = "s"\n')
    with pytest.raises(InputError, match="comes from its parts") as err:
        load_fuel(path)
    assert err.value.where.endswith("[origin]")


def _demo_with_pathway(value):
    return read_study("demo").with_values({"candidates[3].pathway": value})


@pytest.mark.parametrize(("value", "words"), [
    ("sewage", "has no pathway 'sewage'; pick one of biowaste-open-digestate"),
    (3, "must name a pathway of biomethane"),
    ("", "must name a pathway of biomethane"),
])
def test_a_bad_pathway_in_the_study_names_the_key(value, words):
    with pytest.raises(InputError) as err:
        _demo_with_pathway(value)
    assert err.value.where == "candidates[3].pathway"
    assert words in err.value.message and "\n" not in str(err.value)


def test_a_fuel_with_no_pathways_says_to_use_upstream():
    with pytest.raises(InputError) as err:
        read_study("demo").with_values({"candidates[1].pathway": "crude-oil"})
    assert err.value.where == "candidates[1].pathway"
    assert "natural-gas has no pathway" in err.value.message and "[upstream]" in err.value.message


def test_without_a_pathway_the_upstream_entry_is_required_and_says_so():
    with pytest.raises(InputError) as err:
        read_study("demo").with_values({}, remove=["candidates[3].pathway"])
    assert err.value.where == "upstream.biomethane"
    assert 'pathway = "biowaste-open-digestate"' in err.value.message


def test_an_upstream_edit_alone_still_leaves_a_pathway_fuel_out():
    demo = read_study("demo")
    edited = demo.with_value("upstream.gasoline.wtt_co2e_g_per_mj", 18.0)
    assert "biomethane" not in edited.inputs.upstream
    bio = edited.inputs.candidates[3].per_class["bus"]
    assert bio.pathway == "biowaste-closed-digestate"
    assert_allclose(bio.upstream.nominal, 30.0e-9, rtol=1e-12)  # [kg/J]
