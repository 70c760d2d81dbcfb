"""Write docs/accuracy.md: every supercrit model for pure CO2 against Span-Wagner and CoolProp HEOS.

Run from the repository root: PYTHONPATH=. python docs/accuracy_table.py

For each model and region the table gives the mean and maximum absolute deviation of density, cp and
speed of sound in %, and of the enthalpy difference h(T, p) - h(T0, p0) in kJ/kg (T0 = 300 K,
p0 = 0.1 MPa; a % of a difference that passes through zero would mean nothing), against
(a) supercrit's own Span-Wagner model (R. Span, W. Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509,
doi:10.1063/1.555991) and (b) CoolProp's HEOS CO2 (the same published equation; version printed).
States a model refuses (e.g. the virial models beyond their density range) are counted and, if a
region is refused entirely, reported as "out of range". Output is written whole (temp file, os.replace).
"""
from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

import numpy as np

import supercrit
from supercrit.errors import SupercritError
from supercrit.thermo.solid_co2 import melting_pressure

MODELS = ("ideal-gas", "van-der-waals", "virial", "virial-3term", "redlich-kwong", "soave-redlich-kwong",
          "peng-robinson", "peng-robinson-1978", "peng-robinson-translated")
T0, P0 = 300.0, 0.1e6  # [K, Pa] reference state of the enthalpy differences


def region_states() -> dict[str, tuple[np.ndarray, np.ndarray, str]]:
    """(T [K], p [Pa], description) per region; grids are fixed so that the table is reproducible."""
    sw = supercrit.Fluid({"CO2": 1.0}, model="span-wagner")
    out = {}
    # gas: 230-600 K, 0.1-5 MPa, kept below 80 % of the saturation pressure where T < Tc
    T, p = (a.ravel() for a in np.meshgrid(np.linspace(230.0, 600.0, 12), np.geomspace(0.1e6, 5e6, 8)))
    sub = T < 300.0
    ps = np.full(T.shape, np.inf)
    ps[sub] = sw.saturation(T=T[sub]).p
    keep = p < 0.8 * ps
    out["gas"] = (T[keep], p[keep], "230-600 K, 0.1-5 MPa, p < 0.8 psat below Tc")
    # liquid: 220-290 K, from 1.2 psat to 30 MPa (or 95 % of the melting pressure, Span & Wagner 1996 Eq. 3.10)
    Tl = np.repeat(np.linspace(220.0, 290.0, 8), 6)
    psl = sw.saturation(T=Tl).p
    top = np.minimum(30e6, 0.95 * melting_pressure(Tl))
    frac = np.tile(np.linspace(0.0, 1.0, 6), 8)
    out["liquid"] = (Tl, np.exp(np.log(1.2 * psl) + frac * (np.log(top) - np.log(1.2 * psl))),
                     "220-290 K, 1.2 psat to min(30 MPa, 0.95 p_melt)")
    # near-critical: 305-312 K, 7.4-9 MPa (supercritical side, across the pseudo-critical line)
    T, p = (a.ravel() for a in np.meshgrid(np.linspace(305.0, 312.0, 8), np.linspace(7.4e6, 9e6, 6)))
    out["near-critical"] = (T, p, "305-312 K, 7.4-9 MPa")
    # dense supercritical: 310-450 K, 10-60 MPa
    T, p = (a.ravel() for a in np.meshgrid(np.linspace(310.0, 450.0, 8), np.linspace(10e6, 60e6, 6)))
    out["dense supercritical"] = (T, p, "310-450 K, 10-60 MPa")
    return out


def model_properties(model: str, T, p) -> tuple[dict, int]:
    """rho [kg m-3], dh [J kg-1], cp [J kg-1 K-1], w [m s-1] per state (NaN where refused); refused count."""
    fl = supercrit.Fluid({"CO2": 1.0}, model=model)
    h0 = fl.state(T=T0, p=P0).h_mass
    out = {k: np.full(T.size, np.nan) for k in ("rho", "dh", "cp", "w")}
    refused = 0
    try:
        st = fl.state(T=T, p=p)
        vals = (st.rho_mass, st.h_mass - h0, st.cp_mass, st.w)
        for k, v in zip(out, vals):
            out[k][:] = v
        return out, 0
    except SupercritError:
        pass
    for i, (Ti, pi) in enumerate(zip(T, p)):  # state by state, to count what the model refuses
        try:
            st = fl.state(T=float(Ti), p=float(pi))
            for k, v in zip(out, (st.rho_mass, st.h_mass - h0, st.cp_mass, st.w)):
                out[k][i] = v
        except SupercritError:
            refused += 1
    return out, refused


def coolprop_properties(T, p) -> tuple[dict, str]:
    """The same properties from CoolProp HEOS CO2, and its version."""
    import CoolProp
    import CoolProp.CoolProp as CP

    AS = CP.AbstractState("HEOS", "CO2")
    AS.update(CP.PT_INPUTS, P0, T0)
    h0 = AS.hmass()
    out = {k: np.empty(T.size) for k in ("rho", "dh", "cp", "w")}
    for i, (Ti, pi) in enumerate(zip(T, p)):
        AS.update(CP.PT_INPUTS, float(pi), float(Ti))
        out["rho"][i], out["dh"][i], out["cp"][i], out["w"][i] = AS.rhomass(), AS.hmass() - h0, AS.cpmass(), \
            AS.speed_sound()
    return out, CoolProp.__version__


def deviations(mine: dict, ref: dict) -> dict:
    """Mean and max absolute deviation per property: % for rho, cp, w; kJ/kg for dh. NaN states skipped."""
    res = {}
    for k in ("rho", "dh", "cp", "w"):
        ok = np.isfinite(mine[k])
        if not np.any(ok):
            res[k] = None
            continue
        d = np.abs(mine[k][ok] - ref[k][ok]) / 1e3 if k == "dh" else 100.0 * np.abs(mine[k][ok] / ref[k][ok] - 1.0)
        res[k] = (float(np.mean(d)), float(np.max(d)))
    return res


def _fmt(dev, k):
    if dev[k] is None:
        return "out of range"
    mean, mx = dev[k]
    f = "{:.3g}" if mx >= 1e-3 else "{:.1e}"
    return f"{f.format(mean)} / {f.format(mx)}"


def build_table() -> str:
    regions = region_states()
    try:
        cp_vals = {name: coolprop_properties(T, p) for name, (T, p, _) in regions.items()}
        version = next(iter(cp_vals.values()))[1]
    except ImportError:
        cp_vals, version = None, None
    lines = ["# Accuracy of supercrit's models for pure CO2", "",
             "Written by `docs/accuracy_table.py` (run `PYTHONPATH=. python docs/accuracy_table.py`). Each cell: "
             "mean / max absolute deviation; density, cp and speed of sound in %, enthalpy difference "
             f"h(T, p) - h({T0:g} K, {P0 / 1e6:g} MPa) in kJ/kg.",
             "", "References: supercrit `span-wagner` (Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, "
             "doi:10.1063/1.555991)" + (f" and CoolProp {version} HEOS CO2 (the same equation)." if version else
                                        "; CoolProp not installed, its columns omitted."), ""]
    for name, (T, p, desc) in regions.items():
        sw_vals, _ = model_properties("span-wagner", T, p)
        lines += [f"## {name} ({T.size} states: {desc})", ""]
        head = "| model | ρ vs SW | Δh vs SW | cp vs SW | w vs SW |"
        sep = "|---|---|---|---|---|"
        if cp_vals:
            head += " ρ vs CoolProp | Δh vs CoolProp | cp vs CoolProp | w vs CoolProp |"
            sep += "---|---|---|---|"
        lines += [head, sep]
        for model in MODELS + (("span-wagner",) if cp_vals else ()):
            vals, refused = model_properties(model, T, p) if model != "span-wagner" else (sw_vals, 0)
            d_sw = deviations(vals, sw_vals)
            row = f"| {model}{f' ({refused} of {T.size} refused)' if refused else ''} | " + " | ".join(
                _fmt(d_sw, k) if model != "span-wagner" else "—" for k in ("rho", "dh", "cp", "w")) + " |"
            if cp_vals:
                d_cp = deviations(vals, cp_vals[name][0])
                row += " " + " | ".join(_fmt(d_cp, k) for k in ("rho", "dh", "cp", "w")) + " |"
            lines.append(row)
        lines.append("")
    return "\n".join(lines)


def main(path=Path(__file__).resolve().parent / "accuracy.md"):
    text = build_table()
    fd, tmp = tempfile.mkstemp(dir=path.parent, suffix=".tmp")
    with os.fdopen(fd, "w", encoding="utf-8") as fh:
        fh.write(text)
    os.replace(tmp, path)
    try:
        import CoolProp
        print(f"CoolProp {CoolProp.__version__}; wrote {path}")
    except ImportError:
        print(f"wrote {path} (without CoolProp columns)")


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else Path(__file__).resolve().parent / "accuracy.md")
