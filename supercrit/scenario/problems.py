"""The problem collector of the scenario checks: every problem of a file gathered with its place.

:class:`Collector` records each problem (file:line:col, YAML path, message) and lets the checks go on
past it; :class:`ScenarioError` lists them all. Shared helpers of the other check modules live here:
key checks with :func:`did_you_mean`, quantity parsing, plain ids, and :func:`shown` for values in
messages.
"""
from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

from ..errors import InputError
from ..io import Location, YamlList, YamlMap
from ..units import parse_quantity

ID_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_-]{0,63}$")
SUM_TOL = 1e-6  # fractions must add up to 1 within this


@dataclass(frozen=True)
class Problem:
    """One problem in a scenario file: ``location`` (file, line, col), ``path`` (e.g.
    ``routes[0] (base) steps[2] (heater-1) T_out``) and ``message``."""

    location: Location | None
    path: str
    message: str

    def __str__(self) -> str:
        parts = [str(self.location)] if self.location else []
        if self.path:
            parts.append(self.path)
        return ": ".join(parts + [self.message])


class ScenarioError(InputError):
    """A scenario file with one or more problems; ``problems`` lists each (a tuple of :class:`Problem`).

    The message has one line per problem, ``FILE:LINE:COL: path: what is wrong; what is valid``.
    """

    def __init__(self, problems, file: str):
        self.problems = tuple(problems)
        self.file = file
        n = len(self.problems)
        head = f"{file}: {n} problem{'s' if n != 1 else ''} in the scenario:"
        super().__init__("\n".join([head] + [f"  {p}" for p in self.problems]))
        self.where = file


class Collector:
    """Gathers problems (deduplicated, in file order) while validation continues past each one."""

    def __init__(self, file: str):
        self.file = file
        self.problems: list[Problem] = []
        self._seen: set = set()

    def add(self, location: Location | None, path: str, message: str) -> None:
        key = (location, message)
        if key not in self._seen:
            self._seen.add(key)
            self.problems.append(Problem(location, path, message))

    def quantity(self, value, kind: str, location, path: str, name: str):
        """SI value of a quantity, or None after recording the problem."""
        try:
            return parse_quantity(value, kind, name)
        except InputError as exc:
            self.add(location, path, exc.detail)
            return None

    def check_keys(self, mapping: YamlMap, allowed, path: str, what: str) -> None:
        """Record every key of ``mapping`` not in ``allowed``, with a suggestion."""
        for key in mapping:
            if key not in allowed:
                self.add(mapping.key_where.get(key), path,
                         f"unknown key {key!r} in {what}.{did_you_mean(key, allowed)} "
                         f"Valid keys: {', '.join(allowed)}.")

    def expect_map(self, value, location, path: str, what: str, example: str) -> bool:
        if isinstance(value, YamlMap):
            return True
        self.add(location, path, f"{what} must be a mapping of keys to values, e.g. {example}; got {shown(value)}")
        return False

    def text(self, mapping: YamlMap, key: str, path: str, default: str = "") -> str:
        value = mapping.get(key, default)
        if value is None:
            return default
        if not isinstance(value, (str, int, float)) or isinstance(value, bool):
            self.add(mapping.loc(key), path, f"{key} must be text; got {shown(value)}")
            return default
        return str(value)

    def ident(self, value, location, path: str, what: str) -> str | None:
        """A plain id, or None after recording the problem."""
        if value is None:
            self.add(location, path, f"{what} has no id; add 'id: <name>' (letters, digits, '-', '_')")
            return None
        if not isinstance(value, (str, int)) or isinstance(value, bool) or not ID_PATTERN.match(str(value)):
            fix = re.sub(r"[^A-Za-z0-9_-]+", "-", str(value)).strip("-_") or "name-1"
            self.add(location, path, f"{what} id {shown(value)} must be letters, digits, '-' and '_' (starting "
                                     f"with a letter or digit, at most 64), e.g. {fix!r}")
            return None
        return str(value)


def did_you_mean(word, options, cutoff: float = 0.6) -> str:
    """`` Did you mean 'x'?`` for the closest options (case-insensitive too), or ``""``."""
    word = str(word)
    options = [str(o) for o in options]
    lower = {o.lower(): o for o in options}
    close = [lower[word.lower()]] if word.lower() in lower else difflib.get_close_matches(word, options, 2, cutoff)
    if not close:
        close = [lower[c] for c in difflib.get_close_matches(word.lower(), list(lower), 2, cutoff)]
    return f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""


def shown(value) -> str:
    if isinstance(value, bool):
        return str(value).lower()
    if value is None:
        return "nothing"
    if isinstance(value, (YamlMap, dict)):
        return "a mapping"
    if isinstance(value, (YamlList, list)):
        return "a list"
    return repr(value) if isinstance(value, str) else str(value)
