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


def run(scenario, *, spectrum=None, **kwargs):
    """Run a scenario (a Scenario, a path or TOML text); see `optogen.pipeline.run`.

    Parameters
    ----------
    scenario : Scenario or str or pathlib.Path
        The scenario, a path to a scenario file, or TOML text.
    spectrum : tuple of array_like, pandas.Series, pandas.DataFrame or light.Spectrum, optional
        A measured spectrum to use as the [light] source instead of the scenario's:
        (wavelength_nm, irradiance_W_m2_nm) arrays [nm], [W m^-2 nm^-1], a pandas Series
        (index: wavelength) or DataFrame (columns named as in a spectrum file), or a
        `optogen.light.Spectrum`.  It runs as ``light.source = "file"``: the scenario's
        scaling key (suns, irradiance_W_m2, ...) rescales it, without one its absolute values
        are used.  The Dataset attribute ``spectrum_note`` says so.
    **kwargs
        Passed to `optogen.pipeline.run` (progress, workers, scheduler, chunk_size, store).

    Returns
    -------
    optogen.pipeline.Result
        The labelled Dataset, a single point's details and the run's warnings.

    Raises
    ------
    InputError
        For a scenario or spectrum that fails its checks.
    """
    from .pipeline import run as _run     # the pipeline imports the whole core: only when a run is asked for
    if not isinstance(scenario, Scenario):
        scenario = load_scenario(scenario)
    if spectrum is None:
        return _run(scenario, **kwargs)
    import dataclasses
    import tempfile
    from pathlib import Path
    from . import light, schema
    from .scenario import validate
    spec = light.spectrum_from_data(spectrum)
    with tempfile.TemporaryDirectory(prefix="optogen-spectrum-") as tmp:
        path = Path(tmp) / "spectrum.csv"
        lines = ["wavelength (nm),irradiance (W m^-2 nm^-1)"]
        lines += [f"{w!r},{e!r}" for w, e in zip(spec.wavelength_nm.tolist(), spec.irradiance_W_m2_nm.tolist())]
        path.write_text("\n".join(lines) + "\n", encoding="utf-8")
        table = {k: v for k, v in dict(scenario.data.get("light") or {}).items()
                 if k in (*schema.LIGHT_SCALINGS, *schema.LIGHT_SPOT_KEYS)}
        table.update(source="file", path=str(path))
        data = dict(scenario.data)
        data["light"] = table
        validate(data)
        res = _run(dataclasses.replace(scenario, data=data), **kwargs)
    res.dataset.attrs["spectrum_note"] = (f"light source: a spectrum passed to optogen.run(spectrum=...), "
                                          f"{spec.wavelength_nm.size} points, {spec.wavelength_nm[0]:g} to "
                                          f"{spec.wavelength_nm[-1]:g} nm (light.path named a temporary copy)")
    return res


def __getattr__(name):
    # optogen.open_result (pipeline.result.open_result): imported when first asked for, so that
    # `import optogen` and `optogen --version` stay free of xarray
    if name == "open_result":
        from .pipeline.result import open_result
        return open_result
    raise AttributeError(f"module 'optogen' has no attribute {name!r}")


def __dir__():
    return sorted([*globals(), "open_result"])


__all__ = ["InputError", "Scenario", "load_scenario", "open_result", "run", "__version__"]
