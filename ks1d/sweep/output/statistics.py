"""Error statistics per functional and quantity.

For the errors e_i = computed_i − reference_i of one functional on one
quantity (N systems with a reference):

    MSE = (1/N) Σ e_i                 mean signed error
    MAE = (1/N) Σ |e_i|               mean absolute error
    RMS = √((1/N) Σ e_i²)             root-mean-square error
    MAX = max |e_i|                   with the system it occurs for

The worst systems (largest |e_i|, up to three) are named as well.
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from .collect import ResultRow, functionals_of, ordered


def mean_signed_error(errors: Sequence[float]) -> float:
    """MSE = (1/N) Σ e_i."""
    return sum(errors) / len(errors)


def mean_absolute_error(errors: Sequence[float]) -> float:
    """MAE = (1/N) Σ |e_i|."""
    return sum(abs(e) for e in errors) / len(errors)


def root_mean_square_error(errors: Sequence[float]) -> float:
    """RMS = √((1/N) Σ e_i²)."""
    return math.sqrt(sum(e * e for e in errors) / len(errors))


@dataclass(frozen=True)
class ErrorStatistics:
    """Statistics of one functional on one quantity (display units)."""

    quantity: str
    functional: str
    unit: str
    n: int
    n_without_reference: int
    mse: float | None
    mae: float | None
    rms: float | None
    max_abs: float | None
    max_signed: float | None
    worst_system: str | None
    worst_systems: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        d = dict(self.__dict__)
        d["worst_systems"] = list(self.worst_systems)
        return d


def error_statistics(rows: Sequence[ResultRow]) -> list[ErrorStatistics]:
    """One :class:`ErrorStatistics` per (quantity, functional), in the rows' order."""
    out: list[ErrorStatistics] = []
    for q in ordered(r.quantity for r in rows):
        qrows = [r for r in rows if r.quantity == q]
        for f in functionals_of(qrows):
            frows = [r for r in qrows if r.functional == f]
            with_ref = [r for r in frows if r.error is not None]
            unit = frows[0].unit
            if not with_ref:
                out.append(ErrorStatistics(q, f, unit, 0, len(frows), None, None, None, None, None, None, ()))
                continue
            errs = [r.error for r in with_ref]
            ranked = sorted(with_ref, key=lambda r: abs(r.error), reverse=True)
            out.append(ErrorStatistics(
                quantity=q, functional=f, unit=unit, n=len(errs), n_without_reference=len(frows) - len(with_ref),
                mse=mean_signed_error(errs), mae=mean_absolute_error(errs), rms=root_mean_square_error(errs),
                max_abs=abs(ranked[0].error), max_signed=ranked[0].error, worst_system=ranked[0].system,
                worst_systems=tuple(r.system for r in ranked[:3]),
            ))
    return out
