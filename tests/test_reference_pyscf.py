"""The shipped NIST LDA/LSD energies and HF limits against pyscf in a large
even-tempered Gaussian basis (pyscf.scf / pyscf.dft as the outside reference).

A Gaussian basis approaches the basis-set limit from above (the energy is
variational in the basis), so pyscf must land slightly above each reference
value: within 2e-5 hartree for these light atoms with the basis below, and
below it by no more than 3e-6 hartree (stored-value rounding, SCF and grid
noise).  The open-shell case (carbon) uses equal fractional occupation of the
three 2p orbitals, i.e. the spherically averaged atom that NIST SRD 141
tabulates; it fails if the shipped C values belonged to another convention.
"""
from __future__ import annotations

import numpy as np
import pytest

from ks1d.reference import reference_value

pytest.importorskip("pyscf")
from pyscf import dft, gto, lib, scf  # noqa: E402

pytestmark = pytest.mark.slow

BELOW, ABOVE = 3e-6, 2e-5

# shells in energy order: (l, electrons up, electrons down)
SHELLS = {"He": [(0, 1, 1)], "Be": [(0, 1, 1), (0, 1, 1)],
          "C": [(0, 1, 1), (0, 1, 1), (1, 2, 0)], "Ne": [(0, 1, 1), (0, 1, 1), (1, 3, 3)]}


def even_tempered_molecule(sym: str) -> gto.Mole:
    """Uncontracted s (ratio 2.2 from 0.01) and p (ratio 2 from 0.02) Gaussians: near-complete for
    spherical first-row atoms, where only l <= 1 orbitals are occupied."""
    lmax = max(l for l, _, _ in SHELLS[sym])
    shells = [[0, [0.01 * 2.2 ** i, 1.0]] for i in range(34)]
    if lmax >= 1:
        shells += [[1, [0.02 * 2.0 ** i, 1.0]] for i in range(26)]
    nelec = sum(a + b for _, a, b in SHELLS[sym])
    return gto.M(atom=f"{sym} 0 0 0", basis={sym: shells}, spin=nelec % 2, verbose=0)


def _occupations(sym: str, nmo: int, restricted: bool) -> np.ndarray:
    a, b = np.zeros(nmo), np.zeros(nmo)
    i = 0
    for l, na, nb in SHELLS[sym]:
        d = 2 * l + 1
        a[i:i + d], b[i:i + d] = na / d, nb / d
        i += d
    if restricted:
        a = b = (a + b) / 2
    return np.array([a, b])


def lda_energy(sym: str, restricted: bool) -> float:
    mol = even_tempered_molecule(sym)
    mf = dft.UKS(mol)
    mf.xc = "lda_x,lda_c_vwn"  # Slater exchange + VWN5 correlation, the NIST SRD 141 functional
    mf.grids.atom_grid = (150, 110)
    mf.conv_tol = 1e-10
    mf.max_cycle = 200
    mf.get_occ = lambda mo_energy=None, mo_coeff=None: _occupations(sym, len(mo_energy[0]), restricted)
    with lib.with_omp_threads(2):
        e = mf.kernel()
    assert mf.converged
    return e


def hf_energy(sym: str) -> float:
    mf = scf.RHF(even_tempered_molecule(sym))  # pyscf drops near-linear dependencies of the basis itself
    mf.conv_tol = 1e-10
    with lib.with_omp_threads(2):
        e = mf.kernel()
    assert mf.converged
    return e


@pytest.mark.parametrize("sym", ["He", "Be", "Ne"])
def test_hf_limit_against_pyscf(sym):
    ref = reference_value("hf_limit_total_energy", sym).value
    assert -BELOW <= hf_energy(sym) - ref <= ABOVE


@pytest.mark.parametrize("sym,restricted", [("He", True), ("Be", True), ("C", True), ("C", False), ("Ne", True)])
def test_nist_lda_lsd_against_pyscf(sym, restricted):
    q = "nist_lda_total_energy" if restricted else "nist_lsd_total_energy"
    ref = reference_value(q, sym).value
    assert -BELOW <= lda_energy(sym, restricted) - ref <= ABOVE
