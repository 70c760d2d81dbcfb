"""Phase-diagram data the report draws: the saturation curve or phase envelope, the two-phase dome in
p-h and T-s, isotherms, the critical point and, for CO2, the triple point and the solid boundaries.

Everything is computed here (the report only draws). SI units. For a mixture the envelope is that of
the feed composition; streams whose composition differs (after a separator) are not on it exactly, and
the report says so.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import SupercritError


@dataclass(frozen=True)
class DiagramData:
    """Arrays for the phase diagrams (SI). Missing parts are empty arrays, never NaN."""

    T: np.ndarray = field(default_factory=lambda: np.zeros(0))  # boundary temperature [K]
    p: np.ndarray = field(default_factory=lambda: np.zeros(0))  # boundary pressure [Pa]
    branch: tuple = ()  # 'bubble'/'dew' (mixtures) or 'saturation' (pure)
    h_liq: np.ndarray = field(default_factory=lambda: np.zeros(0))  # [J kg-1] on the bubble side
    h_vap: np.ndarray = field(default_factory=lambda: np.zeros(0))  # [J kg-1] on the dew side
    s_liq: np.ndarray = field(default_factory=lambda: np.zeros(0))  # [J kg-1 K-1]
    s_vap: np.ndarray = field(default_factory=lambda: np.zeros(0))
    p_liq: np.ndarray = field(default_factory=lambda: np.zeros(0))  # pressures of the h/s dome points [Pa]
    p_vap: np.ndarray = field(default_factory=lambda: np.zeros(0))
    T_liq: np.ndarray = field(default_factory=lambda: np.zeros(0))
    T_vap: np.ndarray = field(default_factory=lambda: np.zeros(0))
    critical: tuple | None = None  # (T, p)
    cricondenbar: tuple | None = None
    cricondentherm: tuple | None = None
    closed: bool = True
    note: str = ""
    isotherms: tuple = ()  # ((T, p[], h[], s[]), ...)
    triple: tuple | None = None  # (T, p) of CO2
    sublimation: tuple = ()  # (T[], p[])
    melting: tuple = ()  # (T[], p[])


def phase_diagram(fluid, T_range=(200.0, 400.0), p_range=(1e5, 3e7), n_iso=6) -> DiagramData:
    """Boundary, dome, isotherms and solid lines for ``fluid`` over the ranges of a route [K], [Pa]."""
    d: dict = {}
    notes = []
    try:
        if fluid.is_pure:
            if fluid._crit is not None:
                c = fluid.critical_point()
                comp = fluid._comps[0]
                Tlo = max(comp.Tt, min(T_range[0], c.T - 1.0) - 20.0)
                u = np.linspace(0.0, 1.0, 70)
                T = c.T - (c.T - Tlo) * (1 - u) ** 2
                T = np.unique(np.clip(T, Tlo, c.T - 1e-3))
                sat = fluid.saturation(T=T)
                d.update(T=T, p=np.asarray(sat.p), branch=("saturation",) * len(T), critical=(c.T, c.p),
                         h_liq=np.asarray(sat.liquid.h_mass), h_vap=np.asarray(sat.vapor.h_mass),
                         s_liq=np.asarray(sat.liquid.s_mass), s_vap=np.asarray(sat.vapor.s_mass),
                         p_liq=np.asarray(sat.p), p_vap=np.asarray(sat.p), T_liq=T, T_vap=T,
                         cricondenbar=(c.T, c.p), cricondentherm=(c.T, c.p))
        elif getattr(fluid.model, "phase_kernel", None):
            env = fluid.envelope()
            T, p = np.asarray(env.T), np.asarray(env.p)
            br = tuple(str(b) for b in env.branch)
            d.update(T=T, p=p, branch=br, closed=bool(env.closed))
            if env.critical is not None:
                d["critical"] = (float(env.critical.T), float(env.critical.p))
            if env.cricondenbar is not None:
                d["cricondenbar"] = (float(env.cricondenbar.T), float(env.cricondenbar.p))
            if env.cricondentherm is not None:
                d["cricondentherm"] = (float(env.cricondentherm.T), float(env.cricondentherm.p))
            if not env.closed:
                notes.append(f"envelope open: {env.reason}")
            hl, hv, sl, sv, pl, pv, tl, tv = ([] for _ in range(8))
            model, x = fluid.model, fluid.x
            from ..thermo.properties import all_properties
            from ..thermo.solvers.density import density_roots

            for Ti, pi, bi in zip(T, p, br):
                roots = density_roots(model, Ti, pi, x)
                r = roots[np.isfinite(roots)]
                if r.size == 0:
                    continue
                rho = r.max() if bi == "bubble" else r.min()
                pr = all_properties(model, fluid.ideal, fluid.M_i, Ti, rho, x)
                if bi == "bubble":
                    hl.append(pr["h"] / fluid.M), sl.append(pr["s"] / fluid.M), pl.append(pi), tl.append(Ti)
                else:
                    hv.append(pr["h"] / fluid.M), sv.append(pr["s"] / fluid.M), pv.append(pi), tv.append(Ti)
            d.update(h_liq=np.array(hl), h_vap=np.array(hv), s_liq=np.array(sl), s_vap=np.array(sv),
                     p_liq=np.array(pl), p_vap=np.array(pv), T_liq=np.array(tl), T_vap=np.array(tv))
    except SupercritError as exc:
        notes.append(f"phase boundary not drawn: {exc}")
    # isotherms for the p-h and T-s diagrams
    iso = []
    for Ti in np.linspace(T_range[0], T_range[1], n_iso):
        ps = np.geomspace(max(p_range[0], 1e4), p_range[1], 40)
        try:
            st = fluid.state(T=np.full_like(ps, Ti), p=ps)
            iso.append((float(Ti), ps, np.asarray(st.h_mass), np.asarray(st.s_mass)))
        except SupercritError:
            continue
    d["isotherms"] = tuple(iso)
    if "CO2" in fluid.components:
        from ..thermo.solid_co2 import TRIPLE_POINT, melting_pressure, sublimation_pressure

        Ts = np.linspace(150.0, TRIPLE_POINT.T, 40)
        Tm = np.linspace(TRIPLE_POINT.T, TRIPLE_POINT.T + 20.0, 40)
        d["triple"] = (TRIPLE_POINT.T, TRIPLE_POINT.p)
        d["sublimation"] = (Ts, np.asarray(sublimation_pressure(Ts)))
        d["melting"] = (Tm, np.asarray(melting_pressure(Tm)))
    d["note"] = "; ".join(notes)
    return DiagramData(**d)
