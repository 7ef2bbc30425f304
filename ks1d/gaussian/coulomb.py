"""Coulomb (J) and exact-exchange (K) matrices from the integral engine.

    J_μν = Σ_λσ (μν|λσ) D_λσ,        K_μν = Σ_λσ (μλ|νσ) D_λσ

computed integral-direct (no four-index array is stored) by pyscf's
J/K contraction with Schwarz and density screening.  The long-range kernel
erf(ωr)/r is selected with the engine's range-separation parameter; the
short-range kernel is K[erfc(ωr)/r] = K[1/r] − K[erf(ωr)/r].

Density changes are contracted incrementally: J[D_n] = J[D_(n−1)] + J[ΔD],
which lets the density screening skip most integrals near convergence
(the direct-SCF idea of J. Almlöf, K. Faegri and K. Korsell,
J. Comput. Chem. 3, 385 (1982)).
"""
from __future__ import annotations

import numpy as np


class TwoElectronBuilder:
    """J and K (optionally attenuated) for one or two spin density matrices."""

    def __init__(self, basis, screening: float = 1e-13):
        from pyscf.scf import _vhf

        self.mol = basis.mol
        self._screening = screening
        self._opts: dict = {}
        self._vhf = _vhf

    def _opt(self, omega: float):
        if omega not in self._opts:
            with self.mol.with_range_coulomb(omega):
                self._opts[omega] = self._vhf._VHFOpt(
                    self.mol, "int2e", "CVHFnrs8_prescreen", "CVHFnr_int2e_q_cond",
                    "CVHFnr_dm_cond", self._screening)
        return self._opts[omega]

    def build(self, dms: np.ndarray, with_j: bool = True, with_k: bool = False,
              omega: float = 0.0) -> tuple[np.ndarray | None, np.ndarray | None]:
        """J and/or K for the stack ``dms`` (n, nao, nao) of symmetric matrices.

        omega > 0 selects the long-range kernel erf(ωr)/r.
        """
        from pyscf.scf import jk

        dms = np.ascontiguousarray(dms)
        n = len(dms)
        scripts, mats = [], []
        if with_j:
            scripts += ["ijkl,ji->kl"] * n
            mats += list(dms)
        if with_k:
            scripts += ["ijkl,jk->il"] * n
            mats += list(dms)
        with self.mol.with_range_coulomb(omega):
            out = jk.get_jk(self.mol, mats, scripts, intor="int2e_sph", aosym="s8", hermi=1,
                            vhfopt=self._opt(omega))
        out = [np.asarray(o) for o in out]
        J = np.array(out[:n]) if with_j else None
        K = np.array(out[n if with_j else 0:]) if with_k else None
        return J, K


class FittedCoulomb:
    """Density-fitted Coulomb matrix, used to accelerate the early SCF iterations.

    Robust fitting in the Coulomb metric (B. I. Dunlap, J. W. D. Connolly and
    J. R. Sabin, J. Chem. Phys. 71, 3396 (1979); O. Vahtras, J. Almlöf and
    M. W. Feyereisen, Chem. Phys. Lett. 213, 514 (1993)):

        (P|Q) c_Q = Σ_λσ (P|λσ) D_λσ,     J_μν ≈ Σ_P (μν|P) c_P

    with Weigend's universal Coulomb-fitting basis (F. Weigend, Phys. Chem.
    Chem. Phys. 8, 1057 (2006)).  Only three-index (μν|P) integrals are
    stored (pairs μ ≥ ν); the exact J takes over once the SCF is close, so
    the converged energy carries no fitting error.
    """

    AUXBASIS = "def2-universal-jfit"

    def __init__(self, basis, max_mb: float = 1500.0):
        import scipy.linalg
        from pyscf import df

        mol = basis.mol
        self.available = False
        try:
            auxmol = df.addons.make_auxmol(mol, self.AUXBASIS)
        except Exception:  # noqa: BLE001 - no fitting basis for some element: skip fitting
            return
        nao = mol.nao_nr()
        npair = nao * (nao + 1) // 2
        if npair * auxmol.nao_nr() * 8 / 1e6 > max_mb:
            return
        self.nao = nao
        self._int3c = df.incore.aux_e2(mol, auxmol, "int3c2e", aosym="s2ij")  # (npair, naux)
        self._metric = scipy.linalg.cho_factor(auxmol.intor("int2c2e"))
        self._tril = np.tril_indices(nao)
        self.available = True

    def build(self, dms: np.ndarray) -> np.ndarray:
        """Fitted J for each matrix in ``dms`` (n, nao, nao), summed over the stack."""
        import scipy.linalg

        D = dms.sum(axis=0)
        Dp = (D + D.T)[self._tril]
        Dp[np.arange(self.nao) * (np.arange(self.nao) + 3) // 2] *= 0.5  # diagonal pairs once
        c = scipy.linalg.cho_solve(self._metric, Dp @ self._int3c)
        Jp = self._int3c @ c
        J = np.zeros((self.nao, self.nao))
        J[self._tril] = Jp
        J = J + J.T - np.diag(np.diag(J))
        return J


class FittedExchange:
    """Density-fitted exchange matrix for the early iterations of hybrid runs.

    With B^P_μν = Σ_Q (L⁻¹)_PQ (Q|μν), (P|Q) = L Lᵀ, and D = C Cᵀ (C from the
    eigen-decomposition of the positive semidefinite D),

        K_μν ≈ Σ_P Σ_i (B^P C)_μi (B^P C)_νi

    (F. Weigend, Phys. Chem. Chem. Phys. 4, 4285 (2002)), using Weigend's
    universal JK-fitting basis.  Like :class:`FittedCoulomb` it only serves
    the early iterations; converged results use exact K.
    """

    AUXBASIS = "def2-universal-jkfit"

    def __init__(self, basis, max_mb: float = 1500.0, chunk_mb: float = 200.0):
        import scipy.linalg
        from pyscf import df

        mol = basis.mol
        self.available = False
        try:
            auxmol = df.addons.make_auxmol(mol, self.AUXBASIS)
        except Exception:  # noqa: BLE001 - no fitting basis for some element
            return
        nao = mol.nao_nr()
        naux = auxmol.nao_nr()
        if nao * (nao + 1) // 2 * naux * 8 / 1e6 > max_mb:
            return
        int3c = df.incore.aux_e2(mol, auxmol, "int3c2e", aosym="s2ij")  # (npair, naux)
        L = np.linalg.cholesky(auxmol.intor("int2c2e"))
        self._B = scipy.linalg.solve_triangular(L, int3c.T, lower=True)  # (naux, npair)
        self.nao = nao
        self._tril = np.tril_indices(nao)
        self._chunk = max(1, int(chunk_mb * 1e6 / (8 * nao * nao)))
        self.available = True

    def build(self, dms: np.ndarray) -> np.ndarray:
        """Fitted K for each (positive semidefinite) matrix of the stack ``dms``."""
        nao = self.nao
        out = np.zeros_like(dms)
        for s, D in enumerate(dms):
            w, V = np.linalg.eigh(D)
            keep = w > 1e-12
            C = V[:, keep] * np.sqrt(w[keep])
            nocc = C.shape[1]
            for p0 in range(0, self._B.shape[0], self._chunk):
                Bp = self._B[p0:p0 + self._chunk]
                full = np.zeros((len(Bp), nao, nao))
                full[:, self._tril[0], self._tril[1]] = Bp
                full[:, self._tril[1], self._tril[0]] = Bp
                T = (full @ C).transpose(1, 0, 2).reshape(nao, len(Bp) * nocc)
                out[s] += T @ T.T
        return out
