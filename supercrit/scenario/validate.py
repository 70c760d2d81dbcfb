"""Load and validate a scenario file: every problem of the file reported at once, with its place.

:func:`load_scenario` reads YAML (safely, :mod:`supercrit.io`), checks every key, value, unit and
reference against :mod:`supercrit.scenario.schema`, resolves derived routes (``based_on``) into
full routes, and returns a frozen :class:`~supercrit.scenario.schema.Scenario` in SI. If anything
is wrong it raises one :class:`ScenarioError` listing each problem as
``FILE:LINE:COL: routes[0] (base) steps[2] (heater-1) T_out: <what is wrong; what would be valid>``.
The optional ``sweep:`` section is checked against the validated routes, feeds and limits by
:func:`check_sweep` (its values, the count of variants and the ``max_variants`` guard).

The checks live beside this entry module: :mod:`.problems` (the problem collector, ``ScenarioError``),
:mod:`.fluid` (fluid, feeds, limits), :mod:`.routes` (routes written in full or derived),
:mod:`.steps` (step kinds, parameters and connections) and :mod:`.sweep_section` (the sweep).
"""
from __future__ import annotations

import hashlib
import os
from pathlib import Path

from ..io import Location, YamlError, YamlMap, load_yaml, load_yaml_file
from .fluid import check_feeds, check_fluid, check_limits
from .problems import Collector, Problem, ScenarioError, did_you_mean, shown
from .routes import resolve_routes
from .schema import DISPLAY_SYSTEMS, Limits, Scenario
from .steps import validate_route_steps
from .sweep_section import check_sweep

__all__ = ["load_scenario", "ScenarioError", "Problem", "Collector", "did_you_mean", "resolve_routes",
           "validate_route_steps", "check_sweep"]

TOP_KEYS = ("name", "description", "display_units", "fluid", "feeds", "feed", "limits", "routes", "sweep")


def load_scenario(path_or_text, *, name_hint: str | None = None) -> Scenario:
    """Read, check and resolve a scenario.

    Parameters
    ----------
    path_or_text : str or os.PathLike or bytes
        A path (``pathlib.Path``, or a ``str`` without newline that names an existing file or ends
        in ``.yaml``/``.yml``), or the YAML text itself.
    name_hint : str, optional
        Scenario name when the file has no ``name:`` (default: the file stem), and the label of
        text input in messages (default ``<text>``).

    Returns
    -------
    Scenario
        Frozen, SI, derived routes resolved.

    Raises
    ------
    ScenarioError
        Listing every problem found (YAML syntax, unsafe tags, unknown keys, units, ranges,
        references, compositions, ...), each with file:line:col.
    """
    if isinstance(path_or_text, os.PathLike) or (
            isinstance(path_or_text, str) and "\n" not in path_or_text
            and (path_or_text.endswith((".yaml", ".yml")) or os.path.isfile(path_or_text))):
        file = str(path_or_text)
        stem = Path(file).stem
        try:
            doc = load_yaml_file(path_or_text)
        except YamlError as exc:
            raise ScenarioError([Problem(exc.location, "", exc.detail)], file) from None
        data, sha = doc.data, doc.sha256
    else:
        file = f"<{name_hint}>" if name_hint else "<text>"
        stem = name_hint or "scenario"
        raw = path_or_text if isinstance(path_or_text, bytes) else str(path_or_text).encode("utf-8")
        sha = hashlib.sha256(raw).hexdigest()
        try:
            data = load_yaml(raw, file)
        except YamlError as exc:
            raise ScenarioError([Problem(exc.location, "", exc.detail)], file) from None
    ctx = Collector(file)
    scenario = _validate(ctx, data, file, sha, name_hint or stem)
    if ctx.problems or scenario is None:
        if not ctx.problems:  # pragma: no cover - _validate returns None only after recording
            ctx.add(Location(file, 1, 1), "", "the scenario could not be read")
        raise ScenarioError(sorted(ctx.problems, key=_order), file)
    return scenario


def _order(p: Problem):
    return (p.location.line, p.location.col) if p.location else (0, 0)


def _validate(ctx: Collector, data, file: str, sha: str, default_name: str) -> Scenario | None:
    top = Location(file, 1, 1)
    if data is None:
        ctx.add(top, "", "the file is empty; a scenario needs at least fluid:, feeds: and routes:")
        return None
    if not isinstance(data, YamlMap):
        ctx.add(top, "", f"a scenario is a mapping with keys {', '.join(TOP_KEYS)}; this file holds {shown(data)}")
        return None
    ctx.check_keys(data, TOP_KEYS, "", "the scenario")
    name = ctx.text(data, "name", "name", default_name) or default_name
    description = ctx.text(data, "description", "description")
    display = ctx.text(data, "display_units", "display_units", "engineering")
    if display not in DISPLAY_SYSTEMS:
        ctx.add(data.loc("display_units"), "display_units",
                f"unknown unit system {display!r}.{did_you_mean(display, DISPLAY_SYSTEMS)} "
                f"Valid: {', '.join(DISPLAY_SYSTEMS)}.")
    for key in ("fluid", "routes"):
        if key not in data:
            ctx.add(data.where, "", f"the scenario has no {key}: section; add it (see docs/scenario-format.md)")
    fluid = check_fluid(ctx, data["fluid"], data.loc("fluid")) if "fluid" in data else None
    feeds, feed_ids = check_feeds(ctx, data, fluid)
    limits = check_limits(ctx, data.get("limits"), data.loc("limits"), "limits") if "limits" in data else {}
    raw_routes = resolve_routes(ctx, data.get("routes"), data.loc("routes")) if "routes" in data else []
    routes = tuple(r for r in (validate_route_steps(ctx, rr, feed_ids) for rr in raw_routes) if r is not None)
    sweep = None
    if "sweep" in data:
        complete = len(routes) == len(raw_routes) and bool(routes)
        sweep = check_sweep(ctx, data["sweep"], data.loc("sweep"), routes, feeds, feed_ids, complete)
    if ctx.problems or fluid is None:
        return None
    return Scenario(name=name, description=description, display_units=display, fluid=fluid, feeds=tuple(feeds),
                    limits=Limits(**limits), routes=routes, source_file=file, source_hash=sha, sweep=sweep)
