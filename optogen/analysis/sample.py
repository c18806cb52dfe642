"""The measured sample: material, dark equilibrium, thickness and the intrinsic rates, from a scenario.

Everything here is built with the forward physics of optogen (no second copy):
`optogen.pipeline.build` (material, thickness, `[recombination]` settings),
`optogen.pipeline.setup.doping_of` / `equilibrium_options` (doping or resistivity input, the
equilibrium options), `optogen.pipeline.setup.generation_of` (the 1-sun generation through the
optics model), `optogen.equilibrium.equilibrium`
(dark state) and `optogen.recombination.Recombination.prepare` / `PreparedRates.rates`
(intrinsic Auger + radiative rates and the injection-dependent narrowing).
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

import numpy as np

from optogen.equilibrium import equilibrium
from optogen.errors import InputError
from optogen.recombination import Recombination
from optogen.scenario import Scenario
# the pipeline's set-up step, in one place here (its module path is the lead's to move)
from optogen.pipeline import build
from optogen.pipeline.setup import doping_of, equilibrium_options, generation_of


@dataclass(frozen=True, eq=False)
class Sample:
    """A uniform wafer as the analysis sees it (scalars).

    material: `optogen.materials.Material`; eq: its scalar `Equilibrium`; thickness_cm: W [cm];
    temperature_K [K]; donors_cm3, acceptors_cm3 [cm^-3]; intrinsic: a `Recombination` with the
    scenario's intrinsic, narrowing, B_rel and photon-recycling settings and no defect or surface
    (the mechanisms the analysis fits); defects: the scenario's `[[recombination.defects]]`
    (a level energy to hold fixed in the fit, or the iron library) [-]; equilibrium_kwargs: as
    passed to `equilibrium` [-].
    """

    material: Any
    eq: Any
    thickness_cm: float
    temperature_K: float
    donors_cm3: float
    acceptors_cm3: float
    intrinsic: Recombination
    defects: tuple = ()
    equilibrium_kwargs: dict = dataclasses.field(default_factory=dict)

    @property
    def n0_cm3(self) -> float:
        return float(self.eq.n0_cm3)

    @property
    def p0_cm3(self) -> float:
        return float(self.eq.p0_cm3)

    @property
    def doping_cm3(self) -> float:
        """Net doping |n0 - p0| (the majority density less the minority) [cm^-3]."""
        return abs(self.n0_cm3 - self.p0_cm3)

    @property
    def kind(self) -> str:
        """"n" or "p" (the majority carrier) [-]."""
        return "n" if self.n0_cm3 >= self.p0_cm3 else "p"

    def prepared(self, size: int, rec: Recombination | None = None):
        """`PreparedRates` of `rec` (default: the intrinsic mechanisms) for `size` points [-]."""
        return (rec or self.intrinsic).prepare(self.material, self.eq, self.thickness_cm, (int(size),))

    def with_(self, **changes) -> "Sample":
        """A sample with thickness_cm, donors_cm3 or acceptors_cm3 changed (equilibrium recomputed)."""
        new = dataclasses.replace(self, **changes)
        if "donors_cm3" in changes or "acceptors_cm3" in changes:
            eq = equilibrium(self.material, self.temperature_K, new.donors_cm3, new.acceptors_cm3,
                             **self.equilibrium_kwargs)
            new = dataclasses.replace(new, eq=eq)
        return new


def sample_from_scenario(sc: Scenario) -> Sample:
    """The `Sample` of a scenario's `[absorber]` (and `[recombination]` intrinsic settings).

    The thickness is required (`absorber.thickness_um`): every rate per volume depends on it.
    Defects and surfaces written in `[recombination]` are not used as mechanisms (they are what
    the analysis measures); a defect's level energy is kept for the fit, its name for the
    iron analysis.
    """
    if "thickness_um" not in (sc.data.get("absorber") or {}):
        raise InputError("absorber.thickness_um", None, "the wafer thickness (> 0 um) for a lifetime analysis",
                         "every recombination rate per volume and J0 depend on it")
    setup = build(sc)
    ab = sc.section("absorber")
    rec = setup.recombination if setup.recombination is not None else Recombination.from_table({})
    eq_kwargs = equilibrium_options(setup)
    nd, na = (float(x) for x in doping_of(setup, {}))
    T = float(ab.get("temperature_K", 300.0))
    eq = equilibrium(setup.material, T, nd, na, **eq_kwargs)
    intrinsic = dataclasses.replace(rec, defects=(), front_J0_fA_cm2=None, rear_J0_fA_cm2=None,
                                    front_S_cm_s=None, rear_S_cm_s=None)
    return Sample(setup.material, eq, setup.thickness_cm, T, nd, na, intrinsic, rec.defects, eq_kwargs)


def sample(material, temperature_K: float, donors_cm3: float, acceptors_cm3: float, thickness_cm: float,
           recombination: Recombination | None = None, **equilibrium_kwargs) -> Sample:
    """A `Sample` built directly (Python API and tests).

    material: a `Material`; temperature_K [K]; donors_cm3, acceptors_cm3 [cm^-3];
    thickness_cm: W [cm]; recombination: intrinsic settings (defects and surfaces are dropped) [-].
    """
    rec = recombination or Recombination()
    equilibrium_kwargs.setdefault("bgn_model", rec.bgn_model)
    eq = equilibrium(material, temperature_K, donors_cm3, acceptors_cm3, **equilibrium_kwargs)
    intrinsic = dataclasses.replace(rec, defects=(), front_J0_fA_cm2=None, rear_J0_fA_cm2=None,
                                    front_S_cm_s=None, rear_S_cm_s=None)
    return Sample(material, eq, float(thickness_cm), float(temperature_K), float(donors_cm3), float(acceptors_cm3),
                  intrinsic, rec.defects, equilibrium_kwargs)


def one_sun_photocurrent_mA_cm2(sc: Scenario, smp: Sample) -> float:
    """Photogeneration current of the sample under AM1.5G at 1 sun through the scenario's optics [mA cm^-2].

    `optogen.light.standard("AM1.5G")` scaled to 1 sun (`light.scale`), then the generation
    module with the `[optics]` section (`pipeline.setup.generation_of`): J_ph = q integral Phi A dlambda.
    """
    from optogen import light
    setup = build(sc)
    spec = light.scale(light.standard("AM1.5G"), suns=1.0)
    g, inv = generation_of(setup, spec, np.array([smp.temperature_K]))
    return float(np.ravel(g.photocurrent_mA_cm2)[inv][0])
