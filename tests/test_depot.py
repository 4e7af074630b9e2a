"""Tests of workbench.models.depot: station sizes against their closed forms worked by hand.

The station formulas are the module's own (a compressor delivering the day's gas within the
refuelling window, a buffer for the busiest hour, dispensers sharing the window, an LPG tank
for some days of demand); each check below is the arithmetic done on paper. Physical values
(standard molar volume) come from ISO 13443.
"""

from __future__ import annotations

import math

import pytest
from numpy.testing import assert_allclose

from workbench.core.fuels import load_fuel
from workbench.models import depot
from workbench.models.storage.compressed import compressed_gas_density


def test_dispensers_share_the_window():
    # 2000 kg at 20 kg/min = 100 min pumping = 6000 s; 100 fills x 300 s handling = 30000 s;
    # 36000 s over an 8 h (28800 s) window = 1.25 -> 2 hoses
    assert depot.dispensers(2000.0, 20.0 / 60.0, 100, 300.0, 8 * 3600.0) == 2
    # exactly one window of work is one hose, not two
    assert depot.dispensers(28800.0, 1.0, 0, 0.0, 28800.0) == 1
    assert depot.dispensers(0.0, 1.0, 0, 0.0, 28800.0) == 0


def test_buffer_volume_by_hand():
    # 250 kg between 190 and 160 kg/m3: 250 / 30 = 8.333 m3 of water volume
    assert_allclose(depot.buffer_volume(250.0, 190.0, 160.0), 250.0 / 30.0, rtol=1e-12)
    with pytest.raises(ValueError, match="above"):
        depot.buffer_volume(250.0, 160.0, 190.0)


def test_cng_station_closed_forms():
    gas = load_fuel("methane")
    s = depot.cng_station(gas, 2000.0, 100.0, window=8 * 3600.0, peak_factor=2.0)
    # compressor: 2000 kg / 8 h = 250 kg/h
    assert_allclose(s.compressor_mass_flow * 3600.0, 250.0, rtol=1e-12)
    # standard flow: 250 kg/h over the ideal density M / V_m = 16.043 / 23.645 = 0.6785 kg/m3
    # (ISO 13443 standard conditions, 15 degC and 101.325 kPa) = 368.5 Sm3/h
    assert_allclose(s.compressor_standard_flow * 3600.0, 250.0 / (16.043 / 23.645), rtol=2e-4)
    # buffer: the busiest hour (twice the mean) less the compressor's hour = 250 kg
    assert_allclose(s.buffer_mass, 250.0, rtol=1e-12)
    rho = [float(compressed_gas_density(gas, 288.15, p)) for p in (25e6, 20e6)]
    assert_allclose(s.buffer_volume, 250.0 / (rho[0] - rho[1]), rtol=1e-12)
    assert s.dispensers == 2
    # a flat day (peak factor 1) needs no buffer
    assert depot.cng_station(gas, 2000.0, 100.0, window=8 * 3600.0,
                             peak_factor=1.0).buffer_volume == 0.0


def test_lpg_station_closed_forms():
    # 10 m3 a day, 7 days at an 85 % fill limit: 70 / 0.85 = 82.35 m3 of tank
    s = depot.lpg_station(10.0, 300.0, window=8 * 3600.0)
    assert_allclose(s.tank_volume, 70.0 / 0.85, rtol=1e-12)
    # pumping 10 m3 at 40 L/min = 250 min = 15000 s, handling 300 x 240 s = 72000 s:
    # 87000 s / 28800 s = 3.02 -> 4 hoses
    assert s.dispensers == math.ceil(87000.0 / 28800.0) == 4


def test_detour_per_metre():
    # 15 min per fill every 450 km: 0.25 h / 450000 m
    assert_allclose(depot.detour_hours_per_m(900.0, 450e3), 0.25 / 450e3, rtol=1e-12)
