"""Step kinds: one module per kind, each ``run(spec, inlets, ctx) -> StepResult``; and the route solver.

>>> from supercrit.steps import solve_scenario          # doctest: +SKIP
>>> result = solve_scenario(load_scenario("scenarios/extraction.yaml"))
>>> result.routes["pump-loop"].step_table()
"""
from __future__ import annotations

from . import (compress, exchange, expand, feed, heat, mix, pipe, pump, separate, sink, split, throttle,
               vessel)
from .base import Stream, StepContext, StepPath, StepResult

RUNNERS = {"feed": feed.run, "compress": compress.run, "pump": pump.run, "heat": heat.run, "cool": heat.run,
           "throttle": throttle.run, "expand": expand.run, "separate": separate.run, "mix": mix.run,
           "split": split.run, "exchange": exchange.run, "vessel": vessel.run, "pipe": pipe.run, "sink": sink.run}

from .solve import RouteResult, ScenarioResult, solve_route, solve_scenario  # noqa: E402

__all__ = ["RUNNERS", "Stream", "StepContext", "StepPath", "StepResult", "RouteResult", "ScenarioResult",
           "solve_route", "solve_scenario"]
