"""How wrong would a simpler model have been here: Z and density of the same (T, p) under every model.

For each stream state (T, p, composition) the state is re-evaluated with the lighter models (ideal
gas, van der Waals, virial, Redlich-Kwong, SRK, Peng-Robinson) and the spread in Z and density is
reported against the chosen model. A model that cannot represent the state (the virial equation
beyond its density bound, a two-phase state for a single-phase model) is reported as out of range
with its reason, never silently.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import SupercritError
from ..thermo.fluid import Fluid

LIGHTER_MODELS = ("ideal-gas", "van-der-waals", "virial", "redlich-kwong", "soave-redlich-kwong", "peng-robinson")


@dataclass(frozen=True)
class SpreadEntry:
    """One model at one state: Z [-] and rho_mass [kg m-3], or the reason it could not compute it."""

    model: str
    Z: float | None
    rho_mass: float | None
    dev_rho: float | None  # relative deviation from the chosen model [-]
    reason: str = ""


def _fluid(composition, model, constants, kij, cache):
    key = (model, tuple(sorted(composition.items())))
    if key not in cache:
        cache[key] = Fluid(composition, model=model, constants=constants, kij=kij)
    return cache[key]


def model_spread(composition: dict, chosen_model: str, T, p, *, models=LIGHTER_MODELS, constants=None, kij=None,
                 cache=None, two_phase=None) -> dict[str, list[SpreadEntry]]:
    """Z and density at each (T [K], p [Pa]) under the chosen model and each lighter model.

    Each model's single-phase stable root (lowest Gibbs energy) is used: a stream the chosen model finds
    two-phase (``two_phase[i]`` true) has no single Z and is reported as such for every model.

    Returns
    -------
    dict
        model name -> list of SpreadEntry, one per state (same order as T and p).
    """
    from ..thermo.properties import pressure
    from ..thermo.solvers.density import stable_density

    cache = {} if cache is None else cache
    T = np.atleast_1d(np.asarray(T, dtype=float))
    p = np.atleast_1d(np.asarray(p, dtype=float))
    two = np.zeros(T.shape, dtype=bool) if two_phase is None else np.asarray(two_phase, dtype=bool)
    names = [chosen_model] + [m for m in models if m != chosen_model]
    ref = None
    out: dict[str, list[SpreadEntry]] = {}
    for name in names:
        entries = []
        try:
            f = _fluid(composition, name, constants, kij, cache)
        except SupercritError as exc:
            out[name] = [SpreadEntry(name, None, None, None, str(exc)) for _ in T]
            continue
        rho_c = f._crit.rho if f._crit is not None else None
        for i, (Ti, pi) in enumerate(zip(T, p)):
            if two[i]:
                entries.append(SpreadEntry(name, None, None, None, "two-phase at this (T, p)"))
                continue
            try:
                f._check_T(Ti)
                rho = float(stable_density(f.model, Ti, pi, f.x, rho_c))
                Z = float(pressure(f.model, Ti, rho, f.x)) / (rho * float(f.model.R(f.x)) * Ti)
                rho_m = rho * f.M
            except SupercritError as exc:
                entries.append(SpreadEntry(name, None, None, None, str(exc).split(". ")[0]))
                continue
            dev = None
            if ref is not None and ref[i].rho_mass:
                dev = rho_m / ref[i].rho_mass - 1.0
            entries.append(SpreadEntry(name, Z, rho_m, dev if name != chosen_model else 0.0))
        out[name] = entries
        if name == chosen_model:
            ref = entries
    return out
