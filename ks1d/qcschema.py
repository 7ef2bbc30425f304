"""QCSchema output: ks1d results as MolSSI's open ``qcschema_output`` (AtomicResult, schema version 1).

QCSchema (https://molssi-qc-schema.readthedocs.io; D. G. A. Smith et al., WIREs Comput. Mol.
Sci. 11, e1491 (2021)) is the JSON standard that quantum-chemistry tools exchange results in.
:func:`atom_to_qcschema` and :func:`molecule_to_qcschema` map ks1d's shared result vocabulary
onto it; everything QCSchema has no field for (orbitals, error estimates, mesh or grid settings,
warnings) goes under ``extras["ks1d"]``, which holds the result's full :meth:`to_dict`.

Mapping (atomic units, as QCSchema prescribes):

* ``molecule``: symbols, geometry (bohr, flat), charge and multiplicity.  A spin-restricted
  open-shell atom is a spin-averaged ensemble; its molecule block carries the ground-state
  multiplicity of the configuration (QCSchema's multiplicity must fit the electron count) and
  ``keywords["spin"] = "restricted"`` says what was computed.
* ``model``: ``method`` = the functional as given, ``basis`` = the Gaussian basis name, or for
  radial atoms the finite-element description "ks1d radial finite elements (basis-set limit)".
* ``properties``: return/total energy, one-electron (kinetic + nuclear attraction) and
  two-electron (Coulomb + exchange–correlation + exact exchange) energies, the xc energy
  (semilocal plus exact exchange), nuclear repulsion, SCF iterations, electron counts,
  basis size and, for molecules, the dipole moment (e·bohr).

No qcelemental import is needed to write it; the tests validate the output with
qcelemental's models.
"""
from __future__ import annotations

from typing import Any

import numpy as np

from ._version import __version__
from .serialize import plain

SCHEMA_NAME = "qcschema_output"
SCHEMA_VERSION = 1
RADIAL_BASIS = "ks1d radial finite elements (basis-set limit)"


def _properties(res, nbasis: int, natom: int) -> dict[str, Any]:
    c = res.components
    return {
        "return_energy": res.total_energy,
        "scf_total_energy": res.total_energy,
        "nuclear_repulsion_energy": c.nuclear_repulsion,
        "scf_one_electron_energy": c.kinetic + c.nuclear_attraction,
        "scf_two_electron_energy": c.coulomb + c.exchange_correlation + c.exact_exchange,
        "scf_xc_energy": c.exchange_correlation + c.exact_exchange,
        "scf_iterations": res.iterations,
        "calcinfo_nalpha": res.n_alpha,
        "calcinfo_nbeta": res.n_beta,
        "calcinfo_natom": natom,
        "calcinfo_nbasis": nbasis,
    }


def _document(molecule: dict, method: str, basis: str | None, keywords: dict, properties: dict,
              res, routine: str, driver: str = "energy", result=None) -> dict[str, Any]:
    return plain({
        "schema_name": SCHEMA_NAME,
        "schema_version": SCHEMA_VERSION,
        "molecule": molecule,
        "driver": driver,
        "model": {"method": method, "basis": basis},
        "keywords": keywords,
        "provenance": {"creator": "ks1d", "version": __version__, "routine": routine},
        "properties": properties,
        "return_result": res.total_energy if result is None else result,
        "success": bool(res.converged),
        "extras": {"ks1d": res.to_dict()},
    })


def atom_to_qcschema(res) -> dict[str, Any]:
    """``qcschema_output`` of an :class:`~ks1d.radial.result.AtomResult` (strict-JSON ready)."""
    from .occupations import ground_state_multiplicity

    mult = res.multiplicity
    if res.spin == "restricted":
        try:
            mult = ground_state_multiplicity(res.element, int(round(res.charge)))
        except Exception:  # noqa: BLE001 - a fractional charge keeps the computed multiplicity
            mult = res.multiplicity
    molecule = {
        "schema_name": "qcschema_molecule",
        "schema_version": 2,
        "symbols": [res.element],
        "geometry": [0.0, 0.0, 0.0],
        "molecular_charge": res.charge,
        "molecular_multiplicity": mult,
    }
    keywords = {"spin": res.spin, "configuration": res.configuration,
                **{k: v for k, v in res.settings.items() if k in ("mesh", "scf", "relativity", "nucleus",
                                                                  "open_shell_exchange")}}
    return _document(molecule, res.xc, RADIAL_BASIS, keywords,
                     _properties(res, int(res.settings.get("basis_size", 0)), 1), res, "ks1d.solve_atom")


def molecule_to_qcschema(res) -> dict[str, Any]:
    """``qcschema_output`` of a :class:`~ks1d.gaussian.result.MoleculeResult` (strict-JSON ready)."""
    from .units import ANGSTROM_TO_BOHR

    geom = res.geometry
    flat = [x * ANGSTROM_TO_BOHR for row in geom["coordinates_angstrom"] for x in row]
    molecule = {
        "schema_name": "qcschema_molecule",
        "schema_version": 2,
        "symbols": list(geom["symbols"]),
        "geometry": flat,
        "molecular_charge": res.charge,
        "molecular_multiplicity": res.multiplicity,
    }
    basis = res.settings.get("basis")
    basis_name = basis if isinstance(basis, str) else ",".join(f"{k}={v}" for k, v in sorted(dict(basis).items()))
    props = _properties(res, res.basis_functions, len(geom["symbols"]))
    props["scf_dipole_moment"] = list(res.dipole)
    keywords = {"spin": res.spin, "grid_level": res.settings.get("grid_level"), "scf": res.settings.get("scf"),
                "relativity": res.settings.get("relativity", "none")}
    if res.gradient is not None:  # solve_molecule(..., gradient=True): the gradient driver (Ha/bohr, flat)
        grad = [float(x) for x in np.asarray(res.gradient).ravel()]
        props["return_gradient"] = props["scf_total_gradient"] = grad
        return _document(molecule, res.functional["name"], basis_name, keywords, props, res,
                         "ks1d.solve_molecule", driver="gradient", result=grad)
    return _document(molecule, res.functional["name"], basis_name, keywords, props, res, "ks1d.solve_molecule")
