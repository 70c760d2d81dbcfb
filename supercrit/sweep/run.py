"""Run a sweep: every variant of a scenario's ``sweep:`` section, in local processes or on a Dask cluster.

>>> out = run_sweep("scenarios/co2_extraction_loop_sweep.yaml", "output", jobs=4)   # doctest: +SKIP
>>> out.paths["csv"], out.computed, out.failed                                       # doctest: +SKIP

Results are streamed to ``<name>-sweep.jsonl`` as variants finish (a resumed sweep reads it back); the
records are also kept in memory (a few kB per variant: 113 MB peak for 10,000 variants,
``tests/bench/bench_resources.py --sweep``), and when every variant is done (or the sweep is stopped) the
tidy table (``-sweep.csv``, ``-sweep.json``, ``-sweep.parquet`` when pyarrow is present) and the report
(``-sweep.html``) are written from them, sorted by variant, so that the table does not depend on how many
processes computed it or in which order they finished.
"""
from __future__ import annotations

import hashlib
import os
import sys
import time
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import InputError
from ..io import sanitize_name
from .evaluate import evaluate_variant, make_task
from .store import ResultsLog, log_header, read_log
from .variants import iter_variants


@dataclass
class SweepOutcome:
    """What a sweep did: the scenario, its sweep, every record (index -> record), how many variants were
    computed now, kept from an earlier run (``resumed``) or failed, whether it was stopped early, and the
    files written (name -> Path)."""

    scenario: object
    records: dict
    computed: int = 0
    resumed: int = 0
    failed: int = 0
    stopped: bool = False
    paths: dict = field(default_factory=dict)

    @property
    def spec(self):
        return self.scenario.sweep

    @property
    def all_failed(self) -> bool:
        """Every variant failed or none of its routes could be computed."""
        if not self.records:
            return False
        return all(r.get("error") or not r["routes"] or all(rr["level"] == 3 for rr in r["routes"])
                   for r in self.records.values())


class Progress:
    """A plain-text progress line on stderr: done/total, rate, time left (rewritten in place on a terminal,
    one line every few seconds otherwise)."""

    def __init__(self, total: int, done: int, stream=None, every: float = 5.0):
        self.total, self.done, self.start_done = total, done, done
        self.stream = stream if stream is not None else sys.stderr
        self.tty = hasattr(self.stream, "isatty") and self.stream.isatty()
        self.t0 = time.monotonic()
        self.last = 0.0
        self.every = 0.2 if self.tty else every

    def text(self) -> str:
        elapsed = time.monotonic() - self.t0
        new = self.done - self.start_done
        rate = new / elapsed if elapsed > 0 else 0.0
        left = (self.total - self.done) / rate if rate > 0 else None
        pct = 100.0 * self.done / self.total if self.total else 100.0
        eta = "-" if left is None else _duration(left)
        return (f"sweep: {self.done}/{self.total} variants ({pct:.0f} %), {rate:.2f} variants/s, "
                f"about {eta} left")

    def step(self, n: int = 1, final: bool = False) -> None:
        self.done += n
        now = time.monotonic()
        if final or now - self.last >= self.every or self.done == self.total:
            self.last = now
            end = "\n" if (final or not self.tty or self.done == self.total) else ""
            self.stream.write(("\r" if self.tty else "") + self.text() + end)
            self.stream.flush()


def _duration(s: float) -> str:
    s = int(round(s))
    if s < 60:
        return f"{s} s"
    if s < 3600:
        return f"{s // 60} min {s % 60:02d} s"
    return f"{s // 3600} h {(s % 3600) // 60:02d} min"


def _read_source(source):
    """(scenario, file bytes, name hint) of a path or YAML text with a sweep: section."""
    from ..scenario import load_scenario

    if isinstance(source, (str, os.PathLike)) and ("\n" not in str(source)) and (
            str(source).endswith((".yaml", ".yml")) or os.path.isfile(source)):
        path = Path(source)
        try:
            data = path.read_bytes()
        except OSError as exc:
            raise InputError(f"cannot read the scenario file: {exc.strerror}", str(path)) from None
        hint = path.stem
        sc = load_scenario(path)
        if hashlib.sha256(data).hexdigest() != sc.source_hash:  # changed while being read
            raise InputError("the file changed while it was read; run the sweep again", str(path))
    else:
        data = source if isinstance(source, bytes) else str(source).encode("utf-8")
        hint = "sweep"
        sc = load_scenario(data, name_hint=hint)
    if sc.sweep is None:
        raise InputError("the scenario has no sweep: section; add one (see docs/scenario-format.md, "
                         "'Design-space sweeps') or use supercrit run", sc.source_file)
    if not sc.sweep.routes:
        import dataclasses

        sc = dataclasses.replace(sc, sweep=dataclasses.replace(sc.sweep, routes=tuple(r.id for r in sc.routes)))
    return sc, data, hint


def sweep_paths(scenario, out_dir) -> dict:
    """The files of a sweep: log, csv, json, parquet, html (name -> Path)."""
    stem = f"{sanitize_name(scenario.name)}-sweep"  # the name may hold dots: no with_suffix
    return {k: Path(out_dir) / f"{stem}.{ext}" for k, ext in
            (("log", "jsonl"), ("csv", "csv"), ("json", "json"), ("parquet", "parquet"), ("html", "html"))}


def run_sweep(source, out_dir="output", *, jobs: int | None = None, resume: bool = False, scheduler=None,
              report: bool = True, progress=None, stop_after: int | None = None, announce=None) -> SweepOutcome:
    """Evaluate every variant of a scenario's sweep and write the results.

    Parameters
    ----------
    source : path or YAML text
        A scenario with a ``sweep:`` section.
    out_dir : path
        Folder of the outputs (created if missing).
    jobs : int, optional
        Local worker processes (default: every core); 1 computes in this process.
    resume : bool
        Keep the variants already in the log (same scenario bytes and sweep) and compute only the others.
        Without it an existing log is replaced.
    scheduler : str or distributed.Client, optional
        Address of a Dask scheduler (``tcp://host:8786``) or a client: run the variants on that cluster
        (needs ``pip install supercrit[dask]``); ``jobs`` is then ignored.
    report : bool
        Write the HTML report of the sweep.
    progress : file-like or False, optional
        Where the progress line goes (default stderr; False: none).
    stop_after : int, optional
        Stop after this many newly computed variants (the log keeps them; ``resume`` continues).
    announce : callable, optional
        Called with one line of text before the variants run (the count, what is kept).

    Returns
    -------
    SweepOutcome

    Raises
    ------
    InputError
        The scenario is invalid or has no sweep, the log belongs to another sweep, or Dask is missing.
    """
    from .table import write_results

    sc, data, hint = _read_source(source)
    spec = sc.sweep
    paths = sweep_paths(sc, out_dir)
    header = log_header(sc, spec)
    kept: dict[int, dict] = {}
    if resume and paths["log"].exists():
        kept = read_log(paths["log"], header)
    todo = [v for v in iter_variants(spec) if v.index not in kept]
    if stop_after is not None:
        todo = todo[:max(0, int(stop_after))]
    say = announce or (lambda _t: None)
    nroutes = len(spec.routes)
    say(f"{spec.count} variants x {nroutes} route{'s' if nroutes != 1 else ''} "
        f"({' x '.join(str(len(a.values)) for a in spec.axes) if spec.combine == 'grid' else 'paired'})"
        + (f"; {len(kept)} kept from {paths['log']}, {spec.count - len(kept)} to compute" if resume else ""))
    log = ResultsLog(paths["log"])
    log.start(header, kept)
    outcome = SweepOutcome(sc, dict(kept), resumed=len(kept))
    bar = None if progress is False else Progress(spec.count, len(kept), progress)
    tasks = [make_task(data, sc, hint, v.index, v.values) for v in todo]
    try:
        for rec in _execute(tasks, jobs, scheduler):
            outcome.records[rec["variant"]] = rec
            log.append(rec)
            outcome.computed += 1
            if rec.get("error"):
                outcome.failed += 1
            if bar is not None:
                bar.step()
    except KeyboardInterrupt:
        outcome.stopped = True
        raise
    finally:
        log.close()
        if bar is not None and bar.done != bar.total:
            bar.step(0, final=True)
        if outcome.records:
            outcome.paths = write_results(outcome, paths, report=report)
    outcome.stopped = outcome.stopped or len(outcome.records) < spec.count
    outcome.paths["log"] = paths["log"]
    return outcome


def _execute(tasks, jobs, scheduler):
    """Records of the tasks, in the order they finish."""
    if not tasks:
        return
    if scheduler is not None:
        yield from _execute_dask(tasks, scheduler)
        return
    jobs = jobs or os.cpu_count() or 1
    if jobs <= 1 or len(tasks) == 1:
        for t in tasks:
            yield evaluate_variant(t)
        return
    from concurrent.futures import ProcessPoolExecutor, as_completed
    from concurrent.futures.process import BrokenProcessPool

    pool = ProcessPoolExecutor(max_workers=min(jobs, len(tasks)))
    try:
        futures = [pool.submit(evaluate_variant, t) for t in tasks]
        for fut in as_completed(futures):
            try:
                yield fut.result()
            except BrokenProcessPool:  # a worker died (killed, out of memory): those variants stay missing
                continue
    except BaseException:  # stopped (Ctrl-C) or the caller closed the generator: do not wait for the rest
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown(wait=True)


def _execute_dask(tasks, scheduler):
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise InputError("running on a Dask cluster needs the optional extra: pip install 'supercrit[dask]'",
                         "--scheduler") from None
    own = not isinstance(scheduler, Client)
    try:
        client = Client(scheduler) if own else scheduler
    except (OSError, TimeoutError, ValueError) as exc:
        raise InputError(f"cannot reach the Dask scheduler {scheduler!r}: {exc}", "--scheduler") from None
    try:
        futures = client.map(evaluate_variant, tasks, pure=False)
        for fut in as_completed(futures):
            try:
                yield fut.result()
            except Exception:  # noqa: BLE001 - a lost worker: the variant stays missing, resume computes it
                continue
    finally:
        if own:
            client.close()


__all__ = ["run_sweep", "SweepOutcome", "Progress", "sweep_paths"]
