"""Notebook ergonomics: short reprs, HTML reprs, DataFrames, plots into given Axes, Result.plot.

Expected sizes are counted by hand from the scenario (rows = product of the swept sizes:
analytic); values are compared with the Dataset they come from, never with stored numbers.
"""
import numpy as np
import pytest
from matplotlib.axes import Axes
from matplotlib.figure import Figure

import optogen
from optogen import plots

BASE = """
title = "notebook test"
[absorber]
material = "Si"
thickness_um = 180
temperature_K = 300
donors_cm3 = 1e15
[light]
source = "AM1.5G"
suns = 1
[recombination]
front_S_cm_s = 10
rear_S_cm_s = 10
"""


@pytest.fixture(scope="module")
def point():
    return optogen.run(BASE)


@pytest.fixture(scope="module")
def sweep1():
    return optogen.run(BASE + '\n[sweep]\n"light.suns" = { log = [0.01, 10], points = 5 }\n', progress=False)


@pytest.fixture(scope="module")
def sweep2():
    return optogen.run(BASE + '\n[sweep]\n"light.suns" = [0.1, 1, 10]\n"absorber.temperature_K" = [280, 300, 320, 340]\n',
                       progress=False)


def test_reprs_are_short_and_name_the_run(point, sweep2):
    for res in (point, sweep2):
        text = repr(res)
        assert len(text) < 400 and "notebook test" in text
        html = res._repr_html_()
        assert html.startswith("<div>") and "notebook test" in html and "implied_voc_V" in html
    assert "light_suns (3) x absorber_temperature_K (4) = 12 points" in repr(sweep2)
    sc = sweep2.scenario
    assert len(repr(sc)) < 400 and "12 points" in repr(sc)
    assert "absorber.donors_cm3" in sc._repr_html_()


def test_to_dataframe_single_point_and_sweep(point, sweep2):
    df = point.to_dataframe()
    assert len(df) == 1
    assert df["implied_voc_V"].iloc[0] == float(point.dataset["implied_voc_V"])
    df2 = sweep2.to_dataframe()
    assert len(df2) == 3 * 4                                      # analytic: the grid size
    assert list(df2.columns[:2]) == ["light_suns", "absorber_temperature_K"]
    ds = sweep2.dataset
    # the last swept key varies fastest (C order), as in result.csv
    np.testing.assert_array_equal(df2["absorber_temperature_K"].values[:4], ds["absorber_temperature_K"].values)
    np.testing.assert_array_equal(df2["implied_voc_V"].values, ds["implied_voc_V"].values.ravel())
    assert df2["converged"].dtype == bool


def test_dataset_sel_by_underscore_names(sweep2):
    ds = sweep2.dataset
    v = ds["implied_voc_V"].sel(light_suns=1.0, absorber_temperature_K=300.0)
    assert v.ndim == 0 and np.isfinite(float(v))
    assert ds["light_suns"].attrs["scenario_key"] == "light.suns"
    for name, var in ds.variables.items():
        assert var.attrs.get("long_name"), name


def test_plot_functions_draw_into_a_given_axes_and_return_it(sweep1, sweep2, point):
    fig = Figure()
    ax = fig.subplots()
    assert plots.sweep_lines(sweep1.dataset, ax=ax) is ax
    assert ax.get_ylabel() == "implied Voc (V)"
    ax2 = Figure().subplots()
    assert plots.sweep_map(sweep2.dataset, ax=ax2) is ax2
    axes = Figure().subplots(1, 2)
    got = plots.sweep_map(sweep2.dataset, ax=axes)
    assert list(got) == list(axes)
    ax3 = Figure().subplots()
    eq, ss = point.details["equilibrium"], point.details["steady_state"]
    assert plots.band_diagram(eq.effective_gap_eV, eq.fermi_level_eV, ss.electron_qfl_eV, ss.hole_qfl_eV,
                              ax=ax3) is ax3
    new = plots.sweep_lines(sweep1.dataset)            # no ax: a new 2x2 figure, its Axes returned
    assert len(new) == 4 and all(isinstance(a, Axes) for a in new)
    assert isinstance(plots.figure_of(new), Figure)


def test_result_plot_picks_the_figure(point, sweep1, sweep2):
    ax = point.plot()
    assert isinstance(ax, Axes) and ax.get_ylabel() == "lifetime (s)"          # single point: lifetime curve
    lines = sweep1.plot()
    assert len(lines) == 4                                                      # one key: the four panels
    m = sweep2.plot()
    assert isinstance(m, np.ndarray) and m[0].get_ylabel() == "temperature (K)"  # two keys: the map
    target = Figure().subplots()
    assert point.plot("jv", ax=target) is target
    with pytest.raises(optogen.InputError, match="two swept dimensions"):
        point.plot("map")
    with pytest.raises(optogen.InputError, match="Result.plot.kind"):
        point.plot("pie")
