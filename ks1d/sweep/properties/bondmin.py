"""Equilibrium bond length and force constant of a diatomic from analytic energies and gradients.

Along the bond length R the solver supplies the energy E(R) and its derivative

    g(R) = dE/dR = ½ (∇_B E − ∇_A E) · u,     u = (R_B − R_A)/|R_B − R_A|,

the analytic nuclear gradient projected on the bond (the symmetric form cancels any
translational defect).  Through n sampled bond lengths R_i the Hermite interpolant p
of degree 2n − 1 matches both,

    p(R_i) = E_i,   p′(R_i) = g_i,     i = 1 … n,

and the minimum follows from it:

    p′(r_e) = 0,  p″(r_e) > 0,     k = p″(r_e),     E_e = p(r_e).

The error of Hermite interpolation is E⁽²ⁿ⁾(ξ)/(2n)! · Π (R − R_i)²; with three samples
(a quintic) within 0.1 bohr of the minimum the relative error of k is below 1e-6 for
a Morse curve of N₂'s stiffness (tests/test_sweep_diatomic.py), far below what the
SCF and grid allow.

Where the samples go (the path changes the result only through that interpolation
error):

1. R₁: the input bond length (for the built-in diatomics the experimental r_e);
2. R₂ = R₁ − g₁/k₀, a Newton step with the model force constant
   :data:`MODEL_FORCE_CONSTANT` (no reference data enters the computation); its length
   is kept in [:data:`MIN_STEP`, :data:`MAX_STEP`], so that the first two samples are
   far enough apart for the gradient noise not to matter (noise/ΔR ≪ k);
3. then each next sample at the minimum of the interpolant through the (up to three)
   samples nearest to the current estimate, a step of at most ``MAX_STEP`` (a secant
   Newton step when the interpolant has no minimum within reach; never closer than
   :data:`MIN_SEPARATION` to an earlier sample);

until three or more samples are in hand and the minimum of the quintic through the
three nearest lies within :data:`ACCEPT_DISTANCE` of one of them and within
:data:`ACCEPT_SPAN` of all three.  Typically that is
after the third sample: three energy-and-gradient evaluations per diatomic.
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ...errors import CalculationError

#: model force constant of the first Newton step (hartree/bohr²): between H₂ (0.37) and N₂ (1.5)
MODEL_FORCE_CONSTANT = 1.0
#: the first step is at least this long (bohr), so that the gradient difference of the first two
#: samples is much larger than the gradient noise (~1e-7 Ha/bohr at the gradient SCF tolerance)
MIN_STEP = 0.03
#: no two samples closer than this (bohr): a sample that would land nearer to an existing one goes
#: to the other side of it instead (the interpolant stays well conditioned)
MIN_SEPARATION = 0.01
#: no step is longer than this (bohr): a trust radius for the interpolant
MAX_STEP = 0.2
#: accept the minimum of the quintic when it lies this close (bohr) to one of its three samples ...
ACCEPT_DISTANCE = 0.01
#: ... and none of the three lies farther than this from it (bohr)
ACCEPT_SPAN = 0.12
#: give up after this many samples
MAX_SAMPLES = 8


@dataclass(frozen=True)
class BondSample:
    """One evaluation: bond length R (bohr), energy E (hartree), dE/dR (hartree/bohr)."""

    r: float
    energy: float
    slope: float


@dataclass(frozen=True)
class BondMinimum:
    """The minimum of E(R): r_e (bohr), k = E″(r_e) (hartree/bohr²), E(r_e) (hartree), the samples used."""

    r_e: float
    force_constant: float
    energy: float
    samples: tuple[BondSample, ...]
    used: tuple[int, ...]  # indices of the samples in the final interpolant

    def to_dict(self) -> dict:
        return {"r_e_bohr": self.r_e, "force_constant": self.force_constant, "energy": self.energy,
                "samples": [{"r_bohr": s.r, "energy": s.energy, "dE_dR": s.slope} for s in self.samples],
                "interpolated_from": list(self.used)}


def hermite_polynomial(r, energies, slopes) -> tuple[np.polynomial.Polynomial, float, float]:
    """The Hermite interpolant p(R) with p(R_i) = E_i, p′(R_i) = g_i, as a polynomial in t = (R − c)/s.

    Returns (p(t), c, s) with c the mean and s the half-range of the samples (s = 1 for one sample),
    so that the confluent Vandermonde system is well conditioned.
    """
    r = np.asarray(r, dtype=float)
    e = np.asarray(energies, dtype=float)
    g = np.asarray(slopes, dtype=float)
    n = len(r)
    c = float(r.mean())
    s = float(0.5 * (r.max() - r.min())) or 1.0
    t = (r - c) / s
    deg = 2 * n
    powers = np.arange(deg)
    rows_value = t[:, None] ** powers[None, :]
    rows_slope = np.where(powers[None, :] > 0, powers[None, :] * t[:, None] ** np.maximum(powers - 1, 0)[None, :], 0.0)
    A = np.vstack([rows_value, rows_slope])
    b = np.concatenate([e - e.min(), g * s])  # dp/dt = s dE/dR
    coef = np.linalg.solve(A, b)
    coef[0] += e.min()
    return np.polynomial.Polynomial(coef), c, s


def interpolated_minimum(samples, near: float) -> tuple[float, float, float] | None:
    """(r_e, k, E_e) of the Hermite interpolant through ``samples``, the minimum nearest ``near``; None if none.

    Only minima within :data:`MAX_STEP` of the samples' range count (beyond it the interpolant is not
    trusted).
    """
    r = [x.r for x in samples]
    p, c, s = hermite_polynomial(r, [x.energy for x in samples], [x.slope for x in samples])
    d1, d2 = p.deriv(1), p.deriv(2)
    lo, hi = (min(r) - MAX_STEP - c) / s, (max(r) + MAX_STEP - c) / s
    cand = [float(z.real) for z in d1.roots()
            if abs(z.imag) < 1e-9 * max(1.0, abs(z)) and lo <= z.real <= hi and d2(z.real) > 0]
    if not cand:
        return None
    t = min(cand, key=lambda v: abs(v - (near - c) / s))
    return c + s * t, float(d2(t)) / s**2, float(p(t))


def _nearest(samples, x: float, n: int = 3) -> list[int]:
    return sorted(sorted(range(len(samples)), key=lambda i: abs(samples[i].r - x))[:n])


def _secant_curvature(samples, at: BondSample) -> float:
    """(g_j − g_i)/(R_j − R_i) of ``at`` and the sample nearest to it; the model force constant if not positive."""
    others = [x for x in samples if x is not at]
    nb = min(others, key=lambda x: abs(x.r - at.r))
    k = (at.slope - nb.slope) / (at.r - nb.r)
    return k if k > 0 else MODEL_FORCE_CONSTANT


def _limited(step: float, lo: float, hi: float, downhill: float) -> float:
    """``step`` with its length kept in [lo, hi]; a zero step goes ``lo`` in the direction ``downhill``."""
    if step == 0.0:
        return lo * (1.0 if downhill >= 0 else -1.0)
    return float(np.sign(step) * min(max(abs(step), lo), hi))


def bond_minimum(evaluate: Callable[[float], tuple[float, float]], r_start: float,
                 max_samples: int = MAX_SAMPLES) -> BondMinimum:
    """Find the minimum of E(R) from ``evaluate(R) -> (E, dE/dR)`` (bohr, hartree), starting at ``r_start``.

    See the module docstring for the sampling and the interpolation.  Raises
    :class:`~ks1d.errors.CalculationError`, listing the samples, when no minimum is found within
    ``max_samples`` evaluations.
    """
    if not (np.isfinite(r_start) and r_start > 0):
        raise CalculationError(f"a bond length must be a positive number of bohr, got {r_start}")
    samples: list[BondSample] = []

    def sample(r: float) -> None:
        if r <= 0.2:  # nuclei closer than 0.2 bohr: the curve has no minimum in reach
            raise CalculationError(_failure("the search ran to a bond length below 0.2 bohr", samples))
        e, g = evaluate(float(r))
        samples.append(BondSample(float(r), float(e), float(g)))

    sample(r_start)
    first = samples[0]
    sample(first.r + _limited(-first.slope / MODEL_FORCE_CONSTANT, MIN_STEP, MAX_STEP, -first.slope))
    estimate = samples[-1].r
    while True:
        use = _nearest(samples, estimate)
        found = interpolated_minimum([samples[i] for i in use], estimate)
        if found is not None and len(samples) >= 3:
            r_e, k, e_e = found
            distances = [abs(samples[i].r - r_e) for i in use]
            if min(distances) <= ACCEPT_DISTANCE and max(distances) <= ACCEPT_SPAN:
                return BondMinimum(r_e, k, e_e, tuple(samples), tuple(use))
        if len(samples) >= max_samples:
            raise CalculationError(_failure(f"no converged minimum after {len(samples)} evaluations", samples))
        last = min(samples, key=lambda x: x.energy)
        if found is None:  # no minimum in reach of the interpolant: a secant step from the lowest sample
            target = last.r + _limited(-last.slope / _secant_curvature(samples, last), MIN_STEP, MAX_STEP,
                                       -last.slope)
        else:
            near = min(samples, key=lambda x: abs(x.r - found[0]))
            target = near.r + float(np.clip(found[0] - near.r, -MAX_STEP, MAX_STEP))
        target = _free_spot(samples, target)
        sample(target)
        estimate = target


def _free_spot(samples, target: float) -> float:
    """``target``, or the nearest of target ± m·MIN_SEPARATION (m = 1, 1.5, 2, …) at least MIN_SEPARATION from
    every sample: no two samples crowd together, which would make the interpolant ill-conditioned."""
    def free(x: float) -> bool:
        return all(abs(x - s.r) >= MIN_SEPARATION for s in samples)

    if free(target):
        return target
    for m in np.arange(1.0, 6.01, 0.5):
        for x in (target - m * MIN_SEPARATION, target + m * MIN_SEPARATION):
            if free(x):
                return float(x)
    return target  # unreachable for fewer than MAX_SAMPLES samples


def _failure(why: str, samples) -> str:
    lines = [f"bond-length search: {why}; samples (R / bohr, E / hartree, dE/dR / hartree/bohr):"]
    lines += [f"  {s.r:.6f}  {s.energy:+.10f}  {s.slope:+.3e}" for s in samples]
    return "\n".join(lines)
