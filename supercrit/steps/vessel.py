"""Holding or extraction vessel at set conditions (T, p; each defaults to the inlet's).

Reports the solvent density and, with Chrastil constants {k, a, b}, the equilibrium solubility of a
solute c = rho^k exp(a/T + b) [g/L = kg/m3] with rho in g/L (= kg/m3), T in K: J. Chrastil, J. Phys.
Chem. 86 (1982) 3016, doi:10.1021/j100212a041, Eq. 7. The constants are the user's (fitted to one
solute). The loading c/rho [kg solute per kg solvent] is reported beside it. ``density_window``
[lo, hi] notes a solvent density outside the window. Duty = n (h_out - h_in).
"""
from __future__ import annotations

import math

from .base import StepResult, only_inlet, point_path


def chrastil_solubility(rho_mass: float, T: float, k: float, a: float, b: float) -> float:
    """Chrastil (1982) Eq. 7: c [kg m-3 = g/L] = rho^k exp(a/T + b), rho [kg m-3 = g/L], T [K]."""
    return rho_mass ** k * math.exp(a / T + b)


def run(spec, inlets, ctx) -> StepResult:
    s_in = only_inlet(inlets)
    prm = spec.params
    T = float(prm["T"]) if prm.get("T") is not None else s_in.T
    p = float(prm["p"]) if prm.get("p") is not None else s_in.p
    st = s_in.state if (T == s_in.T and p == s_in.p) else s_in.fluid.state(T=T, p=p)
    rho = float(st.rho_mass)
    extras: dict = {"solvent_density": rho}
    notes = []
    sol = prm.get("solubility")
    if sol:
        c = chrastil_solubility(rho, T, float(sol["k"]), float(sol["a"]), float(sol["b"]))
        extras["solubility"] = c
        extras["solubility_loading"] = c / rho
        if c / rho > 1.0:
            notes.append(f"Chrastil solubility {c:.3g} kg/m3 is more than the solvent's own density: check the "
                         f"constants (c and rho in g/L = kg/m3, T in K)")
    win = prm.get("density_window")
    if win:
        lo, hi = float(win[0]), float(win[1])
        extras["density_window"] = (lo, hi)
        if not lo <= rho <= hi:
            notes.append(f"solvent density {rho:.1f} kg/m3 is outside the window {lo:.0f}-{hi:.0f} kg/m3")
    duty = s_in.n * (float(st.h) - s_in.h)
    return StepResult(spec.id, spec.kind, {"out": ctx.stream(s_in.x, s_in.n, st, s_in.fluid)}, (point_path(st),),
                      duty=duty, notes=tuple(notes), extras=extras)
