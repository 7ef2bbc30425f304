"""Nuclear charge distributions: mass numbers and the Gaussian finite-nucleus model.

The Gaussian model (L. Visscher and K. G. Dyall, At. Data Nucl. Data Tables 67,
207 (1997)) replaces the point charge Z by

    ρ_N(r) = Z (ξ/π)^{3/2} exp(−ξ r²),   ξ = 3 / (2 ⟨r²⟩),

with the root-mean-square radius of the nucleus of mass number A

    ⟨r²⟩^{1/2} = (0.836 A^{1/3} + 0.570) fm.

Its potential is V_N(r) = −Z erf(√ξ r) / r, which is finite at r = 0
(V_N(0) = −2Z √(ξ/π)) and equals −Z/r to machine precision beyond a few
nuclear radii.

MASS_NUMBERS holds, for Z = 1–92, the mass number of the most abundant
isotope, and for elements without a stable isotope (Tc, Pm, Po–U) that of the
longest-lived one (from memory; checked against mendeleev's isotope data in
tests/test_radial_relativity_nucleus.py — the check found Tc-97, 4.21 My, to
outlive the recalled Tc-98, 4.2 My, and Tc now has A = 97).
"""
from __future__ import annotations

import math

import numpy as np
from scipy import constants as _c
from scipy.special import erf

from .elements import SYMBOLS, element
from .errors import SettingsError

#: Nuclear models understood by the radial solver.
NUCLEAR_MODELS = ("point", "gaussian")

#: Mass number per element symbol (see the module docstring; from memory).
MASS_NUMBERS: dict[str, int] = dict(zip(SYMBOLS, (
    1, 4, 7, 9, 11, 12, 14, 16, 19, 20,                      # H-Ne
    23, 24, 27, 28, 31, 32, 35, 40,                          # Na-Ar
    39, 40, 45, 48, 51, 52, 55, 56, 59, 58, 63, 64,          # K-Zn
    69, 74, 75, 80, 79, 84,                                  # Ga-Kr
    85, 88, 89, 90, 93, 98, 97, 102, 103, 106, 107, 114,     # Rb-Cd
    115, 120, 121, 130, 127, 132,                            # In-Xe
    133, 138, 139, 140, 141, 142, 145, 152, 153, 158, 159, 164,  # Cs-Dy
    165, 166, 169, 174, 175, 180, 181, 184, 187, 192, 193, 195,  # Ho-Pt
    197, 202, 205, 208, 209, 209, 210, 222,                  # Au-Rn
    223, 226, 227, 232, 231, 238,                            # Fr-U
)))

#: One femtometre in bohr (CODATA Bohr radius via scipy.constants).
FM_TO_BOHR: float = 1e-15 / _c.physical_constants["Bohr radius"][0]


def rms_radius(mass_number: float) -> float:
    """Root-mean-square nuclear radius in bohr: (0.836 A^{1/3} + 0.570) fm (Visscher and Dyall 1997)."""
    return (0.836 * mass_number ** (1.0 / 3.0) + 0.570) * FM_TO_BOHR


def gaussian_exponent(mass_number: float) -> float:
    """ξ = 3 / (2 ⟨r²⟩) of the Gaussian nuclear charge distribution, in bohr⁻²."""
    return 1.5 / rms_radius(mass_number) ** 2


def check_nucleus(name: str) -> str:
    """The model name, or a SettingsError naming the alternatives."""
    if name not in NUCLEAR_MODELS:
        raise SettingsError(f"nucleus must be one of {', '.join(map(repr, NUCLEAR_MODELS))}, got {name!r}")
    return name


def nuclear_potential(Z: float, r: np.ndarray, model: str = "point", mass_number: float | None = None) -> np.ndarray:
    """Electron–nucleus potential V_N(r) in hartree.

    point:    V_N = −Z / r
    gaussian: V_N = −Z erf(√ξ r) / r, ξ from :func:`gaussian_exponent` (mass number
              from :data:`MASS_NUMBERS` unless given)
    """
    check_nucleus(model)
    r = np.asarray(r, dtype=float)
    if model == "point":
        return -Z / r
    A = mass_number if mass_number is not None else MASS_NUMBERS[element(int(round(Z))).symbol]
    a = math.sqrt(gaussian_exponent(A))
    return -Z * erf(a * r) / r


def nuclear_charge_inside(Z: float, r: np.ndarray, model: str = "point",
                          mass_number: float | None = None) -> np.ndarray:
    """Nuclear charge within radius r: Z for a point; Z [erf(√ξ r) − 2√(ξ/π) r exp(−ξ r²)] for the Gaussian."""
    r = np.asarray(r, dtype=float)
    if model == "point":
        return np.full_like(r, float(Z))
    A = mass_number if mass_number is not None else MASS_NUMBERS[element(int(round(Z))).symbol]
    xi = gaussian_exponent(A)
    a = math.sqrt(xi)
    return Z * (erf(a * r) - 2.0 * a / math.sqrt(math.pi) * r * np.exp(-xi * r * r))
