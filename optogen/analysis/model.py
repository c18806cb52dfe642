"""The recombination of a measured wafer, split by mechanism, at the measured excess densities.

1/tau_eff(dn) = 1/tau_intrinsic(dn) + 1/tau_SRH(dn; tau_n0, tau_p0, E_t) + J0 x(dn)

* 1/tau_intrinsic = (U_Auger + U_radiative)/dn from the scenario's intrinsic model
  (`Recombination.prepare(...).rates`, Richter 2012 for Si by default);
* 1/tau_SRH = U_SRH/dn from `optogen.recombination.srh_shockley_read_hall1952` with n1, p1 from
  `trap_densities_cm3`;
* the surface term J0 x(dn): x = U_s(J0 = 1 fA cm^-2)/dn from `optogen.recombination.surface_j0`
  (the one J0 law, Kane & Swanson 1985), J0 the SUM of both surfaces' J0 at the measurement
  temperature [fA cm^-2];

all with the injection-dependent narrowing shift ln(n_i,eff^2(n, p)/(n0 p0)) of
`PreparedRates.ni2_shift` (Schenk 1998 for Si by default).  Nothing is re-derived here: these
are the forward model's functions evaluated at the measured dn.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optogen.recombination import excess_product_cm6, srh_shockley_read_hall1952, surface_j0, trap_densities_cm3

from .sample import Sample


@dataclass(frozen=True, eq=False)
class Mechanisms:
    """Per-point constants of the forward model at excess densities dn (all shape (D,)).

    delta_n_cm3 [cm^-3]; shift: ln(n_i,eff^2(n, p)/(n0 p0)) [-]; inv_tau_auger_s, inv_tau_radiative_s:
    1/tau of the intrinsic mechanisms [1/s]; x_j0: surface 1/tau per fA cm^-2 of summed J0
    [s^-1 (fA cm^-2)^-1]; excess_product_cm6: n p - n_i,eff^2 [cm^-6].
    """

    sample: Sample
    delta_n_cm3: np.ndarray
    shift: np.ndarray
    inv_tau_auger_s: np.ndarray
    inv_tau_radiative_s: np.ndarray
    x_j0: np.ndarray
    excess_product_cm6: np.ndarray

    @property
    def inv_tau_intrinsic_s(self) -> np.ndarray:
        """1/tau of Auger + radiative recombination [1/s]."""
        return self.inv_tau_auger_s + self.inv_tau_radiative_s

    def level_densities_cm3(self, level_from_ev_eV):
        """(n1, p1) [cm^-3] of a level at E_t - E_v [eV] (any shape), from `trap_densities_cm3`."""
        eq = self.sample.eq
        return trap_densities_cm3(level_from_ev_eV, float(eq.effective_gap_eV), float(eq.nc_cm3),
                                  float(eq.nv_cm3), self.sample.temperature_K)

    def inv_tau_srh_s(self, tau_n0_s, tau_p0_s, level_from_ev_eV):
        """1/tau_SRH [1/s] at every dn; parameters scalars or arrays of shape (S, 1, 1) -> (S, D).

        The forward model's `srh_shockley_read_hall1952` (the trailing axis is its level axis).
        """
        n1, p1 = self.level_densities_cm3(level_from_ev_eV)
        u = srh_shockley_read_hall1952(self.sample.n0_cm3, self.sample.p0_cm3, self.delta_n_cm3, tau_n0_s, tau_p0_s,
                                       n1, p1, self.shift)
        return u / self.delta_n_cm3

    def srh_basis(self, level_from_ev_eV):
        """(A, B) with tau_SRH = tau_n0 A + tau_p0 B at every dn, for levels of shape (E,) -> (E, D) [-].

        tau_SRH = dn / U_SRH is linear in (tau_n0, tau_p0) (Shockley & Read 1952; Hall 1952:
        tau_SRH = [tau_p0 (n + n1') + tau_n0 (p + p1')] dn / (n p - n_i,eff^2)), the form used by
        lifetime spectroscopy (Rein 2005).  A and B are taken from two evaluations of the forward
        model's `srh_shockley_read_hall1952` (no second copy of the formula):
        tau_a = tau_SRH(1, r) = A + r B and tau_b = tau_SRH(r, 1) = r A + B, r = 2^-30, solved
        exactly for A and B (relative rounding below 1e-9 even where B/A ~ 1e16).
        """
        et = np.asarray(level_from_ev_eV, dtype=float)[..., None, None]     # trailing level axis
        n1, p1 = self.level_densities_cm3(et)
        smp = self.sample

        def tau_srh(tn, tp):
            u = srh_shockley_read_hall1952(smp.n0_cm3, smp.p0_cm3, self.delta_n_cm3, tn, tp, n1, p1, self.shift)
            return self.delta_n_cm3 / u

        r = 2.0 ** -30
        ta, tb = tau_srh(1.0, r), tau_srh(r, 1.0)
        return (ta - r * tb) / (1.0 - r * r), (tb - r * ta) / (1.0 - r * r)

    def inv_tau_eff_s(self, J0_fA_cm2, tau_n0_s, tau_p0_s, level_from_ev_eV):
        """1/tau_eff of the model [1/s] (parameters as in `inv_tau_srh_s`)."""
        j0 = np.asarray(J0_fA_cm2, dtype=float)
        j0 = j0[..., 0] if j0.ndim else j0                # (S, 1, 1) -> (S, 1), broadcasting with (D,)
        return self.inv_tau_intrinsic_s + j0 * self.x_j0 + self.inv_tau_srh_s(tau_n0_s, tau_p0_s, level_from_ev_eV)


def mechanisms(smp: Sample, delta_n_cm3) -> Mechanisms:
    """The forward model's per-point constants at the excess densities `delta_n_cm3` (> 0) [cm^-3]."""
    dn = np.asarray(delta_n_cm3, dtype=float).reshape(-1)
    prep = smp.prepared(dn.size)
    shift = np.broadcast_to(np.asarray(prep.ni2_shift(dn), dtype=float), dn.shape).copy()
    _, rad, aug, _ = prep.rates(dn, shift)
    x = surface_j0(smp.n0_cm3, smp.p0_cm3, dn, 1.0, smp.thickness_cm, shift, J0_reference_K=None) / dn
    exc = excess_product_cm6(smp.n0_cm3, smp.p0_cm3, dn, shift)
    return Mechanisms(smp, dn, shift, aug / dn, rad / dn, x, exc)
