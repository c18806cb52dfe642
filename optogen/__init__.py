"""optogen: carriers in a semiconductor absorber, in the dark and under light.

Python API::

    import optogen
    sc = optogen.load_scenario("scenarios/rooftop_n_wafer.toml")
    res = optogen.run(sc.with_values({"light.suns": 0.5}))
    res.to_dict(); res.to_dataset()
"""
from importlib.metadata import PackageNotFoundError, version as _version

try:
    __version__ = _version("optogen")
except PackageNotFoundError:  # running from a source tree
    __version__ = "0.0.0+src"

from .errors import InputError  # noqa: E402
from .scenario import Scenario, load_scenario  # noqa: E402


def run(scenario, **kwargs):
    """Run a scenario (a Scenario, a path or TOML text); see optogen.runner.run."""
    from .runner import run as _run
    if not isinstance(scenario, Scenario):
        scenario = load_scenario(scenario)
    return _run(scenario, **kwargs)


__all__ = ["InputError", "Scenario", "load_scenario", "run", "__version__"]
