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
    order = np.argsort(c, kind="stable")
    c, p, h = c[order], p[order], h[order]
    keep = np.concatenate([[True], np.diff(c) > 0])
    c, p, h = c[keep], p[keep], h[keep]
    states = [states[i] for i in order[keep]]
    if c.size < 2:
        return None
    c0, c1 = c[0], c[-1]
    t = (c - c0) / (c1 - c0)
    if c.size == 2:
        P = lambda u: p[0] + u * (p[1] - p[0])  # noqa: E731
        H = lambda u: h[0] + u * (h[1] - h[0])  # noqa: E731
    else:
        P, H = PchipInterpolator(t, p), PchipInterpolator(t, h)

    def path(u: float):
        u = float(min(max(u, 0.0), 1.0))
        for k, tk in enumerate(t):
            if u == tk:
                return states[k]
        return fluid.state(p=float(P(u)), h=float(H(u)))

    return path, t, states
