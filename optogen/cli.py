"""The `optogen` command: run, check, materials, spectra, demos, schema.

The error boundary: bad input (`InputError`, raised where the input is read or
checked, with the field named) prints one line "optogen: error: ..." and exits
with status 2.  Anything else is a bug in optogen: one line "optogen: internal
error: ..." asking for a report, exit status 1, and the traceback only with
``--debug`` (or the environment variable OPTOGEN_DEBUG=1).
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import traceback
import warnings
from pathlib import Path

from ._version import __version__
from .errors import InputError

EXIT_INPUT = 2
EXIT_INTERNAL = 1
REPORT_TO = "the optogen maintainers (issue tracker of the project)"


class _Parser(argparse.ArgumentParser):
    """argparse, but a usage error is one line and exit status 2."""

    def error(self, message):
        self.exit(EXIT_INPUT, f"{self.prog}: error: {message} (see {self.prog} --help)\n")


def _parser() -> argparse.ArgumentParser:
    p = _Parser(prog="optogen", description="Carriers in a semiconductor absorber, "
                                "in the dark and under light.")
    p.add_argument("--version", action="version", version=f"optogen {__version__}")
    p.add_argument("--debug", action="store_true",
                   help="show the traceback of an internal error (also OPTOGEN_DEBUG=1)")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)

    r = sub.add_parser("run", help="run a scenario file and report the dark and illuminated states")
    r.add_argument("scenario", nargs="?", help="scenario file (TOML)")
    r.add_argument("--demo", metavar="NAME", help="run a bundled demo scenario instead of a file (optogen demos)")
    r.add_argument("--json", action="store_true", help="print the result as JSON")
    r.add_argument("--out", metavar="DIR", help="write JSON/NetCDF/CSV/PNG files into DIR")
    r.add_argument("--set", metavar="KEY=VALUE", action="append", default=[],
                   help="override a scenario field, e.g. --set light.suns=0.1 (repeatable)")
    r.add_argument("--quiet", action="store_true", help="no progress bar")
    r.add_argument("--workers", type=int, metavar="N", help="run the sweep on a local dask cluster of N workers")
    r.add_argument("--scheduler", metavar="ADDRESS", help="run the sweep on an existing dask.distributed scheduler")
    r.add_argument("--yes", action="store_true", help="run a sweep larger than the size limit")
    for sp in (r,):
        sp.add_argument("--debug", action="store_true", help=argparse.SUPPRESS)

    c = sub.add_parser("check", help="validate a scenario file without running it")
    c.add_argument("scenario")
    c.add_argument("--set", metavar="KEY=VALUE", action="append", default=[])
    c.add_argument("--debug", action="store_true", help=argparse.SUPPRESS)

    m = sub.add_parser("materials", help="list the built-in materials, or show one with its sources")
    m.add_argument("name", nargs="?")
    m.add_argument("--temperature-K", type=float, default=300.0, dest="temperature_K")
    m.add_argument("--composition-x", type=float, default=None, dest="composition_x",
                   help="Cd fraction x for HgCdTe")

    sub.add_parser("spectra", help="list the light sources and standard spectra")
    sub.add_parser("demos", help="list the bundled demo scenarios (run one with: optogen run --demo NAME)")

    s = sub.add_parser("schema", help="print the scenario keys (or, with --json, a JSON Schema for editors)")
    s.add_argument("--json", action="store_true", help="print the JSON Schema of a scenario file")
    add_analyse_parser(sub)
    return p


def add_analyse_parser(subparsers) -> argparse.ArgumentParser:
    """Add `optogen analyse SCENARIO [--json] [--out DIR] [--set K=V] [--folder DIR]` to the CLI parsers.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The sub-command parsers of the `optogen` command.

    Returns
    -------
    argparse.ArgumentParser
        The parser of the ``analyse`` sub-command.
    """
    a = subparsers.add_parser("analyse", help="analyse measured lifetime or photoconductance data "
                                              "(a scenario with a [measurement] section)")
    a.add_argument("scenario", help="scenario file (TOML) with [absorber] and [measurement]")
    a.add_argument("--json", action="store_true", help="print the result as JSON")
    a.add_argument("--out", metavar="DIR", help="write analysis.json/.nc, curve CSVs and PNG plots into DIR")
    a.add_argument("--set", metavar="KEY=VALUE", action="append", default=[],
                   help="override a scenario field, e.g. --set measurement.optical_factor=0.9 (repeatable)")
    a.add_argument("--folder", metavar="DIR", help="analyse every CSV of DIR with this scenario (one row each)")
    a.add_argument("--workers", type=int, metavar="N",
                   help="with --folder: analyse the files on a local dask cluster of N workers")
    a.add_argument("--scheduler", metavar="ADDRESS",
                   help="with --folder: analyse the files on an existing dask.distributed scheduler")
    a.add_argument("--debug", action="store_true", help=argparse.SUPPRESS)
    return a


def _overrides(items):
    from .scenario import parse_overrides
    return parse_overrides(items)


def _one_line(text) -> str:
    return " ".join(str(text).split())


def _debug_wanted(argv) -> bool:
    return os.environ.get("OPTOGEN_DEBUG", "").strip().lower() in ("1", "true", "yes", "on") or (
        "--debug" in (sys.argv[1:] if argv is None else list(map(str, argv))))


def main(argv=None) -> int:
    """The `optogen` command: parse the arguments, run the sub-command, map errors to exit codes.

    Bad input (`InputError`) prints one line "optogen: error: ..." (status 2); any other
    exception is an internal error, one line asking for a report (status 1), with the
    traceback only under ``--debug`` or OPTOGEN_DEBUG=1.

    Parameters
    ----------
    argv : sequence of str or None, optional
        The arguments after the program name (None: ``sys.argv[1:]``).

    Returns
    -------
    int
        The exit status: 0 on success (also for --help, --version and a closed output
        pipe), EXIT_INPUT (2) for bad input or usage, EXIT_INTERNAL (1) for a bug, 130 when
        interrupted.
    """
    debug = _debug_wanted(argv)
    try:
        args = _parser().parse_args(argv)
    except SystemExit as exc:          # usage errors (one line, status 2), --help and --version (0)
        return int(exc.code or 0)
    try:
        return _dispatch(args, argv)
    except BrokenPipeError:            # output piped into `head` and closed: not an error
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except InputError as exc:
        print(f"optogen: error: {_one_line(exc)}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("optogen: interrupted; no partial files were left", file=sys.stderr)
        return 130
    except Exception as exc:           # anything else is our bug, never the user's input
        if debug:
            traceback.print_exc(file=sys.stderr)
        print(f"optogen: internal error: {type(exc).__name__}: {_one_line(exc)} (please report this to "
              f"{REPORT_TO} with the scenario and the output of the same command with --debug)",
              file=sys.stderr)
        return EXIT_INTERNAL


def _dispatch(args, argv=None) -> int:
    if args.command == "materials":
        return _materials(args)
    if args.command == "spectra":
        return _spectra()
    if args.command == "schema":
        return _schema(args)
    if args.command == "demos":
        return _demos()
    if args.command == "analyse":
        from .analysis import main as analyse_main      # scipy and the fits: only when asked for
        return analyse_main(args)
    from .scenario import MAX_POINTS_WITHOUT_CONFIRMATION, load_scenario
    demo = getattr(args, "demo", None)
    if demo is not None and args.scenario is not None:
        raise InputError("--demo", demo, "either a scenario file or --demo NAME, not both")
    if demo is None and args.scenario is None:
        raise InputError("scenario", None, "a scenario file, or --demo NAME (optogen demos lists them)")
    sc = (_demo_scenario(demo, _overrides(args.set)) if demo is not None
          else load_scenario(Path(args.scenario), _overrides(args.set)))
    if demo is not None:
        args.scenario = f"demo {sc.path}"
    if args.command == "check":
        from .pipeline import check
        check(sc)
        print(f"{args.scenario}: ok ({sc.n_points} point{'s' if sc.n_points != 1 else ''})")
        return 0
    if args.workers is not None and not 1 <= args.workers <= 1024:
        raise InputError("--workers", args.workers, "an integer from 1 to 1024")
    if sc.n_points > MAX_POINTS_WITHOUT_CONFIRMATION and not args.yes:
        raise InputError("sweep", f"{sc.n_points} points",
                         f"at most {MAX_POINTS_WITHOUT_CONFIRMATION} without --yes",
                         "add --yes, and --out DIR to keep the result on disk")
    from .pipeline import run
    from . import report
    from .pipeline.result import command_line
    with warnings.catch_warnings(record=True) as caught:     # one line each, no source lines
        warnings.simplefilter("always")
        res = run(sc, progress=False if (args.quiet or args.json) else None,
                  workers=args.workers, scheduler=args.scheduler)
        res.dataset.attrs["history"] = (f"{res.dataset.attrs.get('created', '')} "
                                        f"{command_line() if argv is None else 'optogen ' + _join(argv)}").strip()
        written = report.write_all(res, Path(args.out)) if args.out else []
    for w in caught:
        print(f"optogen: warning: {' '.join(str(w.message).split())}", file=sys.stderr)
    if args.json:
        print(json.dumps(res.to_dict(), indent=2, allow_nan=False))
    else:
        print(report.summary(res))
        for path in written:
            print(f"wrote {path}")
    return 0


def _materials(args) -> int:
    from . import materials
    if not args.name:
        for name in materials.names():
            print(name)
        return 0
    mat = materials.get(args.name, args.composition_x)
    from .errors import check_range
    from .schema import T_MAX_K, T_MIN_K
    check_range("--temperature-K", args.temperature_K, T_MIN_K, T_MAX_K, unit="K")
    rows = materials.describe(mat, args.temperature_K)
    print(f"{mat.name} at {args.temperature_K:g} K")
    w = max(len(r["field"]) for r in rows)
    for r in rows:
        val = r["value"]
        val = f"{val:.6g}" if isinstance(val, float) else str(val)
        print(f"  {r['field']:<{w}}  {val:>14} {r.get('unit', ''):<12} {r.get('source', '')}")
    return 0


def _schema(args) -> int:
    from . import schema
    if args.json:
        print(json.dumps(schema.json_schema(), indent=2))
        return 0
    for path, key in schema.KEYS.items():
        default = "" if key.default is None else f" (default {key.default})"
        print(f"{path:<48} {key.allowed()}{default}{'; sweep: ' + key.sweep if key.sweep else ''}")
    return 0


def _join(argv) -> str:
    import shlex
    return shlex.join(map(str, argv))


def _demo_files() -> dict:
    """Bundled demo scenarios: name (file stem) -> resource (a Traversable or Path)."""
    from ._data import data_dir
    return {f.name[:-5]: f for f in sorted(data_dir("scenarios").iterdir(), key=lambda f: f.name)
            if f.name.endswith(".toml")}


def _demo_scenario(name: str, overrides):
    from importlib.resources import as_file
    from .errors import did_you_mean
    from .scenario import load_scenario
    files = _demo_files()
    key = str(name).removesuffix(".toml")
    if key not in files:
        raise InputError("--demo", name, "one of " + ", ".join(files), did_you_mean(key, list(files)))
    with as_file(files[key]) as path:
        return load_scenario(Path(path), overrides)


def _demos() -> int:
    import tomllib
    files = _demo_files()
    w = max(map(len, files), default=0)
    for name, f in files.items():
        title = tomllib.loads(f.read_text(encoding="utf-8")).get("title", "")
        print(f"{name:<{w}}  {title}")
    return 0


def _spectra() -> int:
    from . import light
    for line in light.names():
        print(line)
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
