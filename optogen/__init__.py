"""optogen: carriers in a semiconductor absorber, in the dark and under light.

Python API::

    import optogen
    sc = optogen.load_scenario("scenarios/rooftop_n_wafer.toml")
    res = optogen.run(sc.with_values({"light.suns": 0.5}))
    res.to_dict(); res.to_dataset()
"""
from ._version import __version__
from .errors import InputError
from .scenario import Scenario, load_scenario


def run(scenario, **kwargs):
    """Run a scenario (a Scenario, a path or TOML text); see `optogen.pipeline.run`."""
    from .pipeline import run as _run     # the pipeline imports the whole core: only when a run is asked for
    if not isinstance(scenario, Scenario):
        scenario = load_scenario(scenario)
    return _run(scenario, **kwargs)


__all__ = ["InputError", "Scenario", "load_scenario", "run", "__version__"]
