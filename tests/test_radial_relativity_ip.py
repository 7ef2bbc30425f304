"""ΔSCF ionisation potentials of heavy atoms with PBE, with and without relativity, against NIST ASD.

Experimental first ionisation energies: NIST Atomic Spectra Database as carried by mendeleev
(test extra).  Configurations: the NIST ground configurations of ks1d.elements (Pt: [Xe] 4f14 5d9 6s1,
cation 5d9); cations by ks1d's ionisation rule (the outermost sub-shell loses the electron).
The full table (Cu, Ag, Au, Hg, Pt, Tl, Pb, Rn × none/scalar/x2c/dirac) is printed by
benchmarks/bench_radial_relativity_ip.py.
"""
from functools import cache

import pytest

import ks1d
from ks1d.units import HARTREE_TO_EV

mendeleev = pytest.importorskip("mendeleev")


@cache
def ip(symbol, relativity, config=None, cation_config=None):
    n = ks1d.solve_atom(symbol, xc="pbe", relativity=relativity, config=config, estimate_error=False)
    c = ks1d.solve_atom(symbol, xc="pbe", charge=1, relativity=relativity, config=cation_config,
                        estimate_error=False)
    return (c.total_energy - n.total_energy) * HARTREE_TO_EV


def experiment(symbol):
    return mendeleev.element(symbol).ionenergies[1]


@pytest.mark.parametrize("symbol", ["Au", "Hg", "Pt"])
def test_scalar_relativity_repairs_5d_6s_ionisation_potentials(symbol):
    # The relativistic 6s contraction raises these IPs by ~2 eV: non-relativistic PBE is 1.5-2 eV low
    # (issue 11), scalar-relativistic PBE lies within 0.6 eV (measured +0.36 Au, +0.04 Hg, +0.55 Pt)
    exp = experiment(symbol)
    nr, sr = ip(symbol, "none") - exp, ip(symbol, "scalar") - exp
    assert nr < -1.4
    assert abs(sr) < abs(nr) - 0.9
    if symbol in ("Au", "Hg"):
        assert abs(sr) < 0.5


def test_relativistic_ip_increase_grows_down_group_11():
    # The relativistic increase of the group-11 IPs is small for Cu, larger for Ag and about 2 eV for Au
    # (P. Pyykkö, Chem. Rev. 88, 563 (1988), from memory).  With PBE it makes Cu and Ag *worse* against
    # experiment (Cu +0.42 -> +0.66 eV, Ag -0.21 -> +0.37 eV): the non-relativistic error cancellation
    # is lost; that is the functional's error, visible only once relativity is in.
    shift = {s: ip(s, "scalar") - ip(s, "none") for s in ("Cu", "Ag", "Au")}
    assert 0.1 < shift["Cu"] < shift["Ag"] < shift["Au"]
    assert shift["Au"] > 1.5


@pytest.mark.parametrize("symbol, neutral, cation", [
    ("Tl", "[Xe] 4f14 5d10 6s2 6p1/2(1)", "[Xe] 4f14 5d10 6s2"),
    ("Pb", "[Xe] 4f14 5d10 6s2 6p1/2(2)", "[Xe] 4f14 5d10 6s2 6p1/2(1)"),
    ("Rn", None, "[Xe] 4f14 5d10 6s2 6p1/2(2) 6p3/2(3)"),
])
def test_spin_orbit_repairs_6p_ionisation_potentials(symbol, neutral, cation):
    # 6p atoms ionise from 6p1/2 (Tl, Pb) or 6p3/2 (Rn); scalar relativity alone moves the IPs away
    # from experiment (Tl -0.64 -> -0.79 eV, Pb -0.30 -> -0.43 eV), the Dirac atoms with jj-coupled
    # occupations come within 0.2 eV (measured -0.16 Tl, -0.05 Pb, -0.06 Rn)
    exp = experiment(symbol)
    nr = ip(symbol, "none") - exp
    dk = ip(symbol, "dirac", neutral, cation) - exp
    assert abs(dk) < 0.2
    assert abs(dk) < abs(nr) - 0.1


def test_validation_helper_passes_relativity_through():
    # ks1d.validate.atom_ionisation_potential(relativity=) is the README's Au example: it must give the
    # same ΔSCF IP as the two solve_atom calls above (same Hamiltonian, configurations and mesh)
    from ks1d.validate import atom_ionisation_potential

    r = atom_ionisation_potential("Au", xc="pbe", relativity="scalar")
    assert r.value_ev == pytest.approx(ip("Au", "scalar"), abs=1e-6)
    assert r.settings["relativity"] == "scalar"
    assert abs(r.value_ev - experiment("Au")) < 0.5  # NIST ASD via mendeleev
