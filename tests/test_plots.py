"""Figures: structure, labels with units, log scales, atomic PNG writing.

Plots have no published reference; what is checked is what a reader relies on:
the axis carries the right quantity and unit (common practice: the unit in
brackets after the quantity), decades are shown on log axes, marked points sit
where the data put them (analytic), and the PNG file is a real PNG (PNG
specification, ISO/IEC 15948: the 8-byte signature).
"""
from __future__ import annotations

import os
import subprocess
import sys

import mpmath
import numpy as np
import pytest
import xarray as xr
from matplotlib.figure import Figure

from optogen import plots as _plots
from optogen.constants import k_B_eV_K
from optogen.scenario import dim_name, long_name, unit_of


class _FigurePlots:
    """optogen.plots, with each plot function's returned Axes turned into its Figure (the
    structure checks below look at the whole figure); tests/test_notebook.py checks the Axes."""

    def __getattr__(self, name):
        f = getattr(_plots, name)
        if callable(f) and name not in ("key_label", "pretty_unit", "axis_label", "split_unit", "save_figure",
                                        "figure_of") and not name.startswith("_"):
            return lambda *a, **k: _plots.figure_of(f(*a, **k))
        return f


plots = _FigurePlots()


def _coord(key, values):
    """A swept key's coordinate as the pipeline writes it: underscore name, CF attributes."""
    values = np.asarray(values, float)
    return dim_name(key), values, {"long_name": long_name(key), "units": unit_of(key), "scenario_key": key}
from optogen.errors import InputError

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), section 5.2


# ---------------------------------------------------------------- fixtures

def _sweep_1d(key="light.suns", values=None, units=None):
    x = np.logspace(-3, 1, 21) if values is None else np.asarray(values, float)
    dn = 1e14 * x / x[0] ** 0.5
    data = {
        "implied_voc_V": 0.60 + 0.0257 * np.log10(x / x[0]),
        "tau_eff_s": 1e-3 / (1 + x),
        "delta_n_cm3": dn,
        "np_over_ni2": 1e8 * (x / x[0]),
    }
    dim, x, attrs = _coord(key, x)
    return xr.Dataset({k: (dim, v) for k, v in data.items()}, coords={dim: (dim, x, attrs)})


def _sweep_2d(ratio=None):
    suns = np.logspace(-3, 1, 17)
    temp = np.linspace(250.0, 350.0, 11)
    s, t = np.meshgrid(suns, temp, indexing="ij")
    log_ratio = 0.05 + 0.8 * np.log10(s / suns[0]) + (350.0 - t) / 400.0
    r = 10.0 ** log_ratio if ratio is None else ratio
    dims = ("light_suns", "absorber_temperature_K")
    return xr.Dataset(
        {"np_over_ni2": (dims, r),
         "splitting_eV": (dims, k_B_eV_K * t * np.log(10.0) * log_ratio),
         "implied_voc_V": (dims, k_B_eV_K * t * np.log(10.0) * log_ratio)},
        coords={"light_suns": _coord("light.suns", suns), "absorber_temperature_K": _coord("absorber.temperature_K", temp)})


def _detector_ds():
    temp = np.linspace(60.0, 250.0, 40)
    ni = 1e14 * np.exp(-0.12 / (2 * k_B_eV_K) * (1 / temp - 1 / 200.0))
    n0 = 5e14 + ni**2 / 5e14
    p0 = ni**2 / n0
    dn = 3e13
    dim = "absorber_temperature_K"
    return xr.Dataset(
        {"n0_cm3": (dim, n0), "p0_cm3": (dim, p0), "n_cm3": (dim, n0 + dn), "p_cm3": (dim, p0 + dn),
         "thermal_generation_cm3_s": (dim, p0 / 1e-6),
         "background_generation_cm3_s": (dim, np.full_like(temp, 1e18)),
         "conductivity_contrast": (dim, 3 * dn / n0)},
        coords={dim: _coord("absorber.temperature_K", temp)})


def _main_axes(fig):
    """Axes that are not colour bars."""
    return [ax for ax in fig.axes if ax.get_label() != "<colorbar>"]


# ---------------------------------------------------------------- labels

@pytest.mark.parametrize("key, label", [
    ("light.suns", "light: suns"),                           # brief's example (common practice)
    ("absorber.temperature_K", "absorber temperature (K)"),  # brief's example
    ("absorber.donors_cm3", "absorber donors (cm^-3)"),       # brief's example
    ("recombination.front_J0_fA_cm2", "recombination front J0 (fA cm^-2)"),
    ("recombination.front_S_cm_s", "recombination front S (cm s^-1)"),
    ("generation_cm3_s", "generation (cm^-3 s^-1)"),
    ("detector.responsivity_A_W", "detector responsivity (A W^-1)"),
    ("background.field_of_view_deg", "background field of view (degree)"),
])
def test_key_label_turns_unit_suffix_into_unit(key, label):
    assert plots.key_label(key) == label


@pytest.mark.parametrize("raw, shown", [
    ("cm^-3 s^-1", "cm^-3 s^-1"),  # the one spelling: UDUNITS symbols, a caret before each exponent
    ("W m-2", "W m^-2"),
    ("cm⁻³ s⁻¹", "cm^-3 s^-1"),
    ("um", "um"),
    ("µm", "um"),
    ("Ω cm", "ohm cm"),
    ("A Hz^(-1/2)", "A Hz^(-1/2)"),
    ("K", "K"),
])
def test_pretty_unit(raw, shown):
    assert plots.pretty_unit(raw) == shown


def test_axis_label_uses_units_attribute_for_unsuffixed_name():
    assert plots.axis_label("light.photon_count", {"units": "cm^-2 s^-1"}) == "light photon count (cm^-2 s^-1)"


# ---------------------------------------------------------------- sweeps

def test_sweep_lines_four_panels_with_units_and_log_scales():
    fig = plots.sweep_lines(_sweep_1d())
    assert isinstance(fig, Figure)
    axes = fig.axes
    assert len(axes) == 4
    # panel order: implied Voc (linear), tau_eff, Δn, n·p/n_i² (log; they span decades)
    assert [ax.get_yscale() for ax in axes] == ["linear", "log", "log", "log"]
    assert axes[0].get_ylabel() == "implied Voc (V)"
    assert axes[1].get_ylabel() == "effective lifetime (s)"
    assert "(cm^-3)" in axes[2].get_ylabel()
    assert "n_i,eff" in axes[3].get_ylabel()
    # 1e-3..10 suns is four decades: log x; the bottom row carries the x label
    assert all(ax.get_xscale() == "log" for ax in axes)
    assert axes[2].get_xlabel() == axes[3].get_xlabel() == "incident irradiance in suns (kW m^-2)"
    # plotted values are the data (no hidden rescaling)
    np.testing.assert_array_equal(axes[0].lines[0].get_ydata(), _sweep_1d()["implied_voc_V"].values)


def test_sweep_lines_linear_temperature_axis():
    ds = _sweep_1d("absorber.temperature_K", np.linspace(250, 350, 11))
    fig = plots.sweep_lines(ds)
    # 250..350 K spans far less than two decades: linear axis
    assert fig.axes[2].get_xscale() == "linear"
    assert fig.axes[2].get_xlabel() == "temperature (K)"


def test_sweep_lines_names_a_missing_variable():
    fig = plots.sweep_lines(_sweep_1d().drop_vars("tau_eff_s"))
    assert len(fig.axes) == 4
    assert any("tau_eff_s not in this result" in t.get_text() for t in fig.axes[1].texts)


def test_sweep_lines_rejects_two_dimensions():
    with pytest.raises(InputError, match="sweep_map"):
        plots.sweep_lines(_sweep_2d())


def test_sweep_map_two_panels_with_colour_bars_and_labelled_contours():
    fig = plots.sweep_map(_sweep_2d())
    main = _main_axes(fig)
    assert len(main) == 2 and len(fig.axes) == 4  # two maps + two colour bars
    left, right = main
    assert left.get_xlabel() == "incident irradiance in suns (kW m^-2)" and left.get_xscale() == "log"
    assert left.get_ylabel() == "temperature (K)" and left.get_yscale() == "linear"
    assert "mass action" in left.get_title() and left.get_title().startswith("log10(n·p / n_i,eff^2)")
    assert right.get_title() == "implied Voc"
    cbar_labels = [ax.get_ylabel() for ax in fig.axes if ax.get_label() == "<colorbar>"]
    assert any("0 = mass action" in label for label in cbar_labels)
    assert "implied Voc (V)" in cbar_labels
    labels = [t.get_text() for t in left.texts]
    # data span log10 = 0.05 ... 3.5: the n·p = 2 n_i,eff² contour (log10 2 = 0.301, analytic) is labelled
    assert "n·p = 2 n_i,eff²" in labels
    assert len(labels) >= 3


def test_sweep_map_labels_zero_decade_contour_when_crossed():
    suns = np.logspace(-3, 1, 17)
    temp = np.linspace(250.0, 350.0, 11)
    log_ratio = np.linspace(-2.0, 4.0, suns.size)[:, None] + 0 * temp
    ds = _sweep_2d(ratio=10.0 ** log_ratio).drop_vars("splitting_eV")
    fig = plots.sweep_map(ds, second=None)
    assert len(_main_axes(fig)) == 1
    assert "0: mass action" in [t.get_text() for t in fig.axes[0].texts]


def test_sweep_map_overflowed_ratio_recovered_from_splitting():
    # n·p/n_i,eff² = exp(Δμ/kT) (analytic); at 20 K a 1 eV splitting overflows float64
    dims = ("light_suns", "absorber_temperature_K")
    temp = np.array([20.0, 30.0])
    split = np.array([[1.0, 1.0], [1.2, 1.2]])
    ds = xr.Dataset({"np_over_ni2": (dims, np.full((2, 2), np.inf)), "splitting_eV": (dims, split)},
                    coords={"light_suns": _coord("light.suns", [1.0, 2.0]), "absorber_temperature_K": _coord("absorber.temperature_K", temp)})
    got = plots._log10_field(ds, "np_over_ni2")
    k = mpmath.mpf(k_B_eV_K)
    for i in range(2):
        for j in range(2):
            want = mpmath.log10(mpmath.exp(mpmath.mpf(split[i, j]) / (k * mpmath.mpf(temp[j]))))  # mpmath reference
            assert got[i, j] == pytest.approx(float(want), rel=1e-12)
    fig = plots.sweep_map(ds, second=None)
    assert "no value" not in [t.get_text() for ax in fig.axes if ax.get_legend() for t in ax.get_legend().get_texts()]


def test_sweep_map_marks_missing_points():
    ds = _sweep_2d()
    ds["np_over_ni2"][2, 3] = np.nan
    ds = ds.drop_vars("splitting_eV")
    fig = plots.sweep_map(ds, second=None)
    legend = fig.axes[0].get_legend()
    assert legend is not None and "no value" in [t.get_text() for t in legend.get_texts()]


def test_sweep_map_rejects_one_dimension_and_unknown_variable():
    with pytest.raises(InputError, match="sweep_lines"):
        plots.sweep_map(_sweep_1d())
    with pytest.raises(InputError, match="plots.sweep_map.var"):
        plots.sweep_map(_sweep_2d(), var="nonsense")


# ---------------------------------------------------------------- single point

def test_lifetime_curve_log_log_and_operating_point():
    dn = np.logspace(12, 17, 51)
    srh = np.full_like(dn, 2e-3)
    auger = 1.0 / (1.66e-30 * (1.5e15 + dn) ** 2)
    eff = 1.0 / (1.0 / srh + 1.0 / auger)
    tau = {"eff": eff, "srh": srh, "auger": auger, "surface": np.full_like(dn, np.inf)}
    fig = plots.lifetime_curve(dn, tau, operating_dn=dn[20])
    assert len(fig.axes) == 1
    ax = fig.axes[0]
    assert ax.get_xscale() == ax.get_yscale() == "log"
    assert ax.get_xlabel() == "excess carrier density Δn (cm^-3)" and ax.get_ylabel() == "lifetime (s)"
    names = [t.get_text() for t in ax.get_legend().get_texts()]
    assert "SRH" in names and "Auger" in names
    assert "surfaces" not in names  # an infinite lifetime (no mechanism) is not drawn
    marker = [ln for ln in ax.lines if ln.get_marker() == "o"][0]
    # at a grid point the log-log interpolation returns the grid value (analytic)
    assert marker.get_ydata()[0] == pytest.approx(eff[20], rel=1e-12)


def test_generation_profile_depth_in_um_and_average():
    depth = np.linspace(0, 160e-4, 81)
    g = np.full_like(depth, 2.0e19)
    fig = plots.generation_profile(depth, g)
    ax = fig.axes[0]
    assert len(fig.axes) == 1 and ax.get_yscale() == "log"
    assert "(um)" in ax.get_xlabel() and ax.get_ylabel() == "generation rate G (cm^-3 s^-1)"
    np.testing.assert_allclose(ax.lines[0].get_xdata(), depth * 1e4)  # 1 cm = 1e4 µm (analytic)
    # the depth average of a uniform profile is the profile itself (analytic)
    assert ax.lines[1].get_ydata()[0] == pytest.approx(2.0e19, rel=1e-12)


def test_generation_profile_switches_to_log_depth_for_surface_absorption():
    # absorption depth 10 nm in 200 µm (violet light in Si, order of magnitude, common practice)
    depth = np.concatenate([[0.0], np.logspace(-7, np.log10(200e-4), 200)])
    fig = plots.generation_profile(depth, 1e21 * np.exp(-1e6 * depth))
    ax = fig.axes[0]
    assert ax.get_xscale() == "log" and "log scale" in ax.get_xlabel()
    assert ax.get_xlim()[1] == pytest.approx(200.0)  # the full thickness in µm stays visible


def test_implied_jv_finds_maximum_power_point_and_annotates_ff():
    v = np.linspace(0.0, 0.72, 721)
    vt = k_B_eV_K * 298.15
    j = 40.0 - 40.0 * np.exp((v - 0.715) / vt)  # ideal diode, Voc = 0.715 V at Jsc = 40 (analytic)
    fig = plots.implied_jv(v, j, voc=0.715, ff=0.849)
    assert len(fig.axes) == 2  # current and power density (twin axis)
    ax, ax2 = fig.axes
    assert ax.get_ylabel() == "current density J (mA cm^-2)" and ax.get_xlabel() == "implied voltage (V)"
    assert ax2.get_ylabel() == "power density (mW cm^-2)"
    i = int(np.argmax(v * j))
    marker = [ln for ln in ax.lines if ln.get_marker() == "o"][0]
    assert marker.get_xdata()[0] == v[i] and marker.get_ydata()[0] == j[i]
    text = "\n".join(t.get_text() for t in ax.texts)
    assert "implied FF = 84.9 %" in text and "implied Voc = 0.715 V" in text


def test_band_diagram_levels_and_splitting():
    fig = plots.band_diagram(1.12, 0.86, 1.098, 0.41, intrinsic_level_eV=0.56)
    ax = fig.axes[0]
    assert len(fig.axes) == 1 and ax.get_ylabel().endswith("(eV)")
    # the level lines start at the left edge (x = 0); leader lines to the labels do not
    heights = sorted(round(float(ln.get_ydata()[0]), 6) for ln in ax.lines if ln.get_xdata()[0] == 0.0)
    assert heights == [0.0, 0.41, 0.56, 0.86, 1.098, 1.12]
    texts = [t.get_text() for t in ax.texts]
    assert any("Δμ = 0.688 eV" in t for t in texts)  # 1.098 - 0.410 (analytic)
    # every level is inside the view
    lo, hi = ax.get_ylim()
    assert lo < 0.0 and hi > 1.12


def test_band_diagram_keeps_close_labels_apart():
    # E_Fn 10 meV above dark E_F (low injection): labels must not sit on top of each other
    fig = plots.band_diagram(1.12, 0.86, 0.87, 0.70)
    ax = fig.axes[0]
    ys = sorted(t.get_position()[1] for t in ax.texts if " eV" in t.get_text() and "Δμ" not in t.get_text())
    assert len(ys) == 5
    assert np.min(np.diff(ys)) >= 0.07 * 1.12


def test_spread_labels_preserves_order_and_gap():
    out = plots._spread_labels([0.5, 0.51, 0.0, 0.52], 0.1)
    assert list(np.argsort(out)) == [2, 0, 1, 3]
    assert np.min(np.diff(np.sort(out))) >= 0.1 - 1e-9


# ---------------------------------------------------------------- detector

def test_detector_densities_one_log_axis_four_curves():
    fig = plots.detector_densities(_detector_ds())
    ax = fig.axes[0]
    assert len(fig.axes) == 1 and ax.get_yscale() == "log" and ax.get_xscale() == "linear"
    assert ax.get_xlabel() == "temperature (K)" and ax.get_ylabel() == "carrier density (cm^-3)"
    names = [t.get_text() for t in ax.get_legend().get_texts()]
    assert len(names) == 4
    assert "electrons (majority), dark n₀" in names  # n0 = 5e14 >> p0: n-type
    assert "holes (minority), illuminated p" in names


def test_detector_densities_needs_all_four_variables():
    with pytest.raises(InputError, match="p_cm3"):
        plots.detector_densities(_detector_ds().drop_vars("p_cm3"))


def test_detector_generation_marks_crossing():
    ds = _detector_ds()
    fig = plots.detector_generation(ds, crossing=152.4)
    ax = fig.axes[0]
    assert len(fig.axes) == 1 and ax.get_yscale() == "log"
    assert ax.get_ylabel() == "generation rate (cm^-3 s^-1)"
    vertical = [ln for ln in ax.lines if np.all(np.asarray(ln.get_xdata()) == 152.4)]
    assert len(vertical) == 1
    assert any("152.4 K" in t.get_text() for t in ax.texts)
    names = [t.get_text() for t in ax.get_legend().get_texts()]
    assert names[:2] == ["thermal (dark)", "background scene"]  # optical absent: not drawn
    assert "background-limited" in names


def test_detector_generation_without_crossing_has_no_marker():
    ax = plots.detector_generation(_detector_ds(), crossing=None).axes[0]
    assert not ax.texts
    assert all(len(np.unique(ln.get_xdata())) > 1 for ln in ax.lines)


def test_detector_contrast_log_axis_with_label():
    fig = plots.detector_contrast(_detector_ds())
    ax = fig.axes[0]
    assert len(fig.axes) == 1 and ax.get_yscale() == "log"
    assert ax.get_ylabel() == "conductivity contrast Δσ/σ0" and ax.get_xlabel() == "temperature (K)"


def test_detector_power_sweep_uses_log_x():
    power = np.logspace(-9, -3, 13)
    dim = "light_power_W"
    ds = xr.Dataset({"conductivity_contrast": (dim, power * 1e3)}, coords={dim: _coord("light.power_W", power)})
    ax = plots.detector_contrast(ds).axes[0]
    assert ax.get_xscale() == "log" and ax.get_xlabel() == "light power (W)"


# ---------------------------------------------------------------- depth profile

def test_depth_profile_panels():
    depth = np.linspace(0.0, 180e-4, 101)
    g = 1e21 * np.exp(-1e3 * depth)
    dn = 1e15 * (1.0 + np.cos(depth / 180e-4))
    efn = 0.86 + 0.0257 * np.log1p(dn / 1.5e15)
    efp = 0.86 - 0.0257 * np.log1p(dn / 6.7e4)
    fig = plots.depth_profile(depth, dn, g, efn, efp, bandgap_eV=1.12)
    assert len(fig.axes) == 3
    top, mid, bottom = fig.axes
    assert top.get_yscale() == "log" and "(cm^-3 s^-1)" in top.get_ylabel()
    assert "cm^-3" in mid.get_ylabel() and mid.get_ylabel().startswith("Δn")
    assert bottom.get_ylabel().endswith("(eV)") and "um" in bottom.get_xlabel()
    # one shared depth axis
    assert top.get_shared_x_axes().joined(top, bottom)
    # Δn spans less than a decade: linear, scaled by 10^15 in the label; values unchanged otherwise
    assert mid.get_ylabel() == "Δn (10^15 cm^-3)"
    np.testing.assert_allclose(mid.lines[0].get_ydata() * 1e15, dn, rtol=1e-12)
    assert len(plots.depth_profile(depth, dn, g).axes) == 2


# ---------------------------------------------------------------- files, no display

def test_save_figure_writes_png_atomically(tmp_path):
    fig = plots.sweep_lines(_sweep_1d())
    out = plots.save_figure(fig, tmp_path / "sub" / "lines.png")
    data = out.read_bytes()
    assert data[:8] == PNG_SIGNATURE and len(data) > 10_000
    assert os.listdir(tmp_path / "sub") == ["lines.png"]


def test_save_figure_failure_leaves_old_file_and_no_temporary(tmp_path):
    target = tmp_path / "fig.png"
    target.write_bytes(b"old")

    class Broken(Figure):
        def savefig(self, *args, **kwargs):
            args[0].write(b"partial")
            raise RuntimeError("disk full")

    with pytest.raises(RuntimeError):
        _plots.save_figure(Broken(), target)
    assert target.read_bytes() == b"old"
    assert os.listdir(tmp_path) == ["fig.png"]


def test_no_pyplot_and_no_display_needed(tmp_path):
    code = (
        "import sys, numpy as np\n"
        "from optogen import plots\n"
        "fig = plots.band_diagram(1.12, 0.86, 1.0, 0.4)\n"
        f"plots.save_figure(fig, {str(tmp_path / 'b.png')!r})\n"
        "assert 'matplotlib.pyplot' not in sys.modules\n"
    )
    env = {k: v for k, v in os.environ.items() if k not in ("DISPLAY", "MPLBACKEND", "WAYLAND_DISPLAY")}
    run = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True)
    assert run.returncode == 0, run.stderr
    assert (tmp_path / "b.png").read_bytes()[:8] == PNG_SIGNATURE


# ------------------------------------------------- robustness: one-value sweeps and missing values

def test_sweep_lines_draws_a_one_value_sweep_as_one_point():
    fig = plots.sweep_lines(_sweep_1d(values=[1.0]))
    ax = fig.axes[0]
    x, y = ax.lines[0].get_data()
    assert list(x) == [1.0] and y[0] == pytest.approx(0.60)     # implied_voc_V at x = x[0] (fixture formula)


def test_sweep_lines_squeezes_one_value_second_key():
    ds = _sweep_1d().expand_dims({"absorber_thickness_um": [160.0]})
    fig = plots.sweep_lines(ds)
    assert fig.axes[0].lines[0].get_xdata().size == 21


def test_band_diagram_with_a_missing_level_names_it_and_draws_the_rest():
    fig = plots.band_diagram(1.17, 1.14, 1.15, float("nan"), intrinsic_level_eV=0.58)
    ax = fig.axes[0]
    lo, hi = ax.get_ylim()
    assert np.isfinite(lo) and np.isfinite(hi)
    heights = sorted(round(float(ln.get_ydata()[0]), 6) for ln in ax.lines if ln.get_xdata()[0] == 0.0)
    assert heights == [0.0, 0.58, 1.14, 1.15, 1.17]             # the hole level is left out
    assert any(t.get_text().startswith("no value:") and "E_\\mathrm{Fp}" in t.get_text() for t in ax.texts)
    assert not any("Δμ" in t.get_text() for t in ax.texts)


def test_save_figure_gives_the_umask_permissions(tmp_path):
    old = os.umask(0o022)
    try:
        out = plots.save_figure(plots.sweep_lines(_sweep_1d()), tmp_path / "f.png")
    finally:
        os.umask(old)
    assert os.stat(out).st_mode & 0o777 == 0o644                 # 0o666 & ~0o022 (POSIX creation mode)
