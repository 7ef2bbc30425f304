"""Hartree potential of a spherical density on the finite-element mesh.

With U(r) = r v_H(r) the radial Poisson equation ∇²v_H = −4πρ becomes

    U″(r) = −4π r ρ(r),   U(0) = 0,   U(r_max) = Q = ∫₀^{r_max} 4π r² ρ dr,

which is solved in the same finite-element basis as the orbitals (weak form
∫ U′ φ′_i dr = ∫ 4π r ρ φ_i dr), after splitting off U = U₀ + Q r / r_max.
The solution equals the integral form

    v_H(r) = 4π [ (1/r) ∫₀ʳ ρ r′² dr′ + ∫ᵣ^∞ ρ r′ dr′ ]

up to the discretisation error, and Gauss's law U(r_max) = Q holds exactly.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.linalg as sl

from .mesh import RadialMesh


@dataclass(frozen=True)
class PoissonSolver:
    """Cholesky-factored stiffness matrix ∫ φ′_i φ′_j dr of a mesh, reused every iteration."""

    mesh: RadialMesh

    @cached_property
    def _factor(self):
        K = self.mesh.assemble(self.mesh.derivative_blocks(np.ones_like(self.mesh.r)))
        return sl.cho_factor(K, lower=True)

    def hartree_potential(self, rho: np.ndarray) -> np.ndarray:
        """v_H at the quadrature points for the total density ρ at the quadrature points."""
        m = self.mesh
        charge = total_charge(m, rho)
        source = np.einsum("qi,eq->ei", m.phi, m.w * 4.0 * np.pi * m.r * rho)
        u0 = sl.cho_solve(self._factor, m.assemble_vector(source))
        U, _ = m.values(u0)
        return U / m.r + charge / m.r_max


def total_charge(mesh: RadialMesh, rho: np.ndarray) -> float:
    """Q = ∫ 4π r² ρ(r) dr."""
    return mesh.integrate(4.0 * np.pi * mesh.r**2 * rho)


def hartree_energy(mesh: RadialMesh, rho: np.ndarray, v_h: np.ndarray) -> float:
    """E_H = ½ ∫ v_H ρ 4π r² dr."""
    return 0.5 * mesh.integrate(v_h * rho * 4.0 * np.pi * mesh.r**2)
