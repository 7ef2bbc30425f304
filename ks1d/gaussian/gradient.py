"""Analytic nuclear gradient of the Gaussian-basis Kohn–Sham (or Hartree–Fock) energy.

For the converged SCF energy of :mod:`ks1d.gaussian.scf`,

    E = Σ_μν D_μν h_μν + ½ Σ D_μν D_λσ (μν|λσ) − ½ Σ_σ Σ D^σ_μλ D^σ_νσ (μν|λσ)_x + E_xc[ρ] + E_nn,

the derivative with respect to the position R_A of nucleus A is (the orbitals are
stationary, so only the explicit dependence on R_A and the orthonormality
constraint remain; J. A. Pople, R. Krishnan, H. B. Schlegel and J. S. Binkley,
Int. J. Quantum Chem. Symp. 13, 225 (1979); for the exchange–correlation part
B. G. Johnson, P. M. W. Gill and J. A. Pople, J. Chem. Phys. 98, 5612 (1993), and
J. A. Pople, P. M. W. Gill and B. G. Johnson, Chem. Phys. Lett. 199, 557 (1992)):

    ∂E/∂R_A = Σ D_μν ∂h_μν/∂R_A − Σ W_μν ∂S_μν/∂R_A                         (one-electron, Pulay)
            + ½ Σ D_μν D_λσ ∂(μν|λσ)/∂R_A − ½ Σ_σ Σ D^σ_μλ D^σ_νσ ∂(μν|λσ)_x/∂R_A   (Coulomb, exchange)
            + ∫ ∂e_xc/∂R_A d³r + ∂E_nn/∂R_A,

with the energy-weighted density W = Σ_σ Σ_i f_iσ ε_iσ C_iσ C_iσᵀ.  A basis
function on A moves with A, ∂φ_μ/∂R_A = −∇φ_μ, so every AO-derivative term is a
sum over the functions μ on A of −∇ on the first index (the integral library's
``ip`` integrals ⟨∇μ|…|ν⟩).  The nuclear-attraction operator of A moves too:
∂⟨μ|−Z_A/|r−R_A||ν⟩/∂R_A = −Z_A (⟨∇μ|1/r_A|ν⟩ + ⟨μ|1/r_A|∇ν⟩) (the
Hellmann–Feynman term).

The exchange–correlation term is integrated on ks1d's own molecular grid.  With the grid
held fixed it reads

    ∂E_xc/∂R_Ax = −2 Σ_σ Σ_{μ∈A} Σ_ν D^σ_μν ∫ [ ∂_xφ_μ (v_ρσ φ_ν + g_σ·∇φ_ν) + (g_σ·∇)∂_xφ_μ φ_ν
                                              + ½ v_τσ ∇∂_xφ_μ·∇φ_ν ] d³r

with g_σ = 2 ∂e/∂σ_σσ ∇ρ_σ + ∂e/∂σ_σσ′ ∇ρ_σ′ (restricted: g = 2 ∂e/∂σ ∇ρ of the
total density).  ks1d's grid moves with the atoms (each atom's spherical grid is
centred on it, and the Becke weights follow the nuclei), so the exact derivative
of the grid energy also has the grid response: the motion of the points and the
derivative of the partition weights (B. G. Johnson, P. M. W. Gill and J. A. Pople,
J. Chem. Phys. 98, 5612 (1993); J. Baker, J. Andzelm, A. Scheiner and B. Delley,
J. Chem. Phys. 101, 8894 (1994)).  It is included by default: without it the
gradient is not translationally invariant, and on the default grid the defect
|Σ_A ∂E/∂R_A| reaches ~1e-3 Ha/bohr for r2SCAN (benchmarks/bench_gradient.py).
With it, the analytic gradient equals the finite-difference derivative of the
energy that :func:`~ks1d.gaussian.scf.solve_molecule` reports, on every grid level.

Derivative integrals come from the integral engine (pyscf's ``intor`` and its
integral-direct J/K contraction of (∇μν|λσ)); the assembly is ks1d's.
"""
from __future__ import annotations

import ctypes
from dataclasses import dataclass

import numpy as np

from ..threads import single_threaded
from .density import density_on_block
from .parallel import run_chunks

#: index of ∂_x∂_jφ in the integral library's second-derivative AO layout
#: (φ, x, y, z, xx, xy, xz, yy, yz, zz)
_HESS = ((4, 5, 6), (5, 7, 8), (6, 8, 9))


@dataclass(frozen=True, eq=False)
class GradientTerms:
    """The parts of ∂E/∂R_A, each (natoms, 3) in hartree/bohr; ``total`` is their sum.

    ``exchange_correlation`` is the fixed-grid term, ``grid_response`` the motion of the grid
    points and Becke weights with the atoms (zero when not computed).
    """

    one_electron: np.ndarray
    overlap: np.ndarray
    coulomb: np.ndarray
    exact_exchange: np.ndarray
    exchange_correlation: np.ndarray
    grid_response: np.ndarray
    nuclear_repulsion: np.ndarray

    @property
    def total(self) -> np.ndarray:
        return (self.one_electron + self.overlap + self.coulomb + self.exact_exchange
                + self.exchange_correlation + self.grid_response + self.nuclear_repulsion)

    @property
    def translation_defect(self) -> float:
        """max_x |Σ_A ∂E/∂R_Ax|: zero for an exact gradient (translational invariance)."""
        return float(np.abs(self.total.sum(axis=0)).max())


def energy_weighted_density(Cs, es, fs) -> np.ndarray:
    """W^σ = Σ_i f_iσ ε_iσ C_iσ C_iσᵀ for each spin channel (restricted: f_i = 2)."""
    return np.array([(C * (f * e)) @ C.T for C, e, f in zip(Cs, es, fs)])


def _per_atom(per_ao: np.ndarray, ao_atom: np.ndarray, natm: int) -> np.ndarray:
    """Sum (3, nao) contributions of the basis functions to (natm, 3) by the atom each sits on."""
    return np.array([np.bincount(ao_atom, weights=per_ao[x], minlength=natm) for x in range(3)]).T


def nuclear_repulsion_gradient(numbers, coordinates: np.ndarray) -> np.ndarray:
    """∂E_nn/∂R_A = −Σ_{B≠A} Z_A Z_B (R_A − R_B)/|R_A − R_B|³."""
    Z = np.asarray(numbers, dtype=float)
    R = np.asarray(coordinates, dtype=float)
    d = R[:, None, :] - R[None, :, :]
    r = np.linalg.norm(d, axis=-1)
    np.fill_diagonal(r, np.inf)
    return -np.einsum("a,b,abx->ax", Z, Z, d / r[..., None] ** 3)


def one_electron_gradient(mol, D: np.ndarray, ao_atom: np.ndarray) -> np.ndarray:
    """Σ D_μν ∂(T + V^nuc)_μν/∂R_A: basis-function and operator (Hellmann–Feynman) parts.

    Basis part −2 Σ_{μ∈A} Σ_ν ⟨∇μ|T + V|ν⟩ D_μν; operator part −2 Z_A Σ_μν ⟨∇μ|1/r_A|ν⟩ D_μν.
    """
    natm = mol.natm
    ip = mol.intor("int1e_ipkin", comp=3) + mol.intor("int1e_ipnuc", comp=3)
    g = _per_atom(-2.0 * np.einsum("xij,ij->xi", ip, D), ao_atom, natm)
    Z = mol.atom_charges()
    for A in range(natm):
        with mol.with_rinv_at_nucleus(A):
            iprinv = mol.intor("int1e_iprinv", comp=3)
        g[A] -= 2.0 * Z[A] * np.einsum("xij,ij->x", iprinv, D)
    return g


def overlap_gradient(mol, W: np.ndarray, ao_atom: np.ndarray) -> np.ndarray:
    """−Σ W_μν ∂S_μν/∂R_A = 2 Σ_{μ∈A} Σ_ν ⟨∇μ|ν⟩ W_μν (the Pulay term of the orthonormality constraint)."""
    ip = mol.intor("int1e_ipovlp", comp=3)
    return _per_atom(2.0 * np.einsum("xij,ij->xi", ip, W), ao_atom, mol.natm)


def _derivative_screening(mol, tol: float, with_j: bool, with_k: bool):
    """Schwarz bounds of (∇μν|∇μν) and (μν|μν) per shell pair for the derivative J/K contraction,
    with the integral library's density-weighted prescreen for J, K or both."""
    from pyscf import lib
    from pyscf.scf import _vhf

    lib_cvhf = _vhf.libcvhf
    kind = "jk" if (with_j and with_k) else "j" if with_j else "k"
    opt = _vhf._VHFOpt(mol, "int2e_ip1", f"CVHFgrad_{kind}_prescreen", dmcondname="CVHFnr_dm_cond1",
                       direct_scf_tol=tol)
    ao_loc = mol.ao_loc_nr()
    nbas = mol.nbas
    q = np.empty((2, nbas, nbas))
    with mol.with_integral_screen(tol**2):
        for k, name in enumerate(("int2e_ip1ip2", "int2e")):
            fn = (lib_cvhf.CVHFnr_int2e_pp_q_cond if k == 0 else lib_cvhf.CVHFnr_int2e_q_cond)
            fn(getattr(lib_cvhf, mol._add_suffix(name)), lib.c_null_ptr(), q[k].ctypes,
               ao_loc.ctypes, mol._atm.ctypes, ctypes.c_int(mol.natm),
               mol._bas.ctypes, ctypes.c_int(nbas), mol._env.ctypes)
    opt.q_cond = q
    return opt


def derivative_jk(mol, dms: np.ndarray, with_j: bool, with_k: bool, omega: float = 0.0,
                  screening: float = 1e-13):
    """J′_x,μν = Σ_λσ (∂_xμ ν|λσ) D_σλ and K′_x,μλ = Σ_νσ (∂_xμ ν|λσ) D_νσ for each D in ``dms``.

    Integral-direct (no four-index array); omega > 0 selects the kernel erf(ωr)/r.
    Returns arrays (n, 3, nao, nao) or None.
    """
    from pyscf.scf import _vhf

    scripts = (["lk->s1ij"] if with_j else []) + (["jk->s1il"] if with_k else [])
    with mol.with_range_coulomb(omega):
        opt = _derivative_screening(mol, screening, with_j, with_k)
        out = _vhf.direct_mapdm(mol._add_suffix("int2e_ip1"), "s2kl", scripts, np.ascontiguousarray(dms), 3,
                                mol._atm, mol._bas, mol._env, vhfopt=opt)
    out = [np.asarray(o) for o in out]
    J = out[0] if with_j else None
    K = out[-1] if with_k else None
    return J, K


def two_electron_gradient(mol, D: np.ndarray, restricted: bool, kernels, ao_atom: np.ndarray):
    """(Coulomb, exact-exchange) gradients.

    Coulomb:   −2 Σ_{μ∈A} Σ_ν J′_μν[D] D_μν           (D summed over spins)
    exchange:  +2 Σ_σ c Σ_{μ∈A} Σ_λ K′_μλ[D^σ] D^σ_μλ  (restricted: D^σ = D/2, i.e. + c K′[D]·D)
    summed over the exchange kernels (c, ω) of the functional.
    """
    natm = mol.natm
    Dtot = D.sum(axis=0)
    has_k0 = any(om == 0.0 for om, _ in kernels)
    c0 = sum(c for om, c in kernels if om == 0.0)
    J, K = derivative_jk(mol, D, True, has_k0)
    J = J.sum(axis=0)  # Coulomb of the total density (linear in D)
    g_j = _per_atom(-2.0 * np.einsum("xij,ij->xi", J, Dtot), ao_atom, natm)

    def exchange_part(K, c):
        if restricted:
            per_ao = c * np.einsum("xij,ij->xi", K[0], D[0])
        else:
            per_ao = 2.0 * c * sum(np.einsum("xij,ij->xi", K[s], D[s]) for s in range(2))
        return _per_atom(per_ao, ao_atom, natm)

    g_k = np.zeros((natm, 3))
    if has_k0:
        g_k += exchange_part(K, c0)
    for omega, c in kernels:
        if omega != 0.0:
            _, Kw = derivative_jk(mol, D, False, True, omega=omega)
            g_k += exchange_part(Kw, c)
    return g_j, g_k


def _ao_deriv_values(mol, grid, blk, deriv: int) -> np.ndarray:
    """(ncomp, npts, nsig) AO values up to ``deriv`` (1: φ, ∇φ; 2: also the 6 second derivatives)."""
    from .density import _BLK

    pts = grid.coords[blk.start:blk.stop]
    mask = np.zeros(((len(pts) + _BLK - 1) // _BLK, mol.nbas), dtype=np.uint8)
    mask[:, blk.shells] = 1
    name = "GTOval_sph_deriv1" if deriv == 1 else "GTOval_sph_deriv2"
    ao = mol.eval_gto(name, pts, non0tab=mask)
    return np.ascontiguousarray(ao[:, :, blk.aos])


def xc_gradient(func, bog, D: np.ndarray, ao_atom: np.ndarray, geometry=None, grid_response: bool = True):
    """(fixed-grid term, grid-response term) of ∂E_xc/∂R_A, each (natoms, 3); ``D`` is (ns, nao, nao).

    The fixed-grid term is the module docstring's integral.  The grid response adds, for the
    points of atom A's grid (which move with A), the translation of their integrand,
    −Σ_C (their part of the fixed-grid term of C), and the derivative of the Becke weights
    (:func:`becke_weight_gradient`).  Two passes over the screened grid blocks: densities (from
    the cached AO values) and one functional evaluation, then the derivative contraction.
    """
    from ..xc import evaluate_xc

    mol = bog.basis.mol
    natm = mol.natm
    if not func.has_semilocal:
        return np.zeros((natm, 3)), np.zeros((natm, 3))
    ns = D.shape[0]
    gga, mgga = func.needs_gradient, func.needs_tau
    grid = bog.grid
    npt = grid.size
    rho = np.zeros((ns, npt))
    grad = np.zeros((ns, 3, npt)) if gga else None
    tau = np.zeros((ns, npt)) if mgga else None
    work = [blk for blk in bog.blocks if len(blk.aos)]

    def densities(chunk):
        for blk in chunk:
            ao = bog.values(blk)
            ix = np.ix_(blk.aos, blk.aos)
            sl = slice(blk.start, blk.stop)
            for s in range(ns):
                r, g, t = density_on_block(ao, D[s][ix], gga, mgga)
                rho[s, sl] = r
                if gga:
                    grad[s, :, sl] = g
                if mgga:
                    tau[s, sl] = t

    run_chunks(densities, work)
    xc = evaluate_xc(func, rho, grad, tau)
    w = grid.weights
    fr = w * xc.vrho                                   # (ns, N)
    fg = ft = None
    if gga:
        if ns == 1:
            fg = (2.0 * w * xc.vsigma[0] * grad[0])[None]
        else:
            fg = np.array([w * (2.0 * xc.vsigma[0] * grad[0] + xc.vsigma[1] * grad[1]),
                           w * (2.0 * xc.vsigma[2] * grad[1] + xc.vsigma[1] * grad[0])])
    if mgga:
        ft = 0.5 * w * xc.vtau
    deriv = 2 if gga else 1
    nao = mol.nao_nr()
    per_point = np.zeros((3, npt))  # Σ_μ of the integrand at each point (for the point-motion term)

    def contract(chunk):
        t = np.zeros((3, nao))
        for blk in chunk:
            ao = _ao_deriv_values(mol, grid, blk, deriv)
            idx = blk.aos
            ix = np.ix_(idx, idx)
            sl = slice(blk.start, blk.stop)
            for s in range(ns):
                Ds = D[s][ix]
                c0 = ao[0] @ Ds
                v = c0 * fr[s, sl, None]
                if gga:
                    g = fg[s][:, sl]
                    cj = [ao[1 + j] @ Ds for j in range(3)]
                    for j in range(3):
                        v += cj[j] * g[j, :, None]
                prod = ao[1:4] * v[None]                      # (3, p, n) integrand per point and AO
                if gga:
                    for x in range(3):
                        hx = sum(ao[_HESS[x][j]] * g[j, :, None] for j in range(3))
                        if mgga:
                            wt = ft[s, sl, None]
                            prod[x] += sum(ao[_HESS[x][j]] * (wt * cj[j]) for j in range(3))
                        prod[x] += hx * c0
                t[:, idx] += prod.sum(axis=1)
                per_point[:, sl] += prod.sum(axis=2)
        return t

    t = sum(run_chunks(contract, work))
    fixed = _per_atom(-2.0 * t, ao_atom, natm)
    if not grid_response:
        return fixed, np.zeros((natm, 3))
    # the points of atom A's grid move with A: their integrand's translation −Σ_C (terms of C)
    motion = np.array([np.bincount(grid.owner, weights=2.0 * per_point[x], minlength=natm) for x in range(3)]).T
    weights = becke_weight_gradient(grid, geometry, xc.e)
    return fixed, motion + weights


def _cell_function_and_slope(nu: np.ndarray):
    """Becke's s(ν) = ½(1 − p(p(p(ν)))), p(x) = 3x/2 − x³/2, and ds/dν = −½ p′(p₂) p′(p₁) p′(ν)."""
    def p(x):
        return x * (1.5 - 0.5 * x * x)  # (x**3 with an integer power is several times slower)

    def dp(x):
        return 1.5 * (1.0 - x * x)

    p1 = p(nu)
    p2 = p(p1)
    return 0.5 * (1.0 - p(p2)), -0.5 * dp(p2) * dp(p1) * dp(nu)


def becke_weight_gradient(grid, geometry, e: np.ndarray, chunk: int = 8192) -> np.ndarray:
    """Σ_i w⁰_i e(r_i) dω_A(r_i)/dR_C for Becke's fuzzy-cell weights ω_A = P_A/Σ_B P_B (A: owner of i).

    With P_B = Π_{D≠B} s(ν_BD), ν_BD = μ_BD + a_BD(1 − μ_BD²), μ_BD = (|r−R_B| − |r−R_D|)/R_BD
    (A. D. Becke, J. Chem. Phys. 88, 2547 (1988)), at a fixed point r

        ∂ν_BD/∂R_B = (1 − 2a_BD μ_BD)(−u_B − μ_BD e_BD)/R_BD,  ∂ν_BD/∂R_D = (1 − 2a_BD μ_BD)(u_D + μ_BD e_BD)/R_BD

    (u_B = (r − R_B)/|r − R_B|, e_BD = (R_B − R_D)/R_BD) and
    ∂ω_A/∂R_C = (∂P_A/∂R_C − ω_A Σ_B ∂P_B/∂R_C)/Σ_B P_B.  The point moves with its owner A, and
    ω_A depends on relative positions only, so dω_A/dR_A = −Σ_{C≠A} ∂ω_A/∂R_C (Johnson, Gill and
    Pople, J. Chem. Phys. 98, 5612 (1993), appendix; Baker et al., J. Chem. Phys. 101, 8894 (1994)).
    """
    from .grid import becke_size_parameters, bragg_slater_radius

    R = np.asarray(geometry.coordinates, dtype=float)
    M = len(R)
    out = np.zeros((M, 3))
    if M == 1:
        return out
    a = becke_size_parameters(np.array([bragg_slater_radius(Z) for Z in geometry.numbers]))
    Rvec = R[:, None, :] - R[None, :, :]
    Rab = np.linalg.norm(Rvec, axis=-1)
    np.fill_diagonal(Rab, 1.0)
    ebd = Rvec / Rab[..., None]
    pairs = [(B, D) for B in range(M) for D in range(M) if B != D]
    for p0 in range(0, grid.size, chunk):
        sl = slice(p0, min(p0 + chunk, grid.size))
        pts = grid.coords[sl]
        own = grid.owner[sl]
        n = len(pts)
        diff = pts[None, :, :] - R[:, None, :]                 # (M, n, 3)
        dist = np.linalg.norm(diff, axis=-1)
        u = diff / np.maximum(dist, 1e-300)[..., None]
        P = np.ones((M, n))
        ratio = {}
        for B, D in pairs:
            mu = (dist[B] - dist[D]) / Rab[B, D]
            nu = mu + a[B, D] * (1.0 - mu * mu)
            sv, ds = _cell_function_and_slope(nu)
            P[B] *= sv
            ratio[B, D] = (mu, ds * (1.0 - 2.0 * a[B, D] * mu) / (np.maximum(sv, 1e-300) * Rab[B, D]))
        dP = np.zeros((M, M, n, 3))                             # ∂P_B/∂R_C
        for (B, D), (mu, q) in ratio.items():
            qP = (P[B] * q)[:, None]
            dP[B, B] += qP * (-u[B] - mu[:, None] * ebd[B, D])
            dP[B, D] += qP * (u[D] + mu[:, None] * ebd[B, D])
        Z = P.sum(axis=0)
        idx = np.arange(n)
        omega = P[own, idx] / Z
        domega = (dP[own, :, idx].transpose(1, 0, 2) - omega[None, :, None] * dP.sum(axis=0)) / Z[None, :, None]
        contrib = domega * (grid.atomic_weights[sl] * e[sl])[None, :, None]   # (M_C, n, 3)
        contrib[own, idx] = 0.0
        out += contrib.sum(axis=1)
        moved = contrib.sum(axis=0)                              # Σ_{C≠A}, per point
        for x in range(3):
            out[:, x] -= np.bincount(own, weights=moved[:, x], minlength=M)
    return out


def exchange_kernels(func) -> list:
    """(ω, coefficient) pairs of the exact-exchange kernel c_sr K[1/r] + (c_lr − c_sr) K[erf(ωr)/r]."""
    if not func.is_hybrid:
        return []
    if func.omega == 0.0 or not func.is_range_separated:
        return [(0.0, func.exx_sr)]
    terms = []
    if func.exx_sr != 0.0:
        terms.append((0.0, func.exx_sr))
    if func.exx_lr - func.exx_sr != 0.0:
        terms.append((func.omega, func.exx_lr - func.exx_sr))
    return terms


def nuclear_gradient(func, basis, bog, geometry, D: np.ndarray, W: np.ndarray, restricted: bool,
                     grid_response: bool = True) -> GradientTerms:
    """All parts of ∂E/∂R_A for the converged densities ``D`` and energy-weighted densities ``W``.

    D, W: (ns, nao, nao) — the total matrices for restricted orbitals, α and β otherwise.
    """
    mol = basis.mol
    ao_atom = basis.ao_atom
    Dtot = D.sum(axis=0)
    with single_threaded(openmp=False):
        g1 = one_electron_gradient(mol, Dtot, ao_atom)
        gs = overlap_gradient(mol, W.sum(axis=0), ao_atom)
    gj, gk = two_electron_gradient(mol, D, restricted, exchange_kernels(func), ao_atom)
    gxc, gresp = xc_gradient(func, bog, D, ao_atom, geometry, grid_response=grid_response)
    gnn = nuclear_repulsion_gradient(geometry.numbers, geometry.coordinates)
    return GradientTerms(one_electron=g1, overlap=gs, coulomb=gj, exact_exchange=gk,
                         exchange_correlation=gxc, grid_response=gresp, nuclear_repulsion=gnn)
