"""Chart builders: traces carry the tables' numbers, units, colours and escaped names.

The data are the INVENTED fixture of tests/study_fixture.py: these tests check layout and
plumbing, not physics.
"""

from __future__ import annotations

import base64
import math
import re
from dataclasses import replace

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import pytest
from numpy.testing import assert_allclose
from study_fixture import CLASSES, XSS_NAME, make_map_grid, make_result

from workbench.interfaces import charts
from workbench.study.results import COLUMNS, RunMap, StudyResult


@pytest.fixture(scope="module")
def result() -> StudyResult:
    return make_result()


@pytest.fixture(scope="module")
def figures(result) -> dict[str, go.Figure]:
    return charts.all_figures(result, map_grid=make_map_grid())


def group(candidate: str) -> str:
    return "candidate:" + charts.escape(candidate)


def candidate_traces(fig: go.Figure, candidate: str) -> list:
    return [t for t in fig.data if t.legendgroup == group(candidate)]


def axis_name(letter: str, index: int) -> str:
    """Plotly's axis reference of the index-th facet (0-based): x, x2, x3 ..."""
    return letter if index == 0 else f"{letter}{index + 1}"


def trace_colour(trace) -> str:
    marker = getattr(trace, "marker", None)
    if marker is not None and isinstance(marker.color, str):
        return marker.color
    return trace.line.color


def all_strings(obj) -> list[str]:
    if isinstance(obj, str):
        return [obj]
    if isinstance(obj, dict):
        return [s for v in obj.values() for s in all_strings(v)]
    if isinstance(obj, list | tuple):
        return [s for v in obj for s in all_strings(v)]
    return []


# ----------------------------------------------------------------------------- numbers


def test_cost_per_km_stacks_the_three_parts(result):
    fig = charts.cost_per_km_chart(result)
    parts = {"": "cost_fuel_per_km", "/": "cost_upkeep_per_km", ".": "cost_capital_per_km"}
    checked = 0
    for j, vclass in enumerate(CLASSES):
        for cand in result.candidates["candidate"]:
            row = result.per_km[(result.per_km["candidate"] == cand)
                                & (result.per_km["vehicle_class"] == vclass)].iloc[0]
            bars = [t for t in candidate_traces(fig, cand) if t.xaxis == axis_name("x", j)]
            assert len(bars) == 3
            for bar in bars:
                assert_allclose(bar.y, [row[parts[bar.marker.pattern.shape]]], rtol=1e-12)
                checked += 1
            # the three parts add up to the table's total
            assert_allclose(sum(b.y[0] for b in bars), row["cost_per_km"], rtol=1e-12)
    assert checked == 3 * len(CLASSES) * len(result.candidates)
    assert fig.layout.barmode == "stack"


def test_co2_chart_has_ttw_and_wtw(result):
    fig = charts.co2_per_km_chart(result)
    columns = {"tank-to-wheel CO2": "co2_ttw_g_per_km", "well-to-wheel CO2e": "co2e_wtw_g_per_km"}
    for j, vclass in enumerate(CLASSES):
        for cand in result.candidates["candidate"]:
            row = result.per_km[(result.per_km["candidate"] == cand)
                                & (result.per_km["vehicle_class"] == vclass)].iloc[0]
            bars = [t for t in candidate_traces(fig, cand) if t.xaxis == axis_name("x", j)]
            assert {b.offsetgroup for b in bars} == set(columns)
            for bar in bars:
                assert_allclose(bar.y, [row[columns[bar.offsetgroup]]], rtol=1e-12)


def test_nox_monthly_lines_and_replacement_markers(result):
    fig = charts.nox_monthly_chart(result)
    table = result.nox_monthly
    for j, vclass in enumerate(CLASSES):
        for cand in result.candidates["candidate"]:
            d = table[(table["candidate"] == cand) & (table["vehicle_class"] == vclass)]
            traces = [t for t in candidate_traces(fig, cand) if t.yaxis == axis_name("y", j)]
            line = next(t for t in traces if t.mode == "lines")
            marks = next(t for t in traces if t.mode == "markers")
            assert_allclose(line.y, d.sort_values("month")["nox_g_per_km"], rtol=1e-12)
            replaced = d[d["replaced"]]
            assert len(replaced) > 0
            assert list(marks.x) == list(replaced["month"])
            assert_allclose(marks.y, replaced["nox_g_per_km"], rtol=1e-12)


def test_energy_density_fuel_and_system_points(result):
    fig = charts.energy_density_chart(result)
    for _, row in result.storage.iterrows():
        (trace,) = candidate_traces(fig, row["candidate"])
        assert_allclose(trace.x, [row["energy_density_mj_per_kg"],
                                  row["system_energy_density_mj_per_kg"]], rtol=1e-12)
        assert_allclose(trace.y, [row["energy_density_mj_per_l"],
                                  row["system_energy_density_mj_per_l"]], rtol=1e-12)


def test_cash_flow_lines_and_payback_star(result):
    fig = charts.cash_flow_chart(result)
    cands = result.candidates.set_index("candidate")
    for cand, row in cands.iterrows():
        traces = candidate_traces(fig, cand)
        if row["is_baseline"]:
            assert traces == []
            continue
        d = result.cash_flows[result.cash_flows["candidate"] == cand]
        line = next(t for t in traces if t.mode == "lines+markers")
        assert_allclose(line.y, d["cumulative_discounted_vs_baseline"], rtol=1e-12)
        stars = [t for t in traces if t.mode == "markers"]
        if math.isfinite(row["discounted_payback_years"]):
            assert_allclose(stars[0].x, [row["discounted_payback_years"]], rtol=1e-12)
            assert_allclose(stars[0].y, [0.0])
        else:
            assert stars == []
    # the fixture has one candidate that pays back and one that does not
    assert cands["discounted_payback_years"].notna().sum() == 1


def test_payback_star_sits_on_calendar_years(result):
    # Study tables count years from the start year; payback counts from the conversion year.
    flows = result.cash_flows.assign(year=result.cash_flows["year"] + 2027)
    fig = charts.cash_flow_chart(replace(result, cash_flows=flows))
    cands = result.candidates.set_index("candidate")
    cand = cands.index[cands["discounted_payback_years"].notna()][0]
    star = next(t for t in candidate_traces(fig, cand) if t.mode == "markers")
    assert_allclose(star.x, [2027 + cands.at[cand, "discounted_payback_years"]], rtol=1e-12)


def test_tornado_bars_span_base_to_npv(result):
    fig = charts.tornado_chart(result)
    npv = result.candidates.set_index("candidate")["npv_vs_baseline"]
    for cand in result.tornado["candidate"].unique():
        d = result.tornado[result.tornado["candidate"] == cand].sort_values("swing")
        low, high = candidate_traces(fig, cand)
        for bar, column in ((low, "npv_at_low"), (high, "npv_at_high")):
            assert_allclose(np.asarray(bar.x) + bar.base, d[column], rtol=1e-12)
            assert bar.base == pytest.approx(npv[cand])
        # widest swing last, so it is drawn on top; readable labels with units, escaped;
        # each bar carries the input's value at its end
        assert low.y[-1] == charts.escape(d["label"].iloc[-1])
        assert "fuel price &lt;b&gt;LPG&lt;/b&gt; [XCU per L]" in low.y
        assert not any(y.startswith("fixture.") for y in low.y)
        assert list(low.text) == [f"{v:,.3g}" for v in d["low_value"]]
        assert list(high.text) == [f"{v:,.3g}" for v in d["high_value"]]


def test_monte_carlo_histograms_and_percentile_lines(result):
    fig = charts.monte_carlo_chart(result)
    cands = result.candidates.set_index("candidate")
    line_x = sorted(s.x0 for s in fig.layout.shapes)
    for cand in result.monte_carlo["candidate"].unique():
        (hist,) = candidate_traces(fig, cand)
        draws = result.monte_carlo[result.monte_carlo["candidate"] == cand]["npv_vs_baseline"]
        # pre-binned bars: every draw in exactly one bin, counted here by comparison
        lo, hi = np.asarray(hist.customdata).T
        assert len(hist.x) == charts.MC_BINS
        assert_allclose([lo[0], hi[-1]], [draws.min(), draws.max()])
        assert_allclose(hist.x, (lo + hi) / 2, rtol=1e-12)
        inside = [(draws >= a) & ((draws < b) | ((draws == b) & (i == len(lo) - 1)))
                  for i, (a, b) in enumerate(zip(lo, hi, strict=True))]
        assert_allclose(hist.y, [100.0 * m.sum() / len(draws) for m in inside], rtol=1e-9)
        assert_allclose(sum(hist.y), 100.0, rtol=1e-9)
        for column in ("npv_p10", "npv_p50", "npv_p90"):
            assert any(math.isclose(x, cands.loc[cand, column]) for x in line_x)
    n = result.monte_carlo["candidate"].nunique()
    # three percentiles and the break-even line (NPV 0) per candidate
    assert len(fig.layout.shapes) == 4 * n
    assert sum(s.x0 == 0.0 and s.line.color == charts.BREAK_EVEN for s in fig.layout.shapes) == n
    # the percentile labels of one facet sit at distinct heights, so they cannot overlap
    labels = [a for a in fig.layout.annotations if a.text.startswith(("P10", "P50", "P90"))]
    for cand_labels in (labels[i:i + 3] for i in range(0, len(labels), 3)):
        assert len({a.y for a in cand_labels}) == 3


def test_facets_and_fuels_are_named_as_in_the_study(result):
    fig = charts.cost_per_km_chart(result)
    titles = [a.text for a in fig.layout.annotations]
    for vclass in dict.fromkeys(result.per_km["vehicle_class"]):
        assert charts.escape(result.names.vehicle_class(vclass)) in titles
        assert vclass not in titles
    density = charts.energy_density_chart(result)
    assert {t.name for t in density.data if t.legendgroup.startswith("candidate:")} == {
        charts.escape(result.names.fuel(f)) for f in result.storage["fuel"]}


def test_flame_two_panels(result):
    fig = charts.flame_chart(result)
    for cand in result.candidates["candidate"]:
        d = result.flame[result.flame["candidate"] == cand]
        temp, no = candidate_traces(fig, cand)
        assert (temp.yaxis, no.yaxis) == ("y", "y2")
        assert_allclose(temp.x, d["phi"], rtol=1e-12)
        assert_allclose(temp.y, d["flame_temperature_k"], rtol=1e-12)
        assert_allclose(no.y, d["no_ppm"], rtol=1e-12)


def test_efficiency_map_contour_and_points(result):
    grid = make_map_grid()
    names = dict(zip(result.candidates["candidate"], result.candidates["name"], strict=True))
    fig = charts.efficiency_map_chart(
        grid.speed_rpm, grid.torque_nm, grid.efficiency, result.operating_points,
        colours=result.colours(), names=names, vehicle_class=CLASSES[0],
        full_load_torque_nm=grid.full_load_torque_nm)
    contour = fig.data[0]
    assert isinstance(contour, go.Contour)
    assert_allclose(contour.x, grid.speed_rpm)
    assert_allclose(contour.y, grid.torque_nm)
    assert_allclose(contour.z, grid.efficiency * 100.0, rtol=1e-12)  # drawn in percent
    assert_allclose(fig.data[1].y, grid.full_load_torque_nm)
    ops = result.operating_points
    for cand in result.candidates["candidate"]:
        (pts,) = candidate_traces(fig, cand)
        d = ops[(ops["candidate"] == cand) & (ops["vehicle_class"] == CLASSES[0])]
        assert_allclose(pts.x, d["engine_speed_rpm"])
        assert_allclose(pts.y, d["torque_nm"])
        assert_allclose(pts.marker.size, d["hours"])


def test_efficiency_map_rejects_a_grid_that_does_not_match_its_axes():
    grid = make_map_grid()
    with pytest.raises(ValueError, match="efficiency grid"):
        charts.efficiency_map_chart(grid.speed_rpm, grid.torque_nm[:-1], grid.efficiency)


def test_map_grid_from_engine_map_turns_rad_per_s_into_rpm():
    from workbench.models.engine import EngineMap

    # 1 rpm = 2 pi / 60 rad/s by definition of the revolution (common practice, no source);
    # exact apart from floating point, hence rtol 1e-12.
    speed = np.array([1000.0, 2000.0, 3000.0]) * math.pi / 30.0
    torque = np.array([0.0, 100.0])
    eff = np.full((2, 3), 0.3)
    emap = EngineMap(name="m", speed=speed, torque=torque, efficiency=eff,
                     full_load_torque=np.array([90.0, 100.0, 95.0]), idle_speed=speed[0],
                     idle_fuel_power=1000.0)
    grid = charts.MapGrid.from_engine_map(emap)
    assert_allclose(grid.speed_rpm, [1000.0, 2000.0, 3000.0], rtol=1e-12)
    assert_allclose(grid.full_load_torque_nm, [90.0, 100.0, 95.0])
    figs = charts.all_figures(make_result(), map_grid={"taxi": emap})
    assert "efficiency_map:taxi" in figs


def test_one_map_chart_per_class_and_map_an_option_runs_on():
    grid = make_map_grid()
    other = replace(grid, efficiency=grid.efficiency * 0.8)
    maps = [RunMap("taxi", ("diesel-now", "cng-convert"), grid),
            RunMap("taxi", ("lpg-convert",), other)]
    figs = charts.all_figures(make_result(), map_grid=maps)
    base, lpg = figs["efficiency_map:taxi"], figs["efficiency_map:taxi:lpg-convert"]
    # each chart draws its own map and only the points of the options that run on it
    assert_allclose(np.max(lpg.data[0].z), np.max(grid.efficiency) * 80.0)
    assert [t.name for t in base.data[2:]] == ["Diesel as today", 'CNG &amp; "new tanks"']
    assert [t.name for t in lpg.data[2:]] == ["&lt;img src=x onerror=alert(1)&gt;"]
    # titled with the class and the option names, markup escaped
    assert lpg.layout.title.text.endswith("Taxi — &lt;img src=x onerror=alert(1)&gt;")
    assert XSS_NAME not in lpg.layout.title.text


# ----------------------------------------------------------------------------- conventions


#: Charts with a category axis: the letters of their numeric axes.
NUMERIC_AXES = {"cost_per_km": "y", "co2_per_km": "y", "tornado": "x"}


def test_every_axis_title_carries_a_unit_and_money_the_currency(figures):
    unit = re.compile(r"\[[^\]]+\]")
    for key, fig in figures.items():
        layout = fig.to_plotly_json()["layout"]
        titles = [ax.get("title", {}).get("text") for name, ax in layout.items()
                  if re.fullmatch(r"[xy]axis\d*", name)]
        titled = [t for t in titles if t]
        assert titled, key
        for t in titled:
            assert unit.search(t), f"{key}: axis title {t!r} has no unit"
        # every numeric axis is titled: both, except the category axis of bar charts
        for letter in NUMERIC_AXES.get(key, "xy"):
            assert any(layout[n].get("title", {}).get("text") for n in layout
                       if n.startswith(f"{letter}axis")), (key, letter)
    for key in ("cost_per_km", "cash_flow", "tornado", "monte_carlo"):
        text = " ".join(all_strings(figures[key].to_plotly_json()["layout"]))
        assert "[XCU" in text, key
    assert figures["efficiency_map"].data[0].colorbar.title.text == "brake efficiency [%]"


def test_hover_gives_units(figures):
    expected = {"cost_per_km": "XCU/km", "co2_per_km": "g/km", "nox_monthly": "g/km",
                "energy_density": "MJ/L", "cash_flow": "XCU|years", "efficiency_map": "rpm",
                "tornado": "XCU", "monte_carlo": "XCU", "flame": " K|ppm"}
    for key, unit in expected.items():
        templates = [t.hovertemplate for t in figures[key].data
                     if t.legendgroup and t.legendgroup.startswith("candidate:")]
        assert templates and all(re.search(unit, t) for t in templates), key


def test_a_candidate_keeps_its_colour_in_every_chart(result, figures):
    colours = result.colours()
    seen = {c: 0 for c in colours}
    for key, fig in figures.items():
        for cand, colour in colours.items():
            for trace in candidate_traces(fig, cand):
                assert trace_colour(trace) == colour, (key, cand)
                seen[cand] += 1
    # every candidate is drawn somewhere, and in several charts
    assert all(n >= 6 for n in seen.values()), seen
    assert len(set(colours.values())) == len(colours)


def test_markup_in_user_text_is_escaped(figures):
    escaped = "&lt;img src=x onerror=alert(1)&gt;"
    for key, fig in figures.items():
        strings = all_strings(fig.to_plotly_json())
        for s in strings:
            # our own templates use <br> and <extra>; no user markup may survive
            for tag in ("<img", "<i>", "<b>", "<map>"):
                assert tag not in s, (key, s)
        if key not in ("efficiency_map",):
            assert any(escaped in s for s in strings), key
    names = [t.name for t in figures["cost_per_km"].data if t.showlegend]
    assert escaped in names
    assert 'CNG &amp; "new tanks"' in names  # & escaped, quotes kept (Plotly shows &quot;)
    assert charts.escape(XSS_NAME) == escaped


def test_empty_tables_give_a_figure_that_says_so(result):
    empty = {name: pd.DataFrame(columns=list(COLUMNS[name]))
             for name in ("per_km", "nox_monthly", "storage", "cash_flows", "tornado",
                          "monte_carlo", "flame")}
    bare = StudyResult(**{**result.__dict__, **empty})
    figs = charts.all_figures(bare)
    assert set(figs) == {"cost_per_km", "co2_per_km", "nox_monthly", "energy_density",
                         "cash_flow", "tornado", "monte_carlo", "flame"}
    for key, fig in figs.items():
        assert len(fig.data) == 0, key
        assert "no rows" in fig.layout.annotations[0].text


def typed_array(obj):
    """Plotly's base64 typed-array form ({"dtype", "bdata", "shape"}) as a numpy array."""
    if isinstance(obj, dict) and "bdata" in obj and "dtype" in obj:
        values = np.frombuffer(base64.b64decode(obj["bdata"]), dtype=obj["dtype"])
        shape = obj.get("shape")
        if shape:
            values = values.reshape([int(n) for n in str(shape).split(",")])
        return values
    return obj


def same_figure(a, b) -> bool:
    """Equal figure trees, arrays compared by value (plotly keeps tuples, lists or arrays)."""
    a, b = typed_array(a), typed_array(b)
    if isinstance(a, dict) or isinstance(b, dict):
        return (isinstance(a, dict) and isinstance(b, dict) and a.keys() == b.keys()
                and all(same_figure(a[k], b[k]) for k in a))
    if isinstance(a, list | tuple | np.ndarray) or isinstance(b, list | tuple | np.ndarray):
        a, b = list(a), list(b)
        return len(a) == len(b) and all(same_figure(x, y) for x, y in zip(a, b, strict=True))
    return a == b or (a != a and b != b)  # NaN equals NaN here


def test_the_panels_plain_dict_is_the_validated_figure(result, figures):
    # The panels draw figure_dict without validation; the report and these tests validate the
    # same builder's output into go.Figure. Plotly's own validator (the reference here) must
    # accept the dict unchanged: nothing coerced, added or dropped, the same template.
    for key in ("cost_per_km", "co2_per_km", "nox_monthly", "energy_density", "cash_flow",
                "tornado", "monte_carlo", "flame"):
        plain = charts.figure_dict(key, result)
        validated = go.Figure(plain)
        assert same_figure(plain, validated.to_dict()), key
        assert same_figure(figures[key].to_dict(), validated.to_dict()), key
        assert validated.layout.template.layout.paper_bgcolor == "white"  # plotly_white
