"""The results log of a sweep: one JSON line per finished variant, appended as variants finish.

The first line describes the sweep (scenario, its sha256, settings, count); each further line is the record
of one variant (:func:`supercrit.sweep.evaluate.evaluate_variant`). A sweep that is killed keeps every line
written before; a line cut short by the kill is dropped when the log is read again, and ``--resume``
computes only the variants without a record.
"""
from __future__ import annotations

import json
import os
from pathlib import Path

from .. import __version__
from ..errors import InputError
from ..io import write_atomic

LOG_KIND = "supercrit-sweep-log"


def log_header(scenario, spec) -> dict:
    """The first line of the log: what the records belong to."""
    return {"kind": LOG_KIND, "scenario": scenario.name, "input_sha256": scenario.source_hash,
            "settings": [list(ax.targets) for ax in spec.axes], "combine": spec.combine,
            "routes": list(spec.routes), "variants": spec.count, "supercrit": __version__}


def read_log(path: Path, header: dict) -> dict[int, dict]:
    """Variant index -> record of an existing log written for the same scenario and sweep.

    Lines that are not whole JSON (the last line of a killed sweep) and records whose values do not match
    are dropped.

    Raises
    ------
    InputError
        The log belongs to another scenario file or another sweep: resuming would mix results.
    """
    records: dict[int, dict] = {}
    with open(path, "rb") as fh:
        lines = fh.read().split(b"\n")
    try:
        head = json.loads(lines[0])
    except (ValueError, IndexError):
        head = None
    if not isinstance(head, dict) or head.get("kind") != LOG_KIND:
        raise InputError("this file is not a supercrit sweep log; remove it or run without --resume", str(path))
    for key, what in (("input_sha256", "another version of the scenario file"),
                      ("settings", "other swept settings"), ("combine", "another combination of settings"),
                      ("routes", "other routes"), ("variants", "another number of variants")):
        if head.get(key) != header[key]:
            raise InputError(f"the results in this log were computed for {what}; resuming would mix them. Run "
                             f"without --resume to start again (the log is replaced)", str(path))
    for line in lines[1:]:
        if not line.strip():
            continue
        try:
            rec = json.loads(line)
        except ValueError:
            continue  # cut short when the sweep was killed
        if isinstance(rec, dict) and isinstance(rec.get("variant"), int) and 0 <= rec["variant"] < header["variants"]:
            records[rec["variant"]] = rec
    return records


def record_line(rec: dict) -> str:
    """One record as one line of JSON (keys sorted: the same record gives the same bytes)."""
    return json.dumps(rec, sort_keys=True, separators=(",", ":"), allow_nan=False) + "\n"


class ResultsLog:
    """Append-only writer of the log; ``start`` rewrites it whole (header plus the records kept)."""

    def __init__(self, path: Path):
        self.path = Path(path)
        self._fh = None

    def start(self, header: dict, kept: dict[int, dict]) -> None:
        text = json.dumps(header, sort_keys=True) + "\n" + "".join(record_line(kept[i]) for i in sorted(kept))
        write_atomic(self.path, text)
        self._fh = open(self.path, "a", encoding="utf-8")

    def append(self, rec: dict) -> None:
        self._fh.write(record_line(rec))
        self._fh.flush()  # in the operating system's hands: a killed process loses nothing written

    def close(self) -> None:
        if self._fh is not None:
            self._fh.flush()
            try:
                os.fsync(self._fh.fileno())
            except OSError:  # pragma: no cover
                pass
            self._fh.close()
            self._fh = None


__all__ = ["ResultsLog", "read_log", "log_header", "record_line", "LOG_KIND"]
