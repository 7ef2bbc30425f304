"""Result objects of the radial atomic solver."""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..occupations import L_LETTERS
from ..results import EnergyComponents
from ..serialize import plain
from .density import shell_density
from .mesh import RadialMesh


@dataclass(frozen=True)
class Orbital:
    """One radial sub-shell orbital: n, l, spin channel ("alpha", "beta" or "both"), occupation, energy (hartree)."""

    n: int
    l: int
    spin: str
    occupation: float
    energy: float
    kappa: int | None = None  # Dirac atoms: κ = −(l+1) for j = l+½, +l for j = l−½
    j: float | None = None  # Dirac atoms: total angular momentum

    @property
    def label(self) -> str:
        """'6s', or with j (Dirac atoms) '6p1/2'."""
        if self.j is not None:
            return f"{self.n}{L_LETTERS[self.l]}{int(round(2 * self.j))}/2"
        return f"{self.n}{L_LETTERS[self.l]}"

    @property
    def bound(self) -> bool:
        return self.energy < 0.0

    def to_dict(self) -> dict:
        return {"n": self.n, "l": self.l, "label": self.label, "spin": self.spin,
                "occupation": self.occupation, "energy": self.energy, "kappa": self.kappa, "j": self.j}


def _orbital_key(key: tuple) -> str:
    """'2p_alpha', or for Dirac atoms '2p1/2_both'."""
    n, l, s = key[:3]
    j = f"{key[3]}/2" if len(key) > 3 else ""
    return f"{n}{L_LETTERS[l]}{j}_{s}"


@dataclass(frozen=True, eq=False)
class RadialData:
    """Radial functions of a converged atom.

    ``r``/``weights`` are the quadrature points (flattened) and weights (dr);
    ``density`` (ns, N) spin densities ρ_σ(r) in bohr⁻³ (ns = 1: total);
    ``v_hartree`` and ``v_xc`` (ns, N) potentials in hartree; ``orbitals``
    maps (n, l, spin) to u(r) = r R(r) at the points (Dirac atoms: (n, l, spin, 2j),
    large component).  ``mesh`` and ``coefficients`` allow evaluation anywhere
    through :meth:`density_at`.  Relativistic atoms whose density includes a small
    component (scalar, Dirac) keep it in ``small``: the same keys → u_S at the
    quadrature points (nel, nq), interpolated element-wise by :meth:`density_at`.
    """

    r: np.ndarray
    weights: np.ndarray
    density: np.ndarray
    v_hartree: np.ndarray
    v_xc: np.ndarray
    orbitals: dict
    mesh: RadialMesh
    coefficients: dict  # (n, l, spin) -> (coefficient vector, occupation)
    small: dict | None = None  # same keys -> small component at the quadrature points

    def density_at(self, r: np.ndarray) -> np.ndarray:
        """Spin densities (ns, len(r)) at arbitrary radii (0 beyond r_max)."""
        r = np.atleast_1d(np.asarray(r, dtype=float))
        spins = sorted({k[2] for k in self.coefficients})
        out = np.zeros((len(spins), r.size))
        rr = np.maximum(r, 1e-300)
        for key, (c, occ) in self.coefficients.items():
            u, _ = self.mesh.values_at(c, rr)
            out[spins.index(key[2])] += shell_density(rr, u, occ)
            if self.small is not None and key in self.small:
                small = self.mesh.interpolate_quadrature(self.small[key], rr)
                out[spins.index(key[2])] += shell_density(rr, small, occ)
        return out

    def to_dict(self) -> dict:
        return {
            "r": self.r.tolist(),
            "weights": self.weights.tolist(),
            "density": self.density.tolist(),
            "v_hartree": self.v_hartree.tolist(),
            "v_xc": self.v_xc.tolist(),
            "orbitals": {_orbital_key(k): u.tolist() for k, u in self.orbitals.items()},
        }


@dataclass(frozen=True, eq=False)
class AtomResult:
    """A converged (or best-effort) spherical atom; the shared result vocabulary is in :mod:`ks1d.results`.

    Energies in hartree.  ``components`` is an :class:`~ks1d.results.EnergyComponents`
    (nuclear_repulsion = 0).  ``spin`` is "restricted" or "polarized"; ``multiplicity``
    is 2S+1 from N_α − N_β.  ``virial_ratio`` is −V/T; ``virial_residual`` is the
    scaling-virial defect (2T + V_ne + E_H + dE_xc[ρ_λ]/dλ)/|E|, zero for an exact
    solution of any functional; ``gauss_law_error`` is |∫ρ − N|; ``error_estimate``
    estimates the numerical error of ``total_energy`` (refined-mesh difference plus the
    last SCF energy change; None when not requested), ``mesh_error_estimate`` is its
    refined-mesh part alone.  ``relativity`` ("none", "scalar", "x2c", "dirac") and
    ``nucleus`` ("point", "gaussian") name the Hamiltonian (see :func:`ks1d.radial.scf.solve_atom`);
    for "scalar" and "x2c" the scaling virial theorem has no simple form and
    ``virial_residual`` is NaN (null in JSON); for "dirac" it is the Dirac form
    (⟨cα·p⟩ − ∫ρ Z(r)/r + E_H + dE_xc[ρ_λ]/dλ)/|E|.
    """

    element: str
    Z: int
    charge: float
    xc: str
    functional: dict
    spin: str
    multiplicity: float
    n_alpha: float
    n_beta: float
    configuration: str
    total_energy: float
    components: EnergyComponents
    orbitals: tuple
    converged: bool
    iterations: int
    history: tuple
    virial_ratio: float
    virial_residual: float
    gauss_law_error: float
    error_estimate: float | None
    mesh_error_estimate: float | None
    warnings: tuple
    settings: dict
    version: str
    timings: dict = field(default_factory=dict)
    radial: RadialData | None = None
    relativity: str = "none"
    nucleus: str = "point"

    @property
    def homo(self) -> Orbital:
        occupied = [o for o in self.orbitals if o.occupation > 1e-12]
        return max(occupied, key=lambda o: o.energy)

    @property
    def homo_energy(self) -> float:
        return self.homo.energy

    @property
    def n_electrons(self) -> float:
        return float(self.Z - self.charge)

    def to_dict(self, include_radial: bool = False) -> dict[str, Any]:
        """Strict-JSON-ready dict: the field names are the keys (``radial`` only on request)."""
        d = {
            "element": self.element,
            "Z": self.Z,
            "charge": self.charge,
            "xc": self.xc,
            "functional": dict(self.functional),
            "spin": self.spin,
            "multiplicity": self.multiplicity,
            "n_alpha": self.n_alpha,
            "n_beta": self.n_beta,
            "configuration": self.configuration,
            "total_energy": self.total_energy,
            "components": self.components.to_dict(),
            "orbitals": [o.to_dict() for o in self.orbitals],
            "homo_energy": self.homo_energy,
            "converged": self.converged,
            "iterations": self.iterations,
            "history": [h.to_dict() for h in self.history],
            "virial_ratio": self.virial_ratio,
            "virial_residual": self.virial_residual,
            "gauss_law_error": self.gauss_law_error,
            "error_estimate": self.error_estimate,
            "mesh_error_estimate": self.mesh_error_estimate,
            "warnings": list(self.warnings),
            "settings": dict(self.settings),
            "version": self.version,
            "timings": dict(self.timings),
            "relativity": self.relativity,
            "nucleus": self.nucleus,
        }
        if include_radial and self.radial is not None:
            d["radial"] = self.radial.to_dict()
        return plain(d)
