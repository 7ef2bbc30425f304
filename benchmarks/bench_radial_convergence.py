"""Convergence of the radial total energy with mesh size, element order and r_max.

For each atom and functional, prints E(n_elements, order) − E(reference mesh) in µHa,
and the deviation of the named precision levels.  The reference mesh is far beyond
"high" (40 elements of order 14, r_max 60 bohr).  Usage:

    python benchmarks/bench_radial_convergence.py [SYMBOL ...]
    python benchmarks/bench_radial_convergence.py --relativistic [SYMBOL ...]

With --relativistic it prints the rows of the relativistic Hamiltonians (Rn and U, LDA,
point and Gaussian nucleus): the deviation of each named precision level from a reference mesh
(40 elements of order 12, r_max 50 bohr, r_first 1e-6 for the point nucleus and 1e-4 for the
Gaussian one; SCF residual 1e-7 because the deep levels of U carry rounding noise at 1e-8 on so
fine a mesh) and the error estimate.
"""
import sys

import ks1d
from ks1d.radial.mesh import MeshSpec
from ks1d.radial.scf import PRECISION

ATOMS = [("Ne", "lda", "restricted"), ("Fe", "pbe", "polarized"), ("Kr", "hf", "restricted"),
         ("U", "lda", "restricted")]
REFERENCE = MeshSpec(n_elements=40, order=14, r_first=0.02, r_max=60.0)


def energy(sym, xc, spin, spec):
    return ks1d.solve_atom(sym, xc=xc, spin=spin, mesh=spec, estimate_error=False).total_energy


RELATIVISTIC = [(sym, rel, nuc) for sym in ("Rn", "U") for rel in ("scalar", "x2c", "dirac")
                for nuc in ("point", "gaussian")]
REFERENCE_REL = {"point": MeshSpec(n_elements=40, order=12, r_first=1e-6, r_max=50.0),
                 "gaussian": MeshSpec(n_elements=40, order=12, r_first=1e-4, r_max=50.0)}


def relativistic_rows(argv):
    for sym, rel, nuc in RELATIVISTIC:
        if argv and sym not in argv:
            continue
        kw = dict(xc="lda", spin="restricted", relativity=rel, nucleus=nuc)
        e_ref = ks1d.solve_atom(sym, mesh=REFERENCE_REL[nuc], estimate_error=False, scf=dict(residual_tolerance=1e-7),
                                **kw).total_energy
        print(f"\n{sym} lda {rel} {nuc} nucleus: reference E = {e_ref:.10f} Ha")
        for name in ("low", "normal", "high"):
            res = ks1d.solve_atom(sym, precision=name, **kw)
            est = "   not converged" if res.error_estimate is None else f"{res.error_estimate * 1e6:10.4f} µHa"
            print(f"precision {name:<7s} deviation {(res.total_energy - e_ref) * 1e6:+10.4f} µHa, "
                  f"error estimate {est}, basis size {res.settings['basis_size']}")


def main(argv):
    if argv and argv[0] == "--relativistic":
        return relativistic_rows(argv[1:])
    atoms = [a for a in ATOMS if not argv or a[0] in argv]
    for sym, xc, spin in atoms:
        e_ref = energy(sym, xc, spin, REFERENCE)
        print(f"\n{sym} {xc} {spin}: reference E = {e_ref:.10f} Ha  (deviations in µHa)")
        print("n_el \\ order " + "".join(f"{p:>10d}" for p in (6, 8, 10, 12)))
        for nel in (10, 14, 20, 26):
            row = [(energy(sym, xc, spin, MeshSpec(n_elements=nel, order=p)) - e_ref) * 1e6 for p in (6, 8, 10, 12)]
            print(f"{nel:>12d} " + "".join(f"{x:>10.3f}" for x in row))
        for name, spec in PRECISION.items():
            res = ks1d.solve_atom(sym, xc=xc, spin=spin, mesh=spec)
            print(f"precision {name:<7s} deviation {(res.total_energy - e_ref) * 1e6:+10.4f} µHa, "
                  f"error estimate {res.error_estimate * 1e6:10.4f} µHa, basis size {res.settings['basis_size']}")


if __name__ == "__main__":
    main(sys.argv[1:])
