"""Basis-set error of atomic total energies: Gaussian basis vs the radial basis-set limit.

For each atom A

    ΔE_A = E_A(basis) − E_A(radial limit)

with the same functional and the same spin-polarized ground state (2S+1 from
:func:`ks1d.validate.properties.ground_state_multiplicity`).  By the
variational principle ΔE_A ≥ 0 when both calculations describe the same
state.

Same state matters.  The radial solver's open-shell atoms are spherical
(equal fractional occupation of the m-sublevels).  A Gaussian UKS
determinant with integer occupations of, e.g., two of three 2p orbitals is
not spherical; for semilocal functionals it lies *below* the spherical
energy by a symmetry-breaking energy of several mHa (PBE, cc-pVTZ: O by
~14 mHa, C by ~5 mHa), which would swamp the basis error and even make
ΔE_A negative.  So for atoms whose ground state has a partly filled
sub-shell in some spin channel, the Gaussian calculation uses a small
Fermi–Dirac smearing (``SPHERICAL_SMEARING`` = 1e-3 Ha): the degenerate
sub-shell orbitals then share their electrons equally — the same spherical
ensemble as the radial solver — while every non-degenerate level, many
times the width away, keeps an integer occupation (e^(−ε/w) ≲ e^(−100)).
Closed-shell, half-filled and s¹ atoms need no smearing (their
determinant is already spherical).  With exact exchange the smeared
Gaussian state carries the fractional-occupation (ensemble) exchange, so the
radial reference is solved in that same form (``open_shell_exchange=
"ensemble"``); the default radial atom uses the configuration average
instead, which lies lower by tens of mHa for hybrids.  ``occupations`` in each row says which
was used; if the smeared occupations of a sub-shell come out unequal the
row carries a warning.

A molecule's basis-set error is estimated as Σ_A ΔE_A over its atoms (the
error of the molecular total energy is of the same size; much of it cancels
in energy differences that conserve the atoms).  The report warns when the
estimate exceeds ``WARN_KCAL_PER_ATOM`` × (number of atoms): 1 kcal/mol per
atom, "chemical accuracy" (common practice).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from .. import units
from .._version import __version__
from ..elements import element as _element
from ..errors import InputError

SPHERICAL_SMEARING = 1e-3  # hartree
WARN_KCAL_PER_ATOM = 1.0


def spherical_determinant(symbol: str, charge: int = 0) -> bool:
    """True if the polarized ground state has every sub-shell full or empty per spin (spherical in UKS)."""
    from ..occupations import build_configuration

    el = _element(symbol)
    cfg = build_configuration(el.Z, charge, "polarized")
    return all(min(f, s.capacity_per_spin - f) < 1e-12 for s in cfg.shells for f in (s.up, s.down))


@dataclass(frozen=True)
class AtomBasisError:
    """ΔE = E(basis) − E(radial limit) of one atom; energies in hartree, errors in three units."""

    element: str
    multiplicity: int
    basis_energy: float
    radial_energy: float
    occupations: str  # "integer" or "spherical smearing 1e-3 Ha"
    warnings: tuple = ()
    limit_model: str = ""  # which radial atom E(limit) is (see limit_model())

    @property
    def error(self) -> float:
        return self.basis_energy - self.radial_energy

    @property
    def error_mhartree(self) -> float:
        return self.error * 1e3

    @property
    def error_ev(self) -> float:
        return self.error * units.HARTREE_TO_EV

    @property
    def error_kcal_mol(self) -> float:
        return self.error * units.HARTREE_TO_KCAL_MOL

    def to_dict(self) -> dict[str, Any]:
        return {"element": self.element, "multiplicity": self.multiplicity, "basis_energy": self.basis_energy,
                "radial_energy": self.radial_energy, "error": self.error, "error_mhartree": self.error_mhartree,
                "error_ev": self.error_ev, "error_kcal_mol": self.error_kcal_mol,
                "occupations": self.occupations, "limit_model": self.limit_model, "warnings": list(self.warnings)}


@dataclass(frozen=True)
class BasisErrorReport:
    """Per-atom basis-set errors and, for a molecule, their sum over its atoms."""

    basis: str
    xc: str
    atoms: tuple
    molecule: dict | None = None  # {"name", "counts": {symbol: n}, "n_atoms"}
    warnings: tuple = ()
    settings: dict = field(default_factory=dict)
    version: str = __version__

    def _counts(self) -> dict[str, int]:
        if self.molecule is None:
            return {a.element: 1 for a in self.atoms}
        return dict(self.molecule["counts"])

    @property
    def total_error(self) -> float | None:
        """Σ_A ΔE_A over the molecule's atoms (hartree); None for a plain list of atoms."""
        if self.molecule is None:
            return None
        by = {a.element: a for a in self.atoms}
        return sum(n * by[s].error for s, n in self._counts().items())

    def to_dict(self) -> dict[str, Any]:
        d: dict[str, Any] = {"basis": self.basis, "xc": self.xc, "atoms": [a.to_dict() for a in self.atoms],
                             "molecule": None, "warnings": list(self.warnings), "settings": dict(self.settings),
                             "version": self.version}
        if self.molecule is not None:
            t = self.total_error
            d["molecule"] = {**self.molecule, "estimated_error": t, "estimated_error_mhartree": t * 1e3,
                             "estimated_error_ev": t * units.HARTREE_TO_EV,
                             "estimated_error_kcal_mol": t * units.HARTREE_TO_KCAL_MOL,
                             "warn_threshold_kcal_mol": WARN_KCAL_PER_ATOM * self.molecule["n_atoms"]}
        return d


def limit_model(xc: str, spherical: bool) -> str:
    """What E(limit) is: the radial spherical atom, in the exact-exchange form the Gaussian state computes."""
    from ..xc import resolve_functional

    if spherical:
        return "radial atom, spin-polarized; every sub-shell full or empty per spin (a single determinant)"
    if resolve_functional(xc).is_hybrid:
        return ("radial spherical ensemble atom: equal fractional m-occupation, exact exchange in the "
                "fractional-occupation (ensemble) form, as the smeared Gaussian atom computes it; it lies "
                "above the default configuration-average atom of 'ks1d atom'")
    return "radial spherical atom: equal fractional m-occupation of open sub-shells, spin-polarized"


def atom_basis_error(symbol, basis: str, xc: str = "pbe", precision: str = "normal",
                     grid: str = "default") -> AtomBasisError:
    """ΔE of one neutral atom (see the module docstring for the spin state and occupations)."""
    from ..gaussian.scf import solve_molecule
    from ..radial.scf import solve_atom
    from .properties import ground_state_multiplicity

    el = _element(symbol)
    mult = ground_state_multiplicity(el.symbol, 0)
    # the smeared Gaussian state is the fractional-occupation ensemble: compare with the radial ensemble
    radial = solve_atom(el.symbol, xc=xc, spin="polarized", precision=precision, estimate_error=False,
                        open_shell_exchange="ensemble")
    spherical = spherical_determinant(el.symbol)
    smearing = 0.0 if spherical else SPHERICAL_SMEARING
    res = solve_molecule(f"1\n{el.symbol}\n{el.symbol} 0 0 0\n", basis=basis, xc=xc, multiplicity=mult,
                         grid=grid, scf={"smearing": smearing})
    warnings = []
    if smearing:
        fractional = [o.occupation for o in res.orbitals if 1e-6 < o.occupation < 1 - 1e-6]
        if fractional and max(fractional) - min(fractional) > 1e-3 and len(set(round(f, 2) for f in fractional)) > 1:
            # more than one partly filled level with different occupations: check they are degenerate partners
            warnings.append(f"{el.symbol}: smeared occupations {sorted(round(f, 4) for f in fractional)} are not "
                            "all equal; the Gaussian state may not be spherical")
    occ = "integer (spherical determinant)" if spherical else f"spherical smearing {SPHERICAL_SMEARING:g} Ha"
    if res.total_energy < radial.total_energy - 1e-6:
        warnings.append(f"{el.symbol}: the basis energy lies below the radial limit by "
                        f"{(radial.total_energy - res.total_energy) * 1e3:.3f} mHa; the two calculations do not "
                        "describe the same state (or the molecular grid is too coarse)")
    return AtomBasisError(el.symbol, mult, res.total_energy, radial.total_energy, occ, tuple(warnings),
                          limit_model(xc, spherical))


def basis_error_report(elements=(), basis="def2-svp", xc: str = "pbe", xyz=None,
                       precision: str = "normal", grid: str = "default", progress=None) -> BasisErrorReport:
    """Basis-set errors of the listed atoms, or of the atoms of the molecule ``xyz`` (a structure file in
    any format :func:`ks1d.structure.read_structure` reads, or XYZ text).

    ``basis`` is a name or file, or a per-element mapping with an optional ``"default"`` key; every
    element, the basis and the functional are checked before any calculation.  ``progress`` (optional)
    is called with (index, count, element) before each atom.
    """
    from ..gaussian.basis import check_basis
    from ..xc import resolve_functional

    if not (isinstance(basis, dict) and basis) and not (isinstance(basis, str) and basis.strip()):
        raise InputError("give a basis name, e.g. --basis def2-svp")
    resolve_functional(xc)
    molecule = None
    if xyz is not None:
        if elements:
            raise InputError("give either element symbols or --xyz, not both")
        from ..gaussian.geometry import read_geometry

        geom = read_geometry(xyz)
        counts: dict[str, int] = {}
        for s in geom.symbols:
            counts[s] = counts.get(s, 0) + 1
        symbols = list(counts)
        molecule = {"name": geom.comment.strip() or "".join(f"{s}{n if n > 1 else ''}" for s, n in counts.items()),
                    "counts": counts, "n_atoms": geom.natom}
    else:
        if not elements:
            raise InputError("give at least one element (e.g. 'ks1d basis-error C N O --basis def2-svp') or --xyz")
        symbols = []
        for e in elements:
            s = _element(e).symbol
            if s not in symbols:
                symbols.append(s)
    check_basis(basis, symbols)
    rows = []
    for i, s in enumerate(symbols, 1):
        if progress is not None:
            progress(i, len(symbols), s)
        rows.append(atom_basis_error(s, basis, xc, precision, grid))
    rows = tuple(rows)
    warnings = [w for a in rows for w in a.warnings]
    report = BasisErrorReport(basis, xc, rows, molecule, (), {"precision": precision, "grid": grid,
                                                              "spherical_smearing": SPHERICAL_SMEARING})
    if molecule is not None:
        t_kcal = report.total_error * units.HARTREE_TO_KCAL_MOL
        limit = WARN_KCAL_PER_ATOM * molecule["n_atoms"]
        if abs(t_kcal) > limit:
            warnings.append(f"estimated basis-set error of {molecule['name']} is {t_kcal:.2f} kcal/mol, above "
                            f"{WARN_KCAL_PER_ATOM:g} kcal/mol per atom ({limit:g} kcal/mol; chemical accuracy, "
                            "common practice): total energies in this basis are not converged; energy differences "
                            "may still be, through cancellation")
    return BasisErrorReport(basis, xc, rows, molecule, tuple(warnings), report.settings)
