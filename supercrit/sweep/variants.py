"""The variants of a sweep: their settings, and the scenario each one evaluates.

A variant is the base scenario with the swept settings replaced; it is built with
:func:`dataclasses.replace` from the validated :class:`~supercrit.scenario.schema.Scenario` (the YAML is
not read again), so every other setting, default and limit stays exactly as validated.

>>> spec = scenario.sweep                                       # doctest: +SKIP
>>> for v in iter_variants(spec):                               # doctest: +SKIP
...     sc = variant_scenario(scenario, v)                      # doctest: +SKIP
"""
from __future__ import annotations

import dataclasses
import itertools
from dataclasses import dataclass
from typing import Iterator

from ..errors import InputError
from ..scenario.schema import Scenario, SweepSpec, frozen_map


@dataclass(frozen=True)
class Variant:
    """One point of a sweep: ``index`` (0-based, the order of the sweep) and ``values`` (SI; one per axis,
    in the order of ``sweep.axes``)."""

    index: int
    values: tuple

    def settings(self, spec: SweepSpec) -> dict:
        """Setting text -> SI value, for every target of every axis."""
        return {t: v for ax, v in zip(spec.axes, self.values) for t in ax.targets}


def iter_variants(spec: SweepSpec) -> Iterator[Variant]:
    """Every variant of ``spec`` in sweep order: a full grid (first axis slowest) or the paired values."""
    columns = [ax.values for ax in spec.axes]
    combos = zip(*columns) if spec.combine == "paired" else itertools.product(*columns)
    for i, values in enumerate(combos):
        yield Variant(i, tuple(values))


def _with_step_param(route, step_id: str, name: str, value):
    """The route with ``name`` of step ``step_id`` set to ``value`` (other members of its exclusive group dropped)."""
    from ..scenario.schema import STEP_KINDS

    steps = []
    for st in route.steps:
        if st.id == step_id:
            kind = STEP_KINDS[st.kind]
            params = {k: v for k, v in st.params.items() if k == name or k not in kind.group_of(name)}
            params[name] = int(value) if kind.param(name).kind == "int" else float(value)
            st = dataclasses.replace(st, params=frozen_map(params))
        steps.append(st)
    return dataclasses.replace(route, steps=tuple(steps))


def variant_scenario(base: Scenario, variant: Variant, spec: SweepSpec | None = None) -> Scenario:
    """The scenario of one variant: ``base`` restricted to the swept routes, the variant's settings applied.

    Parameters
    ----------
    base : Scenario
        The validated scenario (its ``sweep`` is used unless ``spec`` is given).
    variant : Variant
    spec : SweepSpec, optional

    Returns
    -------
    Scenario
        A new frozen scenario (``sweep`` None); ``base`` is unchanged.

    Raises
    ------
    InputError
        A setting that names nothing in the scenario (only if ``spec`` was not validated with it).
    """
    spec = spec or base.sweep
    routes = [r for r in base.routes if r.id in spec.routes] if spec.routes else list(base.routes)
    feeds = {f.id: f for f in base.feeds}
    limits = base.limits
    for target, value in variant.settings(spec).items():
        head, _, rest = target.partition(".")
        if head == "limits":
            limits = dataclasses.replace(limits, **{rest: float(value)})
        elif head == "feeds":
            fid, _, key = rest.partition(".")
            ax = next(a for a in spec.axes if target in a.targets)
            if key == "flow":
                mass = ax.kind == "mass_flow"
                feeds[fid] = dataclasses.replace(feeds[fid], flow_mass=float(value) if mass else None,
                                                 flow_molar=None if mass else float(value))
            else:
                feeds[fid] = dataclasses.replace(feeds[fid], **{key: float(value)})
        elif head == "steps":
            sid, _, name = rest.partition(".")
            hit = False
            for i, rt in enumerate(routes):
                if any(st.id == sid for st in rt.steps):
                    routes[i] = _with_step_param(rt, sid, name, value)
                    hit = True
            if not hit:
                raise InputError(f"sweep setting {target}: no step {sid!r} in the swept routes", "sweep")
        else:
            raise InputError(f"sweep setting {target!r} is not steps.*, feeds.* or limits.*", "sweep")
    return dataclasses.replace(base, routes=tuple(routes), feeds=tuple(feeds[f.id] for f in base.feeds),
                               limits=limits, sweep=None)


__all__ = ["Variant", "iter_variants", "variant_scenario"]
