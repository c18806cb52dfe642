"""The pipeline: a scenario in, a result out (single point or sweep).

Data flows one way: materials -> equilibrium -> (light, optics) -> generation ->
recombination -> steady_state -> detector / profile.  The pipeline only gathers scenario
values, calls the core and labels the outputs, in four steps, one module each:

* `setup`: what is built once per group of points (`build`, `Setup`);
* `point`: every output block for a vector of operating points (`evaluate`);
* `result`: blocks -> labelled Dataset -> `Result`;
* `sweep`: a single point or the whole sweep grid, in chunks, optionally on dask (`run`).
"""
from .point import background_limit, evaluate
from .result import Result, var_name
from .setup import FAST_KEYS, LIGHT_SCALING_KEYS, Setup, build, check, swept_light_scaling
from .sweep import run

__all__ = ["FAST_KEYS", "LIGHT_SCALING_KEYS", "Result", "Setup", "background_limit", "build", "check", "evaluate",
           "run", "swept_light_scaling", "var_name"]
