"""Peneloux volume translation: v = v_cubic - c, with c constant per component.

Peneloux, Rauzy & Freze, Fluid Phase Equilib. 8 (1982) 7, doi:10.1016/0378-3812(82)80002-2, fix c so
that the translated equation reproduces the saturated liquid volume at Tr = 0.7 (they used the
Rackett equation for it). supercrit takes that liquid volume from each component's reference
equation of state (``rhoL07`` in components.yaml), so c_i = v_liq,cubic(0.7 Tc) - 1/rhoL07.
Translation leaves vapour pressures and phase compositions unchanged; it shifts h by p*c only
through p v, and moves liquid densities onto the reference values near Tr = 0.7.
"""
from __future__ import annotations

import numpy as np


def peneloux_shift(v_liq_cubic_07, rho_liq_ref_07):
    """Volume shift c [m3 mol-1] from the cubic's and the reference saturated liquid volume at Tr = 0.7."""
    return np.asarray(v_liq_cubic_07, dtype=float) - 1.0 / np.asarray(rho_liq_ref_07, dtype=float)
