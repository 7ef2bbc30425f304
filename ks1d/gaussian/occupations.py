"""Orbital occupations: aufbau and Fermi–Dirac smearing.

Aufbau fills the n lowest orbitals of a spin channel.  Fermi–Dirac smearing
(N. D. Mermin, Phys. Rev. 137, A1441 (1965)) gives

    f_i = c / (1 + exp((ε_i − μ)/σ)),   Σ_i f_i = N,

with capacity c (2 for restricted orbitals, 1 per spin channel) and the
chemical potential μ found by bisection; it helps near-degenerate cases.
"""
from __future__ import annotations

import numpy as np


def aufbau(energies: np.ndarray, n: float, capacity: float) -> np.ndarray:
    """Fill the lowest orbitals with ``n`` electrons (the last one possibly partially)."""
    occ = np.zeros(len(energies))
    order = np.argsort(energies, kind="stable")
    left = float(n)
    for i in order:
        if left <= 1e-12:
            break
        occ[i] = min(capacity, left)
        left -= occ[i]
    return occ


def fermi_dirac(energies: np.ndarray, n: float, capacity: float, width: float) -> np.ndarray:
    """Fermi–Dirac occupations at smearing width ``width`` (hartree) holding ``n`` electrons."""
    if n <= 0:
        return np.zeros(len(energies))

    def occ(mu):
        x = np.clip((energies - mu) / width, -200, 200)
        return capacity / (1.0 + np.exp(x))

    lo, hi = energies.min() - 50 * width - 1.0, energies.max() + 50 * width + 1.0
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        if occ(mid).sum() > n:
            hi = mid
        else:
            lo = mid
        if hi - lo < 1e-14:
            break
    return occ(0.5 * (lo + hi))
