"""Analysis of measured injection-dependent lifetime data (the inverse of the forward model).

``analyse(scenario)`` reads the `[measurement]` section (a lifetime curve or a photoconductance
record), removes the intrinsic rate, finds J0 (Kane & Swanson 1985 and a global fit), the bulk
SRH parameters and the level branches (Rein 2005), implied Voc/J-V/FF from the measured curve,
iron (Zoth & Bergholz 1990) and the uncertainties.  Every rate comes from the forward physics
(`optogen.recombination`, `optogen.steady_state`, `optogen.transport`, `optogen.equilibrium`).
"""
from .command import AnalysisResult, analyse, analyse_folder, check, load, main

__all__ = ["AnalysisResult", "analyse", "analyse_folder", "check", "load", "main"]
