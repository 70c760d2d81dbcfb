"""The phase-boundary side of the :class:`~supercrit.thermo.fluid.Fluid` facade: bubble and dew points,
the phase envelope, lines of constant vapour fraction, and re-tracing with changed interaction
parameters (a mixin of ``Fluid``; the solvers are in :mod:`supercrit.thermo.mixture` and ``solvers/``).
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Mapping

from ..errors import InputError, ModelRangeError
from .components import get_component

if TYPE_CHECKING:
    from .fluid import Fluid


class PhaseBoundaries:
    """Bubble/dew points, envelope, quality lines and k_ij re-trace (methods of ``Fluid``)."""

    def bubble_point(self, T=None, p=None):
        """Bubble point of the feed at T [K] or p [Pa]: object with T, p, liquid, vapor (States).

        Pure fluids return the saturation state. Raises ModelRangeError if the bubble branch does not
        reach the given T or p.
        """
        return self._sat_point("bubble", T, p)

    def dew_point(self, T=None, p=None):
        """Dew point of the feed at T [K] or p [Pa] (lower dew pressure in the retrograde region)."""
        return self._sat_point("dew", T, p)

    def _sat_point(self, kind, T, p):
        if self.is_pure:
            return self.saturation(T=T, p=p)
        if not getattr(self.model, "phase_kernel", None):
            raise ModelRangeError(f"{kind} points of mixtures need a cubic model; {self.model_name} has none")
        from .mixture import saturation_point

        return saturation_point(self, kind, T=T, p=p)

    def envelope(self):
        """Phase envelope: arrays T [K], p [Pa], branch ('bubble'/'dew') along the curve, critical,
        cricondenbar, cricondentherm (each with T, p), closed and reason. Pure fluids: saturation curve."""
        if not self.is_pure and not getattr(self.model, "phase_kernel", None):
            raise ModelRangeError(f"the {self.model_name} model has no mixture phase envelope; choose a cubic model")
        from .mixture import envelope_curve

        return envelope_curve(self)

    # -- lines of constant vapour fraction; envelope re-traced with k_ij changed ---------------
    def quality_line(self, beta):
        """Line of constant vapour fraction ``beta`` [-] (0 < beta < 1) inside the mixture's envelope.

        Returns a QualityLine (solvers/quality_lines.py): arrays T [K], p [Pa] from the envelope's
        low-temperature end to the mixture critical point (the last point; ``solved`` is False there),
        with the phase compositions x, y and ln K of every point.

        Raises
        ------
        InputError
            A pure fluid (its two-phase region is a line, the saturation curve), or beta not in (0, 1).
        ModelRangeError
            The model has no mixture phase envelope (choose a cubic model).
        ConvergenceError
            No start point at the envelope's low-temperature end.
        """
        if self.is_pure:
            raise InputError(f"{self.components[0]} is a pure fluid: its two-phase region is a line (the saturation "
                             f"curve, fluid.envelope()), so lines of constant vapour fraction exist only for "
                             f"mixtures", "quality_line")
        if not getattr(self.model, "phase_kernel", None):
            raise ModelRangeError(f"the {self.model_name} model has no mixture phase envelope; choose a cubic model")
        from .mixture import mixture_envelope
        from .solvers.quality_lines import trace_quality_line

        lines = self.__dict__.setdefault("_quality_lines", {})
        key = beta if isinstance(beta, (int, float)) and not isinstance(beta, bool) else None
        if key is None or key not in lines:
            line = trace_quality_line(self.model, self.x, mixture_envelope(self), beta,
                                      critical=self.envelope().critical)
            if key is None:
                return line
            lines[key] = line
        return lines[key]

    def _kij_pair(self, pair) -> tuple[int, int]:
        """Indices (i, j) of a component pair given as ("CO2", "N2") or "CO2-N2" (names or aliases)."""
        import difflib

        from ..errors import DataError

        if self.is_pure:
            raise InputError(f"{self.components[0]} is a pure fluid: it has no k_ij pairs", "kij")
        names = list(self.components)
        spellings = names + [a for c in self._comps for a in c.aliases]

        def index(name):
            try:
                canon = get_component(str(name).strip()).name
            except DataError:
                canon = None
            if canon in names:
                return names.index(canon), None
            close = difflib.get_close_matches(str(name), spellings, n=2, cutoff=0.4)
            hint = f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
            return None, f"{name!r} is not a component of this fluid ({', '.join(names)}).{hint}"

        if isinstance(pair, str):
            cuts = [k for k, ch in enumerate(pair) if ch == "-"]
            if not cuts:
                raise InputError(f"k_ij pair {pair!r}: write a pair as 'CO2-N2' or ('CO2', 'N2')", "kij")
            tries = [(pair[:k], pair[k + 1:]) for k in cuts]
        elif isinstance(pair, (tuple, list)) and len(pair) == 2 and all(isinstance(n, str) for n in pair):
            tries = [tuple(pair)]
        else:
            raise InputError(f"k_ij pair {pair!r}: write a pair as 'CO2-N2' or ('CO2', 'N2')", "kij")
        problem = None
        for a, b in tries:
            (i, ea), (j, eb) = index(a), index(b)
            if ea is None and eb is None:
                if i == j:
                    raise InputError(f"k_ij pair {pair!r} names {names[i]} twice; give two different components", "kij")
                return i, j
            problem = problem or ea or eb
        raise InputError(f"k_ij pair {pair!r}: {problem}", "kij")

    def with_kij(self, changes) -> "Fluid":
        """A new Fluid equal to this one (composition, model, pinned constants, every other k_ij)
        except for the given pairs' k_ij.

        Parameters
        ----------
        changes : mapping
            Pair -> new k_ij [-]; a pair is ``("CO2", "N2")`` or ``"CO2-N2"`` (names or aliases, any order).

        Raises
        ------
        InputError
            A pure fluid, an empty or malformed mapping, a pair not in this fluid (with a suggestion),
            or a value that is not a number in (-1, 1).
        """
        if self.is_pure:
            raise InputError(f"{self.components[0]} is a pure fluid: it has no k_ij pairs to change", "kij")
        if not isinstance(changes, Mapping) or not changes:
            raise InputError("give the k_ij changes as a mapping such as {('CO2', 'N2'): -0.02}", "kij")
        k = self.kij.copy()
        for pair, value in changes.items():
            i, j = self._kij_pair(pair)
            try:
                v = float(value)
            except (TypeError, ValueError):
                raise InputError(f"k_ij {self.components[i]}-{self.components[j]} = {value!r} is not a number",
                                 "kij") from None
            if not -1.0 < v < 1.0:
                raise InputError(f"k_ij {self.components[i]}-{self.components[j]} = {v} is outside (-1, 1)", "kij")
            k[i, j] = k[j, i] = v
        # rebuilt through the constructor: every k_ij given explicitly, the same pinned constants
        pinned = {c.name: {key: getattr(c, key) for key, src in c.sources if src == "user-supplied"}
                  for c in self._comps}
        pinned = {n: v for n, v in pinned.items() if v}
        nc = len(self.components)
        kij = {self.components[a]: {self.components[b]: float(k[a, b]) for b in range(a + 1, nc)}
               for a in range(nc - 1)}
        new = type(self)(dict(zip(self.components, self.x.tolist())), model=self.model_name,
                         constants=pinned or None, kij=kij)
        new.x = self.x.copy()  # the feed bit for bit (re-normalising could move it by one ulp)
        return new

    def envelope_with_kij(self, pair, delta):
        """The phase envelope re-traced with k_ij of ``pair`` shifted by ``delta`` [-].

        Same as ``fluid.with_kij({pair: k_ij + delta}).envelope()``; ``delta = 0`` reproduces
        ``fluid.envelope()`` exactly. Raises InputError for a pair not in this fluid or a shift
        that leaves (-1, 1).
        """
        i, j = self._kij_pair(pair)
        try:
            d = float(delta)
        except (TypeError, ValueError):
            raise InputError(f"k_ij shift {delta!r} is not a number", "kij") from None
        return self.with_kij({(self.components[i], self.components[j]): float(self.kij[i, j]) + d}).envelope()
