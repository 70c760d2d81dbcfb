"""Command line: ``supercrit run``, ``supercrit check``, ``supercrit state`` and ``supercrit sweep``.

Exit codes scripts can rely on: 0 computed (whatever the verdicts); 2 invalid input (file, schema, units,
unknown component or model); 3 a computation that did not converge; 4 an infeasible route when
``--fail-on-infeasible`` is given; 1 only for an unexpected internal error. No traceback reaches the
user for input errors.
"""
from __future__ import annotations

import argparse
import sys

from .errors import ConvergenceError, DataError, InputError, ModelRangeError, PropertyUndefinedError, SupercritError

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT, EXIT_CONVERGENCE = 0, 1, 2, 3

CAUTION = ("Screening results, not a design: they depend on the equation of state chosen. Defer to local codes, "
           "standards and licensed engineers. CO2 is an asphyxiant; high-pressure equipment is dangerous.")


def _parse_composition(text: str) -> dict:
    """'CO2' or 'CO2=0.97,N2=0.03' -> mapping."""
    if "=" not in text and ":" not in text:
        return {text.strip(): 1.0}
    out = {}
    for part in text.split(","):
        if not part.strip():
            continue
        sep = "=" if "=" in part else ":"
        name, _, frac = part.partition(sep)
        try:
            out[name.strip()] = float(frac)
        except ValueError:
            raise InputError(f"mole fraction of {name.strip()!r} is {frac.strip()!r}, not a number; write e.g. "
                             f"'CO2=0.97,N2=0.03'", "--fluid") from None
    return out


_STATE_ROWS = [  # (label, attribute, unit kind, per-mass)
    ("temperature", "T", "temperature"),
    ("pressure", "p", "pressure"),
    ("phase", "phase", None),
    ("vapour fraction (molar)", "vapor_fraction", "fraction"),
    ("density", "rho_mass", "density"),
    ("compressibility factor Z", "Z", "dimensionless"),
    ("enthalpy (ref: ideal gas 25 degC, 1 atm)", "h_mass", "specific_energy"),
    ("entropy (same reference)", "s_mass", "specific_heat"),
    ("cp", "cp_mass", "specific_heat"),
    ("cv", "cv_mass", "specific_heat"),
    ("speed of sound", "w", None),
    ("Joule-Thomson coefficient", "mu_jt", None),
]


def _state_table(state, system: str) -> list[tuple[str, str]]:
    from .units import format_quantity

    rows = []
    for label, attr, kind in _STATE_ROWS:
        try:
            v = getattr(state, attr)
        except PropertyUndefinedError:
            rows.append((label, "undefined here"))
            continue
        if attr == "phase":
            rows.append((label, str(v)))
        elif attr == "w":
            rows.append((label, f"{v:.4g} m/s" if system != "US" else f"{v / 0.3048:.4g} ft/s"))
        elif attr == "mu_jt":
            rows.append((label, f"{v * 1e5:.4g} K/bar" if system != "SI" else f"{v:.4g} K/Pa"))
        elif kind == "dimensionless":
            rows.append((label, f"{v:.5f}"))
        else:
            rows.append((label, format_quantity(v, kind, system)))
    return rows


def cmd_state(args) -> int:
    from .thermo.fluid import Fluid
    from .units import parse_quantity

    fluid = Fluid(_parse_composition(args.fluid), model=args.model)
    spec = {}
    for key, kind in (("T", "temperature"), ("p", "pressure"), ("h", "specific_energy"), ("s", "specific_heat"),
                      ("rho", "density")):
        text = getattr(args, key)
        if text is not None:
            spec[key] = parse_quantity(text, kind, f"--{key}")
    mass = {"h": "h_mass", "s": "s_mass", "rho": "rho_mass"}
    state = fluid.state(**{mass.get(k, k): v for k, v in spec.items()})
    comp = ", ".join(f"{n} {x:g}" for n, x in zip(fluid.components, fluid.x))
    print(f"{comp} - model {fluid.model_name}")
    rows = _state_table(state, args.units)
    width = max(len(r[0]) for r in rows)
    for label, value in rows:
        print(f"  {label:<{width}}  {value}")
    print(f"\n{CAUTION}")
    return EXIT_OK


DEMO = "co2_extraction_loop.yaml"


def _bundled(name: str):
    from importlib import resources

    return resources.files("supercrit").joinpath("scenarios", name)


def cmd_run(args) -> int:
    from .runner import run_scenario, write_outputs
    from .units import format_quantity

    path = args.file
    if path is None:
        path = str(_bundled(DEMO))
        print(f"no scenario given: running the bundled demo {DEMO}")
    run = run_scenario(path, model=args.model)
    paths = write_outputs(run, args.out, report=not args.no_report)
    sysu = run.scenario.display_units
    print(f"scenario {run.scenario.name} - model {run.scenario.fluid.model}")
    for ra in sorted(run.analysis.routes, key=lambda r: r.rank or 0):
        se = ra.figures.get("specific_energy") if ra.figures else None
        extra = f", {se / 3600.0:.1f} kWh/t" if se is not None else ""
        te = ra.figures.get("thermal_efficiency") if ra.figures else None
        if te is not None:
            extra += f", thermal efficiency {te * 100:.1f} %"
        power = format_quantity(ra.figures["shaft_power"], "power", sysu) if ra.figures else "-"
        print(f"  {ra.rank}. {ra.route_id}: {ra.verdict.level} (shaft power {power}{extra})")
        for r in ra.verdict.reasons:
            if int(r.level) > 0:
                print(f"       - {r.text}")
    print("ranking: " + run.analysis.ranking_rule)
    for kind, p in paths.items():
        size = p.stat().st_size
        print(f"wrote {p} ({size / 1e6:.2f} MB)" if size > 1e5 else f"wrote {p}")
    print(f"\n{CAUTION}")
    worst = max((int(ra.verdict.level) for ra in run.analysis.routes), default=0)
    if run.errors and all(int(ra.verdict.level) == 3 for ra in run.analysis.routes):
        return EXIT_CONVERGENCE
    if args.fail_on_infeasible and worst >= 2:
        return 4
    return EXIT_OK


def cmd_check(args) -> int:
    from .route import build_graph, check_route
    from .scenario import load_scenario

    sc = load_scenario(args.file)
    for rt in sc.routes:
        check_route(build_graph(rt))
    print(f"{args.file}: valid - {len(sc.routes)} route(s): {', '.join(r.id for r in sc.routes)}; "
          f"fluid {', '.join(f'{k} {v:g}' for k, v in sc.fluid.components.items())}; model {sc.fluid.model}")
    return EXIT_OK


def cmd_sweep(args) -> int:
    from .sweep import run_sweep

    if args.jobs is not None and args.jobs < 1:
        raise InputError(f"--jobs {args.jobs}: give 1 or more worker processes", "--jobs")
    say = lambda text: print(text, flush=True)  # noqa: E731
    try:
        out = run_sweep(args.file, args.out, jobs=args.jobs, resume=args.resume, scheduler=args.scheduler,
                        report=not args.no_report, announce=say)
    except KeyboardInterrupt:
        print("\nstopped: the finished variants are kept in the results log; run the same command with --resume "
              "to compute only the missing ones", file=sys.stderr)
        return EXIT_INTERNAL
    kept = f", {out.resumed} kept from before" if out.resumed else ""
    print(f"{out.computed} variant(s) computed{kept}, {out.failed} failed; {len(out.records)} of "
          f"{out.spec.count} in the results")
    for kind, p in out.paths.items():
        if p.exists():
            print(f"wrote {p}")
    print(f"\n{CAUTION}")
    return EXIT_CONVERGENCE if out.all_failed else EXIT_OK


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="supercrit",
        description="Screen process routes into and out of the supercritical region with real-gas equations of state.",
        epilog=CAUTION)
    sub = parser.add_subparsers(dest="verb", metavar="VERB")
    p = sub.add_parser("state", help="print the state of a fluid at given conditions",
                       description="Print the state of a fluid from two specifications, written with units as in "
                                   "scenario files: --T and --p, --T and --rho, --p and --h, or --p and --s.")
    p.add_argument("--fluid", default="CO2", help="a component, or mole fractions like 'CO2=0.97,N2=0.03' (default CO2)")
    p.add_argument("--model", default="peng-robinson", help="equation of state (default peng-robinson)")
    p.add_argument("--T", help='temperature, e.g. "35 degC" or "308.15 K"')
    p.add_argument("--p", help='pressure, e.g. "85 bar", "8.5 MPa", "1200 psig"')
    p.add_argument("--h", help='specific enthalpy, e.g. "-150 kJ/kg" (supercrit reference state)')
    p.add_argument("--s", help='specific entropy, e.g. "-1.2 kJ/kg/K"')
    p.add_argument("--rho", help='density, e.g. "600 kg/m3"')
    p.add_argument("--units", default="engineering", choices=["engineering", "SI", "US"], help="display units")
    p.set_defaults(func=cmd_state)
    r = sub.add_parser("run", help="evaluate a scenario and write its report, JSON and CSV under output/",
                       description="Evaluate every route of a scenario: states after every step, power and duties, "
                                   "boundary crossings, margins and verdicts, the ranking of the alternatives; write "
                                   "<name>.html, <name>.json, <name>-streams.csv and <name>-steps.csv. Without FILE "
                                   "the bundled demo scenario runs.")
    r.add_argument("file", nargs="?", help="scenario YAML file")
    r.add_argument("--model", help="override the scenario's equation of state, e.g. peng-robinson or srk")
    r.add_argument("--out", default="output", help="output folder (default: output)")
    r.add_argument("--no-report", action="store_true", help="skip the HTML report")
    r.add_argument("--fail-on-infeasible", action="store_true",
                   help="exit 4 when any route is infeasible (for use in pipelines)")
    r.set_defaults(func=cmd_run)
    c = sub.add_parser("check", help="validate a scenario file without computing it",
                       description="Validate a scenario: YAML, keys, units, components, step kinds, connections "
                                   "and route graphs. Every problem is listed with file:line:col.")
    c.add_argument("file", help="scenario YAML file")
    c.set_defaults(func=cmd_check)
    w = sub.add_parser("sweep", help="evaluate every variant of a scenario's sweep: section",
                       description="Evaluate every variant of the scenario's sweep: section (the count is printed "
                                   "first) in local processes or on a Dask cluster. Results stream to "
                                   "<name>-sweep.jsonl as variants finish; the tidy table (<name>-sweep.csv, .json, "
                                   ".parquet with pyarrow) and the report <name>-sweep.html are written at the end.")
    w.add_argument("file", help="scenario YAML file with a sweep: section")
    w.add_argument("--jobs", type=int, help="local worker processes (default: all cores; 1: in this process)")
    w.add_argument("--out", default="output", help="output folder (default: output)")
    w.add_argument("--resume", action="store_true",
                   help="keep the finished variants of an interrupted sweep and compute only the missing ones")
    w.add_argument("--scheduler", metavar="ADDRESS",
                   help="run on a Dask cluster, e.g. tcp://10.0.0.5:8786 (needs pip install 'supercrit[dask]')")
    w.add_argument("--no-report", action="store_true", help="skip the HTML report of the sweep")
    w.set_defaults(func=cmd_sweep)
    return parser


def main(argv=None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return EXIT_INPUT
    try:
        return args.func(args)
    except (InputError, DataError) as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except ModelRangeError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except ConvergenceError as exc:
        print(f"not converged: {exc}", file=sys.stderr)
        return EXIT_CONVERGENCE
    except SupercritError as exc:  # pragma: no cover - every subclass is handled above
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:  # pragma: no cover
        return EXIT_INTERNAL
    except OSError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except Exception as exc:  # an unexpected internal error: say so plainly, exit 1
        import traceback

        traceback.print_exc()
        print(f"internal error (please report it with the scenario file): {type(exc).__name__}: {exc}",
              file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
