"""Bond length and harmonic wavenumber of a diatomic from an energy scan.

A least-squares polynomial fit of E(R) gives the minimum r_e (E′(r_e) = 0)
and the force constant k = E″(r_e); the harmonic wavenumber is

    ω_e = √(k/μ),   μ = m_A m_B / (m_A + m_B)

in atomic units (hartree, bohr, electron masses), converted to cm⁻¹.
"""
from __future__ import annotations

import math

import numpy as np

from ... import elements, units
from ...errors import CalculationError, InputError


def _amu_in_electron_masses() -> float:
    from scipy import constants

    return constants.physical_constants["atomic mass constant"][0] / constants.m_e


#: 1 u in electron masses (CODATA via scipy.constants)
AMU_IN_ELECTRON_MASSES: float = _amu_in_electron_masses()


def isotope_masses(sym_a: str, sym_b: str) -> tuple[float, float]:
    """Masses (u) of the most abundant isotopes, as tabulated in pyscf.data.elements."""
    from pyscf.data.elements import COMMON_ISOTOPE_MASSES

    return (float(COMMON_ISOTOPE_MASSES[elements.atomic_number(sym_a)]),
            float(COMMON_ISOTOPE_MASSES[elements.atomic_number(sym_b)]))


def fit_curve(r_bohr, energies, degree: int = 4) -> tuple[float, float, list[float]]:
    """Minimum r_e and curvature k = E″(r_e) of a polynomial fit to E(R).

    Fits E(R) ≈ Σ_j c_j (R − R̄)^j by least squares, takes the real root of
    E′ inside the scanned range with E″ > 0 that lies closest to the lowest
    scanned point.  Raises :class:`CalculationError` when no minimum lies
    inside the range.
    """
    r = np.asarray(r_bohr, dtype=float)
    e = np.asarray(energies, dtype=float)
    deg = min(degree, len(r) - 2)
    if deg < 2:
        raise InputError("a bond-length fit needs at least 4 scan points")
    centre = float(r.mean())
    poly = np.polynomial.Polynomial.fit(r - centre, e - e.min(), deg, domain=[-1, 1], window=[-1, 1])
    d1, d2 = poly.deriv(1), poly.deriv(2)
    lo, hi = float(r.min() - centre), float(r.max() - centre)
    cand = [float(x.real) for x in d1.roots() if abs(x.imag) < 1e-12 and lo <= x.real <= hi and d2(x.real) > 0]
    if not cand:
        raise CalculationError("no energy minimum inside the scanned bond lengths")
    x_low = float(r[int(np.argmin(e))] - centre)
    x = min(cand, key=lambda v: abs(v - x_low))
    return x + centre, float(d2(x)), [float(v) for v in poly.coef]


def harmonic_wavenumber(force_constant: float, mass_a: float, mass_b: float) -> float:
    """ω_e = √(k/μ) in cm⁻¹ for k in hartree/bohr² and masses in u."""
    if force_constant <= 0:
        raise CalculationError("the fitted curvature is not positive: no bound minimum")
    mu = mass_a * mass_b / (mass_a + mass_b) * AMU_IN_ELECTRON_MASSES
    return math.sqrt(force_constant / mu) * units.HARTREE_TO_INV_CM
