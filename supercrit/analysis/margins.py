"""Margins to the phase boundaries that equipment rules are written against.

Pure fluids use the saturation line of the chosen model; mixtures use the model's bubble and dew points
and the cricondenbar of its phase envelope. Each function returns a margin in SI (K or Pa) or None where
the boundary does not exist at that state (e.g. above the critical pressure of a pure fluid, or above a
mixture's cricondenbar, where no dew point exists).
"""
from __future__ import annotations

from ..errors import SupercritError


def dew_temperature(fluid, p: float) -> float | None:
    """Dew-point (pure: saturation) temperature at p [Pa] [K], or None above the critical/cricondenbar."""
    try:
        if fluid.is_pure:
            if fluid._crit is None or p >= fluid.critical_point().p:
                return None
            return float(fluid.saturation(p=p).T)
        return float(fluid.dew_point(p=p).T)
    except SupercritError:
        return None


def bubble_temperature(fluid, p: float) -> float | None:
    """Bubble-point (pure: saturation) temperature at p [Pa] [K], or None where it does not exist."""
    try:
        if fluid.is_pure:
            if fluid._crit is None or p >= fluid.critical_point().p:
                return None
            return float(fluid.saturation(p=p).T)
        return float(fluid.bubble_point(p=p).T)
    except SupercritError:
        return None


def cricondenbar(fluid) -> float | None:
    """Highest pressure of two-phase coexistence [Pa]: pc for a pure fluid, the envelope's cricondenbar
    for a mixture; None for models without a two-phase region or an envelope that could not be traced."""
    cache = fluid.__dict__.setdefault("_cricondenbar_cache", {})
    if "p" in cache:
        return cache["p"]
    try:
        if fluid.is_pure:
            val = None if fluid._crit is None else float(fluid.critical_point().p)
        else:
            env = fluid.envelope()
            val = float(env.cricondenbar.p) if env.cricondenbar is not None else None
    except SupercritError:
        val = None
    cache["p"] = val
    return val
