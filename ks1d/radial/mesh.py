"""Radial finite-element mesh: element boundaries, shape functions, quadrature.

The radial half-line [0, r_max] is cut into elements whose boundaries grow
geometrically from r₁ = r_first/Z to r_max (the first element is [0, r₁]).
On each element the shape functions are the Lagrange interpolating
polynomials of order p on the p+1 Gauss–Lobatto–Legendre nodes; neighbouring
elements share their boundary node, which makes the global functions
continuous (C⁰).  The function at r = 0 and the one at r = r_max are dropped,
imposing u(0) = u(r_max) = 0 on u = rR.  Integrals use Gauss–Legendre
quadrature with ``order + extra`` points per element.

This is the p-version finite-element method as used for atoms by, e.g.,
S. Lehtola, Int. J. Quantum Chem. 119, e25945 (2019).
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property, lru_cache

import numpy as np
from numpy.polynomial import legendre as _leg

from ..errors import SettingsError


@dataclass(frozen=True)
class MeshSpec:
    """Settings of a radial mesh.

    n_elements: number of finite elements; order: polynomial order p;
    r_first: first element boundary times Z (bohr); r_max: outer boundary
    (bohr); quad_extra: quadrature points per element beyond p.
    """

    n_elements: int = 16
    order: int = 10
    r_first: float = 0.06
    r_max: float = 40.0
    quad_extra: int = 8

    def __post_init__(self):
        if self.n_elements < 2:
            raise SettingsError(f"a radial mesh needs at least 2 elements, got {self.n_elements}")
        if not 2 <= self.order <= 30:
            raise SettingsError(f"finite-element order must lie in 2..30, got {self.order}")
        if not 0 < self.r_first < self.r_max:
            raise SettingsError(f"need 0 < r_first < r_max, got r_first={self.r_first}, r_max={self.r_max}")
        if self.quad_extra < 0:
            raise SettingsError(f"quad_extra must be non-negative, got {self.quad_extra}")

    def to_dict(self) -> dict:
        return {"n_elements": self.n_elements, "order": self.order, "r_first": self.r_first,
                "r_max": self.r_max, "quad_extra": self.quad_extra}


def element_boundaries(Z: float, spec: MeshSpec) -> np.ndarray:
    """Boundaries 0 = b₀ < b₁ < … < b_N = r_max, geometric from b₁ = r_first/Z."""
    r1 = min(spec.r_first / Z, spec.r_max / 10.0)
    inner = np.geomspace(r1, spec.r_max, spec.n_elements)
    return np.concatenate(([0.0], inner))


@lru_cache(maxsize=32)
def gauss_lobatto_nodes(p: int) -> np.ndarray:
    """The p+1 Gauss–Lobatto–Legendre nodes on [-1, 1]: ±1 and the roots of P′_p."""
    c = np.zeros(p + 1)
    c[-1] = 1.0
    inner = _leg.legroots(_leg.legder(c))
    return np.concatenate(([-1.0], np.sort(inner.real), [1.0]))


@lru_cache(maxsize=32)
def _reference_element(p: int, nq: int):
    """Shape-function values and ξ-derivatives at the Gauss–Legendre points of [-1, 1]."""
    nodes = gauss_lobatto_nodes(p)
    xq, wq = _leg.leggauss(nq)
    return nodes, xq, wq, lagrange_basis(nodes, xq)


@lru_cache(maxsize=32)
def _reference_second_derivatives(p: int, nq: int) -> np.ndarray:
    """Second ξ-derivatives L″_j of the shape functions at the Gauss–Legendre points, (nq, p+1)."""
    nodes = gauss_lobatto_nodes(p)
    xq, _ = _leg.leggauss(nq)
    C = np.linalg.inv(_leg.legvander(nodes, p))
    return _leg.legval(xq, _leg.legder(C, 2)).T


@lru_cache(maxsize=32)
def _quadrature_differentiation(nq: int) -> np.ndarray:
    """D (nq, nq): ξ-derivative at the Gauss–Legendre points of the polynomial through values there."""
    xq, _ = _leg.leggauss(nq)
    C = np.linalg.inv(_leg.legvander(xq, nq - 1))
    return _leg.legval(xq, _leg.legder(C)).T


def lagrange_basis(nodes: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Values L_j(x) and derivatives L′_j(x) of the Lagrange polynomials on ``nodes``.

    L_j(x) = Π_{m≠j} (x − x_m)/(x_j − x_m), evaluated through the
    polynomial coefficients of the inverse Vandermonde matrix (stable for
    the modest orders used here, p ≤ 30 on Lobatto nodes).
    """
    x = np.asarray(x, dtype=float)
    V = _leg.legvander(nodes, len(nodes) - 1)  # V[i, k] = P_k(x_i)
    C = np.linalg.inv(V)  # column j: Legendre coefficients of L_j
    vals = _leg.legval(x, C).T if x.ndim else _leg.legval(x, C)
    ders = _leg.legval(x, _leg.legder(C)).T if x.ndim else _leg.legval(x, _leg.legder(C))
    return np.atleast_2d(vals), np.atleast_2d(ders)


class RadialMesh:
    """Elements, quadrature and shape functions of a radial finite-element basis.

    Attributes (nel elements, nq points per element, p order):
      boundaries (nel+1,); r, w (nel, nq) quadrature points and weights (dr);
      phi (nq, p+1) shape values; dphi (nel, nq, p+1) shape r-derivatives;
      dof (nel, p+1) global index of each local function (−1 if dropped);
      size: number of global functions.
    """

    def __init__(self, boundaries: np.ndarray, order: int, quad_extra: int = 8):
        b = np.asarray(boundaries, dtype=float)
        if b[0] != 0.0 or np.any(np.diff(b) <= 0):
            raise SettingsError("element boundaries must start at 0 and increase strictly")
        self.boundaries = b
        self.order = p = int(order)
        nq = p + int(quad_extra)
        nodes, xq, wq, (L, dL) = _reference_element(p, nq)
        left, right = b[:-1], b[1:]
        half = 0.5 * (right - left)
        mid = 0.5 * (right + left)
        self.nel = len(b) - 1
        self.r = mid[:, None] + half[:, None] * xq[None, :]
        self.w = half[:, None] * wq[None, :]
        self.phi = L
        self.dphi = dL[None, :, :] / half[:, None, None]
        self._half = half
        self._nq = nq
        self.node_r = mid[:, None] + half[:, None] * nodes[None, :]
        # global numbering: node k of element e is e*p + k; drop 0 and the last
        raw = np.arange(self.nel)[:, None] * p + np.arange(p + 1)[None, :]
        last = self.nel * p
        self.dof = np.where((raw == 0) | (raw == last), -1, raw - 1)
        self.size = last - 1

    @classmethod
    def for_atom(cls, Z: float, spec: MeshSpec) -> RadialMesh:
        return cls(element_boundaries(Z, spec), spec.order, spec.quad_extra)

    @property
    def r_max(self) -> float:
        return float(self.boundaries[-1])

    @cached_property
    def _scatter(self):
        """Flat global indices and a mask to scatter (nel, p+1, p+1) blocks."""
        keep = self.dof >= 0
        ii = np.broadcast_to(self.dof[:, :, None], (self.nel, self.order + 1, self.order + 1))
        jj = np.broadcast_to(self.dof[:, None, :], ii.shape)
        mask = (ii >= 0) & (jj >= 0)
        return (ii[mask] * self.size + jj[mask]), mask, keep

    def assemble(self, blocks: np.ndarray) -> np.ndarray:
        """Sum element blocks (nel, p+1, p+1) into the global dense matrix."""
        flat, mask, _ = self._scatter
        out = np.bincount(flat, weights=blocks[mask], minlength=self.size * self.size)
        return out.reshape(self.size, self.size)

    @cached_property
    def _band_scatter(self):
        """Flat indices into the (2p+1, size) LAPACK band storage (ab[p + i − j, j] = a_ij) of element blocks."""
        p = self.order
        ii = np.broadcast_to(self.dof[:, :, None], (self.nel, p + 1, p + 1))
        jj = np.broadcast_to(self.dof[:, None, :], ii.shape)
        mask = (ii >= 0) & (jj >= 0)
        return (p + ii[mask] - jj[mask]) * self.size + jj[mask], mask

    def assemble_banded(self, blocks: np.ndarray) -> np.ndarray:
        """Sum element blocks (nel, p+1, p+1) into LAPACK band storage (2p+1, size) of bandwidth p."""
        flat, mask = self._band_scatter
        n = (2 * self.order + 1) * self.size
        return np.bincount(flat, weights=blocks[mask], minlength=n).reshape(2 * self.order + 1, self.size)

    def assemble_sparse(self, blocks: np.ndarray):
        """Sum element blocks into a sparse (CSR) global matrix of bandwidth p."""
        from scipy.sparse import csr_matrix

        flat, mask, _ = self._scatter
        rows, cols = np.divmod(flat, self.size)
        return csr_matrix((blocks[mask], (rows, cols)), shape=(self.size, self.size))

    def assemble_vector(self, local: np.ndarray) -> np.ndarray:
        """Sum element vectors (nel, p+1) into a global vector."""
        keep = self.dof >= 0
        return np.bincount(self.dof[keep], weights=local[keep], minlength=self.size)

    def local_coefficients(self, c: np.ndarray) -> np.ndarray:
        """Element-local coefficients (nel, p+1, …) of global coefficients c (size, …)."""
        c = np.asarray(c)
        padded = np.concatenate([np.zeros((1,) + c.shape[1:]), c, np.zeros((1,) + c.shape[1:])])
        return padded[self.dof + 1]

    def values(self, c: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """u and du/dr at the quadrature points for coefficient vector(s) c.

        c of shape (size,) gives (nel, nq); c of shape (size, k) gives (k, nel, nq).
        """
        loc = self.local_coefficients(c)
        if loc.ndim == 2:
            return np.einsum("qj,ej->eq", self.phi, loc), np.einsum("eqj,ej->eq", self.dphi, loc)
        return np.einsum("qj,ejk->keq", self.phi, loc), np.einsum("eqj,ejk->keq", self.dphi, loc)

    def values_at(self, c: np.ndarray, r: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """u and du/dr of the global function with coefficients c at arbitrary radii r.

        Points beyond r_max get u = 0 (the boundary condition).
        """
        r = np.asarray(r, dtype=float)
        flat = r.ravel()
        e = np.clip(np.searchsorted(self.boundaries, flat, side="right") - 1, 0, self.nel - 1)
        left, right = self.boundaries[e], self.boundaries[e + 1]
        half = 0.5 * (right - left)
        xi = (flat - 0.5 * (left + right)) / half
        nodes = gauss_lobatto_nodes(self.order)
        L, dL = lagrange_basis(nodes, np.clip(xi, -1.0, 1.0))
        loc = self.local_coefficients(np.asarray(c))[e]
        u = np.sum(L * loc, axis=1)
        du = np.sum(dL * loc, axis=1) / half
        outside = flat > self.r_max
        u[outside] = 0.0
        du[outside] = 0.0
        return u.reshape(r.shape), du.reshape(r.shape)

    @cached_property
    def d2phi(self) -> np.ndarray:
        """Second r-derivatives φ″ of the shape functions at the quadrature points, (nel, nq, p+1).

        Used where a derivative of a first derivative is needed: the gradient of the
        small component of Dirac orbitals (GGA); the shape functions are polynomials,
        so these are exact.
        """
        d2 = _reference_second_derivatives(self.order, self._nq)
        return d2[None, :, :] / (self._half**2)[:, None, None]

    def second_derivative(self, c: np.ndarray) -> np.ndarray:
        """u″ at the quadrature points for coefficient vector(s) c (shapes as :meth:`values`)."""
        loc = self.local_coefficients(c)
        if loc.ndim == 2:
            return np.einsum("eqj,ej->eq", self.d2phi, loc)
        return np.einsum("eqj,ejk->keq", self.d2phi, loc)

    def differentiate_quadrature(self, f: np.ndarray) -> np.ndarray:
        """df/dr at the quadrature points of a function known there, element by element.

        Each element's values are interpolated by the polynomial of degree nq − 1 through
        its nq Gauss–Legendre points, which is differentiated (spectral accuracy for a
        function smooth inside each element; no continuity across boundaries is assumed).
        """
        D = _quadrature_differentiation(self._nq)
        return np.einsum("qk,...ek->...eq", D, f) / self._half[:, None]

    def interpolate_quadrature(self, f: np.ndarray, r: np.ndarray) -> np.ndarray:
        """Values at radii r of a function known at the quadrature points (element-wise polynomial
        interpolation through the Gauss–Legendre points; 0 beyond r_max)."""
        r = np.asarray(r, dtype=float)
        flat = r.ravel()
        e = np.clip(np.searchsorted(self.boundaries, flat, side="right") - 1, 0, self.nel - 1)
        left, right = self.boundaries[e], self.boundaries[e + 1]
        xi = np.clip((flat - 0.5 * (left + right)) / (0.5 * (right - left)), -1.0, 1.0)
        xq, _ = _leg.leggauss(self._nq)
        L, _ = lagrange_basis(xq, xi)
        out = np.sum(L * np.asarray(f)[e], axis=1)
        out[flat > self.r_max] = 0.0
        return out.reshape(r.shape)

    def integrate(self, f: np.ndarray) -> float:
        """∫₀^{r_max} f(r) dr for f given at the quadrature points."""
        return float(np.sum(self.w * f))

    # --- element matrices --------------------------------------------------
    def weighted_blocks(self, f: np.ndarray) -> np.ndarray:
        """Blocks ∫ f φ_i φ_j dr per element for f at the quadrature points."""
        return np.einsum("qi,eq,qj->eij", self.phi, self.w * f, self.phi, optimize=True)

    def derivative_blocks(self, f: np.ndarray) -> np.ndarray:
        """Blocks ∫ f φ′_i φ′_j dr per element."""
        return np.einsum("eqi,eq,eqj->eij", self.dphi, self.w * f, self.dphi, optimize=True)

    def pair_blocks(self, a: np.ndarray, f: np.ndarray, b: np.ndarray) -> np.ndarray:
        """Blocks ∫ f a_i b_j dr per element for local function sets a, b of shape (nel, nq, p+1)."""
        return np.einsum("eqi,eq,eqj->eij", a, self.w * f, b, optimize=True)

    def mixed_blocks(self, f: np.ndarray) -> np.ndarray:
        """Blocks ∫ f (φ′_i φ_j + φ_i φ′_j) dr per element."""
        a = np.einsum("eqi,eq,qj->eij", self.dphi, self.w * f, self.phi, optimize=True)
        return a + a.transpose(0, 2, 1)
