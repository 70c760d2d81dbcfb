"""Design-space sweeps: many variants of one scenario, evaluated in local processes or on a Dask cluster.

The ``sweep:`` section of a scenario (validated with the rest of the file, see docs/scenario-format.md)
names the settings to vary; :func:`run_sweep` evaluates every variant (one
:func:`supercrit.runner.run_scenario` each, without the HTML report), streams the results to
``<name>-sweep.jsonl`` and writes the tidy table and the sweep report.

>>> from supercrit.sweep import run_sweep                                       # doctest: +SKIP
>>> out = run_sweep("scenarios/captured_co2_conditioning_sweep.yaml", jobs=2)   # doctest: +SKIP

Layering: after ``report`` (like ``runner.py``); ``cli`` uses it.
"""
from .evaluate import evaluate_variant
from .run import SweepOutcome, run_sweep, sweep_paths
from .table import build_table
from .variants import Variant, iter_variants, variant_scenario

__all__ = ["run_sweep", "SweepOutcome", "sweep_paths", "build_table", "Variant", "iter_variants",
           "variant_scenario", "evaluate_variant"]
