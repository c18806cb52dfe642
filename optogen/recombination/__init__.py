"""Recombination: Shockley-Read-Hall, radiative, Auger and surfaces.

Layout (one file per topic): `product` (the common factor n p - n_i,eff^2), `srh`
(Shockley-Read-Hall: `Defect`, `DEFECTS`, the rate), `intrinsic` (radiative and Auger: one
coefficient function per published model, registered in `optogen.registry`), `surface`
(the J0 law and S_eff), `rates` (`Recombination`, `PreparedRates`: the solver's hot path).
Every public name is re-exported here.
"""
from __future__ import annotations

from .product import excess_product_cm6
from .srh import DEFECTS, Defect, defect_from_table, srh_shockley_read_hall1952, trap_densities_cm3
from .intrinsic import (INTRINSIC_MODELS, IntrinsicCoefficients, auger_from_coefficients,
                        intrinsic_coefficients_dziewior_schmid1977, intrinsic_coefficients_kerr_cuevas2002,
                        intrinsic_coefficients_material, intrinsic_coefficients_richter2012, intrinsic_rates_cm3_s,
                        radiative_b_trupke2003, radiative_band_to_band)
from .surface import j0_at_temperature_fA_cm2, surface_j0, surface_j0_flux_cm2_s, surface_velocity_j0_cm_s
from .rates import INJECTION_BGN_MODELS, MECHANISMS, PreparedRates, Recombination, _eq_shape  # noqa: F401 (_eq_shape: steady_state)

__all__ = [
    "excess_product_cm6",
    "DEFECTS", "Defect", "defect_from_table", "srh_shockley_read_hall1952", "trap_densities_cm3",
    "INTRINSIC_MODELS", "IntrinsicCoefficients", "auger_from_coefficients",
    "intrinsic_coefficients_richter2012", "intrinsic_coefficients_kerr_cuevas2002",
    "intrinsic_coefficients_dziewior_schmid1977", "intrinsic_coefficients_material", "intrinsic_rates_cm3_s",
    "radiative_b_trupke2003", "radiative_band_to_band",
    "j0_at_temperature_fA_cm2", "surface_j0", "surface_j0_flux_cm2_s", "surface_velocity_j0_cm_s",
    "INJECTION_BGN_MODELS", "MECHANISMS", "PreparedRates", "Recombination",
]
