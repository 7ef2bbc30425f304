"""Molecular integration grids: atom-centred radial × Lebedev rules, Becke partition.

Every atom A carries spherical shells r_i × Lebedev rules Ω_j, and an integral is

    ∫ f(r) d³r ≈ Σ_A Σ_ij w_A(r_ij) w_i w_j f(R_A + r_i Ω_j),

where w_A is A's fuzzy-cell weight (Σ_A w_A = 1 everywhere).

* Radial rule: Treutler–Ahlrichs "M4" mapping of Chebyshev points of the
  second kind, r = ξ/ln2 · (1+x)^0.6 · ln(2/(1−x)) (O. Treutler and
  R. Ahlrichs, J. Chem. Phys. 102, 346 (1995)).
* Angular rules: Lebedev–Laikov quadratures (V. I. Lebedev and D. N. Laikov,
  Dokl. Math. 59, 477 (1999)); the point tables come from pyscf.
* Partition: Becke's fuzzy cells with the cell function iterated three times
  and the heteronuclear size adjustment of Becke's appendix
  (A. D. Becke, J. Chem. Phys. 88, 2547 (1988)), using Bragg–Slater radii
  (J. C. Slater, J. Chem. Phys. 41, 3199 (1964)).
* Pruning: fewer angular points close to the nucleus, where the density is
  nearly spherical (regions in units of the atom's Bragg–Slater radius).

Named levels trade cost for accuracy; their integration errors are measured
in ``benchmarks/bench_gaussian_grid.py``.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from ..errors import SettingsError
from ..units import ANGSTROM_TO_BOHR

#: Treutler–Ahlrichs ξ scaling factors, H–Kr (O. Treutler and R. Ahlrichs,
#: J. Chem. Phys. 102, 346 (1995), Table 1; from memory).  Other elements use 1.0.
TREUTLER_XI = {
    1: 0.8, 2: 0.9, 3: 1.8, 4: 1.4, 5: 1.3, 6: 1.1, 7: 0.9, 8: 0.9, 9: 0.9, 10: 0.9,
    11: 1.4, 12: 1.3, 13: 1.3, 14: 1.2, 15: 1.1, 16: 1.0, 17: 1.0, 18: 1.0,
    19: 1.5, 20: 1.4, 21: 1.3, 22: 1.2, 23: 1.2, 24: 1.2, 25: 1.2, 26: 1.2, 27: 1.2,
    28: 1.1, 29: 1.1, 30: 1.1, 31: 1.1, 32: 1.0, 33: 0.9, 34: 0.9, 35: 0.9, 36: 0.9,
}

#: Bragg–Slater radii in ångström (J. C. Slater, J. Chem. Phys. 41, 3199 (1964);
#: from memory).  Hydrogen uses 0.35 Å as recommended by Becke (1988); noble
#: gases and missing entries take the neighbouring value or 1.5 Å.
BRAGG_SLATER_ANGSTROM = {
    1: 0.35, 2: 0.35, 3: 1.45, 4: 1.05, 5: 0.85, 6: 0.70, 7: 0.65, 8: 0.60, 9: 0.50, 10: 0.50,
    11: 1.80, 12: 1.50, 13: 1.25, 14: 1.10, 15: 1.00, 16: 1.00, 17: 1.00, 18: 1.00,
    19: 2.20, 20: 1.80, 21: 1.60, 22: 1.40, 23: 1.35, 24: 1.40, 25: 1.40, 26: 1.40, 27: 1.35,
    28: 1.35, 29: 1.35, 30: 1.35, 31: 1.30, 32: 1.25, 33: 1.15, 34: 1.15, 35: 1.15, 36: 1.15,
}


@dataclass(frozen=True)
class GridLevel:
    """Radial points per period (rows 1, 2, 3, 4+) and Lebedev point counts.

    ``angular`` is used for r ≥ 0.5 R_BS, ``angular_mid`` for 0.25 R_BS ≤ r < 0.5 R_BS
    and ``angular_inner`` inside 0.25 R_BS (R_BS: Bragg–Slater radius).
    """

    name: str
    radial: tuple[int, int, int, int]
    angular: int
    angular_mid: int
    angular_inner: int


#: ks1d's named grid levels (errors measured in benchmarks/bench_gaussian_grid.py).
GRID_LEVELS = {
    "coarse": GridLevel("coarse", (30, 40, 50, 60), 194, 86, 38),
    "default": GridLevel("default", (40, 55, 70, 85), 302, 146, 50),
    "fine": GridLevel("fine", (60, 80, 100, 120), 1202, 302, 110),
    "reference": GridLevel("reference", (100, 130, 160, 190), 1454, 590, 302),
}


def grid_level(level) -> GridLevel:
    if isinstance(level, GridLevel):
        return level
    key = str(level).strip().lower()
    if key not in GRID_LEVELS:
        raise SettingsError(f"unknown grid level {level!r}; choose one of {', '.join(GRID_LEVELS)}")
    return GRID_LEVELS[key]


def _period(Z: int) -> int:
    return 1 if Z <= 2 else 2 if Z <= 10 else 3 if Z <= 18 else 4


def bragg_slater_radius(Z: int) -> float:
    """Bragg–Slater radius in bohr."""
    return BRAGG_SLATER_ANGSTROM.get(Z, 1.5) * ANGSTROM_TO_BOHR


def treutler_m4_radial(n: int, xi: float, alpha: float = 0.6) -> tuple[np.ndarray, np.ndarray]:
    """Radial nodes and weights (including r²) of the Treutler–Ahlrichs M4 rule.

    x_i = cos(iπ/(n+1)) are Chebyshev nodes of the second kind, for which
    ∫₋₁¹ g(x) dx ≈ Σ π/(n+1) sin(iπ/(n+1)) g(x_i);
    r(x) = ξ/ln2 (1+x)^α ln(2/(1−x)) and ∫₀^∞ f r² dr = ∫ f r² (dr/dx) dx.
    """
    i = np.arange(1, n + 1)
    t = i * np.pi / (n + 1)
    x = np.cos(t)
    wx = np.pi / (n + 1) * np.sin(t)
    c = xi / np.log(2.0)
    r = c * (1 + x) ** alpha * np.log(2.0 / (1 - x))
    drdx = c * (alpha * (1 + x) ** (alpha - 1) * np.log(2.0 / (1 - x)) + (1 + x) ** alpha / (1 - x))
    return r, wx * drdx * r**2


@lru_cache(maxsize=64)
def lebedev_rule(npoints: int) -> tuple[np.ndarray, np.ndarray]:
    """Unit vectors (n, 3) and weights (summing to 4π) of a Lebedev–Laikov rule."""
    from pyscf.dft.LebedevGrid import LEBEDEV_NGRID, MakeAngularGrid

    if npoints not in set(int(n) for n in LEBEDEV_NGRID):
        raise SettingsError(f"no Lebedev rule with {npoints} points")
    g = MakeAngularGrid(npoints)
    return np.ascontiguousarray(g[:, :3]), g[:, 3] * 4 * np.pi


def atomic_grid(Z: int, level: GridLevel) -> tuple[np.ndarray, np.ndarray]:
    """Points (relative to the nucleus) and weights of one atom's pruned grid."""
    n = level.radial[_period(Z) - 1]
    r, wr = treutler_m4_radial(n, TREUTLER_XI.get(Z, 1.0))
    R = bragg_slater_radius(Z)
    counts = np.where(r < 0.25 * R, level.angular_inner,
                      np.where(r < 0.5 * R, level.angular_mid, level.angular))
    pts, wts = [], []
    for nang in np.unique(counts):
        sel = counts == nang
        u, wu = lebedev_rule(int(nang))
        pts.append((r[sel, None, None] * u[None]).reshape(-1, 3))
        wts.append((wr[sel, None] * wu[None]).ravel())
    return np.concatenate(pts), np.concatenate(wts)


def becke_cell_function(nu: np.ndarray) -> np.ndarray:
    """s(ν) = ½(1 − p(p(p(ν)))), p(μ) = 3μ/2 − μ³/2 (Becke 1988, eqs. 19–21)."""
    nu = np.array(nu, dtype=float)  # a private copy, updated in place below
    t = np.empty_like(nu)
    for _ in range(3):
        np.multiply(nu, nu, out=t)      # p(ν) = ν (3/2 − ν²/2)
        t *= -0.5
        t += 1.5
        nu *= t
    nu *= -0.5
    nu += 0.5
    return nu


def becke_size_parameters(radii: np.ndarray) -> np.ndarray:
    """a_AB of Becke's appendix: χ = R_A/R_B, u = (χ−1)/(χ+1), a = u/(u²−1), |a| ≤ ½."""
    chi = radii[:, None] / radii[None, :]
    u = (chi - 1) / (chi + 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        a = np.where(np.abs(u) < 1e-14, 0.0, u / (u**2 - 1))
    return np.clip(a, -0.5, 0.5)


def becke_weights(points: np.ndarray, owner: int, centres: np.ndarray, a: np.ndarray) -> np.ndarray:
    """Fuzzy-cell weight w_owner(r) = P_owner / Σ_B P_B with P_A = Π_{B≠A} s(ν_AB).

    μ_AB = (r_A − r_B)/R_AB and ν_AB = μ_AB + a_AB (1 − μ_AB²).
    """
    natm = len(centres)
    if natm == 1:
        return np.ones(len(points))
    dist = np.linalg.norm(points[None, :, :] - centres[:, None, :], axis=-1)  # (M, N)
    Rab = np.linalg.norm(centres[:, None] - centres[None, :], axis=-1)
    P = np.ones((natm, len(points)))
    for A in range(natm):
        for B in range(A):
            mu = (dist[A] - dist[B]) / Rab[A, B]
            if a[A, B] != 0.0:
                mu += a[A, B] * (1 - mu * mu)
            s = becke_cell_function(mu)
            P[A] *= s
            s -= 1.0
            s *= -1.0
            P[B] *= s
    total = P.sum(axis=0)
    return P[owner] / total


@dataclass(frozen=True, eq=False)
class MolecularGrid:
    """Integration points (bohr), weights and spatially compact blocks."""

    level: str
    coords: np.ndarray   # (N, 3)
    weights: np.ndarray  # (N,)
    blocks: tuple        # tuple of (start, stop)
    # the atom whose spherical grid each point belongs to, and its weight before the Becke
    # partition (w_i w_j r²); the nuclear gradient's grid-response term needs both
    owner: np.ndarray | None = None         # (N,) int
    atomic_weights: np.ndarray | None = None  # (N,)

    @property
    def size(self) -> int:
        return len(self.weights)

    def integrate(self, f: np.ndarray) -> float:
        return float(np.dot(self.weights, f))


def _spatial_blocks(coords: np.ndarray, block_size: int, box: float) -> tuple[np.ndarray, tuple]:
    """Order points box by box (edge ``box`` bohr) and cut into blocks of ≤ block_size."""
    cell = np.floor((coords - coords.min(axis=0)) / box).astype(np.int64)
    order = np.lexsort((cell[:, 2], cell[:, 1], cell[:, 0]))
    key = (cell[order, 0] * 1_000_003 + cell[order, 1]) * 1_000_003 + cell[order, 2]
    edges = np.flatnonzero(np.diff(key)) + 1
    starts = np.concatenate([[0], edges])
    stops = np.concatenate([edges, [len(order)]])
    blocks = []
    for s, e in zip(starts, stops):
        for b in range(s, e, block_size):
            blocks.append((int(b), int(min(b + block_size, e))))
    # merge tiny neighbouring boxes so that matrix products stay efficient
    merged = []
    for b in blocks:
        if merged and (merged[-1][1] - merged[-1][0]) + (b[1] - b[0]) <= block_size // 2:
            merged[-1] = (merged[-1][0], b[1])
        else:
            merged.append(b)
    return order, tuple(merged)


def build_grid(geometry, level="default", block_size: int = 448, box: float = 2.5,
               weight_cutoff: float = 1e-15) -> MolecularGrid:
    """The molecular grid of ``geometry`` at a named level (see :data:`GRID_LEVELS`)."""
    lvl = grid_level(level)
    centres = geometry.coordinates
    radii = np.array([bragg_slater_radius(Z) for Z in geometry.numbers])
    a = becke_size_parameters(radii)
    all_pts, all_w, all_owner, all_w0 = [], [], [], []
    for A, Z in enumerate(geometry.numbers):
        pts, w0 = atomic_grid(Z, lvl)
        pts = pts + centres[A]
        w = w0 * becke_weights(pts, A, centres, a)
        keep = np.abs(w) > weight_cutoff  # some Lebedev rules (74, 230, 266) have negative weights
        all_pts.append(pts[keep])
        all_w.append(w[keep])
        all_w0.append(w0[keep])
        all_owner.append(np.full(int(keep.sum()), A))
    coords = np.concatenate(all_pts)
    weights = np.concatenate(all_w)
    order, blocks = _spatial_blocks(coords, block_size, box)
    return MolecularGrid(lvl.name, np.ascontiguousarray(coords[order]), weights[order], blocks,
                         owner=np.concatenate(all_owner)[order], atomic_weights=np.concatenate(all_w0)[order])
