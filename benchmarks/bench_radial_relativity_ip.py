"""ΔSCF ionisation potentials (PBE) of heavy atoms with every radial Hamiltonian, against NIST ASD.

Experimental values from mendeleev (NIST ASD).  Dirac rows for the 6p atoms use jj-coupled
occupations (Tl 6p1/2(1), Pb 6p1/2(2), Rn+ 6p3/2 hole); others j-averaged.  Usage:

    python benchmarks/bench_radial_relativity_ip.py
"""
import mendeleev

import ks1d
from ks1d.units import HARTREE_TO_EV

ATOMS = ["Cu", "Ag", "Au", "Hg", "Pt", "Tl", "Pb", "Rn"]
JJ = {"Tl": ("[Xe] 4f14 5d10 6s2 6p1/2(1)", "[Xe] 4f14 5d10 6s2"),
      "Pb": ("[Xe] 4f14 5d10 6s2 6p1/2(2)", "[Xe] 4f14 5d10 6s2 6p1/2(1)"),
      "Rn": (None, "[Xe] 4f14 5d10 6s2 6p1/2(2) 6p3/2(3)")}


def ip(symbol, relativity):
    neutral, cation = JJ.get(symbol, (None, None)) if relativity == "dirac" else (None, None)
    n = ks1d.solve_atom(symbol, xc="pbe", relativity=relativity, config=neutral, estimate_error=False)
    c = ks1d.solve_atom(symbol, xc="pbe", charge=1, relativity=relativity, config=cation, estimate_error=False)
    return (c.total_energy - n.total_energy) * HARTREE_TO_EV


def main():
    rels = ("none", "scalar", "x2c", "dirac")
    print(f"{'atom':<5}{'NIST':>8}" + "".join(f"{r:>16}" for r in rels) + "   (IP - NIST in eV in brackets)")
    for s in ATOMS:
        exp = mendeleev.element(s).ionenergies[1]
        vals = [ip(s, r) for r in rels]
        print(f"{s:<5}{exp:8.3f}" + "".join(f"{v:9.3f} ({v - exp:+.2f})" for v in vals))


if __name__ == "__main__":
    main()
