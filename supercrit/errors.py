"""One error hierarchy for supercrit; every message speaks to a process engineer.

Each error says what was wrong, where (file, line, step or quantity), and what would be valid.
"""
from __future__ import annotations


class SupercritError(Exception):
    """Base of every error supercrit raises on purpose."""


class InputError(SupercritError, ValueError):
    """Bad input: a value, unit, key or file that cannot be used as written.

    Parameters
    ----------
    message : str
        What is wrong and what would be valid.
    where : str, optional
        File, line and YAML path, or the argument name, prefixed to the message.
    """

    def __init__(self, message: str, where: str | None = None):
        self.where = where
        self.detail = message
        super().__init__(f"{where}: {message}" if where else message)


class DataError(SupercritError, LookupError):
    """Component or parameter data that is missing, unknown, unsourced or out of its range."""


class ModelRangeError(SupercritError, ValueError):
    """A state outside the validity range of the chosen model or correlation."""


class ConvergenceError(SupercritError, ArithmeticError):
    """An iterative solver did not converge; ``report`` says how far it got."""

    def __init__(self, message: str, report=None):
        self.report = report
        if report is not None:
            message = f"{message} [{report}]"
        super().__init__(message)


class SecondLiquidError(ConvergenceError):
    """A second liquid phase appears (liquid-liquid split or a three-phase region): the vapour-liquid flash
    does not describe the state, so no state is returned; the message names the second liquid."""


class PropertyUndefinedError(SupercritError, ValueError):
    """A property asked of a state where it has no single value (e.g. cp inside the two-phase dome)."""
