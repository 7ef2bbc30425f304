"""The ks1d exception hierarchy.

Bad input raises a subclass of :class:`InputError` (itself a ``ValueError``);
a calculation that ran but did not reach its goal raises a subclass of
:class:`CalculationError` (a ``RuntimeError``).  Every message names the
offending thing and, where one exists, the fix.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence


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


class ConvergenceError(CalculationError):
    """The SCF loop stopped without meeting its thresholds.

    ``history`` holds one :class:`IterationRecord` per iteration so that the
    caller can see whether the run oscillated, stalled or diverged.
    """

    def __init__(self, message: str, history: Sequence[IterationRecord] = ()):
        self.history = tuple(history)
        super().__init__(message + "\n" + self.diagnosis())

    def diagnosis(self) -> str:
        """A short human reading of the convergence history."""
        h = self.history
        if not h:
            return "no iterations were recorded"
        tail = h[-min(6, len(h)):]
        res = [r.residual for r in tail]
        best = min(h, key=lambda r: r.residual if r.residual == r.residual else float("inf"))
        if res[-1] != res[-1] or res[-1] > 100 * best.residual:
            kind = (f"the SCF diverged after reaching residual {best.residual:.1e} at iteration "
                    f"{best.iteration}; try smaller mixing or a different starting point")
        elif len(res) >= 3 and res[-1] > 0.5 * res[0] and max(res) / max(min(res), 1e-300) > 3:
            kind = "the residual oscillates; try stronger damping (smaller mixing) or smearing"
        elif len(res) >= 3 and res[-1] > 0.9 * res[0]:
            kind = "the residual stalls; try more iterations, a different mixer or smearing"
        else:
            kind = "the residual still decreases; more iterations may suffice"
        lines = [f"last {len(tail)} of {len(h)} iterations (energy / hartree, |dE|, residual):"]
        for r in tail:
            lines.append(f"  {r.iteration:4d}  {r.energy:+.10f}  {abs(r.delta_energy):.2e}  {r.residual:.2e}")
        lines.append("diagnosis: " + kind)
        return "\n".join(lines)
