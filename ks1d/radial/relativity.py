"""Relativistic one-electron kernels of the radial solver (pure functions on arrays).

Conventions: atomic units, energies without the rest mass (E → E − c²),
u = rR for the large component.  c is the speed of light, 1/α with the
fine-structure constant α of CODATA as shipped by scipy.constants (scipy
1.15 and later ship CODATA 2022: c = 137.035999177).

Restricted kinetic balance (RKB).  With large-component radial functions φ_i
(the finite-element basis) the small component is expanded in

    s_i = φ′_i + κ φ_i / r   (from σ·p acting on φ_i/r · Ω_κ),

and the radial Dirac equation in the modified (pseudo-large) form of Dyall
(K. G. Dyall, J. Chem. Phys. 100, 2118 (1994)) becomes the symmetric
generalised eigenproblem

    [ V    T     ] [A]       [ S   0        ] [A]
    [ T    W − T ] [B]  =  E [ 0   T/(2c²)  ] [B],

    S_ij = ∫ φ_i φ_j dr,  T_ij = ½ ∫ s_i s_j dr,  V_ij = ∫ V φ_i φ_j dr,
    W_ij = (1/4c²) ∫ V s_i s_j dr.

T is the Gram matrix of the small basis, so T/(2c²) is positive definite and
the matrix pencil has exactly N eigenvalues below −2c² (negative-energy
continuum) and N above: no spurious states (R. E. Stanton and S. Havriliak,
J. Chem. Phys. 81, 1910 (1984); Dyall 1994).  The large and small radial
functions of an eigenvector are u_L = Σ A_i φ_i, u_S = (1/2c) Σ B_i s_i,
normalised as AᵀSA + BᵀTB/(2c²) = 1.

The spin-free variant (Dyall 1994; used for X2C) removes the spin–orbit part of
(σ·p)V(σ·p), leaving p·Vp: per l the small basis is the vector ∇(φ_i/r Y_lm),
whose Gram and V-weighted Gram matrices are

    T_ij = ½ ∫ [d_i d_j + l(l+1) φ_i φ_j / r²] dr,  d_i = φ′_i − φ_i / r,
    W_ij = (1/4c²) ∫ V [d_i d_j + l(l+1) φ_i φ_j / r²] dr.
"""
from __future__ import annotations

import numpy as np
import scipy.linalg as sl
from scipy import constants as _c

from ..errors import SettingsError

#: Relativistic Hamiltonians of the radial solver.
RELATIVITY = ("none", "scalar", "x2c", "dirac")

#: Speed of light in atomic units, 1/α (CODATA via scipy.constants).
SPEED_OF_LIGHT: float = 1.0 / _c.fine_structure


def check_relativity(name: str) -> str:
    """The name, or a SettingsError naming the alternatives."""
    if name not in RELATIVITY:
        raise SettingsError(f"relativity must be one of {', '.join(map(repr, RELATIVITY))}, got {name!r}")
    return name


def check_speed_of_light(c) -> float:
    """c itself if it is a finite number ≥ 1 (a.u.), else a SettingsError."""
    try:
        c = float(c)
    except (TypeError, ValueError):
        raise SettingsError(f"speed_of_light must be a number, got {c!r}") from None
    if not (np.isfinite(c) and c >= 1.0):
        raise SettingsError(f"speed_of_light must be a finite number ≥ 1 (atomic units), got {c}")
    return c


def kappa_of(l: int, j2: int) -> int:
    """Relativistic quantum number κ of (l, j = j2/2): −(l+1) for j = l+½, +l for j = l−½."""
    if j2 == 2 * l + 1:
        return -(l + 1)
    if j2 == 2 * l - 1 and l > 0:
        return l
    raise ValueError(f"j = {j2}/2 is not l ± 1/2 for l = {l}")


def l_of_kappa(kappa: int) -> int:
    """Orbital angular momentum of the large component: l = κ for κ > 0, −κ − 1 for κ < 0."""
    return kappa if kappa > 0 else -kappa - 1


def j2_of_kappa(kappa: int) -> int:
    """2j = 2|κ| − 1."""
    return 2 * abs(kappa) - 1


def sommerfeld_energy(Z: float, n: int, kappa: int, c: float = SPEED_OF_LIGHT) -> float:
    """Dirac energy (without rest mass) of a point-nucleus hydrogen-like ion:

        E = c² [1 + (Zα / (n − |κ| + √(κ² − Z²α²)))²]^{−½} − c²,  α = 1/c

    (A. Sommerfeld 1916; C. G. Darwin and W. Gordon 1928).  Evaluated as
    −c² x / (√(1+x)(1 + √(1+x))), x = (Z/(c(n − |κ| + γ)))², to avoid cancellation.
    """
    gamma = np.sqrt(kappa * kappa - (Z / c) ** 2)
    x = (Z / (c * (n - abs(kappa) + gamma))) ** 2
    s = np.sqrt(1.0 + x)
    return float(-c * c * x / (s * (1.0 + s)))


def small_basis_dirac(mesh, kappa: int) -> tuple[np.ndarray, np.ndarray]:
    """s_i = φ′_i + κφ_i/r and s′_i = φ″_i + κ(φ′_i/r − φ_i/r²) at the quadrature points, (nel, nq, p+1)."""
    r = mesh.r[:, :, None]
    phi = mesh.phi[None, :, :]
    s = mesh.dphi + kappa * phi / r
    ds = mesh.d2phi + kappa * (mesh.dphi / r - phi / (r * r))
    return s, ds


def small_gram_dirac(mesh, s: np.ndarray, f: np.ndarray) -> np.ndarray:
    """∫ f s_i s_j dr assembled."""
    return mesh.assemble(mesh.pair_blocks(s, f, s))


def spin_free_gram(mesh, l: int, f: np.ndarray) -> np.ndarray:
    """∫ f [d_i d_j + l(l+1) φ_iφ_j/r²] dr assembled, d_i = φ′_i − φ_i/r (spin-free small basis)."""
    d = mesh.dphi - mesh.phi[None, :, :] / mesh.r[:, :, None]
    blocks = mesh.pair_blocks(d, f, d)
    if l:
        blocks = blocks + l * (l + 1) * mesh.weighted_blocks(f / mesh.r**2)
    return mesh.assemble(blocks)


def rkb_matrices(S: np.ndarray, T: np.ndarray, V: np.ndarray, W: np.ndarray, c: float):
    """(H, M) of the modified Dirac equation in RKB form: H = [[V, T], [T, W − T]], M = diag(S, T/2c²)."""
    n = S.shape[0]
    H = np.empty((2 * n, 2 * n))
    H[:n, :n] = V
    H[:n, n:] = T
    H[n:, :n] = T
    H[n:, n:] = W - T
    M = np.zeros((2 * n, 2 * n))
    M[:n, :n] = S
    M[n:, n:] = T / (2.0 * c * c)
    return H, M


def positive_energy_states(H: np.ndarray, M: np.ndarray, count: int | None = None):
    """The lowest ``count`` electronic (positive-energy) eigenpairs of H x = E M x (all N if None).

    The pencil of RKB size 2N has N negative-energy eigenvalues below −2c²
    followed by the N electronic ones; the latter are selected by index.
    Eigenvalues are returned as Rayleigh quotients (the bisection tolerance of
    LAPACK's selected-eigenpair driver scales with the matrix norm).
    """
    n = H.shape[0] // 2
    hi = 2 * n - 1 if count is None else n + count - 1
    if count is None:
        E, X = sl.eigh(H, M, check_finite=False)
        E, X = E[n:], X[:, n:]
    else:
        E, X = sl.eigh(H, M, subset_by_index=[n, hi], driver="gvx", check_finite=False)
        E = np.einsum("ik,ij,jk->k", X, H, X) / np.einsum("ik,ij,jk->k", X, M, X)
    return E, X


def x2c_one_electron(S: np.ndarray, T: np.ndarray, V: np.ndarray, W: np.ndarray, c: float) -> np.ndarray:
    """Exact two-component one-electron Hamiltonian (X2C-1e) in the large-component basis.

    From all N electronic solutions [A; B] of the (spin-free) RKB Dirac matrix
    equation with the one-electron potential V:

        X = B A⁻¹,   S̃ = S + Xᵀ T X / (2c²),
        R = S^{−½} (S^{−½} S̃ S^{−½})^{−½} S^{½},
        h = Rᵀ [V + T X + Xᵀ T + Xᵀ (W − T) X] R

    (W. Kutzelnigg and W. Liu, J. Chem. Phys. 123, 241102 (2005); M. Iliaš and
    T. Saue, J. Chem. Phys. 126, 064102 (2007); W. Liu and D. Peng, J. Chem.
    Phys. 131, 031104 (2009)).  The eigenvalues of h with metric S equal the
    electronic eigenvalues of the Dirac matrix equation in the same basis.
    """
    H, M = rkb_matrices(S, T, V, W, c)
    _, Xv = positive_energy_states(H, M)
    n = S.shape[0]
    A, B = Xv[:n], Xv[n:]
    X = np.linalg.solve(A.T, B.T).T  # B A⁻¹
    St = S + X.T @ T @ X / (2.0 * c * c)
    es, Us = np.linalg.eigh(S)
    S_half = (Us * np.sqrt(es)) @ Us.T
    S_mhalf = (Us / np.sqrt(es)) @ Us.T
    inner = S_mhalf @ St @ S_mhalf
    ei, Ui = np.linalg.eigh(0.5 * (inner + inner.T))
    R = S_mhalf @ ((Ui / np.sqrt(ei)) @ Ui.T) @ S_half
    L = V + T @ X + X.T @ T + X.T @ (W - T) @ X
    h = R.T @ L @ R
    return 0.5 * (h + h.T)


def relativistic_kinetic(A: np.ndarray, B: np.ndarray, T: np.ndarray) -> float:
    """⟨ψ| cα·p + (β − 1)c² |ψ⟩ = 2AᵀTB − BᵀTB of one RKB eigenvector (modified Dirac form)."""
    TB = T @ B
    return float(2.0 * A @ TB - B @ TB)
