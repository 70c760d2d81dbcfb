"""A sweep's parent process keeps a few kB per variant, never the variants' computed results (issue 9,
deliver 5). A few hundred variants of a cheap scenario run in 2 worker processes while this process traces
its own Python allocations; the 10,000-variant measurement is ``tests/bench/bench_resources.py --sweep``.

Measured (this scenario, 2 processes, CPython 3.11; regression: no published value): the parent's
tracemalloc peak grows by about 8 kB per variant (the variant's record, about 3.7 kB, kept for the table;
its pending task and future while it runs; its row of the table, CSV and JSON written at the end). The
bound below, 20 kB per variant, leaves 2.5x headroom; keeping the computed result of each variant (its
``runner.run_scenario`` run: states, sampled paths, analysis; about 82 kB for this scenario, measured with
tracemalloc over 10 runs held at once) on top of the record would add that much per variant and fail it.
"""
import os
import tracemalloc

import pytest

from supercrit.sweep import run_sweep

PER_VARIANT_BOUND = 20e3  # [B] parent's tracemalloc growth per variant; see the module docstring


def sweep_text(n_heater: int, n_cooler: int) -> str:
    """Nitrogen heated then cooled (settings invented for this test, as in bench_resources.py):
    heater outlet from 40 degC by 2 K x cooler outlet from -40 degC by 2 K; cooler outlets below the
    default lowest metal temperature, -29 degC, make those variants infeasible."""
    return ("name: sweep-memory\n"
            "fluid: {components: N2, model: peng-robinson}\n"
            "feeds:\n  - {id: gas, T: 20 degC, p: 10 bar, flow: 1 kg/s}\n"
            "routes:\n  - id: heat-and-cool\n    steps:\n"
            "      - {id: in, kind: feed}\n"
            "      - {id: heater, kind: heat, T_out: 60 degC, dp: 0.2 bar}\n"
            "      - {id: cooler, kind: cool, T_out: 30 degC, dp: 0.2 bar}\n"
            "      - {id: out, kind: sink}\n"
            "sweep:\n  vary:\n"
            f"    - setting: steps.heater.T_out\n      range: {{from: 40 degC, to: {40 + 2 * (n_heater - 1)} degC, step: 2 K}}\n"
            f"    - setting: steps.cooler.T_out\n      range: {{from: -40 degC, to: {-40 + 2 * (n_cooler - 1)} degC, step: 2 K}}\n")


_HOOKED = []


def _trace_this_process_only():
    """Forked workers stop tracing at once (they inherit it): only this process's allocations are counted,
    and the workers compute at full speed. No effect on a child forked while nothing is traced."""
    if not _HOOKED:
        os.register_at_fork(after_in_child=lambda: tracemalloc.is_tracing() and tracemalloc.stop())
        _HOOKED.append(True)


def _parent_peak(text: str, out_dir):
    tracemalloc.start()
    try:
        out = run_sweep(text, out_dir, jobs=2, progress=False, report=False)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    return peak, out


def test_parent_memory_grows_by_a_record_per_variant_not_by_a_result(tmp_path):
    if tracemalloc.is_tracing():
        pytest.skip("tracemalloc already traces this process (PYTHONTRACEMALLOC): the peak would not be ours")
    _trace_this_process_only()
    run_sweep(sweep_text(2, 2), tmp_path / "warm-up", jobs=2, progress=False, report=False)  # imports, first calls
    small_peak, small = _parent_peak(sweep_text(4, 5), tmp_path / "small")
    large_peak, large = _parent_peak(sweep_text(12, 20), tmp_path / "large")
    assert (small.computed, small.failed, large.computed, large.failed) == (20, 0, 240, 0)
    levels = {rr["verdict"] for rec in large.records.values() for rr in rec["routes"]}
    assert levels == {"feasible", "infeasible"}  # the table carries reasons, not only empty cells
    assert len(large.paths["csv"].read_text().splitlines()) == 1 + 240
    per_variant = (large_peak - small_peak) / (240 - 20)
    assert per_variant < PER_VARIANT_BOUND, (
        f"the sweep's parent process grew by {per_variant / 1e3:.1f} kB per variant (peak {small_peak / 1e6:.2f} MB "
        f"at 20 variants, {large_peak / 1e6:.2f} MB at 240); at 10,000 variants that is "
        f"{per_variant * 1e4 / 1e6:.0f} MB. Results should stream to the log, not stay in memory")
