"""Command line: ``supercrit state`` (and, with the route engine, ``run`` and ``check``).

Exit codes scripts can rely on: 0 computed; 2 invalid input (file, schema, units, unknown component
or model); 3 a computation that did not converge; 1 only for an unexpected internal error.
No traceback reaches the user for input errors.
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


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
