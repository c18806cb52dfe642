"""Matplotlib figures for single points, sweeps, detectors and depth profiles.

Every function draws into the Axes given as ``ax=`` or builds a `matplotlib.figure.Figure`
directly (no pyplot state, so nothing needs a display), and returns the Axes (an array of
Axes for a multi-panel figure); `save_figure` writes a PNG atomically.  Inputs are
plain numpy arrays or xarray objects, in the package's units (densities cm^-3,
depth cm, energies eV above the valence band edge, lifetimes s, current density
mA cm^-2, rates cm^-3 s^-1).
"""
from __future__ import annotations

import re
from pathlib import Path
from typing import Mapping

import numpy as np

from matplotlib.figure import Figure
from matplotlib.ticker import LogLocator, MaxNLocator

from .constants import k_B_eV_K
from .errors import InputError
from .scenario import UNIT_SUFFIXES as _SCENARIO_UNITS
from .scenario import label as _label
from .scenario import long_name as _long_name
from .scenario import unit_of as _unit_of

# --------------------------------------------------------------------------
# labels: the one table of names (optogen.scenario.LONG_NAMES) and the one unit spelling
# (optogen.scenario.UNIT_SUFFIXES), shared with the long_name / units attributes of the files
# --------------------------------------------------------------------------

#: unit suffix of a key -> unit as written on an axis (longest suffix tried first)
UNIT_SUFFIXES: dict[str, str] = {"_" + k: unit for k, unit in _SCENARIO_UNITS.items()}
_SUFFIX_ORDER = sorted(UNIT_SUFFIXES, key=len, reverse=True)

_ENERGY_LABEL = r"energy above $E_\mathrm{v}$ (eV)"


def split_unit(key: str) -> tuple[str, str | None]:
    """Split a key into its name and its unit.

    Parameters
    ----------
    key : str
        A result name or scenario key, e.g. "temperature_K" [-].

    Returns
    -------
    name : str
        The key without its unit suffix, e.g. "temperature" [-].
    unit : str or None
        The unit from `UNIT_SUFFIXES`, e.g. "K"; None without a unit suffix [-].
    """
    for suffix in _SUFFIX_ORDER:
        if key.endswith(suffix) and len(key) > len(suffix):
            return key[: -len(suffix)], UNIT_SUFFIXES[suffix]
    return key, None


def key_label(key: str) -> str:
    """A readable label for a dotted scenario key or a result name, from its suffix alone.

    Parameters
    ----------
    key : str
        A dotted scenario key or a result name [-].

    Returns
    -------
    str
        "light.suns" -> "light suns (kW m^-2)"; "absorber.donors_cm3" -> "absorber donors
        (cm^-3)"; "tau_eff_s" -> "tau eff (s)"; "light.photon_count" -> "light: photon
        count" [-].
    """
    name, unit = split_unit(str(key))
    parts = [p.replace("_", " ") for p in name.split(".")]
    if unit is None:
        return ": ".join(parts) if len(parts) > 1 else parts[0]
    return f"{' '.join(parts)} ({unit})"


_LEGACY = ((r"⁻", "-"), (r"µ|μ", "u"), (r"Ω", "ohm"))


def pretty_unit(units: str) -> str:
    """A units string in the one spelling: a caret before every exponent.

    Superscript digits and minus signs become plain ones, an exponent written without a caret
    gets one ("s-1" -> "s^-1"), "**" becomes "^", "µm" becomes "um" and "Ω" "ohm"; a spelling
    already right is returned as it is.

    Parameters
    ----------
    units : str
        A units string in any of those spellings [-].

    Returns
    -------
    str
        The caret spelling, e.g. "cm^-3 s^-1" [-].
    """
    text = str(units)
    sup = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹", "0123456789")
    text = text.translate(sup)
    for pat, rep in _LEGACY:
        text = re.sub(pat, rep, text)
    text = text.replace("**", "^")
    return re.sub(r"(?<=[A-Za-z])(?<!\^)(-?\d+)\b", r"^\1", text)


def axis_label(name: str, attrs: Mapping | None = None) -> str:
    """Axis label of a coordinate or variable: its name from the shared table, then its unit.

    A Dataset variable's own ``long_name`` and ``units`` attributes win; a coordinate's
    ``scenario_key`` finds the table entry of its dotted key.

    Parameters
    ----------
    name : str
        The coordinate or variable name [-].
    attrs : mapping, optional
        Its attributes [-].

    Returns
    -------
    str
        "long name (unit)" [-].
    """
    attrs = dict(attrs or {})
    name = str(attrs.get("scenario_key", name))
    if "long_name" in attrs or "units" in attrs:
        text = str(attrs.get("long_name", _long_name(name)))
        units = attrs.get("units", _unit_of(name))
        return f"{text} ({pretty_unit(units)})" if units not in (None, "", "1") else text
    return _label(name)


def _sci(value: float, digits: int = 2) -> str:
    """Mathtext scientific notation: 1.23e15 -> $1.2\\times10^{15}$."""
    value = float(value)
    if not np.isfinite(value) or value == 0:
        return f"{value:g}"
    exp = int(np.floor(np.log10(abs(value))))
    mant = value / 10.0**exp
    if round(mant, digits - 1) == 1.0:
        return rf"$10^{{{exp}}}$"
    return rf"${mant:.{digits - 1}f}\times10^{{{exp}}}$"


def _number(value) -> str:
    """Plain digits for everyday magnitudes, scientific notation otherwise."""
    value = float(value)
    return f"{value:.4g}" if 1e-2 <= abs(value) < 1e5 or value == 0 else _sci(value, 3)


# --------------------------------------------------------------------------
# small helpers
# --------------------------------------------------------------------------

def _figure(width: float, height: float) -> Figure:
    return Figure(figsize=(width, height), dpi=110, layout="constrained")


def _one_axes(ax, width: float, height: float):
    """(figure, axes): a new figure of the given size with one axes when `ax` is None, else `ax`'s."""
    if ax is None:
        fig = _figure(width, height)
        return fig, fig.subplots()
    return figure_of(ax), ax


def _several_axes(ax, n: int, width: float, height: float, **subplots):
    """(figure, n axes as an array): a new figure when `ax` is None, else the n Axes given."""
    if ax is None:
        fig = _figure(width, height)
        return fig, np.atleast_1d(fig.subplots(**subplots)).ravel()
    axes = np.atleast_1d(np.asarray(ax, dtype=object)).ravel()
    if axes.size != n:
        raise InputError("ax", f"{axes.size} Axes", f"one Axes per panel: {n} here")
    return figure_of(axes[0]), axes


def figure_of(obj) -> Figure:
    """The Figure behind what a plot function returns.

    Parameters
    ----------
    obj : Figure, Axes or sequence of Axes
        A plot function's return value.

    Returns
    -------
    matplotlib.figure.Figure
        The figure.
    """
    if isinstance(obj, Figure):
        return obj
    if isinstance(obj, (list, tuple, np.ndarray)):
        obj = np.ravel(np.asarray(obj, dtype=object))[0]
    fig = obj.figure
    while not isinstance(fig, Figure):          # an Axes inside a SubFigure
        fig = fig.figure
    return fig


def _spans_decades(values, decades: float = 2.0) -> bool:
    """True where all values are finite and positive and max/min exceeds 10**decades."""
    v = np.asarray(values, dtype=float).ravel()
    v = v[np.isfinite(v)]
    return v.size > 1 and bool(np.all(v > 0)) and v.max() > v.min() * 10.0**decades


def _positive(values) -> np.ndarray:
    """Float copy with non-positive and non-finite entries set to NaN (left out of log plots)."""
    v = np.array(values, dtype=float)
    v[~(np.isfinite(v) & (v > 0))] = np.nan
    return v


def _log_axis(ax, axis: str = "y") -> None:
    getattr(ax, f"set_{axis}scale")("log")
    getattr(ax, f"{axis}axis").set_major_locator(LogLocator(base=10, numticks=8))


def _one_dim(ds, what: str):
    """The single swept dimension of a Dataset: the one with 2 or more points (other
    dimensions of size 1 are squeezed), or, when every dimension has one point, the first
    (a one-value sweep plots as a single point)."""
    big = [d for d in ds.dims if ds.sizes[d] > 1]
    if len(big) > 1 or not ds.dims:
        raise InputError(what, dict(ds.sizes), "a Dataset with one swept dimension",
                         "use sweep_map for two dimensions")
    dim = big[0] if big else next(iter(ds.dims))
    others = [d for d in ds.dims if d != dim]
    return (ds.squeeze(others, drop=False) if others else ds), dim


def _x_setup(ax, ds, dim) -> np.ndarray:
    x = np.asarray(ds[dim].values, dtype=float)
    ax.set_xlabel(axis_label(dim, ds[dim].attrs))
    if _spans_decades(x):
        _log_axis(ax, "x")
    return x


def _mark_missing(ax, x, y) -> None:
    """Grey crosses on the x axis where a value is undefined, so a gap is not mistaken for data."""
    bad = ~np.isfinite(np.asarray(y, dtype=float))
    if np.any(bad):
        ax.plot(np.asarray(x)[bad], np.zeros(bad.sum()), "x", color="0.5", clip_on=False,
                transform=ax.get_xaxis_transform(), label="no value")


# --------------------------------------------------------------------------
# sweeps
# --------------------------------------------------------------------------

_LINE_PANELS = (("implied_voc_V", False), ("tau_eff_s", True), ("delta_n_cm3", True), ("np_over_ni2", True))
_LOG_VARS = {"np_over_ni2", "conductivity_contrast"}


def sweep_lines(ds, ax=None, panels=None):
    """2x2 panels of implied Voc, tau_eff, Δn and n·p/n_i,eff² over one swept key.

    A missing variable leaves its panel saying so.

    Parameters
    ----------
    ds : xarray.Dataset
        One swept dimension (named by its dotted scenario key, coordinate attrs "units") and
        variables implied_voc_V [V], tau_eff_s [s], delta_n_cm3 [cm^-3], np_over_ni2 [-].
    ax : Axes or sequence of Axes, optional
        None (a new 2x2 figure), one Axes (draws the first panel, implied Voc, or the first
        of `panels`) or a sequence of Axes, one per panel.
    panels : sequence of str, optional
        Variable names to draw instead of the four [-].

    Returns
    -------
    Axes or ndarray of Axes
        The Axes (an array of them for several panels).
    """
    ds, dim = _one_dim(ds, "plots.sweep_lines")
    chosen = _LINE_PANELS if panels is None else tuple((v, v in _LOG_VARS or v.endswith(("_cm3", "_s")))
                                                       for v in panels)
    single = ax is not None and not isinstance(ax, (list, tuple, np.ndarray))
    if single:                                   # one Axes: the first panel only
        chosen = chosen[:1]
    if ax is None and panels is None:
        fig, axes = _several_axes(None, 4, 9.0, 6.4, nrows=2, ncols=2, sharex=True)
    else:
        fig, axes = _several_axes([ax] if single else ax, len(chosen), 4.6 * len(chosen) + 0.4, 3.6,
                                  ncols=len(chosen))
    for ax, (var, log) in zip(axes, chosen):
        x = _x_setup(ax, ds, dim)
        ax.set_ylabel(axis_label(var, ds[var].attrs if var in ds else None))
        if var not in ds:
            ax.text(0.5, 0.5, f"{var} not in this result", transform=ax.transAxes,
                    ha="center", va="center", color="0.4")
            continue
        y = np.asarray(ds[var].values, dtype=float)
        if log:
            _log_axis(ax, "y")
            y = _positive(y)
        ax.plot(x, y, "-o", ms=3, lw=1.6, color="C0")
        _mark_missing(ax, x, y)
        if var == "np_over_ni2":
            ax.axhline(1.0, color="0.4", ls=":", lw=1)
            ax.text(0.02, 1.0, " 1 = mass action\n", transform=ax.get_yaxis_transform(), color="0.35",
                    fontsize=8, va="bottom")
            ax.set_ylim(bottom=0.3)
        ax.grid(True, which="major", alpha=0.3)
    if len(axes) == 4 and panels is None and not single:
        for ax in axes[:2]:
            ax.set_xlabel("")
        fig.suptitle(f"Sweep over {axis_label(dim, ds[dim].attrs).split(' (')[0]}")
    return axes[0] if single else axes


def _log10_field(ds, var: str) -> np.ndarray:
    """log10 of a variable; for np_over_ni2 from the splitting where the ratio overflowed.

    n·p/n_i,eff² = exp(Δμ/kT) (analytic), so log10 = splitting_eV / (kT ln 10).
    """
    values = np.asarray(ds[var].values, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.where(values > 0, np.log10(np.where(values > 0, values, 1.0)), np.nan)
    if var == "np_over_ni2" and "splitting_eV" in ds:
        temp = None
        for name in ("absorber_temperature_K", "absorber.temperature_K", "temperature_K"):
            if name in ds.coords or name in ds:
                temp = ds[name]
                break
        if temp is not None:
            split = ds["splitting_eV"]
            from_split = np.asarray((split / (k_B_eV_K * temp * np.log(10.0))).transpose(*ds[var].dims).values,
                                    dtype=float)
            out = np.where(np.isfinite(out) & np.isfinite(values), out, from_split)
    return out


def _map_panel(ax, ds, var, xdim, ydim, log: bool, cmap: str, mass_action: bool = False):
    z = _log10_field(ds, var) if log else np.asarray(ds[var].values, dtype=float)
    z = np.asarray(ds[var].copy(data=z).transpose(ydim, xdim).values, dtype=float)
    x = np.asarray(ds[xdim].values, dtype=float)
    y = np.asarray(ds[ydim].values, dtype=float)
    ax.set_xlabel(axis_label(xdim, ds[xdim].attrs))
    ax.set_ylabel(axis_label(ydim, ds[ydim].attrs))
    if _spans_decades(x):
        _log_axis(ax, "x")
    if _spans_decades(y):
        _log_axis(ax, "y")
    finite = np.isfinite(z)
    if not finite.any():
        ax.text(0.5, 0.5, f"{var}: no finite values", transform=ax.transAxes, ha="center")
        return None
    lo, hi = float(z[finite].min()), float(z[finite].max())
    if hi - lo < 1e-12:
        hi = lo + (1.0 if log else max(abs(lo) * 1e-3, 1e-6))
    fill_levels = MaxNLocator(nbins=24).tick_values(lo, hi)
    filled = ax.contourf(x, y, np.ma.masked_invalid(z), levels=fill_levels, cmap=cmap, extend="neither")
    line_levels = [v for v in MaxNLocator(nbins=7, integer=log).tick_values(lo, hi) if lo < v < hi]
    fmt = {v: (f"{v:g}" if log else f"{v:.3g}") for v in line_levels}
    if log and mass_action:
        # n·p = n_i,eff² (0 decades) and n·p = 2 n_i,eff² mark where mass action stops holding
        for level, text in ((0.0, "0: mass action"), (float(np.log10(2.0)), "n·p = 2 n_i,eff²")):
            if lo < level < hi:
                fmt[level] = text
        line_levels = sorted(fmt)
    if line_levels:
        lines = ax.contour(x, y, z, levels=line_levels, colors="white", linewidths=0.9)
        ax.clabel(lines, fmt=fmt, fontsize=8, inline=True)
    if not finite.all():
        xx, yy = np.meshgrid(x, y)
        ax.plot(xx[~finite], yy[~finite], "x", color="0.3", ms=5, label="no value")
        ax.legend(loc="upper right", fontsize=8, framealpha=0.8)
    return filled


#: most grid values drawn along each axis of a map (a larger axis is drawn on every k-th value) [-]
MAP_POINTS = 600


def sweep_map(ds, var: str = "np_over_ni2", log: bool = True, *, x: str | None = None,
              second: str | None = "implied_voc_V", ax=None):
    """Filled map with labelled contours of `var` over two swept keys.

    Axes with more than two decades of positive coordinates are logarithmic; each panel gets
    a colour bar.

    Parameters
    ----------
    ds : xarray.Dataset
        Two swept dimensions.
    var : str
        Variable to map [-].
    log : bool
        Map log10 of `var` [-].
    x : str, optional
        Dimension on the horizontal axis (default the first) [-].
    second : str, optional
        A variable mapped on linear colour in a second panel (None for one panel; dropped if
        absent or equal to `var`) [-].
    ax : Axes or sequence of Axes, optional
        None (a new figure), one Axes (the `var` panel only) or two Axes (both panels).

    Returns
    -------
    Axes or ndarray of Axes
        The Axes (an array for two panels).
    """
    ds = ds.squeeze(drop=False)
    dims = [d for d in ds[var].dims if ds.sizes[d] > 1] if var in ds else []
    if var not in ds:
        raise InputError("plots.sweep_map.var", var, "a variable of the Dataset: " + ", ".join(map(str, ds.data_vars)))
    if len(dims) != 2:
        raise InputError("plots.sweep_map", dict(ds.sizes), "a Dataset with exactly two swept dimensions of 2 or more points",
                         "use sweep_lines for one dimension")
    xdim = x if x is not None else dims[0]
    if xdim not in dims:
        raise InputError("plots.sweep_map.x", x, "one of " + ", ".join(dims))
    ydim = dims[1] if xdim == dims[0] else dims[0]
    # a map cannot show more points than it has pixels: a large grid is drawn on every k-th value
    # (the data are unchanged; a streamed grid is read only at those points)
    ds = ds.isel({d: slice(None, None, -(-ds.sizes[d] // MAP_POINTS)) for d in dims})
    panels = [(var, log)]
    single = ax is not None and not isinstance(ax, (list, tuple, np.ndarray))
    if second and second != var and second in ds and not single:
        panels.append((second, False))
    fig, axes = _several_axes([ax] if single else ax, len(panels), 6.0 * len(panels) + 0.6, 4.9, ncols=len(panels))
    for ax, (name, lg) in zip(axes, panels):
        label = axis_label(name, ds[name].attrs)
        filled = _map_panel(ax, ds, name, xdim, ydim, lg, "viridis" if lg else "plasma",
                            mass_action=name == "np_over_ni2")
        if lg:
            bare = label.split(" (")[0]
            unit = label[len(bare):].strip()
            ax.set_title(f"log10({bare}){': where mass action breaks down' if name == 'np_over_ni2' else ''}",
                         fontsize=11)
            cbar_label = f"log10({bare}) {'(decades; 0 = mass action)' if name == 'np_over_ni2' else unit}"
        else:
            ax.set_title(label.split(" (")[0], fontsize=11)
            cbar_label = label
        if filled is not None:
            fig.colorbar(filled, ax=ax, label=cbar_label.strip())
    return axes[0] if single or len(axes) == 1 else axes


# --------------------------------------------------------------------------
# single point
# --------------------------------------------------------------------------

_MECHANISM_NAMES = {"eff": "τ_eff (total)", "srh": "SRH", "radiative": "radiative", "auger": "Auger",
                    "surface": "surfaces", "surfaces": "surfaces"}


def _mechanism(key: str) -> str:
    base = re.sub(r"^tau_|_s$", "", str(key))
    return _MECHANISM_NAMES.get(base.lower(), base.replace("_", " "))


def lifetime_curve(delta_n_cm3, tau: Mapping[str, np.ndarray], operating_dn=None, ax=None):
    """Effective lifetime and each mechanism's lifetime against Δn, log-log.

    Infinite lifetimes (absent mechanisms) are left out.

    Parameters
    ----------
    delta_n_cm3 : array_like
        Excess carrier densities [cm^-3].
    tau : mapping of str to array_like
        Name -> lifetime over delta_n_cm3 (a key "eff"/"tau_eff_s" is the effective
        lifetime, drawn bold; others e.g. srh, radiative, auger, surface) [s].
    operating_dn : float, optional
        Δn of the operating point, marked [cm^-3].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    dn = np.asarray(delta_n_cm3, dtype=float)
    fig, ax = _one_axes(ax, 6.4, 4.6)
    _log_axis(ax, "x")
    _log_axis(ax, "y")
    eff_key = next((k for k in tau if re.sub(r"^tau_|_s$", "", k).lower() == "eff"), None)
    styles = iter([("C0", "--"), ("C1", "-."), ("C2", ":"), ("C3", "--"), ("C4", "-."), ("C5", ":")])
    finite_eff = None
    for key, values in tau.items():
        t = _positive(np.broadcast_to(np.asarray(values, dtype=float), dn.shape))
        if not np.isfinite(t).any():
            continue
        if key == eff_key:
            ax.plot(dn, t, "-", color="k", lw=2.4, label=_mechanism(key), zorder=3)
            finite_eff = t
        else:
            colour, ls = next(styles)
            ax.plot(dn, t, ls, color=colour, lw=1.5, label=_mechanism(key))
    ax.set_xlabel(_label("delta_n_cm3"))
    ax.set_ylabel("lifetime (s)")
    if finite_eff is not None and np.isfinite(finite_eff).any():
        lo, hi = np.nanmin(finite_eff), np.nanmax(finite_eff)
        ax.set_ylim(lo / 5.0, hi * 300.0)
    if operating_dn is not None and np.isfinite(operating_dn) and operating_dn > 0:
        ax.axvline(operating_dn, color="0.35", lw=1, ls=":")
        if finite_eff is not None:
            ok = np.isfinite(finite_eff)
            t_op = 10 ** np.interp(np.log10(operating_dn), np.log10(dn[ok]), np.log10(finite_eff[ok]))
            ax.plot([operating_dn], [t_op], "o", color="crimson", ms=7, zorder=4,
                    label=f"operating point: Δn = {_sci(operating_dn)} cm^-3, τ = {_sci(t_op)} s")
    ax.grid(True, which="major", alpha=0.3)
    ax.legend(fontsize=8, loc="best", framealpha=0.85)
    ax.set_title("Lifetime against injection")
    return ax


def _depth_axis(ax, depth_um: np.ndarray, g: np.ndarray) -> bool:
    """Log depth axis when 90 % of the generation lies in the first 2 % of the depth."""
    d = np.asarray(depth_um, dtype=float)
    gg = np.nan_to_num(np.asarray(g, dtype=float), nan=0.0, posinf=0.0)
    if d.size < 3 or d.max() <= 0:
        ax.set_xlabel("depth (um)")
        return False
    cum = np.concatenate([[0.0], np.cumsum(0.5 * (gg[1:] + gg[:-1]) * np.diff(d))])
    use_log = False
    if cum[-1] > 0:
        d90 = d[np.searchsorted(cum, 0.9 * cum[-1])]
        positive = d[d > 0]
        use_log = d90 < 0.02 * d.max() and positive.size > 1 and positive.max() > 100 * positive.min()
    if use_log:
        _log_axis(ax, "x")
        ax.set_xlabel("depth from the front (um, log scale)")
        ax.set_xlim(positive.min(), positive.max())
    else:
        ax.set_xlabel("depth from the front (um)")
        ax.set_xlim(d.min(), d.max())
    return use_log


def generation_profile(depth_cm, profile_cm3_s, ax=None):
    """Generation rate G(x) against depth (um on the axis), log G.

    The depth average (trapezoid rule) is drawn dashed.  G more than 15 decades below its
    peak is off the axis.

    Parameters
    ----------
    depth_cm : array_like
        Depths from the front [cm].
    profile_cm3_s : array_like
        G at those depths [cm^-3 s^-1].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    d_um = np.asarray(depth_cm, dtype=float) * 1e4
    g = np.asarray(profile_cm3_s, dtype=float)
    fig, ax = _one_axes(ax, 6.4, 4.4)
    _log_axis(ax, "y")
    use_log = _depth_axis(ax, d_um, g)
    keep = d_um > 0 if use_log else np.ones(d_um.shape, bool)
    ax.plot(d_um[keep], _positive(g)[keep], "-", color="C3", lw=2, label="G(x)")
    width = d_um.max() - d_um.min()
    if width > 0:
        mean = np.trapezoid(np.nan_to_num(g), d_um) / width
        if mean > 0:
            ax.axhline(mean, color="0.3", ls="--", lw=1, label=f"depth average {_sci(mean)} cm^-3 s^-1")
    peak = np.nanmax(_positive(g)) if np.isfinite(_positive(g)).any() else None
    if peak:
        low = np.nanmin(_positive(g))
        ax.set_ylim(max(low, peak * 1e-15) / 2.0, peak * 3.0)
    ax.set_ylabel("generation rate G (cm^-3 s^-1)")
    ax.grid(True, which="major", alpha=0.3)
    ax.legend(fontsize=8, loc="best")
    ax.set_title("Generation profile")
    return ax


def implied_jv(voltage_V, current_mA_cm2, vmp=None, jmp=None, voc=None, ff=None, ax=None):
    """Implied J-V curve with power density, the maximum-power point and FF.

    Parameters
    ----------
    voltage_V : array_like
        Implied voltages [V].
    current_mA_cm2 : array_like
        Current density, positive for generation [mA cm^-2].
    vmp : float, optional
        Maximum-power voltage (found from the curve when not given) [V].
    jmp : float, optional
        Maximum-power current density (found from the curve when not given) [mA cm^-2].
    voc : float, optional
        Implied Voc [V].
    ff : float, optional
        Implied fill factor [-].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure; power goes on a twin axis at the right).

    Returns
    -------
    matplotlib.axes.Axes
        The current-density Axes.
    """
    v = np.asarray(voltage_V, dtype=float)
    j = np.asarray(current_mA_cm2, dtype=float)
    p = v * j
    if vmp is None or jmp is None:
        i = int(np.nanargmax(p))
        vmp, jmp = float(v[i]), float(j[i])
    jsc = float(np.interp(0.0, v, j)) if v.min() <= 0.0 <= v.max() else float(np.nanmax(j))
    fig, ax = _one_axes(ax, 6.6, 4.6)
    ax.plot(v, j, "-", color="C0", lw=2, label="J (left axis)")
    ax.fill_between([0, vmp], 0, jmp, color="C0", alpha=0.12, lw=0)
    ax.plot([vmp], [jmp], "o", color="crimson", ms=7, zorder=4, label="maximum power")
    ax.set_xlabel("implied voltage (V)")
    ax.set_ylabel("current density J (mA cm^-2)")
    ax2 = ax.twinx()
    ax2.plot(v, p, "-", color="C1", lw=1.2, alpha=0.8, label="power density (right axis)")
    ax2.set_ylabel("power density (mW cm^-2)", color="C1")
    ax2.tick_params(axis="y", colors="C1")
    top = max(jsc, float(np.nanmax(j))) * 1.08
    ax.set_ylim(0.0, top)
    ax2.set_ylim(0.0, float(np.nanmax(p)) * 1.25)
    v_end = voc if voc is not None else float(v[np.isfinite(j) & (j >= 0)].max())
    ax.set_xlim(min(0.0, v.min()), v_end * 1.05)
    lines = [f"Vmp = {vmp:.3f} V", f"Jmp = {_number(jmp)} mA cm^-2"]
    if voc is not None:
        lines.insert(0, f"implied Voc = {voc:.3f} V")
    if ff is not None:
        lines.append(f"implied FF = {100 * ff:.1f} %")
    ax.text(0.03, 0.05, "\n".join(lines), transform=ax.transAxes, fontsize=9, va="bottom",
            bbox=dict(boxstyle="round", fc="white", ec="0.7", alpha=0.9))
    h1, l1 = ax.get_legend_handles_labels()
    h2, l2 = ax2.get_legend_handles_labels()
    ax.legend(h1 + h2, l1 + l2, fontsize=8, loc="center left", bbox_to_anchor=(0.0, 0.55))
    ax.grid(True, alpha=0.3)
    ax.set_title("Implied J–V")
    return ax


def _spread_labels(positions, min_gap: float) -> np.ndarray:
    """Move sorted label heights apart by at least `min_gap`, keeping their mean order."""
    pos = np.asarray(positions, dtype=float)
    order = np.argsort(pos)
    y = pos[order].copy()
    for _ in range(50):
        moved = False
        for i in range(1, y.size):
            gap = y[i] - y[i - 1]
            if gap < min_gap - 1e-12:
                shift = 0.5 * (min_gap - gap)
                y[i - 1] -= shift
                y[i] += shift
                moved = True
        if not moved:
            break
    out = np.empty_like(y)
    out[order] = y
    return out


def band_diagram(bandgap_eV, fermi_level_eV, electron_qfl_eV, hole_qfl_eV, intrinsic_level_eV=None, ax=None):
    """Flat-band level diagram: Ec, Ev, dark E_F, E_Fn, E_Fp and their splitting.

    All energies are measured upward from the valence band edge Ev.

    Parameters
    ----------
    bandgap_eV : float
        Ec - Ev [eV].
    fermi_level_eV : float
        The dark Fermi level [eV].
    electron_qfl_eV, hole_qfl_eV : float
        The quasi-Fermi levels under light [eV].
    intrinsic_level_eV : float, optional
        The intrinsic level [eV].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    eg = float(np.ravel(bandgap_eV)[0])
    ef = float(np.ravel(fermi_level_eV)[0])
    efn = float(np.ravel(electron_qfl_eV)[0])
    efp = float(np.ravel(hole_qfl_eV)[0])
    levels = [(r"$E_\mathrm{c}$", eg, "k", "-", 2.4), (r"$E_\mathrm{v}$", 0.0, "k", "-", 2.4),
              (r"$E_\mathrm{F}$ (dark)", ef, "0.35", (0, (5, 3)), 1.4),
              (r"$E_\mathrm{Fn}$ (light)", efn, "C0", "-", 1.8), (r"$E_\mathrm{Fp}$ (light)", efp, "C3", "-", 1.8)]
    if intrinsic_level_eV is not None:
        levels.append((r"$E_\mathrm{i}$", float(np.ravel(intrinsic_level_eV)[0]), "0.55", ":", 1.2))
    missing = [name for name, e, *_ in levels if not np.isfinite(e)]
    levels = [lv for lv in levels if np.isfinite(lv[1])]       # a level without a value is named, not drawn
    if not np.isfinite(eg):
        eg = max([e for _, e, *_ in levels] + [1.0])
    energies = [e for _, e, *_ in levels]
    lo, hi = min(energies + [0.0]), max(energies + [eg])
    span = max(hi - lo, 1e-3)
    fig, ax = _one_axes(ax, 6.0, 4.8)
    if missing:
        ax.text(0.99, 0.01, "no value: " + ", ".join(missing), transform=ax.transAxes, ha="right", va="bottom",
                fontsize=8, color="0.4")
    ax.axhspan(eg, hi + 0.25 * span, color="C0", alpha=0.08, lw=0)
    ax.axhspan(lo - 0.25 * span, 0.0, color="C3", alpha=0.08, lw=0)
    ax.text(0.03, eg + 0.03 * span, "conduction band", fontsize=8, color="0.3", va="bottom")
    ax.text(0.03, -0.03 * span, "valence band", fontsize=8, color="0.3", va="top")
    label_y = _spread_labels(energies, 0.075 * span)
    for (name, e, colour, ls, lw), ly in zip(levels, label_y):
        ax.plot([0.0, 0.62], [e, e], color=colour, ls=ls, lw=lw)
        ax.plot([0.62, 0.68], [e, ly], color=colour, lw=0.8)
        ax.text(0.69, ly, f"{name} = {e:.3f} eV", va="center", fontsize=9, color=colour if colour != "k" else "k")
    if np.isfinite(efn) and np.isfinite(efp):
        ax.annotate("", xy=(0.40, efn), xytext=(0.40, efp),
                    arrowprops=dict(arrowstyle="<|-|>", color="C2", lw=1.6, shrinkA=0, shrinkB=0))
        ax.text(0.42, 0.5 * (efn + efp), f"Δμ = {efn - efp:.3f} eV\n(splitting)", color="C2", va="center",
                fontsize=10, bbox=dict(fc="white", ec="none", alpha=0.8, pad=1))
    ax.set_xlim(0.0, 1.12)
    ax.set_ylim(lo - 0.18 * span, hi + 0.18 * span)
    ax.set_xticks([])
    ax.set_ylabel(_ENERGY_LABEL)
    ax.set_title("Flat-band levels: dark and under light")
    return ax


# --------------------------------------------------------------------------
# detector sweeps
# --------------------------------------------------------------------------

def detector_densities(ds, ax=None):
    """Dark (dashed) and illuminated (solid) electron and hole densities on one log axis.

    The majority carrier is the one with the larger median dark density.

    Parameters
    ----------
    ds : xarray.Dataset
        1-D (temperature or power sweep) with n0_cm3, p0_cm3, n_cm3, p_cm3 [cm^-3].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    ds, dim = _one_dim(ds, "plots.detector_densities")
    missing = [v for v in ("n0_cm3", "p0_cm3", "n_cm3", "p_cm3") if v not in ds]
    if missing:
        raise InputError("plots.detector_densities", missing, "a Dataset with n0_cm3, p0_cm3, n_cm3 and p_cm3")
    n_major = np.nanmedian(ds["n0_cm3"].values) >= np.nanmedian(ds["p0_cm3"].values)
    role = {"n": "majority" if n_major else "minority", "p": "minority" if n_major else "majority"}
    fig, ax = _one_axes(ax, 6.6, 4.6)
    x = _x_setup(ax, ds, dim)
    _log_axis(ax, "y")
    for carrier, colour, word in (("n", "C0", "electrons"), ("p", "C3", "holes")):
        ax.plot(x, _positive(ds[f"{carrier}0_cm3"].values), "--", color=colour, lw=1.6, zorder=3,
                label=f"{word} ({role[carrier]}), dark {carrier}₀")
        ax.plot(x, _positive(ds[f"{carrier}_cm3"].values), "-", color=colour, lw=2.2,
                label=f"{word} ({role[carrier]}), illuminated {carrier}")
    ax.set_ylabel("carrier density (cm^-3)")
    ax.grid(True, which="major", alpha=0.3)
    ax.legend(fontsize=8, loc="best", framealpha=0.85)
    ax.set_title("Dark and illuminated carrier densities")
    return ax


_GENERATION_VARS = (("thermal_generation_cm3_s", "thermal (dark)", "k", "-"),
                    ("background_generation_cm3_s", "background scene", "C1", "--"),
                    ("optical_generation_cm3_s", "optical signal", "C0", "-."))


def _free_height(ax, x, curves, at: float) -> float:
    """Axes-fraction height at x = `at` (just right of it) farthest from every curve, for a label."""
    ax.autoscale_view()
    lo, hi = (np.log10(v) for v in ax.get_ylim())
    span = float(np.ptp(x)) or 1.0
    probe = np.linspace(at, at + 0.25 * span, 8)
    heights = []
    for curve in curves:
        c = _positive(curve)
        ok = np.isfinite(c)
        if ok.sum() > 1:
            order = np.argsort(x[ok])
            logc = np.interp(probe, x[ok][order], np.log10(c[ok][order]))
            heights.extend((logc - lo) / (hi - lo))
    candidates = np.linspace(0.08, 0.92, 15)
    if not heights:
        return 0.9
    gap = [min(abs(c - h) for h in heights) for c in candidates]
    return float(candidates[int(np.argmax(gap))])


def detector_generation(ds, crossing=None, ax=None):
    """Thermal against background/optical generation over the sweep, log axis.

    The background-limited span is shaded from `background_limited` when present
    (background photon noise above all other noise), else where G_bg > G_th.

    Parameters
    ----------
    ds : xarray.Dataset
        1-D with thermal_generation_cm3_s and any of background_generation_cm3_s,
        optical_generation_cm3_s [cm^-3 s^-1].
    crossing : float, optional
        Swept value where the background limit sets in, marked with a vertical line and
        label (None or NaN: not marked) [unit of the swept key, e.g. K].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    ds, dim = _one_dim(ds, "plots.detector_generation")
    present = [row for row in _GENERATION_VARS if row[0] in ds]
    if not present:
        raise InputError("plots.detector_generation", list(ds.data_vars),
                         "a Dataset with thermal_generation_cm3_s and background/optical generation")
    fig, ax = _one_axes(ax, 6.6, 4.6)
    x = _x_setup(ax, ds, dim)
    _log_axis(ax, "y")
    for var, label, colour, ls in present:
        ax.plot(x, _positive(ds[var].values), ls, color=colour, lw=2, label=label)
    limited = None
    if "background_limited" in ds:          # the run's own flag: background photon noise above the rest
        limited = np.asarray(ds["background_limited"].values).astype(bool)
    elif "thermal_generation_cm3_s" in ds and "background_generation_cm3_s" in ds:
        limited = np.asarray(ds["background_generation_cm3_s"].values) > np.asarray(ds["thermal_generation_cm3_s"].values)
    if limited is not None:
        if limited.any():
            ax.fill_between(x, 0, 1, where=limited, transform=ax.get_xaxis_transform(), color="C1",
                            alpha=0.10, lw=0, step="mid", label="background-limited")
    if crossing is not None and np.isfinite(crossing):
        unit = axis_label(dim, ds[dim].attrs)
        unit = unit[unit.rfind("(") + 1: -1] if unit.endswith(")") else ""
        ax.axvline(float(crossing), color="C1", lw=1.4, ls=":")
        ax.text(float(crossing), _free_height(ax, x, [ds[row[0]].values for row in present], float(crossing)),
                f" background limit\n sets in: {_number(crossing)} {unit}",
                transform=ax.get_xaxis_transform(), va="center", ha="left", fontsize=8, color="C1",
                bbox=dict(fc="white", ec="none", alpha=0.85, pad=1))
    ax.set_ylabel("generation rate (cm^-3 s^-1)")
    ax.grid(True, which="major", alpha=0.3)
    ax.legend(fontsize=8, loc="best", framealpha=0.85)
    ax.set_title("Thermal against optical generation")
    return ax


def detector_contrast(ds, ax=None):
    """Conductivity contrast Δσ/σ0 over the sweep, log axis.

    The line Δσ = σ0 (contrast 1) is drawn dotted.

    Parameters
    ----------
    ds : xarray.Dataset
        1-D with conductivity_contrast [-].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    ds, dim = _one_dim(ds, "plots.detector_contrast")
    if "conductivity_contrast" not in ds:
        raise InputError("plots.detector_contrast", list(ds.data_vars), "a Dataset with conductivity_contrast")
    fig, ax = _one_axes(ax, 6.4, 4.4)
    x = _x_setup(ax, ds, dim)
    _log_axis(ax, "y")
    y = _positive(ds["conductivity_contrast"].values)
    ax.plot(x, y, "-o", ms=3, color="C2", lw=2, label="Δσ/σ₀")
    _mark_missing(ax, x, y)
    ax.axhline(1.0, color="0.4", ls=":", lw=1, label="Δσ = σ₀")
    ax.set_ylabel(_label("conductivity_contrast"))
    ax.grid(True, which="major", alpha=0.3)
    ax.legend(fontsize=8, loc="best")
    ax.set_title("Illuminated against dark conductivity")
    return ax


def _is_temperature(dim: str) -> bool:
    """The absorber temperature, as a Dataset dimension ("absorber_temperature_K") or a dotted key."""
    return dim in ("temperature_K", "absorber_temperature_K", "absorber.temperature_K")


def _arrhenius_or_plain_x(ax, ds, dim) -> np.ndarray:
    """x values for a detector sweep: 1000/T for an absorber-temperature sweep (kelvin on the top axis)."""
    if not _is_temperature(dim):
        return _x_setup(ax, ds, dim)
    T = np.asarray(ds[dim].values, dtype=float)
    ax.set_xlabel("1000 / T (K^-1)")
    top = ax.secondary_xaxis("top", functions=(lambda u: 1000.0 / np.where(u == 0, np.nan, u),
                                               lambda t: 1000.0 / np.where(t == 0, np.nan, t)))
    top.set_xlabel("temperature (K)")
    return 1000.0 / T


def _detector_lines(ds, what, rows, ylabel, title, log=True, aux=(), ax=None):
    """One axes with a line per (variable, label, colour, style) row present in ds, against the swept key.

    Rows whose values are all missing (or, on a log axis, all <= 0) are left out; `aux`
    variables are drawn but do not set the y range (an estimate far below the rest).
    """
    ds, dim = _one_dim(ds, what)

    def usable(var):
        v = np.asarray(ds[var].values, float)
        return np.isfinite(_positive(v) if log else v).any()
    present = [r for r in rows if r[0] in ds and usable(r[0])]
    if not present:
        raise InputError(what, list(ds.data_vars), "a Dataset with " + " or ".join(r[0] for r in rows))
    fig, ax = _one_axes(ax, 6.6, 4.8)
    x = _arrhenius_or_plain_x(ax, ds, dim)
    if log:
        _log_axis(ax, "y")
    limits = []
    for var, label, colour, ls in present:
        y = np.asarray(ds[var].values, float)
        y = _positive(y) if log else y
        ax.plot(x, y, ls, color=colour, lw=2, label=label)
        if var not in aux:
            limits.append(y[np.isfinite(y)])
            _mark_missing(ax, x, y)
    if log and limits and np.concatenate(limits).size:
        lo, hi = np.min(np.concatenate(limits)), np.max(np.concatenate(limits))
        ax.set_ylim(lo / 3.0, hi * 3.0)
    ax.set_ylabel(ylabel)
    ax.grid(True, which="major", alpha=0.3)
    ax.legend(fontsize=8, loc="best", framealpha=0.85)
    ax.set_title(title, fontsize=10, pad=34 if _is_temperature(dim) else 6)
    return ax


def detector_detectivity(ds, ax=None):
    """D* and the background limit D*_BLIP over a detector sweep, log y (1000/T axis for temperature).

    Parameters
    ----------
    ds : xarray.Dataset
        1-D with detectivity_cm_Hz05_W and, when a background is set,
        detectivity_blip_cm_Hz05_W [cm Hz^(1/2) W^-1].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    ax = _detector_lines(ds, "plots.detector_detectivity",
                          [("detectivity_cm_Hz05_W", "D*", "C0", "-o"),
                           ("detectivity_blip_cm_Hz05_W", "D*_BLIP (background limit)", "C1", "--")],
                          "specific detectivity D* (cm Hz^(1/2) W^-1)", "Detectivity against the background limit", ax=ax)
    ax.lines[0].set_markersize(3)
    return ax


def detector_responsivity(ds, ax=None):
    """Signal responsivity over a detector sweep (1000/T axis for temperature).

    Parameters
    ----------
    ds : xarray.Dataset
        1-D with responsivity_A_W [A W^-1].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    ds1, _ = _one_dim(ds, "plots.detector_responsivity")
    log = "responsivity_A_W" in ds1 and _spans_decades(_positive(ds1["responsivity_A_W"].values), 1.0)
    return _detector_lines(ds, "plots.detector_responsivity", [("responsivity_A_W", "R = I_signal / P_signal",
                                                               "C2", "-o")],
                           "responsivity (A W^-1)", "Signal responsivity", log=log, ax=ax)


def detector_nep(ds, ax=None):
    """Noise-equivalent power over a detector sweep, log y.

    Parameters
    ----------
    ds : xarray.Dataset
        1-D with noise_equivalent_power_W [W].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    return _detector_lines(ds, "plots.detector_nep", [("noise_equivalent_power_W", "NEP", "C3", "-o")],
                           "noise-equivalent power (W)", "Noise-equivalent power (at detector.bandwidth_Hz)", ax=ax)


_NOISE_VARS = (("noise_total_A_Hz05", "total", "k", "-"),
               ("noise_background_A_Hz05", "background photon noise", "C1", "--"),
               ("noise_signal_A_Hz05", "signal photon noise", "C0", "-."),
               ("noise_thermal_A_Hz05", "thermal (g-r / dark-current shot)", "C3", "-"),
               ("noise_johnson_A_Hz05", "Johnson", "C4", ":"))


def detector_noise(ds, ax=None):
    """Each noise current and the total over a detector sweep, log y.

    Parameters
    ----------
    ds : xarray.Dataset
        1-D with noise_*_A_Hz05 [A Hz^(-1/2)].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    return _detector_lines(ds, "plots.detector_noise", _NOISE_VARS, "noise current (A Hz^(-1/2))", "Noise terms", ax=ax)


_DARK_VARS = (("j0_thin_base_mA_cm2", "diffusion J0 (base)", "C0", "-"),
              ("j0_depletion_mA_cm2", "depletion q n_i W / τ_g", "C3", "--"),
              ("dark_current_density_mA_cm2", "dark current at the bias", "k", "-."),
              ("tunnelling_estimate_mA_cm2", "tunnelling (estimate, not added)", "0.5", ":"))


def detector_dark_current(ds, ax=None):
    """Dark-current components over a detector sweep, log y, 1000/T axis for temperature.

    Photodiode: diffusion J0, depletion-region saturation current, the dark
    current at the bias and the tunnelling estimate [mA cm^-2].  Photoconductor:
    dark, signal and background currents [A].  On the 1000/T axis diffusion
    falls with slope ~Eg, the depletion current with ~Eg/2.

    Parameters
    ----------
    ds : xarray.Dataset
        1-D detector sweep [unit in each variable's name].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    if "j0_thin_base_mA_cm2" in ds:
        return _detector_lines(ds, "plots.detector_dark_current", _DARK_VARS, "current density (mA cm^-2)",
                               "Dark-current components", aux=("tunnelling_estimate_mA_cm2",), ax=ax)
    return _detector_lines(ds, "plots.detector_dark_current",
                           [("dark_current_A", "dark (bar)", "k", "-"), ("signal_current_A", "signal", "C0", "-."),
                            ("background_current_A", "background", "C1", "--")],
                           "current (A)", "Dark, signal and background currents", ax=ax)


def spectral_response(wavelength_nm, quantum_efficiency, responsivity_A_W, ax=None):
    """Quantum efficiency (left) and responsivity (right) against wavelength for a single point.

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelengths [nm].
    quantum_efficiency : array_like
        Quantum efficiency [-].
    responsivity_A_W : array_like
        Responsivity [A W^-1].
    ax : matplotlib.axes.Axes, optional
        An Axes to draw into (None: a new figure; responsivity on a twin axis).

    Returns
    -------
    matplotlib.axes.Axes
        The Axes.
    """
    wl_um = np.asarray(wavelength_nm, float) * 1e-3
    fig, ax = _one_axes(ax, 6.6, 4.4)
    ax.plot(wl_um, np.asarray(quantum_efficiency, float), color="C0", lw=2, label="quantum efficiency η")
    ax.set_xlabel("wavelength (um)")
    ax.set_ylabel("quantum efficiency η", color="C0")
    ax.set_ylim(0.0, 1.05)
    ax2 = ax.twinx()
    ax2.plot(wl_um, np.asarray(responsivity_A_W, float), color="C2", lw=1.6, ls="--", label="responsivity R(λ)")
    ax2.set_ylabel("responsivity (A W^-1)", color="C2")
    ax2.set_ylim(bottom=0.0)
    ax.grid(True, alpha=0.3)
    ax.set_title("Spectral quantum efficiency and responsivity", fontsize=10)
    return ax


# --------------------------------------------------------------------------
# depth profile
# --------------------------------------------------------------------------

def depth_profile(depth_cm, delta_n_cm3, generation_cm3_s, electron_qfl_eV=None, hole_qfl_eV=None,
                  bandgap_eV=None, ax=None):
    """Stacked panels over depth: G(x), Δn(x) and, when given, the quasi-Fermi levels.

    Parameters
    ----------
    depth_cm : array_like
        Depths from the front [cm].
    delta_n_cm3 : array_like
        Δn(x) [cm^-3].
    generation_cm3_s : array_like
        G(x) [cm^-3 s^-1].
    electron_qfl_eV, hole_qfl_eV : array_like, optional
        E_Fn(x), E_Fp(x) above Ev [eV].
    bandgap_eV : float, optional
        Ec - Ev, drawn as band edges in the level panel when given [eV].
    ax : sequence of Axes, optional
        None (a new figure) or a sequence of two or three Axes.

    Returns
    -------
    ndarray of Axes
        Two or three Axes, sharing depth.
    """
    d_um = np.asarray(depth_cm, dtype=float) * 1e4
    dn = np.asarray(delta_n_cm3, dtype=float)
    g = np.asarray(generation_cm3_s, dtype=float)
    with_qfl = electron_qfl_eV is not None and hole_qfl_eV is not None
    rows = 3 if with_qfl else 2
    fig, axes = _several_axes(ax, rows, 6.6, 2.5 * rows + 0.6, nrows=rows, sharex=True)
    use_log = _depth_axis(axes[-1], d_um, g)
    keep = d_um > 0 if use_log else np.ones(d_um.shape, bool)
    x = d_um[keep]

    ax = axes[0]
    _log_axis(ax, "y")
    gp = _positive(g)
    ax.plot(x, gp[keep], color="C3", lw=2)
    if np.isfinite(gp).any():
        peak = np.nanmax(gp)
        ax.set_ylim(max(np.nanmin(gp), peak * 1e-12) / 2.0, peak * 3.0)
    ax.set_ylabel("G (cm^-3 s^-1)")
    ax.set_title("Generation, excess carriers" + (" and quasi-Fermi levels" if with_qfl else "") + " against depth",
                 fontsize=10)

    ax = axes[1]
    dnp = _positive(dn)
    if _spans_decades(dnp[np.isfinite(dnp)], 1.0):
        _log_axis(ax, "y")
        ax.set_ylabel("Δn (cm^-3)")
    else:
        top = np.nanmax(dnp) if np.isfinite(dnp).any() else 1.0
        exp = int(np.floor(np.log10(top)))
        dnp = dnp / 10.0**exp
        ax.set_ylim(0.0, top / 10.0**exp * 1.1)
        ax.set_ylabel(f"Δn (10^{exp} cm^-3)" if exp else "Δn (cm^-3)")
    ax.plot(x, dnp[keep], color="C0", lw=2)

    if with_qfl:
        ax = axes[2]
        efn = np.asarray(electron_qfl_eV, dtype=float)
        efp = np.asarray(hole_qfl_eV, dtype=float)
        ax.plot(x, efn[keep], color="C0", lw=2, label=r"$E_\mathrm{Fn}$")
        ax.plot(x, efp[keep], color="C3", lw=2, label=r"$E_\mathrm{Fp}$")
        ax.fill_between(x, efp[keep], efn[keep], color="C2", alpha=0.12, lw=0, label="splitting Δμ(x)")
        if bandgap_eV is not None:
            eg = float(np.ravel(bandgap_eV)[0])
            ax.axhline(eg, color="k", lw=1.6, label=r"$E_\mathrm{c}$, $E_\mathrm{v}$")
            ax.axhline(0.0, color="k", lw=1.6)
        ax.set_ylabel(_ENERGY_LABEL)
        ax.legend(fontsize=8, loc="center left", bbox_to_anchor=(1.01, 0.5), frameon=False)
    for ax in axes:
        ax.grid(True, which="major", alpha=0.3)
    return axes


# --------------------------------------------------------------------------
# files
# --------------------------------------------------------------------------

def save_figure(fig, path, dpi: int = 130) -> Path:
    """Write a figure as PNG atomically (temporary file in the same directory, then rename).

    An interrupted write never leaves a partial file under the final name.

    Parameters
    ----------
    fig : Figure, Axes or sequence of Axes
        A Figure, or what a plot function returned.
    path : str or Path
        The PNG file [-].
    dpi : int
        Resolution [dots per inch].

    Returns
    -------
    Path
        The final path.
    """
    from .report import atomic_path          # the one atomic writer (umask-respecting permissions)
    path = Path(path)
    with atomic_path(path) as tmp:
        with open(tmp, "wb") as handle:
            figure_of(fig).savefig(handle, format="png", dpi=dpi)
    return path
