"""Model names and construction from component data: the one place that maps a name to a model."""
from __future__ import annotations

import difflib

import numpy as np

from ..errors import InputError
from .components import Component
from .constants import R_CODATA_2018
from .models.base import CriticalPoint
from .models.cubic.alpha import ConstantAlpha, RedlichKwongAlpha, SoaveAlpha, m_pr1976, m_pr1978, m_srk
from .models.cubic.core import CubicModel, critical_constants
from .models.cubic.translation import peneloux_shift
from .models.ideal_gas_law import IdealGasLaw
from .models.virial import VirialModel

SQ2 = np.sqrt(2.0)
_CUBICS = {  # name: (delta1, delta2, alpha kind)
    "van-der-waals": (0.0, 0.0, "constant"),
    "redlich-kwong": (1.0, 0.0, "rk"),
    "soave-redlich-kwong": (1.0, 0.0, "srk"),
    "peng-robinson": (1.0 + SQ2, 1.0 - SQ2, "pr76"),
    "peng-robinson-1978": (1.0 + SQ2, 1.0 - SQ2, "pr78"),
    "peng-robinson-translated": (1.0 + SQ2, 1.0 - SQ2, "pr76"),
}
MODEL_NAMES = ("ideal-gas", "van-der-waals", "virial", "virial-3term", "redlich-kwong", "soave-redlich-kwong",
               "peng-robinson", "peng-robinson-1978", "peng-robinson-translated", "span-wagner")
ALIASES = {"ig": "ideal-gas", "ideal": "ideal-gas", "vdw": "van-der-waals", "rk": "redlich-kwong",
           "srk": "soave-redlich-kwong", "pr": "peng-robinson", "pr76": "peng-robinson", "pr78": "peng-robinson-1978",
           "prt": "peng-robinson-translated", "pr-translated": "peng-robinson-translated",
           "sw": "span-wagner", "virial-b": "virial", "virial-bc": "virial-3term"}


def canonical_model_name(name: str) -> str:
    """Resolve a model name or alias; InputError with 'did you mean' otherwise."""
    key = str(name).strip().lower().replace("_", "-").replace(" ", "-")
    key = ALIASES.get(key, key)
    if key in MODEL_NAMES:
        return key
    close = difflib.get_close_matches(key, list(MODEL_NAMES) + list(ALIASES), n=2, cutoff=0.5)
    hint = f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
    raise InputError(f"unknown model {name!r}.{hint} Valid: {', '.join(MODEL_NAMES)} "
                     f"(aliases {', '.join(sorted(ALIASES))}).", "model")


def cubic_model(comps: tuple[Component, ...], family: str, kij: np.ndarray, c=None, R=R_CODATA_2018) -> CubicModel:
    """A cubic model of the named family for the components (translation c [m3 mol-1] optional)."""
    d1, d2, kind = _CUBICS[family]
    Oa, Ob, Zc = critical_constants(d1, d2)
    Tc = np.array([k.Tc for k in comps])
    pc = np.array([k.pc for k in comps])
    w = np.array([k.omega for k in comps])
    alpha = {"constant": lambda: ConstantAlpha(Tc), "rk": lambda: RedlichKwongAlpha(Tc),
             "srk": lambda: SoaveAlpha(Tc, m_srk(w)), "pr76": lambda: SoaveAlpha(Tc, m_pr1976(w)),
             "pr78": lambda: SoaveAlpha(Tc, m_pr1978(w))}[kind]()
    c = np.zeros(len(comps)) if c is None else np.asarray(c, dtype=float)
    crit = None
    if len(comps) == 1:
        crit = CriticalPoint(T=float(Tc[0]), p=float(pc[0]), rho=float(1.0 / (Zc * R * Tc[0] / pc[0] - c[0])))
    return CubicModel(components=tuple(k.name for k in comps), name=family, delta1=d1, delta2=d2,
                      ac=Oa * (R * Tc) ** 2 / pc, b=Ob * R * Tc / pc, c=c, alpha=alpha, kij=kij, gas_constant=R,
                      crit=crit)


def build_model(name: str, comps: tuple[Component, ...], kij: np.ndarray):
    """Construct the named model (canonical name) for the components."""
    name = canonical_model_name(name)
    if name == "ideal-gas":
        return IdealGasLaw(components=tuple(k.name for k in comps))
    if name in ("virial", "virial-3term"):
        if name == "virial-3term" and len(comps) > 1:
            raise InputError("model 'virial-3term' (B and C) is for pure fluids; use 'virial' for mixtures", "model")
        return VirialModel(components=tuple(k.name for k in comps), Tc=np.array([k.Tc for k in comps]),
                           pc=np.array([k.pc for k in comps]), omega=np.array([k.omega for k in comps]),
                           rhoc=np.array([k.rhoc for k in comps]), kij=kij, gas_constant=R_CODATA_2018,
                           third=name == "virial-3term")
    if name == "span-wagner":
        if len(comps) != 1 or comps[0].name != "CO2":
            raise InputError("model 'span-wagner' is the reference equation for pure CO2 only; "
                             "for mixtures choose a cubic model such as 'peng-robinson'", "model")
        from .models.helmholtz.span_wagner import span_wagner_co2

        return span_wagner_co2()
    if name == "peng-robinson-translated":
        from .solvers.saturation import saturation_pressure

        shifts = []
        for k in comps:
            pure = cubic_model((k,), "peng-robinson", np.zeros((1, 1)))
            sat = saturation_pressure(pure, 0.7 * k.Tc, pure.critical_point())
            shifts.append(float(peneloux_shift(1.0 / sat.rho_liq, k.rhoL07)))
        model = cubic_model(comps, "peng-robinson", kij, c=np.array(shifts))
        object.__setattr__(model, "name", "peng-robinson-translated")
        return model
    return cubic_model(comps, name, kij)
