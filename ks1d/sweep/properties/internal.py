"""Bond lengths and bond angles of a molecule, and how far an optimised geometry moved them.

Bonds are perceived once, on the reference geometry, with the rule of
:mod:`ks1d.structure` (d_AB < 1.2 (r_cov,A + r_cov,B), Cordero's covalent radii),
so the reference and the optimised structure are compared bond by bond:

    r_AB = |R_B − R_A|,        θ_ABC = arccos[(R_A − R_B)·(R_C − R_B) / (r_AB r_CB)]

(B the central atom of the angle; both A–B and B–C bonded).  Both are internal
coordinates, unchanged by the rotation or translation an optimiser may apply.  The
deviations are optimised − reference; the largest in magnitude, with its sign, is the
summary quantity (Å, degrees).
"""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ...structure import BOND_FACTOR, covalent_radius


def bonds(symbols: Sequence[str], positions, factor: float = BOND_FACTOR) -> tuple[tuple[int, int], ...]:
    """Index pairs (i < j) with d_ij < factor·(r_i + r_j), positions in Å."""
    pos = np.asarray(positions, dtype=float)
    radii = np.array([covalent_radius(s) for s in symbols])
    d = np.linalg.norm(pos[:, None, :] - pos[None, :, :], axis=-1)
    cut = factor * (radii[:, None] + radii[None, :])
    n = len(symbols)
    return tuple((i, j) for i in range(n) for j in range(i + 1, n) if d[i, j] < cut[i, j])


def angles(bond_list: Sequence[tuple[int, int]]) -> tuple[tuple[int, int, int], ...]:
    """Triples (a, b, c), a < c, with b bonded to both a and c (b is the vertex)."""
    neighbours: dict[int, set[int]] = {}
    for i, j in bond_list:
        neighbours.setdefault(i, set()).add(j)
        neighbours.setdefault(j, set()).add(i)
    out = []
    for b in sorted(neighbours):
        nb = sorted(neighbours[b])
        out += [(a, b, c) for x, a in enumerate(nb) for c in nb[x + 1:]]
    return tuple(out)


def bond_lengths(positions, bond_list) -> np.ndarray:
    """r_ij of each bond, in the unit of ``positions``."""
    pos = np.asarray(positions, dtype=float)
    return np.array([np.linalg.norm(pos[j] - pos[i]) for i, j in bond_list])


def bond_angles(positions, angle_list) -> np.ndarray:
    """θ_abc of each angle in degrees (vertex b)."""
    pos = np.asarray(positions, dtype=float)
    out = []
    for a, b, c in angle_list:
        u, v = pos[a] - pos[b], pos[c] - pos[b]
        cos = np.dot(u, v) / (np.linalg.norm(u) * np.linalg.norm(v))
        out.append(np.degrees(np.arccos(np.clip(cos, -1.0, 1.0))))
    return np.array(out)


def _largest(devs: np.ndarray) -> float | None:
    return None if len(devs) == 0 else float(devs[int(np.argmax(np.abs(devs)))])


def compare_geometries(symbols: Sequence[str], reference, optimised) -> dict:
    """Bond lengths (Å) and angles (degrees) of ``optimised`` against ``reference`` (both (N, 3) in Å).

    Returns the per-bond and per-angle lists and the signed largest deviations
    (``bond_deviation``, ``angle_deviation``; None when the molecule has no bond or no angle).
    """
    bl = bonds(symbols, reference)
    al = angles(bl)
    r_ref, r_opt = bond_lengths(reference, bl), bond_lengths(optimised, bl)
    a_ref, a_opt = bond_angles(reference, al), bond_angles(optimised, al)

    def label(idx):
        return "-".join(f"{symbols[i]}{i + 1}" for i in idx)

    return {
        "bonds": [{"atoms": label(b), "reference": float(x), "optimised": float(y), "deviation": float(y - x)}
                  for b, x, y in zip(bl, r_ref, r_opt)],
        "angles": [{"atoms": label(a), "reference": float(x), "optimised": float(y), "deviation": float(y - x)}
                   for a, x, y in zip(al, a_ref, a_opt)],
        "bond_deviation": _largest(r_opt - r_ref),
        "angle_deviation": _largest(a_opt - a_ref),
    }
