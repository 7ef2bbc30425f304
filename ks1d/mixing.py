"""SCF mixing shared by the radial and Gaussian solvers.

Both solvers iterate a map x → F(x) (input density → output density, or
Fock matrix → Fock matrix) and feed the mixer the pair (x, r) with residual
r = F(x) − x (density mixing) or an error vector such as FDS − SDF (Fock
extrapolation).  The mixer returns the next input.

* :class:`PulayMixer`: Pulay's direct inversion in the iterative subspace
  (P. Pulay, Chem. Phys. Lett. 73, 393 (1980); J. Comput. Chem. 3, 556
  (1982)), in Anderson's mixing form (D. G. Anderson, J. ACM 12, 547 (1965)):
  minimise |Σ c_i r_i|² subject to Σ c_i = 1, then
  x_new = Σ c_i (x_i + α r_i).  With α = 0 this is plain DIIS extrapolation.
"""
from __future__ import annotations

from collections import deque

import numpy as np


def diis_coefficients(residuals: list[np.ndarray], weights: np.ndarray | None = None) -> np.ndarray:
    """Coefficients c minimising ‖Σ c_i r_i‖² with Σ c_i = 1.

    Solves the bordered system [[B, 1], [1ᵀ, 0]] [c, λ] = [0, 1] with
    B_ij = ⟨r_i, r_j⟩ (weighted by ``weights`` if given).  B is scaled by its
    largest diagonal element and solved in the least-squares sense, so a
    nearly linear-dependent history degrades gracefully instead of blowing up.
    """
    m = len(residuals)
    R = np.array([np.ravel(r) for r in residuals])
    W = R if weights is None else R * np.ravel(weights)
    B = W @ R.T
    scale = np.max(np.abs(np.diag(B)))
    if scale == 0.0:
        c = np.zeros(m)
        c[-1] = 1.0
        return c
    A = np.zeros((m + 1, m + 1))
    A[:m, :m] = B / scale
    A[:m, m] = A[m, :m] = 1.0
    rhs = np.zeros(m + 1)
    rhs[m] = 1.0
    sol = np.linalg.lstsq(A, rhs, rcond=1e-14)[0]
    return sol[:m]


class PulayMixer:
    """Anderson/Pulay (DIIS) mixing with a bounded history.

    The first ``linear_steps`` calls mix linearly, which keeps early, far from
    converged iterates out of the extrapolation.  ``weights`` define the inner
    product of residuals (quadrature weights for densities on a grid).
    """

    def __init__(self, alpha: float = 0.5, history: int = 8, linear_steps: int = 1,
                 weights: np.ndarray | None = None):
        if not 0.0 <= alpha <= 1.0:
            raise ValueError(f"Pulay mixing parameter must lie in [0, 1], got {alpha}")
        if history < 2:
            raise ValueError(f"Pulay history must be at least 2, got {history}")
        self.alpha = alpha
        self.linear_steps = linear_steps
        self.weights = weights
        self._x: deque[np.ndarray] = deque(maxlen=history)
        self._r: deque[np.ndarray] = deque(maxlen=history)
        self._calls = 0

    def reset(self) -> None:
        self._x.clear()
        self._r.clear()
        self._calls = 0

    def step(self, x: np.ndarray, residual: np.ndarray) -> np.ndarray:
        self._calls += 1
        self._x.append(np.array(x, copy=True))
        self._r.append(np.array(residual, copy=True))
        if self._calls <= self.linear_steps or len(self._x) < 2:
            return x + self.alpha * residual
        c = diis_coefficients(list(self._r), self.weights)
        x_opt = sum(ci * xi for ci, xi in zip(c, self._x))
        if self.alpha == 0.0:
            return x_opt
        r_opt = sum(ci * ri for ci, ri in zip(c, self._r))
        return x_opt + self.alpha * r_opt
