"""Gaussian basis sets and the integral engine's molecule object.

A basis is given as
* a name from the basis library that pyscf ships (``"def2-svp"``, ``"cc-pvtz"``),
* a mapping element → name (or → file path), with an optional ``"default"`` key,
* a path to a basis file in a format pyscf parses (the plain-text basis format that pyscf reads).

:func:`build_basis` checks that every element gets functions and returns a
:class:`BasisSet`: the integral engine's molecule object plus the shell → atom
bookkeeping ks1d needs for screening and analysis.
"""
from __future__ import annotations

import os
import warnings
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np

from ..errors import BasisError, SpinError
from .geometry import Geometry


@dataclass(frozen=True, eq=False)
class BasisSet:
    """Basis functions on a geometry (spherical harmonic Gaussians)."""

    mol: object            # the integral engine's molecule (pyscf.gto.Mole)
    description: dict      # element -> basis name or file (or "custom")
    nao: int
    ao_atom: np.ndarray    # (nao,) atom index of every basis function
    shell_atom: np.ndarray  # (nshell,) atom index of every shell
    shell_extent: np.ndarray  # (nshell,) radius (bohr) beyond which the shell is negligible


def _load_element_basis(spec, symbol: str):
    from pyscf import gto
    from pyscf.lib.exceptions import BasisNotFoundError

    if isinstance(spec, (list, tuple)):  # shells already in the integral library's format
        if not spec:
            raise BasisError(f"the basis given for element {symbol} has no shells")
        return list(spec)
    text_or_name = str(spec)
    is_file = os.path.isfile(text_or_name)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            shells = gto.basis.load(text_or_name, symbol)
        except BasisNotFoundError:
            if not is_file and not known_basis_name(text_or_name):
                raise BasisError(
                    f"unknown basis '{spec}': not a basis name known to the integral library "
                    "and not an existing basis file"
                ) from None
            raise BasisError(f"basis '{spec}' has no functions for element {symbol}") from None
        except Exception as exc:  # a file that does not parse
            raise BasisError(f"could not read basis '{spec}' for element {symbol}: {exc}") from None
    if not shells:
        raise BasisError(f"basis '{spec}' has no functions for element {symbol}")
    if not is_file and _uses_core_potential(text_or_name, symbol):
        raise BasisError(
            f"basis '{spec}' pairs element {symbol} with an effective core potential; ks1d is all-electron, "
            "so use an all-electron basis for it (e.g. 'ano-rcc' or 'cc-pvtz-dk' where the integral library has it)")
    return shells


@lru_cache(maxsize=512)
def known_basis_name(name: str) -> bool:
    """True if ``name`` names a basis of pyscf's library (or of basis-set-exchange, when installed).

    Decided from the library's name tables, not from the wording of its error messages, which
    changes between versions (and with basis-set-exchange installed).
    """
    from pyscf.gto import basis as B

    key = B._format_basis_name(name)
    tables = [getattr(B, t, {}) for t in ("ALIAS", "USER_BASIS_ALIAS", "GTH_ALIAS", "USER_GTH_ALIAS")]
    if any(key in t for t in tables):
        return True
    try:
        if B._is_pople_basis(key):
            return True
    except Exception:  # noqa: BLE001 - a private helper that may change; the tables decide then
        pass
    try:
        import basis_set_exchange as bse  # optional extra
    except ImportError:
        return False
    try:
        bse.api.get_basis_family(name)  # raises KeyError for an unknown name
        return True
    except Exception:  # noqa: BLE001
        return False


@lru_cache(maxsize=512)
def _uses_core_potential(name: str, symbol: str) -> bool:
    """True if the named basis comes with an effective core potential for ``symbol`` (e.g. def2 for Z > 36).

    Cached: reading the ECP data costs ~13 ms, and every molecular basis build asks once per element.
    """
    from pyscf import gto

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            return bool(gto.basis.load_ecp(name, symbol))
        except Exception:  # noqa: BLE001 - no ECP data for this name
            return False


def check_basis(basis, symbols) -> None:
    """Raise :class:`BasisError` unless ``basis`` has all-electron functions for every element in ``symbols``."""
    for sym, spec in _per_element(basis, tuple(symbols)).items():
        _load_element_basis(spec, sym)


def _per_element(basis, symbols: tuple[str, ...]) -> dict:
    unique = list(dict.fromkeys(symbols))
    if isinstance(basis, (str, Path)):
        if not str(basis).strip():
            raise BasisError("basis name is empty")
        return {s: str(basis) for s in unique}
    if isinstance(basis, dict):
        lower = {str(k).strip().capitalize() if str(k).lower() != "default" else "default": v
                 for k, v in basis.items()}
        out = {}
        for s in unique:
            if s in lower:
                out[s] = lower[s] if isinstance(lower[s], (list, tuple)) else str(lower[s])
            elif "default" in lower:
                out[s] = str(lower["default"])
            else:
                raise BasisError(f"basis mapping gives no basis for element {s} (add it or a 'default' key)")
        return out
    raise BasisError(f"basis must be a name, an element→name mapping or a file path, got {type(basis).__name__}")


def check_electron_count(geometry: Geometry, charge: int, multiplicity: int) -> tuple[int, int]:
    """(n_alpha, n_beta) for the given charge and spin multiplicity 2S+1."""
    if int(charge) != charge:
        raise SpinError(f"charge must be an integer, got {charge}")
    if int(multiplicity) != multiplicity or multiplicity < 1:
        raise SpinError(f"multiplicity 2S+1 must be a positive integer, got {multiplicity}")
    n = geometry.nuclear_charge - int(charge)
    if n < 1:
        raise SpinError(f"charge {charge} leaves {n} electrons; at least one electron is needed")
    unpaired = int(multiplicity) - 1
    if (n - unpaired) % 2:
        parity = "even" if n % 2 == 0 else "odd"
        allowed = "odd (1, 3, 5, …)" if n % 2 == 0 else "even (2, 4, 6, …)"
        raise SpinError(
            f"{n} electrons (an {parity} number) cannot have multiplicity {multiplicity}; "
            f"use an {allowed} multiplicity or change the charge"
        )
    if unpaired > n:
        raise SpinError(f"multiplicity {multiplicity} needs {unpaired} unpaired electrons but there are only {n}")
    return (n + unpaired) // 2, (n - unpaired) // 2


def shell_extents(mol, threshold: float = 1e-12) -> np.ndarray:
    """Radius beyond which every primitive of a shell is below ``threshold``.

    For a primitive |c| r^l exp(−α r²) the radius solves
    α r² − l ln r = ln(|c|/threshold); a few fixed-point steps suffice.
    """
    ext = np.zeros(mol.nbas)
    for ish in range(mol.nbas):
        l = mol.bas_angular(ish)
        alphas = mol.bas_exp(ish)
        coeff = np.abs(mol._libcint_ctr_coeff(ish)).max(axis=1)
        rmax = 0.0
        for a, c in zip(alphas, coeff):
            rhs = np.log(max(c, 1e-300) / threshold)
            if rhs <= 0:
                continue
            r = np.sqrt(rhs / a)
            for _ in range(6):
                r = np.sqrt(max(rhs + l * np.log(max(r, 1e-3)), 0.0) / a)
            rmax = max(rmax, r)
        ext[ish] = rmax
    return ext


def build_basis(geometry: Geometry, basis, charge: int = 0, multiplicity: int = 1) -> BasisSet:
    """Place the basis on the geometry and build the integral engine's molecule."""
    from pyscf import gto

    check_electron_count(geometry, charge, multiplicity)
    spec = _per_element(basis, geometry.symbols)
    shells = {s: _load_element_basis(v, s) for s, v in spec.items()}
    mol = gto.Mole()
    mol.atom = [(s, tuple(x)) for s, x in zip(geometry.symbols, geometry.coordinates)]
    mol.unit = "Bohr"
    mol.basis = shells
    mol.charge = int(charge)
    mol.spin = int(multiplicity) - 1
    mol.cart = False
    mol.verbose = 0
    mol.output = None
    mol.max_memory = 4000
    try:
        mol.build(dump_input=False, parse_arg=False)
    except Exception as exc:
        raise BasisError(f"could not build the basis set: {exc}") from None
    shell_atom = np.array([mol.bas_atom(i) for i in range(mol.nbas)], dtype=int)
    ao_loc = mol.ao_loc_nr()
    ao_atom = np.repeat(shell_atom, np.diff(ao_loc))
    described = {k: (v if isinstance(v, str) else "custom shells") for k, v in spec.items()}
    return BasisSet(mol=mol, description=described, nao=int(mol.nao_nr()), ao_atom=ao_atom,
                    shell_atom=shell_atom, shell_extent=shell_extents(mol))
