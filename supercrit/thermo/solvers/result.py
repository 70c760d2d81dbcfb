"""How a solver went: every iterative solver returns or raises with a SolverReport."""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class SolverReport:
    """converged, iterations, residual (solver-specific, dimensionless), method (text)."""

    converged: bool
    iterations: int
    residual: float
    method: str

    def __str__(self) -> str:
        state = "converged" if self.converged else "NOT converged"
        return f"{self.method}: {state} after {self.iterations} iterations, residual {self.residual:.2e}"
