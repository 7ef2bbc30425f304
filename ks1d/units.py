"""Unit conversions at the edges; atomic units (hartree, bohr) everywhere inside.

All factors come from CODATA through :mod:`scipy.constants`.
"""
from __future__ import annotations

from scipy import constants as _c

#: 1 hartree in eV (CODATA via scipy.constants)
HARTREE_TO_EV: float = _c.physical_constants["Hartree energy in eV"][0]
#: 1 hartree in kJ/mol
HARTREE_TO_KJ_MOL: float = _c.physical_constants["Hartree energy"][0] * _c.N_A / 1e3
#: 1 hartree in kcal/mol (thermochemical calorie, 4.184 J)
HARTREE_TO_KCAL_MOL: float = HARTREE_TO_KJ_MOL / 4.184
#: 1 hartree in cm^-1
HARTREE_TO_INV_CM: float = _c.physical_constants["hartree-inverse meter relationship"][0] / 100.0
#: 1 bohr in angstrom
BOHR_TO_ANGSTROM: float = _c.physical_constants["Bohr radius"][0] * 1e10
ANGSTROM_TO_BOHR: float = 1.0 / BOHR_TO_ANGSTROM
#: atomic unit of electric dipole moment in debye (1 D = 1e-21 / c  C m)
AU_DIPOLE_TO_DEBYE: float = (_c.e * _c.physical_constants["Bohr radius"][0]) / (1e-21 / _c.c)
#: 1 hartree/bohr in eV/angstrom (forces)
HARTREE_PER_BOHR_TO_EV_PER_ANGSTROM: float = HARTREE_TO_EV / BOHR_TO_ANGSTROM
#: 1 u (unified atomic mass unit) in electron masses
AMU_TO_ELECTRON_MASS: float = _c.physical_constants["atomic mass constant"][0] / _c.m_e
