"""The ks1d exception hierarchy.

Bad input raises a subclass of :class:`InputError` (itself a ``ValueError``);
a calculation that ran but did not reach its goal raises a subclass of
:class:`CalculationError` (a ``RuntimeError``).  Every message names the
offending thing and, where one exists, the fix.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass


class Ks1dError(Exception):
    """Base of every exception ks1d raises on purpose."""


class InputError(Ks1dError, ValueError):
    """The caller asked for something ks1d cannot or will not compute."""


class UnknownElement(InputError):
    """An element symbol or atomic number outside Z = 1-92."""


class ConfigurationError(InputError):
    """A malformed or impossible electron configuration (or charge)."""


class SpinError(InputError):
    """Spin state inconsistent with the electron count or configuration."""


class UnknownFunctional(InputError):
    """Not a libxc identifier and not a ks1d alias."""


class UnsupportedFunctional(InputError):
    """A functional kind that the chosen solver does not (yet) handle."""


class SettingsError(InputError):
    """A numerical setting out of its meaningful range."""


class GeometryError(InputError):
    """A malformed or unphysical molecular geometry."""


class BasisError(InputError):
    """An unknown basis name or one lacking functions for an element."""


class CalculationError(Ks1dError, RuntimeError):
    """A calculation ran but its result cannot be trusted."""


@dataclass(frozen=True)
class IterationRecord:
    """One SCF iteration: energy, its change and the residual norm."""

    iteration: int
    energy: float
    delta_energy: float
    residual: float

    def to_dict(self) -> dict:
        """Strict-JSON-ready: a non-finite value (ΔE of the first iteration) becomes None."""
        def fin(x):
            x = float(x)
            return x if x == x and abs(x) != float("inf") else None
        return {"iteration": int(self.iteration), "energy": fin(self.energy),
                "delta_energy": fin(self.delta_energy), "residual": fin(self.residual)}


class ConvergenceError(CalculationError):
    """The SCF loop stopped without meeting its thresholds.

    ``history`` holds one :class:`IterationRecord` per iteration so that the
    caller can see whether the run oscillated, stalled or diverged.
    ``remedies`` names the options of the solver that raised it which can
    help, as (Python option, CLI flag) pairs: the diagnosis suggests only
    options that exist.
    """

    #: the remedies of an SCF whose solver did not say which options it has
    DEFAULT_REMEDIES = (("damping", "--damping"), ("max_iterations", "--max-iterations"))

    def __init__(self, message: str, history: Sequence[IterationRecord] = (),
                 remedies: Sequence[tuple[str, str]] | None = None):
        self.history = tuple(history)
        self.remedies = tuple(remedies) if remedies is not None else self.DEFAULT_REMEDIES
        super().__init__(message + "\n" + self.diagnosis())

    def _option(self, name: str) -> str | None:
        for opt, flag in self.remedies:
            if opt == name:
                return f"SCFOptions.{opt} / {flag}"
        return None

    def _advice(self, *names: str) -> str:
        opts = [f"{label} ({o})" for label, o in
                ((n.replace("_", " "), self._option(n)) for n in names) if o]
        return "; try " + " or ".join(opts) if opts else ""

    def diagnosis(self) -> str:
        """A short human reading of the convergence history, with the options that may help."""
        h = self.history
        if not h:
            return "no iterations were recorded"
        tail = h[-min(6, len(h)):]
        res = [r.residual for r in tail]
        best = min(h, key=lambda r: r.residual if r.residual == r.residual else float("inf"))
        if res[-1] != res[-1] or res[-1] > 100 * best.residual:
            kind = (f"the SCF diverged after reaching residual {best.residual:.1e} at iteration "
                    f"{best.iteration}" + self._advice("damping", "level_shift"))
        elif len(res) >= 3 and res[-1] > 0.5 * res[0] and max(res) / max(min(res), 1e-300) > 3:
            kind = "the residual oscillates" + self._advice("damping", "level_shift", "smearing")
        elif len(res) >= 3 and res[-1] > 0.9 * res[0]:
            kind = "the residual stalls" + self._advice("max_iterations", "damping", "smearing")
        else:
            kind = "the residual still decreases" + self._advice("max_iterations")
        lines = [f"last {len(tail)} of {len(h)} iterations (energy / hartree, |dE|, residual):"]
        for r in tail:
            lines.append(f"  {r.iteration:4d}  {r.energy:+.10f}  {abs(r.delta_energy):.2e}  {r.residual:.2e}")
        lines.append("diagnosis: " + kind)
        return "\n".join(lines)
