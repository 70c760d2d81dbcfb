"""Component data: lookup by formula or common name, every value with its published source.

The data lives in ``data/components.yaml``; sources are keys of ``data/sources.bib``. The loader
refuses a value that has neither a source nor a ``from memory`` / ``common practice`` mark.
"""
from __future__ import annotations

import difflib
import functools
import re
from dataclasses import dataclass
from importlib import resources

import numpy as np
import yaml

from ..errors import DataError


@dataclass(frozen=True)
class IdealGasCp:
    """Ideal-gas isobaric heat capacity in the Planck-Einstein form of a reference EOS.

    cp0/R = c0 + sum_k n_k u_k^2 e^u_k / (e^u_k - 1)^2 with u_k = theta_k/T,
    plus power terms -n t (t-1) (T_red/T)^t.
    """

    c0: float
    pe_n: np.ndarray  # [-]
    pe_theta: np.ndarray  # [K]
    pw_n: np.ndarray  # [-]
    pw_t: np.ndarray  # [-]
    pw_Tred: np.ndarray  # [K]
    T_min: float  # [K]
    T_max: float  # [K]
    source: str


@dataclass(frozen=True)
class Component:
    """Constants of one pure component, SI units.

    Attributes: name, M [kg mol-1], Tc [K], pc [Pa], rhoc [mol m-3], Vc [m3 mol-1], omega [-],
    Tt [K], pt [Pa], Tb [K] (normal boiling or, for CO2, sublimation point), rhoL07 [mol m-3]
    (saturated liquid density at 0.7 Tc, for volume translation), cp0 (IdealGasCp),
    sources (dict of quantity -> source key).
    """

    name: str
    M: float
    Tc: float
    pc: float
    rhoc: float
    omega: float
    Tt: float
    pt: float
    Tb: float
    rhoL07: float
    cp0: IdealGasCp
    aliases: tuple[str, ...] = ()
    sources: tuple[tuple[str, str], ...] = ()

    @property
    def Vc(self) -> float:
        """Critical molar volume [m3 mol-1]."""
        return 1.0 / self.rhoc

    @property
    def Zc(self) -> float:
        """Critical compressibility factor of the data set [-] (with R CODATA 2018)."""
        from .constants import R_CODATA_2018

        return self.pc / (self.rhoc * R_CODATA_2018 * self.Tc)

    def with_constants(self, **over) -> "Component":
        """Copy with pinned constants, e.g. ``Tc=304.1282, pc=7377300.0, omega=0.22394, M=0.0440098``."""
        allowed = {"Tc", "pc", "omega", "M", "rhoc", "Tt", "pt", "Tb", "rhoL07"}
        bad = set(over) - allowed
        if bad:
            raise DataError(
                f"constants for {self.name}: unknown key(s) {sorted(bad)}; valid keys are "
                f"{sorted(allowed)} (SI: K, Pa, -, kg/mol, mol/m3)"
            )
        vals = {}
        for k, v in over.items():
            try:
                v = float(v)
            except (TypeError, ValueError):
                raise DataError(f"constants for {self.name}: {k} = {v!r} is not a number") from None
            if k != "omega" and not v > 0:
                raise DataError(f"constants for {self.name}: {k} = {v} must be positive")
            vals[k] = v
        d = dict(self.__dict__)
        d.update(vals)
        d["sources"] = self.sources + tuple((k, "user-supplied") for k in vals)
        return Component(**d)


_UNIT = {"M_g_mol": ("M", 1e-3), "Tc_K": ("Tc", 1.0), "pc_MPa": ("pc", 1e6), "rhoc_mol_m3": ("rhoc", 1.0),
         "omega": ("omega", 1.0), "Tt_K": ("Tt", 1.0), "pt_Pa": ("pt", 1.0), "Tb_K": ("Tb", 1.0),
         "rhoL07_mol_m3": ("rhoL07", 1.0)}


def _norm(name: str) -> str:
    return re.sub(r"[\s_\-]", "", name).lower()


@functools.cache
def _bib_keys() -> frozenset[str]:
    text = resources.files("supercrit.thermo.data").joinpath("sources.bib").read_text(encoding="utf-8")
    return frozenset(re.findall(r"@\w+\{(\w+),", text))


def _check_source(entry, where: str) -> str:
    if not isinstance(entry, dict) or "value" not in entry:
        raise DataError(f"components.yaml {where}: expected {{value: ..., source: ...}}")
    src = str(entry.get("source", ""))
    if src in ("from memory", "common practice"):
        return src
    if src not in _bib_keys():
        raise DataError(f"components.yaml {where}: source {src!r} is not a key of sources.bib, "
                        f"nor 'from memory' / 'common practice'; every value needs its source")
    return src


@functools.cache
def _table() -> dict[str, Component]:
    raw = yaml.safe_load(resources.files("supercrit.thermo.data").joinpath("components.yaml").read_text(encoding="utf-8"))
    table = {}
    for key, rec in raw.items():
        vals, srcs = {}, []
        for ykey, (attr, scale) in _UNIT.items():
            if ykey not in rec:
                raise DataError(f"components.yaml {key}: missing {ykey}")
            srcs.append((attr, _check_source(rec[ykey], f"{key}.{ykey}")))
            vals[attr] = float(rec[ykey]["value"]) * scale
        ig = rec["ideal_gas_cp"]
        _check_source({"value": 0, "source": ig.get("source")}, f"{key}.ideal_gas_cp")
        pe = np.array(ig.get("planck_einstein", []), dtype=float).reshape(-1, 2)
        pw = np.array(ig.get("power", []), dtype=float).reshape(-1, 3)
        cp0 = IdealGasCp(c0=float(ig["c0"]), pe_n=pe[:, 0], pe_theta=pe[:, 1], pw_n=pw[:, 0], pw_t=pw[:, 1],
                         pw_Tred=pw[:, 2], T_min=float(ig["T_range_K"][0]), T_max=float(ig["T_range_K"][1]),
                         source=str(ig["source"]))
        srcs.append(("cp0", cp0.source))
        table[key] = Component(name=key, cp0=cp0, aliases=tuple(rec.get("aliases", ())), sources=tuple(srcs), **vals)
    return table


@functools.cache
def _index() -> dict[str, str]:
    idx = {}
    for key, comp in _table().items():
        for n in (key, *comp.aliases):
            idx[_norm(n)] = key
    return idx


def known_components() -> list[str]:
    """Canonical keys of every component in the data file."""
    return list(_table())


def get_component(name: str) -> Component:
    """Look up a component by formula or common name, case-insensitive.

    Raises
    ------
    DataError
        If the name is unknown; the message suggests the closest known names.
    """
    key = _index().get(_norm(str(name)))
    if key is None:
        names = sorted({*_table(), *(a for c in _table().values() for a in c.aliases)})
        close = difflib.get_close_matches(str(name), names, n=3, cutoff=0.5)
        close += [n for n in difflib.get_close_matches(_norm(str(name)), [_norm(n) for n in names], n=3, cutoff=0.6)
                  if n not in close and n in names]
        hint = f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
        raise DataError(f"unknown component {name!r}.{hint} Known: {', '.join(known_components())}.")
    return _table()[key]
