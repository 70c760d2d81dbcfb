"""Resource check: a scenario with 500 steps runs within memory; prints wall time and peak memory.

Run on demand:  python tests/bench/bench_resources.py [n_steps]
(The 10,000-variant sweep check lives with the sweep benchmark.)
"""
from __future__ import annotations

import resource
import sys
import time
import tracemalloc

from supercrit.runner import run_scenario


def scenario_text(n_steps: int) -> str:
    lines = ["name: long-chain", "fluid: {components: N2, model: peng-robinson}",
             "feed: {T: 20 degC, p: 50 bar, flow: 1 kg/s}", "routes:", "  - id: chain", "    steps:",
             "      - {id: f, kind: feed}"]
    for i in range(n_steps - 2):
        kind, T = ("heat", 40) if i % 2 == 0 else ("cool", 20)
        lines.append(f"      - {{id: s{i}, kind: {kind}, T_out: {T} degC, dp: 0.01 bar}}")
    lines.append("      - {id: end, kind: sink}")
    return "\n".join(lines) + "\n"


def main(n_steps=500):
    tracemalloc.start()
    t0 = time.perf_counter()
    run = run_scenario(scenario_text(n_steps))
    dt = time.perf_counter() - t0
    _, peak = tracemalloc.get_traced_memory()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    rr = run.result.routes["chain"]
    print(f"{n_steps} steps: solved and analysed in {dt:.1f} s; verdict {run.analysis.routes[0].verdict.level}; "
          f"balance mass {rr.balance.mass:.1e}, energy {rr.balance.energy:.1e}")
    print(f"peak Python allocations {peak / 1e6:.0f} MB; peak resident memory {rss:.0f} MB")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 500)
