"""Verdicts: feasible, feasible with warnings, infeasible, or not computed; each reason one sentence."""
from __future__ import annotations

import enum
from dataclasses import dataclass


class Level(enum.IntEnum):
    """Verdict level; a higher value is worse. ``str()`` gives the words shown to users."""

    FEASIBLE = 0
    WARN = 1
    INFEASIBLE = 2
    NOT_COMPUTED = 3

    def __str__(self) -> str:
        return {0: "feasible", 1: "feasible with warnings", 2: "infeasible", 3: "not computed"}[int(self)]


@dataclass(frozen=True)
class Reason:
    """One finding: its level, the step, the rule, one sentence with numbers, and the margin left.

    margin is in SI of ``margin_kind`` (e.g. a temperature difference in K); negative means the rule is
    broken. None where the rule has no numeric margin.
    """

    level: Level
    step_id: str
    rule: str
    text: str
    margin: float | None = None
    margin_kind: str | None = None


@dataclass(frozen=True)
class Verdict:
    level: Level
    reasons: tuple[Reason, ...] = ()

    @staticmethod
    def of(reasons) -> "Verdict":
        reasons = tuple(sorted(reasons, key=lambda r: (-int(r.level), r.step_id, r.rule)))
        level = max((r.level for r in reasons if r.level != Level.FEASIBLE), default=Level.FEASIBLE)
        return Verdict(level, reasons)
