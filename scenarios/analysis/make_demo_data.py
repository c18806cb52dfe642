"""Regenerate the invented demo data of scenarios/analysis/ (demo only, not measurements).

The curves come from optogen's forward model (the same physics the analysis inverts) with the
invented parameters written in each CSV's first line, plus seeded Gaussian noise:

    /path/to/python scenarios/analysis/make_demo_data.py
"""
from pathlib import Path

import numpy as np
from scipy.constants import e as Q_C
from scipy.integrate import solve_ivp

from optogen import materials
from optogen.analysis.photoconductance import photoconductance_of
from optogen.analysis.sample import sample
from optogen.recombination import DEFECTS, Defect, Recombination
from optogen.steady_state import lifetime_curve
import dataclasses

HERE = Path(__file__).resolve().parent
SI = materials.get("Si")


def write(name, header, comment, rows):
    lines = [f"# invented demo data, not a measurement: {comment}", header]
    lines += [",".join(f"{v:.6g}" for v in r) for r in rows]
    (HERE / name).write_text("\n".join(lines) + "\n", encoding="utf-8")


def n_wafer():
    rng = np.random.default_rng(11)
    smp = sample(SI, 300.0, 4e14, 0.0, 0.0160)
    rec = Recombination(defects=(Defect("demo", tau_n0_s=4e-3, tau_p0_s=4e-3),), front_J0_fA_cm2=4.0,
                        rear_J0_fA_cm2=4.0, J0_reference_K=None)
    dn = np.logspace(13.5, 16.5, 45)
    tau = lifetime_curve(SI, smp.eq, rec, smp.thickness_cm, dn).tau_eff_s * (1 + 0.02 * rng.standard_normal(dn.size))
    write("n_wafer_lifetime.csv", "delta_n_cm3,tau_s",
          "n-type Si N_D 4e14, 160 um, J0 4+4 fA/cm2, mid-gap SRH tau_n0 = tau_p0 = 4 ms, 2 % noise",
          zip(dn, tau))


def p_wafer_iron():
    rng = np.random.default_rng(12)
    smp = sample(SI, 300.0, 0.0, 1.5e16, 0.0180)
    dn = np.logspace(12.7, 15.8, 40)
    for state, name in (("FeB", "paired"), ("Fe_i", "dissociated")):
        d = dataclasses.replace(DEFECTS[state], density_cm3=2e11)
        rec = Recombination(defects=(d,), front_J0_fA_cm2=10.0, rear_J0_fA_cm2=10.0, J0_reference_K=None)
        tau = lifetime_curve(SI, smp.eq, rec, smp.thickness_cm, dn).tau_eff_s * (1 + 0.01 * rng.standard_normal(dn.size))
        write(f"p_wafer_iron_{name}.csv", "delta_n_cm3,tau_s",
              f"p-type Si N_A 1.5e16, 180 um, {state} of 2e11 cm-3 iron, J0 10+10 fA/cm2, 1 % noise", zip(dn, tau))


def n_wafer_transient():
    rng = np.random.default_rng(13)
    smp = sample(SI, 300.0, 4e14, 0.0, 0.0160)
    rec = Recombination(defects=(Defect("demo", tau_n0_s=1e-3, tau_p0_s=1e-3),), front_J0_fA_cm2=10.0,
                        rear_J0_fA_cm2=10.0, J0_reference_K=None)
    prep = rec.prepare(SI, smp.eq, smp.thickness_cm, (1,))
    jsun = 38.0                                         # demo 1-sun photocurrent [mA/cm2], as in the scenario
    g1 = jsun * 1e-3 / (Q_C * smp.thickness_cm)
    t = np.linspace(0.0, 8e-3, 1601)
    suns = 50.0 * np.exp(-t / 2e-4)                  # a decaying flash
    sol = solve_ivp(lambda tt, y: [50.0 * np.exp(-tt / 2e-4) * g1 - float(prep.total(np.array([max(y[0], 0.0)]))[0])],
                    (0.0, t[-1]), [0.0], t_eval=t, rtol=1e-10, atol=1e3, method="LSODA")
    dn = sol.y[0]
    pc = photoconductance_of(smp, dn) * (1 + 0.003 * rng.standard_normal(dn.size))
    pc = np.maximum(pc, 0.0)
    keep = t >= 0.3e-3                                  # the record starts after the flash peak
    write("n_wafer_transient.csv", "time_s,photoconductance_S,suns",
          "n-type Si N_D 4e14, 160 um, J0 10+10 fA/cm2, mid-gap SRH 1 ms, 1-sun photocurrent 38 mA/cm2, "
          "flash 50 suns x exp(-t/0.2 ms), 0.3 % noise", zip(t[keep], pc[keep], suns[keep]))


if __name__ == "__main__":
    n_wafer()
    p_wafer_iron()
    n_wafer_transient()
