"""Validation: ΔSCF ionisation potentials and electron affinities, the ``ks1d check``
suite (ks1d against NIST data, HF limits, experiment and pyscf) and basis-set error
reports (Gaussian basis vs the radial basis-set limit).

Heavy modules are imported on first use.
"""
from .basis_error import AtomBasisError, BasisErrorReport, atom_basis_error, basis_error_report
from .checks import CheckResult, SuiteResult, run_suite
from .properties import (
    DeltaSCFResult,
    SpeciesEnergy,
    atom_electron_affinity,
    atom_ionisation_potential,
    ground_state_multiplicity,
    ion_multiplicity,
    molecule_electron_affinity,
    molecule_ionisation_potential,
    parity_multiplicity,
)

__all__ = [
    "AtomBasisError", "BasisErrorReport", "CheckResult", "DeltaSCFResult", "SpeciesEnergy", "SuiteResult",
    "atom_basis_error", "atom_electron_affinity", "atom_ionisation_potential", "basis_error_report",
    "ground_state_multiplicity", "ion_multiplicity", "molecule_electron_affinity",
    "molecule_ionisation_potential", "parity_multiplicity", "run_suite",
]
