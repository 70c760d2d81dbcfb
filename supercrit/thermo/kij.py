"""Binary interaction parameters k_ij of the cubic models, with the source of every value.

The table lives in ``data/kij.yaml`` (one named set per published/packaged value; ``default`` names the
set used). :func:`kij_matrix` builds the symmetric matrix for a component list, with an optional
named set chosen for every pair that has it, and user overrides on top; :func:`kij_source` says
where one value came from.
"""
from __future__ import annotations

import functools
from dataclasses import dataclass
from importlib import resources
from typing import Mapping

import numpy as np
import yaml

from ..errors import DataError, InputError
from .components import _check_source, get_component

# model name -> table name in kij.yaml; models without a table use k_ij = 0 unless overridden
_TABLE_OF_MODEL = {"peng-robinson": "peng-robinson", "peng-robinson-1978": "peng-robinson",
                   "peng-robinson-translated": "peng-robinson", "soave-redlich-kwong": "soave-redlich-kwong"}


@dataclass(frozen=True)
class KijValue:
    """One k_ij [-] with its provenance: set name, source key (sources.bib) and note."""

    value: float
    set_name: str
    source: str
    note: str = ""
    alternatives: tuple = ()  # ((set_name, value, source), ...) of the other packaged sets


@functools.cache
def _table() -> dict:
    raw = yaml.safe_load(resources.files("supercrit.thermo.data").joinpath("kij.yaml").read_text(encoding="utf-8"))
    out = {}
    for table, pairs in raw.items():
        entries = {}
        for pair, sets in pairs.items():
            a, b = (get_component(n).name for n in pair.split("-", 1))
            default = sets.get("default")
            if default not in sets:
                raise DataError(f"kij.yaml {table}/{pair}: default set {default!r} has no value")
            vals = {}
            for name, entry in sets.items():
                if name == "default":
                    continue
                src = _check_source(entry, f"kij.yaml {table}/{pair}/{name}")
                vals[name] = (float(entry["value"]), src, str(entry.get("note", "")))
            entries[frozenset((a, b))] = (default, vals)
        out[table] = entries
    return out


def _lookup(a: str, b: str, table: str | None, source_set: str | None) -> KijValue | None:
    if table is None:
        return None
    entry = _table()[table].get(frozenset((a, b)))
    if entry is None:
        return None
    default, vals = entry
    name = source_set if source_set in vals else default
    v, src, note = vals[name]
    alts = tuple((n, vv[0], vv[1]) for n, vv in vals.items() if n != name)
    return KijValue(v, name, src, note, alts)


def kij_source(a: str, b: str, model: str, source_set: str | None = None) -> KijValue | None:
    """Provenance of k_ij for components ``a``, ``b`` under ``model`` (None: no table value, k_ij = 0).

    Parameters
    ----------
    a, b : str
        Component names or aliases.
    model : str
        Canonical model name, e.g. ``"peng-robinson"``.
    source_set : str, optional
        Named set to prefer (``"thermopack"``, ``"dechema"``); the pair's default otherwise.
    """
    from .build import canonical_model_name

    ca, cb = get_component(a).name, get_component(b).name
    return _lookup(ca, cb, _TABLE_OF_MODEL.get(canonical_model_name(model)), source_set)


def kij_matrix(components, model_name: str, overrides=None, source_set: str | None = None) -> np.ndarray:
    """Symmetric k_ij matrix [-] (zero diagonal) from the table, a chosen set, and user overrides.

    Parameters
    ----------
    components : sequence of str
        Component names in model order.
    model_name : str
        Canonical model name; models other than PR/SRK families have no table (zeros).
    overrides : mapping, optional
        ``{"CO2": {"N2": -0.02}}`` [-], applied on top of the table; symmetric.
    source_set : str, optional
        Named set preferred for every pair that has it (see data/kij.yaml); unknown names raise.

    Raises
    ------
    InputError
        Malformed overrides, a component not in the list, a value outside (-1, 1), or an unknown set.
    """
    names = [get_component(c).name for c in components]
    nc = len(names)
    table = _TABLE_OF_MODEL.get(model_name)
    if source_set is not None:
        known = {n for t in _table().values() for _, vals in t.values() for n in vals}
        if source_set not in known:
            raise InputError(f"kij source set {source_set!r} is unknown; valid: {', '.join(sorted(known))}",
                             "kij_source")
    k = np.zeros((nc, nc))
    for i in range(nc):
        for j in range(i + 1, nc):
            kv = _lookup(names[i], names[j], table, source_set)
            if kv is not None:
                k[i, j] = k[j, i] = kv.value
    if not overrides:
        return k
    if not isinstance(overrides, Mapping):
        raise InputError("kij must be a nested mapping such as {'CO2': {'N2': -0.036}}", "kij")
    index = {n: i for i, n in enumerate(names)}
    given = {}
    for a, row in overrides.items():
        if not isinstance(row, Mapping):
            raise InputError(f"kij[{a!r}] must map partner components to values", "kij")
        for b, val in row.items():
            ia, ib = index.get(get_component(a).name), index.get(get_component(b).name)
            if ia is None or ib is None:
                missing = a if ia is None else b
                raise InputError(f"kij names {missing!r}, which is not in the composition", "kij")
            if ia == ib:
                raise InputError(f"kij of {a} with itself is meaningless; give pairs of different components", "kij")
            try:
                v = float(val)
            except (TypeError, ValueError):
                raise InputError(f"kij[{a}][{b}] = {val!r} is not a number", "kij") from None
            if not -1.0 < v < 1.0:
                raise InputError(f"kij[{a}][{b}] = {v} is outside (-1, 1)", "kij")
            key = frozenset((ia, ib))
            if key in given and given[key] != v:
                raise InputError(f"kij for {a}-{b} is given twice with different values", "kij")
            given[key] = v
            k[ia, ib] = k[ib, ia] = v
    return k
