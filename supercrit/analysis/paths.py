"""A continuous path function t -> State rebuilt from the states a step sampled.

The step samples its own physics (constant-efficiency compression, isobaric heating with the pressure
drop spread along the duty, isenthalpic throttling, a pipe along its length). Between samples the path
is p(c) and h(c) interpolated by monotone cubic (PCHIP) splines of the step's own coordinate c, and
the state is the (p, h) flash of the stream's fluid: exact at the samples and smooth between them, so
that a crossing can be located to 0.01 K and 0.01 bar by root finding on t in [0, 1].
"""
from __future__ import annotations

import numpy as np
from scipy.interpolate import PchipInterpolator


def path_function(fluid, step_path):
    """(path, t_samples, states) for a StepPath, or None for a point (a single state).

    path(t) returns the State at t in [0, 1]; t_samples are the samples' positions on [0, 1].
    """
    states = list(step_path.states)
    if len(states) < 2:
        return None
    c = np.asarray(step_path.coordinate, dtype=float)
    p = np.array([float(s.p) for s in states])
    h = np.array([float(s.h) for s in states])
    # t runs 0 -> 1 in the step's own direction (a valve's pressure coordinate falls along its path)
    if c[-1] == c[0]:
        return None
    t_all = (c - c[0]) / (c[-1] - c[0])
    keep = np.concatenate([[True], np.diff(t_all) > 0])
    if not np.all(np.diff(t_all)[np.diff(t_all) != 0] > 0):
        return None  # a coordinate that is not monotone is not a path parameter
    t, p, h = t_all[keep], p[keep], h[keep]
    states = [s for s, k in zip(states, keep) if k]
    if t.size < 2:
        return None
    if c.size == 2:
        P = lambda u: p[0] + u * (p[1] - p[0])  # noqa: E731
        H = lambda u: h[0] + u * (h[1] - h[0])  # noqa: E731
    else:
        splines = []  # built on first use: most paths cross nothing and are never evaluated between samples

        def _splines():
            if not splines:
                splines.extend((PchipInterpolator(t, p), PchipInterpolator(t, h)))
            return splines

        P = lambda u: _splines()[0](u)  # noqa: E731
        H = lambda u: _splines()[1](u)  # noqa: E731

    def path(u: float):
        u = float(min(max(u, 0.0), 1.0))
        k = int(np.searchsorted(t, u))
        if k < t.size and u == t[k]:
            return states[k]
        # start from the nearer sample (a warm start only: the facade keeps it only if it is the stable state)
        near = states[k - 1] if k == t.size or (k > 0 and u - t[k - 1] <= t[k] - u) else states[k]
        return fluid.state(p=float(P(u)), h=float(H(u)), near=near)

    path.p_of = lambda u: float(P(min(max(float(u), 0.0), 1.0)))  # p [Pa] and h [J mol-1] along the path
    path.h_of = lambda u: float(H(min(max(float(u), 0.0), 1.0)))

    return path, t, states
