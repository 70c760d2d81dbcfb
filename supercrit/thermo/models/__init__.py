"""Equations of state, each one residual-Helmholtz function (see base.py)."""
