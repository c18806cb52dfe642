"""Figures of the analysis (matplotlib `Figure` objects, no pyplot state; saved atomically by
`save_figure`, through the one atomic writer `optogen.report.atomic_path`): the measured curve with the fit and each mechanism, the corrected
inverse lifetime with the Kane-Swanson window and line, the implied J-V, and the DPSS of IDLS."""
from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib.figure import Figure

from optogen.report import atomic_path

COLORS = {"srh": "tab:red", "surface": "tab:blue", "auger": "tab:green", "radiative": "tab:purple"}


def save_figure(fig: Figure, path, dpi: int = 130) -> Path:
    """Write `fig` as PNG to `path` atomically (temporary file in the folder, then renamed)."""
    path = Path(path)
    with atomic_path(path) as tmp:
        with open(tmp, "wb") as handle:
            fig.savefig(handle, format="png", dpi=dpi)
    return path


def _fig(w=6.0, h=4.2):
    return Figure(figsize=(w, h), dpi=110, layout="constrained")


def lifetime_figure(res) -> Figure:
    """Measured tau_eff(dn), the fitted curve and each mechanism's lifetime (log-log)."""
    c = res.curves()["lifetime"]
    fig = _fig()
    ax = fig.add_subplot()
    dn = c["delta_n_cm3"]
    ax.loglog(dn, c["tau_measured_s"] * 1e6, "o", ms=3, color="k", label="measured")
    ax.loglog(dn, c["tau_fit_s"] * 1e6, "-", color="k", label="fit")
    for m, col in COLORS.items():
        t = np.asarray(c[f"tau_{m}_s"], float)
        if np.any(np.isfinite(t)):
            ax.loglog(dn, t * 1e6, "--", color=col, label=m)
    top = np.nanmax(c["tau_measured_s"]) * 1e6
    ax.set_ylim(top / 1e3, top * 30)
    ax.axvline(res.implied["delta_n_1sun_cm3"], color="0.6", lw=0.8)
    ax.set_xlabel("excess carrier density Δn (cm^-3)")
    ax.set_ylabel("lifetime τ (us)")
    ax.set_title(f"{res.title[:70]}\nlifetime and mechanisms (grey line: 1 sun)", fontsize=9)
    ax.legend(fontsize=8)
    return fig


def inverse_figure(res) -> Figure:
    """1/tau_eff - 1/tau_intrinsic vs dn with the Kane-Swanson window and its fitted line."""
    c = res.curves()["lifetime"]
    fig = _fig()
    ax = fig.add_subplot()
    dn = c["delta_n_cm3"]
    ax.plot(dn, c["inverse_corrected_s"], "o", ms=3, color="k", label="1/τ_eff − 1/τ_intrinsic")
    ks = res.kane_swanson
    if ks is not None:
        lo, hi = ks.window_cm3
        ax.axvspan(lo, hi, color="tab:orange", alpha=0.15, label="Kane–Swanson window")
        sel = (dn >= lo) & (dn <= hi)
        m = res.mech
        line = ks.inv_tau_bulk_s + ks.J0_fA_cm2 * m.x_j0[sel]
        ax.plot(dn[sel], line, "-", color="tab:orange", label=f"J0 = {ks.J0_fA_cm2:.3g} fA cm^-2")
    ax.set_xlabel("excess carrier density Δn (cm^-3)")
    ax.set_ylabel("corrected inverse lifetime (s^-1)")
    ax.set_title("Corrected inverse lifetime (Kane & Swanson 1985)")
    ax.legend(fontsize=8)
    return fig


def jv_figure(res) -> Figure:
    """Implied J-V at 1 sun from the measured recombination."""
    im = res.implied
    fig = _fig()
    ax = fig.add_subplot()
    ax.plot(im["jv_voltage_V"], im["jv_current_mA_cm2"], color="k")
    ax.set_xlabel("implied voltage (V)")
    ax.set_ylabel("current density (mA cm^-2)")
    ax.set_title(f"Implied J–V at 1 sun: iVoc {im['voc_1sun_V'] * 1e3:.1f} mV, iFF {im['ff_1sun'] * 100:.2f} %")
    ax.set_ylim(bottom=0)
    ax.set_xlim(left=0)
    return fig


def dpss_figure(dpss) -> Figure:
    """The defect-parameter solution surface: k(E_t) and chi^2(E_t), the branches marked."""
    fig = _fig(6.0, 5.0)
    a1, a2 = fig.subplots(2, 1, sharex=True)
    x = dpss.level_eV
    a1.semilogy(x, dpss.k, color="k")
    a1.set_ylabel("k = σn/σp")
    a2.semilogy(x, dpss.chi2, color="k")
    a2.set_ylabel("χ²")
    a2.set_xlabel("E_t − E_v (eV)")
    for br in dpss.branches:
        for ax in (a1, a2):
            ax.axvspan(*br.level_interval_eV, color="tab:red" if br.half == "upper" else "tab:blue", alpha=0.2)
    for ax in (a1, a2):
        ax.axvline(dpss.intrinsic_level_eV, color="0.6", lw=0.8)
    a1.set_title(f"IDLS (Rein 2005): {dpss.curves} curve(s); shaded: the two branches")
    return fig


def write_all(res, outdir) -> list[Path]:
    """Write the analysis figures as PNG into `outdir` (atomically); returns the paths."""
    out = Path(outdir)
    files = [save_figure(lifetime_figure(res), out / "lifetime_fit.png"),
             save_figure(inverse_figure(res), out / "inverse_lifetime_j0.png"),
             save_figure(jv_figure(res), out / "implied_jv.png")]
    if res.ids is not None:
        files.append(save_figure(dpss_figure(res.ids), out / "ids_dpss.png"))
    return files
