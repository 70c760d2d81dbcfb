"""Thermodynamic core: components, models (residual Helmholtz), properties, solvers, states."""
