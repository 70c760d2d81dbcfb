"""Routes as graphs: build (:func:`build_graph`), check and plan (:func:`check_route`)."""
from .build import build_graph, where_of
from .checks import RoutePlan, check_route, plan_route

__all__ = ["build_graph", "check_route", "plan_route", "RoutePlan", "where_of"]
