"""Scenario files: the schema of a validated scenario (SI, frozen) and its loader.

>>> from supercrit.scenario import load_scenario
>>> sc = load_scenario("scenarios/extraction.yaml")      # doctest: +SKIP
>>> sc.routes[0].steps[1].params["p_out"]                # Pa

Format reference: docs/scenario-format.md.
"""
from .schema import (DISPLAY_SYSTEMS, STEP_KINDS, FeedSpec, FluidSpec, Limits, Location, Param, PortRef, RouteSpec,
                     Scenario, StepKind, StepSpec)
from .validate import Problem, ScenarioError, load_scenario

__all__ = ["load_scenario", "ScenarioError", "Problem", "Scenario", "FluidSpec", "FeedSpec", "Limits", "RouteSpec",
           "StepSpec", "PortRef", "Location", "STEP_KINDS", "StepKind", "Param", "DISPLAY_SYSTEMS"]
