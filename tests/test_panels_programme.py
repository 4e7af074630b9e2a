"""The programme panel without a kernel: phasing, grants, loans, stations and fuel taxes.

Runs the shipped demo study (a FICTIONAL city; every number invented) with no Monte Carlo; the
checks are that each widget writes its key path, that a bad value shows its one line beside
the field and leaves the study, and that the panel's summary follows the run.
"""

from __future__ import annotations

import pytest

from workbench.core.errors import InputError
from workbench.interfaces.panels import StudyState
from workbench.interfaces.panels.programme import ProgrammePanel, phasing_text, phasing_value
from workbench.study.studyfile import read_study

pytestmark = pytest.mark.slow


@pytest.fixture
def panel():
    return ProgrammePanel(StudyState(read_study("demo"), draws=0))


def test_phasing_text_round_trip():
    assert phasing_value("0.5, 0.5") == [0.5, 0.5]
    assert phasing_value("105; 105") == [105, 105]
    assert phasing_value("") == [1]  # all in year 0
    assert phasing_text([0.5, 0.5]) == "0.5, 0.5"
    with pytest.raises(InputError, match="not a number"):
        phasing_value("half, half")


def test_phasing_field_writes_the_class_and_refuses_bad_shares(panel):
    field = panel.phasing["candidates[1].phasing.van"]
    assert field.control.value == "0.5, 0.5"  # the demo's own phasing
    field.control.value = "105, 105"
    assert panel.state.study.get("candidates[1].phasing.van") == [105, 105]
    field.control.value = "0.5, 0.4"
    assert "shares add up to 0.9" in field.error.value
    assert panel.state.study.get("candidates[1].phasing.van") == [105, 105]
    field.control.value = "a, b"
    assert "not a number" in field.error.value


def test_grant_loan_and_tax_reach_the_study_and_the_summary(panel):
    panel.grants["candidates[0].grant"].control.value = "500"
    assert panel.state.study.get("candidates[0].grant") == 500
    assert "grants of 320,000 KBD" in panel.summary.value
    loan = panel.loans["candidates[1].loan"]
    loan.boxes["share"].value = "80 %"
    assert "is empty" in loan.error.value  # written only once every field is filled
    loan.boxes["rate"].value = "6 %"
    loan.boxes["term_years"].value = "5"
    assert panel.state.study.get("candidates[1].loan") == {"share": "80 %", "rate": "6 %",
                                                           "term_years": 5}
    assert "borrows 80 % of its capital" in panel.summary.value
    tax = panel.taxes["lpg"]
    tax.control.value = "0.10 per L"
    assert panel.state.study.get("fuel_tax.lpg") == "0.10 per L"
    assert "fuel tax" in panel.summary.value
    bad = panel.taxes["diesel"]
    bad.control.value = "0.1 per kWh"  # a liquid taxed per energy must name LHV or HHV
    assert "add the heating value" in bad.error.value
    tax.control.value = ""
    with pytest.raises(InputError):
        panel.state.study.get("fuel_tax.lpg")


def test_station_location_builds_its_fields(panel):
    drop = panel.locations["candidates[1]"]
    drop.value = "depot"
    row = panel.stations["candidates[1].station"]
    row.boxes["compressor_cost"].value = "900"
    assert panel.state.study.get("candidates[1].station.compressor_cost") == 900
    assert "stations-table" in panel.summary.value
    drop.value = "off-depot"
    row = panel.stations["candidates[1].station"]
    assert set(row.boxes) == {"window", "detour", "hour_cost"}
    row.boxes["detour"].value = "15 min"
    assert panel.state.study.get("candidates[1].station.location") == "off-depot"
    drop.value = "none"
    with pytest.raises(InputError):
        panel.state.study.get("candidates[1].station")
