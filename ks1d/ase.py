"""An ASE calculator for ks1d's Gaussian-basis Kohn–Sham solver.

    from ase.build import molecule
    from ase.optimize import BFGS
    from ks1d.ase import KS1D

    atoms = molecule("H2O")
    atoms.calc = KS1D(basis="def2-svp", xc="pbe")
    BFGS(atoms).run(fmax=0.02)

It follows ASE's calculator conventions: ``implemented_properties`` are energy (and
free_energy, the same number) in eV, forces in eV/Å and the dipole moment in e·Å (about
the coordinate origin); ``calculate(atoms, properties, system_changes)`` fills
``results``.  One SCF gives all three properties (the analytic gradient costs a
fraction of the SCF), and every SCF after the first restarts from the previous
converged density while the atoms and the basis stay the same.  Periodic
structures are refused: ks1d computes isolated molecules.
"""
from __future__ import annotations

import numpy as np
from ase.calculators.calculator import Calculator, all_changes

from .errors import GeometryError, SettingsError
from .units import BOHR_TO_ANGSTROM, HARTREE_TO_EV


class KS1D(Calculator):
    """ks1d as an ASE calculator.

    Parameters (keywords, changeable with ``calc.set(...)``): ``basis`` (default "def2-svp"),
    ``xc`` ("pbe"), ``charge`` (0), ``multiplicity`` (1), ``spin`` (None: restricted for
    singlets), ``grid`` ("default") and ``scf`` (SCF options, see
    :class:`ks1d.results.SCFOptions`).  ``calc.last_result`` is the last
    :class:`~ks1d.gaussian.result.MoleculeResult`.
    """

    implemented_properties = ["energy", "free_energy", "forces", "dipole"]
    default_parameters = {"basis": "def2-svp", "xc": "pbe", "charge": 0, "multiplicity": 1, "spin": None,
                          "grid": "default", "scf": None}
    #: parameters ks1d passes on to solve_molecule
    _SOLVER_KEYS = tuple(default_parameters)

    def __init__(self, **kwargs):
        unknown = sorted(set(kwargs) - set(self.default_parameters) - {"atoms", "label", "directory"})
        if unknown:
            raise SettingsError(f"unknown KS1D parameter(s) {', '.join(map(repr, unknown))}; the parameters are "
                                f"{', '.join(self.default_parameters)}")
        super().__init__(**kwargs)
        self.last_result = None

    def set(self, **kwargs):
        unknown = sorted(set(kwargs) - set(self.default_parameters))
        if unknown:
            raise SettingsError(f"unknown KS1D parameter(s) {', '.join(map(repr, unknown))}; the parameters are "
                                f"{', '.join(self.default_parameters)}")
        changed = super().set(**kwargs)
        if changed:  # another basis, functional or electron count: new results, no restart
            self.reset()
            self.last_result = None
        return changed

    def calculate(self, atoms=None, properties=("energy",), system_changes=all_changes):
        from .gaussian.geometry import Geometry, check_distances
        from .gaussian.scf import solve_molecule

        super().calculate(atoms, properties, system_changes)
        atoms = self.atoms
        if atoms.pbc.any():
            raise GeometryError("KS1D computes isolated molecules; these atoms are periodic "
                                f"(pbc={atoms.pbc.tolist()}): set atoms.pbc = False to compute them as a cluster")
        symbols = tuple(atoms.get_chemical_symbols())
        geom = Geometry(symbols, tuple(int(z) for z in atoms.numbers),
                        np.asarray(atoms.positions, dtype=float) / BOHR_TO_ANGSTROM)
        check_distances(geom)
        start = self.last_result
        if start is not None and tuple(start.geometry["symbols"]) != symbols:
            start = None
        p = self.parameters
        res = solve_molecule(geom, basis=p["basis"], xc=p["xc"], charge=p["charge"], multiplicity=p["multiplicity"],
                             spin=p["spin"], grid=p["grid"], scf=p["scf"], gradient=True, start=start,
                             estimate_grid_error=False)  # called once per step of an ASE driver
        self.last_result = res
        energy = res.total_energy * HARTREE_TO_EV
        self.results = {"energy": energy, "free_energy": energy, "forces": np.array(res.forces),
                        "dipole": np.array(res.dipole) * BOHR_TO_ANGSTROM}
