"""supercrit: screening of process routes into and out of the supercritical region.

Public contract: :class:`Fluid` (state, saturation, critical_point), :class:`Phase`, and the
error hierarchy in :mod:`supercrit.errors`.
"""
from .errors import (ConvergenceError, DataError, InputError, ModelRangeError, PropertyUndefinedError,
                     SecondLiquidError, SupercritError)
from .thermo.fluid import Fluid
from .thermo.state import Phase, State

__version__ = "0.1.0"
__all__ = ["Fluid", "Phase", "State", "SupercritError", "InputError", "DataError", "ModelRangeError",
           "ConvergenceError", "SecondLiquidError", "PropertyUndefinedError", "__version__"]
