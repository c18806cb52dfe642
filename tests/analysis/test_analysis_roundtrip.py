"""Round trips: data made by the forward model with known parameters (invented values, demo only) plus
noise are recovered by the analysis within the uncertainty it reports (hypothesis, derandomized)."""
import numpy as np
from hypothesis import HealthCheck, given, settings, strategies as st

from optogen import materials
from optogen.analysis.ids import ids_with_j0_uncertainty
from optogen.analysis.implied import implied_from_rates, model_rates
from optogen.analysis.j0 import fit_global
from optogen.analysis.model import mechanisms
from optogen.analysis.sample import sample
from optogen.analysis.uncertainty import parameter_samples
from optogen.recombination import Defect, Recombination
from optogen.steady_state import lifetime_curve

SI = materials.get("Si")
W = 0.018


@settings(max_examples=10, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(j0=st.floats(2.0, 60.0), tau_n0=st.floats(1e-4, 3e-3), ratio=st.floats(0.3, 10.0),
       kind=st.sampled_from(["n", "p"]), doping=st.floats(3e14, 5e15), seed=st.integers(0, 2**31 - 1))
def test_fit_recovers_j0_and_srh_within_reported_uncertainty(j0, tau_n0, ratio, kind, doping, seed):
    nd, na = (doping, 0.0) if kind == "n" else (0.0, doping)
    smp = sample(SI, 300.0, nd, na, W)
    et = 0.5 * float(smp.eq.effective_gap_eV)           # the level is known here (held), as with a named defect
    tau_p0 = ratio * tau_n0
    rec = Recombination(defects=(Defect("demo", energy_eV=et, tau_n0_s=tau_n0, tau_p0_s=tau_p0),),
                        front_J0_fA_cm2=j0 / 2, rear_J0_fA_cm2=j0 / 2, J0_reference_K=None)
    dn = np.logspace(13, 16.5, 40)
    rng = np.random.default_rng(seed)
    noise = 0.015
    tau = lifetime_curve(SI, smp.eq, rec, W, dn).tau_eff_s * (1 + noise * rng.standard_normal(dn.size))
    m = mechanisms(smp, dn)
    fit = fit_global(m, tau, np.full(dn.size, noise), level_from_ev_eV=et)
    b = fit.best
    z = np.abs(b.theta[:3] - np.log([j0, tau_n0, tau_p0])) / b.std[:3]
    assert np.all(z <= 3.5), (z, b.theta, b.std)          # 3.5 sigma: three parameters, ten cases
    # the implied Voc of the fitted model against the truth, within its propagated uncertainty
    jgen = 40.0
    true = implied_from_rates(smp, sum(model_rates(smp, j0, tau_n0, tau_p0, et).values()), jgen).voc_V[0]
    ps = parameter_samples(b, 200, seed=1)
    r = model_rates(smp, ps[:, 0], ps[:, 1], ps[:, 2], np.full(200, et))
    vs = implied_from_rates(smp, sum(r.values()), jgen).voc_V
    fitted = implied_from_rates(smp, sum(model_rates(smp, b.J0_fA_cm2, b.tau_n0_s, b.tau_p0_s, et).values()),
                                jgen).voc_V[0]
    assert abs(fitted - true) <= 3.5 * np.std(vs, ddof=1)


@settings(max_examples=4, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(level=st.sampled_from([0.25, 0.30, 0.82, 0.86]), seed=st.integers(0, 2**31 - 1))
def test_ids_of_two_wafers_recovers_the_level_in_one_of_two_branches(level, seed):
    # the same defect (tau_n0 = 1e-4 s, tau_p0 = 1e-3 s, E_t - E_v = level) in two p-type wafers of different
    # doping, each with its own J0: Rein 2005's two-curve IDLS gives one solution in each half of the gap
    rng = np.random.default_rng(seed)
    fits = []
    for na, j0 in ((1e15, 10.0), (1e16, 20.0)):
        smp = sample(SI, 300.0, 0.0, na, W)
        rec = Recombination(defects=(Defect("demo", energy_eV=level, tau_n0_s=1e-4, tau_p0_s=1e-3),),
                            front_J0_fA_cm2=j0, J0_reference_K=None)
        dn = np.logspace(13, 16.3, 50)
        tau = lifetime_curve(SI, smp.eq, rec, W, dn).tau_eff_s * (1 + 0.01 * rng.standard_normal(dn.size))
        m = mechanisms(smp, dn)
        b = fit_global(m, tau, np.full(dn.size, 0.01)).best      # level searched: J0 free of the level's shape
        fits.append((m, tau, np.full(dn.size, 0.01), b.J0_fA_cm2, b.J0_fA_cm2 * b.std[0]))
    d = ids_with_j0_uncertainty(fits)
    assert {br.half for br in d.branches} == {"lower", "upper"}
    half = "lower" if level < d.intrinsic_level_eV else "upper"
    br = next(b for b in d.branches if b.half == half)
    lo, hi = br.level_interval_eV
    spacing = d.level_eV[1] - d.level_eV[0]
    assert lo - spacing <= level <= hi + spacing, (level, br)
    assert abs(br.tau_n0_s - 1e-4) <= 3.5 * br.tau_n0_std_s, br
    assert abs(br.tau_p0_s - 1e-3) <= 3.5 * br.tau_p0_std_s, br
