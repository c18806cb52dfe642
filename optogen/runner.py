"""The pipeline: a scenario in, a result out (single point or sweep).

Data flows one way: materials -> equilibrium -> (light, optics) -> generation
-> recombination -> steady_state -> detector / profile.  This module only
gathers scenario values, calls the core and labels the outputs.

Sweeps: keys the core broadcasts over ("fast" keys: temperature, doping,
resistivity and the light scaling) are evaluated as arrays in chunks; every
other swept key ("slow" keys: thickness, wavelength, defect density, ...) is
an outer loop over its values, each step vectorised over the fast keys.
Everything that does not depend on the swept keys (the material, the
spectrum, the optical data) is built once per slow-key group.
"""
from __future__ import annotations

import dataclasses
import datetime as _dt
import itertools
import math
from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np
import xarray as xr

from . import __version__
from .errors import InputError, check_range
from .scenario import Scenario, unit_of

LIGHT_SCALING_KEYS = ("suns", "irradiance_W_m2", "power_W", "photon_flux_cm2_s")
FAST_KEYS = {"absorber.temperature_K", "absorber.donors_cm3", "absorber.acceptors_cm3",
             "absorber.resistivity_ohm_cm", *(f"light.{k}" for k in LIGHT_SCALING_KEYS)}
#: resistivity is taken as the room-temperature value (ASTM F723 is at 23 C; we use 300 K)
RESISTIVITY_REFERENCE_K = 300.0
DEFAULT_CHUNK = 100_000

#: Dataset variable names where the JSON key alone would be unclear or clash
RENAME = {("generation", "average_cm3_s"): "generation_average_cm3_s",
          ("generation", "background_average_cm3_s"): "generation_background_average_cm3_s",
          ("profile", "converged"): "profile_converged"}


def var_name(block: str, key: str) -> str:
    """The Dataset / CSV variable name of a JSON key ("tau_s.srh" -> "tau_srh_s")."""
    if (block, key) in RENAME:
        return RENAME[(block, key)]
    if block == "implied_jv":              # figures of the J-V curve: jv_vmp_V, jv_ff, ...
        return f"jv_{key}"
    if "." in key:                       # nested: tau_s.srh -> tau_srh_s
        outer, inner = key.split(".", 1)
        stem, _, unit = outer.rpartition("_")
        return f"{stem}_{inner}_{unit}"
    return key


# ---------------------------------------------------------------------------
# Building the pieces that do not change inside a group of points
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class Setup:
    """Everything built once from a scenario (fixed slow keys)."""

    scenario: Scenario
    material: Any
    thickness_cm: float
    spectrum: Any | None           # at the scenario's scaling, or at unit scaling of a swept scaling key
    background: Any | None
    recombination: Any | None
    optics: dict


def build(sc: Scenario, unit_scaling: str | None = None) -> Setup:
    """Build material, spectrum, background and recombination from a scenario.

    unit_scaling: a [light] scaling key that is swept; the spectrum is then
        built at value 1 of that key and the sweep multiplies it [-]
    """
    from . import materials
    ab = sc.section("absorber")
    if "custom" in ab:
        base = materials.get(ab["material"], ab.get("composition_x")) if "material" in ab else None
        mat = materials.material_from_table(ab["custom"], base=base)
    else:
        if "material" not in ab:
            raise InputError("absorber.material", None, "a built-in name or an [absorber.custom] table")
        mat = materials.get(ab["material"], ab.get("composition_x"))
    if "mobility_model" in ab:
        mat = mat.with_(mobility_model=ab["mobility_model"])
    thickness_um = ab.get("thickness_um", 100.0 if "light" not in sc.data else None)
    if thickness_um is None:
        raise InputError("absorber.thickness_um", None, "a thickness > 0 um is needed under light")
    check_range("absorber.thickness_um", thickness_um, 0.0, None, low_open=True, unit="um")

    spectrum = None
    if "light" in sc.data:
        from . import light
        table = sc.section("light")
        if unit_scaling is not None:
            for k in LIGHT_SCALING_KEYS:
                table.pop(k, None)
            table[unit_scaling] = 1.0
        spectrum = light.source_from_table(table, sc.base_dir)
    background = None
    if "background" in sc.data:
        from . import light
        bg = sc.section("background")
        try:
            background = light.blackbody(bg.get("temperature_K", 300.0), bg.get("field_of_view_deg", 90.0),
                                         bg.get("emissivity", 1.0))
        except InputError as exc:
            raise InputError(exc.field.replace("light.", "background.", 1), exc.value, exc.allowed,
                             exc.hint) from None
    recomb = None
    if "light" in sc.data or "recombination" in sc.data or "background" in sc.data:
        from .recombination import Recombination
        recomb = Recombination.from_table(sc.section("recombination"))
    _validate_point_fields(sc)
    return Setup(sc, mat, float(thickness_um) * 1e-4, spectrum, background, recomb, sc.section("optics"))


def swept_light_scaling(sc: Scenario) -> str | None:
    """The [light] scaling key that is swept (suns, irradiance_W_m2, ...), or None."""
    scaling = [a.key.split(".")[1] for a in sc.sweep if a.key in FAST_KEYS and a.key.startswith("light.")]
    if len(scaling) > 1:
        raise InputError("sweep", ", ".join(scaling), "at most one light scaling key swept at a time")
    return scaling[0] if scaling else None


def _validate_point_fields(sc: Scenario) -> None:
    """Checks that `optogen check` must make without running (values used later in the run)."""
    ab = sc.section("absorber")
    check_range("absorber.temperature_K", ab.get("temperature_K", 300.0), 0.0, None, low_open=True, unit="K")
    for key in ("donors_cm3", "acceptors_cm3"):
        if key in ab:
            check_range(f"absorber.{key}", ab[key], 0.0, None, unit="cm^-3")
    if "resistivity_ohm_cm" in ab:
        check_range("absorber.resistivity_ohm_cm", ab["resistivity_ohm_cm"], 0.0, None, low_open=True,
                    unit="ohm cm")
    plane = str(sc.get("solver.voc_plane", "front")).lower()
    if plane not in VOC_PLANES:
        raise InputError("solver.voc_plane", plane, "front or rear")
    for key, low in (("solver.chunk_size", 1), ("solver.nodes", 3)):
        v = sc.get(key)
        if v is not None and (isinstance(v, bool) or not isinstance(v, int) or v < low):
            raise InputError(key, v, f"an integer >= {low}")
    for key in ("solver.depth_resolved", "absorber.incomplete_ionisation"):
        v = sc.get(key)
        if v is not None and not isinstance(v, bool):
            raise InputError(key, v, "true or false")
    if "detector" in sc.data:
        from .detector import detector_from_table
        detector_from_table(sc.section("detector"))


def _doping(setup: Setup, values: Mapping[str, np.ndarray]):
    """Donor and acceptor densities [cm^-3] from the scenario or the swept values."""
    sc = setup.scenario
    ab = sc.section("absorber")
    if "resistivity_ohm_cm" in ab:
        from .transport import resistivity_to_doping
        rho = np.asarray(values.get("absorber.resistivity_ohm_cm", ab["resistivity_ohm_cm"]), dtype=float)
        N = resistivity_to_doping(setup.material, rho, ab["dopant"], T_K=RESISTIVITY_REFERENCE_K)
        split = (lambda N: (N, 0.0 * N)) if ab["dopant"] == "n" else (lambda N: (0.0 * N, N))
        if ab.get("incomplete_ionisation", True):
            N = _match_resistivity(setup, rho, N, split)
        return split(N)
    nd = values.get("absorber.donors_cm3", ab.get("donors_cm3", 0.0))
    na = values.get("absorber.acceptors_cm3", ab.get("acceptors_cm3", 0.0))
    return np.asarray(nd, dtype=float), np.asarray(na, dtype=float)


def _equilibrium_kwargs(setup: Setup) -> dict:
    ab = setup.scenario.section("absorber")
    return dict(donor=ab.get("donor_species"), acceptor=ab.get("acceptor_species"), ni_model=ab.get("ni_model"),
                bgn_model=getattr(setup.recombination, "bgn_model", None),
                incomplete_ionisation=ab.get("incomplete_ionisation", True))


def _match_resistivity(setup: Setup, rho, N, split, iterations: int = 20):
    """Dopant density whose dark conductivity, with incomplete ionisation, is 1/rho at 300 K.

    Starts from the full-ionisation answer (ASTM F723 convention) and rescales N by
    (1/rho) / sigma(N) until they agree to 1e-12 (a few steps: sigma is nearly linear in N).
    """
    from .equilibrium import equilibrium
    from .transport import conductivity_S_cm
    T = np.full(np.shape(N), RESISTIVITY_REFERENCE_K)
    for _ in range(iterations):
        nd, na = split(N)
        eq = equilibrium(setup.material, T, nd, na, **_equilibrium_kwargs(setup))
        sigma = conductivity_S_cm(eq.n0_cm3, eq.p0_cm3,
                                  *_mobilities(setup, T, nd, na, eq.n0_cm3, eq.p0_cm3))
        ratio = 1.0 / (rho * sigma)
        N = N * ratio
        if np.all(np.abs(ratio - 1.0) < 1e-12):
            break
    return N


def _generation(setup: Setup, spectrum, T, depth_cm=None):
    """Generation results over temperature T (1-D array) for one spectrum."""
    from .generation import generate
    o = setup.optics
    Tu, inv = np.unique(np.asarray(T, dtype=float), return_inverse=True)
    kw = dict(front_reflectance=o.get("front_reflectance", 0.0), rear_reflectance=o.get("rear_reflectance", 1.0),
              light_path=o.get("light_path", "lambertian"), base_dir=setup.scenario.base_dir,
              page=setup.scenario.get("absorber.optical_page"), csv_path=_csv(setup.scenario))
    if "coating" in o:
        kw["coating"] = o["coating"]
    g = generate(spectrum, setup.material, setup.thickness_cm, T_K=Tu, depth_cm=depth_cm, **kw)
    return g, inv


def _csv(sc: Scenario):
    p = sc.get("absorber.optical_csv")
    return None if p is None else sc.base_dir / p


def evaluate(setup: Setup, values: Mapping[str, np.ndarray], n: int,
             details: bool = False) -> dict[str, dict[str, np.ndarray]]:
    """All output blocks for `n` points, vectorised over the fast keys.

    values: swept fast keys -> 1-D arrays of length n [units of the key]
    details: also return curves for a single-point report (JV, lifetime, profile)
    """
    from .equilibrium import equilibrium
    sc = setup.scenario
    ab = sc.section("absorber")
    ones = np.ones(n)
    T = ones * np.asarray(values.get("absorber.temperature_K", ab.get("temperature_K", 300.0)), dtype=float)
    check_range("absorber.temperature_K", T, 0.0, None, low_open=True, unit="K")
    nd, na = _doping(setup, values)
    nd, na = ones * nd, ones * na
    rec = setup.recombination
    eq = equilibrium(setup.material, T, nd, na, **_equilibrium_kwargs(setup))
    out: dict[str, dict[str, Any]] = {"equilibrium": _block(eq.to_dict(), n)}
    extra: dict[str, Any] = {"equilibrium": eq}
    G = np.zeros(n)
    if setup.spectrum is not None:
        scale = ones
        for k in LIGHT_SCALING_KEYS:
            if f"light.{k}" in values:
                scale = ones * np.asarray(values[f"light.{k}"], dtype=float)
                check_range(f"light.{k}", scale, 0.0, None)
        g, inv = _generation(setup, setup.spectrum, T)
        gd = _block(g.to_dict(), len(np.atleast_1d(g.average_cm3_s)))
        gen = {k: np.asarray(v)[inv] * (scale if k in ("average_cm3_s", "photocurrent_mA_cm2") else 1.0)
               for k, v in gd.items()}
        G = G + gen["average_cm3_s"]
        out["light"] = {"irradiance_W_m2": setup.spectrum.irradiance_W_m2 * scale,
                        "photon_flux_cm2_s": setup.spectrum.photon_flux_cm2_s * scale}
        out["generation"] = gen
        extra["generation"] = g
    if setup.background is not None:
        gb, inv = _generation(setup, setup.background, T)
        bg = np.asarray(gb.average_cm3_s)[inv]
        G = G + bg
        out.setdefault("generation", {"average_cm3_s": np.zeros(n), "photocurrent_mA_cm2": np.zeros(n),
                                      "absorbed_fraction": np.full(n, np.nan)})
        out["generation"]["background_average_cm3_s"] = bg
    elif "generation" in out:
        out["generation"]["background_average_cm3_s"] = np.full(n, np.nan)
    if rec is not None:
        from .steady_state import solve
        ss = solve(setup.material, eq, rec, G, setup.thickness_cm)
        out["steady_state"] = _block(ss.to_dict(), n)
        extra["steady_state"] = ss
        unconverged = ~np.asarray(ss.converged)
        out["steady_state"]["converged"] = np.asarray(ss.converged) * ones
        if np.any(unconverged):
            extra["warnings"] = [f"{int(unconverged.sum())} operating point(s) did not converge; they are flagged"]
        out["steady_state"]["photoconductance_S"] = _photoconductance(setup, eq, ss, T, nd, na)
        if sc.get("solver.depth_resolved", False) and setup.spectrum is not None:
            prof, extra["profile"] = _depth_resolved(setup, eq, ss, T, nd, na, scale)
            out["profile"] = prof.pop("profile")
            prof["steady_state"]["photoconductance_S"] = out["steady_state"]["photoconductance_S"]
            out["steady_state"] = prof["steady_state"]
        if "detector" in sc.data:
            out["detector"] = _detector_block(setup, eq, ss, T, nd, na, out)
    if details:
        out["_details"] = extra
    return out


VOC_PLANES = {"front": 0, "rear": -1}


def _column(eq):
    """The equilibrium with every array field given a trailing depth axis."""
    changes = {f.name: np.asarray(getattr(eq, f.name))[..., None] for f in dataclasses.fields(eq)
               if isinstance(getattr(eq, f.name), np.ndarray) and getattr(eq, f.name).dtype.kind == "f"}
    return dataclasses.replace(eq, **changes)


def _depth_resolved(setup: Setup, eq, ss, T, nd, na, scale):
    """Depth-resolved steady state: Delta n(x) from the 1-D continuity equation (optogen.profile).

    Returns the `steady_state` block at the stated plane (solver.voc_plane, default the
    illuminated front x = 0) with depth-integrated lifetimes, the `profile` block, and the
    curves for plots.
    """
    from . import profile as pr
    from .materials import optical_constants
    from .steady_state import state_at
    from .transport import ambipolar_diffusivity_cm2_s, diffusivity_cm2_s
    sc, mat, rec, W = setup.scenario, setup.material, setup.recombination, setup.thickness_cm
    plane = str(sc.get("solver.voc_plane", "front")).lower()
    n0, p0, ni_eff = (np.ravel(getattr(eq, k)) for k in ("n0_cm3", "p0_cm3", "ni_eff_cm3"))
    col = _column(eq)

    def d_amb(dn):
        n, p = n0[:, None] + dn, p0[:, None] + dn
        mu_e, mu_h = _mobilities(setup, T[:, None], nd[:, None], na[:, None], n, p)
        return ambipolar_diffusivity_cm2_s(n, p, diffusivity_cm2_s(mu_e, T[:, None]),
                                           diffusivity_cm2_s(mu_h, T[:, None]))

    def bulk(dn):
        r = rec.rates(mat, col, dn, W)
        return r["srh"] + r["radiative"] + r["auger"]

    def surface(side):
        j0 = rec.j0_at_fA_cm2(mat, T, side)
        if j0 is not None:
            return pr.surface_J0(np.asarray(j0)[:, None] * np.ones((T.size, 1)), n0[:, None], p0[:, None],
                                 ni_eff[:, None], field=f"recombination.{side}_J0_fA_cm2")
        S = getattr(rec, f"{side}_S_cm_s")
        return pr.surface_S(0.0 if S is None else S, field=f"recombination.{side}_S_cm_s")

    # mesh: resolve 1/alpha of the light that carries photons and the diffusion length
    spec = setup.spectrum
    flux = spec.photon_flux_cm2_s_nm
    carried = flux >= 0.01 * flux.max()
    oc = optical_constants(mat, spec.wavelength_nm[carried], float(np.max(T)),
                           page=sc.get("absorber.optical_page"), csv_path=_csv(sc))
    alpha = np.ravel(oc.alpha_cm1)
    absorbed = (alpha > 0) & (1.0 / np.where(alpha > 0, alpha, 1.0) < W)
    L = float(np.min(np.sqrt(np.ravel(d_amb(np.ravel(ss.delta_n_cm3)[:, None]))[: T.size]
                             * np.ravel(ss.tau_eff_s))))
    lengths = np.append(1.0 / alpha[absorbed], L if np.isfinite(L) else W)
    wl = np.append(spec.wavelength_nm[carried][absorbed], np.nan)
    x = pr.mesh(W, int(sc.get("solver.nodes", 200)), lengths, wavelength_nm=wl)
    g, inv = _generation(setup, spec, T, depth_cm=x)
    G = np.reshape(g.profile_cm3_s, (-1, x.size))[inv] * np.asarray(scale)[:, None]
    if setup.background is not None:
        gb, invb = _generation(setup, setup.background, T, depth_cm=x)
        G = G + np.reshape(gb.profile_cm3_s, (-1, x.size))[invb]
    sol = pr.solve_profile(x, G, pr.with_derivative(bulk), pr.with_derivative(d_amb),
                           surface("front"), surface("rear"))
    dn_x = sol.delta_n_cm3
    i = VOC_PLANES[plane]
    st = state_at(mat, eq, rec, dn_x[:, i], W)
    # lifetimes from depth-integrated losses: tau_x = <dn> W / integral(U_x dx)
    avg = sol.average_cm3()
    r = rec.rates(mat, col, dn_x, W)
    losses = {"srh": r["srh"] @ sol.control_volume_cm, "radiative": r["radiative"] @ sol.control_volume_cm,
              "auger": r["auger"] @ sol.control_volume_cm, "surface": sol.front_loss_cm2_s + sol.rear_loss_cm2_s}
    with np.errstate(divide="ignore", invalid="ignore"):
        taus = {k: np.where(v > 0, avg * W / np.where(v > 0, v, 1.0), np.inf) for k, v in losses.items()}
        tau_eff = np.where(sol.generation_cm2_s > 0, avg * W / sol.generation_cm2_s, ss.tau_eff_s)
    names = np.array(list(losses))
    steady = {k: np.asarray(st[k]) for k in ("delta_n_cm3", "delta_p_cm3", "n_cm3", "p_cm3", "np_over_ni2",
                                             "splitting_eV", "implied_voc_V", "electron_qfl_eV", "hole_qfl_eV",
                                             "injection_ratio", "log10_np_over_ni2")}
    steady.update({"implied_ff": np.full(T.size, np.nan), "tau_eff_s": tau_eff,
                   **{f"tau_s.{k}": v for k, v in taus.items()},
                   "limiting_mechanism": names[np.argmax(np.stack(list(losses.values())), axis=0)],
                   "converged": (np.asarray(sol.converged) & np.asarray(ss.converged)) * 1.0})
    uni_voc = np.ravel(ss.implied_voc_V)
    profile_block = {
        "plane": np.full(T.size, plane, dtype=object),
        "front_delta_n_cm3": sol.front_cm3(), "rear_delta_n_cm3": sol.rear_cm3(),
        "average_delta_n_cm3": avg, "uniformity": sol.uniformity(),
        "uniform_implied_voc_V": uni_voc,
        "uniform_error_implied_voc_mV": (uni_voc - steady["implied_voc_V"]) * 1e3,
        "uniform_error_average_delta_n": np.ravel(ss.delta_n_cm3) / avg - 1.0,
        "nodes": np.full(T.size, float(x.size)), "converged": np.asarray(sol.converged) * 1.0,
    }
    qfl = state_at(mat, col, rec, dn_x, W)
    curves = {"depth_cm": x, "delta_n_cm3": dn_x, "generation_cm3_s": G,
              "electron_qfl_eV": qfl["electron_qfl_eV"], "hole_qfl_eV": qfl["hole_qfl_eV"],
              "dataarray": sol.to_dataarray()}
    return {"steady_state": steady, "profile": profile_block}, curves


def _mobilities(setup, T, nd, na, n, p):
    from .transport import mobility_cm2_Vs
    return mobility_cm2_Vs(setup.material, T, nd, na, n, p)


def _photoconductance(setup, eq, ss, T, nd, na):
    """Photoconductance Delta sigma W [S] (sheet), with injection-dependent mobilities."""
    from .transport import conductivity_S_cm
    n0, p0 = np.ravel(eq.n0_cm3), np.ravel(eq.p0_cm3)
    n, p = np.ravel(ss.n_cm3), np.ravel(ss.p_cm3)
    sigma0 = conductivity_S_cm(n0, p0, *_mobilities(setup, T, nd, na, n0, p0))
    sigma = conductivity_S_cm(n, p, *_mobilities(setup, T, nd, na, n, p))
    return (sigma - sigma0) * setup.thickness_cm


def _detector_block(setup, eq, ss, T, nd, na, out) -> dict[str, np.ndarray]:
    """The `detector` JSON block: dark against illuminated, gain, responsivity, D*, background."""
    from . import detector as det
    from .steady_state import solve
    d = det.detector_from_table(setup.scenario.section("detector"))
    rec = setup.recombination
    n = T.size
    n0, p0 = np.ravel(eq.n0_cm3), np.ravel(eq.p0_cm3)
    tau_dark = np.ravel(solve(setup.material, eq, rec, np.zeros(n), setup.thickness_cm, with_ff=False).tau_eff_s)
    gen = out.get("generation", {})
    g_opt = gen.get("average_cm3_s", np.zeros(n))
    g_bg = gen.get("background_average_cm3_s", np.zeros(n))
    g_bg = np.where(np.isnan(g_bg), 0.0, g_bg)
    irr = out.get("light", {}).get("irradiance_W_m2", np.zeros(n))
    if d.mode == "photoconductor":
        mu_dark = _mobilities(setup, T, nd, na, n0, p0)
        mu_light = _mobilities(setup, T, nd, na, np.ravel(ss.n_cm3), np.ravel(ss.p_cm3))
        block = det.photoconductor_figures(d, setup.thickness_cm, n0, p0, np.ravel(ss.n_cm3), np.ravel(ss.p_cm3),
                                           mu_dark, mu_light, np.ravel(ss.tau_eff_s), tau_dark, g_opt, g_bg, irr)
    else:
        from .transport import diffusivity_cm2_s
        mu_e, mu_h = _mobilities(setup, T, nd, na, n0, p0)
        D_min = diffusivity_cm2_s(np.where(n0 >= p0, mu_h, mu_e), T)
        rear_S = _rear_S_cm_s(d, rec, setup.material, T, eq)
        block = det.photodiode_figures(d, setup.thickness_cm, T, np.ravel(eq.ni_eff_cm3), n0, p0,
                                       np.ravel(ss.n_cm3), np.ravel(ss.p_cm3), D_min, tau_dark, rear_S,
                                       gen.get("photocurrent_mA_cm2", np.zeros(n)), g_opt, g_bg, irr)
    with np.errstate(divide="ignore", invalid="ignore"):
        block["noise_equivalent_power_W"] = det.noise_equivalent_power_W(
            block["detectivity_cm_Hz05_W"], d.area_cm2, d.bandwidth_Hz)
    block["mode"] = np.full(n, d.mode, dtype=object)
    return {k: (np.broadcast_to(v, (n,)).copy() if np.ndim(v) == 0 or np.size(v) == 1 else np.ravel(v))
            for k, v in block.items()}


def _rear_S_cm_s(d, rec, material, T, eq):
    """Rear recombination velocity for the thin-base J0: [detector] rear_S_cm_s, else the
    [recombination] rear surface (S, or J0 as S_eff = J0 N / (q n_i,eff^2), low injection,
    Kane & Swanson 1985), else 0 (a perfect rear) [cm/s]."""
    from .constants import q_C
    if d.rear_S_cm_s is not None:
        return d.rear_S_cm_s
    if rec.rear_S_cm_s is not None:
        return rec.rear_S_cm_s
    j0 = rec.j0_at_fA_cm2(material, T, "rear")
    if j0 is None:
        return 0.0
    N = np.abs(np.ravel(eq.n0_cm3) - np.ravel(eq.p0_cm3))
    return np.exp(np.log(j0 * 1e-15) + np.log(N) - np.log(q_C) - 2.0 * np.ravel(eq.ln_ni_eff_cm3))


def background_limit(setup: Setup, T_low_K: float = 20.0, T_high_K: float = 400.0):
    """Temperature where the pixel becomes background-limited (root solve over temperature).

    Thermal generation n0 p0 / ((n0 + p0) tau) against the background's
    generation, both from the full pipeline at each trial temperature.
    Returns `detector.BackgroundLimit` (temperature_K, found, note).
    """
    from .detector import background_limit_temperature_K

    def fn(T):
        T = np.atleast_1d(np.asarray(T, dtype=float))
        b = evaluate(setup, {"absorber.temperature_K": T}, T.size)["detector"]
        return b["thermal_generation_cm3_s"], b["background_generation_cm3_s"]
    return background_limit_temperature_K(fn, T_low_K, T_high_K)


def _block(d: Mapping[str, Any], n: int) -> dict[str, np.ndarray]:
    """Flatten a to_dict() block to arrays of length n ("tau_s.srh" for nested keys)."""
    flat: dict[str, Any] = {}
    for k, v in d.items():
        if isinstance(v, Mapping):
            for k2, v2 in v.items():
                flat[f"{k}.{k2}"] = v2
        else:
            flat[k] = v
    res = {}
    for k, v in flat.items():
        if isinstance(v, str) or np.asarray(v).dtype.kind == "U" or any(
                isinstance(x, str) for x in np.ravel(np.asarray(v, dtype=object))):
            res[k] = np.broadcast_to(np.asarray(v, dtype=object), (n,)).copy()
            continue
        a = np.asarray(v, dtype=object)
        a = np.where(a == None, np.nan, a).astype(float)  # noqa: E711 (elementwise None test)
        res[k] = np.broadcast_to(a, (n,)).copy() if a.ndim == 0 or a.size == 1 else a.reshape(-1)
    return res


# ---------------------------------------------------------------------------
# Running a scenario
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class Result:
    """The outcome of a scenario: a labelled Dataset plus single-point details.

    dataset: one dimension per swept key (none for a single point); every
        JSON quantity as a variable with a `units` attribute
    details: for a single point, the core objects (equilibrium, generation,
        steady state, ...) behind the numbers, for curves and plots
    """

    scenario: Scenario
    dataset: xr.Dataset
    details: Mapping[str, Any] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()

    @property
    def is_sweep(self) -> bool:
        return bool(self.scenario.sweep)

    def to_dataset(self) -> xr.Dataset:
        return self.dataset

    def to_dict(self) -> dict:
        """Nested JSON-ready blocks (DESIGN.md keys); null where a quantity does not apply."""
        out: dict[str, Any] = {"title": self.scenario.title, "version": __version__}
        if self.is_sweep:
            out["sweep"] = {a.key: a.values.tolist() for a in self.scenario.sweep}
        for name, da in self.dataset.data_vars.items():
            block, key = da.attrs.get("block"), da.attrs.get("key")
            if not block:
                continue
            node = out.setdefault(block, {})
            if "." in key:
                outer, inner = key.split(".", 1)
                node = node.setdefault(outer, {})
                key = inner
            node[key] = _jsonable(da.values)
        if self.warnings:
            out["warnings"] = list(self.warnings)
        return out


def _jsonable(a):
    a = np.asarray(a)
    if a.dtype.kind == "b":
        return a.tolist()
    if a.dtype.kind in "UO":
        return a.tolist()
    if a.ndim == 0:
        v = float(a)
        return None if not math.isfinite(v) else v
    return [_jsonable(x) for x in a]


def run(scenario: Scenario, *, progress: bool | None = None, workers: int | None = None,
        scheduler: str | None = None, chunk_size: int | None = None) -> Result:
    """Run a scenario: a single point, or every point of its sweep grid.

    progress: show a tqdm bar (None: only on a terminal, after about 1 s) [-]
    workers: run the chunks on a local dask cluster with this many workers [-]
    scheduler: address of an existing dask.distributed scheduler [-]
    chunk_size: points per chunk (default from [solver] chunk_size or 100000) [-]
    """
    sc = scenario
    if not sc.sweep:
        setup = build(sc)
        blocks = evaluate(setup, {}, 1, details=True)
        details = blocks.pop("_details")
        details.update(_point_details(setup, details, blocks))
        if "implied_jv" in details:
            jv = details["implied_jv"]
            blocks["implied_jv"] = {"voc_V": np.ravel(jv.voc_V), "vmp_V": np.ravel(jv.vmp_V),
                                    "jmp_mA_cm2": np.ravel(jv.jmp_mA_cm2), "ff": np.ravel(jv.ff),
                                    "pmax_mW_cm2": np.ravel(jv.pmax_mW_cm2),
                                    "efficiency": np.ravel(np.nan if jv.efficiency is None else jv.efficiency)}
        ds = _dataset(blocks, (), [])
        ds = ds.isel({"point": 0}) if "point" in ds.dims else ds
        _attrs(ds, sc)
        _background_limit_attrs(ds, setup)
        return Result(sc, ds, details, tuple(details.get("warnings", ())))

    chunk = chunk_size if chunk_size is not None else sc.get("solver.chunk_size", DEFAULT_CHUNK)
    if isinstance(chunk, bool) or not isinstance(chunk, int) or chunk < 1:
        raise InputError("solver.chunk_size", chunk, "an integer >= 1")
    axes = list(sc.sweep)
    unit_scaling = swept_light_scaling(sc)
    fast = [a for a in axes if a.key in FAST_KEYS]
    slow = [a for a in axes if a.key not in FAST_KEYS]
    fast_grid = np.meshgrid(*[a.values for a in fast], indexing="ij") if fast else []
    fast_flat = {a.key: g.reshape(-1) for a, g in zip(fast, fast_grid)}
    n_fast = int(np.prod([a.values.size for a in fast])) if fast else 1
    slow_combos = list(itertools.product(*[range(a.values.size) for a in slow]))

    client = _dask_client(workers, scheduler) if (workers or scheduler) else None
    total = len(slow_combos) * n_fast
    merged: dict[str, dict[str, np.ndarray]] = {}     # filled in place: no second copy of the grid

    def store(offset, part):
        for block, vals in part.items():
            for k, v in vals.items():
                dest = merged.setdefault(block, {})
                if k not in dest:       # a block absent from some groups stays NaN / "" there
                    dest[k] = (np.full(total, np.nan) if v.dtype.kind == "f"
                               else np.full(total, "", dtype=object) if v.dtype.kind in "OU"
                               else np.zeros(total, dtype=v.dtype))
                dest[k][offset:offset + v.size] = v

    warnings: list[str] = []
    bar = _progress(progress, total=len(slow_combos) * math.ceil(n_fast / chunk))
    try:
        for g, combo in enumerate(slow_combos):
            fixed = {a.key: a.values[i].item() for a, i in zip(slow, combo)}
            sc_g = sc.with_values(fixed) if fixed else sc
            setup = build(sc_g, unit_scaling)
            if client is None:
                for start in range(0, n_fast, chunk):
                    sl = slice(start, min(start + chunk, n_fast))
                    store(g * n_fast + start,
                          evaluate(setup, {k: v[sl] for k, v in fast_flat.items()}, sl.stop - sl.start))
                    bar.update(1)
            else:
                store(g * n_fast, _evaluate_dask(client, setup, fast_flat, n_fast, chunk))
                bar.update(math.ceil(n_fast / chunk))
    finally:
        bar.close()
        if client is not None:
            cluster = client.cluster if not scheduler else None
            client.close()
            if cluster is not None:
                cluster.close()
    if "steady_state" in merged and "converged" in merged["steady_state"]:
        bad = int(np.sum(merged["steady_state"]["converged"] == 0))
        if bad:
            warnings.append(f"{bad} operating point(s) did not converge; see the 'converged' variable")
    # reorder from (slow..., fast...) to the scenario's axis order
    order = slow + fast
    perm = [order.index(a) for a in axes]
    shape = [a.values.size for a in order]
    merged = {b: {k: np.transpose(v.reshape(shape), perm).reshape(-1) for k, v in vals.items()}
              for b, vals in merged.items()}
    ds = _dataset(merged, [a.values.size for a in axes], axes)
    _attrs(ds, sc)
    if not slow:
        _background_limit_attrs(ds, setup)
    return Result(sc, ds, {}, tuple(warnings))


def _point_details(setup: Setup, details, blocks) -> dict[str, Any]:
    """Curves behind a single point: implied J-V and lifetime against delta n."""
    from .steady_state import implied_jv, lifetime_curve
    out: dict[str, Any] = {"setup": setup}
    eq, rec = details["equilibrium"], setup.recombination
    if rec is None or "steady_state" not in details:
        return out
    lc = lifetime_curve(setup.material, eq, rec, setup.thickness_cm)
    out["lifetime_curve"] = {k: np.ravel(getattr(lc, k)) for k in (
        "delta_n_cm3", "tau_eff_s", "tau_srh_s", "tau_radiative_s", "tau_auger_s", "tau_surface_s")}
    jph = float(blocks.get("generation", {}).get("photocurrent_mA_cm2", [0.0])[0])
    irr = float(blocks.get("light", {}).get("irradiance_W_m2", [0.0])[0])
    if jph > 0:
        out["implied_jv"] = implied_jv(setup.material, eq, rec, setup.thickness_cm, jph,
                                       irradiance_W_m2=irr if irr > 0 else None)
    return out


def _background_limit_attrs(ds: xr.Dataset, setup: Setup) -> None:
    """Record the background-limit temperature for a detector looking at a warm background."""
    sc = setup.scenario
    if "detector" not in sc.data or "background" not in sc.data or setup.recombination is None:
        return
    bl = background_limit(setup)
    ds.attrs["background_limit_temperature_K"] = bl.temperature_K if bl.found else float("nan")
    ds.attrs["background_limit_note"] = bl.note
    for name in ("background_limit_temperature_K", "background_limit_note"):
        ds[name] = ((), ds.attrs[name], {"units": "K" if name.endswith("_K") else "1",
                                          "block": "detector", "key": name})


def _dataset(blocks, shape, axes) -> xr.Dataset:
    dims = [a.key for a in axes] if axes else ["point"]
    shape = list(shape) if axes else [-1]
    data_vars = {}
    for block, vals in blocks.items():
        for key, arr in vals.items():
            name = var_name(block, key)
            arr = np.asarray(arr)
            if name == "converged":
                arr = arr.astype(bool)
            data_vars[name] = (dims, arr.reshape(shape),
                               {"units": unit_of(name), "block": block, "key": key})
    coords = {a.key: (a.key, a.values, {"units": a.unit}) for a in axes} if axes else {}
    return xr.Dataset(data_vars, coords=coords)


def _attrs(ds: xr.Dataset, sc: Scenario) -> None:
    ds.attrs.update({
        "title": sc.title,
        "scenario": sc.text,
        "optogen_version": __version__,
        "created": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "swept_keys": ", ".join(a.key for a in sc.sweep) or "(single point)",
    })


def _progress(progress, total):
    import sys
    from tqdm.auto import tqdm
    disable = (not sys.stderr.isatty()) if progress is None else (not progress)
    return tqdm(total=total, disable=disable, delay=1.0, unit="chunk", desc="optogen sweep")


def _dask_client(workers, scheduler):
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:  # pragma: no cover - depends on the installation
        raise InputError("--workers/--scheduler", workers or scheduler,
                         "needs dask and distributed: pip install 'optogen[dask]'") from None
    if scheduler:
        return Client(scheduler)
    check = int(workers)
    if check < 1:
        raise InputError("--workers", workers, "an integer >= 1")
    cluster = LocalCluster(n_workers=check, threads_per_worker=1, processes=True, dashboard_address=None)
    return Client(cluster)


def _evaluate_dask(client, setup, fast_flat, n_fast, chunk):
    """The same chunks as the in-process path, as an xarray.map_blocks over dask arrays.

    The swept fast values form a Dataset chunked along "point" with the same
    chunk size as the in-process loop, so every chunk sees the same inputs and
    the answers are identical.
    """
    probe = evaluate(setup, {k: v[:1] for k, v in fast_flat.items()}, 1)
    names = [(b, k) for b in probe for k in probe[b]]
    inputs = xr.Dataset({f"in{i}": ("point", v) for i, v in enumerate(fast_flat.values())},
                        coords={"point": np.arange(n_fast)}).chunk({"point": chunk})
    template = xr.Dataset({f"v{j}": ("point", np.empty(n_fast, dtype=probe[b][k].dtype))
                           for j, (b, k) in enumerate(names)},
                          coords={"point": np.arange(n_fast)}).chunk({"point": chunk})
    keys = list(fast_flat)

    def block(ds_in: xr.Dataset) -> xr.Dataset:
        n = ds_in.sizes["point"]
        res = evaluate(setup, {k: ds_in[f"in{i}"].values for i, k in enumerate(keys)}, n)
        return xr.Dataset({f"v{j}": ("point", res[b][k]) for j, (b, k) in enumerate(names)},
                          coords={"point": ds_in["point"].values})

    if not keys:   # a sweep of slow keys only: one point per group
        return evaluate(setup, {}, n_fast)
    out = xr.map_blocks(block, inputs, template=template).compute(scheduler=client)
    merged: dict[str, dict[str, np.ndarray]] = {}
    for j, (b, k) in enumerate(names):
        merged.setdefault(b, {})[k] = out[f"v{j}"].values
    return merged
