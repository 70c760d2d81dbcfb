"""van der Waals one-fluid mixing of the cubic energy parameter, with a symmetric kij matrix.

a_mix = sum_i sum_j x_i x_j (1 - k_ij) sqrt(a_i a_j), a_i = ac_i q_i(T)^2; b, c mix linearly.
"""
from __future__ import annotations

import numpy as np


def a_mix(Q, dQ, d2Q, x, one_minus_k):
    """Mixture a and its T derivatives.

    Parameters
    ----------
    Q, dQ, d2Q : ndarray (..., nc)
        sqrt(a_i) [Pa^0.5 m3 mol-1] and its first and second T derivatives.
    x : ndarray (..., nc)
        Mole fractions [-].
    one_minus_k : ndarray (nc, nc)
        1 - k_ij [-].

    Returns
    -------
    a, da/dT, d2a/dT2 : ndarray (...)
        [Pa m6 mol-2], [Pa m6 mol-2 K-1], [Pa m6 mol-2 K-2]
    sum_j x_j a_ij : ndarray (..., nc)
        Needed by the fugacity coefficients [Pa m6 mol-2].
    """
    if np.shape(Q)[-1] == 1 and np.shape(x)[-1] == 1:
        # one component: the sums below have one term each (a sum of one term is that term), written
        # out on (...) arrays - numpy is much slower on (..., 1) arrays and 1 x 1 matrix products
        x0, o = x[..., 0], float(one_minus_k[0, 0])
        Q0 = Q[..., 0]
        xQ, xdQ, xd2Q = x0 * Q0, x0 * dQ[..., 0], x0 * d2Q[..., 0]
        KxQ, KxdQ = xQ * o, xdQ * o
        return xQ * KxQ, 2.0 * (xdQ * KxQ), 2.0 * (xd2Q * KxQ + xdQ * KxdQ), (Q0 * KxQ)[..., None]
    xQ, xdQ, xd2Q = x * Q, x * dQ, x * d2Q
    KxQ = xQ @ one_minus_k  # sum_j (1-kij) x_j Q_j
    a = np.sum(xQ * KxQ, axis=-1)
    da = 2.0 * np.sum(xdQ * KxQ, axis=-1)
    d2a = 2.0 * (np.sum(xd2Q * KxQ, axis=-1) + np.sum(xdQ * (xdQ @ one_minus_k), axis=-1))
    return a, da, d2a, Q * KxQ
